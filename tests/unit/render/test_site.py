"""The published site as a reviewer meets it: pages, links, escaping, the build and the writer."""
from __future__ import annotations

import dataclasses
import json
import os
import re
import shutil
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest

from dossier.render import pages as site
from dossier.render.chemistry import formula_html, reaction_html
from dossier.render.markdown_html import narrative_html
from dossier.render.numbers import num, temp, unit
from dossier.render.slugs import case_slugs, slugify, unique_slugs
from dossier.build import writer
from dossier.build.assessing import CaseFailure, assess_file
from dossier.build.outputs import case_view, render_site
from dossier.build.pipeline import build_site
from dossier.engine import energetics, safety
from dossier.engine.settings import DEFAULT
from dossier.errors import DossierError
from dossier.library.lookup import Library

import harness
from paths import ROOT

ROOT = ROOT
CASE_IDS = ("ammonia", "calcination", "hydrogenation")


@pytest.fixture(scope="module")
def built():
    return harness.built_site()


def _text(path: Path) -> str:
    return path.read_text(encoding="utf-8")


def _plain(html_text: str) -> str:
    """Visible text of a page, whitespace collapsed."""
    tree = harness.parse(html_text.encode("utf-8"))
    body = tree.find("body")
    return re.sub(r"[ \t\r\n]+", " ", "".join(body.itertext())).strip()


# --------------------------------------------------------------------------
# The register and the pages

def test_register_lists_every_case_grouped_by_status(built):
    page = _text(built.root / "index.html")
    text = _plain(page)
    for cid in CASE_IDS:
        assert f'href="cases/{cid}.html"' in page
        assert f'href="cases/{cid}-derivation.html"' in page
        assert f'href="cases/{cid}.json"' in page
    open_part, decided_part = text.split("Decided cases (archive)", 1)
    # open cases first; the decided one (calcination, accepted with conditions) apart
    for cid in ("ammonia", "hydrogenation"):
        assert cid in open_part.split("Open cases", 1)[1]
    assert "calcination" in decided_part and "calcination rev." not in open_part
    # ΔG° sign over the window in words, crossovers and the worst finding
    assert "favourable nowhere in the window" in text  # ammonia at 400-500 °C
    assert "favourable in part of the window" in text  # calcination, crossover inside
    assert "criticality class 3" in text  # hydrogenation (the case's own numbers)
    assert "accepted with conditions (A. Reviewer, 2026-11-24)" in text


def test_ammonia_is_unfavourable_above_its_crossover(built):
    # N2 + 3 H2 <=> 2 NH3: ΔG° = 0 near 460 K at 1 bar standard state (from memory:
    # textbook value, K = 1 at about 190 °C); the page must show the crossover
    # below the 673-773 K window and the window as unfavourable.
    text = _plain(_text(built.root / "cases" / "ammonia.html"))
    m = re.search(r"(\d{3}(?:\.\d)?)\sK \((\d{3}(?:\.\d)?)\s°C\), favourable below, outside "
                  r"the window", text)
    assert m, text[:2000]
    assert 440.0 < float(m.group(1)) < 480.0


def test_register_reports_the_broken_case_with_file_line_and_key(built):
    text = _plain(_text(built.root / "index.html"))
    assert "Cases that could not be built" in text
    assert str(harness.CASES) not in text  # the file by its name, not where the build ran
    assert re.search(r"broken\.md:6: key 'temprature': unknown key; did you mean 'temperature'",
                     text)
    failed = {Path(f.file).name for f in built.report.failed}
    assert failed == {"broken.md"}
    assert sorted(built.report.built) == sorted(CASE_IDS)


def test_every_page_parses_as_strict_html(built):
    pages = harness.html_files(built.root)
    assert len(pages) >= 2 + 2 * len(CASE_IDS)
    for page in pages:
        harness.parse_strict(page)  # raises on any parse error (unclosed tags included)


def test_every_internal_link_resolves(built):
    assert harness.broken_links(built.root) == []


