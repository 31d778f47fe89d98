"""Energetic-material screening (dossier.engine.energetics) against published
values and the published screening method.

Every check value carries its source in a comment.  Abbreviations used
below:

* Sanford 1906: P. Gerald Sanford, Nitro-Explosives: A Practical Treatise,
  2nd edition, Crosby Lockwood 1906 (Project Gutenberg EBook #15308),
  chapter on nitro-glycerine.
* TM 9-1300-214: US Department of the Army, Technical Manual
  TM 9-1300-214, Military Explosives (1984), section on oxygen balance.
* CODATA 1989: J. D. Cox, D. D. Wagman, V. A. Medvedev, CODATA Key Values
  for Thermodynamics, Hemisphere 1989 (also the NIST Chemistry WebBook
  values for these gases).
* CRC: CRC Handbook of Chemistry and Physics, table "Standard
  Thermodynamic Properties of Chemical Substances", as tabulated in the
  `chemicals` package (Hfl/Hfs with method "CRC").
* Table A6.1: UN Manual of Tests and Criteria, Appendix 6, Table A6.1, as
  quoted in ECHA registration dossiers (groups and examples).
"""
from __future__ import annotations

import pytest
from hypothesis import assume, given, settings, strategies as st

from dossier.engine import energetics
from dossier.engine.decomposition import (
    Component,
    Product,
    max_decomposition_energy,
    max_decomposition_energy_mixture,
)
from dossier.engine.energetics import (
    GroupCheck,
    GroupHit,
    find_explosophores,
    oxygen_balance,
    SCREENING_WORDS,
    un_screening,
)
from dossier.errors import CaseError, FormulaError, SpeciesError
from dossier.chem.formula import parse_formula
from dossier.engine.safety import gas_volume_normal

# Enthalpies of formation at 298.15 K, J/mol
HF_CO2_G = -393.51e3    # CODATA 1989
HF_CO_G = -110.53e3     # CODATA 1989
HF_H2O_G = -241.826e3   # CODATA 1989
HF_H2O_L = -285.830e3   # CODATA 1989
HF_NG_L = -370.9e3      # CRC, nitroglycerin (liquid)
HF_TNT_S = -63.2e3      # CRC, 2,4,6-trinitrotoluene (solid)

ELEMENTS = [  # elements in their reference states: 0 by definition
    Product("N2(g)", "N2", 0.0),
    Product("O2(g)", "O2", 0.0),
    Product("H2(g)", "H2", 0.0),
    Product("C(s)", "C", 0.0),
]
PRODUCTS_GAS_WATER = [
    Product("CO2(g)", "CO2", HF_CO2_G),
    Product("CO(g)", "CO", HF_CO_G),
    Product("H2O(g)", "H2O", HF_H2O_G),
    *ELEMENTS,
]
PRODUCTS_LIQUID_WATER = [
    Product("CO2(g)", "CO2", HF_CO2_G),
    Product("CO(g)", "CO", HF_CO_G),
    Product("H2O(l)", "H2O", HF_H2O_L),
    *ELEMENTS,
]

TNT_SMILES = "Cc1c(cc(cc1[N+](=O)[O-])[N+](=O)[O-])[N+](=O)[O-]"
NG_SMILES = "[O-][N+](=O)OCC(CO[N+](=O)[O-])O[N+](=O)[O-]"

# Group findings given directly, so that the screening logic is tested
# with or without RDKit.
NITRO = GroupHit("n_o", "N-O", True, True, 2)
AZIDE = GroupHit("contiguous_nitrogen", "contiguous nitrogen atoms", False, True, 2)
NO_GROUPS = GroupCheck(True, (), "no Table A6.1 group found")
ONLY_NITRO = GroupCheck(True, (NITRO,), "groups found: N-O")
NITRO_AND_AZIDE = GroupCheck(True, (AZIDE, NITRO), "groups found: contiguous nitrogen atoms, N-O")


# --------------------------------------------------------------------------
# Oxygen balance
# --------------------------------------------------------------------------

