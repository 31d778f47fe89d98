"""The units edge: strings with units in, SI floats out, clear errors."""
from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from dossier.errors import UnitError
from dossier.casefile.units import (DIMENSIONS, MAX_MAGNITUDE, parse_mass_or_amount,
                                parse_quantity)
from paths import ROOT
from unit_messages import message

ROOT = ROOT


# --- conversions -------------------------------------------------------------

@pytest.mark.parametrize("text, dimension, expected", [
    # 0 degC = 273.15 K by the definition of the Celsius scale (BIPM SI Brochure, 9th ed. 2019, sec. 2.3.1)
    ("25 degC", "temperature", 298.15),
    ("25 °C", "temperature", 298.15),
    # t/degC = (t/degF - 32)/1.8 (NIST SP 811, 2008 ed., temperature conversion; section from memory)
    ("77 degF", "temperature", 298.15),
    ("298.15 K", "temperature", 298.15),
    # 1 atm = 101325 Pa exactly, by definition (BIPM SI Brochure, 8th ed. 2006, table of non-SI units; table number from memory)
    ("1 atm", "pressure", 101325.0),
    # 1 bar = 1e5 Pa (BIPM SI Brochure, 8th ed. 2006, non-SI units table)
    ("5 bar", "pressure", 5.0e5),
    # k = 1e3 (SI prefix, BIPM SI Brochure, 9th ed. 2019, sec. 3)
    ("500 kPa", "pressure", 5.0e5),
    ("120 kg", "mass", 120.0),
    ("350 g", "mass", 0.35),        # SI prefix arithmetic, as above
    # 1 lb = 0.45359237 kg exactly (international yard and pound agreement, 1959; from memory)
    ("1 lb", "mass", 0.45359237),
    ("0.5 mol", "amount", 0.5),
    ("2 kmol", "amount", 2000.0),   # SI prefix arithmetic
    ("0.8 m3", "volume", 0.8),
    ("0.8 m^3", "volume", 0.8),
    # 1 L = 1 dm3 = 1e-3 m3 (BIPM SI Brochure, 9th ed. 2019, Table 8)
    ("800 L", "volume", 0.8),
    ("250 cm3", "volume", 2.5e-4),  # 1 cm3 = 1e-6 m3, SI prefix arithmetic
    # 1 h = 3600 s, 1 min = 60 s (BIPM SI Brochure, 9th ed. 2019, Table 8)
    ("4 h", "time", 14400.0),
    ("30 min", "time", 1800.0),
    ("1.9 kJ/(kg*K)", "specific_heat", 1900.0),  # SI prefix arithmetic
    ("1.9 kJ/(kg K)", "specific_heat", 1900.0),  # same, implicit product
    # a Celsius difference equals a kelvin difference (BIPM SI Brochure, 9th ed., sec. 2.3.1)
    ("1.9 kJ/(kg*degC)", "specific_heat", 1900.0),
    ("290 J/(mol*K)", "molar_heat_capacity", 290.0),
    ("250 J/(mol*K)", "molar_entropy", 250.0),
    ("-138 J/(mol*K)", "molar_entropy", -138.0),  # sign kept: entropies of ions may be negative (common practice, no source)
    ("420 J/g", "energy_per_mass", 420000.0),    # SI prefix arithmetic
    ("-540 kJ/mol", "energy_per_amount", -540000.0),
    ("\u2212540 kJ/mol", "energy_per_amount", -540000.0),  # U+2212 minus sign
    ("8 W/kg", "power_per_mass", 8.0),
    ("2.5 kW/K", "heat_transfer", 2500.0),
    ("1.5 kW", "power", 1500.0),
    ("1.2 MJ", "energy", 1.2e6),
    ("35 %", "fraction", 0.35),      # % = 0.01 (common practice, no source)
    ("35%", "fraction", 0.35),
    ("100 %", "fraction", 1.0),
    ("15 K", "temperature_difference", 15.0),
    # a Celsius difference equals a kelvin difference (BIPM SI Brochure, 9th ed., sec. 2.3.1)
    ("15 delta_degC", "temperature_difference", 15.0),
    # a Fahrenheit degree is 5/9 K (NIST SP 811, 2008 ed.; from memory)
    ("9 delta_degF", "temperature_difference", 5.0),
    ("1.2e3 J/mol", "energy_per_amount", 1200.0),
])
def test_conversion_to_si(text, dimension, expected):
    assert parse_quantity(text, dimension) == pytest.approx(expected, rel=1e-12)