def test_case_page_shows_the_dossier(built):
    page = _text(built.root / "cases" / "hydrogenation.html")
    text = _plain(page)
    a = assess_file(harness.CASES / "hydrogenation.md", Library.default()).assessment
    # header and verdicts
    for words in ("Hydrogenation of the nitro intermediate, 2 m3 vessel", "revision 3",
                  "submitted for review", "Process development, building 7", "pilot",
                  "2026-11-24", "accepted with conditions (R. Example, 2026-11-20)"):
        assert words in text
    # the reaction typeset: counts as subscripts, phases labelled
    assert "C<sub>6</sub>H<sub>5</sub>NO<sub>2</sub>" in page
    assert '<span class="phase">(g)</span>' in page
    # numbers with units, from the assessment
    # (by the number policy: 0.1 kJ/mol; the MTSR and ΔT_ad at the digits of their intervals)
    assert unit(a.thermo.dG298_kJ_mol, "kJ/mol") in text
    assert temp(a.safety.mtsr_K, interval=a.safety.mtsr_interval_K) in text
    assert unit(a.safety.adiabatic_rise_K, "K", a.safety.adiabatic_rise_interval_K) in text
    # methods named; the entropy reading in words
    for words in ("Townsend and Tou (1980)", "Stoessel", "Kirchhoff", "UN Manual of Tests",
                  "Entropy of the universe", "the reaction can run forward at standard state"):
        assert words in text
    # findings with severity and source; cautions; the data used, linked
    assert "Source: Stoessel" in text and 'class="sev sev-critical"' in page
    for caution in a.cautions:
        assert caution in text
    assert 'href="../species/nitrobenzene-l.html"' in page
    assert "Figure 4. Temperature ladder of the runaway scenario." in text


def test_integrity_record_is_the_documented_digest(built):
    from dossier.review.digest import digest_for_case

    record, _rev, _cid = digest_for_case(harness.CASES / "hydrogenation.md")
    text = _plain(_text(built.root / "cases" / "hydrogenation.html"))
    assert record.digest in text and record.short in text
    assert record.short in _plain(_text(built.root / "index.html"))


def test_missing_integrity_record_is_labelled_not_faked():
    a = assess_file(harness.CASES / "ammonia.md", Library.default())
    a = dataclasses.replace(a, integrity=None, integrity_note="")
    v = case_view(a, "ammonia", ["n2-g", "h2-g", "nh3-g"])
    text = _plain(site.render_case_page(v))
    assert "integrity record: not yet computed" in text
    assert not re.search(r"\b[0-9a-f]{64}\b", text)
    assert not re.search(r"\b[0-9a-f]{4} [0-9a-f]{4} [0-9a-f]{4}\b", text)


def test_derivation_page_has_mathml_per_segment(built):
    page = _text(built.root / "cases" / "calcination-derivation.html")
    text = _plain(page)
    # CaCO3 data (NASA 7) change coefficients at 1000 K: two segments over 298.15-1173.15 K
    assert "Segment 1: 298.15 K to 1000.00 K" in text
    assert "Segment 2: 1000.00 K to 1173.15 K" in text
    assert page.count('<math xmlns="http://www.w3.org/1998/Math/MathML" display="block">') >= 13
    assert "<mi>ln</mi>" in page  # natural logarithm written as ln
    # the closed form agrees with the engine to well under 1 J/mol at every check point
    rows = re.findall(r'<tr><td class="n">([\d.]+)</td><td class="n">([−\d.\u202f]+)</td>'
                      r'<td class="n">([−\d.\u202f]+)</td>', page)
    assert len(rows) >= 4

    def number(text: str) -> float:
        return float(text.replace("−", "-").replace("\u202f", ""))

    for _t, g1, g2 in rows:  # kJ/mol; 1 J/mol tolerance: common practice, no source
        assert abs(number(g1) - number(g2)) < 1e-3


