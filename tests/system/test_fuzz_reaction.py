"""Hostile reaction strings and formulas: a Reaction, or one DossierError, in bounded time.

``parse_reaction`` and ``parse_formula`` get random text, reaction-shaped
random text, absurd coefficients and huge or deeply nested formulas; through
a case file, ``assess_case`` must locate every reaction problem at the
``reaction`` key and line.  Each input runs under ``signal.alarm``: a hang
fails the test.  Inputs tried are printed at the end of the module (-s).
"""
from __future__ import annotations

import json
from collections import Counter
from fractions import Fraction

import fuzzing
from fuzzing import bounded
import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from dossier.assess.evaluate import assess_case
from dossier.casefile.load import parse_case_text
from dossier.errors import DossierError
from dossier.chem.formula import parse_formula
from dossier.chem.reaction import MAX_TERMS, Reaction, check_balance, parse_reaction
from dossier.library.lookup import Library

TRIED: Counter = Counter()
FUZZ = settings(max_examples=300, deadline=None, derandomize=True,
                suppress_health_check=[HealthCheck.too_slow])


@pytest.fixture(scope="module", autouse=True)
def report_inputs_tried():
    yield
    fuzzing.report(TRIED, __name__)


@pytest.fixture(scope="module")
def library() -> Library:
    return Library.default()


def outcome(fn, target):
    TRIED[target] += 1
    with bounded():
        try:
            return fn()
        except DossierError as err:
            assert err.problems and all(p.message.strip() for p in err.problems)
            return err


_PIECES = ["H2", "O2", "H2O", "CO2", "CH4", "NH4+", "OH-", "SO4^2-", "Fe+3", "e-",
           "(g)", "(l)", "(s)", "(aq)", "(cr)", "(x)", "()", " + ", "+", " -> ", "<=>", "=",
           "→", "⇌", "->", "1/2 ", "0.5 ", "0 ", "1/0 ", "3 ", "2", "1e300 ", ".5 ",
           "(", ")", "[", "]", " ", "\t", "\n", "\u00a0", "\u200b", "Ｈ２", "Η2", "ℌ",
           "acetic acid", "1,2-dichloroethane", "9" * 30 + " ", "·5H2O", ".", "*"]


@FUZZ
@given(st.lists(st.sampled_from(_PIECES), max_size=30).map("".join))
def test_reaction_shaped_text(text):
    out = outcome(lambda: parse_reaction(text), "parse_reaction: reaction-shaped text")
    if isinstance(out, Reaction):
        assert out.reactants and out.products
        assert parse_reaction(out.text) == out  # the normal form reads back the same
        outcome(lambda: check_balance(out), "check_balance: parsed reactions")


@FUZZ
@given(st.text(max_size=300))
def test_any_text(text):
    outcome(lambda: parse_reaction(text), "parse_reaction: any text")


@FUZZ
@given(st.text(alphabet="HOCNSFeClNa()[]0123456789.·*^+-e ", max_size=60))
def test_formula_shaped_text(text):
    out = outcome(lambda: parse_formula(text), "parse_formula: formula-shaped text")
    if not isinstance(out, DossierError):
        assert all(abs(n) <= 10**6 for _el, n in out.elements)
        assert out.molar_mass >= 0


@FUZZ
@given(num=st.integers(0, 10**40), den=st.integers(0, 10**40),
       form=st.sampled_from(["{n}", "{n}/{d}", "0.{n}", "{n}.{d}", "{n}e5"]))
def test_absurd_coefficients(num, den, form):
    coeff = form.format(n=num, d=den)
    out = outcome(lambda: parse_reaction(f"{coeff} H2(g) + O2(g) -> H2O(l)"),
                  "parse_reaction: absurd coefficients")
    if isinstance(out, Reaction):
        assert out.reactants[0].coefficient > 0


_CASE = """+++
title = "Fuzzed reaction"
revision = 1
status = "draft"
reaction = {reaction}
temperature = ["20 degC", "78 degC"]
+++
"""


@settings(max_examples=120, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.sampled_from(_PIECES), max_size=16).map("".join))
def test_reaction_errors_are_located_in_the_case(library, text):
    def run():
        case = parse_case_text(_CASE.format(reaction=json.dumps(text)), "rx.md")
        a = assess_case(case, library)
        json.dumps(a.to_dict(), allow_nan=False)
        return a

    out = outcome(run, "assess_case: reaction-shaped text")
    if isinstance(out, DossierError):
        for p in out.problems:
            assert (p.file, p.line, p.key) == ("rx.md", 5, "reaction"), str(p)


