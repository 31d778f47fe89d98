"""Propagation of stated uncertainties by Monte Carlo sampling.

Pure: arrays in, arrays out, no I/O.  Every stated uncertainty is the
half-width ``u`` of a 95 % interval (the convention of the Active
Thermochemical Tables); it is sampled as a normal distribution with standard
deviation ``u / z`` where ``z`` = 1.959964 is the 97.5th percentile of the
standard normal distribution, so that a figure depending linearly on one input
gets back the same ±u.  The same draws are used at every temperature, so a
species that is off is off everywhere (the profile's errors are correlated
along the temperature axis, as they are in reality).

Reaction properties: a species' enthalpy of formation, entropy and heat
capacity are shifted by δh, δs and δcp; the reaction's shifts are the
ν-weighted sums, and at temperature T

    ΔrH°(T) + Σν δh + Σν δcp (T − 298.15 K),
    ΔrS°(T) + Σν δs + Σν δcp ln(T / 298.15 K),

that is, a heat-capacity uncertainty is taken as constant over the range.

The runaway scenario is evaluated for every draw with the same formulas as
:mod:`dossier.engine.safety` (MTSR, TD24 by :func:`~dossier.engine.safety.td24_many`,
TMRad, the class by :func:`~dossier.engine.safety.criticality_classes`).
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable, Sequence

import numpy as np

from dossier.constants import R, SECONDS_PER_HOUR, T_REF
from dossier.engine.safety import criticality_classes, td24_many

#: The 97.5th percentile of the standard normal distribution: a 95 % half-width is
#: this many standard deviations (NIST/SEMATECH e-Handbook of Statistical Methods,
#: table of the normal distribution, 1.96).
Z_95 = 1.959963984540054


def draw(rng: np.random.Generator, central: float, half_width: float, n: int,
         low: float = -math.inf, high: float = math.inf) -> np.ndarray:
    """``n`` draws of a value with a 95 % half-width, clipped to [low, high] (a mass
    stays positive, an accumulation a fraction).  Always takes ``n`` numbers from
    ``rng``, so the stream does not depend on which inputs carry an uncertainty."""
    z = rng.standard_normal(n)
    return np.clip(central + (half_width / Z_95) * z, low, high)


def interval(samples: np.ndarray, coverage: float = 0.95
             ) -> tuple[float | None, float | None] | None:
    """The central ``coverage`` interval of ``samples`` (NaN draws, where the figure does
    not exist, are left out; an infinite end is None).  None when fewer than half the
    draws give the figure."""
    s = np.asarray(samples, dtype=float)
    s = s[~np.isnan(s)]
    if s.size == 0 or s.size * 2 < np.asarray(samples).size:
        return None
    tail = (1.0 - coverage) / 2.0 * 100.0
    with np.errstate(invalid="ignore"):  # between two infinite draws: inf - inf
        lo, hi = percentiles(s, (tail, 100.0 - tail))
    if math.isnan(lo) or math.isnan(hi):  # an end among infinite draws is infinite
        near_lo, near_hi = np.percentile(s, [tail, 100.0 - tail], method="nearest")
        lo = near_lo if math.isnan(lo) else lo
        hi = near_hi if math.isnan(hi) else hi
    return (float(lo) if math.isfinite(lo) else None, float(hi) if math.isfinite(hi) else None)


def percentiles(samples: np.ndarray, percents: tuple[float, ...]) -> np.ndarray:
    """``np.percentile(samples, percents)`` with its default ("linear") method, the same
    numbers to the last bit, for a 1-D array without NaN.  Written out because numpy's
    own imports numpy.ma on first use (about 14 ms of `dossier evaluate`); the steps
    are numpy's (virtual index ``(n - 1) q``, neighbours clipped to the ends,
    interpolation from the nearer neighbour)."""
    s = np.sort(np.asarray(samples, dtype=float))
    n = s.size
    q = np.asarray(percents, dtype=float) / 100.0
    virtual = (n - 1) * q
    before = np.floor(virtual)
    after = before + 1
    before[virtual >= n - 1] = after[virtual >= n - 1] = -1
    before[virtual < 0] = after[virtual < 0] = 0
    gamma = virtual - before
    a, b = s[before.astype(np.intp)], s[after.astype(np.intp)]
    diff = b - a
    out = a + diff * gamma
    np.subtract(b, diff * (1 - gamma), out=out, where=gamma >= 0.5)
    return out


@dataclass(frozen=True)
class ReactionShifts:
    """The ν-weighted sums of the species' shifts, one per draw (J/mol, J/(mol K))."""

    dh: np.ndarray
    ds: np.ndarray
    dcp: np.ndarray

    @property
    def any(self) -> bool:
        return bool(np.any(self.dh) or np.any(self.ds) or np.any(self.dcp))


