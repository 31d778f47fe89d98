"""What `dossier species` and `dossier new` tell the user (exact texts)."""
from __future__ import annotations

import pytest
from click.testing import CliRunner

from dossier.cli.main import main
from paths import ROOT

SUPPLY_LIQUID = ('give its data in a [[species]] table: {name}, formula, phase = "l", hf, '
                 's, cp and source; or have them estimated from its structure: the same '
                 'table with smiles and estimate = "benson" (or "joback") in place of hf, '
                 's, cp and source')


def run(*args: str):
    return CliRunner().invoke(main, list(args))


def ids_listed(stdout: str) -> list[str]:
    """The record ids `dossier species` prints: the lines that are not indented."""
    return [line for line in stdout.splitlines()
            if line and not line.startswith(" ") and not line.startswith("...")]


# -- dossier species -------------------------------------------------------------

def test_species_finds_a_name_with_a_typing_slip():
    r = run("species", "nitrobenzne")
    assert r.exit_code == 0
    assert ids_listed(r.stdout) == ["nitrobenzene(g)", "nitrobenzene(l)"]


def test_species_by_formula_lists_the_formula_first_and_no_formula_that_holds_it():
    r = run("species", "N2O")
    assert r.exit_code == 0
    listed = ids_listed(r.stdout)
    assert listed[0] == "N2O(g)" and "  name                   nitrous oxide" in r.stdout
    assert "L-Cystine(s)" not in listed


def test_species_with_no_match_says_how_to_supply_a_species():
    r = run("species", "qqqzz")
    assert r.exit_code == 1
    assert r.stdout.startswith("No species in library ")
    assert r.stdout.endswith(
        " matches 'qqqzz', and no name is close to it. A species the library does not "
        "hold is given in the case as a [[species]] table (its data, or an estimate from "
        "its structure).\n")


# -- dossier new -----------------------------------------------------------------

def test_new_keeps_the_arrow_written_and_says_how_it_is_read(tmp_path):
    r = run("new", "chlorination", "--reaction", "H2(g) + Cl2(g) = 2 HCl(g)",
            "--cases", str(tmp_path))
    assert r.exit_code == 0, r.output
    assert r.stderr == ("warning: '=' is read as '->', a forward reaction; write '<=>' if "
                        "the reaction is an equilibrium\n")
    text = (tmp_path / "chlorination.md").read_text()
    assert 'reaction = "H2(g) + Cl2(g) = 2 HCl(g)"\n' in text


def test_new_refuses_a_reaction_that_does_not_balance_and_writes_nothing(tmp_path):
    r = run("new", "chlorination", "--reaction", "H2(g) + Cl2(g) -> HCl(g)",
            "--cases", str(tmp_path))
    assert r.exit_code == 2
    assert r.stderr == (
        "error: key 'reaction': reaction 'H2(g) + Cl2(g) -> HCl(g)' does not balance: "
        "H -1, Cl -1 (products minus reactants); balanced with the same species: "
        "'H2(g) + Cl2(g) -> 2 HCl(g)'; no case file was written\n")
    assert list(tmp_path.iterdir()) == []


def test_new_writes_a_case_with_an_unknown_species_and_says_how_to_supply_it(tmp_path):
    r = run("new", "ring-closure", "--reaction", "amide K(l) -> C2H4(g) + C6H5NO2(l)",
            "--cases", str(tmp_path))
    assert r.exit_code == 0, r.output
    path = tmp_path / "ring-closure.md"
    assert r.stderr.splitlines() == [
        "warning: species 'amide K(l)': no library species 'amide K(l)', and none with a "
        "similar name in this phase; " + SUPPLY_LIQUID.format(name='name = "amide K"'),
        "warning: the balance is checked once every species has its formula: run "
        "`dossier check` on the case"]
    assert r.stdout == f"wrote {path}; fill it in, then run: dossier check {path}\n"
    text = path.read_text()
    # the commented-out [[species]] table is written for it
    assert '# name = "amide K"\n' in text and '# phase = "l"\n' in text


def test_new_refuses_a_reaction_it_cannot_read(tmp_path):
    r = run("new", "x", "--reaction", "H2(g) + Cl2(g) 2 HCl(g)", "--cases", str(tmp_path))
    assert r.exit_code == 2
    assert r.stderr == ("error: key 'reaction': reaction 'H2(g) + Cl2(g) 2 HCl(g)' has no "
                        "arrow: write '->' (forward) or '<=>' (equilibrium) between "
                        "reactants and products\n")
    assert list(tmp_path.iterdir()) == []


# -- dossier check ---------------------------------------------------------------

def test_check_reports_every_phase_at_once(monkeypatch):
    monkeypatch.chdir(ROOT)  # the messages show the path as given
    f = "tests/fixtures/messages/every_phase.md"
    r = run("check", f)
    assert r.exit_code == 2
    assert r.stderr.splitlines() == [
        f"error: {f}:5: key 'reaction': reaction 'N2(g) + H2(g) <=> NH3(g)' does not "
        "balance: H +1, N -1 (products minus reactants); balanced with the same species: "
        "'N2(g) + 3 H2(g) <=> 2 NH3(g)'",
        f"error: {f}:6: key 'temperature': expected the low temperature first and below "
        "the high one, like [\"40 degC\", \"80 degC\"]; got '450 degC' to '350 degC'",
        f"error: {f}:8: key 'charge.mass': required key is missing in [charge]; add a "
        "line like: mass = \"950 kg\"",
        f"error: {f}:14: key 'charge.mtt': unknown key; 'mtt' belongs in [vessel], not in "
        "[charge]: move it there"]
    assert r.stdout == "0 of 1 case files are good.\n"
