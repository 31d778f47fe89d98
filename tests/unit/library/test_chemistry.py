"""The library's chemistry: phase boundaries, heat capacities of ions, reference states,
identity of formulas, and structures.

Reference libraries (test-only): the chemicals package (its tables and
correlation functions, its IAPWS-95 water), RDKit.  Published values are
named beside each number.
"""
from __future__ import annotations

import csv
import importlib.util
import math
import re
from pathlib import Path

import numpy as np
import pytest

from dossier.engine.thermo import ReactionThermo
from dossier.errors import LibraryError, SpeciesError
from dossier.library.datafile import check_species_data, read_species_data
from dossier.library.lookup import Library
from dossier.library.phasedata import PhaseData, VapourPressure
from dossier.library.record import SpeciesRecord

LIB = Library.default()
CAL = 4.184  # J per thermochemical calorie


def _chemicals_data(*parts: str) -> Path:
    spec = importlib.util.find_spec("chemicals")
    if spec is None or spec.origin is None:
        pytest.skip("chemicals is not installed")
    return Path(spec.origin).parent.joinpath(*parts)


def _with_curve(source_word: str) -> list[SpeciesRecord]:
    return [r for r in LIB.records if r.phase_data and r.phase_data.vapour_pressure
            and source_word in r.phase_data.vapour_pressure.source]


# --------------------------------------------------------------------------
# phase boundaries

def test_every_curve_reproduces_the_function_and_table_it_was_taken_from():
    vp = pytest.importorskip("chemicals.vapor_pressure")
    from chemicals.dippr import EQ101

    def reference(source: str, cas: str):
        """The chemicals package's own function on its own table row."""
        if "WagnerMcGarry" in source:
            r = vp.Psat_data_WagnerMcGarry.loc[cas]
            return lambda T: vp.Wagner_original(T, r.Tc, r.Pc, r.A, r.B, r.C, r.D)
        if "WagnerPoling" in source:
            r = vp.Psat_data_WagnerPoling.loc[cas]
            return lambda T: vp.Wagner(T, r.Tc, r.Pc, r.A, r.B, r.C, r.D)
        if "VDI_PPDS" in source:
            r = vp.Psat_data_VDI_PPDS_3.loc[cas]
            return lambda T: vp.Wagner(T, r.Tc, r.Pc, r.A, r.B, r.C, r.D)
        if "Perrys2_8" in source:
            r = vp.Psat_data_Perrys2_8.loc[cas]
            return lambda T: EQ101(T, r.C1, r.C2, r.C3, r.C4, r.C5)
        if "Alcock" in source:
            r = vp.Psat_data_Alcock_elements.loc[cas]
            return lambda T: EQ101(T, r.A, r.B, r.C, r.D, r.E)
        if "AntoinePoling" in source:
            r = vp.Psat_data_AntoinePoling.loc[cas]
            return lambda T: vp.Antoine(T, r.A, r.B, r.C, base=10.0)
        r = vp.Psat_data_Landolt_Antoine.loc[cas]
        return lambda T: vp.Antoine(T, r.A, r.B, r.C, base=math.e)

    seen = set()
    for rec in LIB.records:
        pd = rec.phase_data
        if rec.phase == "aq" or pd is None or pd.vapour_pressure is None:
            continue
        curve = pd.vapour_pressure
        ref = reference(curve.source, rec.cas)
        for T in np.linspace(curve.t_min, curve.t_max, 7)[:-1]:
            assert curve.p(T) == pytest.approx(ref(T), rel=1e-9), (rec.id, T)
        seen.add(re.search(r"\((Psat_data_\w+)\)", curve.source).group(1))
    assert len(seen) >= 5  # the forms used: Wagner (two), DIPPR 101, Antoine, ...


def test_the_water_curve_follows_iapws_95():
    iapws = pytest.importorskip("chemicals.iapws")
    curve = LIB.resolve("H2O(l)").phase_data.vapour_pressure
    for T in (280.0, 300.0, 350.0, 373.124, 400.0, 450.0, 500.0, 600.0):
        # reference: IAPWS-95 saturation pressure (chemicals.iapws)
        assert curve.p(T) == pytest.approx(iapws.iapws95_Psat(T), rel=3e-3)


