"""The Monte Carlo machinery (engine/uncertainty.py) and the array forms of the safety
methods it uses, each checked against an independent route."""
from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, strategies as st

from dossier.engine.safety import criticality_class, criticality_classes, td24, td24_many
from dossier.engine.uncertainty import (Z_95, ScenarioDraws, class_shares, draw, interval,
                                        percentiles, reaction_shifts, scenario_samples)


def test_z_is_the_975th_percentile_of_the_normal_distribution():
    # NIST/SEMATECH e-Handbook of Statistical Methods, normal table: 1.960; also
    # sqrt(2) * erfinv(0.95) computed independently with the standard library
    assert Z_95 == pytest.approx(1.959963984540054, abs=1e-12)
    assert 0.5 * math.erfc(-Z_95 / math.sqrt(2.0)) == pytest.approx(0.975, abs=1e-12)


def test_a_half_width_comes_back_as_the_95_percent_interval():
    rng = np.random.default_rng(7)
    x = draw(rng, 10.0, 2.0, 200_000)
    lo, hi = interval(x)
    # the normal sample's 2.5th and 97.5th percentiles are 10 -/+ 2 (by construction of
    # sigma = u / 1.96); the percentile's standard error at n = 200,000 is about 0.01
    assert lo == pytest.approx(8.0, abs=0.04) and hi == pytest.approx(12.0, abs=0.04)


def test_draws_are_clipped_to_their_bounds_and_use_the_same_stream():
    a = draw(np.random.default_rng(1), 0.5, 2.0, 1000, 0.0, 1.0)
    assert a.min() >= 0.0 and a.max() <= 1.0
    # an exact value (half-width 0) still takes its n numbers from the stream
    r1, r2 = np.random.default_rng(3), np.random.default_rng(3)
    draw(r1, 1.0, 0.0, 50)
    draw(r2, 1.0, 5.0, 50)
    assert np.array_equal(r1.standard_normal(5), r2.standard_normal(5))


def test_interval_leaves_out_missing_draws_and_gives_up_below_half():
    assert interval(np.array([1.0, 2.0, np.nan, 3.0])) is not None
    assert interval(np.array([1.0, np.nan, np.nan, np.nan])) is None
    lo, hi = interval(np.array([1.0, 2.0, np.inf, np.inf]))
    assert lo is not None and hi is None  # an infinite end is unbounded


def test_reaction_shift_half_width_is_the_root_sum_of_squares():
    # analytic check (GUM, linear propagation of independent inputs): the 95 % half-width
    # of sum(nu_i dh_i) is sqrt(sum (nu_i u_i)^2) when each dh_i has half-width u_i
    nus = (-1.0, -3.0, 1.0, 2.0)
    widths = ((4000.0, 0.0, 0.0), (0.0, 0.0, 0.0), (2500.0, 0.0, 0.0), (1200.0, 0.0, 0.0))
    shifts = reaction_shifts(np.random.default_rng(11), nus, widths, 400_000)
    expected = math.sqrt(sum((nu * u[0]) ** 2 for nu, u in zip(nus, widths)))
    lo, hi = interval(shifts.dh)
    assert (hi - lo) / 2 == pytest.approx(expected, rel=0.01)
    assert not np.any(shifts.ds) and not np.any(shifts.dcp)


@pytest.mark.parametrize("mtsr, mtt, td", [
    (350.0, 360.0, 400.0), (350.0, 420.0, 400.0), (370.0, 360.0, 400.0),
    (410.0, 360.0, 400.0), (410.0, 420.0, 400.0),
    # equalities go to the more critical class (CRITICALITY_SOURCE)
    (400.0, 360.0, 400.0), (360.0, 360.0, 400.0), (350.0, 400.0, 400.0),
])
def test_the_array_class_is_the_scalar_class(mtsr, mtt, td):
    assert int(criticality_classes(mtsr, mtt, td)) == \
        criticality_class(300.0, mtsr, mtt, td).klass


def test_the_array_class_marks_missing_levels():
    got = criticality_classes([350.0, np.nan], [360.0, 360.0], [400.0, 400.0])
    assert got.tolist() == [1, 0]


def test_td24_for_many_draws_is_the_scalar_td24():
    cps = np.array([1700.0, 1900.0, 2500.0])
    eas = np.array([80e3, 110e3, 160e3])
    qs = np.array([1.5, 25.0, 0.2])
    trefs = np.array([473.15, 453.15, 500.0])
    many = td24_many(cps, eas, qs, trefs)
    for i in range(3):
        assert many[i] == pytest.approx(td24(cps[i], eas[i], qs[i], trefs[i]), abs=1e-6)
    assert math.isnan(td24_many(1900.0, 1.0, 25.0, 453.15))  # no 24 h crossing


