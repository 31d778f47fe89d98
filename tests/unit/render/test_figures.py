"""Figures: real SVG, byte-stable rebuilds, data tables that match the assessment."""
from __future__ import annotations

import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest

from dossier.render import figures
from dossier.build.assessing import assess_file
from dossier.library.lookup import Library

import harness

SVG_NS = "{http://www.w3.org/2000/svg}"


@pytest.fixture(scope="module")
def calcination():
    return assess_file(harness.CASES / "calcination.md", Library.default())


@pytest.fixture(scope="module")
def hydrogenation():
    return assess_file(harness.CASES / "hydrogenation.md", Library.default())


def _svg_root(svg: str):
    root = ET.fromstring(svg.encode("utf-8"))
    assert root.tag == f"{SVG_NS}svg"
    assert root.get("viewBox")
    return root


def test_case_figures_are_svg_with_caption_alt_and_data(hydrogenation):
    figs = figures.case_figures(hydrogenation.thermo, hydrogenation.assessment)
    # the fixture gives an MTT and decomposition kinetics, so the envelope is drawn too
    assert [f.name for f in figs] == ["gibbs", "conversion", "entropy", "ladder", "envelope"]
    for f in figs:
        _svg_root(f.svg)
        assert f.caption and f.alt and f.title
        assert f.rows and all(len(r) == len(f.columns) for r in f.rows)
        assert "Date" not in f.svg and "<dc:date>" not in f.svg  # no build date in the file


def test_rebuilt_figures_are_byte_identical(calcination):
    t = calcination.assessment.thermo

    def draw():
        return (figures.gibbs_figure(calcination.thermo, t.window_K, t.data_range_K,
                                     t.crossovers).svg,
                figures.entropy_figure(t.profile).svg,
                figures.formula_svg(r"\ln K = -\frac{\Delta G}{R T}"))

    assert draw() == draw()


def test_gibbs_figure_marks_the_crossover_inside_the_window(calcination):
    # CaCO3(s) -> CaO(s) + CO2(g): ΔG° = 0 near 1160-1170 K at p° = 1 bar (from memory:
    # the CO2 dissociation pressure of calcite reaches 1 atm near 890-900 °C).
    a = calcination.assessment
    (cross,) = a.thermo.crossovers
    assert 1150.0 < cross.T < 1180.0
    assert cross.direction == "favourable above"
    f = figures.gibbs_figure(calcination.thermo, a.thermo.window_K, a.thermo.data_range_K,
                             a.thermo.crossovers)
    lo, hi = figures.gibbs_range(a.thermo.window_K, a.thermo.crossovers)
    assert lo < a.thermo.window_K[0] and hi > a.thermo.window_K[1]  # wider than the window
    row = [r for r in f.rows if "crossover" in r[3]]
    assert len(row) == 1 and abs(float(row[0][0]) - cross.T) < 0.01
    assert abs(float(row[0][2])) < 1e-3  # ΔG° there is zero, kJ/mol
    assert f"{cross.T:.1f}\u00a0K" in f.caption  # kelvin_celsius, 0.1 K (number policy)
    # ΔG° in the table is the engine's own value at each temperature
    for r in f.rows:
        T = float(r[0])
        assert float(r[2]) == pytest.approx(float(calcination.thermo.dG(np.array([T]))[0]) / 1e3,
                                            abs=6e-4)


def test_gibbs_figure_dashes_the_extrapolated_part(hydrogenation):
    a = hydrogenation.assessment
    f = figures.gibbs_figure(hydrogenation.thermo, a.thermo.window_K, a.thermo.data_range_K, ())
    notes = [r[3] for r in f.rows]
    assert any("extrapolated" in n for n in notes)  # 213 K lies below the data (279 K)
    assert any("in window" in n for n in notes)
    assert "stroke-dasharray" in f.svg


def test_conversion_and_entropy_tables_follow_the_profile(calcination):
    t = calcination.assessment.thermo
    conv = figures.conversion_figure(t.profile, t.pressure_bar, t.basis, t.equilibrium_mode,
                                     t.equilibrium_note)
    assert len(conv.rows) == len(t.profile)
    for row, p in zip(conv.rows, t.profile):
        assert float(row[2]) == pytest.approx(p.conversion * 100, abs=0.006)
    ent = figures.entropy_figure(t.profile)
    for row, p in zip(ent.rows, t.profile):
        # ΔS_univ = ΔS° + ΔS_surr, and ΔS_surr = −ΔH°/T (definitions, no source needed)
        assert float(row[3]) == pytest.approx(float(row[1]) + float(row[2]), abs=0.011)
        assert float(row[2]) == pytest.approx(-p.dH_kJ_mol * 1e3 / p.T_K, abs=0.006)
    # endothermic calcination: the universe's entropy changes sign with ΔG° (crossover inside)
    assert "changing sign" in ent.caption


def test_ladder_orders_the_scenario_temperatures(hydrogenation):
    s = hydrogenation.assessment.safety
    levels = figures.ladder_levels(s)
    temps = [t for _, t, _ in levels]
    assert temps == sorted(temps)
    assert [label for label, _, _ in levels] == ["T_p", "MTT", "MTSR", "TD24", "T_end"]
    f = figures.ladder_figure(s)
    assert f is not None and "criticality class 3" in f.caption
    assert [r[0] for r in f.rows] == ["Tₚ", "MTT", "MTSR", "TD24", "T end"]


