"""The assessment of whole cases: safety figures at scale, findings, JSON keys."""
from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from dossier.assess.evaluate import assess_case
from dossier.casefile.load import load_case, parse_case_text
from dossier.errors import CaseError
from dossier.library.lookup import Library
from paths import FIXTURES

FIXTURES = FIXTURES / "cases"
LIB = Library.default()


def case_text(reaction: str, window=("40 degC", "80 degC"), extra: str = "", pressure="1 bar") -> str:
    return (f'+++\ntitle = "test"\nrevision = 1\nstatus = "draft"\n'
            f'reaction = "{reaction}"\ntemperature = ["{window[0]}", "{window[1]}"]\n'
            f'pressure = "{pressure}"\n{extra}+++\n')


def assess_text(text: str):
    return assess_case(parse_case_text(text, "inline.md"), LIB)


def rules_of(a) -> set[str]:
    return {f.rule for f in a.findings}


# --------------------------------------------------------------------------
# The full example case at scale

def test_nitro_reduction_charge_against_hand_calculation():
    a = assess_case(load_case(FIXTURES / "full.md"), LIB)
    s = a.safety
    # Hand calculation (common practice, no source):
    #   M(C6H5NO2) = 6(12.0107) + 5(1.00794) + 14.0067 + 2(15.9994) = 123.1094 g/mol
    #   n = 120 kg / 0.1231094 kg/mol = 974.74 mol; one mole of reaction per mole
    #   Q = 540 kJ/mol (measured, used) x 974.74 mol = 526 358 kJ
    #   ΔT_ad = 526.358e6 J / (950 kg x 1900 J/(kg K)) = 291.61 K
    #   MTSR = 333.15 K + 0.35 x 291.61 K = 435.21 K
    assert s.scale.basis_mol == pytest.approx(974.74, abs=0.01)
    assert s.scale.heat_released_kJ == pytest.approx(526_358, rel=1e-5)
    assert s.scale.enthalpy_origin == "measured"
    assert s.adiabatic_rise_K == pytest.approx(291.61, abs=0.01)
    assert s.mtsr_K == pytest.approx(435.21, abs=0.01)
    # Per kg: 526 358 kJ / 950 kg = 554.06 kJ/kg; mean rate over 4 h = 36.55 kW
    assert s.scale.heat_released_kJ_per_kg == pytest.approx(554.06, abs=0.01)
    assert s.release_rate_kW == pytest.approx(36.55, abs=0.01)
    # Cooling capacity 2.5 kW/K x (60 - 15) K = 112.5 kW; margin 75.95 kW
    assert s.cooling_capacity_kW == pytest.approx(112.5)
    assert s.cooling_margin_kW == pytest.approx(112.5 - 36.5529, abs=0.01)
    # Given TD24 = 165 degC = 438.15 K is used over the kinetics.
    assert s.td24_K == pytest.approx(438.15) and s.td24_origin == "given"
    # MTT 373.15 K <= MTSR 435.21 K < TD24 438.15 K: class 3 (Stoessel's
    # class definitions, from memory)
    assert s.criticality_class == 3
    # Entropy per batch at 60 degC uses the computed ΔrH° and ΔrS°; the
    # universe's share equals -n ΔrG°/T (identity, common practice, no source).
    sc = s.scale
    assert sc.entropy_universe_kJ_per_K == pytest.approx(
        sc.entropy_system_kJ_per_K + sc.entropy_surroundings_kJ_per_K, rel=1e-12)
    assert sc.entropy_universe_kJ_per_K > 0 and "positive" in sc.entropy_reading


