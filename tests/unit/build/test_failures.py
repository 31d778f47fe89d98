"""Failures stay visible (issue 14, part 6).

A case file that fails to assess keeps its page (``cases/<slug>.html``): what
failed and where (file, line, key), and the figures of its last good assessment
from the site the build replaces, marked as not current; the register links it.
Under ``serve`` the case's page and packets stay (no 404).  A build without
packets keeps the packets of the site it replaces and says so.
"""
from __future__ import annotations

import json
import shutil
import threading
import urllib.request
from pathlib import Path

import pytest

import harness

import dossier.build.pipeline as build
from dossier.build import serve
from dossier.build.writer import write_site

GOOD_LINE = 'temperature = ["400 degC", "500 degC"]'
BAD_LINE = 'temperature = ["400 degC", "lukewarm"]'


@pytest.fixture()
def cases(tmp_path) -> Path:
    d = tmp_path / "cases"
    d.mkdir()
    for name in ("ammonia.md", "calcination.md"):
        shutil.copy(harness.CASES / name, d / name)
    assert GOOD_LINE in (d / "ammonia.md").read_text(encoding="utf-8")
    return d


def break_ammonia(cases: Path, bad: str = BAD_LINE) -> None:
    p = cases / "ammonia.md"
    p.write_text(p.read_text(encoding="utf-8").replace(GOOD_LINE, bad), encoding="utf-8")


def line_of(cases: Path, text: str) -> int:
    lines = (cases / "ammonia.md").read_text(encoding="utf-8").splitlines()
    return next(i for i, line in enumerate(lines, 1) if text in line)


def test_a_case_that_fails_keeps_its_page_with_the_last_good_figures_not_current(cases, tmp_path):
    out = tmp_path / "site"
    assert build.build_site(cases, out, packets=False).written
    good_json = (out / "cases" / "ammonia.json").read_bytes()
    good = json.loads(good_json)

    break_ammonia(cases)
    report = build.build_site(cases, out, packets=False)
    assert report.written and [Path(f.file).name for f in report.failed] == ["ammonia.md"]
    page = (out / "cases" / "ammonia.html").read_text(encoding="utf-8")
    line = line_of(cases, "lukewarm")
    # what failed and where: file, line and key
    assert f"ammonia.md:{line}: key &#39;temperature[2]&#39;: expected a temperature" in page
    # the last good figures, marked as not current, and its export kept under its own name
    assert "Not current." in page and f"last good assessment (revision {good['revision']})" in page
    assert good["title"] in page
    assert (out / "cases" / "ammonia.last-good.json").read_bytes() == good_json
    assert not (out / "cases" / "ammonia.json").exists()  # no stale data under the current name
    register = (out / "index.html").read_text(encoding="utf-8")
    assert '<a href="cases/ammonia.html"><code>ammonia.md</code></a>' in register
    assert f"its page shows the last good assessment (revision {good['revision']})" in register
    assert harness.broken_links(out) == []
    harness.parse_strict(out / "cases" / "ammonia.html")

    # a second failing build (another error) still shows the same last good figures
    (cases / "ammonia.md").write_text((cases / "ammonia.md").read_text(encoding="utf-8")
                                      .replace("lukewarm", "tepid"), encoding="utf-8")
    assert build.build_site(cases, out, packets=False).failed
    page = (out / "cases" / "ammonia.html").read_text(encoding="utf-8")
    assert "tepid" in page and "Not current." in page and good["title"] in page
    assert (out / "cases" / "ammonia.last-good.json").read_bytes() == good_json

    # fixed: the real page again, and no leftover of the failure
    (cases / "ammonia.md").write_text((cases / "ammonia.md").read_text(encoding="utf-8")
                                      .replace('"tepid"', '"500 degC"'), encoding="utf-8")
    report = build.build_site(cases, out, packets=False)
    assert not report.failed
    page = (out / "cases" / "ammonia.html").read_text(encoding="utf-8")
    assert "this case could not be assessed" not in page and "Not current." not in page
    assert not (out / "cases" / "ammonia.last-good.json").exists()


