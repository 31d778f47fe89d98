"""Thermal-safety methods (dossier.engine.safety) against hand calculations,
published constants and the definitions of the published methods.

Every check value carries its source in a comment.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy.special import lambertw

from dossier.engine import safety
from dossier.errors import CaseError, DossierError
from dossier.constants import R
from dossier.engine.runaway import runaway_scenario
from dossier.engine.safety import (
    adiabatic_rise,
    cooling_check,
    criticality_class,
    decomposition_final_temperature,
    decomposition_rise,
    gas_pressure,
    gas_volume_normal,
    heat_entropy_balance,
    mtsr,
    probability_from_tmr,
    severity_from_rise,
    td24,
    tmr_ad,
)

HOUR = 3600.0


def test_gas_constant_is_codata_2018():
    # CODATA 2018 recommended values: R = 8.314 462 618... J/(mol K), exact
    # (N_A k with both exact since the 2019 SI).
    assert R == 8.314462618


# --------------------------------------------------------------------------
# Adiabatic temperature rise and MTSR
# --------------------------------------------------------------------------

def test_adiabatic_rise_of_a_neutralisation_charge():
    # Hand calculation, neutralisation of 100 kg NaOH with hydrochloric acid,
    # H+(aq) + OH-(aq) -> H2O(l):
    #   ΔfH°: H2O(l) -285.830 kJ/mol, OH-(aq) -230.015 kJ/mol, H+(aq) 0
    #   (CODATA Key Values for Thermodynamics, Cox, Wagman & Medvedev,
    #   Hemisphere 1989), so ΔrH = -285.830 + 230.015 = -55.815 kJ/mol.
    #   M(NaOH) = 22.98977 + 15.9994 + 1.00794 = 39.99711 g/mol
    #   (IUPAC atomic weights as in dossier.chem.elements)
    #   n = 100 000 g / 39.99711 g/mol = 2500.18 mol
    #   Q = 2500.18 mol * 55 815 J/mol = 139.548 MJ
    #   reaction mass 2000 kg, cp' 3.9 kJ/(kg K) (dilute aqueous mass,
    #   somewhat below water's 4.18: common practice, no source)
    #   dT_ad = 139.548e6 / (2000 * 3900) = 17.891 K
    n = 100_000.0 / 39.99711
    q = n * 55_815.0
    assert q == pytest.approx(139.548e6, rel=1e-5)  # hand calculation above
    assert adiabatic_rise(q, 2000.0, 3900.0) == pytest.approx(17.891, abs=1e-3)  # hand calc above


def test_adiabatic_rise_of_a_nitro_reduction_charge():
    # Hand calculation: hydrogenation of 120 kg nitrobenzene in a 950 kg
    # reaction mass with cp' = 1.9 kJ/(kg K), taking ΔrH = -540 kJ/mol
    # (the figure in the project's case-format example; an input here, not
    # a check value).  M(C6H5NO2) = 6*12.0107 + 5*1.00794 + 14.0067
    # + 2*15.9994 = 123.1094 g/mol; n = 120 000 / 123.1094 = 974.738 mol;
    # Q = 974.738 * 540 000 = 526.358 MJ;
    # dT_ad = 526.358e6 / (950 * 1900) = 291.61 K.
    n = 120_000.0 / 123.1094
    dT = adiabatic_rise(n * 540_000.0, 950.0, 1900.0)
    assert dT == pytest.approx(291.61, abs=0.01)  # hand calculation above
    assert severity_from_rise(dT) == "high"  # > 200 K (Stoessel scale, from memory)
    # With 35 % accumulation at 60 degC: MTSR = 333.15 + 0.35 * 291.61
    # = 435.21 K (hand calculation).
    assert mtsr(333.15, 0.35, dT) == pytest.approx(435.21, abs=0.01)


def test_mtsr_definition_and_endothermic_case():
    # MTSR = T_p + X_acc dT_ad (common practice, no source):
    # 333.15 + 0.5 * 100 = 383.15 K
    assert mtsr(333.15, 0.5, 100.0) == pytest.approx(383.15, abs=1e-9)
    # endothermic: no rise above T_p (common practice, no source)
    assert mtsr(333.15, 0.5, -40.0) == 333.15


@pytest.mark.parametrize("bad", [-0.1, 1.2, float("nan")])
def test_mtsr_rejects_accumulation_outside_0_1(bad):
    with pytest.raises(CaseError):
        mtsr(333.15, bad, 50.0)


@pytest.mark.parametrize("args", [(1e6, 0.0, 2000.0), (1e6, 100.0, -5.0), (float("inf"), 1.0, 1.0)])
def test_adiabatic_rise_rejects_unphysical_input(args):
    with pytest.raises(DossierError):
        adiabatic_rise(*args)


def test_decomposition_rise_and_final_temperature():
    # Hand calculation (common practice, no source): 420 J/g = 420 000 J/kg
    # with cp' 1.9 kJ/(kg K) -> 420000/1900 = 221.05 K; from an MTSR of
    # 380 K the final temperature is 601.05 K.
    assert decomposition_rise(420_000.0, 1900.0) == pytest.approx(221.05, abs=0.01)
    assert decomposition_final_temperature(380.0, 420_000.0, 1900.0) == pytest.approx(601.05, abs=0.01)


# --------------------------------------------------------------------------
# TMRad and TD24
# --------------------------------------------------------------------------

CP, EA, QREF, TREF = 1800.0, 100e3, 1.0, 400.0


def test_tmr_ad_hand_calculation():
    # Hand calculation of the Townsend & Tou zero-order formula
    # (common practice, no source):
    #   cp' = 1800 J/(kg K), Ea = 100 kJ/mol, q' = 1 W/kg at 400 K.
    #   At T = 400 K: TMRad = 1800 * 8.314462618 * 400^2 / (1 * 100 000)
    #                      = 14 966.03 * 160 000 / 100 000 = 23 945.65 s (6.652 h)
    assert tmr_ad(400.0, CP, EA, QREF, TREF) == pytest.approx(23_945.65, abs=0.01)
    #   At T = 380 K: q' = exp(-(100000/8.314462618)(1/380 - 1/400))
    #                    = exp(-12 027.236 * 1.3157895e-4) = exp(-1.582531) = 0.2054544 W/kg
    #   TMRad = 14 966.033 * 144 400 / (0.2054544 * 100 000) = 105 186 s (29.22 h)
    assert tmr_ad(380.0, CP, EA, QREF, TREF) == pytest.approx(105_186.0, rel=1e-5)


def test_tmr_ad_accepts_arrays():
    T = np.array([380.0, 400.0])
    out = tmr_ad(T, CP, EA, QREF, TREF)
    assert out.shape == (2,)
    assert out[1] == pytest.approx(23_945.65, abs=0.01)  # hand calculation above


def test_td24_identity_and_precision():
    t = td24(CP, EA, QREF, TREF)
    # Definition of TD24: TMRad(TD24) = 24 h (common practice, no source)
    assert tmr_ad(t, CP, EA, QREF, TREF) == pytest.approx(24 * HOUR, rel=1e-9)
    # exact to better than 0.01 K: 24 h lies between TMRad at TD24 +- 0.01 K
    assert tmr_ad(t - 0.01, CP, EA, QREF, TREF) > 24 * HOUR > tmr_ad(t + 0.01, CP, EA, QREF, TREF)
    # From the hand calculation above, TMRad is 29.2 h at 380 K and 6.65 h
    # at 400 K, so TD24 lies between them.
    assert 380.0 < t < 400.0


def test_td24_against_closed_form_lambert_w():
    # Independent closed form (derived here; common practice, no source):
    # with u = Ea/(R T), TMRad = 24 h becomes u^-2 e^u = K with
    # K = 86400 q_ref R exp(Ea/(R T_ref)) / (cp Ea), whose large root is
    # u = -2 W_-1(-1 / (2 sqrt K)).
    for cp, ea, q, tr in [(1800.0, 100e3, 1.0, 400.0), (2100.0, 150e3, 8.0, 473.15),
                          (1500.0, 60e3, 0.05, 350.0)]:
        K = 86400.0 * q * R * math.exp(ea / (R * tr)) / (cp * ea)
        u = -2.0 * lambertw(-1.0 / (2.0 * math.sqrt(K)), k=-1).real
        expected = ea / (R * u)
        assert td24(cp, ea, q, tr) == pytest.approx(expected, abs=1e-6)


def test_td24_case_format_example():
    # The case-format example gives Ea = 95 kJ/mol and 8 W/kg at 200 degC,
    # cp' 1.9 kJ/(kg K).  TMRad at 200 degC (hand calc, common practice, no
    # source): 1900 * 8.314462618 * 473.15^2 / (8 * 95 000)
    # = 15 797.479 * 223 870.92 / 760 000 = 4653.4 s, i.e. 1.29 h < 24 h,
    # so TD24 must be below 200 degC.
    assert tmr_ad(473.15, 1900.0, 95e3, 8.0, 473.15) == pytest.approx(4653.4, abs=0.1)
    assert td24(1900.0, 95e3, 8.0, 473.15) < 473.15


def test_td24_raises_a_clear_error_when_out_of_range():
    # A rate so small that 24 h is never reached below 3000 K.
    with pytest.raises(CaseError, match="TD24 is above"):
        td24(1800.0, 300e3, 1e-60, 300.0)
    # A rate so large that TMRad is below 24 h even at 100 K.
    with pytest.raises(CaseError, match="TD24 is below"):
        td24(1800.0, 40e3, 1e6, 100.0)


@settings(max_examples=60, deadline=None)
@given(
    ea=st.floats(50e3, 250e3),
    q_ref=st.floats(1e-3, 100.0),
    t_ref=st.floats(300.0, 600.0),
    t1=st.floats(250.0, 700.0),
    dt=st.floats(0.5, 200.0),
)
def test_tmr_ad_decreases_with_temperature(ea, q_ref, t_ref, t1, dt):
    # d ln TMRad/dT = 2/T - Ea/(R T^2) < 0 for T < Ea/(2R): the approximation
    # falls monotonically there (common practice, no source).
    t2 = t1 + dt
    if t2 >= ea / (2 * R):
        return
    assert tmr_ad(t1, 1800.0, ea, q_ref, t_ref) > tmr_ad(t2, 1800.0, ea, q_ref, t_ref)


# --------------------------------------------------------------------------
# Criticality classes: one input set per class, and the boundaries
# --------------------------------------------------------------------------
# Class definitions: F. Stoessel, Thermal Safety of Chemical Processes,
# Wiley-VCH 2008 (from memory, as written in the project's methods
# reference).  The temperatures below are built from those definitions.

@pytest.mark.parametrize(
    "tp, ms, mt, td, klass",
    [
        (320.0, 340.0, 373.0, 420.0, 1),  # MTSR < MTT < TD24
        (320.0, 340.0, 420.0, 400.0, 2),  # MTSR < TD24 < MTT
        (320.0, 380.0, 373.0, 420.0, 3),  # MTT <= MTSR < TD24
        (320.0, 430.0, 373.0, 420.0, 4),  # MTSR >= TD24, MTT < TD24
        (320.0, 430.0, 440.0, 420.0, 5),  # MTSR >= TD24, MTT >= TD24
    ],
)
def test_criticality_one_case_per_class(tp, ms, mt, td, klass):
    res = criticality_class(tp, ms, mt, td)
    assert res.klass == klass
    assert res.reason.startswith(f"class {klass}:")
    assert res.missing == ()


@pytest.mark.parametrize(
    "tp, ms, mt, td, klass",
    [
        # Boundaries: equalities go to the more critical class (our
        # documented choice, safety.CRITICALITY_SOURCE).
        (320.0, 373.0, 373.0, 420.0, 3),  # MTSR = MTT < TD24 -> 3, not 1
        (320.0, 420.0, 373.0, 420.0, 4),  # MTSR = TD24, MTT < TD24 -> 4, not 3
        (320.0, 340.0, 400.0, 400.0, 2),  # MTT = TD24, MTSR below both -> 2, not 1
        (320.0, 430.0, 420.0, 420.0, 5),  # MTT = TD24 <= MTSR -> 5, not 4
        (320.0, 420.0, 420.0, 420.0, 5),  # all three equal -> 5
        (320.0, 372.99, 373.0, 420.0, 1),  # just below MTT -> 1
        (320.0, 419.99, 373.0, 420.0, 3),  # just below TD24 -> 3
    ],
)
def test_criticality_boundaries(tp, ms, mt, td, klass):
    assert criticality_class(tp, ms, mt, td).klass == klass


def test_criticality_reports_missing_inputs_instead_of_guessing():
    res = criticality_class(320.0, 340.0, None, 420.0)
    assert res.klass is None
    assert res.missing == ("maximum technical temperature (MTT)",)  # the method's own words
    assert "could not be assessed because" in res.reason
    res = criticality_class(None, None, None, None)
    assert res.klass is None and len(res.missing) == 4


def test_criticality_rejects_mtsr_below_process_temperature():
    with pytest.raises(CaseError):
        criticality_class(350.0, 340.0, 373.0, 420.0)


# --------------------------------------------------------------------------
# Severity and probability scales (three levels, Stoessel, from memory)
# --------------------------------------------------------------------------

@pytest.mark.parametrize(
    "dT, level",
    [(-10.0, "low"), (0.0, "low"), (49.99, "low"), (50.0, "medium"), (120.0, "medium"),
     (200.0, "medium"), (200.01, "high"), (450.0, "high")],
)
def test_severity_scale(dT, level):
    # low < 50 K, medium 50-200 K, high > 200 K (Stoessel, Thermal Safety of
    # Chemical Processes, 2008, from memory); edges as documented in
    # safety.severity_source().
    assert severity_from_rise(dT) == level


@pytest.mark.parametrize(
    "hours, level",
    [(0.0, "high"), (7.99, "high"), (8.0, "medium"), (16.0, "medium"), (24.0, "medium"),
     (24.01, "low"), (100.0, "low")],
)
def test_probability_scale(hours, level):
    # low > 24 h, medium 8-24 h, high < 8 h (Stoessel, 2008, from memory);
    # edges as documented in safety.probability_source().
    assert probability_from_tmr(hours) == level


def test_probability_rejects_negative_time():
    with pytest.raises(CaseError):
        probability_from_tmr(-1.0)


# --------------------------------------------------------------------------
# Cooling, gas, entropy
# --------------------------------------------------------------------------

def test_cooling_check_hand_calculation():
    # Hand calculation (common practice, no source): 72 MJ dosed over 4 h
    # -> 72e6 / 14 400 s = 5000 W; U*A = 2.5 kW/K, T_p = 60 degC, coolant
    # 15 degC -> capacity 2500 * 45 = 112 500 W; margin 107 500 W;
    # ratio 5000/112500 = 0.04444.
    res = cooling_check(72e6, 4 * HOUR, 2500.0, 333.15, 288.15)
    assert res.release_rate_W == pytest.approx(5000.0)
    assert res.capacity_W == pytest.approx(112_500.0)
    assert res.margin_W == pytest.approx(107_500.0)
    assert res.ratio == pytest.approx(0.044444, rel=1e-4)
    assert res.sufficient


def test_cooling_check_with_coolant_warmer_than_mass():
    # Coolant not colder than the mass: no capacity at all (common practice).
    res = cooling_check(72e6, 4 * HOUR, 2500.0, 300.0, 310.0)
    assert res.capacity_W == pytest.approx(-25_000.0)  # 2500 * (300 - 310), hand calc
    assert math.isinf(res.ratio) and not res.sufficient


def test_gas_volume_normal_is_molar_volume():
    # CODATA 2018: molar volume of an ideal gas at 273.15 K and 101.325 kPa
    # = 22.413 969 54 L/mol (exact in the 2019 SI).
    assert gas_volume_normal(1.0) == pytest.approx(22.41396954e-3, rel=1e-9)
    assert gas_volume_normal(0.0) == 0.0


def test_gas_pressure_hand_calculation():
    # Hand calculation (common practice, no source): 10 mol in 0.8 m3 at
    # 400 K on top of 1 bar: 1e5 + 10 * 8.314462618 * 400 / 0.8
    # = 100 000 + 41 572.31 = 141 572.31 Pa
    assert gas_pressure(10.0, 0.8, 400.0, 1e5) == pytest.approx(141_572.31, abs=0.01)


def test_heat_entropy_balance_sun_to_earth_and_to_3K():
    # 8 GJ leaving a body at 6000 K and reaching one at 300 K
    # (common practice, no source): dS_hot = -8e9/6000 = -1.333 MJ/K,
    # dS_cold = 8e9/300 = +26.67 MJ/K.
    res = heat_entropy_balance(8e9, 6000.0, 300.0)
    assert res.dS_hot == pytest.approx(-1.3333e6, rel=1e-4)
    assert res.dS_cold == pytest.approx(26.667e6, rel=1e-4)
    assert res.dS_total == pytest.approx(26.667e6 - 1.3333e6, rel=1e-4)
    assert res.possible
    # Reaching a body at 3 K: dS_cold = 8e9/3 = +2.667 GJ/K
    # (common practice, no source).
    assert heat_entropy_balance(8e9, 6000.0, 3.0).dS_cold == pytest.approx(2.6667e9, rel=1e-4)


def test_heat_entropy_balance_flags_impossible_direction():
    # Heat flowing unaided from cold to hot lowers the total entropy
    # (second law, common practice, no source).
    res = heat_entropy_balance(1000.0, 300.0, 600.0)
    assert res.dS_total < 0 and not res.possible


# --------------------------------------------------------------------------
# The whole scenario
# --------------------------------------------------------------------------

FULL = dict(
    heat_J=526.358e6,   # the nitro-reduction charge above (hand calc)
    mass_kg=950.0, cp=1900.0, t_process=333.15, accumulation=0.35, mtt=373.15,
    ea=95e3, q_ref=8.0, t_ref=473.15, decomposition_energy_J_per_kg=420e3,
    feed_time_s=4 * HOUR, ua_W_per_K=2500.0, t_coolant=288.15,
    n_gas_mol=50.0, free_volume_m3=0.8, p_initial_Pa=1e5, design_pressure_Pa=6e5,
)


def test_runaway_scenario_with_every_input():
    sc = runaway_scenario(**FULL)
    assert sc.missing == () and sc.blocked == ()
    # dT_ad and MTSR from the nitro-reduction hand calculation above:
    # 291.61 K and 435.21 K.
    assert sc.dT_ad == pytest.approx(291.61, abs=0.01)
    assert sc.mtsr == pytest.approx(435.21, abs=0.01)
    assert sc.severity == "high"  # > 200 K (Stoessel scale, from memory)
    assert sc.td24_origin == "from kinetics"
    # TD24 by the Lambert W closed form of test_td24_against_closed_form_lambert_w
    # (common practice, no source): 418.28 K (145.1 degC).
    K = 86400.0 * 8.0 * R * math.exp(95e3 / (R * 473.15)) / (1900.0 * 95e3)
    u = -2.0 * lambertw(-1.0 / (2.0 * math.sqrt(K)), k=-1).real
    assert sc.td24 == pytest.approx(95e3 / (R * u), abs=1e-6)
    assert sc.td24 == pytest.approx(418.28, abs=0.01)
    # TMRad at the MTSR, hand calculation (common practice, no source):
    # q' = 8 exp(-(95000/R)(1/435.2139 - 1/473.15)) = 8 exp(-11 425.87 * 1.842262e-4)
    #    = 8 exp(-2.104945) = 0.974819 W/kg;
    # TMRad = 1900 * R * 435.2139^2 / (0.974819 * 95 000) = 32 311 s = 8.98 h
    assert sc.tmr_at_mtsr_s == pytest.approx(32_311.0, rel=1e-4)
    assert sc.probability == "medium"  # 8 h <= 8.98 h <= 24 h (Stoessel, from memory)
    # MTT 373.15 K < TD24 418.28 K <= MTSR 435.21 K -> class 4 (Stoessel
    # class definitions, from memory)
    assert sc.criticality.klass == 4
    # decomposition: 420 kJ/kg / 1900 = 221.05 K (hand calc above)
    assert sc.decomposition_rise == pytest.approx(221.05, abs=0.01)
    assert sc.final_temperature == pytest.approx(435.21 + 221.05, abs=0.02)
    # gas from the desired reaction, at the MTSR: 1e5 + 50 * R * 435.21 / 0.8
    # = 3.262e5 Pa (ideal gas, hand calculation, common practice, no source)
    assert sc.gas_temperature == pytest.approx(435.21, abs=0.01)
    assert sc.gas_pressure_Pa == pytest.approx(3.262e5, rel=1e-3)
    assert sc.pressure_exceeds_design is False  # about 3.3 bar < 6 bar
    # cooling: 526.358 MJ over 4 h = 36 552.6 W against 2500 * 45 = 112 500 W
    # (hand calculation, common practice, no source)
    assert sc.cooling.release_rate_W == pytest.approx(36_552.6, abs=0.1)
    assert sc.cooling.sufficient


def test_runaway_scenario_lists_what_is_missing():
    partial = dict(FULL)
    del partial["mtt"]
    del partial["ea"]
    del partial["free_volume_m3"]
    sc = runaway_scenario(**partial)
    assert sc.criticality.klass is None
    assert safety.INPUT_WORDS["mtt"] in sc.missing
    assert safety.INPUT_WORDS["td24"] in sc.missing
    assert safety.INPUT_WORDS["free_volume"] in sc.missing
    assert sc.td24 is None and sc.tmr_at_mtsr_s is None and sc.probability is None
    assert sc.gas_pressure_Pa is None and sc.gas_volume_normal_m3 is not None
    figures = {fig for fig, _ in sc.blocked}
    assert {"TD24", "TMRad at the MTSR", "gas pressure"} <= figures
    # What could be computed still is.
    assert sc.mtsr == pytest.approx(435.21, abs=0.01)


def test_runaway_scenario_probability_from_given_td24_without_kinetics():
    # TMRad falls with T, so MTSR < TD24 means TMRad(MTSR) > 24 h: "low"
    # (Stoessel scale, from memory), even without kinetics.
    sc = runaway_scenario(heat_J=10e6, mass_kg=1000.0, cp=2000.0, t_process=330.0,
                          accumulation=1.0, mtt=373.0, td24_given=450.0)
    # dT_ad = 10e6 / (1000 * 2000) = 5 K, MTSR = 335 K (hand calc)
    assert sc.mtsr == pytest.approx(335.0)
    assert sc.probability == "low"
    assert sc.td24_origin == "given"
    assert sc.criticality.klass == 1  # 335 < 373 < 450
    assert safety.INPUT_WORDS["kinetics"] in sc.missing


def test_runaway_scenario_with_nothing_given():
    sc = runaway_scenario()
    assert sc.dT_ad is None and sc.mtsr is None and sc.criticality.klass is None
    for key in ("heat", "mass", "cp", "t_process", "accumulation", "mtt", "td24",
                "decomposition_energy", "feed_time", "cooling_ua", "n_gas"):
        assert safety.INPUT_WORDS[key] in sc.missing


def test_missing_inputs_are_named_in_the_callers_words():
    # The engine never names case-file keys: the assessment passes its own labels.
    labels = {**safety.INPUT_WORDS, "mtt": "vessel.mtt (maximum technical temperature)"}
    res = criticality_class(320.0, 340.0, None, 420.0, labels)
    assert res.missing == ("vessel.mtt (maximum technical temperature)",)
    assert res.reason == ("criticality class could not be assessed because "
                          "vessel.mtt (maximum technical temperature) is missing")
