"""The demo register in cases/: every case loads and assesses, the register
covers what a review board meets, and each case shows the outcome it was
written for.

These are outcome checks on our own, invented demo inputs (see each case's
narrative): they say "this case still demonstrates what it is there for",
not that a number agrees with an outside source.  The only outside facts
used are the signs and rough sizes of well-known reaction properties, marked
where they appear.
"""
from __future__ import annotations

import datetime
from pathlib import Path

import pytest
from click.testing import CliRunner

from dossier.assess.evaluate import assess_case
from dossier.model.case import Status, Verdict
from dossier.casefile.load import load_case
from dossier.cli.main import main
from dossier.casefile.template import check_case_id
from dossier.library.lookup import Library
from paths import ROOT

ROOT = ROOT
CASES = ROOT / "cases"
CASE_FILES = sorted(CASES.glob("*.md"))
IDS = [p.stem for p in CASE_FILES]

COMPANY = "Halvermoor Fine Chemicals"
SITE = "Orrowby Works"
AGENDA = datetime.date(2026, 12, 15)


@pytest.fixture(scope="module")
def library():
    return Library.default()


@pytest.fixture(scope="module")
def register(library):
    """{case id: (case, assessment)} for every demo case."""
    out = {}
    for path in CASE_FILES:
        case = load_case(path)
        out[case.id] = (case, assess_case(case, library))
    return out


def rules(assessment) -> set[str]:
    return {f.rule for f in assessment.findings}


def findings(assessment, rule: str):
    return [f for f in assessment.findings if f.rule == rule]


def window_rows(assessment):
    lo, hi = assessment.thermo.window_K
    return [r for r in assessment.thermo.profile if lo <= r.T_K <= hi]


# --- the register as a whole ------------------------------------------------------

def test_at_least_twelve_demo_cases():
    assert len(CASE_FILES) >= 12


@pytest.mark.parametrize("case_id", IDS)
def test_case_id_is_a_safe_file_stem(case_id):
    assert check_case_id(case_id) == case_id


@pytest.mark.parametrize("case_id", IDS)
def test_every_case_loads_and_assesses_with_cautions(register, case_id):
    case, a = register[case_id]
    assert a.case_id == case_id
    assert a.thermo.profile
    assert a.cautions
    assert a.to_dict()["cautions"] == list(a.cautions)


def test_dossier_check_accepts_the_register():
    result = CliRunner().invoke(main, ["check", str(CASES)])
    assert result.exit_code == 0, result.output
    kept = sorted(CASES.glob("*/rev-*.md"))  # earlier revisions are checked too
    total = len(CASE_FILES) + len(kept)
    assert f"{total} of {total} case files are good." in result.output


def test_register_covers_every_status(register):
    seen = {case.status for case, _ in register.values()}
    assert seen == set(Status)


@pytest.mark.parametrize("case_id", IDS)
def test_reviews_match_the_status(register, case_id):
    case, _ = register[case_id]
    verdicts = {r.verdict for r in case.reviews}
    if case.status in (Status.DRAFT, Status.SUBMITTED, Status.WITHDRAWN):
        assert case.reviews == ()
    else:
        assert verdicts == {Verdict(str(case.status))}
    for review in case.reviews:
        if review.verdict is Verdict.ACCEPTED_WITH_CONDITIONS:
            assert review.conditions.strip()
        if case.meeting is not None:
            assert review.date >= case.meeting


def test_several_cases_carry_reviews_and_revisions(register):
    with_reviews = [cid for cid, (case, _) in register.items() if case.reviews]
    revised = [cid for cid, (case, _) in register.items() if case.revision >= 2]
    assert len(with_reviews) >= 4
    assert len(revised) >= 3
    assert any(register[cid][0].revision == 3 for cid in revised)


@pytest.mark.parametrize("case_id", IDS)
def test_revised_cases_say_what_changed(register, case_id):
    case, _ = register[case_id]
    if case.revision >= 2:
        assert "## Revision history" in case.narrative
        for n in range(1, case.revision):
            assert f"**Revision {n}**" in case.narrative


def test_one_meeting_has_several_submitted_cases(register):
    agenda = [case for case, _ in register.values() if case.meeting == AGENDA]
    assert len(agenda) >= 3
    assert all(case.status is Status.SUBMITTED for case in agenda)


# --- each narrative ---------------------------------------------------------------

@pytest.mark.parametrize("case_id", IDS)
def test_narrative_says_it_is_a_demonstration(register, case_id):
    case, _ = register[case_id]
    text = case.narrative
    assert "**Demonstration case.**" in text
    assert COMPANY in text and SITE in text
    assert "fictional" in text and "Invented for this demonstration" in text
    for section in ("## Purpose", "## Data and references"):
        assert section in text