def test_species_pages_link_back_and_mark_local_data():
    b = harness.payload_site()
    pages = sorted((b.root / "species").glob("*.html"))
    names = [p.name for p in pages]
    local = [p for p in pages if p.name.startswith("local-payload-")]
    assert len(local) == 1, names
    text = _plain(_text(local[0]))
    assert "case-local" in text and "estimate" in text
    assert 'href="../cases/payload.html#data"' in _text(local[0])
    water = _plain(_text(b.root / "species" / "h2o-l.html"))
    assert "NASA Technical Memorandum 4513" in water and "Cases that use this record" in water
    for p in pages:
        assert re.fullmatch(r"[a-z0-9][a-z0-9-]*\.html", p.name), p.name


def test_methods_page_names_methods_and_sources(built):
    text = _plain(_text(built.root / "methods.html"))
    for src in (safety.severity_source(), safety.probability_source(), safety.CRITICALITY_SOURCE,
                safety.TMR_SOURCE, energetics.UN_SCREENING_SOURCE):
        assert src in text
    # every method setting is listed (the constants first), as the integrity record
    # digests it: one row each, with the value in use
    rows = site.setting_rows(DEFAULT)
    assert len(rows) == len(DEFAULT.record())
    for label, value in rows:
        assert f"{label}{value}" in text
    assert ("severity on ΔTad (K)", "low below 50; medium 50–200; high above 200") in rows
    assert ("probability on TMRad at the MTSR (h)", "high 0–8; medium 8–24; low above 24") in rows
    assert ("gas constant R (J/(mol·K))", "8.314462618") in rows
    for words in ("Kirchhoff", "Townsend and Tou, 1980", "TD24", "oxygen balance",
                  "Appendix 6", "Maximum decomposition energy", "p° = 1 bar", "Limits of the methods",
                  "Cautions"):
        assert words in text


# --------------------------------------------------------------------------
# Free text: escaped or sanitised everywhere

def _executable_bits(tree) -> list[str]:
    found = []
    for el in tree.iter():
        if not isinstance(el.tag, str):
            continue
        tag = el.tag.rsplit("}", 1)[-1].lower()
        if tag in ("script", "iframe", "object", "embed", "form", "style", "base", "meta") \
                and not (tag == "meta"):
            found.append(f"<{tag}>")
        for k, v in el.attrib.items():
            key = k.rsplit("}", 1)[-1].lower()
            if key.startswith("on"):
                found.append(f"{tag} {key}=")
            if key in ("href", "src", "action", "data", "formaction") and \
                    re.sub(r"\s", "", v or "").lower().startswith(("javascript:", "data:")):
                found.append(f"{tag} {key}={v}")
            if tag == "img" and key == "src" and re.match(r"(?i)\s*(https?:)?//", v or ""):
                found.append(f"remote image {v}")
    return found


def test_payloads_in_every_free_text_field_stay_text():
    b = harness.payload_site()
    assert b.report.failed == (), b.report.lines()
    own_script = site.template_text("filter.js")
    pages = harness.html_files(b.root)
    assert len(pages) >= 5
    for page in pages:
        tree = harness.parse(page)
        scripts = [el for el in tree.iter() if el.tag == "script"
                   and el.get("type") != "application/json"]
        data = [el for el in tree.iter("script") if el.get("type") == "application/json"]
        bits = [x for x in _executable_bits(tree) if x != "<script>"]
        assert bits == [], (page.name, bits)
        assert all(el.text == own_script for el in scripts), page.name
        # the register's search index is data, never run: the same JSON as search.json
        assert [json.loads(el.text) for el in data] == (
            [json.loads((b.root / "search.json").read_text(encoding="utf-8"))]
            if page == b.root / "index.html" else [])
        # only the register (the site's top index.html) carries the filter script
        assert len(scripts) == (1 if page == b.root / "index.html" else 0)
        csp = [el.get("content") for el in tree.iter("meta")
               if el.get("http-equiv") == "Content-Security-Policy"]
        assert csp and "default-src 'none'" in csp[0] and "unsafe-inline" not in csp[0]
    # the payload text is shown, escaped, where it was written
    text = _plain(_text(b.root / "cases" / "payload.html"))
    assert "Payload case <script>document.title='XSS-RAN'" in text
    assert "<svg onload=" in text  # the owner, as text
    assert "Object.assign(document,{title:'XSS-RAN'})" in text  # the local species name


