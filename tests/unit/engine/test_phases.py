"""Phase boundaries at a pressure (dossier.engine.phases), and the warnings evaluate() gives.

Reference values: IAPWS for water (through the chemicals package's IAPWS-95
implementation, and the IAPWS-IF97 verification table), hand calculations
with the Clausius-Clapeyron equation, and published melting and boiling
points named beside each number.
"""
from __future__ import annotations

import math

import pytest

from dossier.assess.evaluate import evaluate
from dossier.casefile.load import parse_case_text
from dossier.constants import R
from dossier.engine.phases import (PHASE_WARNING_MARK, StableRange, boiling_point, describe_range, phase_warnings,
                                   stable_range, vaporisation_enthalpy)
from dossier.engine.settings import DEFAULT
from dossier.library.lookup import Library
from dossier.library.phasedata import PhaseData, VapourPressure

LIB = Library.default()
KW = {"normal_pressure": DEFAULT.normal_boiling_pressure_Pa,
      "trouton": DEFAULT.trouton_entropy_J_molK,
      "extrapolation": DEFAULT.vapour_pressure_extrapolation}
WATER = LIB.resolve("H2O(l)").phase_data


def _range(phase: str, pd: PhaseData, pressure: float = 1e5) -> StableRange:
    sr = stable_range(phase, pd, pressure, **KW)
    assert sr is not None
    return sr


# --------------------------------------------------------------------------
# boiling points at the case pressure

@pytest.mark.parametrize("pressure, t_sat", [
    # IAPWS-IF97 (2007 revision), verification values of the saturation-temperature
    # equation (table 35), from memory: Ts(0.1 MPa), Ts(1 MPa), Ts(10 MPa)
    (1e5, 372.755919), (1e6, 453.035632), (1e7, 584.149488),
])
def test_water_boils_where_the_iapws_tables_say(pressure, t_sat):
    iapws = pytest.importorskip("chemicals.iapws")
    # the reference library agrees with the published table ...
    assert iapws.iapws95_Tsat(pressure) == pytest.approx(t_sat, abs=0.01)
    # ... and the library's curve (McGarry's Wagner equation) lands within 0.05 K of it
    b = boiling_point(WATER, pressure, **KW)
    assert b.what == "boiling point" and b.basis == "vapour-pressure curve"
    assert b.T_K == pytest.approx(t_sat, abs=0.05)


def test_water_at_5_bar_is_liquid_to_about_425_k():
    iapws = pytest.importorskip("chemicals.iapws")
    # IAPWS-95 (chemicals.iapws): Tsat(0.5 MPa) = 424.98 K; steam tables give
    # 151.8 °C at 5 bar (e.g. Rogers and Mayhew, Thermodynamic and Transport
    # Properties of Fluids, saturation table; from memory)
    t_sat = iapws.iapws95_Tsat(5e5)
    assert t_sat == pytest.approx(424.98, abs=0.01)
    sr = _range("l", WATER, 5e5)
    assert sr.upper.T_K == pytest.approx(t_sat, abs=0.05)
    assert sr.outside(298.15, 420.0) == ()
    assert sr.outside(298.15, 430.0) == ((sr.upper.T_K, 430.0, "above"),)


def test_without_a_curve_the_boiling_point_moves_by_clausius_clapeyron_and_trouton():
    pd = PhaseData(t_melt=239.08, t_boil=387.3, sources=(("boiling point", "a table"),))
    b = boiling_point(pd, 1e5, **KW)
    # hand calculation: 1/T = 1/387.3 − R ln(1e5/101325)/(88 × 387.3)
    #                = 2.581978e-3 + 3.2112e-6 → T = 386.82 K
    assert b.T_K == pytest.approx(386.819, abs=0.002)
    assert "Trouton's rule" in b.basis and b.source == "a table"
    # at exactly 1 atm the normal boiling point itself
    assert boiling_point(pd, 101325.0, **KW).T_K == 387.3
    # and at 5 bar the same formula, higher
    expected = 1.0 / (1.0 / 387.3 - R * math.log(5e5 / 101325.0) / (88.0 * 387.3))
    assert boiling_point(pd, 5e5, **KW).T_K == pytest.approx(expected, rel=1e-12)


