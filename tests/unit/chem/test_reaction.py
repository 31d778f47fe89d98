"""Reaction strings: parsing, normal form, element and charge balance."""
from __future__ import annotations

from fractions import Fraction

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from dossier.errors import ReactionError
from dossier.chem.reaction import (
    Reaction,
    Term,
    balance_residuals,
    check_balance,
    parse_reaction,
    suggest_balance,
)


def error_text(text: str) -> str:
    with pytest.raises(ReactionError) as info:
        parse_reaction(text)
    return str(info.value)


def balance_error(text: str, compositions=None) -> str:
    with pytest.raises(ReactionError) as info:
        check_balance(parse_reaction(text), compositions)
    return str(info.value)


# --------------------------------------------------------------------------- parsing


def test_case_format_example_parses_into_terms():
    # the reaction string of the example case in case-format.md
    r = parse_reaction("C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)")
    assert [(t.coefficient, t.label, t.phase) for t in r.reactants] == [
        (Fraction(1), "C6H5NO2", "l"),
        (Fraction(3), "H2", "g"),
    ]
    assert [(t.coefficient, t.label, t.phase) for t in r.products] == [
        (Fraction(1), "C6H5NH2", "l"),
        (Fraction(2), "H2O", "l"),
    ]
    assert r.reversible is False
    assert r.text == "C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)"
    assert [t.key for t in r.terms] == ["C6H5NO2(l)", "H2(g)", "C6H5NH2(l)", "H2O(l)"]
    # nitrobenzene + 3 H2 -> aniline + 2 H2O balances: common practice, no source
    assert balance_residuals(r) == {}
    check_balance(r)


def test_case_format_species_examples():
    # species examples listed under "Reaction strings" in case-format.md
    r = parse_reaction("CaCO3(s) + cyclohexane(g) -> H2O(l) + NH4+(aq)")
    assert [t.key for t in r.terms] == ["CaCO3(s)", "cyclohexane(g)", "H2O(l)", "NH4+(aq)"]
    assert r.terms[0].formula is not None and r.terms[0].formula.composition == {
        "C": 1, "Ca": 1, "O": 3,  # CaCO3: common practice, no source
    }
    assert r.terms[1].formula is None  # a library name, not a formula
    assert r.terms[3].formula.charge == 1  # ammonium is +1: common practice, no source


def test_cr_is_read_as_solid():
    r = parse_reaction("CaCO3(cr) -> CaO(cr) + CO2(g)")
    assert [t.phase for t in r.terms] == ["s", "s", "g"]
    assert r.text == "CaCO3(s) -> CaO(s) + CO2(g)"


@pytest.mark.parametrize("coefficient", ["1/2", "0.5", ".5", "2/4"])
def test_fraction_and_decimal_coefficients_are_exact(coefficient):
    r = parse_reaction(f"H2(g) + {coefficient} O2(g) -> H2O(l)")
    assert r.reactants[1].coefficient == Fraction(1, 2)
    assert r.text == "H2(g) + 1/2 O2(g) -> H2O(l)"
    # H2 + 1/2 O2 -> H2O balances: common practice, no source
    assert balance_residuals(r) == {}


def test_decimal_that_is_not_a_binary_fraction_stays_exact():
    r = parse_reaction("0.1 A(g) -> 0.3 B(g)")
    assert r.reactants[0].coefficient == Fraction(1, 10)
    assert r.products[0].coefficient == Fraction(3, 10)
    assert r.text == "1/10 A(g) -> 3/10 B(g)"


@pytest.mark.parametrize(
    "arrow, reversible",
    [("->", False), ("=", False), ("→", False), ("<=>", True), ("⇌", True)],
)
def test_arrows(arrow, reversible):
    r = parse_reaction(f"N2(g) + 3 H2(g) {arrow} 2 NH3(g)")
    assert r.reversible is reversible
    assert r.text == f"N2(g) + 3 H2(g) {'<=>' if reversible else '->'} 2 NH3(g)"


def test_arrow_without_spaces():
    r = parse_reaction("H2(g)+Cl2(g)->2 HCl(g)")
    assert r.text == "H2(g) + Cl2(g) -> 2 HCl(g)"


def test_ionic_neutralisation_balances_in_charge_and_elements():
    r = parse_reaction("H+(aq) + OH-(aq) -> H2O(l)")
    assert [t.label for t in r.terms] == ["H+", "OH-", "H2O"]
    assert [t.formula.charge for t in r.terms] == [1, -1, 0]  # common practice, no source
    assert balance_residuals(r) == {}


