"""PDF packets: content as text, archival form, attachments, and a fetcher that stays home."""
from __future__ import annotations

import http.server
import io
import json
import re
import shutil
import threading
from pathlib import Path

import pytest

from dossier.render import packets
from dossier.render import pages as site
from dossier.render.maths import derivation_view
from dossier.render.numbers import num, unit
from dossier.assess.evaluate import CAUTIONS
from dossier.build.assessing import assess_file
from dossier.library.lookup import Library

import harness

pypdf = pytest.importorskip("pypdf")


def _squash(text: str) -> str:
    """Text without any whitespace, so line breaks in the PDF do not matter."""
    return re.sub(r"[\s\u00a0\u202f]+", "", text)


@pytest.fixture(scope="module")
def built():
    return harness.packet_site()


@pytest.fixture(scope="module")
def case_pdf(built):
    return pypdf.PdfReader(built.root / "packets" / "kiln.pdf")


@pytest.fixture(scope="module")
def case_text(case_pdf):
    return [page.extract_text() for page in case_pdf.pages]


@pytest.fixture(scope="module")
def assessment():
    return assess_file(harness.HERE / "packet" / "kiln.md", Library.default()).assessment


# --------------------------------------------------------------------------
# The fetcher

@pytest.mark.parametrize("url", [
    "http://127.0.0.1/x.png", "https://example.org/style.css", "ftp://example.org/x",
    "file:///etc/passwd", "file:///dossier-site/../etc/passwd",
    "file:///dossier-site/%2e%2e/etc/passwd", "file:///dossier-site-other/x.css",
    "file://host/dossier-site/style.css", "data:text/css,body{}", "file:///dossier-site/",
    "javascript:alert(1)", "file:///dossier-site/a\\..\\..\\etc",
])
def test_site_path_refuses_everything_outside_the_site(url):
    with pytest.raises(packets.RefusedURL):
        packets.site_path(url)


def test_site_path_maps_urls_to_site_files():
    assert packets.site_path(packets.ROOT_URL + "figures/cases/a/gibbs.svg") == \
        "figures/cases/a/gibbs.svg"
    assert packets.site_path(packets.ROOT_URL + "packets/../style.css") == "style.css"


def test_fetcher_serves_only_files_it_holds():
    f = packets.site_fetcher({"style.css": b"body{}"})
    resp = f.fetch(packets.ROOT_URL + "style.css")
    assert resp.read() == b"body{}" and resp.content_type == "text/css"
    with pytest.raises(packets.RefusedURL):
        f.fetch(packets.ROOT_URL + "missing.css")
    with pytest.raises(packets.RefusedURL):
        f.fetch("file:///etc/hostname")
    assert f.served == ["style.css"] and len(f.refused) == 2


class _Counter(http.server.BaseHTTPRequestHandler):
    hits: list[str] = []

    def do_GET(self):  # noqa: N802 - http.server's name
        type(self).hits.append(self.path)
        self.send_response(200)
        self.send_header("Content-Type", "text/css")
        self.end_headers()
        self.wfile.write(b"body { color: red }")

    def log_message(self, *args):  # keep test output quiet
        pass


def test_packet_never_fetches_from_the_network_or_other_files(tmp_path):
    server = http.server.HTTPServer(("127.0.0.1", 0), _Counter)
    port = server.server_address[1]
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    secret = tmp_path / "secret.css"
    secret.write_text("body::after { content: 'SECRET-OUTSIDE-THE-SITE' }")
    try:
        html = f"""<!DOCTYPE html><html><head><title>t</title>
<link rel="stylesheet" href="http://127.0.0.1:{port}/remote.css">
<link rel="stylesheet" href="{secret.as_uri()}">
<link rel="stylesheet" href="../packet.css">
<style>@import url("http://127.0.0.1:{port}/imported.css");</style>
<link rel="attachment" href="http://127.0.0.1:{port}/attach.bin">
</head><body><p>inside</p>
<img src="http://127.0.0.1:{port}/pixel.png" alt="remote">
<img src="file:///etc/hostname" alt="local file">
<img src="../../../../etc/hostname" alt="climbing out">
</body></html>"""
        result = packets.render_pdf(html, "packets/test.html",
                                    {"packet.css": b"p { color: #123456 }"}, variant=None)
    finally:
        server.shutdown()
        server.server_close()
    assert _Counter.hits == []
    assert result.served == ("packet.css",)
    refused = " ".join(result.refused)
    for part in ("remote.css", "imported.css", "pixel.png", secret.name, "/etc/hostname"):
        assert part in refused, part
    text = pypdf.PdfReader(io.BytesIO(result.pdf)).pages[0].extract_text()
    assert "inside" in text and "SECRET-OUTSIDE-THE-SITE" not in text


# --------------------------------------------------------------------------
# The case packet

