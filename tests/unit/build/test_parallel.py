"""Parallel builds (--jobs), progress, and the rebuild-on-change logic of `dossier serve`."""
from __future__ import annotations

import json
import re
import shutil
import threading
import urllib.request
from pathlib import Path

import pytest
from click.testing import CliRunner

import dossier.build.pipeline as build
import dossier.build.serve as serve
import harness
from dossier.build.writer import MANIFEST
from dossier.cli.main import main
from dossier.errors import DossierError

GOOD = ("ammonia.md", "calcination.md", "hydrogenation.md")


def _files(site: Path) -> dict[str, bytes]:
    return {str(p.relative_to(site)): p.read_bytes() for p in sorted(site.rglob("*"))
            if p.is_file()}


@pytest.fixture
def cases(tmp_path):
    folder = tmp_path / "cases"
    folder.mkdir()
    for name in (*GOOD, "broken.md"):
        shutil.copy(harness.CASES / name, folder / name)
    return folder


def test_one_and_two_workers_build_the_same_site_byte_for_byte(cases, tmp_path):
    one = build.build_site(cases, tmp_path / "one", packets=False, jobs=1,
                           cache_dir=tmp_path / "c1")
    two = build.build_site(cases, tmp_path / "two", packets=False, jobs=2,
                           cache_dir=tmp_path / "c2")
    assert one.built == two.built == ("ammonia", "calcination", "hydrogenation")
    assert [f.file for f in one.failed] == [f.file for f in two.failed]
    a, b = _files(tmp_path / "one"), _files(tmp_path / "two")
    assert len(a) > 20 and a.keys() == b.keys()
    assert [k for k in a if a[k] != b[k]] == []


# weasyprint stamps the time of printing into the PDF (creation and modification
# dates, and the file identifier derived from them); everything else must agree
# (pikepdf, putting meeting packets together, writes the identifier as a digest of the
# content, print time included, in the form /ID [<hex><hex>])
_PDF_TIME = re.compile(rb"D(?::|\\072)\d{14}(?:Z|[+-]\d\d'?\d\d'?)?"
                       rb"|\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(?:\.\d+)?(?:Z|[+-]\d\d:\d\d)?"
                       rb"|/ID \[\([0-9a-f]+\) \([0-9a-f]+\)\]"
                       rb"|/ID \[ ?<[0-9a-f]+> ?<[0-9a-f]+> ?\]")


def _without_pdf_sizes(manifest: bytes) -> dict:
    data = json.loads(manifest)
    data["files"] = {k: v for k, v in data["files"].items() if not k.endswith(".pdf")}
    return data


def test_packets_agree_between_one_and_two_workers_apart_from_the_print_time(tmp_path):
    folder = tmp_path / "cases"
    folder.mkdir()
    for name in ("ammonia.md", "calcination.md"):
        shutil.copy(harness.CASES / name, folder / name)
    build.build_site(folder, tmp_path / "one", jobs=1, cache_dir=tmp_path / "c1")
    build.build_site(folder, tmp_path / "two", jobs=2, cache_dir=tmp_path / "c2")
    a, b = _files(tmp_path / "one"), _files(tmp_path / "two")
    pdfs = [k for k in a if k.endswith(".pdf")]
    assert pdfs and a.keys() == b.keys()
    # the manifest lists every file's size, and a PDF's size moves with its compressed
    # print-time metadata: compare the manifest without the PDFs' entries
    a[MANIFEST], b[MANIFEST] = _without_pdf_sizes(a[MANIFEST]), _without_pdf_sizes(b[MANIFEST])
    assert [k for k in a if not k.endswith(".pdf") and a[k] != b[k]] == []
    for k in pdfs:
        assert _PDF_TIME.sub(b"T", a[k]) == _PDF_TIME.sub(b"T", b[k]), k


def test_progress_is_told_every_phase_up_to_its_total(cases, tmp_path):
    seen: list[tuple[str, int, int]] = []
    build.build_site(cases, tmp_path / "site", packets=False, jobs=2,
                     progress=lambda phase, done, total: seen.append((phase, done, total)))
    phases = {p for p, _d, _t in seen}
    assert {"assess", "cases", "pages"} <= phases
    for phase in phases:
        last = [(d, t) for p, d, t in seen if p == phase][-1]
        assert last[0] == last[1]
    assert ("assess", 4, 4) in seen


def test_cli_build_prints_plain_progress_and_a_summary_when_not_a_terminal(cases, tmp_path):
    out = tmp_path / "site"
    result = CliRunner().invoke(main, ["build", str(cases), "--out", str(out), "--no-packets",
                                       "--jobs", "2", "--cache", str(tmp_path / "cache")])
    assert result.exit_code == 2, result.output  # broken.md
    assert "assess: 4/4" in result.output
    assert re.search(r"built 3 of 4 cases into .*: \d+ files, 0 PDF packets; \d+ made, 0 reused",
                     result.output)
    again = CliRunner().invoke(main, ["build", str(cases), "--out", str(out), "--no-packets",
                                      "--cache", str(tmp_path / "cache")])
    assert "nothing changed" in again.output
    assert (tmp_path / "cache" / "blobs").is_dir()


def test_jobs_must_be_positive(cases, tmp_path):
    with pytest.raises(DossierError, match="--jobs"):
        build.build_site(cases, tmp_path / "site", jobs=0)


# --------------------------------------------------------------------------
# dossier serve: which changes rebuild, and the server itself

def test_only_source_changes_rebuild(cases, tmp_path):
    templates = tmp_path / "templates"
    templates.mkdir()
    made = []

    def rebuild():
        made.append(1)
        return len(made)

    batches = [
        {(2, str(cases / ".ammonia.md.swp"))},  # editor file
        {(2, str(cases / "notes.txt"))},
        {(2, str(tmp_path / "site" / "index.html"))},  # the site itself
        {(2, str(cases / "ammonia.md")), (2, str(cases / "calcination.md"))},  # one rebuild
        {(1, str(cases / "ammonia.signatures"))},
        {(2, str(cases / "trusted-keys.txt"))},
        {(2, str(cases / "ammonia" / "rev-1.md"))},
        {(2, str(templates / "case.html"))},
    ]
    assert list(serve.rebuild_on_changes(batches, rebuild, cases, [templates])) == [1, 2, 3, 4, 5]


def test_a_changed_case_is_rebuilt_in_the_served_site(cases, tmp_path):
    out = tmp_path / "site"
    build.build_site(cases, out, packets=False)
    with open(cases / "ammonia.md", "a", encoding="utf-8") as fh:
        fh.write("\nA sentence added while serving.\n")
    batches = [{(2, str(cases / "ammonia.md"))}]
    reports = list(serve.rebuild_on_changes(
        batches, lambda: build.build_site(cases, out, packets=False), cases))
    assert len(reports) == 1 and reports[0].written
    assert 0 < reports[0].rendered < reports[0].reused
    assert reports[0].made["assess"] == 1 and reports[0].taken["assess"] == 3
    assert "A sentence added while serving." in (out / "cases" / "ammonia.html").read_text("utf-8")


def test_server_listens_on_localhost_only_and_serves_the_site(cases, tmp_path):
    out = tmp_path / "site"
    build.build_site(cases, out, packets=False)
    server = serve.site_server(out, port=0)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    try:
        host, port = server.server_address[:2]
        assert host == "127.0.0.1"
        with urllib.request.urlopen(f"http://127.0.0.1:{port}/index.html", timeout=10) as r:
            assert r.status == 200 and b"Register of cases" in r.read()
    finally:
        server.shutdown()
        server.server_close()
        thread.join(timeout=10)
    assert not thread.is_alive()
