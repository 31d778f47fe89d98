"""Hostile and broken case files: every input ends in a Case/Assessment or one DossierError.

The contract checked here (for load_case, parse_case_text and assess_case with
the default library): an input either gives a valid result, or raises one
``DossierError`` whose problems name the file (and, where a line means
something, the line and key).  Never another exception, never a hang (each
example runs under ``signal.alarm``, which fails the test), never an
unbounded read (files over the 5 MB limit are refused before decoding).

Inputs tried per target are counted in ``TRIED`` and printed by the last
test (run with ``-s`` to see them).
"""
from __future__ import annotations

import json
from collections import Counter
from pathlib import Path

import fuzzing
import mutations
from fuzzing import bounded
import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from dossier.assess.evaluate import assess_case
from dossier.casefile.load import MAX_FILE_BYTES, load_case, parse_case_text
from dossier.engine.settings import DEFAULT
from dossier.model.case import Case
from dossier.errors import DossierError
from dossier.library.lookup import Library
from paths import CASES, FIXTURES

FIXTURES = FIXTURES
FULL = (FIXTURES / "cases" / "full.md").read_text(encoding="utf-8")
MINIMAL = (FIXTURES / "cases" / "minimal.md").read_text(encoding="utf-8")
HOSTILE = FIXTURES / "hostile"

#: Inputs tried per fuzz target in this module (printed at the end).
TRIED: Counter = Counter()

#: Seconds one input may take before the test fails as a hang.

FUZZ = settings(max_examples=150, deadline=None, derandomize=True,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])


@pytest.fixture(scope="module", autouse=True)
def report_inputs_tried():
    yield
    fuzzing.report(TRIED, __name__)


@pytest.fixture(scope="module")
def library() -> Library:
    return Library.default()


def check_outcome(fn, filename: str, target: str, *, needs_line: bool = False):
    """Run ``fn``; it returns a result or raises one located DossierError."""
    TRIED[target] += 1
    with bounded():
        try:
            return fn()
        except DossierError as err:
            assert err.problems, "a DossierError without problems"
            for p in err.problems:
                assert p.file == filename, f"problem without the file: {p}"
                assert p.message and p.message.strip()
                if needs_line:
                    assert p.line is not None and p.line >= 1, f"problem without a line: {p}"
            return err


def assess_outcome(case, library, filename: str, target: str):
    """Assess a loaded case: an Assessment whose JSON is finite, or a located error."""
    def run():
        a = assess_case(case, library)
        json.dumps(a.to_dict(), allow_nan=False)
        return a
    return check_outcome(run, filename, target)


# ---------------------------------------------------------------- random bytes


@FUZZ
@given(data=st.binary(max_size=4000))
def test_random_bytes_through_load_case(tmp_path_factory, data):
    path = tmp_path_factory.mktemp("bytes") / "case.md"
    path.write_bytes(data)
    out = check_outcome(lambda: load_case(path), str(path), "load_case: random bytes",
                        needs_line=False)
    assert isinstance(out, (Case, DossierError))


@FUZZ
@given(prefix=st.sampled_from(["+++\n", "+++\r\n", "\ufeff+++\n", ""]),
       body=st.text(max_size=2000),
       close=st.booleans())
def test_random_text_after_a_header_opening(library, prefix, body, close):
    text = prefix + body + ("\n+++\nnarrative\n" if close else "")
    out = check_outcome(lambda: parse_case_text(text, "fuzz.md"), "fuzz.md",
                        "parse_case_text: random text", needs_line=False)
    if isinstance(out, Case):
        assess_outcome(out, library, "fuzz.md", "assess_case: random text")


# -------------------------------------------------- mutations of a valid case

_VALUE_LINES = [i for i, line in enumerate(FULL.split("\n")) if " = " in line]
_HOSTILE_VALUES = [
    '"nan K"', '"inf K"', '"-inf bar"', '"-5 K"', '"0 K"', '"1e-300 K"', '"1e300 K"',
    '"1e308 kg"', '"1e-308 kg"', '"0 kg"', '"-1 kg"', '"NaN %"', '"1e300 %"', '"1/0 kg"',
    '"9**9**9 kg"', '"kg"', '""', '" "', "1e300", "nan", "inf", "-inf", "0", "-0.0",
    "1" + "0" * 4000, "true", "[]", "{}", "[[]]", '"\\u0000"', '"\\ud7ff"', '"x" ',
    '"1 kg/m3"', '"5 bar bar"', '"5 degC degC"', '"300 K"', '"2026-01-01"', "2026-01-01",
    "2026-01-01T00:00:00", "00:00:00", '"' + "9" * 5000 + ' kg"', '"1e-320 J/(mol*K)"',
]