def test_a_curve_is_followed_a_little_beyond_its_range_and_says_so():
    # an Antoine curve fitted over 300-350 K only: ln p = 23.0 − 3800/(T − 40)
    vp = VapourPressure("antoine", (23.0, 3800.0, -40.0), 300.0, 350.0, "an invented fit")
    pd = PhaseData(t_melt=200.0, vapour_pressure=vp)
    inside = boiling_point(pd, vp.p(340.0), **KW)
    assert inside.T_K == pytest.approx(340.0, abs=1e-6) and "extrapolated" not in inside.basis
    beyond = boiling_point(pd, vp.p(370.0), **KW)  # 5.7 % past the range: within 10 %
    assert beyond.T_K == pytest.approx(370.0, abs=1e-6) and "extrapolated" in beyond.basis
    assert boiling_point(pd, vp.p(420.0), **KW) is None  # 20 % past: not known
    assert _range("l", pd, vp.p(420.0)).upper is None


def test_there_is_no_boiling_point_at_or_above_the_critical_pressure():
    # water's critical pressure in McGarry's Wagner coefficients: 221.223 bar
    # (IAPWS-95: 220.64 bar; the fit's own value is what the curve knows)
    pc = WATER.vapour_pressure.coeffs[1]
    assert pc == pytest.approx(221.223e5)
    assert boiling_point(WATER, pc * 0.99, **KW).T_K < WATER.vapour_pressure.coeffs[0]
    assert boiling_point(WATER, pc, **KW) is None
    assert stable_range("g", WATER, 300e5, **KW) is None


def test_heat_of_vaporisation_of_water_from_its_curve():
    # CRC Handbook, "Enthalpy of Vaporization", water at its normal boiling point:
    # 40.65 kJ/mol (from memory).  R T² dln p/dT treats the vapour as ideal and
    # neglects the liquid's volume, which overstates it by about 2 % at 1 atm.
    dh = vaporisation_enthalpy(WATER.vapour_pressure, 373.12)
    assert dh == pytest.approx(40650.0, rel=0.03)
    assert dh > 40650.0


# --------------------------------------------------------------------------
# stable ranges and their parts outside the window

def test_each_phase_is_bounded_where_it_should_be():
    gas, liquid, solid = (_range(p, WATER) for p in "gls")
    assert gas.lower.what == "boiling point" and gas.upper is None
    assert liquid.lower.T_K == 273.15 and liquid.upper.T_K == gas.lower.T_K
    assert solid.lower is None and solid.upper.T_K == 273.15
    aq = _range("aq", PhaseData(WATER.t_melt, WATER.t_boil, WATER.vapour_pressure, None,
                                "water", WATER.sources))
    assert (aq.lower.T_K, aq.upper.T_K) == (liquid.lower.T_K, liquid.upper.T_K)
    assert stable_range("g", None, 1e5, **KW) is None
    assert stable_range("g", PhaseData(), 1e5, **KW) is None


def test_a_substance_that_sublimes_has_no_liquid_at_1_bar_but_one_at_10_bar():
    # carbon dioxide: triple point 216.58 K at 5.185 bar, sublimation point 194.7 K
    # (CRC Handbook, "Fixed Point Properties of Pure Substances"; from memory).  The
    # curve: an Antoine fit through the triple point and 273.15 K, 34.85 bar (the
    # vapour pressure at 0 °C, same source), with C = 0 (invented, test data only)
    b = math.log(34.85e5 / 5.185e5) / (1 / 216.58 - 1 / 273.15)
    a = math.log(5.185e5) + b / 216.58
    vp = VapourPressure("antoine", (a, b, 0.0), 216.58, 304.1, "a test fit")
    pd = PhaseData(t_melt=216.58, t_boil=194.7, vapour_pressure=vp)
    assert pd.sublimes
    liquid = _range("l", pd, 1e5)
    assert liquid.never and liquid.outside(200.0, 250.0) == ((200.0, 250.0, "never"),)
    assert _range("s", pd, 1e5).upper.what == "sublimation point"
    assert _range("g", pd, 1e5).lower.T_K == 194.7
    at_10_bar = _range("l", pd, 10e5)
    assert not at_10_bar.never and at_10_bar.lower.T_K == 216.58
    # the boiling point at 10 bar lies on the curve, between the triple and 0 °C points
    assert vp.p(at_10_bar.upper.T_K) == pytest.approx(10e5, rel=1e-9)
    assert 216.58 < at_10_bar.upper.T_K < 273.15