@pytest.mark.parametrize("payload", harness.PAYLOADS)
def test_narrative_sanitiser_removes_active_content(payload):
    out = str(narrative_html(payload + "\n\n[x](javascript:alert(1)) ![i](http://h/i.png)"))
    tree = harness.parse(f"<html><body>{out}</body></html>".encode("utf-8"))
    assert [x for x in _executable_bits(tree)] == []
    assert "<img" not in out and "<script" not in out.lower()


def test_narrative_keeps_ordinary_markdown():
    out = str(narrative_html("# Route\n\nSee [the reference](https://example.org/a).\n\n"
                             "| a | b |\n|---|---|\n| 1 | 2 |\n\nH~2~O *in* water"))
    assert "<h3>Route</h3>" in out  # headings sit under the page's own
    assert 'href="https://example.org/a"' in out and 'rel="noopener noreferrer nofollow"' in out
    assert "<table>" in out and "<em>in</em>" in out


# --------------------------------------------------------------------------
# Chemistry, numbers, slugs

@pytest.mark.parametrize("label, expected", [
    ("H2O", "H<sub>2</sub>O"),
    ("C6H5NO2", "C<sub>6</sub>H<sub>5</sub>NO<sub>2</sub>"),
    ("SO4^2-", "SO<sub>4</sub><sup>2−</sup>"),
    ("SO4-2", "SO<sub>4</sub><sup>2−</sup>"),
    ("NH4+", "NH<sub>4</sub><sup>+</sup>"),
    ("Fe+3", "Fe<sup>3+</sup>"),
    ("CuSO4·5H2O", "CuSO<sub>4</sub>·5H<sub>2</sub>O"),
    ("Ca(OH)2", "Ca(OH)<sub>2</sub>"),
    ("e-", "e<sup>−</sup>"),
    ("<b>", "&lt;b&gt;"),
])
def test_formula_typesetting(label, expected):
    assert str(formula_html(label)) == expected


def test_reaction_typesetting_uses_arrows_and_escapes_names():
    out = str(reaction_html("1/2 O2(g) + intermediate <B>(l) <=> X(aq)"))
    assert "⇌" in out and '<span class="coeff">1/2</span>' in out
    assert "intermediate &lt;B&gt;" in out and "<B>" not in out
    assert "→" in str(reaction_html("CaCO3(s) -> CaO(s) + CO2(g)"))


def test_numbers_carry_true_minus_signs_and_units():
    # number policy: a four-digit number is not split (SI Brochure, 9th ed., 5.4.4)
    assert num(-1234.5, 1) == "−1234.5"
    assert num(-12345.5, 1) == "−12\u202f345.5"
    assert temp(298.15) == "298.2\u00a0K (25.0\u00a0°C)"
    assert unit(None, "K") == "not assessed"
    assert num(-0.0001, 2) == "0.00"  # no negative zero


@pytest.mark.parametrize("text", ["..", "../etc/passwd", "a/b", "CON", "con", "nul", "", "   ",
                                  "com1", "x" * 300, "ümlaut / slash", "H2O(l)", ".hidden"])
def test_slugs_are_safe_file_names(text):
    s = slugify(text)
    assert re.fullmatch(r"[a-z0-9]+(-[a-z0-9]+)*", s), s
    assert s not in ("con", "nul", "com1", "index", "methods") and len(s) <= 62