def test_json_has_the_documented_keys():
    d = assess_case(load_case(FIXTURES / "full.md"), LIB).to_dict()
    for key in ("case", "reaction", "pressure_bar", "window_K", "crossover_K", "warnings",
                "profile", "safety"):
        assert key in d
    for key in ("T_K", "dH_kJ_mol", "dS_J_molK", "dG_kJ_mol", "lnK", "dS_surr_J_molK",
                "dS_univ_J_molK", "q_surr_kJ_mol", "conversion"):
        assert key in d["profile"][0]
    for key in ("heat_released_kJ", "heat_released_kJ_per_kg", "adiabatic_rise_K", "mtsr_K",
                "td24_K", "tmrad_at_mtsr_h", "criticality_class", "gas_mol",
                "pressure_at_mtsr_bar", "cooling_margin_kW", "entropy_universe_kJ_per_K",
                "findings"):
        assert key in d["safety"]
    assert d["window_K"] == [313.15, 353.15]
    json.dumps(d, allow_nan=False)  # no NaN or infinity anywhere


def test_case_without_safety_inputs_says_what_was_not_assessed():
    a = assess_case(load_case(FIXTURES / "minimal.md"), LIB)
    s = a.safety
    assert s.scale is None and s.mtsr_K is None and s.criticality_class is None
    figures = [f for f, _ in s.not_assessed]
    for fig in ("heat and entropy at scale", "adiabatic temperature rise", "MTSR", "TD24",
                "criticality class", "cooling check", "gas pressure"):
        assert fig in figures
    text = next(f.text for f in a.findings if f.rule == "missing-safety-inputs")
    assert text.startswith("Not assessed for lack of inputs: heat and entropy at scale, ")
    assert "vessel.mtt (maximum technical temperature)" in text


def test_requested_temperatures_appear_exactly():
    case = load_case(FIXTURES / "full.md")
    a = assess_case(case, LIB, extra_temperatures=(333.333,))
    rows = [r for r in a.thermo.profile if r.requested]
    assert [r.T_K for r in rows] == [333.333]


# --------------------------------------------------------------------------
# Rules: one case that fires each, one that does not

def test_unfavourable_everywhere():
    # N2 + O2 -> 2 NO: ΔfG°(NO) = +86.6 kJ/mol near room temperature
    # (CODATA/JANAF; from memory): ΔrG° ≈ +173 kJ, positive everywhere here.
    a = assess_text(case_text("N2(g) + O2(g) -> 2 NO(g)"))
    assert a.thermo.favourable == "nowhere"
    assert "unfavourable-everywhere" in rules_of(a)
    b = assess_text(case_text("H2(g) + 1/2 O2(g) -> H2O(l)"))
    assert "unfavourable-everywhere" not in rules_of(b)


def test_crossover_inside_window_and_equilibrium_limit():
    a = assess_text(case_text("N2(g) + 3 H2(g) <=> 2 NH3(g)", ("400 K", "500 K")))
    assert [round(c.T) for c in a.thermo.crossovers_in_window] == [456]
    assert {"crossover-in-window", "equilibrium-limited"} <= rules_of(a)
    b = assess_text(case_text("N2(g) + 3 H2(g) <=> 2 NH3(g)", ("300 K", "350 K")))
    assert "crossover-in-window" not in rules_of(b)


def test_gas_evolution_and_pressure_against_design():
    charge = ('[charge]\nbasis = "H2O2(l)"\namount = "100 kg"\nmass = "1000 kg"\n'
              'cp = "4.0 kJ/(kg*K)"\nprocess_temperature = "40 degC"\naccumulation = "10 %"\n'
              '[vessel]\nfree_volume = "2 m3"\ndesign_pressure = "3 bar"\nmtt = "100 degC"\n')
    a = assess_text(case_text("2 H2O2(l) -> 2 H2O(l) + O2(g)", extra=charge))
    s = a.safety
    # 100 kg / 34.0147 g/mol = 2939.9 mol H2O2 -> 1469.9 mol O2 (hand calculation)
    assert s.scale.gas_mol == pytest.approx(1469.9, abs=0.2)
    # 1469.9 mol x 22.414 L/mol = 32.95 m3 at 0 degC, 1 atm (ideal gas, CODATA 2018 molar volume)
    assert s.gas_volume_normal_m3 == pytest.approx(32.95, abs=0.05)
    assert s.pressure_exceeds_design is True
    gas = next(f for f in a.findings if f.rule == "gas-and-pressure")
    assert gas.severity == "critical"


