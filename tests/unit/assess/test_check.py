"""`dossier check`'s whole check (assess.check.case_problems): every problem at once,
across the header, the reaction, its species and the balance; and the reaction check
of `dossier new` (reaction_report)."""
from __future__ import annotations

from pathlib import Path

import pytest

from dossier.assess.check import case_problems, reaction_report
from dossier.casefile.load import CaseSource
from dossier.errors import ReactionError
from dossier.library.lookup import Library
from paths import ROOT

LIB = Library.default()
FIXTURES = Path("tests/fixtures/messages")

#: How the data of a liquid the library does not hold are supplied (the text every
#: unknown-species problem ends with).
SUPPLY_LIQUID = ('give its data in a [[species]] table: {name}, {formula}, phase = "l", hf, '
                 's, cp and source; or have them estimated from its structure: the same '
                 'table with smiles and estimate = "benson" (or "joback") in place of hf, '
                 's, cp and source')


@pytest.fixture(autouse=True)
def _run_from_root(monkeypatch):
    monkeypatch.chdir(ROOT)  # messages show the path as given


def check(name: str) -> list[str]:
    path = FIXTURES / name
    return [str(p) for p in case_problems(CaseSource(path, path.read_bytes()), LIB)]


def test_a_good_case_has_no_problem():
    path = Path("tests/fixtures/cases/minimal.md")
    assert case_problems(CaseSource(path, path.read_bytes()), LIB) == ()


def test_bad_window_misplaced_and_missing_keys_do_not_hide_an_unbalanced_reaction():
    f = "tests/fixtures/messages/every_phase.md"
    assert check("every_phase.md") == [
        f"{f}:5: key 'reaction': reaction 'N2(g) + H2(g) <=> NH3(g)' does not balance: "
        "H +1, N -1 (products minus reactants); balanced with the same species: "
        "'N2(g) + 3 H2(g) <=> 2 NH3(g)'",
        f"{f}:6: key 'temperature': expected the low temperature first and below the high "
        "one, like [\"40 degC\", \"80 degC\"]; got '450 degC' to '350 degC'",
        f"{f}:8: key 'charge.mass': required key is missing in [charge]; add a line like: "
        "mass = \"950 kg\"",
        f"{f}:14: key 'charge.mtt': unknown key; 'mtt' belongs in [vessel], not in [charge]: "
        "move it there",
    ]


def test_unknown_species_do_not_hide_the_balance_of_formulas():
    f = "tests/fixtures/messages/unknown_species.md"
    none_near = "and none with a similar name in this phase"
    assert check("unknown_species.md") == [
        f"{f}:5: key 'reaction': species 'C8H9NO2(l)': no library species 'C8H9NO2(l)', "
        f"{none_near}; " + SUPPLY_LIQUID.format(name="name", formula='formula = "C8H9NO2"'),
        f"{f}:5: key 'reaction': species 'C8H11NO(l)': no library species 'C8H11NO(l)', "
        f"{none_near}; " + SUPPLY_LIQUID.format(name="name", formula='formula = "C8H11NO"'),
        f"{f}:5: key 'reaction': reaction 'C8H9NO2(l) + H2(g) -> C8H11NO(l) + H2O(l)' does "
        "not balance: H +2 (products minus reactants); balanced with the same species: "
        "'C8H9NO2(l) + 2 H2(g) -> C8H11NO(l) + H2O(l)'",
    ]


def test_a_damaged_species_table_is_reported_at_its_value_not_as_an_unknown_species():
    f = "tests/fixtures/messages/damaged_species_table.md"
    assert check("damaged_species_table.md") == [
        f"{f}:6: key 'temperature': expected two temperatures [low, high], like "
        "[\"40 degC\", \"80 degC\"]; got a list of 1",
        f"{f}:12: key 'species[1].hf': expected an energy per amount of substance, like "
        "'-540 kJ/mol'; got '-310 kJ', which is an energy",
    ]


def test_a_term_of_a_table_too_damaged_to_read_is_not_called_unknown(tmp_path):
    # nor is its balance checked as if "B" were boron
    case = tmp_path / "t.md"
    case.write_text('+++\ntitle = "t"\nrevision = 1\nstatus = "draft"\n'
                    'reaction = "B(l) -> C2H4(g) + C6H5NO2(l)"\n'
                    'temperature = ["20 degC", "60 degC"]\n\n[[species]]\nname = "B"\n'
                    'formula = 7\nphase = "l"\nhf = "-310 kJ/mol"\ns = "250 J/(mol*K)"\n'
                    'cp = "290 J/(mol*K)"\nsource = "invented"\n+++\n')
    problems = case_problems(CaseSource(case, case.read_bytes()), LIB)
    assert [(p.line, p.key, p.message) for p in problems] == [
        (10, "species[1].formula", "expected text in quotes, like \"C8H9NO2\"; got 7")]