def test_conversion_noise_is_rounded_away():
    # 800 L is 0.8 m3 exactly (BIPM SI Brochure, 9th ed. 2019, Table 8: 1 L = 1 dm3)
    assert parse_quantity("800 L", "volume") == 0.8


def test_mass_or_amount():
    assert parse_mass_or_amount("120 kg") == ("mass", 120.0)
    assert parse_mass_or_amount("3 kmol") == ("amount", 3000.0)  # SI prefix arithmetic
    assert parse_quantity("3 kmol", "mass_or_amount") == ("amount", 3000.0)
    with pytest.raises(UnitError) as info:
        parse_mass_or_amount("1 L")
    assert str(info.value) == ("expected a mass or an amount of substance, like '120 kg' "
                               "or '3 kmol'; got '1 L', which is a volume")


# --- errors ------------------------------------------------------------------

@pytest.mark.parametrize("text, dimension, expected", [
    (5, "pressure", "expected a pressure with a unit, like '5 bar'; got 5"),
    (5.0, "pressure", "expected a pressure with a unit, like '5 bar'; got 5.0"),
    ("5", "pressure", "expected a pressure with a unit, like '5 bar'; got '5'"),
    (0.35, "fraction", "expected a fraction with a unit, like '35 %'; got 0.35"),
    ("0.35", "fraction", "expected a fraction with a unit, like '35 %'; got '0.35'"),
    (True, "mass", "expected a mass as text with a unit, like '120 kg'; got true"),
    (["5 bar"], "pressure",
     "expected a pressure as text with a unit, like '5 bar'; got a list"),
    ({"a": 1}, "pressure",
     "expected a pressure as text with a unit, like '5 bar'; got a table"),
    ("5 kg", "pressure", "expected a pressure, like '5 bar'; got '5 kg', which is a mass"),
    ("1.9 kJ/kg", "specific_heat",
     "expected a specific heat capacity, like '1.9 kJ/(kg*K)'; got '1.9 kJ/kg', "
     "which is an energy per mass"),
    ("5 J/(mol*K)", "pressure",
     "expected a pressure, like '5 bar'; got '5 J/(mol*K)', which is a molar heat "
     "capacity or a molar entropy"),
    ("1 m3/s", "pressure", "expected a pressure, like '5 bar'; got '1 m3/s', which reads "
                           "as cubic metres per second (a volume flow rate)"),
    ("5 barr", "pressure",
     "unknown unit 'barr' in '5 barr'; expected a pressure, like '5 bar'; "
     "did you mean 'bar'?"),
    ("80 degc", "temperature",
     "unknown unit 'degc' in '80 degc'; expected a temperature, like '25 degC'; "
     "did you mean 'degC'?"),
    ("5 barg", "pressure",
     "unknown unit 'barg' in '5 barg'; expected a pressure, like '5 bar'; gauge "
     "pressures are not accepted: write the absolute pressure, like '6 bar'"),
    ("0 bar", "pressure",
     "expected an absolute pressure above zero, like '5 bar'; got '0 bar'"),
    ("-1 bar", "pressure",
     "expected an absolute pressure above zero, like '5 bar'; got '-1 bar'"),
    # -300 degC = -26.85 K, below absolute zero (0 degC = 273.15 K, BIPM SI Brochure, 9th ed., 2.3.1)
    ("-300 degC", "temperature",
     "expected a temperature above absolute zero, like '25 degC'; got '-300 degC' "
     "(= -26.85 K)"),
    ("0 K", "temperature",
     "expected a temperature above absolute zero, like '25 degC'; got '0 K' (= 0 K)"),
    ("15 delta_degC", "temperature",
     "expected a temperature, like '25 degC'; got '15 delta_degC', which is a "
     "temperature difference; use K, degC or degF"),
    ("15 degC", "temperature_difference",
     "expected a temperature difference, like '15 K'; got '15 degC', which is a "
     "temperature, not a difference; use K or delta_degC"),
    ("135 %", "fraction",
     "expected a fraction between 0 % and 100 %, like '35 %'; got '135 %'"),
    ("-5 %", "fraction",
     "expected a fraction between 0 % and 100 %, like '35 %'; got '-5 %'"),
    ("nan K", "temperature",
     "expected a temperature, like '25 degC'; got 'nan K', which is not a finite number"),
    ("inf bar", "pressure",
     "expected a pressure, like '5 bar'; got 'inf bar', which is not a finite number"),
    ("1e400 K", "temperature",
     "expected a temperature, like '25 degC'; got '1e400 K': the number is too large"),
    ("1e30 bar", "pressure",
     "expected a pressure, like '5 bar'; got '1e30 bar': the number is too large"),
    ("five bar", "pressure",
     "expected a pressure, like '5 bar'; got 'five bar', which does not start with a "
     "number"),
    ("", "pressure",
     "expected a pressure, like '5 bar'; got '', which does not start with a number"),
    ("1,000 kg", "mass",
     "expected a mass, like '120 kg'; got '1,000 kg': use '.' for decimals and no "
     "thousands separators"),
    ("5 m**10**10", "volume",
     "expected a volume, like '0.8 m3'; got '5 m**10**10': cannot read the unit "
     "'m**10**10'"),
    ("5 m^2^3", "volume",
     "expected a volume, like '0.8 m3'; got '5 m^2^3': misplaced power in the unit"),
    ("1 kg)", "mass",
     "expected a mass, like '120 kg'; got '1 kg)': unbalanced parentheses in the unit"),
    ("1 " + "k" * 100, "mass",
     "expected a mass, like '120 kg'; got a text of 102 characters (at most 80)"),
])
def test_error_messages(text, dimension, expected):
    assert message(text, dimension) == expected