@FUZZ
@given(line=st.sampled_from(_VALUE_LINES), value=st.sampled_from(_HOSTILE_VALUES))
def test_one_value_replaced_by_a_hostile_one(library, line, value):
    lines = FULL.split("\n")
    key = lines[line].split(" = ")[0]
    lines[line] = f"{key} = {value}"
    text = "\n".join(lines)
    out = check_outcome(lambda: parse_case_text(text, "mutated.md"), "mutated.md",
                        "parse_case_text: hostile value", needs_line=True)
    if isinstance(out, Case):
        assess_outcome(out, library, "mutated.md", "assess_case: hostile value")


@FUZZ
@given(data=st.data())
def test_random_splices_of_a_valid_case(library, data):
    """Delete, duplicate or overwrite a random span of the full case."""
    n = len(FULL)
    a = data.draw(st.integers(0, n), label="start")
    b = data.draw(st.integers(a, min(n, a + 200)), label="end")
    insert = data.draw(st.sampled_from(["", FULL[a:b] * 2, "\x00", "+++\n", "[", "]]",
                                        '"', "'''", '"""', "\\", "\r", "\u2028", "é"]))
    text = FULL[:a] + insert + FULL[b:]
    out = check_outcome(lambda: parse_case_text(text, "spliced.md"), "spliced.md",
                        "parse_case_text: splices")
    if isinstance(out, Case):
        assess_outcome(out, library, "spliced.md", "assess_case: splices")


def test_every_prefix_of_the_full_case(library):
    """Truncation at every character: a result or a located error, never a crash."""
    valid = 0
    for end in range(len(FULL) + 1):
        out = check_outcome(lambda: parse_case_text(FULL[:end], "truncated.md"),
                            "truncated.md", "parse_case_text: every prefix", needs_line=True)
        if isinstance(out, Case):
            valid += 1
    # the narrative is free text: cutting it still leaves a valid case
    assert valid == len(FULL) - FULL.index("\n+++\n") - len("\n+++") + 1
    # and the complete case assesses
    assert isinstance(assess_outcome(parse_case_text(FULL, "full.md"), library, "full.md",
                                     "assess_case: every prefix"), object)


def test_every_prefix_of_the_file_bytes(tmp_path):
    """Truncated on disk, including inside a multi-byte UTF-8 character."""
    data = FULL.replace("Narrative", "Narrative — °C, µ, ü").encode("utf-8")
    path = tmp_path / "cut.md"
    for end in range(0, len(data) + 1, 7):
        path.write_bytes(data[:end])
        check_outcome(lambda: load_case(path), str(path), "load_case: every 7th byte prefix",
                      needs_line=True)


# ------------------------------------------------------------------- encodings


def test_utf16_file_is_refused_with_the_byte_and_line(tmp_path):
    path = tmp_path / "utf16.md"
    path.write_bytes(FULL.encode("utf-16"))  # with its BOM, FF FE
    TRIED["load_case: encodings"] += 1
    with pytest.raises(DossierError) as err:
        load_case(path)
    assert str(err.value) == (f"{path}:1: the file is not valid UTF-8: byte 0 (0xff) cannot "
                              "be decoded; save the file as UTF-8")


def test_utf16_big_endian_without_bom(tmp_path):
    path = tmp_path / "utf16be.md"
    path.write_bytes(FULL.encode("utf-16-be"))
    TRIED["load_case: encodings"] += 1
    with pytest.raises(DossierError) as err:
        load_case(path)
    # every other byte is NUL: valid UTF-8, but the first line is not '+++'
    assert str(err.value) == (f"{path}:1: the first line must be '+++', which opens the "
                              "TOML header; got '\\x00+\\x00+\\x00+\\x00'")


def test_latin1_narrative_is_refused_at_its_line(tmp_path):
    path = tmp_path / "latin1.md"
    text = FULL.replace("Narrative in Markdown", "Température de début")
    path.write_bytes(text.encode("latin-1"))
    TRIED["load_case: encodings"] += 1
    line = text.split("\n").index("Température de début ...") + 1
    byte = text.encode("latin-1").index("é".encode("latin-1"))
    with pytest.raises(DossierError) as err:
        load_case(path)
    assert str(err.value) == (f"{path}:{line}: the file is not valid UTF-8: byte {byte} "
                              "(0xe9) cannot be decoded; save the file as UTF-8")


def test_utf8_bom_is_accepted(tmp_path):
    path = tmp_path / "bom.md"
    path.write_bytes(b"\xef\xbb\xbf" + MINIMAL.encode("utf-8"))
    TRIED["load_case: encodings"] += 1
    assert load_case(path).title == parse_case_text(MINIMAL, "m.md").title


