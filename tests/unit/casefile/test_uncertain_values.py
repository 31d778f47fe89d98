"""Values written with an uncertainty ("1.90 ± 0.10 kJ/(kg*K)") and what-if variants
([[variant]] tables), as the loader reads them (issue 13, parts 1 and 4)."""
from __future__ import annotations

import pytest

from dossier.casefile.load import parse_case_text
from dossier.errors import CaseError

CHARGE = ('[charge]\nbasis = "C6H5NO2(l)"\namount = "120 kg"\nmass = "950 kg"\n'
          'cp = {cp}\nprocess_temperature = {tp}\naccumulation = {acc}\nfeed_time = "4 h"\n')


def text(cp='"1.9 kJ/(kg*K)"', tp='"60 degC"', acc='"35 %"', extra="", top=""):
    return ('+++\ntitle = "test"\nrevision = 1\nstatus = "draft"\n'
            'reaction = "C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)"\n'
            f'temperature = ["40 degC", "80 degC"]\n{top}'
            + CHARGE.format(cp=cp, tp=tp, acc=acc)
            + '[vessel]\nmtt = "100 degC"\ncooling_ua = "2.5 kW/K"\n' + extra + "+++\n")


def parse(t):
    return parse_case_text(t, "c.md")


def problems(t) -> list[str]:
    with pytest.raises(CaseError) as exc:
        parse(t)
    return [f"line {p.line}: key '{p.key}': {p.message}" for p in exc.value.problems]


@pytest.mark.parametrize("written, central, half", [
    ('"1.90 ± 0.10 kJ/(kg*K)"', 1900.0, 100.0),
    ('"1.90 +/- 0.10 kJ/(kg*K)"', 1900.0, 100.0),
    ('"(1.90 ± 0.10) kJ/(kg*K)"', 1900.0, 100.0),
    ('"1900±50 J/(kg*K)"', 1900.0, 50.0),
])
def test_a_heat_capacity_with_its_half_width(written, central, half):
    case = parse(text(cp=written))
    assert case.charge.cp == pytest.approx(central)
    assert case.half_width("charge.cp") == pytest.approx(half)


def test_a_temperature_half_width_is_a_difference_not_an_absolute_temperature():
    # 2 degC of half-width is 2 K (a temperature difference), not 275.15 K; 4 degF is 20/9 K
    # (hand calculation from the definitions of the scales)
    case = parse(text(tp='"60 ± 2 degC"'))
    assert case.charge.process_temperature == pytest.approx(333.15)
    assert case.half_width("charge.process_temperature") == pytest.approx(2.0)
    case = parse(text(tp='"140 ± 4 degF"'))
    assert case.half_width("charge.process_temperature") == pytest.approx(4 * 5 / 9)


def test_a_percentage_half_width_is_a_fraction():
    case = parse(text(acc='"35 ± 5 %"'))
    assert case.charge.accumulation == pytest.approx(0.35)
    assert case.half_width("charge.accumulation") == pytest.approx(0.05)


def test_without_a_half_width_a_value_is_exact():
    case = parse(text())
    assert case.uncertainty == () and case.half_width("charge.cp") == 0.0


def test_the_measured_uncertainty_key_is_the_same_as_a_half_width():
    case = parse(text(extra='[measured]\nreaction_enthalpy = "-545 kJ/mol"\nmethod = "RC1"\n'
                            'uncertainty = "15 kJ/mol"\n'))
    assert case.half_width("measured.reaction_enthalpy") == pytest.approx(15000.0)
    case = parse(text(extra='[measured]\nreaction_enthalpy = "-545 ± 15 kJ/mol"\n'
                            'method = "RC1"\n'))
    assert case.measured.reaction_enthalpy == pytest.approx(-545000.0)
    assert case.half_width("measured.reaction_enthalpy") == pytest.approx(15000.0)


def test_the_measured_uncertainty_given_twice_is_refused():
    assert problems(text(extra='[measured]\nreaction_enthalpy = "-545 ± 15 kJ/mol"\n'
                               'method = "RC1"\nuncertainty = "15 kJ/mol"\n')) == [
        "line 21: key 'measured.uncertainty': the reaction enthalpy already carries an "
        "uncertainty (±); give it once: remove this line or the ± part"]


def test_an_uncertainty_outside_the_batch_tables_is_refused():
    assert problems(text(top='pressure = "5 ± 1 bar"\n')) == [
        "line 7: key 'pressure': an uncertainty (±) is read only in the quantities of "
        "[charge], [vessel], [decomposition] and [measured]; write this value without one; "
        "got '5 ± 1 bar'"]


