"""Loading case files: splitting, TOML, key lines, schema and validation."""
from __future__ import annotations

import dataclasses
import datetime
import tomllib
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from dossier.model.case import Case, Phase, Status, Verdict
from dossier.casefile.load import MAX_FILE_BYTES, load_case, parse_case_text
from dossier.casefile.locate import locate_keys
from dossier.casefile.schema import SCHEMA
from dossier.errors import CaseError
from paths import ROOT

ROOT = ROOT
FIXTURES = Path("tests/fixtures/cases")


@pytest.fixture(autouse=True)
def _run_from_root(monkeypatch):
    # messages show the path as given; the expected texts use paths from the root
    monkeypatch.chdir(ROOT)


def problems(name: str) -> list[str]:
    with pytest.raises(CaseError) as info:
        load_case(FIXTURES / name)
    return [str(p) for p in info.value.problems]


# --- valid cases ---------------------------------------------------------------

def test_full_case_values():
    case = load_case(FIXTURES / "full.md")
    assert case.id == "full"
    assert case.path == FIXTURES / "full.md"
    assert case.title == "Hydrogenation of the nitro intermediate, 2 m3 vessel"
    assert case.revision == 3
    assert case.status is Status.SUBMITTED
    assert case.owner == "Process development, building 7"
    assert case.gate == "pilot"
    assert case.meeting == datetime.date(2026, 11, 24)
    assert case.reaction == "C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)"
    # fixture window 40..80 degC; 0 degC = 273.15 K (BIPM SI Brochure, 9th ed. 2019, sec. 2.3.1)
    assert case.window == pytest.approx((313.15, 353.15), rel=1e-12)
    assert case.pressure == pytest.approx(5.0e5)  # fixture "5 bar"; 1 bar = 1e5 Pa (BIPM SI Brochure, 8th ed. 2006)
    assert case.inerts == (("N2(g)", 0.5),)       # fixture "0.5 mol" per mol of basis
    assert case.format_version == 1

    ch = case.charge
    assert ch.basis == "C6H5NO2(l)"
    assert (ch.amount_kind, ch.amount) == ("mass", 120.0)    # fixture "120 kg"
    assert ch.mass == 950.0                                   # fixture "950 kg"
    assert ch.cp == pytest.approx(1900.0)                    # fixture "1.9 kJ/(kg*K)", k = 1e3 (SI prefix)
    assert ch.process_temperature == pytest.approx(333.15)   # fixture "60 degC", 0 degC = 273.15 K (BIPM SI Brochure, 9th ed.)
    assert ch.accumulation == pytest.approx(0.35)            # fixture "35 %", % = 0.01 (common practice, no source)
    assert ch.feed_time == pytest.approx(14400.0)            # fixture "4 h", 1 h = 3600 s (BIPM SI Brochure, 9th ed., Table 8)

    v = case.vessel
    assert v.mtt == pytest.approx(373.15)                    # fixture "100 degC", 0 degC = 273.15 K (BIPM SI Brochure, 9th ed.)
    assert v.free_volume == pytest.approx(0.8)               # fixture "0.8 m3"
    assert v.design_pressure == pytest.approx(6.0e5)         # fixture "6 bar", 1 bar = 1e5 Pa (BIPM SI Brochure, 8th ed.)
    assert v.cooling_ua == pytest.approx(2500.0)             # fixture "2.5 kW/K", k = 1e3 (SI prefix)
    assert v.coolant_temperature == pytest.approx(288.15)    # fixture "15 degC", 0 degC = 273.15 K (BIPM SI Brochure, 9th ed.)

    d = case.decomposition
    assert d.energy == pytest.approx(420000.0)               # fixture "420 J/g", 1 kg = 1000 g
    assert d.onset == pytest.approx(488.15)                  # fixture "215 degC", 0 degC = 273.15 K (BIPM SI Brochure, 9th ed.)
    assert d.td24 == pytest.approx(438.15)                   # fixture "165 degC", same
    assert d.activation_energy == pytest.approx(95000.0)     # fixture "95 kJ/mol", k = 1e3 (SI prefix)
    assert d.rate_temperature == pytest.approx(473.15)       # fixture "200 degC", 0 degC = 273.15 K (BIPM SI Brochure, 9th ed.)
    assert d.rate_power == pytest.approx(8.0)                # fixture "8 W/kg"

    m = case.measured
    assert m.reaction_enthalpy == pytest.approx(-540000.0)   # fixture "-540 kJ/mol", k = 1e3 (SI prefix)
    assert m.method == "isothermal reaction calorimetry, 1 L scale"
    assert m.uncertainty is None

    (sp,) = case.species
    assert (sp.name, sp.formula, sp.phase) == ("intermediate B", "C8H9NO2", Phase.LIQUID)
    assert sp.hf == pytest.approx(-310000.0)                 # fixture "-310 kJ/mol", k = 1e3 (SI prefix)
    assert sp.s == pytest.approx(250.0)                      # fixture "250 J/(mol*K)"
    assert sp.cp == pytest.approx(290.0)                     # fixture "290 J/(mol*K)"
    assert sp.source == "estimate by group additivity"
    assert sp.uncertainty == (("hf", 15000.0),)              # fixture "15 kJ/mol", k = 1e3 (SI prefix)
    assert sp.smiles is None and sp.t_range is None

    (rv,) = case.reviews
    assert (rv.name, rv.role) == ("R. Example", "process safety")
    assert rv.date == datetime.date(2026, 11, 20)
    assert rv.verdict is Verdict.ACCEPTED_WITH_CONDITIONS
    assert rv.conditions == "Feed interlocked on cooling water flow."
    assert rv.digest is None

    assert case.narrative == "\nNarrative in Markdown ...\n"
    assert case.narrative_line == 58


