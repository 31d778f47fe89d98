"""UNIFAC activity coefficients and group assignments (dossier.engine.activity).

Check values: a hand calculation of the original UNIFAC from its published
equations and parameters, and the reference value printed in the thermo
package's documentation for the same mixture.
"""
from __future__ import annotations

import math

import pytest

from dossier.engine.activity import (GroupContribution, assign_groups, group_names,
                                     missing_interactions, thermo_version)

# Original UNIFAC, published parameters (Hansen, Rasmussen, Fredenslund, Schiller and
# Gmehling, Ind. Eng. Chem. Res. 30 (1991) 2352, Tables 1 and 2; from memory, and the
# same numbers stand in thermo's UFSG/UFIP tables): subgroup R and Q, and the
# interaction parameters a_mn (K) between main groups 1 "CH2" and 9 "CH2CO".
R_Q = {"CH3": (0.9011, 0.848), "CH2": (0.6744, 0.540), "CH3CO": (1.6724, 1.488)}
MAIN = {"CH3": 1, "CH2": 1, "CH3CO": 9}
A_MN = {(1, 1): 0.0, (9, 9): 0.0, (1, 9): 476.40, (9, 1): 26.76}


def unifac_by_hand(T, xs, molecules):
    """ln γ of each molecule by the equations of Fredenslund, Jones and Prausnitz,
    AIChE J. 21 (1975) 1086 (combinatorial part with z = 10, residual part from
    the group activity coefficients), written out independently of thermo."""
    r = [sum(n * R_Q[g][0] for g, n in m.items()) for m in molecules]
    q = [sum(n * R_Q[g][1] for g, n in m.items()) for m in molecules]
    L = [5 * (ri - qi) - (ri - 1) for ri, qi in zip(r, q)]
    sum_r = sum(x * ri for x, ri in zip(xs, r))
    sum_q = sum(x * qi for x, qi in zip(xs, q))
    sum_xl = sum(x * li for x, li in zip(xs, L))
    comb = []
    for x, ri, qi, li in zip(xs, r, q, L):
        phi, theta = x * ri / sum_r, x * qi / sum_q
        comb.append(math.log(phi / x) + 5 * qi * math.log(theta / phi) + li
                    - phi / x * sum_xl)

    def ln_group_gammas(counts):
        total = sum(counts.values())
        X = {g: n / total for g, n in counts.items()}
        area = sum(X[g] * R_Q[g][1] for g in X)
        Th = {g: X[g] * R_Q[g][1] / area for g in X}
        psi = {(m, n): math.exp(-A_MN[(MAIN[m], MAIN[n])] / T) for m in X for n in X}
        out = {}
        for k in X:
            s1 = sum(Th[m] * psi[(m, k)] for m in X)
            s2 = sum(Th[m] * psi[(k, m)] / sum(Th[n] * psi[(n, m)] for n in X) for m in X)
            out[k] = R_Q[k][1] * (1 - math.log(s1) - s2)
        return out

    mixture = {}
    for x, m in zip(xs, molecules):
        for g, n in m.items():
            mixture[g] = mixture.get(g, 0.0) + x * n
    big = ln_group_gammas(mixture)
    res = []
    for m in molecules:
        pure = ln_group_gammas(dict(m))
        res.append(sum(n * (big[g] - pure[g]) for g, n in m.items()))
    return [c + rr for c, rr in zip(comb, res)]


HEXANE = {"CH3": 2, "CH2": 4}
BUTANONE = {"CH3": 1, "CH2": 1, "CH3CO": 1}


def test_groups_of_hexane_and_butanone_from_their_cas_numbers():
    # Hand, from the UNIFAC group definitions: n-hexane = 2 CH3 + 4 CH2;
    # 2-butanone = CH3 + CH2 + CH3CO.
    hexane = assign_groups("unifac", "110-54-3", None, {"C": 6, "H": 14})
    butanone = assign_groups("unifac", "78-93-3", None, {"C": 4, "H": 8, "O": 1})
    assert group_names("unifac", hexane.groups) == "CH3 ×2, CH2 ×4"
    assert group_names("unifac", butanone.groups) == "CH3 ×1, CH2 ×1, CH3CO ×1"
    assert hexane.origin == "Dortmund Data Bank group assignment for CAS 110-54-3"