@pytest.mark.parametrize(
    "formula, published, tol",
    [
        ("C7H5N3O6", -74.0, 0.1),   # TNT: -74 % (TM 9-1300-214; from memory)
        ("C3H5N3O9", 3.52, 0.01),   # nitroglycerine: oxygen 3.52 per cent of the
                                    # products by weight (Sanford 1906) = OB
        ("NH4NO3", 20.0, 0.05),     # ammonium nitrate: +20 % (TM 9-1300-214; from memory)
        ("C3H6N6O6", -21.6, 0.05),  # RDX: -21.6 % (from memory)
        ("NH4ClO4", 34.0, 0.1),     # ammonium perchlorate: +34 % (from memory)
    ],
)
def test_oxygen_balance_published_values(formula, published, tol):
    assert oxygen_balance(formula) == pytest.approx(published, abs=tol)


def test_oxygen_balance_accepts_formula_objects_and_compositions():
    # Same TNT value, -74 % (TM 9-1300-214; from memory), by each input form.
    assert oxygen_balance(parse_formula("C7H5N3O6")) == pytest.approx(-74.0, abs=0.1)
    assert oxygen_balance({"C": 7, "H": 5, "N": 3, "O": 6}) == pytest.approx(-74.0, abs=0.1)


def test_oxygen_balance_refuses_what_it_cannot_assume():
    with pytest.raises(FormulaError, match="U"):
        oxygen_balance("UF6")
    with pytest.raises(FormulaError, match="neutral"):
        oxygen_balance("NO3-")


# --------------------------------------------------------------------------
# Explosophore groups (needs RDKit) and the degraded path without it
# --------------------------------------------------------------------------

@pytest.mark.parametrize(
    "smiles, formula, key",
    [
        # One example per group, each named in Table A6.1's examples.
        ("C#C", "C2H2", "cc_unsaturation"),                    # acetylenes
        ("C=C=C", "C3H4", "cc_unsaturation"),                  # 1,2-dienes
        ("C[Li]", "CH3Li", "c_metal"),                         # organo-lithium compounds
        ("CN=[N+]=[N-]", "CH3N3", "contiguous_nitrogen"),      # azides
        ("NN", "N2H4", "contiguous_nitrogen"),                 # hydrazines
        ("CC(C)(C)OOC(C)(C)C", "C8H18O2", "contiguous_oxygen"),  # peroxides
        (TNT_SMILES, "C7H5N3O6", "n_o"),                       # nitro compounds
        (NG_SMILES, "C3H5N3O9", "n_o"),                        # nitrates
        ("c1ccon1", "C3H3NO", "n_o"),                          # 1,2-oxazoles
        ("ClN(Cl)Cl", "NCl3", "n_halogen"),                    # chloramines
        ("[K+].[O-]Cl(=O)(=O)=O", "KClO4", "o_halogen"),       # perchlorates
    ],
)
def test_table_a6_1_examples_are_found(smiles, formula, key):
    pytest.importorskip("rdkit")
    check = find_explosophores(smiles, formula)
    assert check.checked
    assert key in {h.key for h in check.un_hits}


@pytest.mark.parametrize(
    "smiles",
    [
        "c1ccccc1",      # benzene: aromatic C-C is not "C-C unsaturation" in Table A6.1
        "C=CC=C",        # butadiene: conjugated, not a 1,2-diene (Table A6.1 examples)
        "CC#N",          # acetonitrile: C#N, not C-C
        "CC(=O)[O-].[Na+]",  # sodium acetate: ionic, no C-metal bond
    ],
)
def test_structures_without_table_a6_1_groups(smiles):
    pytest.importorskip("rdkit")
    check = find_explosophores(smiles)
    assert check.checked and check.un_hits == ()


def test_strained_ring_is_an_extra_alert_only():
    # Strained rings are not among the groups quoted from Table A6.1.
    pytest.importorskip("rdkit")
    check = find_explosophores("C1CO1", "C2H4O")
    assert check.un_hits == ()
    assert [h.key for h in check.extra_hits] == ["strained_ring"]


def test_smiles_must_match_the_formula():
    pytest.importorskip("rdkit")
    with pytest.raises(FormulaError):
        find_explosophores(TNT_SMILES, "C7H5N3O4")
    with pytest.raises(FormulaError):
        find_explosophores("not a smiles ((", None)