def test_a_species_uncertainty_goes_in_its_own_table():
    species = ('[[species]]\nname = "x"\nformula = "C8H9NO2"\nphase = "l"\n'
               'hf = "-310 ± 15 kJ/mol"\ns = "250 J/(mol*K)"\ncp = "290 J/(mol*K)"\n'
               'source = "estimate"\n')
    msgs = problems(text(extra=species))
    assert msgs == [
        "line 22: key 'species[1].hf': an uncertainty (±) is read only in the quantities of "
        "[charge], [vessel], [decomposition] and [measured]; give a species' uncertainty in "
        "its own table, like uncertainty = { hf = \"15 kJ/mol\" }; got '-310 ± 15 kJ/mol'"]


@pytest.mark.parametrize("written, message", [
    ('"1.9 ± -0.1 kJ/(kg*K)"', "the half-width after ± must be zero or more; got "
                               "'1.9 ± -0.1 kJ/(kg*K)'"),
    ('"1.9 ± kJ/(kg*K)"', "expected a value, ± and the half-width of its 95 % interval, in "
                          "one unit, like \"1.9 ± 0.095 kJ/(kg*K)\"; got '1.9 ± kJ/(kg*K)'"),
])
def test_a_malformed_half_width_is_refused(written, message):
    assert problems(text(cp=written)) == [f"line 11: key 'charge.cp': {message}"]


# --------------------------------------------------------------------------
# variants

VARIANTS = ('[[variant]]\nname = "faster dosing"\nnote = "feed in 2 h"\n'
            'charge.feed_time = "2 h"\ncharge.accumulation = "50 ± 5 %"\n\n'
            '[[variant]]\nname = "weaker cooling"\nvessel.cooling_ua = "1.5 kW/K"\n'
            'charge.cp = "1.8 kJ/(kg*K)"\n')


def test_a_variant_is_the_case_with_its_changes_made():
    case = parse(text(cp='"1.9 ± 0.1 kJ/(kg*K)"', extra=VARIANTS))
    fast, weak = case.variants
    assert fast.name == "faster dosing" and fast.note == "feed in 2 h"
    assert fast.changes == (("charge.feed_time", "2 h"), ("charge.accumulation", "50 ± 5 %"))
    assert fast.case.charge.feed_time == pytest.approx(7200.0)
    assert fast.case.charge.accumulation == pytest.approx(0.5)
    assert fast.case.charge.mass == case.charge.mass  # unchanged inputs are the case's
    assert fast.case.half_width("charge.accumulation") == pytest.approx(0.05)
    assert fast.case.half_width("charge.cp") == pytest.approx(100.0)  # inherited
    # a value written without ± replaces the case's value and its uncertainty
    assert weak.case.charge.cp == pytest.approx(1800.0)
    assert weak.case.half_width("charge.cp") == 0.0
    assert weak.case.vessel.cooling_ua == pytest.approx(1500.0)
    assert weak.case.vessel.mtt == case.vessel.mtt
    assert fast.case.variants == () and case.half_width("charge.accumulation") == 0.0


def test_a_variant_may_not_change_the_basis():
    msgs = problems(text(extra='[[variant]]\nname = "other basis"\ncharge.basis = "H2(g)"\n'))
    assert msgs == ["line 20: key 'variant[1].charge.basis': a variant cannot change the "
                    "basis: the conversions and the reaction's figures refer to it; make a "
                    "separate case for another basis"]


def test_a_variant_of_a_table_the_case_does_not_have_is_refused():
    t = text(extra='[[variant]]\nname = "measured"\nmeasured.reaction_enthalpy = '
                   '"-500 kJ/mol"\n')
    assert problems(t) == [
        "line 20: key 'variant[1].measured': the variant changes [measured], but the case "
        "has no [measured] table to change; add [measured] to the case first"]


def test_a_variant_that_changes_nothing_and_twin_names_are_refused():
    t = text(extra='[[variant]]\nname = "a"\ncharge.cp = "2 kJ/(kg*K)"\n'
                   '[[variant]]\nname = "a"\nnote = "nothing"\n')
    assert problems(t) == [
        "line 21: key 'variant[2]': a variant changes at least one input; add a line like: "
        "charge.feed_time = \"2 h\"",
        "line 22: key 'variant[2].name': the same name as variant[1]; each [[variant]] "
        "needs its own name"]
