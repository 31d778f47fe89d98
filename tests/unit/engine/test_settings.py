"""One settings module holds every threshold; each one is in every integrity record,
and the assessment really uses the settings it is given."""
from __future__ import annotations

import dataclasses
import math
import pytest

from dossier.assess.evaluate import evaluate
from dossier.casefile.load import parse_source, read_source
from dossier.engine.settings import DEFAULT, MethodSettings
from dossier.library.lookup import Library
from dossier.model.findings import SEVERITIES
from dossier.review.digest import integrity_of
from paths import CASES as DEMO_CASES

CASES = sorted(DEMO_CASES.glob("*.md"))
LIB = Library.default()


def _perturbed(name: str, value):
    """A different value of the same shape that an assessment can still run with:
    the first finite number of a number or band table moved, a text changed, a finding
    severity raised one step, the last decomposition product dropped."""
    if isinstance(value, bool):
        return not value
    if name == "uncertainty_coverage":  # a fraction: another coverage a board might print
        return 0.9
    if isinstance(value, int):
        return value * 2 + 1
    if isinstance(value, float):
        return value * 1.5 + 1 if math.isfinite(value) else -value
    if isinstance(value, str):
        return value + " (changed)"
    if value == ():  # the board's sources of the published defaults: none
        return (("severity_bands_K", "a board's source (changed)"),)
    if isinstance(value, tuple) and all(isinstance(v, tuple) and len(v) == 2 for v in value) \
            and all(v[1] in SEVERITIES for v in value):
        key, severity = value[0]
        raised = SEVERITIES[(SEVERITIES.index(severity) + 1) % len(SEVERITIES)]
        return ((key, raised),) + value[1:]
    if isinstance(value, tuple) and all(isinstance(v, tuple) for v in value) \
            and all(isinstance(x, str) for v in value for x in v):
        return value[:-1]
    if isinstance(value, tuple):
        for i, item in enumerate(value):
            if isinstance(item, (tuple, int, float)) and not isinstance(item, bool) and (
                    not isinstance(item, float) or math.isfinite(item)):
                if isinstance(item, tuple) and not any(
                        isinstance(x, (int, float)) and math.isfinite(x) for x in item):
                    continue
                return value[:i] + (_perturbed(name, item),) + value[i + 1:]
    raise AssertionError(f"setting {name} has a shape the test does not know: {value!r}")


FIELDS = [f.name for f in dataclasses.fields(MethodSettings)]


def test_every_setting_is_in_the_record_that_the_digest_covers():
    record = DEFAULT.record()
    assert set(FIELDS) <= set(record)
    for name in FIELDS:
        changed = dataclasses.replace(DEFAULT, **{name: _perturbed(name, getattr(DEFAULT, name))})
        assert changed.record() != record, name


@pytest.fixture(scope="module")
def demo():
    out = []
    for path in CASES:
        source = read_source(path)
        out.append((source, parse_source(source)))
    return out


def test_changing_any_setting_changes_the_integrity_record_of_every_demo_case(demo):
    assert len(demo) >= 10
    base = {s.path.name: integrity_of(s, evaluate(c, LIB)).digest for s, c in demo}
    # thresholds that the demo cases straddle keep their order when moved; the
    # record changes whether or not the findings do
    compared = 0
    for name in FIELDS:
        value = getattr(DEFAULT, name)
        settings = dataclasses.replace(DEFAULT, **{name: _perturbed(name, value)})
        for source, case in demo:
            ev = evaluate(case, LIB, settings=settings)
            assert integrity_of(source, ev).digest != base[source.path.name], (name, case.id)
            compared += 1
    assert compared == len(FIELDS) * len(demo)


def test_the_equilibrium_limit_setting_drives_the_finding(demo):
    case = next(c for s, c in demo if c.id == "methanol-loop")
    rules = [f.rule for f in evaluate(case, LIB).assessment.findings]
    assert "equilibrium-limited" in rules
    lenient = dataclasses.replace(DEFAULT, equilibrium_limited_below=0.01)
    rules = [f.rule for f in evaluate(case, LIB, settings=lenient).assessment.findings]
    assert "equilibrium-limited" not in rules


def test_the_severity_bands_drive_the_severity_and_its_finding(demo):
    case = next(c for s, c in demo if c.id == "nitro-hydrogenation")
    a = evaluate(case, LIB).assessment
    assert a.safety.severity == "high"  # ΔT_ad 294 K (hand check in tests/test_assess.py)
    wide = dataclasses.replace(DEFAULT, severity_bands_K=(
        ("low", -math.inf, 400.0), ("medium", 400.0, 800.0), ("high", 800.0, math.inf)))
    b = evaluate(case, LIB, settings=wide).assessment
    assert b.safety.severity == "low"
    text = next(f.text for f in b.findings if f.rule == "exotherm-severity")
    assert "(below 400\u00a0K low, 400–800\u00a0K medium, above 800\u00a0K high)" in text


def test_the_default_text_of_the_bands_is_unchanged():
    from dossier.engine.safety import probability_source, severity_source

    assert "(low < 50 K, medium 50-200 K, high > 200 K)" in severity_source()
    assert "(low > 24 h, medium 8-24 h, high < 8 h)" in probability_source()


def test_the_pressure_bands_drive_the_pressure_finding(demo):
    case = next(c for s, c in demo if c.id == "soda-ash-quench")
    f = next(f for f in evaluate(case, LIB).assessment.findings if f.rule == "pressure-severity")
    assert f.severity == "critical"  # 21 bar of CO2 against a 3 bar design (see the case)
    lax = dataclasses.replace(DEFAULT, pressure_severity_bands=(
        ("low", -math.inf, 50.0), ("medium", 50.0, 100.0), ("high", 100.0, math.inf)))
    rules = [f.rule for f in evaluate(case, LIB, settings=lax).assessment.findings]
    assert "pressure-severity" not in rules
