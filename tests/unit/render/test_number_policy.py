"""The number policy (dossier.number_policy) on typical and extreme values.

Check values are the policy's own rules worked by hand: SI Brochure, 9th ed.
(2019), 5.4.4 for the thin-space grouping (a four-digit number not split);
GUM (JCGM 100:2008) 7.2.6 for an uncertainty to at most two significant
digits; the 1-or-2 rule, the default figures and the unit steps are common
practice, no source.
"""
from __future__ import annotations

import math

import pytest

from dossier import number_policy as p
from dossier.render.numbers import temp, unit
from dossier.temperature import kelvin_celsius

G = p.GROUP        # narrow no-break space between groups of digits
U = p.UNIT_SPACE   # no-break space before the unit
M = p.MINUS


@pytest.mark.parametrize("x, u, expected", [
    # the complaints of issue 15
    (3_621_787.0, "kJ", f"3.62{U}GJ"),
    (-1812.289, "kJ/mol", f"{M}1812.3{U}kJ/mol"),
    (358.055, "m³", f"358{U}m³"),
    (441.67, "bar", f"442{U}bar"),
    (19.09, "bar", f"19.1{U}bar"),
    (1.6e4, "mol", f"16.0{U}kmol"),
    (1030.0, "mol", f"1.03{U}kmol"),
    # rounding edges: the unit is chosen after rounding
    (999.96, "kJ", f"1.00{U}MJ"),
    (999.4, "kJ", f"999{U}kJ"),
    (999.96, "bar", f"1000{U}bar"),
    (99.996, "K", f"100.0{U}K"),
    (0.0, "mol", f"0{U}mol"),
    (-0.0, "K", f"0.0{U}K"),
    (-0.04, "bar", f"{M}0.0400{U}bar"),
    # extremes: never e-notation
    (1e-12, "mol", f"1.00{U}×{U}10⁻¹²{U}mol"),
    (1e12, "mol", f"1.00{U}×{U}10⁹{U}kmol"),
    (1e12, "kJ", f"1000{U}TJ"),                 # 10¹² kJ = 10³ TJ, the top of the scale
    (1e18, "kJ", f"1.00{U}×{U}10⁹{U}TJ"),
    (20_977.0, "h", f"21{G}000{U}h"),
    (4503.47, "kJ/K", f"4.50{U}MJ/K"),
    (-336.27, "kJ/K", f"{M}336{U}kJ/K"),
    (math.inf, "bar", f"∞{U}bar"),
    (-math.inf, "K", f"{M}∞{U}K"),
])
def test_quantity(x, u, expected):
    assert p.quantity(x, u) == expected


@pytest.mark.parametrize("x", [None, math.nan])
def test_missing_figure_is_not_assessed(x):
    assert p.quantity(x, "K") == "not assessed"
    assert p.temperature(x) == "not assessed"
    assert p.fixed(x, 2) == "–"
    assert p.significant(x) == "–"


@pytest.mark.parametrize("u, decimals", [
    (0.034, 2), (0.024, 3), (0.15, 2), (0.96, 1), (7.85, 0), (18_600.0, -3), (2.4, 1), (3.0, 0),
    (None, None), (0.0, None), (math.inf, None), (-1.0, None),
])
def test_digits_from_the_uncertainty(u, decimals):
    assert p.uncertainty_decimals(u) == decimals


def test_interval_sets_the_digits_of_the_figure_and_its_ends():
    pair = (359.0, 374.7)  # half-width 7.85 K: one digit, the units
    assert p.quantity(366.5, "K", pair) == f"367{U}K"
    assert p.interval(pair, "K", 366.5) == f"95{U}% interval 359 to 375{U}K"
    assert p.temperature(366.5, pair) == f"367{U}K (93{U}°C)"
    # half-width about 18 600 h: two digits (first digit 1), thousands
    wide = (9008.9, 46_295.8)
    assert p.quantity(20_977.0, "h", wide) == f"21{G}000{U}h"
    assert p.interval(wide, "h", 20_977.0) == f"95{U}% interval 9000 to 46{G}000{U}h"


def test_interval_in_the_scaled_unit_of_its_figure():
    assert p.interval((1.4e6, 1.6e6), "kJ", 1.5e6) == f"95{U}% interval 1.40 to 1.60{U}GJ"