def test_without_toolkit_the_groups_are_not_checked(monkeypatch):
    monkeypatch.setattr(energetics, "_load_toolkit", lambda: None)
    check = find_explosophores(TNT_SMILES, "C7H5N3O6")
    assert not check.checked
    assert check.note == "not checked (no structure toolkit)"
    res = un_screening("C7H5N3O6", smiles=TNT_SMILES)
    assert res.outcome == "undecided" and res.clause is None
    assert any("no structure toolkit" in m for m in res.missing)
    # Clause (c) needs no structure: energy < 500 J/g and onset < 500 degC
    # (Appendix 6, from the ECHA/REACH quotations).
    res = un_screening("C7H5N3O6", smiles=TNT_SMILES, decomposition_energy_J_per_g=300.0,
                       onset_K=523.15)
    assert res.outcome == "no further tests" and res.clause == "(c)"


def test_no_structure_given():
    check = find_explosophores(None)
    assert not check.checked and check.note == "not checked (no structure given)"


# --------------------------------------------------------------------------
# UN Appendix 6 screening clauses
# --------------------------------------------------------------------------

def test_clause_a_no_groups():
    res = un_screening("C6H6", groups=NO_GROUPS)
    assert (res.outcome, res.clause) == ("no further tests", "(a)")


def test_clause_a_from_a_structure():
    pytest.importorskip("rdkit")
    res = un_screening("C6H6", smiles="c1ccccc1")
    assert (res.outcome, res.clause) == ("no further tests", "(a)")


def test_clause_b_oxygen_groups_and_oxygen_balance_below_minus_200():
    # 1-nitrohexadecane C16H33NO2: only N-O groups; OB hand calculation
    # (common practice, no source): -1600 (32 + 16.5 - 2) / 271.44 = -274.1 %
    res = un_screening("C16H33NO2", groups=ONLY_NITRO)
    assert res.oxygen_balance_pct == pytest.approx(-274.1, abs=0.1)
    assert (res.outcome, res.clause) == ("no further tests", "(b)")


def test_clause_b_from_a_structure():
    pytest.importorskip("rdkit")
    res = un_screening("C16H33NO2", smiles="CCCCCCCCCCCCCCCC[N+](=O)[O-]")
    assert (res.outcome, res.clause) == ("no further tests", "(b)")


def test_clause_b_does_not_apply_at_or_above_minus_200():
    # 1-nitropropane C3H7NO2: OB = -1600 (6 + 3.5 - 2) / 89.09 = -134.7 %
    # (hand calculation, common practice, no source): not below -200.
    res = un_screening("C3H7NO2", groups=ONLY_NITRO)
    assert res.oxygen_balance_pct == pytest.approx(-134.7, abs=0.1)
    assert res.clause is None and res.outcome == "undecided"


def test_clause_b_needs_every_group_to_include_oxygen():
    # A long-chain azide with a nitro group: OB below -200 but the azide
    # (contiguous nitrogen) holds no oxygen, so (b) does not apply
    # (Appendix 6 clause (b) wording, from the ECHA quotations).
    res = un_screening("C16H32N4O2", groups=NITRO_AND_AZIDE)
    assert res.oxygen_balance_pct < -200
    assert res.clause != "(b)"
    assert res.outcome == "undecided"  # (c) could still apply: DSC data missing
    res = un_screening("C16H32N4O2", groups=NITRO_AND_AZIDE,
                       decomposition_energy_J_per_g=900.0, onset_K=473.15)
    assert res.outcome == "not excluded"


def test_clause_b_with_groups_from_a_structure():
    pytest.importorskip("rdkit")
    res = un_screening("C16H32N4O2", smiles="[N-]=[N+]=NCCCCCCCCCCCCCCCC[N+](=O)[O-]")
    assert res.clause != "(b)" and res.outcome == "undecided"