@pytest.mark.parametrize("label, phase, t_melt, t_boil, tol", [
    # IAPWS: water boils at 373.124 K at 101.325 kPa (ITS-90; from memory)
    ("H2O", "l", 273.15, 373.124, 0.01),
    # CRC Handbook, physical constants of organic compounds (from memory):
    # benzene mp 5.49 °C, bp 80.09 °C; 1,2-dichloroethane mp −35.7 °C, bp 83.5 °C
    ("benzene", "l", 278.64, 353.24, 0.5),
    ("1,2-dichloroethane", "g", 237.45, 356.65, 0.5),
    # CRC Handbook, physical constants of inorganic compounds (from memory):
    # hydrogen chloride mp −114.17 °C, bp −85 °C; tin(IV) chloride mp −34.07 °C,
    # bp 114.15 °C; CO2 triple point −56.56 °C, sublimes at −78.46 °C
    ("HCl", "g", 158.98, 188.15, 0.5),
    ("SnCl4", "l", 239.08, 387.3, 0.5),
    ("CO2", "g", 216.59, 194.69, 0.5),
])
def test_melting_and_boiling_points_match_the_handbooks(label, phase, t_melt, t_boil, tol):
    pd = LIB.resolve(label, phase).phase_data
    assert pd.t_melt == pytest.approx(t_melt, abs=tol)
    assert pd.t_boil == pytest.approx(t_boil, abs=tol)
    assert pd.sublimes == (t_boil < t_melt)


def test_each_point_is_the_value_of_the_table_its_source_names():
    pc = pytest.importorskip("chemicals.phase_change")
    checked = 0
    for rec in LIB.records:
        pd = rec.phase_data
        if rec.phase == "aq" or pd is None:
            continue
        for what, value, fn in (("melting point", pd.t_melt, pc.Tm),
                                ("boiling point", pd.t_boil, pc.Tb)):
            method = re.search(r"\(method (\w+)\)", pd.source_of(what) or "")
            if value is None or method is None:
                continue
            # reference: the chemicals package's lookup with the method the record names
            assert value == pytest.approx(fn(rec.cas, method=method.group(1)), abs=1e-9)
            checked += 1
    assert checked > 1500


def test_how_many_records_have_phase_boundaries():
    records = LIB.records
    gases = [r for r in records if r.phase == "g"]
    with_boiling = [r for r in gases if r.phase_data and r.phase_data.t_boil is not None]
    assert len(with_boiling) >= 600  # before format 2: none had one as such
    assert len(_with_curve("")) >= 550
    for r in records:
        if r.phase == "aq":
            assert r.phase_data.solvent == "water"
            assert r.phase_data.t_boil == LIB.resolve("H2O(l)").phase_data.t_boil


def test_no_data_range_is_written_as_a_stable_range():
    # the model's range is the data range; the records carry no other "range" than
    # the phase data's form range, which only one solid form of several has
    for r in LIB.records:
        assert not hasattr(r, "stable_range")
        if r.phase_data and r.phase_data.form_range is not None:
            assert r.phase == "s" and "tin" in r.name


def test_phase_data_round_trip_and_reject_bad_shapes():
    vp = VapourPressure("antoine", (20.0, 3000.0, -50.0), 250.0, 400.0, "k")
    pd = PhaseData(200.0, 350.0, vp, (None, 300.0), None, (("melting point", "k"),))
    assert PhaseData.from_dict(pd.to_dict()) == pd
    with pytest.raises(LibraryError, match="unknown vapour-pressure form 'clapeyron'"):
        VapourPressure("clapeyron", (1.0,), 250.0, 400.0, "k")
    with pytest.raises(LibraryError, match="form 'wagner' takes 8 coefficients, got 4"):
        VapourPressure("wagner", (1.0, 2.0, 3.0, 4.0), 250.0, 400.0, "k")
    with pytest.raises(LibraryError, match="t_melt = -3.0 is not above 0 K"):
        PhaseData(t_melt=-3.0)