def test_no_ladder_without_a_scenario(calcination):
    assert figures.ladder_figure(calcination.assessment.safety) is None


def test_species_figure_tabulates_the_model(calcination):
    rec = calcination.records[2]  # CO2(g), NASA 7-coefficient polynomials
    f = figures.species_figure(rec)
    _svg_root(f.svg)
    row = [r for r in f.rows if r[0] == "298.15"]
    assert row, f.rows
    # CO2(g) at 298.15 K: Cp° = 37.129 J/(mol K), ΔfH° = −393.522 kJ/mol,
    # S° = 213.795 J/(mol K): NIST-JANAF Thermochemical Tables, 4th ed. (1998), CO2 entry
    # (values quoted from memory).
    cp, h, s = (float(x) for x in row[0][1:4])
    assert cp == pytest.approx(37.129, abs=0.1)
    assert h == pytest.approx(-393.522, abs=0.1)
    assert s == pytest.approx(213.795, abs=0.1)


def test_matplotlib_is_only_imported_by_the_figures_module():
    import subprocess

    code = ("import sys; import dossier.build.pipeline, dossier.render.pages, dossier.render.packets, dossier.build.writer; "
            "print('matplotlib' in sys.modules, 'weasyprint' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.split()
    assert out == ["False", "False"]


# --------------------------------------------------------------------------
# Cheaper drawing, same output (checked against matplotlib's own SVG writer)

def _stock_svg(draw_on) -> str:
    """The SVG matplotlib's own canvas writes for a figure ``draw_on(fig)`` fills."""
    import io

    from matplotlib.backends.backend_svg import FigureCanvasSVG
    from matplotlib.figure import Figure as MplFigure

    from dossier.render.figure_style import SVG_METADATA, with_style

    def draw():
        fig = MplFigure(figsize=(4.0, 2.0))
        FigureCanvasSVG(fig)
        draw_on(fig)
        buf = io.StringIO()
        fig.savefig(buf, format="svg", metadata=SVG_METADATA, transparent=False,
                    facecolor="white")
        return buf.getvalue()

    return with_style(draw)


def _ours_svg(draw_on) -> str:
    from dossier.render.figure_style import mpl_figure, svg_text, with_style

    def draw():
        fig = mpl_figure(4.0, 2.0)
        draw_on(fig)
        return svg_text(fig)

    return with_style(draw)


def test_shared_text_canvas_writes_what_matplotlib_writes():
    # labels with mathematics are parsed once per process by the shared converter;
    # the file must be the one matplotlib's own canvas writes, twice in a row too
    def draw_on(fig):
        ax = fig.add_subplot()
        ax.plot([300.0, 400.0, 500.0], [1.0, -2.0, 3.0], label=r"$\Delta_\mathrm{r}G^\circ$")
        ax.set_ylabel(r"$C_p^\circ$ / J mol$^{-1}$ K$^{-1}$")
        ax.set_xlabel("T / K")
        ax.legend()

    stock = _stock_svg(draw_on)
    assert "<tspan" in stock  # the labels really went through mathtext
    assert _ours_svg(draw_on) == stock
    assert _ours_svg(draw_on) == stock


@pytest.mark.parametrize("latex", [
    r"\ln K = -\frac{\Delta_{\text{r}} G^{\circ}(T)}{R T}",
    r"\Delta_{\text{r}} S^{\circ}(T) = \Delta_{\text{r}} S^{\circ}(T_{a}) + \int_{T_{a}}^{T} "
    r"\frac{\Delta_{\text{r}} C_{p}^{\circ}(\tau)}{\tau}\, d\tau",
    r"a < b \quad \mathrm{and} \quad c > d",
])
def test_formula_svg_places_the_glyphs_matplotlib_places(latex):
    # formula_svg writes mathtext's layout itself (one parse); the glyphs, their
    # places and styles, and the fraction bars must be those of matplotlib's writer
    import xml.etree.ElementTree as ET

    text = "$" + latex.replace(r"\frac", r"\dfrac") + "$"

    def parts(svg: str):
        root = ET.fromstring(svg.encode("utf-8"))
        spans = sorted((s.get("x"), s.get("y"), s.get("style"), s.text)
                       for s in root.iter(f"{SVG_NS}tspan"))
        rects = sorted((r.get("x"), r.get("y"), r.get("width"), r.get("height"))
                       for r in root.iter(f"{SVG_NS}rect"))
        return spans, rects, root.get("viewBox")

    from dossier.render.figure_style import INK

    def draw_on(fig):
        from matplotlib.font_manager import FontProperties
        from matplotlib.mathtext import MathTextParser

        prop = FontProperties(size=10.0)
        width, height, depth, *_ = MathTextParser("path").parse(text, 72, prop)
        fig.set_size_inches((width + 4) / 72, (height + 4) / 72)
        fig.text(2 / (width + 4), (depth + 2) / (height + 4), text, fontproperties=prop,
                 color=INK)

    ours = figures.formula_svg(latex)
    theirs = _stock_svg(draw_on)
    assert parts(ours)[0], "no glyphs written"
    assert parts(ours) == parts(theirs)
    _svg_root(ours)  # parses as XML: a "<" in the formula is escaped
    assert ("&lt;" in ours) == ("<" in latex)