def test_full_case_key_lines():
    case = load_case(FIXTURES / "full.md")
    expected = {
        "title": 2, "revision": 3, "pressure": 11, "temperature": 10,
        "temperature[2]": 10, "inerts": 12, "inerts.N2(g)": 12, "charge": 14,
        "charge.cp": 18, "vessel.mtt": 24, "decomposition.rate": 35,
        "decomposition.rate.power": 35, "measured.method": 39, "species": 41,
        "species[1]": 41, "species[1].hf": 45, "species[1].uncertainty.hf": 49,
        "review[1]": 51, "review[1].verdict": 55,
    }
    assert {k: case.header_lines[k] for k in expected} == expected
    assert case.line_of("charge.cp") == 18
    assert case.line_of("vessel.not_there") == 23   # falls back to the [vessel] line
    assert case.line_of("nothing") is None


def test_minimal_case_defaults():
    case = load_case(FIXTURES / "minimal.md")
    assert case.status is Status.DRAFT
    # default pressure 1 bar = standard pressure p° (IUPAC; 1 bar = 1e5 Pa, BIPM SI Brochure, 8th ed.)
    assert case.pressure == 1.0e5
    assert case.inerts == () and case.species == () and case.reviews == ()
    assert case.charge is None and case.vessel is None
    assert case.decomposition is None and case.measured is None
    assert case.owner is None and case.gate is None and case.meeting is None
    assert case.narrative == ""


def test_case_is_frozen_and_hashable():
    case = load_case(FIXTURES / "full.md")
    with pytest.raises(dataclasses.FrozenInstanceError):
        case.title = "changed"  # type: ignore[misc]
    with pytest.raises(dataclasses.FrozenInstanceError):
        case.charge.mass = 1.0  # type: ignore[misc]
    with pytest.raises(TypeError):
        case.header_lines["title"] = 5  # type: ignore[index]
    assert hash(case) == hash(load_case(FIXTURES / "full.md"))
    assert case == load_case(FIXTURES / "full.md")


