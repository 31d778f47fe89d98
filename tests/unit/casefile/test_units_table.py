"""Units read without pint give exactly what pint gives, and pint stays unloaded.

pint is the reference here: every spelling in our table, alone and in the
compound forms case files use, must convert to the same SI value as pint's
conversion of the same text (the value ``parse_quantity`` returned before the
table existed, when every unit went through pint).  The numbers compared are
the values ``parse_quantity`` returns (rounded to 15 significant digits).
"""
from __future__ import annotations

import re
import subprocess
import sys

import pint
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from dossier.casefile.unit_table import UNITS, in_words, plural
from dossier.casefile.units import DIMENSIONS, parse_quantity
from paths import ROOT

REG = pint.UnitRegistry()

def pint_spelling(unit: str) -> str:
    """A unit as the pint-only reader handed it to pint ("m3" -> "m**3", "kg K" -> "kg*K")."""
    unit = re.sub(r"(?<=[A-Za-z])([23])(?![0-9])", r"**\1", unit.strip())
    return re.sub(r"\s+", "*", unit.replace("^", "**"))


def pint_value(number_text: str, unit: str, dimension: str) -> float:
    """What the pint-only reader returned: pint's conversion, rounded as we round."""
    units = REG.parse_units(pint_spelling(unit))
    value = REG.Quantity(float(number_text), units).to(
        REG.parse_units(DIMENSIONS[dimension].si_unit)).magnitude
    return float(f"{float(value):.15g}")


def dimension_of(unit: str) -> str | None:
    """The DIMENSIONS key whose SI unit has the unit's dimension, if any."""
    dims = REG.parse_units(unit).dimensionality
    for name, dim in DIMENSIONS.items():
        if name != "temperature_difference" and \
                REG.parse_units(dim.si_unit).dimensionality == dims:
            return name
    return None


CASE_UNITS = sorted(u for u in UNITS if dimension_of(u) is not None)
NUMBERS = ("1", "0.5", "25", "-40", "77", "1.9", "298.15", "1e-3", "3.14159",
           "123456.789", "6.02e5", "0.001234")


def test_every_common_unit_and_example_is_read_without_pint():
    code = ("import sys\nfrom dossier.casefile.units import DIMENSIONS, parse_quantity\n"
            "for d in DIMENSIONS.values():\n"
            "    parse_quantity(d.example, d.name)\n"
            "    for u in d.common_units:\n"
            "        try:\n            parse_quantity('1 ' + u, d.name)\n"
            "        except Exception as err:\n            print(u, err)\n"
            "print(sorted(m for m in sys.modules if m.split('.')[0] == 'pint'))")
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True,
                         text=True, check=True)
    assert out.stdout.strip() == "[]"


@pytest.mark.parametrize("unit", sorted(UNITS))
def test_every_table_unit_is_the_unit_pint_reads(unit):
    ours = UNITS[unit]
    theirs = REG.parse_units(unit)
    # the dimension: our six powers against pint's base dimensions
    names = ("[length]", "[mass]", "[time]", "[temperature]", "[substance]", "[current]")
    assert tuple(int(theirs.dimensionality.get(n, 0)) for n in names) == ours.dims
    # the size: one of it in base units (an offset unit: its degree)
    base = REG.Quantity(1.0, theirs).to_base_units() if not ours.offset else \
        REG.Quantity(1.0, REG.parse_units("delta_" + unit)).to_base_units()
    assert float(ours.factor) == pytest.approx(base.magnitude, rel=1e-15)


# refusals that do not depend on the reader: the value is outside the key's
# range, or a temperature is given where a difference is expected (or back)
RANGE_OR_KIND = ("above absolute zero", "above zero", "between 0 % and 100 %",
                 "which is a temperature difference", "not a difference",
                 "the number is too large")


def dimensions_of(unit: str) -> tuple[str, ...]:
    dimension = dimension_of(unit)
    if dimension == "temperature":
        return ("temperature", "temperature_difference")
    return (dimension,)


def repeats(factor) -> bool:
    d = factor.denominator
    while d % 2 == 0:
        d //= 2
    while d % 5 == 0:
        d //= 5
    return d != 1


@pytest.mark.parametrize("unit", [u for u in CASE_UNITS
                                  if repeats(UNITS[u].factor) or UNITS[u].offset])