def test_slugs_keep_distinct_species_apart():
    slugs = unique_slugs([("CO(g)", "CO(g)"), ("Co(g)", "Co(g)"), ("NH4+(aq)", "NH4+(aq)"),
                          ("NH4(aq)", "NH4(aq)")])
    assert len(set(slugs.values())) == 4
    assert slugs["NH4+(aq)"] == "nh4-plus-aq"
    assert case_slugs(["a", "a-derivation"])["a-derivation"] != "a-derivation"


# --------------------------------------------------------------------------
# The build: isolation, strictness

def test_strict_build_writes_nothing(tmp_path):
    cases = tmp_path / "cases"
    cases.mkdir()
    shutil.copy(harness.CASES / "broken.md", cases / "broken.md")
    shutil.copy(harness.CASES / "ammonia.md", cases / "ammonia.md")
    out = tmp_path / "site"
    report = build_site(cases, out, strict=True, packets=False)
    assert not out.exists()
    assert not report.written and len(report.failed) == 1
    assert isinstance(report.failed[0], CaseFailure)
    lines = report.lines()
    assert any("broken.md:6: key 'temprature'" in line for line in lines)
    assert lines[-1].startswith("strict build: nothing written")
    assert sorted(os.listdir(tmp_path)) == ["cases"]  # no temporary folder left behind


def test_a_case_that_fails_to_render_is_left_out_and_the_others_build():
    lib = Library.default()
    good = assess_file(harness.CASES / "calcination.md", lib)
    # a defect, simulated: an assessed case without its reaction properties cannot
    # have its figures drawn
    bad = dataclasses.replace(assess_file(harness.CASES / "ammonia.md", lib), thermo=None)
    out = render_site([bad, good], packets=False)
    assert [Path(f.file).name for f in out.failed] == ["ammonia.md"]
    assert "internal error" in out.failed[0].problems[0]
    assert "cases/calcination.html" in out.files and "cases/ammonia.html" not in out.files
    assert not any(k.startswith(("species/n2-", "species/nh3-")) for k in out.files)
    register = out.files["index.html"].decode("utf-8")
    assert "ammonia.md" in register and 'href="cases/calcination.html"' in register
    assert 'href="cases/ammonia.html"' not in register


def test_build_refuses_the_cases_folder_before_any_work(tmp_path):
    cases = tmp_path / "cases"
    cases.mkdir()
    shutil.copy(harness.CASES / "ammonia.md", cases / "ammonia.md")
    with pytest.raises(DossierError, match="cases folder"):
        build_site(cases, cases, packets=False)
    with pytest.raises(DossierError, match="contains"):
        build_site(cases, tmp_path, packets=False)
    assert sorted(p.name for p in cases.iterdir()) == ["ammonia.md"]


def test_missing_cases_folder_is_one_clear_error(tmp_path):
    with pytest.raises(DossierError, match="cases folder does not exist"):
        build_site(tmp_path / "nope", tmp_path / "site")


# --------------------------------------------------------------------------
# The writer

def _files(n: int = 3) -> dict[str, bytes]:
    return {"index.html": b"<!DOCTYPE html><title>x</title>",
            **{f"cases/c{i}.html": f"case {i}".encode() for i in range(n)}}


def test_writer_refuses_dangerous_targets(tmp_path):
    cases = tmp_path / "cases"
    cases.mkdir()
    for target, why in ((Path("/"), "root folder"), (Path.home(), "home folder"),
                        (cases, "cases folder"), (tmp_path, "contains")):
        with pytest.raises(writer.OutputError, match=why):
            writer.write_site(target, _files(), protected=[cases])
    foreign = tmp_path / "notes"
    foreign.mkdir()
    (foreign / "thesis.txt").write_text("precious")
    with pytest.raises(writer.OutputError, match="does not look like a dossier site"):
        writer.write_site(foreign, _files())
    assert (foreign / "thesis.txt").read_text() == "precious"
    link = tmp_path / "link"
    link.symlink_to(foreign)
    with pytest.raises(writer.OutputError, match="symbolic link"):
        writer.write_site(link, _files())


