"""Liquid mixtures in whole cases: the esterification demo, the activity-model
option, liquid inerts, the fallback to an ideal solution and the
``equilibrium-limited`` finding.  Check values name their source beside them."""
from __future__ import annotations

import dataclasses
import math

import pytest

from dossier.assess.evaluate import assess_case, evaluate
from dossier.casefile.load import load_case, parse_case_text
from dossier.engine.activity import GroupContribution, assign_groups
from dossier.engine.settings import DEFAULT
from dossier.library.lookup import Library
from dossier.model.case import ActivityModel
from paths import CASES

LIB = Library.default()
ESTER = load_case(CASES / "esterification.md")


def with_model(case, model: str):
    return dataclasses.replace(case, activity_model=ActivityModel(model))


def case_text(reaction: str, window=("40 degC", "75 degC"), extra: str = "") -> str:
    return (f'+++\ntitle = "test"\nrevision = 1\nstatus = "draft"\n'
            f'reaction = "{reaction}"\ntemperature = ["{window[0]}", "{window[1]}"]\n'
            f'{extra}+++\n')


def assess_text(text: str):
    return assess_case(parse_case_text(text, "inline.md"), LIB)


REACTION = "acetic acid(l) + ethanol(l) <=> ethyl acetate(l) + H2O(l)"


def test_the_demo_esterification_conversion_is_the_hand_quadratic_of_its_own_k():
    a = assess_case(ESTER, LIB)
    t = a.thermo
    assert t.activity_model == "ideal" and t.solution_model == "ideal"
    assert t.equilibrium_mode == "solved"
    for row in t.profile:
        # Hand calculation from the same K: equimolar A + B ⇌ C + D in an ideal
        # solution, K = X²/(1 − X)², so X = √K/(1 + √K).
        root = math.sqrt(math.exp(row.lnK))
        assert row.conversion == pytest.approx(root / (1 + root), rel=1e-10)
    first, last = t.profile[0], t.profile[-1]
    assert (first.T_K, last.T_K) == pytest.approx((313.15, 348.15))
    assert first.conversion == pytest.approx(0.7408, abs=5e-5)  # as the narrative says
    assert last.conversion == pytest.approx(0.7299, abs=5e-5)


def test_the_tabulated_k_against_the_classic_value_of_4():
    # Berthelot and Péan de Saint-Gilles, Ann. Chim. Phys. (3) 65-68 (1862), as
    # summarised by W. Ostwald, L'évolution d'une science : la chimie (1909), p. 274:
    # equal amounts of acetic acid and ethanol stop at about two thirds esterified, at
    # room temperature and hot alike, i.e. K = (2/3)²/(1/3)² = 4 on mole fractions.
    k_classic, x_classic = 4.0, 2 / 3
    t = assess_case(ESTER, LIB).thermo
    ks = [math.exp(r.lnK) for r in t.profile]
    # How far the library's K lands: 8.2 at 40 °C to 7.3 at 75 °C, 1.8 to 2.0 times
    # the classic value (ΔG° lower by RT ln(K/4) ≈ 1.7 to 1.9 kJ/mol) ...
    assert [round(k / k_classic, 2) for k in (ks[0], ks[-1])] == [2.04, 1.83]
    gap_kJ = [8.314462618e-3 * r.T_K * math.log(math.exp(r.lnK) / k_classic)
              for r in (t.profile[0], t.profile[-1])]
    assert gap_kJ == pytest.approx([1.86, 1.74], abs=0.01)
    # ... and the ideal-solution conversion 6.3 to 7.4 points above two thirds.
    points = [100 * (r.conversion - x_classic) for r in (t.profile[0], t.profile[-1])]
    assert points == pytest.approx([7.4, 6.3], abs=0.05)


