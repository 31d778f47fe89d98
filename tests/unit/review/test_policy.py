"""A board's policy file: parsed with every key checked and located, part of every
integrity record, and used alike by the build's assessment, `evaluate`, `check`,
`sign` and `verify` (issue 13, part 5)."""
from __future__ import annotations

import json
import math
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from dossier.assess.evaluate import evaluate
from dossier.build.assessing import assess_inputs
from dossier.casefile.load import parse_source, read_source
from dossier.engine.settings import DEFAULT, DEFAULT_SOURCES, POLICY_KEYS
from dossier.errors import CaseError
from dossier.library.lookup import Library
from dossier.review.digest import digest_for_case, integrity_of
from dossier.review.inputs import read_case_inputs
from dossier.review.policy import POLICY_FILE, parse_policy
from paths import CASES as DEMO_CASES

LIB = Library.default()
WHERE = Path("cases") / POLICY_FILE

#: An invented board (demo scenario: Halvermoor Fine Chemicals, Orrowby Works).
STRICT = '''policy = "Orrowby Works safety board: criteria of March 2026 (invented)"

[severity_bands_K]
limits = [20, 100]
source = "Board minute 2026-03, item 4 (invented)"

[criticality_findings]
value = { 3 = "critical" }
source = "Board minute 2026-03, item 5 (invented)"
'''


def parse(text: str):
    return parse_policy(WHERE, text.encode())


def problems(text: str) -> list[str]:
    with pytest.raises(CaseError) as err:
        parse(text)
    return [str(p) for p in err.value.problems]


# --------------------------------------------------------------------------
# The file

def test_a_policy_changes_only_what_it_names_and_records_its_sources():
    s = parse(STRICT)
    assert s.severity_bands_K == (("low", -math.inf, 20.0), ("medium", 20.0, 100.0),
                                  ("high", 100.0, math.inf))
    assert dict(s.criticality_findings) == {1: "information", 2: "caution", 3: "critical",
                                            4: "critical", 5: "critical"}
    assert s.probability_bands_h == DEFAULT.probability_bands_h
    assert s.policy == "Orrowby Works safety board: criteria of March 2026 (invented)"
    assert s.source_of("severity_bands_K") == (
        "Orrowby Works safety board: criteria of March 2026 (invented): "
        "Board minute 2026-03, item 4 (invented)")
    assert s.source_of("probability_bands_h") == DEFAULT_SOURCES["probability_bands_h"]
    record = s.record()
    assert record["policy_sources"] == [["severity_bands_K", "Board minute 2026-03, item 4 (invented)"],
                                        ["criticality_findings", "Board minute 2026-03, item 5 (invented)"]]
    assert record != DEFAULT.record()


def test_every_setting_has_a_citation_and_every_policy_key_is_a_setting():
    record = DEFAULT.record()
    for name in (k for k in record if k not in ("standard_pressure_Pa", "reference_temperature_K",
                                                 "gas_constant_J_per_molK")):
        assert DEFAULT_SOURCES.get(name, "").strip(), name
    assert set(POLICY_KEYS) <= set(record)


def test_problems_are_located_and_say_what_was_expected():
    text = ('policy = ""\n'                        # 1
            '[severity_band_K]\n'                  # 2
            'limits = [30, 150]\n'                 # 3
            '[grid_steps_K]\n'                     # 4
            'value = 1\n'                          # 5
            '[probability_bands_h]\n'              # 6
            'limits = [24, 8]\n'                   # 7
            'source = "x"\n'                       # 8
            '[enthalpy_mismatch_fraction]\n'       # 9
            'value = 1.5\n'                        # 10
            '[criticality_findings]\n'             # 11
            'value = { 7 = "critical" }\n'         # 12
            'source = "s"\n')                      # 13
    found = problems(text)
    f = "cases/board-policy.toml"
    assert found[0] == (f"{f}:1: key 'policy': expected policy = \"...\": the name of the "
                        "board's policy (who adopted it, and when)")
    assert found[1].startswith(f"{f}:2: key 'severity_band_K': unknown key 'severity_band_K'; "
                               "did you mean 'severity_bands_K'?")
    assert found[2].startswith(f"{f}:4: key 'grid_steps_K': 'grid_steps_K' is a method "
                               "setting, not one of the board's thresholds or bands")
    assert found[3] == (f"{f}:7: key 'probability_bands_h.limits': expected two increasing "
                        "numbers of zero or more, the limits between high, medium, low, "
                        "e.g. [8, 24]")
    assert found[4] == (f"{f}:9: key 'enthalpy_mismatch_fraction.source': expected source = "
                        "\"...\": where the board's value comes from (a standard, a report, "
                        "a minute of the board)")
    assert found[5] == (f"{f}:10: key 'enthalpy_mismatch_fraction.value': expected a "
                        "fraction above 0 and at most 1 (e.g. 0.2 for 20 %)")
    assert found[6] == (f"{f}:12: key 'criticality_findings.value': unknown level '7': "
                        "expected one of 1, 2, 3, 4, 5")
    assert len(found) == 7