def test_a_solid_form_is_bounded_by_its_form_range():
    grey = LIB.resolve("grey tin", "s").phase_data
    white = LIB.resolve("Sn", "s").phase_data
    # the grey-white tin transition at 13.2 °C (from memory, as the record says)
    assert _range("s", grey).upper.T_K == 286.35 and _range("s", grey).upper.what == "form change"
    w = _range("s", white)
    assert w.lower.T_K == 286.35
    # tin melts at 231.93 °C (CRC Handbook, physical constants of inorganic compounds)
    assert w.upper.T_K == pytest.approx(505.08, abs=0.01)
    assert "from memory" in grey.source_of("form range").lower()


# --------------------------------------------------------------------------
# the sentences

def test_vapour_below_its_boiling_point_names_the_range_in_k_and_celsius():
    rec = LIB.resolve("1,2-dichloroethane", "g")
    sr = _range("g", rec.phase_data)
    (text,) = phase_warnings("C2H4Cl2(g)", "g", rec.phase_data, sr, (313.15, 338.15))
    # 1,2-dichloroethane boils at 83.5 °C at 1 atm (CRC Handbook, physical constants
    # of organic compounds; from memory), so a little lower at 1 bar
    assert 356.0 < sr.lower.T_K < 356.65
    # temperatures to 0.1 K with °C beside them (the number policy)
    assert "from 313.2–338.2\u00a0K (40.0–65.0\u00a0°C) of the window the gas written is not the " \
           "stable phase (the liquid is)" in text
    assert "heat of vaporisation there is about 35 kJ/mol" in text
    assert "vapour pressure, 0.2" in text  # about 0.21 bar at 40 °C


def test_liquid_above_its_boiling_point():
    sr = _range("l", WATER)
    (text,) = phase_warnings("H2O(l)", "l", WATER, sr, (298.15, 400.0))
    # Tsat(1 bar) = 372.756 K (IAPWS-95, chemicals.iapws; the table above), to 0.1 K
    assert text.startswith("H2O(l): at 1\u00a0bar it boils at 372.8\u00a0K (99.6\u00a0°C)")
    assert "the liquid written is not the stable phase (the vapour is)" in text
    # IAPWS-95 (chemicals.iapws): p_sat(400 K) = 2.456 bar
    assert "2.456\u00a0bar at 400.0\u00a0K" in text


def test_liquid_below_its_melting_point_and_solid_past_it():
    liquid = _range("l", WATER)
    (cold,) = phase_warnings("H2O(l)", "l", WATER, liquid, (263.15, 300.0))
    assert "it melts at 273.2\u00a0K (0.0\u00a0°C)" in cold and "stable phase (the solid is)" in cold
    solid = _range("s", WATER)
    (warm,) = phase_warnings("H2O(s)", "s", WATER, solid, (250.0, 280.0))
    assert "from 273.2–280.0\u00a0K (0.0–6.9\u00a0°C) of the window the solid written is not the " \
           "stable phase (the liquid is)" in warm


def test_every_phase_sentence_carries_the_mark_rules_can_look_for():
    grey = LIB.resolve("grey tin", "s").phase_data
    aq = PhaseData(WATER.t_melt, WATER.t_boil, WATER.vapour_pressure, None, "water",
                   WATER.sources)
    co2 = PhaseData(t_melt=216.58, t_boil=194.7)
    texts = [*phase_warnings("x", "s", grey, _range("s", grey), (280.0, 300.0)),
             *phase_warnings("x", "aq", aq, _range("aq", aq), (260.0, 380.0)),
             *phase_warnings("x", "l", co2, _range("l", co2), (200.0, 210.0)),
             *phase_warnings("x", "g", WATER, _range("g", WATER), (300.0, 310.0))]
    # one each, and two for the aqueous species (frozen below, boiled away above)
    assert len(texts) == 5 and all(PHASE_WARNING_MARK in t for t in texts)
    assert "the solvent, water, freezes at 273.2\u00a0K (0.0\u00a0°C)" in texts[1]
    assert "the solvent, water, boils at 372.8\u00a0K" in texts[2]