@pytest.mark.parametrize("rel", ["../x.html", "/etc/x", "a/../../x", "a\\b", "", "a//b",
                                 ".git/config", "a/./b"])
def test_writer_refuses_paths_outside_the_folder(tmp_path, rel):
    with pytest.raises(ValueError):
        writer.write_site(tmp_path / "site", {rel: b"x"})
    assert not (tmp_path / "site").exists()
    assert sorted(os.listdir(tmp_path)) == []


def test_writer_replaces_a_previous_site_and_an_empty_folder(tmp_path):
    out = tmp_path / "site"
    out.mkdir()  # empty: allowed
    r1 = writer.write_site(out, _files(3))
    assert r1.files == 4 and (out / writer.MARKER).is_file()
    r2 = writer.write_site(out, _files(1))
    assert r2.replaced
    assert sorted(p.name for p in (out / "cases").iterdir()) == ["c0.html"]  # old files gone
    assert sorted(os.listdir(tmp_path)) == ["site"]


def test_interrupted_write_leaves_the_previous_site_intact(tmp_path, monkeypatch):
    out = tmp_path / "site"
    writer.write_site(out, _files(3))
    before = {p.relative_to(out): p.read_bytes() for p in out.rglob("*") if p.is_file()}
    real_open = open
    calls = []

    def failing_open(path, mode="r", *args, **kwargs):
        calls.append(path)
        if len(calls) == 3:
            raise KeyboardInterrupt  # the user pressed Ctrl-C half-way
        return real_open(path, mode, *args, **kwargs)

    monkeypatch.setattr(writer, "open", failing_open, raising=False)
    with pytest.raises(KeyboardInterrupt):
        writer.write_site(out, {k: b"new" for k in _files(9)})
    after = {p.relative_to(out): p.read_bytes() for p in out.rglob("*") if p.is_file()}
    assert after == before
    assert sorted(os.listdir(tmp_path)) == ["site"]  # the temporary folder is gone


# --------------------------------------------------------------------------
# Packaging: the templates ship inside the wheel

def test_built_wheel_contains_the_templates(tmp_path):
    src = tmp_path / "src"
    src.mkdir()
    for name in ("pyproject.toml", "README.md"):
        if (ROOT / name).exists():
            shutil.copy(ROOT / name, src / name)
    shutil.copytree(ROOT / "dossier", src / "dossier",
                    ignore=shutil.ignore_patterns("__pycache__"))
    shutil.copytree(ROOT / "templates", src / "templates",
                    ignore=shutil.ignore_patterns("__pycache__"))
    shutil.copytree(ROOT / "docs", src / "docs", ignore=shutil.ignore_patterns("__pycache__"))
    import importlib.util

    # without isolation when the build backend is at hand (faster, no index needed)
    local = importlib.util.find_spec("wheel") is not None
    proc = subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--quiet",
                           *(["--no-build-isolation"] if local else []),
                           "-w", str(tmp_path / "dist"), str(src)],
                          capture_output=True, text=True, timeout=300)
    if proc.returncode != 0 and ("No matching distribution" in proc.stderr
                                 or "Could not find a version" in proc.stderr):
        pytest.skip("no package index reachable to fetch the build backend: "
                    + proc.stderr.strip().splitlines()[-1])
    assert proc.returncode == 0, proc.stderr
    wheel = next((tmp_path / "dist").glob("dossier-*.whl"))
    names = set(zipfile.ZipFile(wheel).namelist())
    shipped = {p.name for p in (ROOT / "templates").iterdir()
               if p.suffix in (".html", ".css", ".js")}
    assert shipped >= {"base.html", "case.html", "register.html", "site.css", "packet.css",
                       "filter.js"}
    # the user guide ships too (rendered into the site's guide/ pages)
    assert {"dossier/docs/guide.md", "dossier/docs/case-format.md"} <= names
    for name in shipped:
        assert f"dossier/templates/{name}" in names, name