def test_case_packet_contains_the_dossier_as_text(case_text, assessment):
    text = _squash(" ".join(case_text))
    t = assessment.thermo
    for needle in ("kiln", "Lime kiln trial: calcination of limestone, hot zone",
                   "CaCO3(s) -> CaO(s) + CO2(g)",  # the reaction as written
                   unit(t.dG298_kJ_mol, "kJ/mol"),  # ΔG° at 298.15 K (number policy)
                   f"{num(t.profile[0].dG_kJ_mol, 1)}",  # ΔG° at the window ends
                   f"{num(t.profile[-1].dG_kJ_mol, 1)}",
                   "favourable in part of the window",
                   "Carbon dioxide monitoring in the kiln hall before the first firing.",
                   "Derivation: kiln, revision 1", "Appendix: methods, thresholds and sources",
                   "Townsend", "Kirchhoff"):
        assert _squash(needle) in text, needle
    for caution in CAUTIONS:
        assert _squash(caution) in text, caution
    # the closed forms print as text (ln(T) terms of the NASA 7-coefficient data)
    assert _squash("ln(T)") in text


def test_case_packet_cover_contents_header_and_page_numbers(case_text):
    n = len(case_text)
    assert n >= 5
    cover = _squash(case_text[0])
    assert "REVIEWPACKET" in cover and _squash("Integrity record") in cover
    assert _squash("accepted with conditions (A. Reviewer, 2026-11-24)") in cover
    assert _squash("dossier review packet") not in cover  # no running header on the cover
    assert f"page1of{n}" in cover
    contents = _squash(case_text[1])
    assert "Contents" in contents and re.search(r"Thermodynamics\.*\d+", contents)
    for i, page in enumerate(case_text[2:], start=3):
        squashed = _squash(page)
        assert _squash("Case kiln · revision 1") in squashed, i
        assert f"page{i}of{n}" in squashed, i


def test_case_packet_is_archival_with_metadata_and_the_assessment_attached(case_pdf, built):
    meta = case_pdf.metadata
    assert meta.title.startswith("kiln, revision 1")
    assert "revision 1" in meta.subject and "revision 1" in meta["/Keywords"]
    xmp = case_pdf.trailer["/Root"]["/Metadata"].get_object().get_data().decode("utf-8")
    # PDF/A-3a (archival, tagged) and the PDF/UA-1 identification beside it
    assert re.search(r"pdfaid:part(>|=\")3", xmp) and re.search(r"pdfaid:conformance(>|=\")A", xmp)
    assert re.search(r"pdfuaid:part(>|=\")1", xmp)
    assert "/StructTreeRoot" in case_pdf.trailer["/Root"]
    assert case_pdf.trailer["/Root"]["/MarkInfo"]["/Marked"]
    attached = case_pdf.attachments
    assert list(attached) == ["kiln-assessment.json"]
    data = json.loads(attached["kiln-assessment.json"][0])
    site_json = json.loads((built.root / "cases" / "kiln.json").read_text("utf-8"))
    assert data == site_json and data["case"] == "kiln"
    assert data["integrity"]["digest"] in " ".join(p.extract_text() for p in case_pdf.pages[:1]) \
        .replace("\n", "")


def test_meeting_packet_has_its_own_cover_and_agenda(built, case_text):
    pdf = pypdf.PdfReader(built.root / "packets" / "meeting-2026-11-24.pdf")
    assert pdf.metadata.title == "Review meeting 2026-11-24"
    assert len(pdf.pages) == 1 + len(case_text)  # cover and agenda, then the case packet
    cover = _squash(pdf.pages[0].extract_text())
    for needle in ("Review meeting 2026-11-24", "Agenda", "kiln, revision 1",
                   "startson", "page 2", "Cautions"):
        assert _squash(needle) in cover, needle
    # each case page as the case packet has it, with the meeting packet's own number
    # stamped at its foot: "page i of N" counts through the whole meeting packet
    n = len(pdf.pages)
    for i, text in enumerate(case_text, start=2):
        stamp = _squash(f"Meeting packet 2026-11-24 · page {i} of {n}")
        assert _squash(pdf.pages[i - 1].extract_text()) == _squash(case_text[i - 2]) + stamp
    assert list(pdf.attachments) == ["kiln-assessment.json"]


def test_parts_are_read_once_and_give_what_a_fresh_read_gives(built, case_text):
    from dossier.render.assembly import Part, assemble, read_parts

    data = (built.root / "packets" / "kiln.pdf").read_bytes()
    (opened,) = read_parts([data], ["Case kiln"])
    assert opened.reader is not None and opened.pdf_reader() is opened.reader
    assert opened.page_count == Part(data, "Case kiln").page_count == len(case_text)
    # the same packet whether its part came with its reader or is read afresh
    fresh = pypdf.PdfReader(io.BytesIO(assemble(data, [Part(data, "Case kiln")])))
    reused = pypdf.PdfReader(io.BytesIO(assemble(data, read_parts([data], ["Case kiln"]))))
    assert len(fresh.pages) == len(reused.pages) == 2 * len(case_text)
    assert [p.extract_text() for p in fresh.pages] == [p.extract_text() for p in reused.pages]
    with pytest.raises(ValueError, match="1 PDFs but 2 titles"):
        read_parts([data], ["a", "b"])