def test_the_data_file_must_name_every_phase_source_it_uses():
    raw = Path(_data_path()).read_bytes()
    assert b'"source":"vp-perry"' in raw
    raw = raw.replace(b'"source":"vp-perry"', b'"source":"vp-nowhere"', 1)
    with pytest.raises(LibraryError, match="names unknown source 'vp-nowhere'"):
        check_species_data(read_species_data(raw))


def _data_path() -> str:
    from importlib import resources
    return str(resources.files("dossier").joinpath("data/species.json"))


# --------------------------------------------------------------------------
# heat capacities of aqueous ions

# Revised HKF parameters (c1 in cal/(mol K), c2 in 10^4 cal K/mol, ω in 10^5 cal/mol)
# as published: Shock and Helgeson, Geochim. Cosmochim. Acta 52 (1988) 2009, table of
# ionic species (CO3-2, HCO3-, Ca+2); Shock, Sassani, Willis and Sverjensky, Geochim.
# Cosmochim. Acta 61 (1997) 907 (Fe+3, PO4-3); transcribed in OBIGT (CHNOSZ).
HKF = {"CO3-2": (-3.3206, -17.1917, 3.3914), "HCO3-": (12.9395, -4.7579, 1.2733),
       "Ca+2": (9.0, -2.522, 1.2366), "Fe+3": (19.0459, -6.8233, 2.5812),
       "PO4-3": (-15.1599, -28.4155, 5.6114)}


@pytest.mark.parametrize("ion", sorted(HKF))
def test_ion_heat_capacities_agree_with_the_hkf_equation_by_hand(ion):
    c1, c2, omega = HKF[ion]
    # revised HKF at 298.15 K and 1 bar: Cp° = c1 + c2/(T − Θ)² + ω T X, with
    # Θ = 228 K and X = −3.090e-7 K⁻² for water at 25 °C (Helgeson and Kirkham,
    # Am. J. Sci. 274 (1974); both from memory)
    by_hand = c1 + c2 * 1e4 / (298.15 - 228.0) ** 2 + omega * 1e5 * 298.15 * -3.090e-7
    rec = LIB.resolve(ion, "aq")
    assert rec.model.cp(298.15) / CAL == pytest.approx(by_hand, abs=0.15)
    assert "Cp° at 298.15 K" in rec.note and "cp" not in rec.missing


def test_no_ion_has_a_silent_zero_heat_capacity():
    missing = [r for r in LIB.records if r.phase == "aq" and "cp" in r.missing]
    zero = [r for r in LIB.records if r.model.cp(298.15) == 0.0]
    # before format 2, 101 of the 136 ions had Cp = 0 besides H+; now 18 lack one
    assert len(missing) == 18
    for r in zero:
        # the hydrogen-ion convention (CRC Handbook, aqueous ions table): zero by definition
        assert "cp" in r.missing or r.id == "H+(aq)"
    for r in missing:
        u = dict(r.uncertainty)["cp"]
        assert u > 0 and f"uncertainty ±{u:g} J/(mol K)" in r.note


def test_the_cp_bound_of_an_ion_without_data_is_the_spread_of_its_charge():
    known = [abs(r.model.cp(298.15)) for r in LIB.records
             if r.phase == "aq" and r.charge == -3 and "cp" not in r.missing]
    asO4 = LIB.resolve("AsO4-3", "aq")
    assert dict(asO4.uncertainty)["cp"] == pytest.approx(max(known), rel=1e-3)
    # PO4-3 is the widest: −124.6 cal/(mol K) (Shock et al. 1997)
    assert max(known) == pytest.approx(124.6 * CAL, rel=1e-6)