def reaction_shifts(rng: np.random.Generator, nus: Sequence[float],
                    half_widths: Sequence[tuple[float, float, float]], n: int) -> ReactionShifts:
    """Draw each species' δh, δs and δcp (95 % half-widths ``half_widths[i]``, in J/mol,
    J/(mol K), J/(mol K)) and sum them with the coefficients ``nus``."""
    dh, ds, dcp = np.zeros(n), np.zeros(n), np.zeros(n)
    for nu, (u_h, u_s, u_cp) in zip(nus, half_widths):
        dh += nu * draw(rng, 0.0, u_h, n)
        ds += nu * draw(rng, 0.0, u_s, n)
        dcp += nu * draw(rng, 0.0, u_cp, n)
    return ReactionShifts(dh, ds, dcp)


def shifted_properties(T: np.ndarray, dH: np.ndarray, dS: np.ndarray, shifts: ReactionShifts
                       ) -> tuple[np.ndarray, np.ndarray]:
    """ΔrH° and ΔrS° at the temperatures ``T`` for every draw: two (draws × T) arrays."""
    T = np.asarray(T, dtype=float)
    h = dH[None, :] + shifts.dh[:, None] + shifts.dcp[:, None] * (T - T_REF)[None, :]
    s = dS[None, :] + shifts.ds[:, None] + shifts.dcp[:, None] * np.log(T / T_REF)[None, :]
    return h, s


def crossover_draws(dH: Callable[[np.ndarray], np.ndarray],
                    dS: Callable[[np.ndarray], np.ndarray], T0: float,
                    shifts: ReactionShifts, lo: float, hi: float) -> np.ndarray:
    """The crossover near ``T0`` (where ΔrG° = 0) for every draw, by Newton's method on
    ΔrG°(T) = ΔrH° − TΔrS° with d ΔrG°/dT = −ΔrS°; NaN where a draw has no crossover in
    [lo, hi] near it."""
    T = np.full(shifts.dh.shape, float(T0))
    with np.errstate(all="ignore"):
        for _ in range(50):
            h = dH(T) + shifts.dh + shifts.dcp * (T - T_REF)
            s = dS(T) + shifts.ds + shifts.dcp * np.log(T / T_REF)
            step = (h - T * s) / (-s)
            before, T = T, np.clip(T - step, lo, hi)
            # every draw has stopped moving (converged, or held at an end of [lo, hi]);
            # a draw whose step is NaN (ΔrS° = 0) stays NaN and is judged below
            if not np.any(np.abs(T - before) > 1e-12 * np.abs(before)):
                break
        h = dH(T) + shifts.dh + shifts.dcp * (T - T_REF)
        s = dS(T) + shifts.ds + shifts.dcp * np.log(T / T_REF)
        g = h - T * s
        done = np.abs(g) <= 1e-6 * np.maximum(np.abs(h), 1.0)
    return np.where(done, T, np.nan)


