"""Messages of the header's checks: a key in the wrong table, and the check that goes
on past the header's problems (casefile.load.check_source)."""
from __future__ import annotations

from pathlib import Path

import pytest

from dossier.casefile.load import UNCHECKED_SOURCE, CaseSource, check_source, load_case, \
    parse_case_text
from dossier.casefile.template import case_template
from dossier.errors import CaseError
from dossier.model.case import Phase
from paths import ROOT

FIXTURES = Path("tests/fixtures/messages")

HEAD = '''+++
title = "Messages"
revision = 1
status = "draft"
reaction = "N2(g) + 3 H2(g) <=> 2 NH3(g)"
temperature = ["350 degC", "450 degC"]
'''


@pytest.fixture(autouse=True)
def _run_from_root(monkeypatch):
    monkeypatch.chdir(ROOT)  # messages show the path as given


def problems_of(text: str) -> list[str]:
    with pytest.raises(CaseError) as info:
        parse_case_text(text, "m.md")
    return [str(p) for p in info.value.problems]


def test_a_key_in_the_wrong_table_names_the_right_one():
    with pytest.raises(CaseError) as info:
        load_case(FIXTURES / "wrong_table.md")
    assert [str(p) for p in info.value.problems] == [
        "tests/fixtures/messages/wrong_table.md:15: key 'charge.mtt': unknown key; 'mtt' "
        "belongs in [vessel], not in [charge]: move it there"]


@pytest.mark.parametrize("table, line, expected", [
    ("[vessel]", 'cp = "2 kJ/(kg*K)"',
     "m.md:8: key 'vessel.cp': unknown key; 'cp' belongs in [charge] or [[species]], not "
     "in [vessel]: move it to the one meant"),
    ("[vessel]", 'name = "R-220"',
     "m.md:8: key 'vessel.name': unknown key; 'name' belongs in [[species]], [[variant]] "
     "or [[review]], not in [vessel]: move it to the one meant"),
    # a key of a table inside this one: that table is named first
    ("[decomposition]", 'power = "8 W/kg"',
     "m.md:8: key 'decomposition.power': unknown key; 'power' belongs in the rate table "
     "of [decomposition], not in [decomposition]: move it there"),
    ("", 'mtt = "100 degC"',
     "m.md:7: key 'mtt': unknown key; 'mtt' belongs in [vessel]: move it there"),
    # the right table, another letter case: the key itself is meant
    ("[vessel]", 'MTT = "100 degC"', "m.md:8: key 'vessel.MTT': unknown key; did you mean 'mtt'?"),
    # a top-level key below a table keeps its own hint
    ("[vessel]", 'pressure = "5 bar"',
     "m.md:8: key 'vessel.pressure': unknown key; 'pressure' is a top-level key: move it "
     "above the first [table] line, or it belongs to the table above it"),
    # nowhere in the schema: a near key of this table, else the list of its keys
    ("[vessel]", 'mt = "100 degC"', "m.md:8: key 'vessel.mt': unknown key; did you mean 'mtt'?"),
])
def test_unknown_key_hints(table, line, expected):
    text = HEAD + (f"{table}\n" if table else "") + line + "\n+++\n"
    assert problems_of(text) == [expected]


def source(name: str) -> CaseSource:
    path = FIXTURES / name
    return CaseSource(path, path.read_bytes())


def test_check_source_of_a_good_case_gives_the_case():
    path = Path("tests/fixtures/cases/minimal.md")
    found = check_source(CaseSource(path, path.read_bytes()))
    assert found.problems == () and found.case == load_case(path)
    assert found.reaction_case is None


def test_check_source_keeps_what_the_reaction_checks_read():
    found = check_source(source("every_phase.md"))
    assert found.case is None
    assert [p.key for p in found.problems] == ["temperature", "charge.mass", "charge.mtt"]
    case = found.reaction_case
    assert case.reaction == "N2(g) + H2(g) <=> NH3(g)"
    assert case.line_of("reaction") == 5


def test_check_source_keeps_a_damaged_species_table_for_its_identity_only():
    found = check_source(source("damaged_species_table.md"))
    [table] = found.reaction_case.species
    assert (table.name, table.formula, table.phase) == ("intermediate B", "C8H9NO2", Phase.LIQUID)
    assert table.source == UNCHECKED_SOURCE
    assert found.unreadable_species == ()


@pytest.mark.parametrize("formula", ["7", '"C8H9NO2)"'])
def test_check_source_names_a_table_too_damaged_to_keep(formula):
    text = HEAD + f'[[species]]\nname = "B"\nformula = {formula}\nphase = "l"\n+++\n'
    found = check_source(CaseSource(Path("m.md"), text.encode()))
    assert found.reaction_case.species == () and found.unreadable_species == ("B",)


def test_check_source_stops_at_a_header_it_cannot_read():
    with pytest.raises(CaseError) as info:
        check_source(CaseSource(Path("m.md"), b"+++\ntitle = \n+++\n"))
    assert str(info.value).startswith("m.md:2: TOML syntax error")


def test_template_fills_the_species_table_for_the_first_unknown_species():
    text = case_template("ring-closure", "C9H11NO2(l) = C2H4(g) + C7H7NO2(l)",
                         ("C9H11NO2(l)", "C7H7NO2(l)"))
    assert '# name = "C9H11NO2"\n# formula: ' in text
    assert '# formula = "C9H11NO2"\n' in text and '# phase = "l"\n' in text
    # the reaction as written, its arrow too
    assert 'reaction = "C9H11NO2(l) = C2H4(g) + C7H7NO2(l)"\n' in text
