"""A [[species]] table that asks for an estimate from its structure, the finding
`estimated-data`, and energetic screening of every species with a structure."""
from __future__ import annotations

import subprocess
import sys

import pytest

from dossier.assess.evaluate import evaluate
from dossier.assess.resolve import ESTIMATE_PREFIX, ResolvedTerm
from dossier.assess.screening import NO_TOOLKIT, screen_terms
from dossier.casefile.load import parse_case_text
from dossier.chem.reaction import parse_reaction
from dossier.engine.estimate import estimate_species
from dossier.engine.settings import DEFAULT
from dossier.errors import CaseError
from dossier.library.lookup import Library
from dossier.library.models import ConstantCp
from dossier.library.record import SpeciesRecord

LIB = Library.default()

# Ethylene and methanol to ethyl methyl ether in the gas: the product is given only by
# its structure (ethyl methyl ether stands in for a new molecule; test data only).
CASE = """+++
title = "Estimated species"
revision = 1
status = "draft"
reaction = "C2H4(g) + CH3OH(g) -> product(g)"
temperature = ["100 degC", "200 degC"]

[[species]]
name = "product"
formula = "C3H8O"
phase = "g"
smiles = "CCOC"
estimate = "benson"
{extra}
+++
Narrative.
"""


def _case(extra: str = "", text: str = CASE):
    return parse_case_text(text.format(extra=extra), "cases/est.md")


def _problems(text: str) -> list[str]:
    with pytest.raises(CaseError) as info:
        evaluate(parse_case_text(text, "cases/est.md"), LIB)
    return [str(p) for p in info.value.problems]


def test_an_estimated_species_gets_its_record_uncertainty_and_finding():
    a = evaluate(_case(), LIB).assessment
    use = next(u for u in a.species if u.key == "product(g)")
    est = estimate_species("CCOC", "g", "benson", DEFAULT)
    assert use.local and use.source.startswith(ESTIMATE_PREFIX + "ΔfH°, S°, Cp° by Benson")
    assert use.hf298_kJ_mol == pytest.approx(est.hf.value / 1e3)
    assert dict(use.uncertainty) == {"hf": 4184.0, "s": 4.184, "cp": 4.184}
    # ΔrH°(298.15 K) = ΔfH°(product) − ΔfH°(C2H4, g) − ΔfH°(CH3OH, g), by hand from the
    # records used (estimate; NASA Glenn coefficients of McBride et al. for the others)
    c2h4, meoh = (LIB.resolve("C2H4", "g"), LIB.resolve("CH3OH", "g"))
    assert a.thermo.dH298_kJ_mol == pytest.approx(
        (est.hf.value - c2h4.hf298 - meoh.hf298) / 1e3, abs=1e-6)
    found = [f for f in a.findings if f.rule == "estimated-data"]
    assert len(found) == 1 and found[0].severity == "caution"
    assert "product(g) has no data in the library or the case" in found[0].text
    assert "± 4.2\u00a0kJ/mol into ΔrH°" in found[0].text  # number policy: 0.1 kJ/mol
    # ΔrG° at 298.15 K: √(4.184² + (298.15 × 4.184 / 1000)²) = 4.366 kJ/mol; K factor
    # exp(4366.0 / (8.3145 × 298.15)) = exp(1.7612) = 5.82 (hand calculation)
    assert "± 4.4\u00a0kJ/mol into ΔrG° at 298.15\u00a0K: K is uncertain by a factor of about 5.82" \
        in found[0].text
    assert not [f for f in a.findings if f.rule == "case-local-data"]


def test_without_an_estimate_the_rule_does_not_fire():
    text = CASE.replace('smiles = "CCOC"\nestimate = "benson"\n',
                        'hf = "-216 kJ/mol"\ns = "309 J/(mol*K)"\ncp = "93 J/(mol*K)"\n'
                        'source = "CRC Handbook, 95th ed."\n')
    a = evaluate(_case(text=text), LIB).assessment
    assert not [f for f in a.findings if f.rule == "estimated-data"]
    assert [f for f in a.findings if f.rule == "case-local-data"]


def test_values_given_beside_an_estimate_are_used_and_compared():
    # ethyl methyl ether, gas: CRC Handbook 95th ed. ΔfH° -216.4 kJ/mol, S° 309.2, Cp 93.3
    given = ('hf = "-216.4 kJ/mol"\ns = "309.2 J/(mol*K)"\ncp = "93.3 J/(mol*K)"\n'
             'source = "CRC Handbook, 95th ed."\n')
    a = evaluate(_case(given), LIB).assessment
    use = next(u for u in a.species if u.key == "product(g)")
    assert use.hf298_kJ_mol == pytest.approx(-216.4)       # the given value wins
    check = next(f for f in a.findings if f.rule == "estimated-data")
    assert check.severity == "information"
    # number policy: the estimate at the digits of its uncertainty (4.2 → one digit, ± 4)
    assert "ΔfH° −216.4\u00a0kJ/mol given, −215 ± 4\u00a0kJ/mol estimated" in check.text
    assert check.text.endswith("They agree within 2 standard uncertainties.")
    wrong = given.replace("-216.4", "-316.4")
    check = next(f for f in evaluate(_case(wrong), LIB).assessment.findings
                 if f.rule == "estimated-data")
    assert check.severity == "caution"
    assert check.text.endswith("They differ by more than 2 standard uncertainties of the "
                               "estimate in ΔfH°: check the values and their source.")