def test_without_an_earlier_good_build_the_page_says_so(cases, tmp_path):
    break_ammonia(cases)
    out = tmp_path / "site"
    report = build.build_site(cases, out, packets=False)
    assert report.written and len(report.failed) == 1
    page = (out / "cases" / "ammonia.html").read_text(encoding="utf-8")
    assert "No earlier good build of this case is known" in page
    assert "Not current." not in page
    assert "no earlier good build of this case is known" in (out / "index.html").read_text("utf-8")


def test_an_earlier_export_of_another_file_is_not_taken_for_this_case(cases, tmp_path):
    out = tmp_path / "site"
    build.build_site(cases, out, packets=False)
    export = json.loads((out / "cases" / "ammonia.json").read_bytes())
    export["source_file"] = "other.md"
    (out / "cases" / "ammonia.json").write_text(json.dumps(export), encoding="utf-8")
    break_ammonia(cases)
    build.build_site(cases, out, packets=False)
    assert "No earlier good build" in (out / "cases" / "ammonia.html").read_text("utf-8")


def test_a_failed_case_keeps_its_earlier_packet_and_meeting_packet(cases, tmp_path):
    # The packets of the earlier build are stood in for by small files (printing
    # real ones takes seconds); what matters is that the build keeps them.
    out = tmp_path / "site"
    build.build_site(cases, out, packets=False)
    meeting = json.loads((out / "cases" / "ammonia.json").read_bytes())["meeting"]
    assert meeting, "the fixture case names a meeting"
    packets = out / "packets"
    packets.mkdir()
    (packets / "ammonia.pdf").write_bytes(b"%PDF-1.7 earlier case packet")
    (packets / f"meeting-{meeting}.pdf").write_bytes(b"%PDF-1.7 earlier meeting packet")
    break_ammonia(cases)
    report = build.build_site(cases, out, packets=False)
    assert (packets / "ammonia.pdf").read_bytes() == b"%PDF-1.7 earlier case packet"
    assert (packets / f"meeting-{meeting}.pdf").read_bytes() == b"%PDF-1.7 earlier meeting packet"
    assert "packets/ammonia.pdf" in (out / "cases" / "ammonia.html").read_text("utf-8")
    assert any("kept 2 PDF packets of an earlier build" in n for n in report.notes)


def test_a_build_without_packets_keeps_the_earlier_packets_and_says_so(cases, tmp_path):
    out = tmp_path / "site"
    # an earlier site that has packets (small stand-ins)
    write_site(out, {"index.html": b"earlier", "packets/ammonia.pdf": b"%PDF earlier"})
    report = build.build_site(cases, out, packets=False)
    assert (out / "packets" / "ammonia.pdf").read_bytes() == b"%PDF earlier"
    note = (out / "packets" / "KEPT-FROM-AN-EARLIER-BUILD.txt").read_text(encoding="utf-8")
    assert "printed by an earlier build" in note and "--no-packets" in note
    assert any("kept 1 PDF packets of an earlier build" in n for n in report.notes)
    assert any("kept 1 PDF packets" in line for line in report.lines())  # printed
    # nothing changed: the same site, untouched, still with the packet
    again = build.build_site(cases, out, packets=False)
    assert again.unchanged and (out / "packets" / "ammonia.pdf").is_file()


def test_under_serve_an_input_error_leaves_the_case_page_and_packets_served(cases, tmp_path):
    out = tmp_path / "site"
    build.build_site(cases, out, packets=False)
    (out / "packets").mkdir()
    (out / "packets" / "ammonia.pdf").write_bytes(b"%PDF stand-in")
    server = serve.site_server(out, port=0)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    try:
        port = server.server_address[1]
        break_ammonia(cases)
        reports = list(serve.rebuild_on_changes(
            [{(2, str(cases / "ammonia.md"))}],
            lambda: build.build_site(cases, out, packets=False), cases))
        assert len(reports) == 1 and reports[0].failed
        for path, text in (("cases/ammonia.html", b"this case could not be assessed"),
                           ("packets/ammonia.pdf", b"%PDF stand-in")):
            with urllib.request.urlopen(f"http://127.0.0.1:{port}/{path}", timeout=10) as r:
                assert r.status == 200 and text in r.read()
    finally:
        server.shutdown()
        server.server_close()
        thread.join(timeout=10)
