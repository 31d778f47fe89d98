"""CSV export (dossier.render.export): every table parsed back with the csv module and
compared with the view the pages are made from; the register's CSV likewise; and the
site publishes and links them.  The case is the readiness fixture (an invented
demonstration case); the numbers compared are the assessment's own, no outside values.
"""
from __future__ import annotations

import csv
import io
import re
from pathlib import Path

import pytest

from dossier.build.assessing import assess_file
from dossier.build.outputs import light_view, render_site
from dossier.library.lookup import Library
from dossier.render.export import (CASE_TABLES, REGISTER_HEADS, case_csv_files, cell,
                                   csv_bytes, register_csv_files, register_table)
from dossier.render.export import Table

FIXTURE = Path(__file__).parents[2] / "fixtures" / "readiness" / "ready.md"


def approx(x: float):
    """A cell keeps 15 significant digits of the view's float."""
    return pytest.approx(x, rel=1e-14)


@pytest.fixture(scope="module")
def assessed(tmp_path_factory):
    folder = tmp_path_factory.mktemp("cases")
    text = FIXTURE.read_text(encoding="utf-8")
    (folder / "t-901.md").write_text(text, encoding="utf-8")
    (folder / "t-902.md").write_text(text.replace('status = "submitted"', 'status = "accepted"'),
                                     encoding="utf-8")
    lib = Library.default()
    return [assess_file(folder / f"{n}.md", lib) for n in ("t-901", "t-902")]


@pytest.fixture(scope="module")
def views(assessed):
    return [light_view(a, a.case.id, ()) for a in assessed]


def parse(data: bytes) -> list[dict[str, str]]:
    assert data.startswith("\ufeff".encode("utf-8"))  # so spreadsheets read it as UTF-8
    text = data.decode("utf-8-sig")
    assert text.endswith("\r\n")  # RFC 4180 line ends
    return list(csv.DictReader(io.StringIO(text, newline="")))


@pytest.mark.parametrize("value, text", [
    (None, ""), (True, "yes"), (False, "no"), (373.15, "373.15"), (1e-7, "0.0000001"),
    (-0.0, "0"), (1234567.5, "1234567.5"), (-56.25, "-56.25"), (3, "3"), ("a, b", "a, b"),
    ((1.5, None, "x"), "1.5; ; x")])
def test_cells_are_plain_decimals(value, text):
    assert cell(value) == text


def test_a_cell_keeps_15_significant_digits_and_drops_conversion_noise():
    for x in (298.15, 1 / 3, -2.2250738585072014e-308, 6.02214076e23, 0.1 + 0.2):
        assert float(cell(x)) == approx(x)
        assert "e" not in cell(x).lower()
    assert cell(3800 * 1e-3) == "3.8"  # 3.8000000000000003 as a float
    assert cell(300000 * 1e-5) == "3"
    assert cell(1 / 3) == "0.333333333333333"


def test_quotes_and_commas_survive_the_round_trip():
    table = Table(("what", "text"), (("a", 'says "no", then yes'), ("b", "line\nbreak")))
    assert [list(r.values()) for r in parse(csv_bytes(table))] == [
        ["a", 'says "no", then yes'], ["b", "line\nbreak"]]


def test_the_properties_table_is_the_views_profile(views):
    v = views[0]
    rows = parse(case_csv_files(v)["cases/t-901-properties.csv"])
    profile = v.assessment.thermo.profile
    assert len(rows) == len(profile) > 2
    for row, r in zip(rows, profile):
        assert float(row["T / K"]) == approx(r.T_K)
        assert float(row["ΔrH° / (kJ/mol)"]) == approx(r.dH_kJ_mol)
        assert float(row["ΔrS° / (J/(mol·K))"]) == approx(r.dS_J_molK)
        assert float(row["ΔrG° / (kJ/mol)"]) == approx(r.dG_kJ_mol)
        assert float(row["ln K"]) == approx(r.lnK)
        assert float(row["equilibrium conversion / %"]) == approx(r.conversion * 100)
        assert row["extrapolated"] == ("yes" if r.extrapolated else "no")


