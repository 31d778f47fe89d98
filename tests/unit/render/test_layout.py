"""The site's layout as a reader meets it: severity marks, unbroken dates and tags,
findings ended at a word, no empty headings, the guide's code blocks, the print
stylesheet, the sortable register and the site's search index."""
from __future__ import annotations

import json
import re

import pytest

from dossier.render import pages as site
from dossier.render.alt_text import labelled_svg
from dossier.render.guide import guide_html
from dossier.render.markdown_html import drop_empty_headings, narrative_html
from dossier.render.search import embeddable, entry, plain, section_entries

import harness


@pytest.fixture(scope="module")
def built():
    return harness.built_site()


def test_a_section_heading_with_nothing_under_it_is_not_published():
    html = str(narrative_html("# Plan\n\n## Purpose\n\n## Route\n\nBy the nitro route.\n\n"
                              "## Open questions\n\n### None yet\n\n##\n\n## Data\n"))
    assert html == "<h3>Plan</h3>\n<h4>Route</h4>\n<p>By the nitro route.</p>\n"


def test_a_heading_whose_subsections_have_content_stays():
    html = "<h2>A</h2>\n<h3>B</h3>\n<p>x</p>\n<h3>C</h3>\n"
    assert drop_empty_headings(html) == "<h2>A</h2>\n<h3>B</h3>\n<p>x</p>\n"


def test_a_narrative_of_empty_headings_only_leaves_nothing():
    assert str(narrative_html("# Title\n\n## Purpose\n\n## Route\n")) == ""


def test_guide_code_blocks_scroll_and_take_the_keyboard_focus():
    html = str(guide_html("Run:\n\n```\ndossier build cases --out site\n```\n"))
    assert '<pre tabindex="0"><code>dossier build cases --out site\n</code></pre>' in html
    css = site.template_text("site.css")
    assert ".guide pre { overflow-x: auto;" in css
    assert ".guide.narrative { max-width: none; }" in css  # as wide as the other pages


def test_severity_marks_differ_in_words_and_bar_count_not_colour_alone():
    css = site.template_text("site.css")
    bars = {}
    for level in ("information", "caution", "warning", "critical"):
        rule = ".sev::before" if level == "information" else f".sev-{level}::before"
        m = re.search(re.escape(rule) + r' \{[^}]*content: "((?:\\25A[EF])+)" / ""', css)
        assert m, level
        bars[level] = m.group(1).count("\\25AE")  # filled bars of four
    assert bars == {"information": 1, "caution": 2, "warning": 3, "critical": 4}


def test_register_keeps_dates_and_tags_whole_and_ends_findings_at_a_word(built):
    page = (built.root / "index.html").read_text(encoding="utf-8")
    # every date and every hyphenated tag in the register's text sits in a no-break span
    date, seen = re.compile(r"\d{4}-\d{2}-\d{2}"), []
    for el in harness.parse(built.root / "index.html").iter():
        if el.tag == "script":
            continue
        if el.text and date.search(el.text):
            seen.append(el.text)
            assert el.tag == "span" and "nw" in el.get("class", "").split(), el.text
        assert not (el.tail and date.search(el.tail)), el.tail  # text outside any span
    assert len(seen) >= 3


def register_macros():
    return site.environment().get_template("_register_macros.html").module


def test_a_long_finding_ends_at_a_whole_word_with_a_link_to_all_of_it():
    text = ("At the MTSR 314.7 K (41.6 °C) the closed gas space reaches about 19.09 bar "
            "(gas 18.95 bar with the evolved gas, vapour up to 0.14 bar (H2O(l))) against a "
            "design pressure of 6 bar of tank T-330: rupture.")
    html = str(register_macros().finding_text(text, "peroxide-destruction"))
    assert html == (
        "At the MTSR 314.7 K (41.6 °C) the closed gas space reaches about 19.09 bar (gas "
        "18.95 bar with the evolved gas, vapour up to 0.14 bar (H2O(l))) against a design… "
        '<a class="more" href="cases/peroxide-destruction.html#findings">whole finding'
        '<span class="visually-hidden"> of case peroxide-destruction</span></a>')
    short = "Adiabatic temperature rise 133.7 K in R-204."
    assert str(register_macros().finding_text(short, "x")) == (
        'Adiabatic temperature rise 133.7 K in <span class="nw">R-204.</span>')