def test_unifac_lowers_the_conversion_and_satisfies_k_with_its_own_gammas():
    a = assess_case(with_model(ESTER, "unifac"), LIB)
    t = a.thermo
    assert (t.activity_model, t.solution_model) == ("unifac", "unifac")
    assert t.solution_model_text.startswith("UNIFAC activity coefficients (Fredenslund")
    assert [g for _m, g, _o in t.solution_groups] == [
        "CH3 ×1, COOH ×1", "CH3 ×1, CH2 ×1, OH ×1", "CH3 ×1, CH2 ×1, CH3COO ×1", "H2O ×1"]
    ideal = assess_case(ESTER, LIB).thermo
    assert all(u.conversion < i.conversion for u, i in zip(t.profile, ideal.profile))
    assert t.profile[0].conversion == pytest.approx(0.5867, abs=5e-5)  # narrative: 58.7 %
    assert t.profile[-1].conversion == pytest.approx(0.5835, abs=5e-5)  # narrative: 58.4 %
    nus = (-1, -1, 1, 1)
    groups = tuple(assign_groups("unifac", cas, None, {}).groups
                   for cas in ("64-19-7", "64-17-5", "141-78-6", "7732-18-5"))
    for state, row in zip(t.solution_states, (t.profile[0], t.profile[-1])):
        # Hand: at equilibrium Σ ν ln(γ x) = ln K, with γ recomputed here from thermo's
        # UNIFAC at the composition the dossier reports (the thermo reference).
        gammas = [math.exp(g) for g in GroupContribution("unifac", groups).ln_gammas(
            state.T_K, state.x)]
        assert state.gamma == pytest.approx(gammas, rel=1e-9)
        assert sum(nu * math.log(g * x) for nu, g, x in zip(nus, gammas, state.x)) == \
            pytest.approx(row.lnK, abs=1e-9)
        xi = row.conversion
        assert state.x == pytest.approx(((1 - xi) / 2, (1 - xi) / 2, xi / 2, xi / 2))


def test_the_dortmund_variant_is_named_and_differs():
    t = assess_case(with_model(ESTER, "unifac-dortmund"), LIB).thermo
    assert t.solution_model == "unifac-dortmund"
    assert "OH(P) ×1" in t.solution_groups[1][1]
    assert t.profile[0].conversion == pytest.approx(0.6092, abs=5e-5)  # narrative: 60.9 %


def test_the_json_names_the_model_and_adds_keys_only():
    out = assess_case(with_model(ESTER, "unifac"), LIB).to_dict()
    eq = out["equilibrium"]
    assert set(eq) == {"mode", "note", "basis", "activity_model", "liquid_solution"}
    sol = eq["liquid_solution"]
    assert sol["model"] == "unifac" and sol["members"][0] == "acetic acid(l)"
    assert [e["T_K"] for e in sol["at_window_ends"]] == pytest.approx([313.15, 348.15])
    gas = assess_text(case_text("CO(g) + 2 H2(g) <=> CH3OH(g)", ("200 degC", "260 degC")))
    assert gas.to_dict()["equilibrium"]["liquid_solution"] is None


def test_equilibrium_limited_fires_for_the_esterification_and_names_the_model():
    a = assess_case(ESTER, LIB)
    f = next(f for f in a.findings if f.rule == "equilibrium-limited")
    # number policy: 0.1 % and 0.1 K, no-break spaces before units
    assert ("falls below 99.5 % (lowest 73.0 % at 348.2 K (75.0 °C), 1 bar)"
            in f.text.replace("\u00a0", " "))
    assert "the liquids as one ideal solution" in f.source


# A(l) ⇌ B(l) with equal Cp and ΔH° = 0: K = exp(ΔS°/R) at every temperature, and the
# ideal-solution conversion is K/(1 + K) (hand).  ΔS° = R ln(X/(1 − X)) sets X.
ISOMER = '''
[[species]]
name = "isomer A"
formula = "C6H12O"
phase = "l"
hf = "-300 kJ/mol"
s = "200 J/(mol*K)"
cp = "200 J/(mol*K)"
source = "invented for a test"

[[species]]
name = "isomer B"
formula = "C6H12O"
phase = "l"
hf = "-300 kJ/mol"
s = "{s_b} J/(mol*K)"
cp = "200 J/(mol*K)"
source = "invented for a test"
'''