def test_inside_the_stable_range_there_is_nothing_to_say():
    assert phase_warnings("H2O(l)", "l", WATER, _range("l", WATER), (280.0, 350.0)) == ()
    assert "above 273.2\u00a0K (0.0\u00a0°C)" in describe_range(_range("l", WATER))
    assert describe_range(None) == "no phase boundary known"


# --------------------------------------------------------------------------
# through evaluate(): what a user sees

CASE = """+++
title = "Phase check"
revision = 1
status = "draft"
reaction = "{reaction}"
temperature = ["{lo}", "{hi}"]
pressure = "{p}"
+++
Narrative.
"""


def _warnings(reaction: str, lo: str, hi: str, p: str = "1 bar") -> tuple[str, ...]:
    case = parse_case_text(CASE.format(reaction=reaction, lo=lo, hi=hi, p=p), "phase.md")
    return evaluate(case, LIB).assessment.warnings


def test_dichloroethane_vapour_at_40_to_65_celsius_is_warned():
    ws = _warnings("C2H4(g) + Cl2(g) -> 1,2-dichloroethane(g)", "40 degC", "65 degC")
    assert any(w.startswith("1,2-dichloroethane(g): as a pure substance at 1\u00a0bar it condenses")
               for w in ws)


def test_tin_tetrachloride_vapour_is_warned():
    ws = _warnings("Sn(s) + 2 Cl2(g) -> SnCl4(g)", "25 degC", "75 degC")
    # tin(IV) chloride boils at 114.15 °C (CRC Handbook, physical constants of
    # inorganic compounds, as carried by chemicals)
    assert any(w.startswith("SnCl4(g): as a pure substance at 1\u00a0bar it condenses below its "
                            "boiling point 386.8") for w in ws)


def test_liquid_water_at_400_k_is_warned_at_1_bar_and_not_at_5_bar():
    at_1 = _warnings("H2(g) + 0.5 O2(g) -> H2O(l)", "300 K", "400 K")
    assert any(w.startswith("H2O(l): at 1\u00a0bar it boils at 372.8\u00a0K") for w in at_1)
    at_5 = _warnings("H2(g) + 0.5 O2(g) -> H2O(l)", "300 K", "400 K", "5 bar")
    assert not any(w.startswith("H2O(l)") for w in at_5)


def test_the_species_use_carries_the_stable_range_at_the_case_pressure():
    case = parse_case_text(CASE.format(reaction="H2(g) + 0.5 O2(g) -> H2O(l)", lo="300 K",
                                       hi="400 K", p="5 bar"), "phase.md")
    use = next(u for u in evaluate(case, LIB).assessment.species if u.key == "H2O(l)")
    lo, hi = use.stable_phase_K
    assert lo == 273.15 and hi == pytest.approx(424.98, abs=0.05)
    # 424.98 K (IAPWS-95, above) to 0.1 K
    assert "below 425.0\u00a0K" in use.stable_phase and "at 5\u00a0bar" in use.stable_phase
    h2 = next(u for u in evaluate(case, LIB).assessment.species if u.key == "H2(g)")
    # hydrogen boils at 20.3 K at 1 atm and has its critical point at 33.2 K (CRC
    # Handbook; from memory): at 5 bar it boils in between, and is a gas everywhere here
    assert 20.3 < h2.stable_phase_K[0] < 33.2 and h2.stable_phase_K[1] is None


def test_an_ion_without_heat_capacity_is_warned_with_what_it_can_cost():
    ws = _warnings("AsO4-3(aq) + 2 H+(aq) -> H2AsO4-(aq)", "25 degC", "75 degC")
    (w,) = [w for w in ws if w.startswith("AsO4-3(aq): its source gives no heat capacity")]
    u = dict(LIB.resolve("AsO4-3", "aq").uncertainty)["cp"]
    # hand calculation: |ν| × u(cp) × (348.15 − 298.15 K)
    assert f"up to {u * 50.0 / 1e3:.1f}\u00a0kJ/mol at 348.2\u00a0K" in w  # 0.1 K (number policy)