def test_crlf_line_ends_give_the_same_case(tmp_path):
    TRIED["load_case: encodings"] += 1
    crlf = parse_case_text(FULL.replace("\n", "\r\n"), "crlf.md")
    lf = parse_case_text(FULL, "crlf.md")
    assert (crlf.title, crlf.window, crlf.charge) == (lf.title, lf.window, lf.charge)


@FUZZ
@given(encoding=st.sampled_from(["utf-16", "utf-16-le", "utf-32", "latin-1", "cp1252",
                                 "utf-8-sig", "shift_jis", "utf-7"]),
       extra=st.text(alphabet="äöüßéèµ°²³€ñ—…", min_size=0, max_size=20))
def test_other_encodings_give_a_case_or_one_error(tmp_path_factory, encoding, extra):
    text = FULL.replace("Narrative", "Narrative " + extra)
    try:
        data = text.encode(encoding)
    except UnicodeEncodeError:
        data = text.encode(encoding, "replace")
    path = tmp_path_factory.mktemp("enc") / "case.md"
    path.write_bytes(data)
    check_outcome(lambda: load_case(path), str(path), "load_case: encodings", needs_line=True)


# ------------------------------------------------------------- size and depth


def test_50_mb_narrative_is_refused_before_decoding(tmp_path):
    path = tmp_path / "huge.md"
    with open(path, "wb") as fh:
        fh.write(MINIMAL.encode("utf-8"))
        block = b"All work and no play. " * 4096
        for _ in range(50 * 2**20 // len(block) + 1):
            fh.write(block)
    assert path.stat().st_size > 50 * 2**20
    TRIED["load_case: size"] += 1
    with bounded(30), pytest.raises(DossierError) as err:
        load_case(path)
    assert str(err.value) == (f"{path}: the file is larger than 5 MB; a case file is a "
                              "few kilobytes")


def test_text_over_the_limit_is_refused_by_parse_case_text():
    TRIED["parse_case_text: size"] += 1
    text = MINIMAL + "x" * (MAX_FILE_BYTES + 1)
    with pytest.raises(DossierError) as err:
        parse_case_text(text, "big.md")
    assert str(err.value) == "big.md: the file is larger than 5 MB; a case file is a few kilobytes"


def test_multibyte_text_over_the_limit_in_bytes_is_refused():
    TRIED["parse_case_text: size"] += 1
    text = MINIMAL + "€" * (MAX_FILE_BYTES // 3 + 10)  # fewer characters than the limit
    assert len(text) < MAX_FILE_BYTES
    with pytest.raises(DossierError) as err:
        parse_case_text(text, "big.md")
    assert str(err.value) == "big.md: the file is larger than 5 MB; a case file is a few kilobytes"


def _with_header_lines(extra: str) -> str:
    head, rest = MINIMAL.split("\n+++\n", 1)
    return f"{head}\n{extra}\n+++\n{rest}"


@pytest.mark.parametrize("opener,closer", [("[", "]"), ("{a=", "}")],
                         ids=["arrays", "inline-tables"])
def test_1000_deep_nesting_is_one_located_error(opener, closer):
    text = _with_header_lines("deep = " + opener * 1000 + ("" if opener == "[" else "1")
                              + closer * 1000)
    TRIED["parse_case_text: depth"] += 1
    with bounded(), pytest.raises(DossierError) as err:
        parse_case_text(text, "deep.md")
    assert str(err.value) == "deep.md:2: the header nests arrays or tables too deeply"


def test_100_000_unknown_keys_are_reported_in_bounded_time():
    keys = "".join(f"k{i} = {i}\n" for i in range(100_000))
    text = _with_header_lines("[extra]\n" + keys)
    TRIED["parse_case_text: size"] += 1
    with bounded(60), pytest.raises(DossierError) as err:
        parse_case_text(text, "keys.md")
    (problem,) = err.value.problems
    assert problem.key == "extra" and problem.file == "keys.md"
    assert problem.message.startswith("unknown key; known keys in the header: format, title,")


def test_20_000_unknown_top_level_keys_each_get_a_line():
    keys = "".join(f"zz{i} = 1\n" for i in range(20_000))
    text = _with_header_lines(keys)
    TRIED["parse_case_text: size"] += 1
    with bounded(120), pytest.raises(DossierError) as err:
        parse_case_text(text, "keys.md")
    problems = err.value.problems
    assert len(problems) == 20_000
    first_line = MINIMAL.split("\n+++\n", 1)[0].count("\n") + 2
    assert (problems[0].line, problems[0].key) == (first_line, "zz0")
    assert (problems[-1].line, problems[-1].key) == (first_line + 19_999, "zz19999")


def test_a_huge_whole_number_is_a_value_not_a_crash():
    TRIED["parse_case_text: huge numbers"] += 1
    text = MINIMAL.replace("revision = 1", "revision = 1" + "0" * 4000)
    assert "revision = 1" in MINIMAL
    case = parse_case_text(text, "rev.md")
    assert case.revision == 10 ** 4000


# ----------------------------------------------------- the hostile fixture files


def _hostile_files():
    return sorted(HOSTILE.glob("*.md"))


@pytest.mark.parametrize("path", _hostile_files(), ids=lambda p: p.name)
def test_hostile_fixture(path, library):
    """Each file in fixtures/hostile/ names its expected first problem on line 1 of
    a sibling .expected file ('ok' when it must load and assess)."""
    expected = path.with_suffix(".expected").read_text(encoding="utf-8").strip()
    out = check_outcome(lambda: load_case(path), str(path), "load_case: hostile fixtures")
    if isinstance(out, Case):
        out = assess_outcome(out, library, str(path), "assess_case: hostile fixtures")
    if expected == "ok":
        assert not isinstance(out, DossierError), str(out)
        json.dumps(out.to_dict(), allow_nan=False)
    else:
        assert isinstance(out, DossierError)
        first = str(out.problems[0]).replace(str(path), path.name, 1)
        assert first == expected


# ------------------------------------------------- seeded mutations (issue 16)

#: Inputs of the suite's seeded run (the 10,000-input run is bench/fuzz_cases.py).
SEEDED_INPUTS = 1000
#: Seconds the seeded run may take in all; it stops there and says how far it got.
SEEDED_BUDGET = 240.0


def test_seeded_mutations_give_no_traceback_and_no_input_over_2_s(library):
    """Byte flips, line deletions and duplications, value swaps, huge and tiny
    numbers, unicode, NaN/inf strings, deep nesting, long dotted keys and huge
    windows (tests/support/mutations.py), seed 16."""
    texts = mutations.seeds([FIXTURES / "cases", CASES], library)
    assert len(texts) >= 10  # full.md, minimal.md and the demonstration cases
    out = mutations.run(SEEDED_INPUTS, 16, texts, library, SEEDED_BUDGET)
    TRIED["mutations: seeded run"] += out.inputs
    assert out.tracebacks == []
    assert out.slow == [], f"inputs over {mutations.SLOW_SECONDS} s: {out.slow}"
    assert out.inputs == SEEDED_INPUTS, f"budget spent after {out.inputs} inputs"
    # both outcomes occur: the mutations reach the assessment, and they break files
    assert out.results > 0 and out.errors > 0


# ------------------------------------------------------------------------ atheris


def test_atheris_fuzz_parse_case_text():
    """Coverage-guided fuzzing where atheris is installed (optional)."""
    atheris = pytest.importorskip("atheris")
    import atheris as _a  # noqa: F401

    fdp_cls = atheris.FuzzedDataProvider
    import random

    rng = random.Random(1234)
    seeds = [FULL.encode(), MINIMAL.encode()]
    # atheris.Fuzz() never returns; drive its data provider ourselves for a
    # bounded number of mutated inputs instead.
    for i in range(400):
        seed = bytearray(rng.choice(seeds))
        for _ in range(rng.randint(1, 8)):
            pos = rng.randrange(len(seed))
            seed[pos:pos + rng.randint(0, 8)] = bytes(rng.randrange(256)
                                                     for _ in range(rng.randint(0, 8)))
        fdp = fdp_cls(bytes(seed))
        text = fdp.ConsumeUnicodeNoSurrogates(len(seed)) if i % 2 else bytes(seed).decode(
            "utf-8", "replace")
        check_outcome(lambda: parse_case_text(text, "atheris.md"), "atheris.md",
                      "parse_case_text: atheris data provider")




def test_a_measured_enthalpy_of_zero_is_compared_without_a_percentage(library):
    """The issue's reproducer: 0 kJ/mol divided by zero in the enthalpy-mismatch rule."""
    case = load_case(HOSTILE / "measured_enthalpy_zero.md")
    findings = assess_case(case, library).to_dict()["findings"]
    (finding,) = [f for f in findings if f["rule"] == "enthalpy-mismatch"]
    # figures by the number policy: no-break space before a unit, thresholds as given
    assert finding["text"].startswith("Measured reaction enthalpy 0.0\u00a0kJ/mol differs "
                                      "from the computed ")
    threshold = (f"{DEFAULT.enthalpy_mismatch_fraction * 100:g}\u00a0% or "
                 f"{DEFAULT.enthalpy_mismatch_kJ_mol:g}\u00a0kJ/mol")
    assert f"kJ/mol (over ten times the measured value; threshold {threshold})" \
        in finding["text"]