def test_estimate_keys_are_checked_with_located_messages():
    bad = CASE.format(extra='uncertainty = { hf = "5 kJ/mol" }\nt_range = ["300 K", "500 K"]')
    assert _problems(bad) == [
        "cases/est.md:14: key 'species[1].uncertainty': 'uncertainty' goes with values given in "
        "the table; here the estimate brings its own uncertainties (the method's published "
        "accuracy): remove 'uncertainty', or give hf, s and cp too (they are then used, and "
        "the estimate shown beside them)",
        "cases/est.md:15: key 'species[1].t_range': 't_range' goes with values given in the "
        "table; here the estimate brings its own temperature range (the method's): remove "
        "'t_range', or give hf, s and cp too (they are then used, and the estimate shown "
        "beside them)"]
    partial = CASE.format(extra='hf = "-216 kJ/mol"')
    assert _problems(partial) == [
        "cases/est.md:8: key 'species[1].s': with 'estimate', give all of hf, s and cp (they are "
        "used, and the estimate is shown beside them as a check) or none of them; 's' is "
        "missing",
        "cases/est.md:8: key 'species[1].cp': with 'estimate', give all of hf, s and cp (they "
        "are used, and the estimate is shown beside them as a check) or none of them; 'cp' is "
        "missing"]
    no_structure = CASE.format(extra="").replace('smiles = "CCOC"\n', "")
    assert _problems(no_structure) == [
        "cases/est.md:12: key 'species[1].estimate': an estimate is made from the structure: "
        "add a line like: smiles = \"CC(=O)Nc1ccccc1\""]
    solid = CASE.format(extra="").replace('phase = "g"', 'phase = "s"')
    assert _problems(solid) == [
        "cases/est.md:11: key 'species[1].phase': an estimate can be made for a gas (g) or a "
        "liquid (l) only, not for phase 's': group additivity gives ideal-gas values and the "
        "liquid is reached by subtracting an estimated heat of vaporisation; remove "
        "'estimate' and give measured hf, s and cp"]


def test_a_table_without_data_or_estimate_still_needs_its_data():
    text = CASE.format(extra="").replace('estimate = "benson"\n', "")
    assert _problems(text)[:1] == [
        "cases/est.md:8: key 'species[1].hf': required key is missing in [[species]]; add a "
        "line like: hf = \"-310 kJ/mol\""]


def test_a_structure_that_is_not_the_formula_is_an_error_at_the_smiles():
    text = CASE.format(extra="").replace('smiles = "CCOC"', 'smiles = "CCCOC"')
    assert _problems(text) == [
        "cases/est.md:12: key 'species[1].smiles': species 'product': the SMILES describes "
        "C4H10O1, not the formula 'C3H8O': correct the one that is wrong"]


def test_a_structure_that_cannot_be_estimated_is_an_error_at_the_smiles():
    text = CASE.format(extra="").replace('smiles = "CCOC"', 'smiles = "[CH2]COC"').replace(
        'formula = "C3H8O"', 'formula = "C3H7O"').replace(
        "C2H4(g) + CH3OH(g) -> product(g)", "C2H4(g) + CH3O(g) -> product(g)")
    assert _problems(text) == [
        "cases/est.md:12: key 'species[1].smiles': species 'product': the structure is a "
        "radical; group-additivity estimates here are for closed-shell molecules only"]


def test_an_estimate_that_cannot_be_made_is_an_error_at_the_estimate():
    text = CASE.format(extra="").replace('smiles = "CCOC"', 'smiles = "CC(N)=O"').replace(
        'formula = "C3H8O"', 'formula = "C2H5NO"').replace('"benson"', '"joback"').replace(
        "C2H4(g) + CH3OH(g) -> product(g)", "C2H4(g) + HNCO(g) + H2(g) -> product(g) + C(s)")
    problems = _problems(text)
    assert len(problems) == 1 and problems[0].startswith(
        "cases/est.md:13: key 'species[1].estimate': species 'product': ΔfH° cannot be "
        "estimated for this structure:")
    assert "Joback's groups do not describe amides" in problems[0]


# --- energetic screening of every species with a structure ---------------------------