@pytest.mark.parametrize("case_id", IDS)
def test_owner_is_on_the_demo_site(register, case_id):
    case, _ = register[case_id]
    assert case.owner and SITE in case.owner


# --- the outcome each case was written for ---------------------------------------

def test_nitro_hydrogenation_is_a_high_criticality_dosed_reduction(register):
    case, a = register["nitro-hydrogenation"]
    s = a.safety
    assert case.charge and case.vessel and case.decomposition and case.measured
    assert 0 < case.charge.accumulation < 1
    assert a.thermo.favourable == "everywhere"
    assert s.scale.enthalpy_origin == "measured"
    assert s.severity == "high"
    assert s.td24_origin == "from kinetics"
    assert s.mtsr_K >= s.td24_K
    assert s.criticality_class >= 4
    assert findings(a, "criticality-class")[0].severity == "critical"
    # the measured enthalpy was chosen to agree with the computed one
    assert "enthalpy-mismatch" not in rules(a)
    assert s.cooling_sufficient is True


def test_caustic_neutralisation_is_a_small_exotherm(register):
    case, a = register["caustic-neutralisation"]
    assert a.thermo.reaction == "H+(aq) + OH-(aq) -> H2O(l)"
    # neutralisation is exothermic, about -56 kJ/mol (well known; sign is what matters)
    assert a.thermo.dH298_kJ_mol < 0
    assert a.thermo.favourable == "everywhere"
    assert a.safety.severity == "low"
    assert case.status is Status.ACCEPTED


def test_soda_ash_quench_raises_the_gas_and_pressure_finding(register):
    _, a = register["soda-ash-quench"]
    gas = findings(a, "gas-and-pressure")
    assert len(gas) == 1 and gas[0].severity == "critical"
    assert a.safety.scale.gas_mol > 0
    assert a.safety.pressure_exceeds_design is True
    assert a.safety.pressure_at_mtsr_bar > a.safety.design_pressure_bar


def test_bicarbonate_dryer_crosses_over_inside_its_window(register):
    _, a = register["bicarbonate-dryer"]
    t = a.thermo
    # endothermic and entropy-driven: ΔH° > 0 and ΔS° > 0 (two gases formed)
    assert t.dH298_kJ_mol > 0 and t.dS298_J_molK > 0
    inside = t.crossovers_in_window
    assert len(inside) == 1
    assert inside[0].direction == "favourable above"
    assert t.favourable == "partly"
    assert "crossover-in-window" in rules(a)
    rows = window_rows(a)
    assert rows[0].dG_kJ_mol > 0 > rows[-1].dG_kJ_mol


def test_methanol_loop_is_equilibrium_limited_at_pressure(register):
    case, a = register["methanol-loop"]
    t = a.thermo
    assert t.reversible and t.pressure_bar == pytest.approx(80.0)
    assert case.inerts
    rows = window_rows(a)
    conversions = [r.conversion for r in rows]
    assert all(0.2 < x < 0.95 for x in conversions)
    # exothermic with fewer moles of gas: conversion falls as temperature rises
    assert conversions == sorted(conversions, reverse=True)
    assert t.crossovers and all(c.T < t.window_K[0] for c in t.crossovers)


def test_methanol_loop_raises_the_equilibrium_limited_finding(register):
    _, a = register["methanol-loop"]
    assert "equilibrium-limited" in rules(a)


def test_dry_reforming_is_unfavourable_across_its_window(register):
    case, a = register["dry-reforming"]
    t = a.thermo
    assert t.favourable == "nowhere"
    assert a.to_dict()["favourable_in_window"] == "nowhere"
    assert "unfavourable-everywhere" in rules(a)
    assert t.crossovers and all(c.T > t.window_K[1] for c in t.crossovers)
    assert case.status is Status.DECLINED


def test_dinitration_uses_case_local_data_with_an_uncertainty(register):
    case, a = register["dinitration"]
    local = [s for s in a.species if s.local]
    assert [s.key for s in local] == ["m-dinitrobenzene(l)"]
    assert dict(local[0].uncertainty).keys() == {"hf", "s", "cp"}
    assert local[0].source.startswith("case-local data: estimate")
    assert "case-local-data" in rules(a)
    assert "estimate" in case.narrative.lower()


def test_dinitration_product_is_screened_as_energetic(register):
    _, a = register["dinitration"]
    screens = {e.species: e for e in a.safety.energetics}
    dnb = screens["m-dinitrobenzene"]
    assert dnb.oxygen_balance_pct is not None and dnb.oxygen_balance_pct < 0
    assert dnb.max_decomposition_J_per_g > 500
    assert any("m-dinitrobenzene" in f.text for f in findings(a, "energetic-species"))
    from dossier.engine.energetics import toolkit_available

    if toolkit_available():
        assert dnb.explosophores  # from the SMILES in the case file