@pytest.mark.parametrize("x, fires", [(0.994, True), (0.996, False)])
def test_the_finding_fires_only_on_a_shortfall_above_half_a_percent(x, fires):
    s_b = 200 + 8.314462618 * math.log(x / (1 - x))
    a = assess_text(case_text("isomer A(l) <=> isomer B(l)", ("30 degC", "60 degC"),
                              ISOMER.format(s_b=f"{s_b:.6f}")))
    assert all(r.conversion == pytest.approx(x, abs=1e-6) for r in a.thermo.profile)
    assert ("equilibrium-limited" in {f.rule for f in a.findings}) is fires
    assert DEFAULT.equilibrium_limited_below == 0.995


def test_a_liquid_inert_joins_the_solution():
    # Hand: a solvent cancels in K for A + B ⇌ C + D (the total amount does not change),
    # so the ideal conversion is the same; the solvent's own mole fraction is
    # 2 mol per mol of acid fed over 2 + 2 mol.
    plain = assess_text(case_text(REACTION)).thermo
    text = case_text(REACTION, extra='inerts = { "toluene(l)" = "2 mol" }\n')
    t = assess_text(text).thermo
    assert t.solution_members[-1] == "toluene(l)"
    assert [r.conversion for r in t.profile] == pytest.approx(
        [r.conversion for r in plain.profile], rel=1e-10)
    assert t.solution_states[0].x[-1] == pytest.approx(0.5, rel=1e-10)


def test_unifac_with_a_solvent_uses_its_groups_and_its_record():
    text = case_text(REACTION, extra='inerts = { "toluene(l)" = "2 mol" }\n'
                                     '[equilibrium]\nactivity_model = "unifac"\n')
    ev = evaluate(parse_case_text(text, "inline.md"), LIB)
    t = ev.assessment.thermo
    assert t.solution_model == "unifac"
    # toluene: 5 ACH + 1 ACCH3 (UNIFAC group definitions, Hansen et al. 1991)
    assert t.solution_groups[-1][:2] == ("toluene(l)", "ACH ×5, ACCH3 ×1")
    assert "C7H8(l)" in {r.id for r in ev.records}  # toluene's record is in the digest


def test_groups_not_known_fall_back_to_ideal_with_a_warning():
    extra = ('[equilibrium]\nactivity_model = "unifac"\n'
             '[[species]]\nname = "ester X"\nformula = "C4H8O2"\nphase = "l"\n'
             'hf = "-479.3 kJ/mol"\ns = "257.7 J/(mol*K)"\ncp = "170.7 J/(mol*K)"\n'
             'source = "copied for a test"\n')
    a = assess_text(case_text("acetic acid(l) + ethanol(l) <=> ester X(l) + H2O(l)",
                              extra=extra))
    t = a.thermo
    assert (t.activity_model, t.solution_model) == ("unifac", "ideal")
    warning = next(w for w in a.warnings if "groups are not known" in w)
    assert warning == ("the UNIFAC groups are not known for ester X(l) (no CAS number; no "
                       "structure (SMILES) to split into groups): the liquid solution is "
                       "taken as ideal instead of UNIFAC, which [equilibrium] activity_model "
                       "asks for")
    ideal = assess_case(ESTER, LIB).thermo
    assert t.profile[0].conversion == pytest.approx(ideal.profile[0].conversion, rel=1e-9)


def test_a_liquid_without_groups_falls_back_to_ideal():
    # Nitric acid has no UNIFAC groups (no group covers it).
    text = case_text("C6H6(l) + HNO3(l) -> C6H5NO2(l) + H2O(l)", ("45 degC", "60 degC"),
                     '[equilibrium]\nactivity_model = "unifac"\n')
    a = assess_text(text)
    assert a.thermo.solution_model == "ideal"
    assert any(w.startswith("the UNIFAC groups are not known for HNO3(l) (no group "
                            "assignment for CAS 7697-37-2;") for w in a.warnings)