def test_ammonium_equilibrium_with_charge_plus_inside_terms():
    r = parse_reaction("NH4+(aq) + OH-(aq) <=> NH3(aq) + H2O(l)")
    assert [t.key for t in r.terms] == ["NH4+(aq)", "OH-(aq)", "NH3(aq)", "H2O(l)"]
    assert r.reversible
    assert balance_residuals(r) == {}  # common practice, no source


def test_terms_glued_by_plus_after_a_phase():
    r = parse_reaction("NH4+(aq)+OH-(aq) <=> NH3(aq)+H2O(l)")
    assert r.text == "NH4+(aq) + OH-(aq) <=> NH3(aq) + H2O(l)"


@pytest.mark.parametrize("sulfate", ["SO4^2-", "SO4-2", "SO4--"])
def test_charge_notations(sulfate):
    # the three charge spellings of case-format.md / formula.py
    r = parse_reaction(f"Ba^2+(aq) + {sulfate}(aq) -> BaSO4(s)")
    assert r.reactants[1].label == sulfate
    assert r.reactants[1].formula.charge == -2  # sulfate is 2-: common practice, no source
    assert r.reactants[0].formula.charge == 2
    assert balance_residuals(r) == {}


def test_names_with_spaces_digits_commas_hyphens():
    r = parse_reaction(
        "intermediate  B(l) + 1,2-dichloroethane(l) -> acetic acid(l) + 2H-pyran(l)"
    )
    assert [t.label for t in r.terms] == [
        "intermediate B", "1,2-dichloroethane", "acetic acid", "2H-pyran",
    ]
    assert all(t.formula is None for t in r.terms)
    assert r.text == "intermediate B(l) + 1,2-dichloroethane(l) -> acetic acid(l) + 2H-pyran(l)"


def test_name_with_a_roman_numeral_bracket():
    r = parse_reaction("copper(II) sulfate(s) -> CuO(s) + SO3(g)")
    assert r.reactants[0].label == "copper(II) sulfate"
    assert r.reactants[0].phase == "s"


def test_formula_versus_name_decision():
    r = parse_reaction("CO(g) + Co(s) + water(l) + Water(l) -> X(g)")
    co, cobalt, water, water_cap = r.reactants
    assert co.formula.composition == {"C": 1, "O": 1}
    assert cobalt.formula.composition == {"Co": 1}
    assert water.formula is None
    assert water_cap.formula is None  # 'Wa' is no element symbol


def test_electron_term():
    r = parse_reaction("Fe+3(aq) + e-(aq) -> Fe+2(aq)")
    assert r.reactants[1].formula.charge == -1
    assert r.reactants[1].formula.elements == ()
    assert balance_residuals(r) == {}


# --------------------------------------------------------------------------- parse errors


def test_missing_phase_names_the_term_and_the_phases():
    assert error_text("N2(g) + 3 H2 -> 2 NH3(g)") == (
        "term '3 H2' has no phase: write it as H2(g), H2(l), H2(s) or H2(aq)"
    )


def test_missing_phase_on_a_name():
    assert error_text("acetic acid -> X(g)") == (
        "term 'acetic acid' has no phase: write it as acetic acid(g), acetic acid(l), "
        "acetic acid(s) or acetic acid(aq)"
    )


def test_unknown_phase():
    assert error_text("H2O(liq) -> H2O(g)") == (
        "term 'H2O(liq)' has an unknown phase '(liq)': use (g), (l), (s) or (cr), (aq)"
    )


def test_no_arrow():
    assert error_text("H2(g) + O2(g)") == (
        "reaction 'H2(g) + O2(g)' has no arrow: write '->' (forward) or '<=>' "
        "(equilibrium) between reactants and products"
    )


def test_two_arrows():
    assert error_text("A(g) -> B(g) <=> C(g)") == (
        "reaction 'A(g) -> B(g) <=> C(g)' has more than one arrow ('->', '<=>'): "
        "write one '->' (forward) or '<=>' (equilibrium)"
    )


@pytest.mark.parametrize("arrow", ["=>", "-->", "<->", "=="])
def test_unknown_arrow(arrow):
    assert error_text(f"A(g) {arrow} B(g)") == (
        f"reaction 'A(g) {arrow} B(g)' has an arrow '{arrow}' that is not understood: "
        "write '->' (forward) or '<=>' (equilibrium)"
    )


def test_empty_sides():
    assert error_text("-> CO2(g)") == "reaction '-> CO2(g)' has no reactants"
    assert error_text("CO2(g) -> ") == "reaction 'CO2(g) ->' has no products"
    assert error_text("   ") == "the reaction is empty"