def test_measured_enthalpy_mismatch():
    base = ('[charge]\nbasis = "C6H5NO2(l)"\namount = "120 kg"\nmass = "950 kg"\n'
            'cp = "1.9 kJ/(kg*K)"\nprocess_temperature = "60 degC"\naccumulation = "35 %"\n'
            '[measured]\nmethod = "test"\nreaction_enthalpy = "{h}"\n')
    rx = "C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)"
    close = assess_text(case_text(rx, extra=base.format(h="-540 kJ/mol")))
    far = assess_text(case_text(rx, extra=base.format(h="-400 kJ/mol")))
    assert "enthalpy-mismatch" not in rules_of(close)   # 10 kJ/mol, 2 %
    assert "enthalpy-mismatch" in rules_of(far)         # 150 kJ/mol, 38 %
    assert far.safety.scale.enthalpy_used_kJ_mol == -400.0


def test_cooling_shortfall():
    extra = ('[charge]\nbasis = "C6H5NO2(l)"\namount = "120 kg"\nmass = "950 kg"\n'
             'cp = "1.9 kJ/(kg*K)"\nprocess_temperature = "60 degC"\naccumulation = "35 %"\n'
             'feed_time = "1 h"\n[vessel]\ncooling_ua = "{ua}"\ncoolant_temperature = "15 degC"\n')
    rx = "C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)"
    short = assess_text(case_text(rx, extra=extra.format(ua="1 kW/K")))
    ample = assess_text(case_text(rx, extra=extra.format(ua="10 kW/K")))
    assert "cooling-shortfall" in rules_of(short)
    assert "cooling-shortfall" not in rules_of(ample)


def test_case_local_species_is_reported():
    extra = ('[[species]]\nname = "my salt"\nformula = "NaCl"\nphase = "s"\n'
             'hf = "-411.2 kJ/mol"\ns = "72.1 J/(mol*K)"\ncp = "50.5 J/(mol*K)"\n'
             'source = "handbook value"\nuncertainty = { hf = "0.5 kJ/mol" }\n')
    a = assess_text(case_text("Na(s) + 1/2 Cl2(g) -> my salt(s)", extra=extra))
    local = [s for s in a.species if s.local]
    assert [s.name for s in local] == ["my salt"]
    f = next(f for f in a.findings if f.rule == "case-local-data")
    assert ("my salt(s) uses the case's own data (handbook value) with stated uncertainty "
            "hf ± 0.5\u00a0kJ/mol") in f.text  # no-break space before the unit (number policy)


def test_bad_basis_is_located():
    extra = ('[charge]\nbasis = "H2(g)x"\namount = "1 kg"\nmass = "10 kg"\ncp = "2 kJ/(kg*K)"\n'
             'process_temperature = "40 degC"\naccumulation = "0 %"\n')
    with pytest.raises(CaseError) as err:
        assess_text(case_text("H2(g) + 1/2 O2(g) -> H2O(l)", extra=extra))
    assert str(err.value.problems[0]) == (
        "inline.md:9: key 'charge.basis': expected one of the reactants as written in the "
        "reaction (H2(g), O2(g)); got 'H2(g)x'")


def test_unbalanced_reaction_is_located():
    with pytest.raises(CaseError) as err:
        assess_text(case_text("C3H8(g) + O2(g) -> CO2(g) + H2O(g)"))
    assert str(err.value.problems[0]) == (
        "inline.md:5: key 'reaction': reaction 'C3H8(g) + O2(g) -> CO2(g) + H2O(g)' does not "
        "balance: C -2, H -6, O +1 (products minus reactants); balanced with the same species: "
        "'C3H8(g) + 5 O2(g) -> 3 CO2(g) + 4 H2O(g)'")