def test_interval_without_width_or_ends():
    assert p.interval(None, "K") == ""
    assert p.interval((366.5, 366.5 + 1e-12), "K", 366.5) == ""  # no width but rounding noise
    assert p.interval((None, 400.0), "K", 366.5).startswith(f"95{U}% interval unbounded to")


def test_grouping_from_five_digits_only():
    assert p.fixed(1234.5, 1) == "1234.5"
    assert p.fixed(12_345.0, 0) == f"12{G}345"
    assert p.fixed(-1_234_567.891, 3) == f"{M}1{G}234{G}567.891"
    assert p.count(4000) == "4000"
    assert p.count(40_000) == f"40{G}000"


def test_significant_figures_and_the_power_of_ten():
    assert p.significant(999.96) == "1000"
    assert p.significant(9.9996e6) == f"1.00{U}×{U}10⁷"
    assert p.significant(0.000_123_4) == f"1.23{U}×{U}10⁻⁴"
    assert p.significant(0.001_234) == "0.00123"
    assert p.significant(0.0) == "0"


def test_inputs_as_given():
    assert p.plain(1.0) == "1"
    assert p.plain(1.01325) == "1.01325"
    assert p.plain(100_000.0) == f"100{G}000"
    assert p.plain(8.314462618) == "8.31446"
    assert p.plain(-200.0) == f"{M}200"


def test_signed_margins_and_percentages():
    assert p.signed(3.2, "K") == f"+3.2{U}K"
    assert p.signed(-0.8, "K") == f"{M}0.8{U}K"
    assert p.signed(0.0, "K") == f"0.0{U}K"
    assert p.signed(None, "K") == "unbounded"
    assert p.percent(0.125) == f"12.5{U}%"
    assert p.percent(0.99996) == f"100.0{U}%"


def test_plus_minus_at_the_digits_of_the_uncertainty():
    assert p.plus_minus(-12.345, 4.5, "kJ/mol") == f"{M}12 ± 5{U}kJ/mol"
    assert p.plus_minus(-12.345, 1.5, "kJ/mol") == f"{M}12.3 ± 1.5{U}kJ/mol"
    assert p.plus_minus(150.26, 0.34, "J/(mol·K)") == f"150.3 ± 0.3{U}J/(mol·K)"


def test_rounding_halves_away_from_zero_as_written():
    # 2.675 is 2.67499999... in binary; written 2.675, it rounds to 2.68
    assert p.fixed(2.675, 2) == "2.68"
    assert p.fixed(-0.05, 1) == f"{M}0.1"


def test_temperatures_in_kelvin_and_celsius():
    assert kelvin_celsius(398.15) == f"398.2{U}K (125.0{U}°C)"   # 398.15 - 273.15 = 125
    assert kelvin_celsius(273.15) == f"273.2{U}K (0.0{U}°C)"
    assert kelvin_celsius(318.15, 2) == f"318.15{U}K (45.00{U}°C)"
    assert p.temperature(10.0) == f"10.0{U}K ({M}263.2{U}°C)"


def test_template_filters_are_the_policy():
    assert unit(3_621_787.0, "kJ") == p.quantity(3_621_787.0, "kJ")
    assert temp(None, "not given") == "not given"
    with pytest.raises(TypeError, match="number policy sets the digits"):
        unit(441.67, "bar", 2)


def test_a_temperature_keeps_its_units_digit_however_wide_the_interval():
    # half-width 44.5 K asks for tens; the kelvin keep their units digit, so K and °C agree
    pair = (461.0, 550.0)
    assert p.temperature(506.3, pair) == f"506{U}K (233{U}°C)"
    assert p.interval(pair, "K", 506.3) == f"95{U}% interval 461 to 550{U}K"
    assert p.quantity(163.4, "K", (121.0, 208.0)) == f"163{U}K"
    # other units do round to tens: 20 977 h ± 18 600 h
    assert p.quantity(20_977.0, "h", (9008.9, 46_295.8)) == f"21{G}000{U}h"


def test_a_narrow_interval_never_adds_digits():
    # half-width 0.004 K would ask for three decimals: the default 0.1 K stays
    assert p.temperature(437.208, (437.204, 437.212)) == f"437.2{U}K (164.1{U}°C)"
    assert p.quantity(441.67, "bar", (441.66, 441.68)) == f"442{U}bar"