def test_amount_in_moles_and_optional_extras():
    text = (FIXTURES / "full.md").read_text(encoding="utf-8")
    text = text.replace('amount = "120 kg"', 'amount = "0.975 kmol"')
    text = text.replace('uncertainty = { hf = "15 kJ/mol" }',
                        'uncertainty = { hf = "15 kJ/mol", cp = "20 J/(mol*K)" }\n'
                        'smiles = "CC(=O)Nc1ccccc1"\nt_range = ["250 K", "400 K"]')
    case = parse_case_text(text, "cases/x.md")
    assert (case.charge.amount_kind, case.charge.amount) == ("amount", 975.0)  # "0.975 kmol", k = 1e3
    assert case.species[0].uncertainty == (("hf", 15000.0), ("cp", 20.0))     # as written, k = 1e3
    assert case.species[0].smiles == "CC(=O)Nc1ccccc1"
    assert case.species[0].t_range == (250.0, 400.0)                           # as written, in K
    assert case.id == "x"


def test_crlf_and_bom_are_accepted():
    text = (FIXTURES / "full.md").read_text(encoding="utf-8")
    case = parse_case_text("\ufeff" + text.replace("\n", "\r\n"), "cases/crlf.md")
    assert case.header_lines["charge.cp"] == 18
    assert case.charge.cp == pytest.approx(1900.0)   # "1.9 kJ/(kg*K)", k = 1e3 (SI prefix)
    assert case.narrative == "\r\nNarrative in Markdown ...\r\n"


# --- error reports, one fixture per quirk ----------------------------------------

def test_bare_number():
    assert problems("bare_number.md") == [
        "tests/fixtures/cases/bare_number.md:9: key 'pressure': expected a pressure "
        "with a unit, like '5 bar'; got 5"]


def test_unknown_key_did_you_mean():
    assert problems("unknown_key.md") == [
        "tests/fixtures/cases/unknown_key.md:10: key 'vessel.design_presure': "
        "unknown key; did you mean 'design_pressure'?"]


def test_top_level_key_below_a_table():
    assert problems("misplaced_key.md") == [
        "tests/fixtures/cases/misplaced_key.md:1: key 'temperature': required key is "
        "missing; add a line like: temperature = [\"40 degC\", \"80 degC\"]",
        "tests/fixtures/cases/misplaced_key.md:9: key 'vessel.temperature': unknown "
        "key; 'temperature' is a top-level key: move it above the first [table] line, "
        "or it belongs to the table above it"]


def test_wrong_dimension():
    assert problems("wrong_dimension.md") == [
        "tests/fixtures/cases/wrong_dimension.md:12: key 'charge.cp': expected a "
        "specific heat capacity, like '1.9 kJ/(kg*K)'; got '1.9 kJ/kg', which is an "
        "energy per mass"]


def test_several_errors_all_reported_sorted_by_line():
    found = problems("several_errors.md")
    f = "tests/fixtures/cases/several_errors.md"
    assert found == [
        f"{f}:3: key 'revision': expected a positive whole number, like 1; got 0",
        f"{f}:4: key 'status': expected one of draft, submitted, accepted, "
        "accepted-with-conditions, declined, withdrawn; got 'aproved'",
        f"{f}:6: key 'temperature': expected the low temperature first and below the "
        "high one, like [\"40 degC\", \"80 degC\"]; got '450 degC' to '350 degC'",
        f"{f}:7: key 'pressure': expected a pressure, like '5 bar'; got '5 kg', which "
        "is a mass",
        f"{f}:15: key 'charge.accumulation': expected a fraction between 0 % and "
        "100 %, like '35 %'; got '135 %'",
        f"{f}:16: key 'charge.pressure': unknown key; 'pressure' is a top-level key: "
        "move it above the first [table] line, or it belongs to the table above it",
        f"{f}:21: key 'review[1].date': expected a date without quotes, like "
        "2026-11-20; got '2026-11-20'",
        f"{f}:22: key 'review[1].verdict': a verdict 'accepted-with-conditions' needs "
        "the conditions: add a line like: conditions = \"...\"",
    ]


