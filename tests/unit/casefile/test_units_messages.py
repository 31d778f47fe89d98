"""Unit messages in words: what the text reads as, and what to write instead."""
from __future__ import annotations

import subprocess
import sys

import pytest

from dossier.casefile.units import parse_mass_or_amount, parse_quantity
from dossier.errors import UnitError
from paths import ROOT
from unit_messages import message


@pytest.mark.parametrize("text, dimension, expected", [
    ("60 C", "temperature",
     "expected a temperature, like '25 degC'; got '60 C', which reads as coulombs "
     "(an electric charge); write '60 degC' for a temperature"),
    ("140 F", "temperature",
     "expected a temperature, like '25 degC'; got '140 F', which reads as farads "
     "(an electric capacitance); write '140 degF' for a temperature"),
    ("5 C", "temperature_difference",
     "expected a temperature difference, like '15 K'; got '5 C', which reads as "
     "coulombs (an electric charge); write '5 K' for a temperature difference"),
    ("1.9 J/kg K", "specific_heat",
     "expected a specific heat capacity, like '1.9 kJ/(kg*K)'; got '1.9 J/kg K', which "
     "reads as joules times kelvins per kilogram, because '/' divides by the next unit "
     "only; write '1.9 J/(kg*K)' for a specific heat capacity"),
    ("290 J/mol*K", "molar_heat_capacity",
     "expected a molar heat capacity, like '290 J/(mol*K)'; got '290 J/mol*K', which "
     "reads as joules times kelvins per mole, because '/' divides by the next unit "
     "only; write '290 J/(mol*K)' for a molar heat capacity"),
    ("1.9 kJ/(kg*C)", "specific_heat",
     "expected a specific heat capacity, like '1.9 kJ/(kg*K)'; got '1.9 kJ/(kg*C)', "
     "which reads as kilojoules per kilogram per coulomb; write '1.9 kJ/(kg*K)' for a "
     "specific heat capacity"),
    ("1.9 J/kg s", "specific_heat",
     "expected a specific heat capacity, like '1.9 kJ/(kg*K)'; got '1.9 J/kg s', which "
     "reads as joules times seconds per kilogram"),
    ("2 m²", "volume",
     "expected a volume, like '0.8 m3'; got '2 m²', which reads as square metres "
     "(an area)"),
    ("1 m³/h", "volume",
     "expected a volume, like '0.8 m3'; got '1 m³/h', which reads as cubic metres "
     "per hour (a volume flow rate)"),
    ("3 kg/m³", "mass",
     "expected a mass, like '120 kg'; got '3 kg/m³', which reads as kilograms per "
     "cubic metre (a density)"),
    ("5 inch", "pressure",
     "expected a pressure, like '5 bar'; got '5 inch', which reads as inches (a length)"),
    ("5 K⁻¹", "temperature",
     "expected a temperature, like '25 degC'; got '5 K⁻¹', which reads as one per kelvin"),
    ("5 s⁻¹", "time",
     "expected a time, like '4 h'; got '5 s⁻¹', which reads as one per second "
     "(a rate)"),
    ("25 ° C", "temperature",
     "expected a temperature, like '25 degC'; got '25 ° C', which reads as degrees times "
     "coulombs (an electric charge)"),
    ("5 kg", "pressure", "expected a pressure, like '5 bar'; got '5 kg', which is a mass"),
    ("5 %", "pressure", "expected a pressure, like '5 bar'; got '5 %', which is a fraction"),
])
def test_units_are_explained_in_words(text, dimension, expected):
    assert message(text, dimension) == expected


def test_mass_or_amount_in_words():
    with pytest.raises(UnitError) as info:
        parse_mass_or_amount("2 m²")
    assert str(info.value) == ("expected a mass or an amount of substance, like '120 kg' "
                               "or '3 kmol'; got '2 m²', which reads as square metres "
                               "(an area)")


@pytest.mark.parametrize("text, dimension, expected", [
    ("2 m³", "volume", 2.0),
    ("2 m²·m", "volume", 2.0),
    ("25 °C", "temperature", 298.15),          # 0 degC = 273.15 K (SI Brochure, 9th ed., 2.3.1)
    ("5 µL", "volume", 5e-9),                  # micro = 1e-6, L = 1e-3 m3 (SI Brochure, table 8)
    ("5 μL", "volume", 5e-9),                  # the same with a Greek mu (U+03BC)
    ("1.9 kJ·kg⁻¹·K⁻¹", "specific_heat", 1900.0),
    ("1.9 kJ×kg⁻¹×K⁻¹", "specific_heat", 1900.0),
    ("2.5 kW·K⁻¹", "heat_transfer", 2500.0),
    ("290 J mol⁻¹ K⁻¹", "molar_heat_capacity", 290.0),
])
def test_unicode_unit_forms_are_accepted(text, dimension, expected):
    assert parse_quantity(text, dimension) == expected


def test_the_message_reaches_the_user_with_file_line_and_key(tmp_path):
    case = tmp_path / "celsius.md"
    case.write_text('+++\ntitle = "Letter C"\nrevision = 1\nstatus = "draft"\n'
                    'reaction = "N2(g) + 3 H2(g) <=> 2 NH3(g)"\n'
                    'temperature = ["60 C", "450 degC"]\n+++\n', encoding="utf-8")
    out = subprocess.run([sys.executable, "-m", "dossier.cli.main", "evaluate", str(case)],
                         cwd=ROOT, capture_output=True, text=True)
    assert out.returncode == 2
    assert out.stderr.strip() == (
        f"error: {case}:6: key 'temperature[1]': expected a temperature, like '25 degC'; got "
        "'60 C', which reads as coulombs (an electric charge); write '60 degC' for a "
        "temperature")