@dataclass(frozen=True)
class ScenarioDraws:
    """The runaway scenario's inputs, one value per draw (SI), or None where not given."""

    heat_J: np.ndarray | None
    mass_kg: np.ndarray | None
    cp: np.ndarray | None
    t_process: np.ndarray | None
    accumulation: np.ndarray | None
    mtt: np.ndarray | None
    td24_given: np.ndarray | None
    ea: np.ndarray | None
    q_ref: np.ndarray | None
    t_ref: np.ndarray | None
    feed_time_s: np.ndarray | None
    ua_W_per_K: np.ndarray | None
    t_coolant: np.ndarray | None
    n_gas_mol: np.ndarray | None
    free_volume_m3: np.ndarray | None
    p_initial_Pa: np.ndarray | None
    design_pressure_Pa: np.ndarray | None


@dataclass(frozen=True)
class ScenarioSamples:
    """The scenario's figures for every draw (None where the inputs do not allow it)."""

    dT_ad: np.ndarray | None
    mtsr: np.ndarray | None
    td24: np.ndarray | None
    tmr_h: np.ndarray | None
    klass: np.ndarray | None        # 1..5, 0 where a level is missing for that draw
    pressure_Pa: np.ndarray | None
    cooling_ratio: np.ndarray | None  # mean release rate over cooling capacity


def _have(*arrays) -> bool:
    return all(a is not None for a in arrays)


def scenario_samples(d: ScenarioDraws, td24_time_s: float) -> ScenarioSamples:
    """Every figure of the runaway scenario for every draw."""
    dT = mtsr = td = tmr = klass = pressure = ratio = None
    with np.errstate(all="ignore"):
        heat = None if d.heat_J is None else np.maximum(d.heat_J, 0.0)  # endothermic: no rise
        if _have(heat, d.mass_kg, d.cp):
            dT = heat / (d.mass_kg * d.cp)
            if _have(d.t_process, d.accumulation):
                mtsr = d.t_process + np.clip(d.accumulation, 0.0, 1.0) * np.maximum(dT, 0.0)
        kinetics = _have(d.ea, d.q_ref, d.t_ref, d.cp)
        if d.td24_given is not None:
            td = d.td24_given
        elif kinetics:
            td = td24_many(d.cp, d.ea, d.q_ref, d.t_ref, td24_time_s)
        if mtsr is not None and kinetics:
            q = d.q_ref * np.exp(-(d.ea / R) * (1.0 / mtsr - 1.0 / d.t_ref))
            tmr = d.cp * R * mtsr ** 2 / (q * d.ea) / SECONDS_PER_HOUR
        if _have(mtsr, d.mtt, td):
            klass = criticality_classes(mtsr, d.mtt, td)
        if _have(mtsr, d.n_gas_mol, d.free_volume_m3):
            p0 = d.p_initial_Pa if d.p_initial_Pa is not None else 0.0
            pressure = p0 + d.n_gas_mol * R * mtsr / d.free_volume_m3
        if _have(heat, d.feed_time_s, d.ua_W_per_K, d.t_process, d.t_coolant):
            capacity = d.ua_W_per_K * (d.t_process - d.t_coolant)
            release = heat / d.feed_time_s
            ratio = np.where(capacity > 0.0, release / capacity,
                             np.where(release > 0.0, np.inf, 0.0))
    return ScenarioSamples(dT, mtsr, td, tmr, klass, pressure, ratio)


def class_shares(klass: np.ndarray) -> tuple[tuple[int, float], ...]:
    """(class, share of the draws) for each class that occurs, most likely first; draws
    without a class (0) are left out of the shares."""
    k = np.asarray(klass)
    k = k[k > 0]
    if k.size == 0:
        return ()
    counts = np.bincount(k, minlength=6)[1:]
    shares = [(c + 1, float(counts[c] / k.size)) for c in range(5) if counts[c]]
    return tuple(sorted(shares, key=lambda cs: (-cs[1], -cs[0])))


__all__ = ["Z_95", "draw", "interval", "ReactionShifts", "reaction_shifts",
           "shifted_properties", "crossover_draws", "ScenarioDraws", "ScenarioSamples",
           "scenario_samples", "class_shares"]
