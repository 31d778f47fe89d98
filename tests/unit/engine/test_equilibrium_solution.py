"""Equilibrium of reactions in one liquid solution (engine level).

Every check value is a hand calculation written out beside it: for a
stoichiometric feed the mole fractions are known functions of the extent ξ, so
K = Π (γ_i x_i)^ν_i gives a polynomial in ξ that is solved here in closed form.
"""
from __future__ import annotations

import math

import pytest
from scipy.integrate import quad
from scipy.optimize import brentq

from dossier.engine.equilibrium import EqSpecies, EquilibriumSystem

ESTER = (EqSpecies(-1, "l"), EqSpecies(-1, "l"), EqSpecies(1, "l"), EqSpecies(1, "l"))


@pytest.mark.parametrize("K", [4.0, 8.68, 1e-3, 1e6])
def test_equimolar_a_plus_b_gives_the_quadratic_by_hand(K):
    # Hand calculation: A + B ⇌ C + D from 1 mol A and 1 mol B; x_A = x_B = (1 − ξ)/2,
    # x_C = x_D = ξ/2, so K = ξ²/(1 − ξ)², i.e. ξ = √K/(1 + √K).  K = 4 gives 2/3.
    r = EquilibriumSystem(ESTER, 1e5).solve(300.0, math.log(K))
    assert r.mode == "solved"
    assert r.conversion == pytest.approx(math.sqrt(K) / (1 + math.sqrt(K)), rel=1e-10)
    xi = r.conversion
    assert r.x == pytest.approx(((1 - xi) / 2, (1 - xi) / 2, xi / 2, xi / 2), rel=1e-10)
    assert r.gammas == (1.0, 1.0, 1.0, 1.0)


def test_k_of_4_gives_two_thirds_exactly():
    # Hand: √4/(1 + √4) = 2/3.
    r = EquilibriumSystem(ESTER, 1e5).solve(300.0, math.log(4.0))
    assert r.conversion == pytest.approx(2 / 3, abs=1e-12)


def test_isomerisation_in_solution_by_hand():
    # Hand: A(l) ⇌ B(l); x_A = 1 − ξ, x_B = ξ, K = ξ/(1 − ξ), ξ = K/(1 + K).
    system = EquilibriumSystem((EqSpecies(-1, "l"), EqSpecies(1, "l")), 1e5)
    for K in (0.25, 1.0, 9.0):
        assert system.solve(350.0, math.log(K)).conversion == pytest.approx(K / (1 + K),
                                                                           rel=1e-10)


def test_an_inert_solvent_cancels_when_the_moles_do_not_change():
    # Hand: with n_S mol of solvent the total stays 2 + n_S for A + B ⇌ C + D, which
    # cancels in K = x_C x_D / (x_A x_B): the answer is √K/(1 + √K) whatever n_S.
    diluted = EquilibriumSystem(ESTER, 1e5, inert_liquids_per_reaction=(5.0,))
    r = diluted.solve(300.0, math.log(4.0))
    assert r.conversion == pytest.approx(2 / 3, rel=1e-10)
    assert r.x[-1] == pytest.approx(5.0 / 7.0, rel=1e-10)  # the solvent: 5 of 7 mol


def test_an_inert_solvent_shifts_a_dissociation_by_hand():
    # Hand: A(l) ⇌ 2 B(l) from 1 mol A with n_S mol of solvent: n = 1 + ξ + n_S,
    # K = x_B²/x_A = 4ξ²/((1 − ξ)(1 + ξ + n_S)),
    # so (4 + K)ξ² + K n_S ξ − K(1 + n_S) = 0.
    K, n_s = 0.5, 3.0
    a, b, c = 4 + K, K * n_s, -K * (1 + n_s)
    by_hand = (-b + math.sqrt(b * b - 4 * a * c)) / (2 * a)
    system = EquilibriumSystem((EqSpecies(-1, "l"), EqSpecies(2, "l")), 1e5,
                               inert_liquids_per_reaction=(n_s,))
    assert system.solve(320.0, math.log(K)).conversion == pytest.approx(by_hand, rel=1e-10)
    # and without the solvent (n_S = 0): 4ξ² = K(1 − ξ²), ξ = √(K/(4 + K))
    pure = EquilibriumSystem((EqSpecies(-1, "l"), EqSpecies(2, "l")), 1e5)
    assert pure.solve(320.0, math.log(K)).conversion == pytest.approx(
        math.sqrt(K / (4 + K)), rel=1e-10)


def test_a_single_liquid_is_a_pure_phase_as_before():
    # Hand: 2 H2(g) + O2(g) -> 2 H2O(l): the only liquid has x = 1 (activity 1), so
    # Q = 1/(y_H2² y_O2 (p/p°)³) and nothing about the liquid enters.
    system = EquilibriumSystem((EqSpecies(-2, "g"), EqSpecies(-1, "g"), EqSpecies(2, "l")), 1e5)
    assert not system.has_solution
    gas_only = EquilibriumSystem((EqSpecies(-2, "g"), EqSpecies(-1, "g"), EqSpecies(2, "s")), 1e5)
    for u in (-5.0, 0.0, 3.0):
        assert system.ln_q(u) == gas_only.ln_q(u)


