"""Input limits that keep the work on one case file bounded (issue 16, part 4):
dotted keys of many parts, whole numbers past Python's conversion limit, and
windows past the highest temperature accepted."""
from __future__ import annotations

import sys

import numpy as np
import pytest

from dossier.assess.evaluate import assess_case
from dossier.casefile.load import MAX_KEY_PARTS, parse_case_text, read_header
from dossier.casefile.validate import MAX_WINDOW_K
from dossier.engine.settings import DEFAULT
from dossier.engine.thermo import temperature_grid
from dossier.errors import CaseError
from dossier.library.lookup import Library
from paths import FIXTURES

MINIMAL = (FIXTURES / "cases" / "minimal.md").read_text(encoding="utf-8")
WINDOW = '["20 degC", "78 degC"]'
DEEP = ("a dotted key here has more than 32 parts; the keys of a case file have at most "
        "three (like decomposition.rate.temperature)")


def with_line(extra: str) -> str:
    """MINIMAL with ``extra`` as the header's line 4 (after 'revision = 1')."""
    assert "revision = 1\n" in MINIMAL
    return MINIMAL.replace("revision = 1\n", "revision = 1\n" + extra + "\n", 1)


def key_of(parts: int, sep: str = ".") -> str:
    return sep.join(["a"] + ["b"] * (parts - 1))


def error_of(text: str) -> str:
    with pytest.raises(CaseError) as info:
        parse_case_text(text, "x.md")
    return str(info.value.problems[0])


# ------------------------------------------------------------------ dotted keys


def test_the_limit_is_32_parts():
    assert MAX_KEY_PARTS == 32


def test_a_key_of_32_parts_is_parsed_and_reported_as_unknown():
    first = error_of(with_line(key_of(32) + " = 1"))
    assert first.startswith("x.md:4: key 'a': unknown key; known keys in the header:")


@pytest.mark.parametrize("line", [
    key_of(33) + " = 1",                         # a bare dotted key
    key_of(33, " . ") + " = 1",                  # with blanks around the dots
    '"a"' + '."b\\""' * 32 + " = 1",             # quoted parts with escapes
    "[" + key_of(33) + "]",                      # a table header
    "[[" + key_of(33) + "]]",                    # an array of tables
    "x = { y = 1, " + key_of(33) + " = 2 }",    # inside an inline table
    key_of(20_000) + " = 1",                     # the 40 KB reproducer
], ids=["bare", "blanks", "quoted", "table", "array-of-tables", "inline", "20000-parts"])
def test_a_key_of_more_than_32_parts_is_refused_at_its_line(line):
    assert error_of(with_line(line)) == f"x.md:4: {DEEP}"


def test_read_header_refuses_it_too():
    with pytest.raises(CaseError) as info:
        read_header(with_line(key_of(40) + " = 1"), "x.md")
    assert str(info.value) == f"x.md:4: {DEEP}"


def test_dots_inside_a_value_are_not_a_key():
    text = MINIMAL.replace('"Esterification screening"', '"' + key_of(100) + ' = 1"')
    assert parse_case_text(text, "x.md").title == key_of(100) + " = 1"


# ----------------------------------------------------------- huge whole numbers


def test_a_5001_digit_number_is_a_located_problem():
    # Python's default limit: 4,300 digits (sys.int_info.default_max_str_digits,
    # Python 3.11 docs, "Integer string conversion length limitation")
    assert sys.int_info.default_max_str_digits == 4300
    text = with_line("format = 1" + "0" * 5000)
    assert error_of(text) == ("x.md:4: a number here has more than 4,300 digits; write "
                              "the value it stands for with fewer digits")


def test_4300_digits_still_read_as_a_number():
    case = parse_case_text(MINIMAL.replace("revision = 1", "revision = " + "9" * 4300), "x.md")
    assert case.revision == 10 ** 4300 - 1


# ---------------------------------------------------------------------- windows


def test_the_window_limit_and_the_data_claim_in_its_message():
    assert MAX_WINDOW_K == 10_000.0
    # the message says the library's data end at 6,000 K or below: keep it true
    highest = max(r.model.t_max for r in Library.default().records)
    assert highest <= 6000.0


def test_a_window_up_to_10000_K_is_accepted():
    case = parse_case_text(MINIMAL.replace(WINDOW, '["300 K", "10000 K"]'), "x.md")
    assert case.window == (300.0, 10_000.0)


@pytest.mark.parametrize("high", ["10000.1 K", "1e9 K", "1e12 K", "9800 degC"])
def test_a_window_above_10000_K_is_refused_at_its_line(high):
    text = MINIMAL.replace(WINDOW, f'["300 K", "{high}"]')
    assert error_of(text) == (f"x.md:6: key 'temperature': the high temperature '{high}' is "
                              "above 10,000 K, the highest a window may reach; the library's "
                              "species data end at 6,000 K or below")


@pytest.mark.parametrize("low,high,step", [
    # hand calculation: span 999,994,000 K / 39 intervals = 2.56e7 K; the first round
    # step (1, 2, 2.5, 5 x 10^7) with at most 39 intervals is 5e7 K
    (6000.0, 1e9, 5e7),
    # span ~1e12 K / 39 = 2.56e10 K -> 5e10 K
    (300.0, 1e12, 5e10),
    # span 9,700 K: a listed step fits (200 K gives 48.5 intervals, 250 K gives 38.8)
    (300.0, 10_000.0, 250.0),
])
def test_the_grid_of_any_window_has_at_most_grid_max_rows(low, high, step):
    grid = temperature_grid(low, high, steps=DEFAULT.grid_steps_K,
                            min_step=DEFAULT.grid_min_step_K, max_points=DEFAULT.grid_max_rows)
    assert len(grid) <= DEFAULT.grid_max_rows
    assert grid[0] == low and grid[-1] == high
    inner = np.diff(grid[1:-1])
    assert np.allclose(inner, step)


def test_the_widest_window_accepted_assesses_on_a_bounded_grid():
    case = parse_case_text(MINIMAL.replace(WINDOW, '["300 K", "10000 K"]'), "x.md")
    out = assess_case(case, Library.default()).to_dict()
    assert out["window_K"] == [300.0, 10_000.0]
    assert 2 <= len(out["profile"]) <= DEFAULT.grid_max_rows
