"""What-if: the case's variants side by side, and its operating envelope.

Pure.  A variant changes inputs of the batch only ([charge] other than its
basis, [vessel], [decomposition], [measured]), so the reaction, its species
and its thermodynamics are the case's own; each variant gets its own safety
figures, intervals and findings, made by the same functions as the case's.

The envelope is the criticality class over a grid of process temperature ×
accumulation, every other input as the case gives it: the MTSR at each point
is T_p + X·ΔT_ad(T_p) (the heat from the measured enthalpy, or from ΔrH° at
T_p), compared with the case's MTT and TD24 by
:func:`dossier.engine.safety.criticality_classes`.
"""
from __future__ import annotations

from typing import Callable

import numpy as np

from dossier.engine.safety import criticality_classes
from dossier.engine.thermo import ReactionThermo
from dossier.model.assessment import Envelope, Safety, VariantResult
from dossier.model.case import Case

#: Points of the envelope's grid: process temperatures × accumulations.
ENVELOPE_POINTS = (61, 41)
#: How far the envelope reaches beyond the window and the process temperatures, K.
ENVELOPE_MARGIN_K = 20.0


def variant_results(case: Case, assess: Callable[[Case], tuple[Safety, tuple]]
                    ) -> tuple[VariantResult, ...]:
    """Each variant of ``case`` assessed by ``assess(variant case) -> (safety, findings)``."""
    out = []
    for v in case.variants:
        safety, findings = assess(v.case)
        out.append(VariantResult(v.name, v.note, v.changes, safety, findings))
    return tuple(out)


def envelope(case: Case, safety: Safety | None, properties: ReactionThermo
             ) -> Envelope | None:
    """The class map around the case's operating point, or None when the case gives no
    class (the MTT and TD24 are both needed)."""
    if safety is None or safety.scale is None or case.charge is None \
            or safety.mtt_K is None or safety.td24_K is None or safety.criticality_class is None:
        return None
    ch, sc = case.charge, safety.scale
    temps = [ch.process_temperature] + [v.case.charge.process_temperature
                                        for v in case.variants if v.case.charge]
    lo = max(min(min(temps), case.window[0]) - ENVELOPE_MARGIN_K, 1.0)
    hi = max(max(temps), case.window[1]) + ENVELOPE_MARGIN_K
    T = np.linspace(lo, hi, ENVELOPE_POINTS[0])
    X = np.linspace(0.0, 1.0, ENVELOPE_POINTS[1])
    if case.measured is not None:
        dH = np.full(T.shape, case.measured.reaction_enthalpy)
    else:
        dH = np.asarray(properties.dH(T), dtype=float)
    heat = np.maximum(-dH * sc.reaction_mol, 0.0)
    rise = heat / (ch.mass * ch.cp)
    mtsr = T[None, :] + X[:, None] * rise[None, :]
    classes = criticality_classes(mtsr, safety.mtt_K, safety.td24_K)
    points = [("this case", ch.process_temperature, ch.accumulation)]
    points += [(v.name, v.case.charge.process_temperature, v.case.charge.accumulation)
               for v in case.variants if v.case.charge is not None]
    with np.errstate(divide="ignore", invalid="ignore"):
        curves = tuple((name, tuple(float(x) for x in np.where(
            rise > 0, np.clip((level - T) / rise, 0.0, 2.0), np.where(T >= level, 0.0, 2.0))))
            for name, level in (("MTSR = MTT", safety.mtt_K), ("MTSR = TD24", safety.td24_K)))
    return Envelope(tuple(float(t) for t in T), tuple(float(x) for x in X),
                    tuple(tuple(int(k) for k in row) for row in classes), tuple(points),
                    curves)


__all__ = ["ENVELOPE_POINTS", "ENVELOPE_MARGIN_K", "variant_results", "envelope"]