@pytest.mark.parametrize("text,expected", [
    (b"policy = [\n", "cases/board-policy.toml: TOML syntax error: "),
    (b'policy = "caf\xe9"\n', "cases/board-policy.toml:1: the file is not valid UTF-8: byte 13 "
                             "(0xe9) cannot be decoded; save the file as UTF-8"),
    (b'policy = "p"\n[td24_time_s]\nvalue = -5\nsource = "s"\n',
     "cases/board-policy.toml:3: key 'td24_time_s.value': expected a number above zero, in "
     "the unit the key's name ends with"),
    (b'policy = "p"\n[limit_findings]\nvalue = { mtsr-above-mtt = "severe" }\nsource = "s"\n',
     "cases/board-policy.toml:3: key 'limit_findings.value': level 'mtsr-above-mtt': expected "
     "one of information, caution, warning, critical, not 'severe'"),
])
def test_bad_files_are_one_located_problem(text, expected):
    with pytest.raises(CaseError) as err:
        parse_policy(WHERE, text)
    assert str(err.value.problems[0]).startswith(expected)


# --------------------------------------------------------------------------
# The policy in force: findings, integrity record, and every command alike

@pytest.fixture()
def folder(tmp_path):
    shutil.copy(DEMO_CASES / "benzene-nitration.md", tmp_path / "benzene-nitration.md")
    return tmp_path


def test_the_policy_file_changes_the_findings_and_the_integrity_record(folder):
    case_file = folder / "benzene-nitration.md"
    base = assess_inputs(read_case_inputs(case_file), LIB)
    crit = next(f for f in base.assessment.findings if f.rule == "criticality-class")
    assert base.assessment.safety.criticality_class == 3 and crit.severity == "warning"
    (folder / POLICY_FILE).write_text(STRICT, encoding="utf-8")
    inputs = read_case_inputs(case_file)
    assert "policy" in inputs.key_parts()  # its bytes are part of the case's cache key
    strict = assess_inputs(inputs, LIB)
    crit = next(f for f in strict.assessment.findings if f.rule == "criticality-class")
    assert crit.severity == "critical"          # the board's class-3 severity
    assert strict.integrity.digest != base.integrity.digest
    # sign and verify digest the case through digest_for_case: the same record
    record, _rev, _id = digest_for_case(case_file)
    assert record.digest == strict.integrity.digest
    source = read_source(case_file)
    by_hand = integrity_of(source, evaluate(parse_source(source), LIB, settings=parse(STRICT)))
    assert by_hand.digest == record.digest


def test_a_bad_policy_fails_the_case_with_the_policy_file_named(folder):
    (folder / POLICY_FILE).write_text('policy = "p"\n[severity_bands_K]\nlimits = [1]\nsource = "s"\n',
                                      encoding="utf-8")
    failed = assess_inputs(read_case_inputs(folder / "benzene-nitration.md"), LIB)
    assert failed.problems[0].startswith(f"{folder / POLICY_FILE}:3: key 'severity_bands_K.limits'")


def _cli(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "dossier.cli.main", *args],
                          capture_output=True, text=True, timeout=120)


def test_evaluate_and_check_use_the_policy_of_the_cases_folder(folder):
    case_file = str(folder / "benzene-nitration.md")
    before = json.loads(_cli("evaluate", "--json", case_file).stdout)
    (folder / POLICY_FILE).write_text(STRICT, encoding="utf-8")
    after = json.loads(_cli("evaluate", "--json", case_file).stdout)
    sev = {f["rule"]: f["severity"] for f in before["findings"]}
    assert sev["criticality-class"] == "warning"
    assert {f["rule"]: f["severity"] for f in after["findings"]}["criticality-class"] == "critical"
    (folder / POLICY_FILE).write_text('policy = "p"\n[un_onset_K]\nvalue = "hot"\nsource = "s"\n',
                                      encoding="utf-8")
    checked = _cli("check", str(folder))
    assert checked.returncode == 2
    assert (f"error: {folder / POLICY_FILE}:3: key 'un_onset_K.value': expected a number "
            "above zero, in the unit the key's name ends with") in checked.stderr