def test_benzene_nitration_flags_its_nitroaromatic_product(register):
    _, a = register["benzene-nitration"]
    assert any(f.text.startswith("nitrobenzene") for f in findings(a, "energetic-species"))
    assert a.safety.criticality_class == 3
    assert a.safety.scale.enthalpy_origin == "computed"


def test_peroxide_destruction_raises_the_enthalpy_mismatch(register):
    _, a = register["peroxide-destruction"]
    sc = a.safety.scale
    diff = abs(sc.enthalpy_measured_kJ_mol - sc.enthalpy_computed_kJ_mol)
    assert diff > 30 or diff > 0.2 * abs(sc.enthalpy_measured_kJ_mol)
    assert len(findings(a, "enthalpy-mismatch")) == 1
    assert findings(a, "gas-and-pressure")[0].severity == "critical"


def test_styrene_hydrogenation_is_class_one(register):
    case, a = register["styrene-hydrogenation"]
    assert a.safety.criticality_class == 1
    assert a.safety.severity == "low"
    assert case.status is Status.ACCEPTED


def test_withdrawn_and_draft_cases(register):
    lime, a_lime = register["quicklime-slaking"]
    assert lime.status is Status.WITHDRAWN and lime.meeting is None
    scrub, a_scrub = register["ammonia-scrubber"]
    assert scrub.status is Status.DRAFT and scrub.charge is None
    assert a_scrub.safety.scale is None
    assert "missing-safety-inputs" in rules(a_scrub)


# --- archived revisions (cases/<id>/rev-<N>.md) -----------------------------------

ARCHIVED = {"nitro-hydrogenation": 2, "soda-ash-quench": 2, "benzene-nitration": 3,
            "peroxide-destruction": 2}


@pytest.mark.parametrize("case_id", sorted(ARCHIVED))
def test_earlier_revisions_are_kept_and_assess(register, library, case_id):
    case, current = register[case_id]
    assert case.revision == ARCHIVED[case_id]
    kept = sorted(p.name for p in (CASES / case_id).glob("rev-*.md"))
    assert kept == [f"rev-{n}.md" for n in range(1, case.revision)]
    for n in range(1, case.revision):
        old = load_case(CASES / case_id / f"rev-{n}.md")
        assert old.revision == n and old.status is Status.SUBMITTED
        assert old.reaction == case.reaction
        assert "**Demonstration case.**" in old.narrative
        assess_case(old, library)


def test_archived_revisions_show_the_changes_the_narratives_describe(library):
    def load(case_id, n=None):
        path = CASES / (f"{case_id}.md" if n is None else f"{case_id}/rev-{n}.md")
        case = load_case(path)
        return case, assess_case(case, library)

    # nitro-hydrogenation: batch (all-in) -> dosed, with calorimetry and kinetics
    (c1, a1), (c2, a2) = load("nitro-hydrogenation", 1), load("nitro-hydrogenation")
    assert c1.charge.accumulation == 1 and c2.charge.accumulation < 1
    assert a2.safety.mtsr_K < a1.safety.mtsr_K
    assert c1.measured is None and c2.measured is not None
    # benzene-nitration: cooling shortfall in revision 1, gone in revision 3
    (_, b1), (_, b3) = load("benzene-nitration", 1), load("benzene-nitration")
    assert "cooling-shortfall" in rules(b1) and "cooling-shortfall" not in rules(b3)
    (_, b2) = load("benzene-nitration", 2)
    assert b2.safety.td24_origin == "given" and b3.safety.td24_origin == "from kinetics"
    # soda-ash-quench: no gas space in revision 1, so no pressure figure
    (_, s1), (_, s2) = load("soda-ash-quench", 1), load("soda-ash-quench")
    assert s1.safety.pressure_at_mtsr_bar is None and s2.safety.pressure_at_mtsr_bar is not None
    # peroxide-destruction: computed enthalpy in revision 1, measured in revision 2
    (_, p1), (_, p2) = load("peroxide-destruction", 1), load("peroxide-destruction")
    assert p1.safety.scale.enthalpy_origin == "computed"
    assert p2.safety.scale.enthalpy_origin == "measured"


def test_demo_signatures_are_valid():
    # The demo register carries signed verdicts (cases/*.signatures, checked
    # against cases/trusted-keys.txt).  They cover the case bytes, the species
    # records used, the library and tool versions and the method settings: if
    # this fails after such a change, that is the integrity record working;
    # re-sign the demo cases (see docs/signatures.md) with fresh demo keys.
    result = CliRunner().invoke(main, ["verify", str(CASES)])
    assert result.exit_code == 0, result.output
    assert "4 signatures: 4 valid" in result.output