def _record(name: str, formula: str, elements, smiles: str | None) -> SpeciesRecord:
    """A record invented for a test (the numbers only need to be finite)."""
    return SpeciesRecord(id=f"{name}(l)", name=name, formula=formula, elements=elements,
                         charge=0, phase="l", model=ConstantCp(-300e3, 300.0, 250.0),
                         source="invented for a test", smiles=smiles, molar_mass=146.2)


PEROXIDE = _record("test peroxide", "C8H18O2", (("C", 8), ("H", 18), ("O", 2)),
                   "CC(C)(C)OOC(C)(C)C")          # di-tert-butyl peroxide's structure
ETHER = _record("test ether", "C8H18O2", (("C", 8), ("H", 18), ("O", 2)),
                "CC(C)(C)OCCOCC")                 # the same formula, no O-O bond
BARE = _record("test bare", "C8H18O2", (("C", 8), ("H", 18), ("O", 2)), None)


def _terms(*records):
    reaction = parse_reaction(" + ".join(f"{r.name}(l)" for r in records) + " -> X(l)")
    return tuple(ResolvedTerm(t, r) for t, r in zip(reaction.reactants, records))


def test_library_records_with_a_structure_are_screened_for_groups():
    screens, _products = screen_terms(_terms(PEROXIDE, ETHER, BARE), LIB, DEFAULT)
    by_name = {s.species: s for s in screens}
    # C, H and O only: the composition alone would not be screened; the structure is
    assert set(by_name) == {"test peroxide", "test ether"}
    # UN Manual of Tests and Criteria, Appendix 6, Table A6.1: O-O is "contiguous
    # oxygen atoms" (peroxides)
    assert by_name["test peroxide"].explosophores == ("contiguous oxygen atoms",)
    assert by_name["test ether"].explosophores == ()
    assert by_name["test ether"].explosophore_note == "no Table A6.1 group found"


def test_a_library_species_with_a_structure_raises_the_energetic_finding():
    lib = LIB.with_records([PEROXIDE])
    text = CASE.format(extra="").replace(
        "C2H4(g) + CH3OH(g) -> product(g)",
        "test peroxide(l) -> 2 CH3COCH3(l) + C2H6(g)").split("[[species]]")[0] + "+++\nN.\n"
    a = evaluate(parse_case_text(text, "cases/p.md"), lib).assessment
    hit = next(f for f in a.findings if f.rule == "energetic-species")
    assert hit.text.startswith("test peroxide: ")
    assert "it carries explosophore groups (contiguous oxygen atoms)" in hit.text


def test_a_missing_structure_toolkit_is_said_plainly():
    # RDKit is a run-time dependency; a broken installation is simulated by making
    # its import fail in a fresh interpreter
    code = (
        "import sys; sys.modules['rdkit'] = None\n"
        "from dossier.assess.screening import screen_species\n"
        "from dossier.engine.settings import DEFAULT\n"
        "from dossier.library.models import ConstantCp\n"
        "from dossier.library.record import SpeciesRecord\n"
        "r = SpeciesRecord(id='p(l)', name='p', formula='C2H6O2', elements=(('C', 2), "
        "('H', 6), ('O', 2)), charge=0, phase='l', model=ConstantCp(-200e3, 200.0, 150.0), "
        "source='test', smiles='CCOO', molar_mass=62.07)\n"
        "print(screen_species(r, r.smiles, (), DEFAULT).explosophore_note)\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.strip()
    assert out == NO_TOOLKIT


def test_an_estimated_vapour_below_its_estimated_boiling_point_is_flagged():
    # TAME: Joback's normal boiling point 356 K (the measured one is 359 K, CRC Handbook
    # "Physical Constants of Organic Compounds", from memory); a gas written at 50-80 °C
    # and 1 bar lies below it
    text = CASE.format(extra="").replace('smiles = "CCOC"', 'smiles = "CCC(C)(C)OC"').replace(
        'formula = "C3H8O"', 'formula = "C6H14O"').replace(
        "C2H4(g) + CH3OH(g) -> product(g)", "isobutene(g) + C2H5OH(g) <=> product(g)").replace(
        '["100 degC", "200 degC"]', '["50 degC", "80 degC"]')
    ev = evaluate(parse_case_text(text, "cases/est.md"), LIB)
    record = next(r for r in ev.reaction_records if r.name == "product")
    # Joback and Reid (1987), Tb = 198.2 K + Σ group values (from memory): 4 × CH3 23.58
    # + CH2 22.88 + >C< 18.25 + -O- 22.42 = 157.87; 356.07 K by hand
    assert record.phase_data.t_boil == pytest.approx(356.07, abs=0.01)
    assert record.phase_data.source_of("boiling point").startswith(
        "estimate by the Joback method")
    assert any(w.startswith("product(g):") and "boiling point" in w
               for w in ev.assessment.warnings)