def test_missing_required_keys():
    f = "tests/fixtures/cases/missing_required.md"
    assert problems("missing_required.md") == [
        f"{f}:1: key 'revision': required key is missing; add a line like: revision = 1",
        f"{f}:1: key 'reaction': required key is missing; add a line like: reaction = "
        "\"C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)\"",
        f"{f}:1: key 'temperature': required key is missing; add a line like: "
        "temperature = [\"40 degC\", \"80 degC\"]",
        f"{f}:5: key 'charge.mass': required key is missing in [charge]; add a line "
        "like: mass = \"950 kg\"",
        f"{f}:5: key 'charge.cp': required key is missing in [charge]; add a line like: "
        "cp = \"1.9 kJ/(kg*K)\"",
        f"{f}:5: key 'charge.process_temperature': required key is missing in [charge]; "
        "add a line like: process_temperature = \"60 degC\"",
        f"{f}:5: key 'charge.accumulation': required key is missing in [charge]; add a "
        "line like: accumulation = \"35 %\"",
    ]


def test_missing_front_matter():
    assert problems("no_front_matter.md") == [
        "tests/fixtures/cases/no_front_matter.md:1: the first line must be '+++', which "
        "opens the TOML header; got '# Hydrogenation'"]


def test_yaml_front_matter_gets_a_hint():
    assert problems("yaml_front_matter.md") == [
        "tests/fixtures/cases/yaml_front_matter.md:1: the first line must be '+++', "
        "which opens the TOML header; got '---' (this looks like YAML front matter: "
        "case files use a TOML header between two lines '+++')"]


def test_unclosed_front_matter():
    assert problems("unclosed.md") == [
        "tests/fixtures/cases/unclosed.md:1: the header opened on line 1 is never "
        "closed: add a line '+++' after the last header key"]


def test_toml_syntax_error_on_the_file_line():
    assert problems("toml_syntax.md") == [
        "tests/fixtures/cases/toml_syntax.md:7: TOML syntax error at column 14: "
        "Expected newline or end of document after a statement; quantities are text "
        "in quotes, like pressure = \"5 bar\""]


@pytest.mark.parametrize("text, expected", [
    ('+++\ntitle = "unterminated\n+++\n',
     "cases/x.md:2: TOML syntax error at column 22: Illegal character '\\n'"),
    ('+++\ntitle = """unterminated\n+++\n',
     "cases/x.md:3: TOML syntax error: Unterminated string (the header ends here)"),
    ('+++\na = [1,\n+++\n',
     "cases/x.md:3: TOML syntax error: Invalid value (the header ends here)"),
])
def test_toml_errors_at_the_end_of_the_header(text, expected):
    with pytest.raises(CaseError) as info:
        parse_case_text(text, "cases/x.md")
    assert str(info.value) == expected


def test_bad_status():
    assert problems("bad_status.md") == [
        "tests/fixtures/cases/bad_status.md:4: key 'status': expected one of draft, "
        "submitted, accepted, accepted-with-conditions, declined, withdrawn; got "
        "'Accepted'; did you mean 'accepted'?"]


def test_bad_date():
    assert problems("bad_date.md") == [
        "tests/fixtures/cases/bad_date.md:11: TOML syntax error at column 12: Expected "
        "newline or end of document after a statement; write a valid date as "
        "YYYY-MM-DD without quotes, like 2026-11-20"]


def test_quoted_date_and_date_with_time():
    assert problems("quoted_date.md") == [
        "tests/fixtures/cases/quoted_date.md:7: key 'meeting': expected a date without "
        "a time of day, like 2026-11-20; got 2026-11-24T09:00:00",
        "tests/fixtures/cases/quoted_date.md:12: key 'review[1].date': expected a date "
        "without quotes, like 2026-11-20; got '2026-11-20'"]


def test_keys_inside_inline_tables_and_multiline_arrays():
    f = "tests/fixtures/cases/inline_tables.md"
    assert problems("inline_tables.md") == [
        f"{f}:8: key 'temperature[2]': unknown unit 'degc' in '80 degc'; expected a "
        "temperature, like '25 degC'; did you mean 'degC'?",
        f"{f}:10: key 'inerts.Ar(g)': expected an amount of substance with a unit, "
        "like '0.5 mol'; got 0.1",
        f"{f}:13: key 'decomposition.rate.power': expected a power per mass, like "
        "'8 W/kg'; got '8 W', which is a power",
        f"{f}:32: key 'species[2].uncertainty.s': expected a molar entropy with a "
        "unit, like '250 J/(mol*K)'; got 10",
    ]


