"""Chemical formulas: element counts, charge, molar mass, Hill order."""
from __future__ import annotations

from fractions import Fraction

import pytest

from dossier.chem.elements import ATOMIC_WEIGHTS
from dossier.errors import FormulaError
from dossier.chem.formula import hill_formula, parse_formula

chemicals_elements = pytest.importorskip("chemicals.elements")  # test-only reference


def test_atomic_weights_match_the_chemicals_package():
    # source: chemicals.elements.periodic_table (the table elements.py was copied from)
    table = chemicals_elements.periodic_table
    expected = {table[z].symbol: table[z].MW for z in range(1, 104)}
    ours = {el: w for el, w in ATOMIC_WEIGHTS.items() if el != "E"}
    assert ours == expected
    assert ATOMIC_WEIGHTS["E"] == 0.0  # the electron carries charge only (elements.py)


_NESTED = [
    "C6H5NO2", "C6H5NH2", "Ca(OH)2", "K4[Fe(CN)6]", "Al2(SO4)3", "(NH4)2SO4",
    "Mg3(PO4)2", "CH3COOH", "CH3(CH2)4CH3", "Fe2O3", "CHCl3", "C8H9NO2",
]


@pytest.mark.parametrize("text", _NESTED)
def test_compositions_match_an_independent_parser(text):
    # source: chemicals.elements.nested_formula_parser (chemicals 1.5)
    expected = chemicals_elements.nested_formula_parser(text)
    assert parse_formula(text).composition == {el: Fraction(n) for el, n in expected.items()}


@pytest.mark.parametrize("text", ["Na+", "Cl-", "NH4+", "SO4-2", "Fe+3", "CH3COO-"])
def test_charges_match_an_independent_parser(text):
    # source: chemicals.elements.charge_from_formula (chemicals 1.5)
    assert parse_formula(text).charge == chemicals_elements.charge_from_formula(text)


@pytest.mark.parametrize("text", ["SO4^2-", "SO4-2", "SO4--"])
def test_charge_spellings_agree(text):
    f = parse_formula(text)
    assert f.charge == -2  # sulfate is 2-: common practice, no source
    assert f.composition == {"S": 1, "O": 4}


def test_caret_charge_with_sign_last():
    assert parse_formula("Fe^3+").charge == 3  # notation from case-format.md


def test_electron():
    e = parse_formula("e-")
    assert e.elements == ()
    assert e.charge == -1  # common practice, no source
    assert e.molar_mass == 0.0


@pytest.mark.parametrize("text", ["CuSO4.5H2O", "CuSO4·5H2O", "CuSO4*5H2O"])
def test_hydrates(text):
    f = parse_formula(text)
    # copper(II) sulfate pentahydrate CuSO4·5H2O: common practice, no source
    assert f.composition == {"Cu": 1, "S": 1, "O": 9, "H": 10}
    # CRC Handbook of Chemistry and Physics, physical constants of inorganic
    # compounds: 249.69 g/mol (from memory)
    assert f.molar_mass == pytest.approx(249.69, abs=0.01)


@pytest.mark.parametrize(
    "text, molar_mass",
    [
        ("H2O", 18.0153),     # NIST Chemistry WebBook, water, molecular weight (from memory)
        ("CO2", 44.0095),     # NIST Chemistry WebBook, carbon dioxide (from memory)
        ("CH4", 16.0425),     # NIST Chemistry WebBook, methane (from memory)
        ("C6H6", 78.1118),    # NIST Chemistry WebBook, benzene (from memory)
        ("C6H5NO2", 123.1094),  # NIST Chemistry WebBook, nitrobenzene (from memory)
    ],
)
def test_molar_mass(text, molar_mass):
    assert parse_formula(text).molar_mass == pytest.approx(molar_mass, abs=2e-4)


@pytest.mark.parametrize(
    "text, hill",
    [
        ("C2H5OH", "C2H6O"),      # Hill order, carbon first then hydrogen: common practice, no source
        ("CHCl3", "CHCl3"),       # common practice, no source
        ("H2SO4", "H2O4S"),       # no carbon: all alphabetical: common practice, no source
        ("NH4+", "H4N+"),         # common practice, no source
        ("SO4^2-", "O4S-2"),      # charge suffix as documented in formula.py
        ("CH3COO-", "C2H3O2-"),   # common practice, no source
    ],
)
def test_hill_formula(text, hill):
    assert parse_formula(text).hill == hill


def test_hill_formula_from_a_composition():
    assert hill_formula({"O": 1, "H": 2}) == "H2O"  # common practice, no source
    assert hill_formula({"Fe": Fraction(1)}, 3) == "Fe+3"


@pytest.mark.parametrize(
    "text, message",
    [
        ("", "empty formula"),
        ("Xy2", "'Xy' in formula 'Xy2' is not an element symbol"),
        ("H2O)", "unbalanced bracket in formula 'H2O)'"),
        ("(H2O", "unbalanced bracket in formula '(H2O'"),
        ("(2H)", "a count in formula '(2H)' has nothing to multiply"),
        ("water", "cannot read formula 'water' at 'water'"),
        ("H0", "formula 'H0' has no elements"),
    ],
)
def test_errors(text, message):
    with pytest.raises(FormulaError) as info:
        parse_formula(text)
    assert str(info.value) == message