def test_a_repeating_factor_is_pints_float_to_the_bit(unit):
    # a factor such as 5/9 (degF) or 101325/760 (torr) has no exact float: ours must be
    # the very float pint multiplies by, so the products round alike
    entry = UNITS[unit]
    si = DIMENSIONS[dimension_of(unit)].si_unit
    units = REG.parse_units(unit if not entry.offset else "delta_" + unit)
    assert float(entry.factor) == REG.Quantity(1.0, units).to(si).magnitude
    if entry.offset:
        assert float(entry.offset) == REG.Quantity(0.0, REG.parse_units(unit)).to("K").magnitude


@pytest.mark.parametrize("unit", CASE_UNITS)
def test_every_table_unit_converts_as_pint_did(unit):
    for dimension in dimensions_of(unit):
        for number in NUMBERS:
            text = f"{number} {unit}"
            try:
                got = parse_quantity(text, dimension)
            except Exception as err:
                assert any(reason in str(err) for reason in RANGE_OR_KIND), (text, err)
                continue
            assert got == pint_value(number, unit, dimension), (text, dimension)


COMPOUNDS = [
    ("kJ/(kg*K)", "specific_heat"), ("J/(g*K)", "specific_heat"),
    ("kJ/(kg*degC)", "specific_heat"), ("kcal/(kg*degC)", "specific_heat"),
    ("J/(kg*delta_degF)", "specific_heat"), ("J/kg/K", "specific_heat"),
    ("kJ kg^-1 K^-1", "specific_heat"), ("J/(mol*K)", "molar_heat_capacity"),
    ("kJ/(kmol*K)", "molar_entropy"), ("cal/(mol*K)", "molar_entropy"),
    ("kJ/mol", "energy_per_amount"), ("kcal/mol", "energy_per_amount"),
    ("J/kmol", "energy_per_amount"), ("J/g", "energy_per_mass"), ("kJ/kg", "energy_per_mass"),
    ("cal/g", "energy_per_mass"), ("MJ/t", "energy_per_mass"), ("W/kg", "power_per_mass"),
    ("mW/g", "power_per_mass"), ("W/g", "power_per_mass"), ("kW/K", "heat_transfer"),
    ("W/degC", "heat_transfer"), ("kW/delta_degF", "heat_transfer"), ("kWh", "energy"),
    ("m^3", "volume"), ("m**3", "volume"), ("cm3", "volume"), ("dm3", "volume"),
    ("mm3", "volume"), ("(dm)^3", "volume"), ("kJ/h", "power"), ("MJ/day", "power"), ("J/s", "power"), ("kg*m^2/s^3", "power"),
    ("g/mol*mol/g*kg", "mass"), ("K*K/K", "temperature_difference"),
    ("1/h*h*kg", "mass"), ("mol/L*m3", "amount"), ("Pa*m3/(K*s)", "heat_transfer"),
    ("kcal/h", "power"), ("lb/h", None), ("kJ/(lb*degF)", "specific_heat"),
    ("psi*m3/K", None), ("torr*L/(mol*K)", "molar_entropy"),
]


@pytest.mark.parametrize("unit, dimension", [c for c in COMPOUNDS if c[1]])
def test_compound_units_convert_as_pint_did(unit, dimension):
    for number in NUMBERS:
        assert parse_quantity(f"{number} {unit}", dimension) == pint_value(
            number, unit, dimension), (number, unit)


@settings(max_examples=300, deadline=None)
@given(st.sampled_from(CASE_UNITS),
       st.integers(min_value=-10**9, max_value=10**9),
       st.integers(min_value=0, max_value=9))
def test_typed_numbers_convert_as_pint_did(unit, digits, places):
    # numbers as people type them: up to ten significant digits
    number = f"{digits / 10**places:.{places}f}"
    for dimension in dimensions_of(unit):
        try:
            got = parse_quantity(f"{number} {unit}", dimension)
        except Exception as err:
            assert any(reason in str(err) for reason in RANGE_OR_KIND), (number, err)
            continue
        # within a few units in the last place: our factors are exact fractions, correctly
        # rounded once, while pint multiplies floats it has already rounded (its pound is
        # 0.4535923700000001 kg), so the two can differ in the last digit (72397.855 lb:
        # 32839.11463236635 kg here, exact to double precision; pint 32839.114632366356)
        assert got == pytest.approx(pint_value(number, unit, dimension), rel=1e-15, abs=0), (
            number, unit, dimension)