def test_a_missing_interaction_falls_back_to_ideal_and_names_the_groups():
    # The original UNIFAC table has no CCOO (ester) - ACNO2 (nitroaromatic) and no COOH -
    # ACNO2 parameters (thermo's UFIP, as the engine test shows for the first pair):
    # the esterification in nitrobenzene as a solvent cannot be computed with it.
    text = case_text(REACTION, extra='inerts = { "C6H5NO2(l)" = "1 mol" }\n'
                                     '[equilibrium]\nactivity_model = "unifac"\n')
    a = assess_text(text)
    assert a.thermo.solution_model == "ideal"
    assert ("the UNIFAC parameter table has no interaction between the main groups CCOO and "
            "ACNO2, COOH and ACNO2: the liquid solution is taken as ideal instead of UNIFAC, "
            "which [equilibrium] activity_model asks for") in a.warnings


def test_unifac_outside_its_fitted_range_is_an_extrapolation_finding():
    text = case_text(REACTION, ("0 degC", "75 degC"),
                     '[equilibrium]\nactivity_model = "unifac"\n')
    a = assess_text(text)
    w = next(w for w in a.warnings if "activity coefficients are extrapolated" in w)
    assert "its parameters rest on data of about 275-425 K" in w
    assert any(f.rule == "extrapolated-data" and f.text == w for f in a.findings)


def test_the_option_plays_no_part_without_a_liquid_mixture():
    # Gas phase: the same numbers with either model, and the dossier says why.
    gas = case_text("CO(g) + 2 H2(g) <=> CH3OH(g)", ("200 degC", "260 degC"))
    a = assess_text(gas)
    b = assess_case(with_model(parse_case_text(gas, "gas.md"), "unifac"), LIB)
    assert [r.conversion for r in a.thermo.profile] == [r.conversion for r in b.thermo.profile]
    assert b.thermo.solution_model == ""
    assert b.thermo.solution_note == ('[equilibrium] activity_model = "unifac" plays no part: '
                                      'the reaction has no liquid mixture.')
    aq = assess_case(with_model(parse_case_text(case_text(
        "H+(aq) + OH-(aq) -> H2O(l)", ("20 degC", "40 degC")), "aq.md"), "unifac"), LIB)
    plain = assess_text(case_text("H+(aq) + OH-(aq) -> H2O(l)", ("20 degC", "40 degC")))
    assert [r.conversion for r in aq.thermo.profile] == \
        [r.conversion for r in plain.thermo.profile]


def test_the_case_option_is_checked_with_a_hint_at_its_line():
    from dossier.errors import CaseError

    text = case_text(REACTION, extra='[equilibrium]\nactivity_model = "unifak"\n')
    with pytest.raises(CaseError) as err:
        parse_case_text(text, "typo.md")
    (problem,) = err.value.problems
    assert problem.line == 8 and problem.key == "equilibrium.activity_model"
    assert "expected one of ideal, unifac, unifac-dortmund" in problem.message
    assert "did you mean 'unifac'" in problem.message
    assert parse_case_text(case_text(REACTION), "plain.md").activity_model == "ideal"


def test_the_terminal_names_the_model_the_groups_and_the_state_at_the_ends():
    from dossier.render.terminal import render_assessment

    a = assess_case(with_model(ESTER, "unifac"), LIB)
    text = render_assessment(a)
    assert "liquids    one solution: UNIFAC activity coefficients (Fredenslund" in text
    assert ("           acetic acid(l): CH3 ×1, COOH ×1 (Dortmund Data Bank group assignment "
            "for CAS 64-19-7)") in text
    low = a.thermo.solution_states[0]  # the values checked against thermo above
    assert (f"           at 313.2\u00a0K (40.0\u00a0°C): acetic acid(l) x {low.x[0]:.4f} "
            f"γ {low.gamma[0]:.4f},") in text
    ideal = render_assessment(assess_case(ESTER, LIB))
    assert ("liquids    one solution: ideal solution (each liquid's activity is its mole "
            "fraction)") in ideal