def test_unknown_dimension_is_a_programming_error():
    with pytest.raises(ValueError, match="unknown dimension 'presure'"):
        parse_quantity("5 bar", "presure")


def test_every_example_parses():
    for dim in DIMENSIONS.values():
        value = parse_quantity(dim.example, dim.name)
        assert math.isfinite(value), dim.name


# --- properties --------------------------------------------------------------

@settings(max_examples=300, deadline=None)
@given(st.one_of(st.text(max_size=40),
                 st.from_regex(r"[-+]?\d{0,4}(\.\d{0,3})?(e[-+]?\d{1,3})? ?"
                               r"[a-zA-Z_%°*/^() 0-9.-]{0,15}", fullmatch=True),
                 st.integers(), st.floats(), st.booleans(), st.none()),
       st.sampled_from(sorted(DIMENSIONS) + ["mass_or_amount"]))
def test_random_input_raises_only_unit_error(text, dimension):
    try:
        value = parse_quantity(text, dimension)
    except UnitError as err:
        assert err.problems and err.problems[0].message
    else:
        magnitude = value[1] if isinstance(value, tuple) else value
        assert math.isfinite(magnitude) and abs(magnitude) <= MAX_MAGNITUDE


@settings(max_examples=200, deadline=None)
@given(st.floats(min_value=1e-6, max_value=1e9, allow_nan=False))
def test_kilopascal_round_trip(x):
    # 1 kPa = 1000 Pa (SI prefix, BIPM SI Brochure, 9th ed. 2019, sec. 3)
    assert parse_quantity(f"{x!r} kPa", "pressure") == pytest.approx(x * 1000.0, rel=1e-14)


def test_importing_the_module_does_not_import_pint():
    code = "import sys, dossier.casefile.units; print('pint' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True,
                         text=True, check=True)
    assert out.stdout.strip() == "False"