@pytest.mark.parametrize("text, dimension, pint_text", [
    ("2 m³", "volume", "2 m**3"),
    ("25 °C", "temperature", "25 degC"),
    ("25 ℃", "temperature", "25 degC"),
    ("77 °F", "temperature", "77 degF"),
    ("5 µL", "volume", "5 microliter"),
    ("5 μL", "volume", "5 microliter"),         # Greek small mu, U+03BC
    ("1.9 kJ·kg⁻¹·K⁻¹", "specific_heat", "1.9 kJ/kg/K"),
    ("1.9 kJ⋅kg⁻¹⋅K⁻¹", "specific_heat", "1.9 kJ/kg/K"),
    ("1.9 kJ/(kg×K)", "specific_heat", "1.9 kJ/(kg*K)"),
    ("290 J mol⁻¹ K⁻¹", "molar_heat_capacity", "290 J/mol/K"),
    ("2.5 kW K⁻¹", "heat_transfer", "2.5 kW/K"),
    ("8 W·kg⁻¹", "power_per_mass", "8 W/kg"),
])
def test_unicode_unit_forms_are_read(text, dimension, pint_text):
    number, unit = pint_text.split(" ", 1)
    assert parse_quantity(text, dimension) == pint_value(number, unit, dimension)


def test_multi_digit_superscripts_are_refused_as_unreadable():
    with pytest.raises(Exception) as info:
        parse_quantity("5 m¹⁰", "volume")
    assert str(info.value) == ("expected a volume, like '0.8 m3'; got '5 m¹⁰': cannot "
                               "read the unit 'm¹⁰'")


def test_units_beyond_the_table_still_go_through_pint():
    # 1 mmHg = 133.322387415 Pa (NIST SP 811, 2008 ed., appendix B; from memory)
    assert parse_quantity("1 mmHg", "pressure") == pytest.approx(133.322387415, rel=1e-12)
    # 1 in = 0.0254 m exactly, so 1 in^3 = 1.6387064e-5 m3 (international yard, 1959)
    assert parse_quantity("1 inch^3", "volume") == pytest.approx(1.6387064e-5, rel=1e-12)
    assert parse_quantity("3 hours", "time") == 10800.0  # 1 h = 3600 s (SI Brochure, table 8)


@pytest.mark.parametrize("case", ["esterification.md", "methanol-loop.md",
                                  "nitro-hydrogenation.md"])
def test_evaluating_a_demo_case_does_not_import_pint(case):
    code = ("import sys\nfrom dossier.cli.main import main\n"
            f"sys.argv = ['dossier', 'evaluate', 'cases/{case}']\n"
            "try:\n    main()\nexcept SystemExit:\n    pass\n"
            "print('pint loaded' if 'pint' in sys.modules else 'no pint')")
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True,
                         text=True, check=True)
    assert out.stdout.strip().splitlines()[-1] == "no pint"


@pytest.mark.parametrize("terms, words", [
    ((("joule", 1), ("kilogram", -1), ("kelvin", -1)), "joules per kilogram per kelvin"),
    ((("metre", 3), ("second", -1)), "cubic metres per second"),
    ((("metre", 2),), "square metres"),
    ((("second", -1),), "one per second"),
    ((("metre", 4),), "metres to the power 4"),
    ((("degree Celsius", 1),), "degrees Celsius"),
    ((("pound-force per square inch", 1),), "pounds-force per square inch"),
    ((("inch", 1),), "inches"),
    ((), "a plain number"),
])
def test_units_in_words(terms, words):
    assert in_words(terms) == words


def test_plural_of_percent_is_percent():
    assert plural("percent") == "percent"


def every_case_file() -> list:
    files = sorted((ROOT / "cases").glob("**/*.md"))
    files += sorted((ROOT / "tests" / "fixtures").glob("**/*.md"))
    return files


def test_every_case_and_fixture_loads_to_the_same_values_as_with_pint_alone(monkeypatch):
    # the case files of the project read twice: with the table, and with every unit
    # sent to pint (the reader before the table existed); the loaded cases, SI floats
    # and messages included, must be equal
    from dossier.casefile import unit_table
    from dossier.casefile.load import load_case
    from dossier.errors import DossierError

    def outcome(path):
        try:
            return load_case(path)
        except DossierError as err:
            return [str(p) for p in err.problems]

    for dim in DIMENSIONS.values():  # the SI units' dimensions, read once with the table
        parse_quantity(dim.example, dim.name)
    files = every_case_file()
    ours = [outcome(f) for f in files]
    monkeypatch.setattr(unit_table, "UNITS", {})
    with_pint = [outcome(f) for f in files]
    assert sum(not isinstance(o, list) for o in ours) >= 15  # the demo register loads
    for path, a, b in zip(files, ours, with_pint):
        assert a == b, path