def test_a_hot_carbonate_acid_reaction_changes_its_enthalpy_as_by_hand():
    recs = [LIB.resolve(*x) for x in (("CO3-2", "aq"), ("H+", "aq"), ("CO2", "g"),
                                      ("H2O", "l"))]
    nus = (-1.0, -2.0, 1.0, 1.0)
    thermo = ReactionThermo(nus, tuple(r.model for r in recs))
    dT = 350.0 - 298.15
    # hand calculation: Δ(ΔrH) = ΔH(CO2, g) + ΔH(H2O, l) − 2·0 − Cp(CO3²⁻)·ΔT, with
    # Cp(CO3²⁻) = −69.5 cal/(mol K) (Shock and Helgeson 1988) and H+ zero by convention
    gas_and_water = sum(r.model.h(350.0) - r.model.h(298.15) for r in recs[2:])
    expected = gas_and_water - (-69.5 * CAL) * dT
    assert thermo.dH(350.0) - thermo.dH(298.15) == pytest.approx(expected, rel=1e-9)
    # the carbonate's own share, 15.08 kJ/mol, is what a zero Cp left out
    assert 69.5 * CAL * dT / 1e3 == pytest.approx(15.08, abs=0.01)


# --------------------------------------------------------------------------
# reference states of the elements

# CODATA Key Values for Thermodynamics (Cox, Wagman and Medvedev, 1989) and the
# NIST-JANAF tables (4th ed., 1998) define each element's reference state at
# 298.15 K and 1 bar: the diatomic gases, the noble gases, liquid bromine and
# mercury, solid iodine, graphite, white phosphorus, rhombic sulfur, white tin,
# grey arsenic and grey (hexagonal) selenium, and the stable solid of every other
# element here (common practice, no further source).
REFERENCE = {**{e: (f"{e}2", "g") for e in ("H", "N", "O", "F", "Cl")},
             **{e: (e, "g") for e in ("He", "Ne", "Ar", "Kr", "Xe", "Rn")},
             "Br": ("Br2", "l"), "Hg": ("Hg", "l"), "I": ("I2", "s")}
# Elements whose reference form is not in the library's sources: technetium (the
# CRC table in chemicals gives ΔfH° = 0 for the solid but no S°).
NO_REFERENCE_FORM = {"Tc"}


def _reference_record(element: str) -> SpeciesRecord:
    formula, phase = REFERENCE.get(element, (element, "s"))
    return LIB.resolve(formula, phase)


def _webbook_entropies() -> dict[tuple[str, str], float]:
    """S°(298.15 K) of elements by (CAS, phase) from the NIST WebBook constants in chemicals."""
    path = _chemicals_data("Misc", "webbook_constants.tsv")
    out = {}
    with path.open(encoding="utf-8") as fh:
        for row in csv.DictReader(fh, delimiter="\t"):
            cas = f"{row['CAS'][:-3]}-{row['CAS'][-3:-1]}-{row['CAS'][-1]}"
            for phase in "slg":
                if row[f"S0{phase}"]:
                    out[(cas, phase)] = float(row[f"S0{phase}"])
    return out


def test_every_element_has_its_reference_form_at_zero_and_it_is_the_stable_form():
    elements = {e for r in LIB.records for e, _n in r.elements} - {"E"}
    s_webbook = _webbook_entropies()
    checked_g = 0
    for element in sorted(elements - NO_REFERENCE_FORM):
        ref = _reference_record(element)
        n_ref = dict(ref.elements)[element]
        assert ref.elements == ((element, n_ref),) and ref.charge == 0
        assert abs(ref.hf298) < 1.0, element  # ΔfH° = 0 (J/mol; NASA fits give ~1e-9)
        # ΔfG° = ΔfH° − T (S° − S°ref) with S°ref of the NIST WebBook (CODATA values)
        s_ref = s_webbook.get((ref.cas, ref.phase))
        if s_ref is not None:
            assert abs(ref.hf298 - 298.15 * (ref.s298 - s_ref)) < 300.0, element
            checked_g += 1
        # no other form of the element is more stable at 298.15 K (per atom)
        g_ref = ref.model.g(298.15) / n_ref
        for other in LIB.records:
            if len(other.elements) == 1 and other.elements[0][0] == element and not other.charge:
                n = other.elements[0][1]
                assert other.model.g(298.15) / n - g_ref > -50.0, (element, other.id)
    assert checked_g >= 40
    for element in NO_REFERENCE_FORM:
        assert element in elements
        with pytest.raises(SpeciesError):
            _reference_record(element)


