"""The symbolic route agrees with the numeric engine, and crossovers are all found."""
from __future__ import annotations

import math

import numpy as np
import pytest

from dossier.engine.derivation import derive
from dossier.library.lookup import Library
from dossier.library.models import ConstantCp
from dossier.engine.thermo import ReactionThermo, temperature_grid

LIB = Library.default()


def reaction(*terms):
    return ReactionThermo(tuple(float(nu) for nu, _, _ in terms),
                          tuple(LIB.resolve(label, ph).model for _, label, ph in terms))


@pytest.mark.parametrize("terms,lo,hi", [
    ([(-1, "N2", "g"), (-3, "H2", "g"), (2, "NH3", "g")], 300.0, 1500.0),     # crosses 1000 K joins
    ([(-1, "C6H5NO2", "l"), (-3, "H2", "g"), (1, "C6H5NH2", "l"), (2, "H2O", "l")], 300.0, 400.0),
    ([(-1, "CaCO3", "s"), (1, "CaO", "s"), (1, "CO2", "g")], 500.0, 1200.0),
])
def test_closed_forms_reproduce_the_numeric_engine(terms, lo, hi):
    r = reaction(*terms)
    d = derive(r, lo, hi)
    T = np.linspace(lo, hi, 301)
    scale = np.maximum(np.abs(r.dH(T)), 1.0)
    # Kirchhoff's integrals of ΔrCp° give back the summed species values
    # (an identity of the models; common practice, no source).  Expanded
    # polynomials lose a few digits in float64, hence 1e-7 of |ΔrH°|.
    assert np.max(np.abs(d.dH(T) - r.dH(T)) / scale) < 1e-7
    assert np.max(np.abs(d.dG(T) - r.dG(T)) / scale) < 1e-7
    assert np.max(np.abs(d.dS(T) - r.dS(T))) < 1e-5
    assert np.max(np.abs(d.dCp(T) - r.dCp(T))) < 1e-6


def test_segments_follow_the_model_breakpoints():
    r = reaction((-1, "N2", "g"), (-3, "H2", "g"), (2, "NH3", "g"))
    d = derive(r, 300.0, 1500.0)
    assert [(s.t_low, s.t_high) for s in d.segments] == [(300.0, 1000.0), (1000.0, 1500.0)]
    first = d.segments[0]
    assert first.anchor == 298.15 or first.anchor == 300.0
    # The anchor values are the engine's own ΔrH°, ΔrS° there.
    assert first.dH_anchor == pytest.approx(float(r.dH(first.anchor)), rel=1e-12)
    assert "T" in first.dG_latex and "log" in first.dG_latex or "ln" in first.dG_latex


def _tangent_reaction() -> ReactionThermo:
    # A product with constant ΔCp = 100 J/(mol K) chosen so that ΔrS°(400 K) = 0
    # and ΔrH°(400 K) = 0: ΔrG° then has a maximum of exactly zero at 400 K.
    dcp, t0, ts = 100.0, 298.15, 400.0
    ds0 = -dcp * math.log(ts / t0)
    dh0 = -dcp * (ts - t0)
    product = ConstantCp(dh0, ds0, dcp, 200.0, 800.0)
    reactant = ConstantCp(0.0, 0.0, 0.0, 200.0, 800.0)
    return ReactionThermo((-1.0, 1.0), (reactant, product))


def test_tangent_crossover_is_not_missed():
    r = _tangent_reaction()
    found = r.crossovers(300.0, 600.0)
    assert len(found) == 1
    assert found[0].T == pytest.approx(400.0, abs=1e-4)
    assert found[0].direction == "touches zero"


def test_two_crossovers_are_both_found():
    # Shift the tangent case down by 10 J/mol: ΔrG° now crosses zero twice.
    base = _tangent_reaction()
    shifted = ReactionThermo(base.nus, (base.models[0],
                                        ConstantCp(base.models[1].hf + 10.0, base.models[1].s298,
                                                   base.models[1].cp0, 200.0, 800.0)))
    found = shifted.crossovers(300.0, 600.0)
    assert [c.direction for c in found] == ["favourable below", "favourable above"]
    assert found[0].T < 400.0 < found[1].T
    for c in found:
        assert float(shifted.dG(c.T)) == pytest.approx(0.0, abs=1e-6)


def test_grid_keeps_window_ends_and_requested_points():
    g = temperature_grid(313.15, 353.15, extra=(333.333,))
    assert g[0] == 313.15 and g[-1] == 353.15 and 333.333 in g
    assert len(g) <= 43
    assert np.all(np.diff(g) > 0)