def test_empty_term():
    assert error_text("A(g) + + B(g) -> C(g)") == (
        "reaction 'A(g) + + B(g) -> C(g)' has an empty term among its reactants "
        "(a '+' with nothing beside it)"
    )


def test_coefficient_glued_to_a_formula():
    assert error_text("2H2O(l) -> 2 H2(g) + O2(g)") == (
        "term '2H2O(l)': put a space between the coefficient and the formula, "
        "as in '2 H2O(l)'"
    )


def test_zero_and_bad_coefficients():
    assert error_text("0 A(g) -> B(g)") == "term '0 A(g)' has a zero coefficient: leave the term out"
    assert error_text("1/0 A(g) -> B(g)") == (
        "term '1/0 A(g)' has a coefficient with a zero denominator"
    )
    assert error_text("-1 A(g) -> B(g)") == (
        "term '-1 A(g)' does not start with a coefficient or a species name"
    )
    assert error_text("3(g) -> B(g)") == "term '3(g)' names no species"


def test_species_twice_on_one_side_is_rejected():
    assert error_text("O2(g) + O2(g) -> 2 O(g)") == (
        "'O2(g)' appears twice among the reactants of reaction 'O2(g) + O2(g) -> 2 O(g)': "
        "combine the terms into one"
    )


def test_species_on_both_sides_is_rejected():
    assert error_text("H2O(l) + CO(g) -> H2O(l) + CO(g)") == (
        "'H2O(l)' appears on both sides of reaction 'H2O(l) + CO(g) -> H2O(l) + CO(g)': "
        "write the net reaction"
    )


def test_same_species_in_two_phases_is_allowed():
    r = parse_reaction("H2O(l) -> H2O(g)")
    assert [t.key for t in r.terms] == ["H2O(l)", "H2O(g)"]


# --------------------------------------------------------------------------- operations


def test_signed_scaled_reversed():
    r = parse_reaction("N2(g) + 3 H2(g) <=> 2 NH3(g)")
    assert [(nu, t.key) for nu, t in r.signed()] == [
        (Fraction(-1), "N2(g)"), (Fraction(-3), "H2(g)"), (Fraction(2), "NH3(g)"),
    ]
    assert r.scaled(Fraction(1, 2)).text == "1/2 N2(g) + 3/2 H2(g) <=> NH3(g)"
    assert r.reversed().text == "2 NH3(g) <=> N2(g) + 3 H2(g)"
    with pytest.raises(ValueError):
        r.scaled(0)
    with pytest.raises(TypeError):
        r.scaled(0.5)


def test_term_of_derives_the_formula():
    t = Term.of(2, "SO4^2-", "aq")
    assert str(t) == "2 SO4^2-(aq)"
    assert t.formula.charge == -2
    assert Term.of(1, "intermediate B", "cr").key == "intermediate B(s)"


# --------------------------------------------------------------------------- balance


def test_propane_combustion_residuals_and_suggestion():
    r = parse_reaction("C3H8(g) + O2(g) -> CO2(g) + H2O(g)")
    # products minus reactants with unit coefficients, counted by hand:
    # C 1-3, H 2-8, O (2+1)-2
    assert balance_residuals(r) == {"C": -2, "H": -6, "O": 1}
    # C3H8 + 5 O2 -> 3 CO2 + 4 H2O: common practice, no source
    assert suggest_balance(r).text == "C3H8(g) + 5 O2(g) -> 3 CO2(g) + 4 H2O(g)"
    assert balance_error("C3H8(g) + O2(g) -> CO2(g) + H2O(g)") == (
        "reaction 'C3H8(g) + O2(g) -> CO2(g) + H2O(g)' does not balance: "
        "C -2, H -6, O +1 (products minus reactants); "
        "balanced with the same species: 'C3H8(g) + 5 O2(g) -> 3 CO2(g) + 4 H2O(g)'"
    )


def test_water_formation_missing_half_oxygen():
    # H2 + O2 -> H2O leaves O -1; balanced 2 H2 + O2 -> 2 H2O: common practice, no source
    assert balance_error("H2(g) + O2(g) -> H2O(l)") == (
        "reaction 'H2(g) + O2(g) -> H2O(l)' does not balance: O -1 "
        "(products minus reactants); balanced with the same species: "
        "'2 H2(g) + O2(g) -> 2 H2O(l)'"
    )


