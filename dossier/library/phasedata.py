"""Phase boundaries of a species record: melting and boiling points and a vapour-pressure curve.

A record's thermo model says how H, S and Cp vary over its *data range*; it
says nothing about whether the phase is the stable one there.  That comes
from the substance's phase boundaries, kept here with their sources:

* :class:`VapourPressure`, a published saturation-pressure correlation of
  the liquid (one of three forms, below), valid over ``t_min``..``t_max``;
* :class:`PhaseData`, the normal melting and boiling points (at 101 325 Pa),
  the vapour-pressure curve, for one solid form of several (an allotrope)
  the temperatures where that form is the stable one, and for an aqueous
  species the solvent whose boundaries they are.

The boundaries at another pressure are worked out by
:mod:`dossier.engine.phases`.  Correlation forms (p in Pa, T in K):

* ``antoine``   ln p = A − B / (T + C)                         coeffs (A, B, C)
* ``wagner``    ln (p/pc) = (Tc/T)(a τ + b τ^1.5 + c τ^e3 + d τ^e4),
  τ = 1 − T/Tc                                         coeffs (Tc, pc, a, b, c, d, e3, e4)
* ``dippr101``  ln p = A + B/T + C ln T + D T^E                coeffs (A, B, C, D, E)

A base-10 Antoine equation is stored in this natural-log form (A and B
multiplied by ln 10).  The Wagner form is the "3,6" equation of McGarry
(e3 = 3, e4 = 6) or the "2.5,5" form of Poling et al. and the VDI Heat Atlas
(e3 = 2.5, e4 = 5); it is not defined at or above Tc.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

import numpy as np

from dossier.errors import LibraryError

#: Number of coefficients of each correlation form.
VAPOUR_PRESSURE_FORMS: dict[str, int] = {"antoine": 3, "wagner": 8, "dippr101": 5}


@dataclass(frozen=True)
class VapourPressure:
    """Saturation pressure of a liquid against temperature (see the module notes)."""

    kind: str
    coeffs: tuple[float, ...]
    t_min: float
    t_max: float
    source: str  # a key of the data file's source list, or its citation once loaded

    def __post_init__(self):
        n = VAPOUR_PRESSURE_FORMS.get(self.kind)
        if n is None:
            raise LibraryError(f"unknown vapour-pressure form '{self.kind}'")
        if len(self.coeffs) != n:
            raise LibraryError(f"vapour-pressure form '{self.kind}' takes {n} coefficients, "
                               f"got {len(self.coeffs)}")
        if not 0.0 < self.t_min < self.t_max:
            raise LibraryError(f"vapour-pressure range {self.t_min}-{self.t_max} K is not valid")
        object.__setattr__(self, "coeffs", tuple(float(c) for c in self.coeffs))

    def ln_p(self, T):
        """ln(p / Pa) at T (NaN where the form is not defined, e.g. at or above Tc)."""
        t = np.asarray(T, dtype=float)
        c = self.coeffs
        with np.errstate(all="ignore"):
            if self.kind == "antoine":
                out = c[0] - c[1] / (t + c[2])
            elif self.kind == "dippr101":
                out = c[0] + c[1] / t + c[2] * np.log(t) + c[3] * t ** c[4]
            else:
                tc, pc, a, b, cc, d, e3, e4 = c
                tau = 1.0 - t / tc
                out = np.where(tau > 0.0,
                               np.log(pc) + (tc / t) * (a * tau + b * tau**1.5 + cc * tau**e3
                                                        + d * tau**e4),
                               np.nan)
        return float(out) if np.ndim(out) == 0 else out

    def p(self, T):
        """Saturation pressure at T, Pa."""
        with np.errstate(all="ignore"):
            out = np.exp(self.ln_p(T))
        return float(out) if np.ndim(out) == 0 else out

    def in_range(self, T) -> bool:
        return bool(self.t_min <= float(T) <= self.t_max)

    def to_dict(self) -> dict:
        return {"kind": self.kind, "coeffs": list(self.coeffs), "t_min": self.t_min,
                "t_max": self.t_max, "source": self.source}

    @classmethod
    def from_dict(cls, d: Mapping[str, Any]) -> "VapourPressure":
        try:
            return cls(kind=d["kind"], coeffs=tuple(d["coeffs"]), t_min=float(d["t_min"]),
                       t_max=float(d["t_max"]), source=str(d["source"]))
        except (KeyError, TypeError, ValueError) as exc:
            raise LibraryError(f"vapour-pressure data are incomplete: {exc}") from None


@dataclass(frozen=True)
class PhaseData:
    """Phase boundaries of one substance, with the source of each (see the module notes).

    ``t_melt`` and ``t_boil`` are the normal melting and boiling points
    (101 325 Pa); a ``t_boil`` below ``t_melt`` is a sublimation point (the
    substance has no stable liquid at that pressure).  ``form_range`` is set
    only on one solid form of several: the temperatures (None for no limit)
    where that form is the stable one.  ``solvent`` names the liquid whose
    boundaries these are, for a dissolved (aqueous) species.  ``sources``
    pairs each of "melting point", "boiling point" and "form range" that is
    given with its source (a key of the data file's source list, or its
    citation once loaded); the vapour-pressure curve carries its own.
    """

    t_melt: float | None = None
    t_boil: float | None = None
    vapour_pressure: VapourPressure | None = None
    form_range: tuple[float | None, float | None] | None = None
    solvent: str | None = None
    sources: tuple[tuple[str, str], ...] = ()

    def __post_init__(self):
        for name in ("t_melt", "t_boil"):
            value = getattr(self, name)
            if value is not None and not value > 0.0:
                raise LibraryError(f"phase data: {name} = {value} is not above 0 K")
        object.__setattr__(self, "sources", tuple((str(k), str(v)) for k, v in self.sources))
        if self.form_range is not None:
            lo, hi = self.form_range
            object.__setattr__(self, "form_range", (None if lo is None else float(lo),
                                                    None if hi is None else float(hi)))

    @property
    def sublimes(self) -> bool:
        """True when the normal boiling point given is a sublimation point (below melting)."""
        return self.t_melt is not None and self.t_boil is not None and self.t_boil < self.t_melt

    def source_of(self, what: str) -> str | None:
        return dict(self.sources).get(what)

    def to_dict(self) -> dict:
        return {
            "t_melt": self.t_melt, "t_boil": self.t_boil,
            "vapour_pressure": self.vapour_pressure.to_dict() if self.vapour_pressure else None,
            "form_range": list(self.form_range) if self.form_range else None,
            "solvent": self.solvent,
            "sources": [[k, v] for k, v in self.sources],
        }

    @classmethod
    def from_dict(cls, d: Mapping[str, Any]) -> "PhaseData":
        try:
            vp = d.get("vapour_pressure")
            fr = d.get("form_range")
            return cls(t_melt=d.get("t_melt"), t_boil=d.get("t_boil"),
                       vapour_pressure=VapourPressure.from_dict(vp) if vp else None,
                       form_range=tuple(fr) if fr else None, solvent=d.get("solvent"),
                       sources=tuple((k, v) for k, v in d.get("sources", ())))
        except (TypeError, ValueError, AttributeError) as exc:
            raise LibraryError(f"phase data are incomplete: {exc}") from None

    def with_citations(self, citations: Mapping[str, str]) -> "PhaseData":
        """The same data with each source key replaced by its citation."""
        vp = self.vapour_pressure
        if vp is not None:
            vp = VapourPressure(vp.kind, vp.coeffs, vp.t_min, vp.t_max,
                                citations.get(vp.source, vp.source))
        return PhaseData(self.t_melt, self.t_boil, vp, self.form_range, self.solvent,
                         tuple((k, citations.get(v, v)) for k, v in self.sources))

    def source_keys(self) -> tuple[str, ...]:
        keys = [v for _k, v in self.sources]
        if self.vapour_pressure is not None:
            keys.append(self.vapour_pressure.source)
        return tuple(keys)


__all__ = ["VAPOUR_PRESSURE_FORMS", "VapourPressure", "PhaseData"]