# --------------------------------------------------------- limits, exact messages


def test_coefficient_with_5000_digits():
    TRIED["parse_reaction: limits"] += 1
    with pytest.raises(DossierError) as err:
        parse_reaction("9" * 5000 + " H2(g) -> H2(l)")
    assert str(err.value) == ("term '" + "9" * 60 + "' has a coefficient longer than 20 "
                              "characters: write a smaller whole number, decimal or fraction")


def test_zero_denominator():
    TRIED["parse_reaction: limits"] += 1
    with pytest.raises(DossierError) as err:
        parse_reaction("1/0 H2(g) + O2(g) -> H2O(l)")
    assert str(err.value) == "term '1/0 H2(g)' has a coefficient with a zero denominator"


def test_too_many_terms_is_refused_before_any_lookup():
    TRIED["parse_reaction: limits"] += 1
    text = " + ".join(f"C{i}H{2 * i + 2}(g)" for i in range(1, MAX_TERMS + 1)) + " -> CO2(g)"
    with bounded(5), pytest.raises(DossierError) as err:
        parse_reaction(text)
    assert str(err.value) == (f"reaction '{text[:60]}...' has 101 terms; at most 100 are "
                              "accepted: write the reaction a review board checks, with its "
                              "main species")


def test_a_million_terms_in_a_5_mb_string():
    TRIED["parse_reaction: limits"] += 1
    text = "H2(g)+" * 10**6 + "-> H2O(l)"
    with bounded(10), pytest.raises(DossierError) as err:
        parse_reaction(text)
    assert str(err.value) == ("the reaction is 6,000,009 characters long; at most 10,000 are "
                              "accepted (it starts 'H2(g)+H2(g)+H2(g)+H2(g)+H2(g)+H2(g)+H2(g')")


def test_many_plus_signs_in_one_term_are_parsed_in_bounded_time():
    TRIED["parse_reaction: limits"] += 1
    with bounded(10):
        r = parse_reaction("A" + "+" * 9000 + "(g) -> B(g)")
    assert r.reactants[0].formula is None or r.reactants[0].formula.charge == 9000


@pytest.mark.parametrize("formula,message", [
    ("H" + "9" * 5000, "formula 'H" + "9" * 59 + "' has a count with more than 12 digits; "
                       "no species has that many"),
    ("Fe+" + "9" * 5000, "formula 'Fe+" + "9" * 57 + "' has a count with more than 12 digits; "
                         "no species has that many"),
    ("(" * 3 + "H" + ")999" * 3, "formula '(((H)999)999)999' gives a count or charge above "
                                 "1,000,000; no species has that many"),
    ("H" * 1_000_001, "formula '" + "H" * 60 + "' gives a count or charge above 1,000,000; "
                      "no species has that many"),
])
def test_absurd_formula_counts(formula, message):
    TRIED["parse_formula: limits"] += 1
    with bounded(20), pytest.raises(DossierError) as err:
        parse_formula(formula)
    assert str(err.value) == message


def test_deep_brackets_in_a_formula():
    TRIED["parse_formula: limits"] += 1
    with bounded(10):
        f = parse_formula("(" * 5000 + "H" + ")" * 5000)
    assert f.elements == (("H", Fraction(1)),)


# ------------------------------------------------------------------- atheris


def test_atheris_data_provider_on_parse_reaction():
    """Optional: atheris' FuzzedDataProvider turns byte mutations into reaction text."""
    atheris = pytest.importorskip("atheris")
    import random

    rng = random.Random(99)
    seed = "C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)".encode()
    for _ in range(2000):
        data = bytearray(seed)
        for _m in range(rng.randint(1, 6)):
            pos = rng.randrange(len(data))
            data[pos:pos + rng.randint(0, 4)] = bytes(rng.randrange(256)
                                                     for _ in range(rng.randint(0, 4)))
        fdp = atheris.FuzzedDataProvider(bytes(data))
        text = fdp.ConsumeUnicodeNoSurrogates(len(data))
        outcome(lambda: parse_reaction(text), "parse_reaction: atheris data provider")