def test_liquids_stay_pure_beside_aqueous_species():
    # Hand: with a solute the water is the solvent (activity 1); a second liquid is
    # not mixed with it, so ln Q holds only the molality term ln(ξ/(1 − ξ)).
    system = EquilibriumSystem((EqSpecies(-1, "aq"), EqSpecies(-1, "l"), EqSpecies(1, "aq"),
                                EqSpecies(1, "l")), 1e5)
    assert not system.has_solution
    assert system.ln_q(0.7) == pytest.approx(0.7, rel=1e-12)  # ln(ξ/(1 − ξ)) = u


def test_liquids_on_one_side_are_all_or_nothing_with_the_reason():
    # Hand: A(l) + B(l) -> C(s) from 1 + 1 mol: x_A = x_B = 1/2 at any extent, so
    # Q = 1/(x_A x_B) = 4: complete when ln K > ln 4, none below it.
    system = EquilibriumSystem((EqSpecies(-1, "l"), EqSpecies(-1, "l"), EqSpecies(1, "s")), 1e5)
    assert system.ln_q_fixed() == pytest.approx(math.log(4.0), rel=1e-12)
    above = system.solve(300.0, math.log(4.0) + 0.01)
    below = system.solve(300.0, math.log(4.0) - 0.01)
    assert (above.mode, above.conversion, below.conversion) == ("all-or-nothing", 1.0, 0.0)
    assert "the liquids are all on one side of the equation" in above.note


def test_pure_solids_and_one_liquid_keep_the_all_or_nothing_answer():
    system = EquilibriumSystem((EqSpecies(-1, "s"), EqSpecies(-1, "l"), EqSpecies(1, "s")), 1e5)
    r = system.solve(300.0, 2.0)
    assert (r.mode, r.conversion) == ("all-or-nothing", 1.0)
    assert r.note == ("every species is a pure solid or a single liquid (activity 1), so the "
                      "model gives all or nothing")


class ConstantGammas:
    """An activity model with fixed ln γ (a stand-in to test the plumbing)."""

    def __init__(self, ln_gammas):
        self.values = tuple(ln_gammas)

    def ln_gammas(self, T, xs):
        assert len(xs) == len(self.values) and sum(xs) == pytest.approx(1.0)
        return self.values


def test_activity_coefficients_enter_as_k_over_k_gamma():
    # Hand: with constant γ, K = (γ_C γ_D / γ_A γ_B) ξ²/(1 − ξ)², so the mole-fraction
    # quotient is K_x = K / K_γ and ξ = √K_x/(1 + √K_x).
    ln_g = (math.log(0.8), math.log(1.2), math.log(1.75), math.log(2.2))
    k_gamma = 1.75 * 2.2 / (0.8 * 1.2)
    system = EquilibriumSystem(ESTER, 1e5, activity=ConstantGammas(ln_g))
    r = system.solve(330.0, math.log(8.0))
    k_x = 8.0 / k_gamma
    assert r.conversion == pytest.approx(math.sqrt(k_x) / (1 + math.sqrt(k_x)), rel=1e-10)
    assert r.gammas == pytest.approx((0.8, 1.2, 1.75, 2.2), rel=1e-12)
    assert r.note == ""


class Margules:
    """Two-suffix Margules, ln γ_A = a x_B², ln γ_B = a x_A²: with a > 2 the mixture
    splits into two liquids (Prausnitz, Lichtenthaler and de Azevedo, Molecular
    Thermodynamics of Fluid-Phase Equilibria, 3rd ed., 1999, §6.12: instability of
    the two-suffix Margules mixture for A/RT > 2; from memory)."""

    def __init__(self, a):
        self.a = a

    def ln_gammas(self, T, xs):
        x_a, x_b = xs
        return (self.a * x_b ** 2, self.a * x_a ** 2)


def test_a_splitting_mixture_keeps_the_one_phase_state_of_least_gibbs_energy():
    # Hand: A(l) ⇌ B(l) with Margules a = 3: f(ξ) = ln(ξ/(1 − ξ)) + a(1 − 2ξ) − ln K has
    # three roots for small ln K.  G/RT changes by ∫ f dξ between two of them; the root
    # kept must be the crossing from below with the lower G (found here with scipy).
    a, lnK = 3.0, 0.1

    def f(xi):
        return math.log(xi / (1 - xi)) + a * (1 - 2 * xi) - lnK

    low = brentq(f, 1e-6, 0.3)
    high = brentq(f, 0.7, 1 - 1e-9)
    g_high_minus_low = quad(f, low, high)[0]
    expected = high if g_high_minus_low < 0 else low
    system = EquilibriumSystem((EqSpecies(-1, "l"), EqSpecies(1, "l")), 1e5,
                               activity=Margules(a))
    r = system.solve(300.0, lnK)
    assert r.conversion == pytest.approx(expected, rel=1e-9)
    assert expected == high  # ln K > 0 favours B: the state rich in B is the stable one
    assert "may split into two phases" in r.note


def test_a_mild_activity_model_is_solved_without_a_note():
    # Margules a = 1 (< 2) stays one phase: ln Q is monotone, no note.  Hand: the root
    # of ln(ξ/(1 − ξ)) + (1 − 2ξ) = ln K, found here with scipy.
    lnK = 0.4
    expected = brentq(lambda xi: math.log(xi / (1 - xi)) + (1 - 2 * xi) - lnK, 1e-9, 1 - 1e-9)
    system = EquilibriumSystem((EqSpecies(-1, "l"), EqSpecies(1, "l")), 1e5,
                               activity=Margules(1.0))
    r = system.solve(300.0, lnK)
    assert r.conversion == pytest.approx(expected, rel=1e-10)
    assert r.note == ""