@pytest.mark.parametrize(
    "energy, onset_K, outcome",
    [
        # Clause (c): energy < 500 J/g and onset < 500 degC (Appendix 6, from
        # the ECHA/REACH quotations).
        (499.0, 523.15, "no further tests"),
        (500.0, 523.15, "not excluded"),     # not "less than 500 J/g"
        (300.0, 773.15, "not excluded"),     # onset not "below 500 degC"
        (300.0, 773.0, "no further tests"),
    ],
)
def test_clause_c_thresholds(energy, onset_K, outcome):
    # TNT: N-O groups, OB -74 % (TM 9-1300-214; from memory), organic.
    res = un_screening("C7H5N3O6", groups=GroupCheck(True, (NITRO,), ""),
                       decomposition_energy_J_per_g=energy, onset_K=onset_K)
    assert res.outcome == outcome
    if outcome == "no further tests":
        assert res.clause == "(c)"


def test_clause_c_is_for_organic_substances_only():
    # Ammonium nitrate: N-O groups, OB +20 % (not below -200), inorganic,
    # so no clause applies (Appendix 6 wording, from the ECHA quotations).
    res = un_screening("NH4NO3", groups=ONLY_NITRO,
                       decomposition_energy_J_per_g=300.0, onset_K=523.15)
    assert res.outcome == "not excluded"


def test_missing_dsc_data_leaves_the_screening_undecided():
    pytest.importorskip("rdkit")
    res = un_screening("C7H5N3O6", smiles=TNT_SMILES)
    assert res.outcome == "undecided"
    assert SCREENING_WORDS["energy"] in res.missing
    named = un_screening("C7H5N3O6", smiles=TNT_SMILES,
                         labels={"energy": "decomposition.energy", "onset": "decomposition.onset"})
    assert "decomposition.energy" in named.missing
    # TNT OB -74 % (TM 9-1300-214; from memory) is reported with the result
    assert res.oxygen_balance_pct == pytest.approx(-74.0, abs=0.1)


def test_negative_decomposition_energy_is_refused():
    with pytest.raises(CaseError):
        un_screening("C7H5N3O6", groups=ONLY_NITRO, decomposition_energy_J_per_g=-300.0,
                     onset_K=500.0)


# --------------------------------------------------------------------------
# Maximum decomposition energy (linear programme)
# --------------------------------------------------------------------------

def test_nitroglycerine_against_sanford():
    # Sanford 1906: heat of combustion of nitro-glycerine 1,576 cal per g,
    # "the heat of total combustion and the heat of complete decomposition
    # are interchangeable terms, since it contains an excess of oxygen".
    # Combustion calorimetry ends with liquid water, so compare with H2O(l);
    # 1576 cal/g * 4.184 J/cal = 6594 J/g.  Within 10 %.
    res = max_decomposition_energy("C3H5N3O9", HF_NG_L, PRODUCTS_LIQUID_WATER)
    assert res.energy_J_per_g == pytest.approx(1576 * 4.184, rel=0.10)
    # Hand calculation with the same data (common practice, no source):
    # 3(-393.51) + 2.5(-285.830) + 370.9 = -1524.205 kJ/mol;
    # M = 227.0865 g/mol -> 6712.0 J/g.
    assert res.energy_J_per_g == pytest.approx(6712.0, abs=0.5)
    assert res.exceeds_threshold  # far above 500 J/g (Appendix 6 threshold)