def test_unifac_gammas_of_hexane_and_butanone_against_hand_and_thermo_reference():
    hexane = assign_groups("unifac", "110-54-3", None, {"C": 6, "H": 14})
    butanone = assign_groups("unifac", "78-93-3", None, {"C": 4, "H": 8, "O": 1})
    model = GroupContribution("unifac", (hexane.groups, butanone.groups))
    ours = [math.exp(v) for v in model.ln_gammas(333.15, [0.5, 0.5])]
    by_hand = [math.exp(v) for v in unifac_by_hand(333.15, [0.5, 0.5], [HEXANE, BUTANONE])]
    assert ours == pytest.approx(by_hand, rel=1e-9)
    # thermo 0.6.1 documentation, thermo.unifac.UNIFAC_gammas, first example
    # (n-hexane / 2-butanone, 333.15 K, x = 0.5): [1.427602583562, 1.364654501010]
    assert ours == pytest.approx([1.427602583562, 1.364654501010], rel=1e-9)


@pytest.mark.parametrize("x1", [0.05, 0.3, 0.8])
def test_unifac_gammas_follow_the_hand_calculation_across_composition(x1):
    hexane = assign_groups("unifac", "110-54-3", None, {"C": 6, "H": 14})
    butanone = assign_groups("unifac", "78-93-3", None, {"C": 4, "H": 8, "O": 1})
    model = GroupContribution("unifac", (hexane.groups, butanone.groups))
    for T in (300.0, 360.0):
        assert list(model.ln_gammas(T, [x1, 1 - x1])) == pytest.approx(
            unifac_by_hand(T, [x1, 1 - x1], [HEXANE, BUTANONE]), rel=1e-9)


def test_groups_of_the_esterification_species():
    # Hand, from the UNIFAC group definitions (Hansen et al. 1991, Table 1): acetic acid
    # CH3 + COOH; ethanol CH3 + CH2 + OH; ethyl acetate CH3 + CH2 + CH3COO; water H2O.
    # Modified UNIFAC (Dortmund) splits the alcohol OH by kind: ethanol's is primary,
    # OH(P) (Gmehling, Li and Schiller, Ind. Eng. Chem. Res. 32 (1993) 178; from memory).
    found = [assign_groups(v, cas, None, {})
             for v in ("unifac", "unifac-dortmund")
             for cas in ("64-19-7", "64-17-5", "141-78-6", "7732-18-5")]
    names = [group_names(v, a.groups) for v, a in zip(["unifac"] * 4 + ["unifac-dortmund"] * 4,
                                                      found)]
    assert names == ["CH3 ×1, COOH ×1", "CH3 ×1, CH2 ×1, OH ×1",
                     "CH3 ×1, CH2 ×1, CH3COO ×1", "H2O ×1",
                     "CH3 ×1, COOH ×1", "CH3 ×1, CH2 ×1, OH(P) ×1",
                     "CH3 ×1, CH2 ×1, CH3COO ×1", "H2O ×1"]
    assert missing_interactions("unifac", found[:4]) == ()
    assert missing_interactions("unifac-dortmund", found[4:]) == ()


def test_a_structure_is_fragmented_only_when_it_adds_up():
    # Ethyl acetate from its SMILES: the same groups as the curated assignment.
    from_smiles = assign_groups("unifac", None, "CCOC(C)=O", {"C": 4, "H": 8, "O": 2})
    assert group_names("unifac", from_smiles.groups) == "CH3 ×1, CH2 ×1, CH3COO ×1"
    assert "not a curated assignment" in from_smiles.origin
    # Hydrogen peroxide: the alcohol OH group would match both oxygens, but H2O2 is not
    # an alcohol; a molecule without carbon is never fragmented.
    assert assign_groups("unifac", None, "OO", {"H": 2, "O": 2}) is None
    # Nitric acid: no groups cover it; an unreadable structure gives no groups either.
    assert assign_groups("unifac", None, "O[N+](=O)[O-]", {"H": 1, "N": 1, "O": 3}) is None
    assert assign_groups("unifac", None, "C1CC1(", {"C": 3, "H": 6}) is None
    # A structure that does not add up to the formula given is refused.
    assert assign_groups("unifac", None, "CCO", {"C": 3, "H": 8, "O": 1}) is None


def test_a_missing_interaction_parameter_is_named():
    # The original UNIFAC table has no parameters between CCOO (esters) and ACNO2
    # (nitroaromatics): ethyl acetate with nitrobenzene cannot be computed.
    ester = assign_groups("unifac", "141-78-6", None, {})
    nitrobenzene = assign_groups("unifac", "98-95-3", None, {})
    assert missing_interactions("unifac", (ester, nitrobenzene)) == (("CCOO", "ACNO2"),)


def test_the_thermo_version_is_named():
    import thermo

    assert thermo_version("unifac") == thermo.__version__
    with pytest.raises(ValueError, match="unknown activity model 'nrtl'"):
        thermo_version("nrtl")
