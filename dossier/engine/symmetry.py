"""The symmetry number of a molecule from its structure, for group-additivity entropies.

Benson's method adds up the groups' intrinsic entropies and subtracts R ln σ,
σ the molecule's symmetry number: the number of indistinguishable orientations
reached by rotating the whole molecule (external) and its methyl-type tops
(internal).  Here σ is found from the molecular graph with RDKit (imported in
the function; the caller has made sure it loads).  Pure: a molecule in, numbers
out.
"""
from __future__ import annotations

import numpy as np


def _skeleton(Chem, mol):
    """The heavy-atom graph with its bond orders and charges forgotten and each atom's
    element and hydrogen count kept (as an isotope label): resonance forms such as the
    two oxygens of a nitro group become equivalent, as they are."""
    rw = Chem.RWMol(mol)
    for atom in rw.GetAtoms():
        atom.SetIsotope(1 + atom.GetTotalNumHs() + 10 * atom.GetAtomicNum())
        atom.SetFormalCharge(0)
        atom.SetIsAromatic(False)
        atom.SetNoImplicit(True)
        atom.SetNumExplicitHs(0)
    for bond in rw.GetBonds():
        bond.SetBondType(Chem.BondType.SINGLE)
        bond.SetIsAromatic(False)
    out = rw.GetMol()
    out.UpdatePropertyCache(strict=False)
    return out


def _tetrahedral_centres(Chem, mol) -> list[int]:
    """sp3 atoms whose handedness an automorphism could invert: at most one hydrogen
    and four substituents (amines invert fast and are left out)."""
    out = []
    for atom in mol.GetAtoms():
        if (atom.GetHybridization() == Chem.HybridizationType.SP3
                and atom.GetTotalNumHs() <= 1 and atom.GetDegree() + atom.GetTotalNumHs() == 4
                and (atom.GetSymbol() != "N" or atom.GetFormalCharge() > 0)):
            out.append(atom.GetIdx())
    return out


def _small_molecule_sigma(Chem, mol) -> int:
    """σ of a molecule with one heavy atom: XH4 12, XH3 3 (6 if planar), XH2 2, else 1."""
    atom = mol.GetAtomWithIdx(0)
    h = atom.GetTotalNumHs()
    if h == 4:
        return 12
    if h == 3:
        return 6 if atom.GetHybridization() == Chem.HybridizationType.SP2 else 3
    return 2 if h == 2 else 1


def _axis_factor(Chem, mol) -> int:
    """2 when the heavy atoms lie on a line and every atom off it is one of a pair of
    hydrogens on a trigonal end (ethylene, formaldehyde, allene, ketene): a rotation
    about that line swaps them without moving a heavy atom."""
    atoms = list(mol.GetAtoms())
    if any(a.GetDegree() > 2 for a in atoms):
        return 1  # a branch: the heavy atoms are not on one line
    inner = [a for a in atoms if a.GetDegree() == 2]
    if len(atoms) > 2 and any(a.GetHybridization() != Chem.HybridizationType.SP
                              for a in inner):
        return 1
    with_h = [a for a in atoms if a.GetTotalNumHs()]
    if with_h and all(a.GetTotalNumHs() == 2 and a.GetDegree() == 1
                      and a.GetHybridization() == Chem.HybridizationType.SP2 for a in with_h):
        return 2
    return 1


def symmetry_number(mol) -> tuple[int, bool, str]:
    """(σ, handedness left open, note) of a molecule.

    σ = 3 for each methyl-type top (three hydrogens on an sp3 atom with one heavy
    neighbour) × the automorphisms of the heavy-atom skeleton that keep the
    handedness of every tetrahedral centre (so rotations, not reflections; judged
    on one 3-D embedding) × 2 for the rotation about a line of heavy atoms that only
    swaps hydrogens.  Non-planar rings are counted as their planar average
    (cyclohexane 12 rather than 6): within the stated uncertainty of S°.
    """
    from rdkit import Chem
    from rdkit.Chem import AllChem

    if mol.GetNumAtoms() == 1:
        return _small_molecule_sigma(Chem, mol), False, ""
    tops = sum(1 for a in mol.GetAtoms()
               if a.GetTotalNumHs() == 3 and a.GetDegree() == 1
               and a.GetHybridization() == Chem.HybridizationType.SP3)
    skeleton = _skeleton(Chem, mol)
    autos = skeleton.GetSubstructMatches(skeleton, uniquify=False, useChirality=False,
                                         maxMatches=100000)
    centres = _tetrahedral_centres(Chem, mol)
    note = ""
    proper = len(autos)
    if centres and len(autos) > 1:
        with_h = Chem.AddHs(mol)
        if AllChem.EmbedMolecule(with_h, randomSeed=20240601) == 0:
            pos = with_h.GetConformer().GetPositions()

            def hand(centre: int, ring: list[int]) -> float:
                return float(np.sign(np.linalg.det(np.array([pos[n] - pos[centre]
                                                             for n in ring[:3]]))))

            neighbours = {c: [n.GetIdx() for n in mol.GetAtomWithIdx(c).GetNeighbors()]
                          for c in centres}
            proper = sum(1 for p in autos
                         if all(hand(c, neighbours[c]) == hand(p[c], [p[n] for n in neighbours[c]])
                                for c in centres))
        else:
            note = "no 3-D structure could be made, so reflections were not told from rotations"
    sigma = proper * 3 ** tops * _axis_factor(Chem, mol)
    stereo = Chem.FindMolChiralCenters(mol, includeUnassigned=True,
                                       useLegacyImplementation=False)
    return max(sigma, 1), any(label == "?" for _i, label in stereo), note


__all__ = ["symmetry_number"]