# --------------------------------------------------------------------------
# The command line

def run_cli(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "dossier.cli.main", *args], capture_output=True,
                          text=True)


def test_evaluate_json_with_requested_temperature():
    r = run_cli("evaluate", str(FIXTURES / "full.md"), "--at", "350 K", "--json")
    assert r.returncode == 0, r.stderr
    d = json.loads(r.stdout)
    assert 350.0 in [row["T_K"] for row in d["profile"]]


def test_evaluate_bad_input_exits_2_with_one_clear_line():
    r = run_cli("evaluate", str(FIXTURES / "bare_number.md"))
    assert r.returncode == 2
    assert r.stderr.strip().splitlines() == [
        f"error: {FIXTURES / 'bare_number.md'}:9: key 'pressure': expected a pressure with a "
        "unit, like '5 bar'; got 5"]
    assert "Traceback" not in r.stderr


def test_evaluate_rejects_a_bare_at_temperature():
    r = run_cli("evaluate", str(FIXTURES / "full.md"), "--at", "350")
    assert r.returncode == 2
    assert r.stderr.startswith("error: key '--at': expected a temperature with a unit")


def test_check_reports_every_file():
    # a case ready for its status (full.md, submitted, has no narrative sections)
    ready = FIXTURES.parent / "readiness" / "ready.md"
    r = run_cli("check", str(ready), str(FIXTURES / "unknown_key.md"))
    assert r.returncode == 2
    assert "ok: " in r.stdout and "1 of 2 case files are good." in r.stdout
    assert "did you mean" in r.stderr


def test_species_search_prints_sources():
    r = run_cli("species", "nitrobenzene")
    assert r.returncode == 0
    assert "nitrobenzene(l)" in r.stdout and "source" in r.stdout.lower()


def test_endothermic_reaction_has_no_adiabatic_rise():
    extra = ('[charge]\nbasis = "NaHCO3(s)"\namount = "100 kg"\nmass = "500 kg"\n'
             'cp = "1.2 kJ/(kg*K)"\nprocess_temperature = "120 degC"\naccumulation = "100 %"\n')
    a = assess_text(case_text("2 NaHCO3(s) -> Na2CO3(s) + H2O(g) + CO2(g)", ("100 degC", "160 degC"),
                              extra=extra))
    s = a.safety
    assert s.scale.heat_released_kJ < 0                   # it absorbs heat
    assert s.adiabatic_rise_K == 0.0 and s.mtsr_K == pytest.approx(393.15)
    assert s.notes[0].startswith("the reaction is endothermic: it absorbs ")


def test_no_gas_released_means_no_gas_figures_to_ask_for():
    a = assess_case(load_case(FIXTURES / "full.md"), LIB)  # consumes H2, makes no gas
    figures = [f for f, _ in a.safety.not_assessed]
    assert "gas pressure" not in figures and a.safety.pressure_at_mtsr_bar is None
    assert any(n.startswith("the reaction releases no gas") for n in a.safety.notes)


@pytest.mark.parametrize("s_sys,s_surr,start", [
    (-1.0, 3.0, "positive: the surroundings gain more entropy from the heat released than the system loses"),
    (-3.0, 1.0, "negative: the entropy the surroundings gain from the heat released does not make up"),
    (3.0, -1.0, "positive: the system gains more entropy than the surroundings lose"),
    (1.0, -3.0, "negative: the system gains less entropy than the surroundings lose"),
    (1.0, 1.0, "positive: system and surroundings both gain entropy"),
])
def test_entropy_reading_in_words(s_sys, s_surr, start):
    from dossier.assess.batch import entropy_reading

    # the sign rule ΔS_univ = ΔS_sys + ΔS_surr > 0 for a spontaneous change
    # (second law; common practice, no source)
    assert entropy_reading(s_sys, s_surr).startswith(start)