def test_hyphenated_words_are_kept_whole_and_escaped():
    assert str(register_macros().nw("meeting 2026-12-15 <b>R-220</b>")) == (
        'meeting <span class="nw">2026-12-15</span> <span class="nw">&lt;b&gt;R-220&lt;/b&gt;</span>')


def test_register_headings_say_how_each_column_sorts(built):
    page = (built.root / "index.html").read_text(encoding="utf-8")
    heads = re.findall(r'<th scope="col"(?: data-sort-kind="(\w+)")?>([^<]+)</th>', page)
    assert heads[:5] == [("text", "case"), ("number", "status and verdicts"),
                         ("number", "feasibility"), ("number", "thermal safety"),
                         ("", "record and files")]
    rows = re.findall(r'<tr data-search="[^"]*">\s*<td data-sort="([^"]+)">', page)
    assert rows and all(r for r in rows)


def test_the_print_stylesheet_keeps_the_register_compact():
    css = site.template_text("site.css")
    print_css = css[css.index("@media print {"):]
    assert "@page register { size: A4 landscape;" in print_css
    assert "main.register-page { page: register; }" in print_css
    assert "table.register tr { break-inside: avoid; }" in print_css
    # a whole table kept on one page pushed the register past a near-empty first page
    assert "figure, table { break-inside: avoid; }" not in print_css


def test_search_index_lists_cases_species_methods_and_guide(built):
    data = json.loads((built.root / "search.json").read_text(encoding="utf-8"))
    assert data["format"] == 1
    urls = {e["u"] for e in data["entries"]}
    assert "cases/hydrogenation.html" in urls
    assert any(u.startswith("species/") for u in urls)
    assert "methods.html#runaway" in urls
    assert "guide/case-format.html" in urls
    for e in data["entries"]:
        target = built.root / e["u"].split("#")[0]
        assert target.is_file(), e["u"]
        assert e["w"] == e["w"].lower() and e["t"].lower() in e["w"]
    hyd = next(e for e in data["entries"] if e["u"] == "cases/hydrogenation.html")
    assert "c6h5no2(l)" in hyd["w"]  # found by its reaction


def test_register_carries_the_same_index_and_nothing_can_close_its_block(built):
    page = (built.root / "index.html").read_text(encoding="utf-8")
    block = re.search(r'<script type="application/json" id="search-index">(.*?)</script>',
                      page, re.DOTALL).group(1)
    assert json.loads(block) == json.loads((built.root / "search.json").read_text("utf-8"))
    assert embeddable('{"t":"</script><b>&"}') == '{"t":"\\u003c/script\\u003e\\u003cb\\u003e\\u0026"}'
    assert json.loads(embeddable('{"t":"</script><b>&"}')) == {"t": "</script><b>&"}


def test_search_entries_from_page_headings():
    page = ('<html><head><title>Methods · dossier</title></head><body>'
            '<h1>Methods</h1><h2 id="runaway">Runaway <em>scenario</em> &amp; cooling</h2>'
            '<h4 id="deep">too deep</h4></body></html>').encode()
    assert section_entries({"methods.html": page}, "methods") == [
        entry("Methods", "methods.html", "methods", []),
        entry("Methods: Runaway scenario & cooling", "methods.html#runaway", "methods", []),
    ]
    assert plain(" a <b>b</b>\n&lt;c&gt; ") == "a b <c>"


def test_figure_svg_names_itself():
    svg = labelled_svg('<svg xmlns="http://www.w3.org/2000/svg" width="2">\n<g/></svg>',
                       "ΔG° against temperature", "Line plot of ΔG° & its <range>.")
    assert svg == ('<svg xmlns="http://www.w3.org/2000/svg" width="2" role="img" '
                   'aria-labelledby="figure-title figure-desc">\n'
                   ' <title id="figure-title">ΔG° against temperature</title>\n'
                   ' <desc id="figure-desc">Line plot of ΔG° &amp; its &lt;range&gt;.</desc>\n'
                   '<g/></svg>')
    assert labelled_svg(svg, "other", "other") == svg


def test_every_published_figure_has_a_title_and_description(built):
    for svg in (built.root / "figures").rglob("*.svg"):
        head = svg.read_text(encoding="utf-8")[:2000]
        assert 'role="img"' in head and '<title id="figure-title">' in head, svg