def test_future_format_version():
    assert problems("future_format.md") == [
        "tests/fixtures/cases/future_format.md:2: key 'format': this file is written in "
        "case format 2, but this version of dossier reads format 1 only"]


def test_tables_of_the_wrong_shape():
    f = "tests/fixtures/cases/wrong_table_shape.md"
    assert problems("wrong_table_shape.md") == [
        f"{f}:8: key 'species': expected [[species]] (double brackets, one per entry); "
        "got a single table [species]",
        f"{f}:11: key 'vessel': expected one [vessel] table; got a list of 1 (write "
        "[vessel], not [[vessel]])",
    ]


@pytest.mark.parametrize("line, expected", [
    ('revision = "3"', "key 'revision': expected a positive whole number without "
                       "quotes, like 1; got '3'"),
    ("revision = 3.0", "key 'revision': expected a positive whole number, like 1; got 3.0"),
    ("revision = true", "key 'revision': expected a positive whole number, like 1; got true"),
    ('title = ""', "key 'title': expected some text, like \"Hydrogenation of the nitro "
                   "intermediate\"; got an empty string"),
    ("title = 5", "key 'title': expected text in quotes, like \"Hydrogenation of the "
                  "nitro intermediate\"; got 5"),
    ('temperature = ["40 degC"]', "key 'temperature': expected two temperatures "
                                  "[low, high], like [\"40 degC\", \"80 degC\"]; got a "
                                  "list of 1"),
    ('temperature = ["40 degC", "40 degC"]', "key 'temperature': expected the low "
                                             "temperature first and below the high one, "
                                             "like [\"40 degC\", \"80 degC\"]; got "
                                             "'40 degC' to '40 degC'"),
    ('inerts = { N2 = "1 mol" }', "key 'inerts.N2': expected a species with its phase, "
                                  "like 'N2(g)'"),
    ('Title = "x"', "key 'Title': unknown key; did you mean 'title'?"),
    ('pressure = "0.5 bar"\npressure_unit = "x"',
     "key 'pressure_unit': unknown key; did you mean 'pressure'?"),
])
def test_single_line_mistakes(line, expected):
    base = ('+++\ntitle = "t"\nrevision = 1\nstatus = "draft"\nreaction = "A(g) -> B(g)"\n'
            'temperature = ["20 degC", "30 degC"]\n')
    if line.split("=")[0].strip() in {"title", "revision", "temperature"}:
        key = line.split("=")[0].strip()
        base = "\n".join(l for l in base.split("\n") if not l.startswith(key + " "))
        base += "\n"
    with pytest.raises(CaseError) as info:
        parse_case_text(base + line + "\n+++\n", "cases/x.md")
    assert [str(p).split(": ", 1)[1] for p in info.value.problems] == [expected]


def test_negative_decomposition_energy_is_rejected():
    text = (FIXTURES / "full.md").read_text(encoding="utf-8")
    text = text.replace('energy = "420 J/g"', 'energy = "-420 J/g"')
    with pytest.raises(CaseError) as info:
        parse_case_text(text, "cases/x.md")
    assert [str(p) for p in info.value.problems] == [
        "cases/x.md:31: key 'decomposition.energy': expected an energy per mass of zero "
        "or more (the heat released, as a positive number), like \"420 J/g\"; got "
        "'-420 J/g'"]


def test_duplicate_species_names():
    text = (FIXTURES / "full.md").read_text(encoding="utf-8")
    block = text[text.index("[[species]]"):text.index("[[review]]")]
    text = text.replace(block, block + block)
    with pytest.raises(CaseError) as info:
        parse_case_text(text, "cases/x.md")
    assert [str(p) for p in info.value.problems] == [
        "cases/x.md:52: key 'species[2].name': the same name as species[1]; each "
        "[[species]] needs its own name"]


# --- hostile input ---------------------------------------------------------------

