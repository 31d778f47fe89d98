"""The one species resolver: a case's own [[species]] table is used or reported,
never silently dropped, and the integrity digest covers exactly what was used."""
from __future__ import annotations

import pytest

from dossier.assess.evaluate import evaluate
from dossier.casefile.load import parse_case_text
from dossier.errors import CaseError
from dossier.library.lookup import Library
from dossier.review.digest import case_digest

LIB = Library.default()

WATER_CASE = """+++
title = "Hydrogen burn with the case's own water data"
revision = 1
status = "draft"
reaction = "H2(g) + 0.5 O2(g) -> H2O(l)"
temperature = ["25 degC", "60 degC"]
{extra}
[[species]]
name = "water"
formula = "H2O"
phase = "{phase}"
hf = "-250 kJ/mol"
s = "70 J/(mol*K)"
cp = "75 J/(mol*K)"
source = "invented for a test"
+++
Narrative.
"""


def _evaluate(phase: str = "l", extra: str = ""):
    case = parse_case_text(WATER_CASE.format(phase=phase, extra=extra), "water.md")
    return case, evaluate(case, LIB)


def test_a_case_table_written_as_the_reactions_formula_replaces_the_library_record():
    _case, ev = _evaluate()
    a = ev.assessment
    water = next(u for u in a.species if u.key == "H2O(l)")
    assert water.local and water.overrides_library and water.record_id == "water(l)"
    # ΔrH°(298.15 K) = ΔfH°(H2O) − 0 − 0 = −250 kJ/mol: the table's value, by hand
    # (the elements' NASA polynomials give ΔfH° = 0 to about 1e-8 kJ/mol)
    assert a.thermo.dH298_kJ_mol == pytest.approx(-250.0, abs=1e-6)
    assert "H2O(l): the case's own data replace the library record 'H2O(l)'" in a.warnings
    assert any(f.rule == "case-local-data" and "replacing the library record" in f.text
               for f in a.findings)


def test_without_the_table_the_library_value_is_used():
    # NIST-JANAF (1998) / CODATA: ΔfH°(H2O, l, 298.15 K) = −285.83 kJ/mol
    case = parse_case_text(WATER_CASE.format(phase="l", extra="").split("[[species]]")[0]
                           + "+++\nNarrative.\n", "plain.md")
    a = evaluate(case, LIB).assessment
    assert a.thermo.dH298_kJ_mol == pytest.approx(-285.83, abs=0.05)


def test_an_unused_case_table_is_named_in_a_warning():
    # the table is for water vapour, the reaction makes liquid water: the table is unused
    case, ev = _evaluate(phase="g")
    a = ev.assessment
    assert a.thermo.dH298_kJ_mol == pytest.approx(-285.83, abs=0.05)  # library H2O(l)
    text = WATER_CASE.format(phase="g", extra="")
    line = text.splitlines().index("[[species]]") + 1  # the table's own line
    assert (f"the case's [[species]] table 'water' at line {line} (H2O, phase g) is not used: "
            "no term of the reaction and no inert names it, so its data play no part in this "
            "dossier; write it in the reaction as 'water(g)' or as its formula with that "
            "phase, or remove the table") in a.warnings
    assert all(r.id != "water(g)" for r in ev.records)


def test_a_table_named_by_an_inert_is_not_reported_unused():
    _case, ev = _evaluate(phase="g", extra='inerts = { "water(g)" = "0.1 mol" }')
    assert not any("is not used" in w for w in ev.assessment.warnings)


def test_two_case_tables_matching_one_term_is_an_error_at_the_reaction():
    text = WATER_CASE.format(phase="l", extra="") .replace(
        "+++\nNarrative.", '''
[[species]]
name = "heavy water"
formula = "H2O"
phase = "l"
hf = "-280 kJ/mol"
s = "70 J/(mol*K)"
cp = "75 J/(mol*K)"
source = "invented for a test"
+++
Narrative.''')
    case = parse_case_text(text, "two.md")
    with pytest.raises(CaseError) as info:
        evaluate(case, LIB)
    (problem,) = info.value.problems
    assert problem.key == "reaction" and problem.line == case.line_of("reaction")
    assert problem.message == ("species 'H2O(l)': matches 2 of the case's [[species]] tables "
                               "('water', 'heavy water'); write the name of the one meant")


def test_the_digest_covers_the_case_table_that_the_assessment_used():
    case, ev = _evaluate()
    ids = {r.id for r in ev.records}
    assert "water(l)" in ids and "H2O(l)" not in ids  # the library record was not used
    record = case_digest(b"x", [r.to_dict() for r in ev.records],
                         ev.assessment.library_version, ev.assessment.tool_version,
                         ev.settings.record())
    assert {sid for sid, _ in record.species_digests} == ids


def test_the_unused_table_named_is_the_one_at_its_own_line():
    text = WATER_CASE.format(phase="l", extra="").replace("+++\nNarrative.", """
[[species]]
name = "steam"
formula = "H2O"
phase = "g"
hf = "-240 kJ/mol"
s = "189 J/(mol*K)"
cp = "34 J/(mol*K)"
source = "invented for a test"
+++
Narrative.""")
    case = parse_case_text(text, "two.md")
    a = evaluate(case, LIB).assessment
    second = [i + 1 for i, l in enumerate(text.splitlines()) if l == "[[species]]"][1]
    (warning,) = [w for w in a.warnings if "is not used" in w]
    assert warning.startswith(f"the case's [[species]] table 'steam' at line {second} (H2O, phase g)")