def test_tin_is_white_tin_and_grey_tin_only_answers_to_its_name():
    white = LIB.resolve("Sn(s)")
    # white tin: ΔfH° = 0 (reference state), S° = 51.18 J/(mol K) (CODATA Key Values,
    # from memory; the NIST WebBook value carried by chemicals), Cp = 27.1 J/(mol K)
    # (Perry's Table 2-151: 5.05 + 0.0048 T cal/(mol K))
    assert (white.id, white.name) == ("Sn(s)", "tin")
    assert abs(white.hf298) < 1e-6 and white.s298 == pytest.approx(51.18, abs=0.01)
    assert white.model.cp(298.15) == pytest.approx((5.05 + 0.0048 * 298.15) * CAL, abs=1e-6)
    assert LIB.resolve("tin", "s") is white and LIB.resolve("white tin", "s") is white
    grey = LIB.resolve("grey tin", "s")
    # CRC Handbook (as carried by chemicals), tin (gray): ΔfH° −2.1 kJ/mol, S° 44.1
    assert grey.hf298 == pytest.approx(-2100.0) and grey.s298 == pytest.approx(44.1)
    assert "tin" not in [a.lower() for a in grey.aliases]


def test_formulas_match_with_their_letter_case_and_names_without():
    tin_gas = LIB.resolve("Sn(g)")
    assert tin_gas.elements == (("Sn", 1.0),) and tin_gas.name == "tin"
    assert LIB.resolve("SN(g)").elements == (("N", 1.0), ("S", 1.0))
    with pytest.raises(SpeciesError, match="no library species 'sn\\(g\\)'"):
        LIB.resolve("sn(g)")
    assert LIB.resolve("Co(g)").elements == (("Co", 1.0),)
    assert LIB.resolve("CO(g)").elements == (("C", 1.0), ("O", 1.0))
    # names and aliases in any letter case
    assert LIB.resolve("WATER(l)") is LIB.resolve("H2O(l)")
    assert LIB.resolve("thf(l)") is LIB.resolve("tetrahydrofuran(l)")
    # the carbon atom is carbon, not graphite
    assert LIB.resolve("C(g)").name == "carbon"


def test_solid_form_names_stay_with_the_solid():
    for label in ("Sn(g)", "As(g)", "Se(g)"):
        assert "(gray)" not in LIB.resolve(label).name


# --------------------------------------------------------------------------
# structures

def test_organic_records_carry_a_structure_that_fits_their_formula():
    rdkit = pytest.importorskip("rdkit.Chem")
    from rdkit.Chem.rdMolDescriptors import CalcMolFormula

    from dossier.chem.formula import parse_formula

    organic = [r for r in LIB.records if {"C", "H"} <= set(dict(r.elements))]
    with_smiles = [r for r in organic if r.smiles]
    assert len(with_smiles) >= 0.9 * len(organic)
    for r in (r for r in LIB.records if r.smiles):
        # reference: RDKit reads the structure back to the record's formula
        mol = rdkit.MolFromSmiles(r.smiles)
        f = parse_formula(CalcMolFormula(mol))
        assert (dict(f.elements), f.charge) == (dict(r.elements), r.charge), r.id


@pytest.mark.parametrize("label, phase, smiles", [
    # structures as in PubChem (canonical SMILES; from memory)
    ("ethanol", "l", "CCO"), ("benzene", "g", "C1=CC=CC=C1"),
    ("1,2-dichloroethane", "g", "C(CCl)Cl"), ("nitrobenzene", "l", "C1=CC=C(C=C1)[N+](=O)[O-]"),
])
def test_known_structures(label, phase, smiles):
    assert LIB.resolve(label, phase).smiles == smiles