def test_not_utf8_names_byte_and_line(tmp_path):
    path = tmp_path / "latin1.md"
    path.write_bytes(b'+++\ntitle = "caf\xe9"\n+++\n')
    with pytest.raises(CaseError) as info:
        load_case(path)
    (p,) = info.value.problems
    assert p.line == 2
    assert p.message == ("the file is not valid UTF-8: byte 16 (0xe9) cannot be "
                         "decoded; save the file as UTF-8")


def test_file_too_large(tmp_path):
    path = tmp_path / "huge.md"
    path.write_bytes(b"+++\n" + b"#" * MAX_FILE_BYTES + b"\n+++\n")
    with pytest.raises(CaseError) as info:
        load_case(path)
    assert info.value.problems[0].message == (
        "the file is larger than 5 MB; a case file is a few kilobytes")
    with pytest.raises(CaseError):
        parse_case_text("+++\n" + "#" * MAX_FILE_BYTES + "\n+++\n", "cases/x.md")


def test_missing_file():
    with pytest.raises(CaseError) as info:
        load_case(FIXTURES / "no_such_case.md")
    assert str(info.value) == ("tests/fixtures/cases/no_such_case.md: cannot read the "
                               "case file: No such file or directory")


def test_deep_nesting_is_a_case_error():
    with pytest.raises(CaseError) as info:
        parse_case_text("+++\na = " + "[" * 5000 + "\n+++\n", "cases/x.md")
    assert info.value.problems[0].line is not None


def test_empty_file():
    with pytest.raises(CaseError) as info:
        parse_case_text("", "cases/x.md")
    assert str(info.value) == ("cases/x.md:1: the file is empty; a case starts with a "
                               "line '+++', then the TOML header")


_FULL = (ROOT / FIXTURES / "full.md").read_text(encoding="utf-8")


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.one_of(
    st.text(max_size=200),
    st.text(max_size=200).map(lambda t: "+++\n" + t + "\n+++\n"),
    st.lists(st.sampled_from(_FULL.split("\n")), max_size=40).map("\n".join),
    st.tuples(st.integers(0, len(_FULL)), st.integers(0, 30), st.text(max_size=8)).map(
        lambda t: _FULL[:t[0]] + t[2] + _FULL[t[0] + t[1]:]),
))
def test_random_text_raises_only_case_error(text):
    try:
        case = parse_case_text(text, "cases/fuzz.md")
    except CaseError as err:
        assert err.problems
        assert all(p.file == "cases/fuzz.md" for p in err.problems)
        lines = [p.line for p in err.problems]
        assert None not in lines and lines == sorted(lines)
    else:
        assert isinstance(case, Case)


# --- the locator on its own --------------------------------------------------------

def test_locate_keys_handles_strings_dotted_and_nested_keys():
    header = "\n".join([
        'a = """multi',                  # 1
        '[not a table] x = 1',           # 2
        '"""',                           # 3
        'b.c = 1',                       # 4
        '"quoted.key" = { d = [1,',      # 5  (inline table; array continues)
        '  2] }',                        # 6
        '[[t]]',                         # 7
        "e = 'say \"hi\" [' # [x]",      # 8
        '[t.sub]',                       # 9
        'f = 1',                         # 10
        '[[t]]',                         # 11
        'g = """x"""""',                 # 12  (content ends with two quotes)
        'h = 2',                         # 13
    ])
    assert tomllib.loads(header)["t"][1]["g"] == 'x""'   # the locator expects valid TOML
    lines = locate_keys(header, first_line=1)
    assert lines["a"] == 1 and "x" not in lines
    assert lines["b.c"] == 4 and lines["b"] == 4
    assert lines["quoted.key.d"] == 5 and lines["quoted.key.d[2]"] == 6
    assert lines["t[1]"] == 7 and lines["t[1].e"] == 8
    assert lines["t[1].sub.f"] == 10
    assert lines["t[2]"] == 11 and lines["t[2].h"] == 13


def test_schema_has_no_duplicate_keys():
    def walk(spec):
        names = spec.names
        assert len(names) == len(set(names)), spec.title
        for f in spec.fields:
            if f.table is not None:
                walk(f.table)
    walk(SCHEMA)
    assert {"title", "revision", "status", "reaction", "temperature"} == {
        f.name for f in SCHEMA.fields if f.required}