def test_charge_imbalance_is_reported_and_balanced():
    # 2 Fe3+ + Cu -> 2 Fe2+ + Cu2+: common practice, no source
    assert balance_error("Fe+3(aq) + Cu(s) -> Fe+2(aq) + Cu+2(aq)") == (
        "reaction 'Fe+3(aq) + Cu(s) -> Fe+2(aq) + Cu+2(aq)' does not balance: charge +1 "
        "(products minus reactants); balanced with the same species: "
        "'2 Fe+3(aq) + Cu(s) -> 2 Fe+2(aq) + Cu+2(aq)'"
    )


def test_fractional_residual_is_shown_as_a_fraction():
    r = parse_reaction("H2(g) + 1/4 O2(g) -> H2O(l)")
    assert balance_residuals(r) == {"O": Fraction(1, 2)}  # 1 - 2*(1/4), by hand


def test_reversible_flag_survives_the_suggestion():
    # N2 + 3 H2 <=> 2 NH3: common practice, no source
    r = parse_reaction("N2(g) + H2(g) <=> NH3(g)")
    assert suggest_balance(r).text == "N2(g) + 3 H2(g) <=> 2 NH3(g)"


def test_no_balanced_form_with_these_sides():
    # carbon monoxide cannot give carbon dioxide with nothing else present
    assert balance_error("CO(g) -> CO2(g)") == (
        "reaction 'CO(g) -> CO2(g)' does not balance: O +1 (products minus reactants); "
        "no balanced form exists with these species on these sides"
    )
    assert suggest_balance(parse_reaction("CO(g) -> CO2(g)")) is None


def test_balance_that_needs_a_species_on_the_other_side_is_not_suggested():
    # H2O2 -> H2O + O2 balances only as 2 H2O2 -> 2 H2O + O2 (common practice,
    # no source); with O2 written as a reactant no positive form exists.
    r = parse_reaction("H2O2(l) + O2(g) -> H2O(l)")
    assert suggest_balance(r) is None
    assert suggest_balance(parse_reaction("H2O2(l) -> H2O(l) + O2(g)")).text == (
        "2 H2O2(l) -> 2 H2O(l) + O2(g)"
    )


def test_several_independent_balances():
    # H2 + O2 + H2O2 -> H2O: both H2 + H2O2 -> 2 H2O and 2 H2 + O2 -> 2 H2O balance
    # (common practice, no source), so no unique suggestion.
    assert balance_error("H2(g) + O2(g) + H2O2(l) -> H2O(l)") == (
        "reaction 'H2(g) + O2(g) + H2O2(l) -> H2O(l)' does not balance: H -2, O -3 "
        "(products minus reactants); no unique balanced form exists with these species "
        "on these sides (2 independent balances)"
    )


def test_compositions_for_named_species():
    # intermediate B is C8H9NO2 in the example case of case-format.md
    compositions = {"intermediate B(l)": ({"C": 8, "H": 9, "N": 1.0, "O": Fraction(2)}, 0)}
    r = parse_reaction("intermediate B(l) + O2(g) -> CO2(g) + H2O(l) + N2(g)")
    # worked by hand: 4 C8H9NO2 + 37 O2 -> 32 CO2 + 18 H2O + 2 N2
    # (C 32, H 36, N 4, O 8+74 = 64+18 = 82 on each side)
    assert suggest_balance(r, compositions).text == (
        "4 intermediate B(l) + 37 O2(g) -> 32 CO2(g) + 18 H2O(l) + 2 N2(g)"
    )
    # unit coefficients, products minus reactants, by hand: C 1-8, H 2-9, N 2-1, O 3-4
    assert balance_residuals(r, compositions) == {"C": -7, "H": -7, "N": 1, "O": -1}


def test_compositions_override_the_label_formula():
    # a caller's record wins over the label (e.g. a library record keyed by formula)
    r = parse_reaction("X(g) -> CO(g)")
    assert balance_residuals(r, {"X(g)": ({"C": 1, "O": 1}, 0)}) == {}
    assert balance_residuals(r, {"X(g)": ({"C": 1, "O": 1}, -1)}) == {"charge": 1}


def test_unknown_composition_is_an_error():
    assert balance_error("intermediate B(l) -> CO2(g)") == (
        "cannot check the balance of reaction 'intermediate B(l) -> CO2(g)': "
        "the composition of 'intermediate B(l)' is not known"
    )


# --------------------------------------------------------------------------- properties

