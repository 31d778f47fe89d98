"""The terminal and the dossier page print the same texts and numbers.

For each case: render `dossier evaluate`'s text and the case page, and check
that every phrase both show (findings, their numbers, the crossover summary,
the results of the runaway scenario, what could not be assessed, the
cautions) reads the same on both, the page form differing only by typeset
symbols and identifiers put in words (dossier.render.phrases).
"""
from __future__ import annotations

import html
import re

import pytest

from dossier.build.assessing import assess_file
from dossier.number_policy import fixed
from dossier.build.outputs import case_view
from dossier.library.lookup import Library
from dossier.render import pages
from dossier.render.phrases import board_html, crossover_text, not_assessed_rows, safety_rows
from dossier.render.terminal import render_assessment

import harness
from paths import ROOT

CASES = [harness.CASES / "hydrogenation.md", harness.CASES / "calcination.md",
         harness.CASES / "ammonia.md",
         ROOT / "cases" / "benzene-nitration.md",   # intervals from stated uncertainties
         ROOT / "cases" / "dinitration.md"]
NUMBER = re.compile(r"[−+]?\d[\d\u202f]*(?:\.\d+)?")


def _page_text(fragment: str) -> str:
    """What a reader sees: tags dropped, entities decoded, spaces collapsed."""
    text = html.unescape(re.sub(r"<[^>]+>", "", fragment))
    return re.sub(r"[ \t\r\n]+", " ", text)


def _seen(text: str) -> str:
    """A plain text as the page shows it."""
    return _page_text(board_html(text))


@pytest.fixture(scope="module", params=CASES, ids=lambda p: p.stem)
def both(request):
    a = assess_file(request.param, Library.default())
    assert a.assessment is not None, request.param
    page = _page_text(pages.render_case_page(case_view(a, "case", ["s"] * len(a.assessment.species))))
    return a.assessment, render_assessment(a.assessment), page


def test_findings_read_the_same(both):
    a, terminal, page = both
    assert a.findings or a.case_id in ("ammonia",), "a case with findings is expected"
    for f in a.findings:
        assert f.text in terminal
        assert _seen(f.text) in page
        # the same numbers, in the same order, on both
        assert NUMBER.findall(f.text) == NUMBER.findall(_seen(f.text))


def test_crossovers_and_results_read_the_same(both):
    a, terminal, page = both
    words = crossover_text(a.thermo)
    assert words in terminal and _seen(words) in page
    if a.safety is not None:
        for label, text in safety_rows(a.safety):
            assert text in terminal, label
            assert _seen(text) in page, label
        for figure, needs in not_assessed_rows(a.safety):
            assert f"{figure} — needs {needs}" in terminal
            assert _seen(needs) in page


def test_the_same_cautions_once_each(both):
    a, terminal, page = both
    cautions = page[page.index("Cautions", page.index("Integrity record")):]
    for c in a.cautions:
        assert terminal.count(c) == 1
        assert cautions.count(c) == 1
    # no extra caution on the page that the terminal lacks
    assert cautions.count("Local codes") == 1 and "defers to local codes" not in cautions


def test_no_internal_identifiers_on_the_page(both):
    _a, _terminal, page = both
    for code in ("degC", "nasa7", "constant-cp", "p_initial", "rule exotherm-severity",
                 "decomposition.activation_energy", "T_p", "ΔT_ad", "e+0"):
        assert code not in page, code


def test_the_crossover_search_is_the_range_searched(both):
    a, _terminal, _page = both
    t = a.thermo
    if not t.crossovers:
        lo, hi = t.window_K
        # the window widened to the species data's common range, clipped to the scan
        # limits of the method settings (engine/settings.py crossover_scan_K, 200-3000 K)
        low = min(lo, max(t.data_range_K[0], 200.0))
        high = max(hi, min(t.data_range_K[1], 3000.0))
        assert f"{fixed(low, 1)} and {fixed(high, 1)}\u00a0K" in crossover_text(t)


def test_page_form_typesets_symbols_and_puts_identifiers_in_words():
    text = ("MTSR = T_p + X_acc·ΔT_ad; p = p_0 + nRT/V; vessel.coolant_temperature = 25 degC; "
            "decomposition.onset (onset of exothermic decomposition) is missing; "
            "decomposition.activation_energy; nasa7, constant-cp <b>")
    assert board_html(text) == (
        "MTSR = T<sub>p</sub> + X<sub>acc</sub>·ΔT<sub>ad</sub>; p = p<sub>0</sub> + nRT/V; "
        "the vessel&#x27;s coolant temperature = 25 °C; onset of exothermic decomposition is "
        "missing; the decomposition&#x27;s activation energy; NASA 7-coefficient polynomials, "
        "constant heat capacity &lt;b&gt;")
    # words that merely contain a code or a symbol are left alone
    assert board_html("degCelsius T_pressure my.charge.cp") == "degCelsius T_pressure my.charge.cp"