def test_the_species_inputs_and_safety_tables_are_the_views(views):
    v = views[0]
    files = case_csv_files(v)
    species = parse(files["cases/t-901-species.csv"])
    assert [(r["as written"], float(r["ν"]), float(r["ΔfH°(298.15 K) / (kJ/mol)"]))
            for r in species] == [(u.key, u.nu, approx(u.hf298_kJ_mol))
                                  for u in v.assessment.species]
    (inputs,) = parse(files["cases/t-901-inputs.csv"])
    # the fixture's values as written: 200 mol, 2000 kg, 4.0 kJ/(kg*K), 10 %, MTT 100 degC
    assert inputs["amount / mol"] == "200" and inputs["amount / kg"] == ""
    assert inputs["reaction mass / kg"] == "2000"
    assert float(inputs["cp / (kJ/(kg·K))"]) == pytest.approx(4.0, rel=1e-12)
    assert float(inputs["accumulation / %"]) == pytest.approx(10.0, rel=1e-12)
    assert float(inputs["MTT / K"]) == pytest.approx(373.15, rel=1e-12)
    assert inputs["decomposition energy / (J/g)"] == ""
    assert inputs["does not apply"] == ("[decomposition]: Dilute aqueous salts below 40 degC: "
                                        "nothing in the tank decomposes.")
    (safety,) = parse(files["cases/t-901-safety.csv"])
    s = v.assessment.safety
    assert float(safety["adiabatic rise / K"]) == approx(s.adiabatic_rise_K)
    assert float(safety["MTSR / K"]) == approx(s.mtsr_K)
    assert safety["TD24 / K"] == ""  # not assessed: no [decomposition]


def test_findings_and_readiness_tables(views):
    findings = parse(case_csv_files(views[0])["cases/t-901-findings.csv"])
    assert [(r["rule"], r["severity"], r["finding"]) for r in findings] == [
        (f.rule, f.severity, f.text) for f in views[0].assessment.findings]
    assert parse(case_csv_files(views[0])["cases/t-901-readiness.csv"]) == []
    (problem,) = parse(case_csv_files(views[1])["cases/t-902-readiness.csv"])
    p = views[1].decisions.readiness.problems[0]
    assert problem == {"status": "accepted", "line": str(p.line), "key": "status",
                       "what is needed": p.message}
    assert problem["what is needed"].startswith("the status is 'accepted' but no verdict")


def test_every_case_table_is_published_even_when_empty(views):
    files = case_csv_files(views[0])
    assert sorted(files) == sorted(f"cases/t-901-{name}.csv" for name, _w, _f in CASE_TABLES)
    assert parse(files["cases/t-901-history.csv"]) == []
    assert csv.reader(io.StringIO(files["cases/t-901-history.csv"].decode("utf-8-sig"))
                      ).__next__() == ["from revision", "to revision", "kind", "what",
                                       "before", "after"]


def test_the_register_csv_has_one_row_per_case_from_the_views(views):
    rows = parse(register_csv_files(list(reversed(views)))["register.csv"])
    assert list(rows[0]) == list(REGISTER_HEADS)
    assert [r["case"] for r in rows] == ["t-901", "t-902"]  # by case id
    for row, v in zip(rows, views):
        a = v.assessment
        assert row["status"] == a.status and row["title"] == a.title
        assert float(row["ΔrH°(298.15 K) / (kJ/mol)"]) == approx(a.thermo.dH298_kJ_mol)
        assert float(row["MTSR / K"]) == approx(a.safety.mtsr_K)
        assert row["integrity digest"] == v.integrity.digest
    assert [r["ready for its status"] for r in rows] == ["yes", "no"]
    assert rows[1]["readiness problems"] == str(views[1].decisions.readiness.problems[0])
    assert register_table([]).rows == ()


def test_the_site_publishes_the_csv_files_and_links_them(assessed):
    site = render_site(assessed, packets=False)
    assert "register.csv" in site.files
    for name, _w, _f in CASE_TABLES:
        assert f"cases/t-901-{name}.csv" in site.files
    index = site.files["index.html"].decode("utf-8")
    assert 'href="register.csv"' in index
    page = site.files["cases/t-901.html"].decode("utf-8")
    linked = set(re.findall(r'href="(t-901-[a-z-]+\.csv)"', page))
    assert linked == {f"t-901-{name}.csv" for name, _w, _f in CASE_TABLES}
