"""The generated species data file: reproducible, complete, faithful to its sources."""
from __future__ import annotations

import csv
import importlib.util
import json
import math
import sys
from importlib import resources
from pathlib import Path

import numpy as np
import pytest

from dossier.chem.formula import hill_formula, parse_formula
from dossier.chem.phases import PHASES
from dossier.errors import LibraryError
from dossier.library.datafile import check_species_data, read_species_data
from dossier.library.lookup import Library, default_library
from paths import ROOT

ROOT = ROOT
DATA = resources.files("dossier").joinpath("data/species.json")
LIB = Library.default()


def _chemicals_data(*parts: str) -> Path:
    """A data file shipped with the chemicals package, found without importing it."""
    spec = importlib.util.find_spec("chemicals")
    if spec is None or spec.origin is None:
        pytest.skip("chemicals is not installed")
    return Path(spec.origin).parent.joinpath(*parts)


def _load_builder():
    spec = importlib.util.spec_from_file_location("build_library", ROOT / "tools" / "build_library.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # dataclasses in the script look their module up
    try:
        spec.loader.exec_module(module)
    finally:
        del sys.modules[spec.name]
    return module


def test_regenerating_gives_identical_bytes(tmp_path):
    pytest.importorskip("cantera")
    pytest.importorskip("chemicals")
    builder = _load_builder()
    out = tmp_path / "species.json"
    assert builder.main(["--out", str(out)]) == 0
    # the committed file is what the generator writes today, byte for byte
    assert out.read_bytes() == DATA.read_bytes()


def test_header_carries_versions_and_citations():
    data = json.loads(DATA.read_bytes())
    assert data["format"] == 3
    assert data["generated"] == "2026-12-01"  # fixed string, not the clock
    assert LIB.version.startswith(data["library_version"] + "+")
    thermo = {"nasa-gas", "nasa-condensed", "crc", "webbook", "shomate+crc", "shomate+webbook",
              "crc-aq", "crc-aq+SH88", "crc-aq+SSWS97", "crc-aq+TS01", "crc-aq+AZ01",
              "crc-aq+TBZ13", "reference-tin"}
    phases = {k for k in data["sources"] if k.startswith(("pc-", "vp-"))}
    assert set(data["sources"]) == thermo | phases | {"allotropes-memory"}
    assert {"pc-crc-org", "pc-heos", "vp-wagner-mcgarry", "vp-perry"} <= phases
    assert "NASA Technical Memorandum 4513" in data["sources"]["nasa-gas"]["citation"]
    assert "CRC Handbook" in data["sources"]["crc"]["citation"]


def test_every_line_parses_and_agrees_with_its_lookup_entry():
    # the lazy reader checks a record when it is used; here every record is checked
    data = read_species_data(DATA.read_bytes())
    assert check_species_data(data) == len(data.lookup) == len(LIB)


@pytest.mark.parametrize("change, message", [
    (lambda raw: raw.replace(b'\n"records": [\n', b'"records": [', 1),
     "species data file is not laid out as tools/build_library.py writes it (a header, "
     "then one record per line)"),
    (lambda raw: raw.replace(b'"format": 3,', b'"format": 2,', 1),
     "species data file has format 2, this dossier reads format 3"),
    (lambda raw: raw.replace(b'\n"records": [\n', b'\n"records": [\n["extra"],\n', 1),
     "species data file: the lookup table has 2766 entries but there are 2767 records"),
])
def test_a_damaged_file_is_refused_at_load(change, message):
    with pytest.raises(LibraryError) as err:
        read_species_data(change(DATA.read_bytes()))
    assert str(err.value) == message


def test_a_record_out_of_place_is_refused_when_used():
    raw = DATA.read_bytes()
    head, records = raw.split(b'\n"records": [\n')
    lines = records.removesuffix(b"\n]\n}\n").split(b",\n")
    lines[0], lines[1] = lines[1], lines[0]  # two records swapped, lookup table unchanged
    lib = Library.from_json_bytes(head + b'\n"records": [\n' + b",\n".join(lines) + b"\n]\n}\n")
    first = next(iter(lib.ids))
    with pytest.raises(LibraryError) as err:
        lib.get(first)
    assert str(err.value).startswith(f"species data file: the line of record '{first}' holds record ")


def test_size_and_every_record_has_a_source():
    records = LIB.records
    assert len(records) >= 1000  # brief: at least 1,000 records
    citations = set(LIB.sources.values())
    assert all(r.source in citations for r in records)
    counts = {ph: sum(1 for r in records if r.phase == ph) for ph in PHASES}
    assert counts["g"] > 700 and counts["l"] > 300 and counts["s"] > 300 and counts["aq"] > 100


def test_records_are_consistent():
    seen_ids = set()
    for r in LIB.records:
        assert r.id not in seen_ids
        seen_ids.add(r.id)
        assert r.id.endswith(f"({r.phase})")
        assert r.formula == hill_formula(dict(r.elements), r.charge)
        if r.elements:
            f = parse_formula(r.formula)
            assert f.charge == r.charge
            assert r.molar_mass == pytest.approx(f.molar_mass, rel=1e-9)
        m = r.model
        assert m.t_min < m.t_max
        for value in (m.cp(298.15), m.h(298.15), m.s(298.15)):
            assert math.isfinite(value)
        pd = r.phase_data
        if pd is not None and pd.t_melt is not None and pd.t_boil is not None:
            assert pd.t_melt != pd.t_boil
        assert r.name and r.name == r.name.strip()


REQUIRED = [
    # common gases
    ("H2", "g"), ("O2", "g"), ("N2", "g"), ("NH3", "g"), ("CO2", "g"), ("CO", "g"),
    ("CH4", "g"), ("C2H6", "g"), ("C2H4", "g"), ("C3H8", "g"), ("HCl", "g"), ("NO", "g"),
    ("NO2", "g"), ("N2O", "g"), ("SO2", "g"), ("SO3", "g"), ("H2S", "g"), ("Cl2", "g"),
    ("methanol", "g"), ("ethanol", "g"), ("benzene", "g"), ("toluene", "g"),
    # water in three phases
    ("H2O", "s"), ("H2O", "l"), ("H2O", "g"),
    # inorganic solids
    ("CaCO3", "s"), ("CaO", "s"), ("NaCl", "s"), ("NaOH", "s"), ("Fe2O3", "s"),
    ("Ca(OH)2", "s"), ("KOH", "s"), ("Na2CO3", "s"), ("C", "s"), ("S", "s"), ("Fe", "s"),
    # acids and aqueous ions
    ("H2SO4", "l"), ("HNO3", "l"), ("H+", "aq"), ("OH-", "aq"), ("Na+", "aq"),
    ("Cl-", "aq"), ("NH4+", "aq"), ("SO4-2", "aq"), ("NO3-", "aq"), ("HCO3-", "aq"),
    # process solvents and organic reagents as liquids
    ("benzene", "l"), ("toluene", "l"), ("methanol", "l"), ("ethanol", "l"),
    ("acetone", "l"), ("ethyl acetate", "l"), ("acetic acid", "l"), ("nitrobenzene", "l"),
    ("aniline", "l"), ("cyclohexane", "l"), ("THF", "l"), ("dichloromethane", "l"),
    ("chloroform", "l"), ("2-propanol", "l"), ("n-hexane", "l"), ("n-heptane", "l"),
]


@pytest.mark.parametrize("label, phase", REQUIRED)
def test_required_species_are_present(label, phase):
    rec = LIB.resolve(label, phase)
    assert rec.phase == phase


def test_all_nasa_gas_records_carry_cantera_polynomials_faithfully():
    ct = pytest.importorskip("cantera")
    by_note = {}
    for sp in ct.Species.list_from_file("nasa_gas.yaml"):
        by_note[sp.name] = sp
    n = 0
    for r in LIB.records:
        if r.source != LIB.sources["nasa-gas"]:
            continue
        nasa_name = r.note.split(";")[0].removeprefix("NASA name ")
        sp = by_note[nasa_name]
        T = np.array([sp.thermo.min_temp + 1.0, 1234.5, sp.thermo.max_temp - 1.0])
        # reference: Cantera's evaluation of the same NASA TM-4513 entry
        np.testing.assert_allclose(r.model.h(T), [sp.thermo.h(t) / 1000 for t in T],
                                   rtol=1e-9, atol=1e-6)
        np.testing.assert_allclose(r.model.s(T), [sp.thermo.s(t) / 1000 for t in T], rtol=1e-9)
        n += 1
    assert n > 700


def test_janaf_water_values_used_in_tests_agree_with_the_janaf_cp_table():
    """Confirms the from-memory JANAF numbers for H2O(g) at 1000 K."""
    from scipy.integrate import quad
    from scipy.interpolate import CubicSpline

    path = _chemicals_data("Heat Capacity", "JANAF_1998_gas_Cp.json")
    T, cp = (np.array(x) for x in json.loads(path.read_text())["7732-18-5"])
    keep = T >= 200.0
    spline = CubicSpline(T[keep], cp[keep])
    dh = spline.integrate(298.15, 1000.0) / 1000.0
    ds = quad(lambda t: float(spline(t)) / t, 298.15, 1000.0)[0]
    # NIST-JANAF 4th ed. (1998), H2O ideal gas (table carried by chemicals, Cp column):
    # H(1000) − H(298.15) = 26.000 kJ/mol and S(1000) = 232.738 J/(mol K) with
    # S(298.15) = 188.834 J/(mol K) (from memory); spline quadrature of the 100 K
    # Cp grid agrees to better than 0.01
    assert dh == pytest.approx(26.000, abs=0.01)
    assert 188.834 + ds == pytest.approx(232.738, abs=0.01)


def test_atct_uncertainties_come_from_the_atct_table():
    path = _chemicals_data("Reactions", "ATcT 1.112 (g).tsv")
    with path.open(encoding="utf-8") as fh:
        rows = {r["CAS"]: r for r in csv.DictReader(fh, delimiter="\t")}
    water = LIB.get("H2O(g)")
    u = dict(water.uncertainty)["hf"]
    # ATcT 1.112 (as carried by chemicals), water gas: uncertainty column, J/mol
    assert u == float(rows["7732-18-5"]["uncertainty"])
    assert "ATcT 1.112" in water.note


def test_loading_from_bytes_gives_the_same_library():
    # (Load speed is measured in bench/library_load.py, not asserted here.)
    lib = Library.from_json_bytes(DATA.read_bytes())
    assert len(lib) == len(LIB)
    assert lib.version == LIB.version
    assert lib.resolve("water", "l").digest() == LIB.resolve("water", "l").digest()


def test_default_library_is_cached():
    assert Library.default() is Library.default() is default_library()