def test_nitroglycerine_products_against_sanford():
    # Sanford 1906, products of nitro-glycerine by weight: CO2 58.15 %,
    # water 19.83 %, oxygen 3.52 %, nitrogen 18.50 %.
    res = max_decomposition_energy("C3H5N3O9", HF_NG_L, PRODUCTS_GAS_WATER)
    molar = {"CO2(g)": 44.0095, "H2O(g)": 18.01528, "O2(g)": 31.9988, "N2(g)": 28.0134}
    by_weight = {name: 100 * n * molar[name] for name, n in res.products}
    assert set(by_weight) == {"CO2(g)", "H2O(g)", "O2(g)", "N2(g)"}
    assert by_weight["CO2(g)"] == pytest.approx(58.15, abs=0.05)
    assert by_weight["H2O(g)"] == pytest.approx(19.83, abs=0.05)
    assert by_weight["O2(g)"] == pytest.approx(3.52, abs=0.05)
    assert by_weight["N2(g)"] == pytest.approx(18.50, abs=0.05)
    # Gas volume at 0 degC and 760 mm, water as gas: "714 litres per kilo"
    # (Sanford 1906).  Within 1 %.
    n_gas_per_kg = 1000 * sum(n for _, n in res.products)
    assert 1000 * gas_volume_normal(n_gas_per_kg) == pytest.approx(714.0, rel=0.01)
    # Gaseous water: less by 2.5 mol * 44.004 kJ/mol (CODATA 1989 values
    # above) / 227.0865 g/mol = 484.4 J/g than with liquid water (hand calc):
    # 6712.0 - 484.4 = 6227.6 J/g.
    assert res.energy_J_per_g == pytest.approx(6227.6, abs=0.5)


def test_tnt_products_are_the_h2o_co2_arbitrary_set():
    # Maximising the heat gives the "H2O-CO2 arbitrary" products,
    # C7H5N3O6 -> 1.5 N2 + 2.5 H2O + 1.75 CO2 + 5.25 C
    # (J. Akhavan, The Chemistry of Explosives, 2nd ed., RSC 2004, ch. 4;
    # from memory).
    res = max_decomposition_energy("C7H5N3O6", HF_TNT_S, PRODUCTS_GAS_WATER)
    per_mol = dict(res.products_per_mole)
    assert per_mol == pytest.approx({"N2(g)": 1.5, "H2O(g)": 2.5, "CO2(g)": 1.75, "C(s)": 5.25},
                                    abs=1e-6)
    # Hand calculation (common practice, no source):
    # 2.5(-241.826) + 1.75(-393.51) + 63.2 = -1230.008 kJ/mol;
    # M = 227.1311 g/mol -> 5415.4 J/g.
    assert res.energy_J_per_g == pytest.approx(5415.4, abs=0.5)


def test_mixture_uses_the_oxygen_of_one_component_for_the_other():
    ng = max_decomposition_energy("C3H5N3O9", HF_NG_L, PRODUCTS_GAS_WATER)
    tnt = max_decomposition_energy("C7H5N3O6", HF_TNT_S, PRODUCTS_GAS_WATER)
    mix = max_decomposition_energy_mixture(
        [Component("C3H5N3O9", HF_NG_L, 0.5, "nitroglycerine"),
         Component("C7H5N3O6", HF_TNT_S, 0.5, "TNT")],
        PRODUCTS_GAS_WATER,
    )
    # The mixture's optimum can use NG's excess oxygen to burn TNT's carbon,
    # so it is strictly above the mass-weighted mean of the two optima
    # (property of the linear programme, common practice, no source).
    assert mix.energy_J_per_g > 0.5 * ng.energy_J_per_g + 0.5 * tnt.energy_J_per_g + 1.0
    # A one-component "mixture" is the substance itself.
    one = max_decomposition_energy_mixture([Component("C3H5N3O9", HF_NG_L, 1.0)],
                                           PRODUCTS_GAS_WATER)
    assert one.energy_J_per_g == pytest.approx(ng.energy_J_per_g, rel=1e-9)


def test_a_stable_substance_releases_nothing():
    # Water decomposing into water: 0 J/g (common practice, no source).
    res = max_decomposition_energy("H2O", HF_H2O_G, PRODUCTS_GAS_WATER)
    assert res.energy_J_per_g == pytest.approx(0.0, abs=1e-6)
    assert not res.exceeds_threshold


def test_decomposition_energy_errors():
    with pytest.raises(SpeciesError, match="Cl"):
        max_decomposition_energy("CH3Cl", -81.9e3, PRODUCTS_GAS_WATER)  # ΔfH: any value, the error is checked
    with pytest.raises(CaseError, match="add up to 1"):
        max_decomposition_energy_mixture(
            [Component("C3H5N3O9", HF_NG_L, 0.5), Component("C7H5N3O6", HF_TNT_S, 0.4)],
            PRODUCTS_GAS_WATER,
        )
    with pytest.raises(SpeciesError):
        max_decomposition_energy("C3H5N3O9", HF_NG_L, [])