def test_packet_site_links_resolve_and_name_the_packets(built):
    assert built.report.packets == ("packets/kiln.pdf", "packets/meeting-2026-11-24.pdf")
    assert built.report.notes == ()  # no packet asked for a file the site does not hold
    assert harness.broken_links(built.root) == []
    index = (built.root / "index.html").read_text("utf-8")
    assert 'href="packets/kiln.pdf"' in index
    assert 'href="packets/meeting-2026-11-24.pdf"' in index


def test_pdftoppm_renders_the_cover(built):
    exe = shutil.which("pdftoppm") or ("/usr/bin/pdftoppm" if Path("/usr/bin/pdftoppm").exists()
                                       else None)
    if exe is None:
        pytest.skip("pdftoppm is not installed (poppler-utils); cannot render a packet page")
    import subprocess

    from PIL import Image

    harness.ARTIFACTS.mkdir(exist_ok=True)
    stem = harness.ARTIFACTS / "packet-cover"
    subprocess.run([exe, "-png", "-r", "60", "-f", "1", "-l", "1", "-singlefile",
                    str(built.root / "packets" / "kiln.pdf"), str(stem)],
                   check=True, timeout=120)
    png = stem.with_suffix(".png")
    img = Image.open(png).convert("L")
    w, h = img.size
    assert abs(w / h - 210 / 297) < 0.01  # A4 portrait
    dark = sum(img.histogram()[:128])
    assert dark > 0.005 * w * h  # there is ink on the page


def test_closed_forms_print_as_text_and_fall_back_to_svg():
    from dossier.engine.derivation import Segment

    seg = Segment(t_low=298.15, t_high=400.0, anchor=298.15, dH_anchor=-1000.0, dS_anchor=-2.0,
                  dCp_latex=r"1.5 \cdot 10^{-3} T^{2} - 4.0 T + 12.0",
                  dH_latex=r"\frac{2.0 \cdot 10^{5}}{T} + 3.0 T - 7.0",
                  dS_latex=r"12.0 \log{\left(T \right)} - 5.5",
                  dG_latex=r"\sqrt{T} + 1.0")  # a shape the text form does not cover
    view = derivation_view([seg], "x", 298.15, 400.0, (), ())
    cp, h, s_, g = view.segments[0].equations
    assert str(cp.html[0]) == ('<span class="closed-form">Δ<sub>r</sub><i>C</i><sub><i>p</i></sub>'
                               '°(<i>T</i>) = 1.5\u00a0×\u00a010<sup>−3</sup>\u00a0<i>T</i><sup>2</sup>'
                               ' −\u00a04.0\u00a0<i>T</i> +\u00a012.0</span>')
    assert "2.0\u00a0×\u00a010<sup>5</sup>/<i>T</i>" in str(h.html[0])
    assert "12.0\u00a0ln(<i>T</i>)" in str(s_.html[0])
    assert g.html == (None,)
    v = type("V", (), {"derivation": view})()
    assets = dict(site.print_assets(v))
    assert assets[g.assets[0]].startswith(r"\Delta_{\text{r}} G^{\circ}(T) = \sqrt{T}")
    assert cp.assets[0] not in assets  # printed as text, no image needed



@pytest.mark.parametrize("n", [1, 5])
def test_meeting_agenda_numbers_the_cases_after_its_own_pages_whatever_the_guess(
        n, monkeypatch):
    # the agenda is numbered before it is laid out, from a guess of its own length
    # (outputs.cover_pages_guess); a wrong guess costs a second lay-out, never a wrong
    # "starts on": the same pages come out whether the guess was right or not
    from dossier.build import outputs
    from dossier.render.views import MeetingView

    a = assess_file(harness.HERE / "packet" / "kiln.md", Library.default())
    v = outputs.light_view(a, "kiln", [])
    m = MeetingView(date="2026-11-24", slug="meeting-2026-11-24", cases=(v,) * n)
    files = outputs.base_files(True)

    def agenda(guess: int) -> tuple[int, str]:
        monkeypatch.setattr(outputs, "cover_pages_guess", lambda cases: guess)
        cover = outputs.meeting_cover(m, (7,) * n, files)
        pdf = pypdf.PdfReader(io.BytesIO(packets.write_pdf([cover], variant=None)))
        return cover.page_count, "\n".join(p.extract_text() for p in pdf.pages)

    pages, text = agenda(1)
    assert (pages, text) == agenda(pages + 1)  # a guess too long gives the same
    starts = [int(s) for s in re.findall(r"^page (\d+)$", text, re.M)]  # "starts on" cells
    assert starts == [pages + 1 + 7 * i for i in range(n)]