_FORMULA_SPECIES = [
    ("H2", "g"), ("O2", "g"), ("H2O", "l"), ("H2O", "g"), ("CO", "g"), ("CO2", "g"),
    ("CH4", "g"), ("C3H8", "g"), ("N2", "g"), ("NH3", "g"), ("NH4+", "aq"),
    ("OH-", "aq"), ("H+", "aq"), ("SO4^2-", "aq"), ("Fe+3", "aq"), ("Ca(OH)2", "s"),
    ("C6H5NO2", "l"),
]
_NAMED_SPECIES = [
    ("intermediate B", "l"), ("1,2-dichloroethane", "l"), ("acetic acid", "aq"),
    ("cyclohexane", "g"), ("2H-pyran", "l"),
]
_coefficients = st.builds(
    Fraction, st.integers(1, 24), st.sampled_from([1, 2, 3, 4, 5, 8, 10, 12])
)


@st.composite
def reactions(draw, pool=_FORMULA_SPECIES + _NAMED_SPECIES):
    species = draw(st.lists(st.sampled_from(pool), min_size=2, max_size=6, unique=True))
    split = draw(st.integers(1, len(species) - 1))
    terms = [Term.of(draw(_coefficients), label, phase) for label, phase in species]
    return Reaction(tuple(terms[:split]), tuple(terms[split:]), draw(st.booleans()))


@settings(max_examples=100, deadline=None)
@given(reactions())
def test_normal_text_round_trips(r):
    assert parse_reaction(r.text) == r
    assert parse_reaction(r.text).text == r.text


def _written(c: Fraction, style: str) -> str:
    if style == "fraction" or c.denominator not in (1, 2, 4, 5, 8, 10):
        return f"{c.numerator}/{c.denominator}"
    return str(c.numerator / c.denominator)  # a decimal that is exact for these denominators


@settings(max_examples=100, deadline=None)
@given(
    reactions(),
    st.sampled_from(["fraction", "decimal"]),
    st.sampled_from([" + ", "+", "  +  "]),
    st.sampled_from(["->", "=", "→", " -> ", "<=>", "⇌"]),
)
def test_written_variants_parse_to_the_same_reaction(r, style, plus, arrow):
    def side(terms):
        return plus.join(f"{_written(t.coefficient, style)} {t.key}" for t in terms)

    text = f"{side(r.reactants)} {arrow} {side(r.products)}"
    parsed = parse_reaction(text)
    assert parsed.terms == r.terms
    assert parsed.reversible is (arrow in ("<=>", "⇌"))


@settings(max_examples=100, deadline=None)
@given(reactions(pool=_FORMULA_SPECIES), _coefficients)
def test_residuals_scale_with_the_coefficients(r, k):
    base = balance_residuals(r)
    assert balance_residuals(r.scaled(k)) == {name: k * v for name, v in base.items()}


_BALANCED = [
    "C3H8(g) + 5 O2(g) -> 3 CO2(g) + 4 H2O(g)",  # common practice, no source
    "NH4+(aq) + OH-(aq) <=> NH3(aq) + H2O(l)",  # common practice, no source
    "C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)",  # common practice, no source
    "2 Fe+3(aq) + Cu(s) -> 2 Fe+2(aq) + Cu+2(aq)",  # common practice, no source
]


@settings(max_examples=100, deadline=None)
@given(st.sampled_from(_BALANCED), _coefficients)
def test_balance_is_invariant_to_scaling(text, k):
    r = parse_reaction(text)
    check_balance(r.scaled(k))
    assert balance_residuals(r.scaled(k)) == {}


@settings(max_examples=100, deadline=None)
@given(reactions())
def test_reversed_twice_is_the_same(r):
    assert r.reversed().reversed() == r
    assert r.reversed() != r
    assert [(-nu, t) for nu, t in r.signed()] == sorted(
        r.reversed().signed(), key=lambda p: r.terms.index(p[1])
    )


@settings(max_examples=25, deadline=None)
@given(reactions(pool=_FORMULA_SPECIES))
def test_a_suggestion_always_balances_in_smallest_whole_numbers(r):
    s = suggest_balance(r)
    if s is None:
        return
    assert balance_residuals(s) == {}
    assert [t.key for t in s.reactants] == [t.key for t in r.reactants]
    assert [t.key for t in s.products] == [t.key for t in r.products]
    coefficients = [t.coefficient for t in s.terms]
    assert all(c.denominator == 1 and c > 0 for c in coefficients)
    from math import gcd
    assert gcd(*(c.numerator for c in coefficients)) == 1


@settings(max_examples=300, deadline=None)
@given(st.text(alphabet="CHNOab ()+-<=>→⇌/.0123^glsqcr", max_size=30))
def test_arbitrary_text_gives_a_reaction_or_a_reaction_error(text):
    try:
        r = parse_reaction(text)
    except ReactionError as e:
        assert str(e)
    else:
        assert parse_reaction(r.text) == r