# --------------------------------------------------------------------------
# The vertex-enumeration LP against a general LP solver (test-only scipy)
# --------------------------------------------------------------------------

HF_HCL_G = -92.31e3       # CODATA 1989
HF_RDX_S = 70.3e3         # RDX (solid), from memory
HF_NB_L = 12.5e3          # nitrobenzene (liquid), from memory
HF_AN_S = -365.56e3       # ammonium nitrate (solid), NBS tables; from memory
HF_CDNB_S = -20.0e3       # 1-chloro-2,4-dinitrobenzene: any value, the two
                          # solvers are compared on the same data

PRODUCTS_CHNOCL = [
    Product("CO2(g)", "CO2", HF_CO2_G),
    Product("CO(g)", "CO", HF_CO_G),
    Product("H2O(g)", "H2O", HF_H2O_G),
    Product("HCl(g)", "HCl", HF_HCL_G),
    Product("Cl2(g)", "Cl2", 0.0),
    *ELEMENTS,
]

SUBSTANCES = {
    "TNT": ("C7H5N3O6", HF_TNT_S),
    "nitroglycerine": ("C3H5N3O9", HF_NG_L),
    "RDX": ("C3H6N6O6", HF_RDX_S),
    "nitrobenzene": ("C6H5NO2", HF_NB_L),
    "ammonium nitrate": ("NH4NO3", HF_AN_S),
    "1-chloro-2,4-dinitrobenzene": ("C6H3ClN2O4", HF_CDNB_S),
}


def _linprog_energy(components, products):
    """Reference optimum by scipy.optimize.linprog (HiGHS): energy in J/g
    and the amounts in mol/g, for [(formula, ΔfH, mass fraction), ...]."""
    np = pytest.importorskip("numpy")
    optimize = pytest.importorskip("scipy.optimize")
    b, hf_per_g = {}, 0.0
    for formula, hf, w in components:
        f = parse_formula(formula)
        M = f.molar_mass
        for el, n in f.elements:
            b[el] = b.get(el, 0.0) + w * float(n) / M
        hf_per_g += w * hf / M
    comps = [dict((el, float(n)) for el, n in parse_formula(p.formula).elements)
             for p in products]
    elements = sorted(set(b) | {el for c in comps for el in c})
    A = np.array([[c.get(el, 0.0) for c in comps] for el in elements])
    rhs = np.array([b.get(el, 0.0) for el in elements])
    cost = np.array([p.hf_J_per_mol for p in products])
    res = optimize.linprog(cost, A_eq=A, b_eq=rhs, bounds=(0, None), method="highs")
    return res, (hf_per_g - res.fun if res.status == 0 else None)


@pytest.mark.parametrize("name", sorted(SUBSTANCES))
@pytest.mark.parametrize("products", [PRODUCTS_CHNOCL, PRODUCTS_LIQUID_WATER + PRODUCTS_CHNOCL[2:5]],
                         ids=["water gas", "water gas and liquid"])
def test_vertex_enumeration_matches_linprog(name, products):
    formula, hf = SUBSTANCES[name]
    res_ref, ref = _linprog_energy([(formula, hf, 1.0)], products)
    got = max_decomposition_energy(formula, hf, products)
    # Both solve the same linear programme: the brief asks for 1e-9 relative.
    assert got.energy_J_per_g == pytest.approx(ref, rel=1e-9)
    # Heat released by the chosen amounts is the reported energy (same
    # data, common practice, no source).
    by_name = {p.name: p.hf_J_per_mol for p in products}
    hf_per_g = hf / parse_formula(formula).molar_mass
    assert hf_per_g - sum(by_name[n] * x for n, x in got.products) == pytest.approx(
        got.energy_J_per_g, rel=1e-12)