def test_a_near_name_comes_before_how_to_supply_the_data(tmp_path):
    case = tmp_path / "n.md"
    case.write_text('+++\ntitle = "n"\nrevision = 1\nstatus = "draft"\n'
                    'reaction = "nitrobenzen(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)"\n'
                    'temperature = ["20 degC", "60 degC"]\n+++\n')
    [problem] = case_problems(CaseSource(case, case.read_bytes()), LIB)
    assert problem.message == (
        "species 'nitrobenzen(l)': no library species 'nitrobenzen(l)'; did you mean: "
        "nitrobenzene(l)? If not, " + SUPPLY_LIQUID.format(name='name = "nitrobenzen"',
                                                            formula="formula"))


def test_a_solid_gets_no_estimate_hint_and_other_phases_come_first(tmp_path):
    case = tmp_path / "s.md"
    case.write_text('+++\ntitle = "s"\nrevision = 1\nstatus = "draft"\n'
                    'reaction = "benzene(s) -> benzene(l)"\n'
                    'temperature = ["0 degC", "10 degC"]\n+++\n')
    [problem] = case_problems(CaseSource(case, case.read_bytes()), LIB)
    assert problem.message == (
        "species 'benzene(s)': no library species 'benzene(s)'; other phases exist: "
        "C6H6(g), C6H6(l); if the phase is right, give its data in a [[species]] table: "
        "name = \"benzene\", formula, phase = \"s\", hf, s, cp and source (an estimate "
        "from a structure is made for a gas or a liquid only)")


# -- dossier new -------------------------------------------------------------------

def test_new_reaction_known_and_balanced_has_nothing_to_say():
    report = reaction_report("CH4(g) + 2 O2(g) -> CO2(g) + 2 H2O(g)", LIB)
    assert report.problems == () and report.warnings == ()


def test_new_reaction_with_equals_says_how_it_is_read():
    report = reaction_report("H2(g) + Cl2(g) = 2 HCl(g)", LIB)
    assert report.problems == ()
    assert report.warnings == ("'=' is read as '->', a forward reaction; write '<=>' if "
                               "the reaction is an equilibrium",)


def test_new_reaction_that_does_not_balance_is_a_problem():
    report = reaction_report("H2(g) + Cl2(g) -> HCl(g)", LIB)
    assert report.problems == (
        "reaction 'H2(g) + Cl2(g) -> HCl(g)' does not balance: H -1, Cl -1 (products minus "
        "reactants); balanced with the same species: 'H2(g) + Cl2(g) -> 2 HCl(g)'",)


def test_new_reaction_with_an_unknown_name_warns_and_leaves_the_balance_to_check():
    report = reaction_report("intermediate B(l) -> C2H4(g) + C6H5NO2(l)", LIB)
    assert report.problems == ()
    assert report.warnings == (
        "species 'intermediate B(l)': no library species 'intermediate B(l)', and none "
        "with a similar name in this phase; "
        + SUPPLY_LIQUID.format(name='name = "intermediate B"', formula="formula"),
        "the balance is checked once every species has its formula: run `dossier check` "
        "on the case")


def test_new_reaction_naming_several_library_species_is_a_problem():
    report = reaction_report("C2H6O(g) -> C2H4(g) + H2O(g)", LIB)
    assert report.problems == (
        "species 'C2H6O(g)': 'C2H6O(g)' matches 2 library species: dimethyl ether "
        "[CH3OCH3(g)], ethanol [C2H5OH(g)]; write the name or id instead, e.g. "
        "'CH3OCH3(g)'",)


def test_new_reaction_that_cannot_be_parsed_raises():
    with pytest.raises(ReactionError) as info:
        reaction_report("H2(g) + Cl2(g) 2 HCl(g)", LIB)
    assert str(info.value) == ("reaction 'H2(g) + Cl2(g) 2 HCl(g)' has no arrow: write '->' "
                               "(forward) or '<=>' (equilibrium) between reactants and "
                               "products")