def test_scenario_draws_follow_the_heat_balance():
    # hand check of one draw: dT = Q/(m cp) = 1e8 / (1000 * 2000) = 50 K;
    # MTSR = 300 + 0.4 * 50 = 320 K; class 3 with MTT 310 K and TD24 400 K
    one = np.ones(1)
    d = ScenarioDraws(heat_J=1e8 * one, mass_kg=1000 * one, cp=2000 * one,
                      t_process=300 * one, accumulation=0.4 * one, mtt=310 * one,
                      td24_given=400 * one, ea=None, q_ref=None, t_ref=None,
                      feed_time_s=3600 * one, ua_W_per_K=1000 * one, t_coolant=290 * one,
                      n_gas_mol=None, free_volume_m3=None, p_initial_Pa=None,
                      design_pressure_Pa=None)
    s = scenario_samples(d, 86400.0)
    assert s.dT_ad[0] == pytest.approx(50.0) and s.mtsr[0] == pytest.approx(320.0)
    assert s.klass.tolist() == [3]
    # cooling: release 1e8 J / 3600 s = 27.8 kW against 1000 W/K * 10 K = 10 kW
    assert s.cooling_ratio[0] == pytest.approx(1e8 / 3600 / 1e4)
    assert s.pressure_Pa is None and s.tmr_h is None


def test_class_shares_sum_to_one_most_likely_first():
    shares = class_shares(np.array([3, 4, 4, 4, 0, 3, 4]))
    assert shares == ((4, pytest.approx(4 / 6)), (3, pytest.approx(2 / 6)))
    assert sum(p for _k, p in shares) == pytest.approx(1.0)
    assert class_shares(np.array([0, 0])) == ()


@given(st.lists(st.floats(min_value=-1e9, max_value=1e9, allow_nan=False)
                | st.sampled_from([math.inf, -math.inf]), min_size=1, max_size=80),
       st.lists(st.floats(min_value=0.0, max_value=100.0), min_size=1, max_size=4))
def test_percentiles_are_numpys_to_the_last_bit(values, percents):
    # reference: numpy.percentile, default ("linear", Hyndman and Fan type 7) method
    a = np.array(values)
    with np.errstate(invalid="ignore"):  # inf - inf between two infinite draws
        got = percentiles(a, tuple(percents))
        want = np.percentile(a, percents)
    assert np.array_equal(got, want, equal_nan=True), (got, want)


def test_percentiles_of_a_hand_example():
    # hand calculation: 0..10, the 25th percentile sits at index 2.5 -> 2.5
    assert percentiles(np.arange(11.0), (25.0, 2.5, 97.5)).tolist() == [2.5, 0.25, 9.75]


def test_crossover_draws_are_the_roots_of_each_draw():
    # ΔrH° = 50 kJ/mol and ΔrS° = 125 J/(mol K) constant: ΔrG° = 0 at 400 K.  Each draw's
    # crossover with constant shifts is (ΔH + δh) / (ΔS + δs) (hand calculation); with a
    # ΔCp shift, the root of that draw's ΔG(T) found by bisection to 1e-9 K.
    from dossier.engine.roots import brent
    from dossier.engine.uncertainty import ReactionShifts, crossover_draws

    dh = np.array([0.0, 1e3, -2e3, 0.0, 500.0])
    ds = np.array([0.0, 1.0, -3.0, 0.0, 2.0])
    dcp = np.array([0.0, 0.0, 0.0, 4.0, -6.0])
    shifts = ReactionShifts(dh, ds, dcp)
    got = crossover_draws(lambda T: np.full_like(T, 50e3), lambda T: np.full_like(T, 125.0),
                          400.0, shifts, 300.0, 500.0)
    assert got[:3] == pytest.approx((50e3 + dh[:3]) / (125.0 + ds[:3]), rel=1e-12)
    for i in (3, 4):
        def g(T, i=i):
            h = 50e3 + dh[i] + dcp[i] * (T - 298.15)
            s = 125.0 + ds[i] + dcp[i] * math.log(T / 298.15)
            return h - T * s
        assert got[i] == pytest.approx(brent(g, 300.0, 500.0, xtol=1e-9), abs=1e-6)


def test_a_draw_without_a_crossover_in_the_range_is_nan():
    from dossier.engine.uncertainty import ReactionShifts, crossover_draws

    shifts = ReactionShifts(np.array([0.0, 30e3]), np.zeros(2), np.zeros(2))
    got = crossover_draws(lambda T: np.full_like(T, 50e3), lambda T: np.full_like(T, 125.0),
                          400.0, shifts, 300.0, 500.0)
    # the second draw's root, 80 kJ/mol / 125 J/(mol K) = 640 K, lies outside 300-500 K
    assert got[0] == pytest.approx(400.0, rel=1e-12) and math.isnan(got[1])