@pytest.mark.parametrize(
    "mixture",
    [
        (("nitroglycerine", 0.5), ("TNT", 0.5)),
        (("RDX", 0.6), ("TNT", 0.4)),                  # a cast RDX/TNT mix, proportions from memory
        (("ammonium nitrate", 0.94), ("nitrobenzene", 0.06)),  # oxidiser plus fuel, any proportions
        (("1-chloro-2,4-dinitrobenzene", 0.3), ("ammonium nitrate", 0.7)),
    ],
    ids=["NG/TNT", "RDX/TNT", "AN/nitrobenzene", "CDNB/AN"],
)
def test_vertex_enumeration_matches_linprog_on_mixtures(mixture):
    parts = [(SUBSTANCES[n][0], SUBSTANCES[n][1], w) for n, w in mixture]
    _, ref = _linprog_energy(parts, PRODUCTS_CHNOCL)
    got = max_decomposition_energy_mixture(
        [Component(f, hf, w, name) for (f, hf, w), (name, _) in zip(parts, mixture)],
        PRODUCTS_CHNOCL,
    )
    assert got.energy_J_per_g == pytest.approx(ref, rel=1e-9)  # brief: 1e-9 relative


def test_vertex_enumeration_finds_the_same_products_as_linprog():
    # Where the optimum is a single vertex the amounts agree too; for TNT
    # they are Akhavan's "H2O-CO2 arbitrary" set (see above).
    np = pytest.importorskip("numpy")
    for name in ("TNT", "nitroglycerine", "RDX", "1-chloro-2,4-dinitrobenzene"):
        formula, hf = SUBSTANCES[name]
        res_ref, _ = _linprog_energy([(formula, hf, 1.0)], PRODUCTS_CHNOCL)
        got = dict(max_decomposition_energy(formula, hf, PRODUCTS_CHNOCL).products)
        mine = np.array([got.get(p.name, 0.0) for p in PRODUCTS_CHNOCL])
        # mol/g amounts ~1e-2: 1e-12 mol/g is 1e-10 relative (common practice, no source)
        assert mine == pytest.approx(res_ref.x, abs=1e-12)


def test_infeasible_balance_gives_the_clear_error():
    # C2O with only CO and O2 offered: every element is carried by some
    # product, but two carbons need two oxygens in CO and O2 cannot be
    # negative - no balance exists (linprog agrees: status 2, infeasible).
    products = [Product("CO(g)", "CO", HF_CO_G), Product("O2(g)", "O2", 0.0)]
    res_ref, _ = _linprog_energy([("C2O", 0.0, 1.0)], products)
    assert res_ref.status == 2  # scipy.optimize.linprog: 2 means infeasible
    with pytest.raises(SpeciesError, match="cannot balance the elements"):
        max_decomposition_energy("C2O", 0.0, products)  # ΔfH: any value, the error is checked
    # Only products carrying an element the substance lacks: same error.
    with pytest.raises(SpeciesError, match="cannot balance the elements"):
        max_decomposition_energy("C", 0.0, [Product("CO(g)", "CO", HF_CO_G)])


@settings(max_examples=150, deadline=None)
@given(
    c=st.integers(0, 12), h=st.integers(0, 12), n=st.integers(0, 8),
    o=st.integers(0, 12), cl=st.integers(0, 3),
    hf_kj=st.floats(-500.0, 500.0),
)
def test_vertex_enumeration_matches_linprog_on_random_compositions(c, h, n, o, cl, hf_kj):
    # Any CHNOCl composition with any ΔfH: the two solvers solve the same
    # LP, so the optima agree (brief: 1e-9 relative; an absolute floor of
    # 1e-9 of the enthalpies involved for optima near zero).
    counts = {"C": c, "H": h, "N": n, "O": o, "Cl": cl}
    formula = "".join(f"{el}{k}" for el, k in counts.items() if k)
    assume(formula)
    _, ref = _linprog_energy([(formula, hf_kj * 1e3, 1.0)], PRODUCTS_CHNOCL)
    got = max_decomposition_energy(formula, hf_kj * 1e3, PRODUCTS_CHNOCL)
    M = parse_formula(formula).molar_mass
    floor = 1e-9 * (abs(hf_kj * 1e3) / M + 400e3 * max(counts.values()) / M)
    assert got.energy_J_per_g == pytest.approx(ref, rel=1e-9, abs=floor)
