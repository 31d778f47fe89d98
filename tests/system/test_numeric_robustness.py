"""Numeric edge cases: no NaN or inf in the assessment JSON or the pages; warnings say why.

Cases: a phase change across its boiling point (ΔG° ≈ 0 inside the window), an
isomerisation with ΔG° near zero, a combustion at 3000-8000 K (past the data) and at
20-100 K (ln K of several hundred: K itself over- or underflows a float), a
window past the data range, and charges of 1 mg and 1e6 kg.
"""
from __future__ import annotations

import json
import math
import re
from pathlib import Path

import pytest

from dossier.assess.evaluate import assess_case
from dossier.casefile.load import parse_case_text
from dossier.library.lookup import Library

CHARGE = """
[charge]
basis = "{basis}"
amount = "{amount}"
mass = "{mass}"
cp = "4.2 kJ/(kg*K)"
process_temperature = "{tp}"
accumulation = "100 %"
"""

CASES = {
    "boiling": ("H2O(l) -> H2O(g)", "360 K", "390 K", None),
    "isomerisation": ("n-butane(g) <=> isobutane(g)", "250 K", "1200 K", None),
    "combustion-hot": ("CH4(g) + 2 O2(g) -> CO2(g) + 2 H2O(g)", "3000 K", "8000 K", None),
    "combustion-cold": ("CH4(g) + 2 O2(g) -> CO2(g) + 2 H2O(g)", "20 K", "100 K", None),
    "one-milligram": ("H2(g) + 1/2 O2(g) -> H2O(l)", "20 degC", "80 degC",
                      ("H2(g)", "1 mg", "1 mg", "25 degC")),
    "a-million-kg": ("H2(g) + 1/2 O2(g) -> H2O(l)", "20 degC", "80 degC",
                     ("H2(g)", "1e6 kg", "1e7 kg", "25 degC")),
}


def case_text(name: str) -> str:
    reaction, lo, hi, charge = CASES[name]
    text = (f'+++\ntitle = "Numeric edge: {name}"\nrevision = 1\nstatus = "draft"\n'
            f'reaction = "{reaction}"\ntemperature = ["{lo}", "{hi}"]\n')
    if charge:
        basis, amount, mass, tp = charge
        text += CHARGE.format(basis=basis, amount=amount, mass=mass, tp=tp)
    return text + "+++\n\nNumeric edge case.\n"


@pytest.fixture(scope="module")
def library():
    return Library.default()


@pytest.fixture(scope="module")
def assessments(library):
    return {n: assess_case(parse_case_text(case_text(n), f"{n}.md"), library) for n in CASES}


@pytest.mark.parametrize("name", list(CASES))
def test_assessment_json_is_finite(assessments, name):
    data = assessments[name].to_dict()
    json.dumps(data, allow_nan=False)  # raises ValueError on NaN or inf
    rows = data["thermodynamics"]["profile"] if "thermodynamics" in data else None
    assert rows is None or all(r["lnK"] is not None for r in rows)


def test_boiling_point_crossover_is_found_and_the_phases_are_warned(assessments):
    a = assessments["boiling"]
    # ΔG° of H2O(l) -> H2O(g) changes sign near 373 K (normal boiling point; common
    # practice, no source needed beyond the definition of the standard state)
    crossings = [c.T for c in a.thermo.crossovers_in_window]
    assert len(crossings) == 1 and 365 < crossings[0] < 380
    assert a.thermo.favourable == "partly"
    # Tsat(1 bar) = 372.756 K (IAPWS-95, chemicals.iapws), to 0.1 K by the number policy
    assert any(w.startswith("H2O(l): at 1\u00a0bar it boils at 372.8\u00a0K") for w in a.warnings)


def test_cold_combustion_ln_k_beyond_float_range_stays_finite(assessments):
    a = assessments["combustion-cold"]
    lnk = [r.lnK for r in a.thermo.profile]
    assert max(lnk) > 709  # exp(709.8) is the largest double: K itself would overflow
    assert all(math.isfinite(v) for v in lnk)
    assert all(r.conversion == 1.0 or math.isfinite(r.conversion) for r in a.thermo.profile)
    assert any("extrapolated" in w for w in a.warnings)


def test_hot_window_beyond_the_data_says_extrapolated(assessments):
    a = assessments["combustion-hot"]
    assert any(r.extrapolated for r in a.thermo.profile)
    # temperatures of a range to 0.1 K, an en dash, a no-break space before the unit
    assert any("the window 3000.0–8000.0\u00a0K extends beyond it, so values there are "
               "extrapolated" in w for w in a.warnings)


def test_tiny_and_huge_amounts_scale_linearly(assessments):
    small = assessments["one-milligram"].to_dict()
    big = assessments["a-million-kg"].to_dict()
    json.dumps([small, big], allow_nan=False)
    assert assessments["one-milligram"].safety is not None
    assert assessments["a-million-kg"].safety is not None


_BAD_TEXT = re.compile(r"(?<![A-Za-z])(nan|NaN|inf|Infinity|-inf)(?![A-Za-z])")


def test_pages_show_no_nan_or_inf(tmp_path):
    from dossier.build.pipeline import build_site

    cases = tmp_path / "cases"
    cases.mkdir()
    for name in CASES:
        (cases / f"{name}.md").write_text(case_text(name), encoding="utf-8")
    report = build_site(cases, tmp_path / "site", packets=False, jobs=1,
                        cache_dir=tmp_path / "cache")
    assert report.failed == () and len(report.built) == len(CASES), report.lines()
    checked = 0
    site = tmp_path / "site"
    for page in [site / "index.html", *(site / "cases").iterdir(), *(site / "species").iterdir()]:
        if page.suffix not in (".html", ".json"):
            continue
        text = page.read_text(encoding="utf-8")
        visible = re.sub(r"<[^>]*>", " ", text) if page.suffix == ".html" else text
        hit = _BAD_TEXT.search(visible)
        assert hit is None, f"{page.name}: ...{visible[max(0, hit.start() - 60):hit.end() + 20]}..."
        checked += 1
    assert checked >= 3 * len(CASES)
