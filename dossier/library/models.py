"""Species thermochemistry models: NASA 7-coefficient, Shomate and constant Cp.

All three are on the formation scale (H(298.15 K) = ΔfH°, elements in their
reference states have H = 0 at 298.15 K) with absolute (third-law)
entropies, SI units throughout (K, J/mol, J/(mol K)):

* :class:`Nasa7`     NASA 7-coefficient polynomials on one or more ranges;
* :class:`Shomate`   the Shomate equation as tabulated by NIST (t = T/1000);
* :class:`ConstantCp` a constant heat capacity about 298.15 K.

Every model has a validity range ``t_min``..``t_max``.  Numeric evaluation
outside it uses the nearest end segment (extrapolation); callers decide
whether to flag it with :meth:`in_range`.  sympy is imported lazily, inside
the :meth:`sympy` methods.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping

import numpy as np

from dossier.constants import R, T_REF
from dossier.errors import LibraryError

# --------------------------------------------------------------------------
# helpers

def _as_array(T) -> tuple[np.ndarray, bool]:
    arr = np.asarray(T, dtype=float)
    return arr, arr.ndim == 0


def _out(values: np.ndarray, scalar: bool):
    return float(values) if scalar else values


def _segment_index(T: np.ndarray, breakpoints: tuple[float, ...]) -> np.ndarray:
    """Segment for each T: T at or below a join uses the lower segment (as Cantera does)."""
    if not breakpoints:
        return np.zeros(T.shape, dtype=int)
    return np.searchsorted(np.asarray(breakpoints), T, side="left")


def _check_ranges(ranges: tuple[float, ...], n_segments: int, what: str) -> None:
    if len(ranges) != n_segments + 1 or n_segments < 1:
        raise LibraryError(f"{what}: {len(ranges)} temperature limits for {n_segments} segment(s)")
    if any(b <= a for a, b in zip(ranges, ranges[1:])):
        raise LibraryError(f"{what}: temperature limits {ranges} are not increasing")


class _ModelBase:
    """Shared behaviour; subclasses provide ``_cp``, ``_h`` and ``_s`` on arrays."""

    t_min: float
    t_max: float

    def cp(self, T):
        """Heat capacity at constant pressure, J/(mol K)."""
        arr, scalar = _as_array(T)
        return _out(self._cp(arr), scalar)

    def h(self, T):
        """Enthalpy on the formation scale, J/mol."""
        arr, scalar = _as_array(T)
        return _out(self._h(arr), scalar)

    def s(self, T):
        """Absolute (third-law) standard entropy, J/(mol K)."""
        arr, scalar = _as_array(T)
        return _out(self._s(arr), scalar)

    def g(self, T):
        """Standard Gibbs energy G = H − T S, J/mol."""
        arr, scalar = _as_array(T)
        return _out(self._h(arr) - arr * self._s(arr), scalar)

    def in_range(self, T):
        """True where T lies inside the model's validity range (ends included)."""
        arr, scalar = _as_array(T)
        inside = (arr >= self.t_min) & (arr <= self.t_max)
        return bool(inside) if scalar else inside

    # subclasses
    def _cp(self, T: np.ndarray) -> np.ndarray:  # pragma: no cover - abstract
        raise NotImplementedError

    def _h(self, T: np.ndarray) -> np.ndarray:  # pragma: no cover - abstract
        raise NotImplementedError

    def _s(self, T: np.ndarray) -> np.ndarray:  # pragma: no cover - abstract
        raise NotImplementedError


def _coef_array(model) -> np.ndarray:
    """The model's coefficients as a (segments, n) array, built on first use."""
    arr = model.__dict__.get("_coef_cache")
    if arr is None:
        arr = np.array(model.coeffs, dtype=float)
        object.__setattr__(model, "_coef_cache", arr)
    return arr


def _piecewise(T, exprs: list, breakpoints: tuple[float, ...]):
    import sympy as sp

    if len(exprs) == 1:
        return exprs[0]
    pieces = [(e, T <= sp.Float(bp)) for e, bp in zip(exprs, breakpoints)]
    pieces.append((exprs[-1], True))
    return sp.Piecewise(*pieces)


# --------------------------------------------------------------------------
# models

@dataclass(frozen=True)
class Nasa7(_ModelBase):
    """NASA 7-coefficient polynomials (McBride, Gordon & Reno, NASA TM-4513).

    ``ranges`` are the segment limits, e.g. ``(200, 1000, 6000)``; ``coeffs``
    one tuple (a1..a7) per segment:
    Cp/R = a1 + a2 T + a3 T² + a4 T³ + a5 T⁴,
    H/(R T) = a1 + a2 T/2 + a3 T²/3 + a4 T³/4 + a5 T⁴/5 + a6/T,
    S/R = a1 ln T + a2 T + a3 T²/2 + a4 T³/3 + a5 T⁴/4 + a7.
    """

    ranges: tuple[float, ...]
    coeffs: tuple[tuple[float, ...], ...]
    kind: str = field(default="nasa7", init=False)

    def __post_init__(self):
        ranges = tuple(float(x) for x in self.ranges)
        coeffs = tuple(tuple(float(c) for c in seg) for seg in self.coeffs)
        if any(len(seg) != 7 for seg in coeffs):
            raise LibraryError("NASA 7-coefficient model: each segment needs 7 coefficients")
        _check_ranges(ranges, len(coeffs), "NASA 7-coefficient model")
        object.__setattr__(self, "ranges", ranges)
        object.__setattr__(self, "coeffs", coeffs)

    @property
    def t_min(self) -> float:
        return self.ranges[0]

    @property
    def t_max(self) -> float:
        return self.ranges[-1]

    @property
    def breakpoints(self) -> tuple[float, ...]:
        return self.ranges[1:-1]

    def _coef(self, T: np.ndarray) -> np.ndarray:
        return _coef_array(self)[_segment_index(T, self.breakpoints)]

    def _cp(self, T):
        a = self._coef(T)
        return R * (a[..., 0] + T * (a[..., 1] + T * (a[..., 2] + T * (a[..., 3] + T * a[..., 4]))))

    def _h(self, T):
        a = self._coef(T)
        poly = a[..., 0] + T * (a[..., 1] / 2 + T * (a[..., 2] / 3 + T * (a[..., 3] / 4 + T * a[..., 4] / 5)))
        return R * (T * poly + a[..., 5])

    def _s(self, T):
        a = self._coef(T)
        poly = T * (a[..., 1] + T * (a[..., 2] / 2 + T * (a[..., 3] / 3 + T * a[..., 4] / 4)))
        return R * (a[..., 0] * np.log(T) + poly + a[..., 6])

    def sympy(self, T):
        """(cp, h, s) as sympy expressions in the symbol ``T``."""
        import sympy as sp

        Rs = sp.Float(R)
        cps, hs, ss = [], [], []
        for seg in self.coeffs:
            a1, a2, a3, a4, a5, a6, a7 = (sp.Float(c) for c in seg)
            cps.append(Rs * (a1 + a2 * T + a3 * T**2 + a4 * T**3 + a5 * T**4))
            hs.append(Rs * (a1 * T + a2 * T**2 / 2 + a3 * T**3 / 3 + a4 * T**4 / 4
                            + a5 * T**5 / 5 + a6))
            ss.append(Rs * (a1 * sp.log(T) + a2 * T + a3 * T**2 / 2 + a4 * T**3 / 3
                            + a5 * T**4 / 4 + a7))
        bp = self.breakpoints
        return _piecewise(T, cps, bp), _piecewise(T, hs, bp), _piecewise(T, ss, bp)

    def to_dict(self) -> dict:
        return {"kind": self.kind, "ranges": list(self.ranges),
                "coeffs": [list(seg) for seg in self.coeffs]}


@dataclass(frozen=True)
class Shomate(_ModelBase):
    """Shomate equation in the NIST Chemistry WebBook convention, t = T/1000 K.

    ``coeffs`` holds (A, B, C, D, E, F, G, H) per segment; ``hf298`` is
    ΔfH°(298.15 K) in J/mol.
    Cp = A + B t + C t² + D t³ + E/t²  (J/(mol K));
    H(T) − H(298.15) = A t + B t²/2 + C t³/3 + D t⁴/4 − E/t + F − H  (kJ/mol);
    S = A ln t + B t + C t²/2 + D t³/3 − E/(2 t²) + G  (J/(mol K)).
    """

    ranges: tuple[float, ...]
    coeffs: tuple[tuple[float, ...], ...]
    hf298: float
    kind: str = field(default="shomate", init=False)

    def __post_init__(self):
        ranges = tuple(float(x) for x in self.ranges)
        coeffs = tuple(tuple(float(c) for c in seg) for seg in self.coeffs)
        if any(len(seg) != 8 for seg in coeffs):
            raise LibraryError("Shomate model: each segment needs 8 coefficients (A..H)")
        _check_ranges(ranges, len(coeffs), "Shomate model")
        object.__setattr__(self, "ranges", ranges)
        object.__setattr__(self, "coeffs", coeffs)
        object.__setattr__(self, "hf298", float(self.hf298))

    @property
    def t_min(self) -> float:
        return self.ranges[0]

    @property
    def t_max(self) -> float:
        return self.ranges[-1]

    @property
    def breakpoints(self) -> tuple[float, ...]:
        return self.ranges[1:-1]

    def _coef(self, T: np.ndarray) -> np.ndarray:
        return _coef_array(self)[_segment_index(T, self.breakpoints)]

    def _cp(self, T):
        a = self._coef(T)
        t = T / 1000.0
        return a[..., 0] + t * (a[..., 1] + t * (a[..., 2] + t * a[..., 3])) + a[..., 4] / t**2

    def _h(self, T):
        a = self._coef(T)
        t = T / 1000.0
        rel = (t * (a[..., 0] + t * (a[..., 1] / 2 + t * (a[..., 2] / 3 + t * a[..., 3] / 4)))
               - a[..., 4] / t + a[..., 5] - a[..., 7])
        return self.hf298 + 1000.0 * rel

    def _s(self, T):
        a = self._coef(T)
        t = T / 1000.0
        return (a[..., 0] * np.log(t) + t * (a[..., 1] + t * (a[..., 2] / 2 + t * a[..., 3] / 3))
                - a[..., 4] / (2 * t**2) + a[..., 6])

    def sympy(self, T):
        """(cp, h, s) as sympy expressions in the symbol ``T``."""
        import sympy as sp

        t = T / 1000
        cps, hs, ss = [], [], []
        for seg in self.coeffs:
            A, B, C, D, E, F, G, H = (sp.Float(c) for c in seg)
            cps.append(A + B * t + C * t**2 + D * t**3 + E / t**2)
            hs.append(sp.Float(self.hf298) + 1000 * (A * t + B * t**2 / 2 + C * t**3 / 3
                                                     + D * t**4 / 4 - E / t + F - H))
            ss.append(A * sp.log(t) + B * t + C * t**2 / 2 + D * t**3 / 3 - E / (2 * t**2) + G)
        bp = self.breakpoints
        return _piecewise(T, cps, bp), _piecewise(T, hs, bp), _piecewise(T, ss, bp)

    def to_dict(self) -> dict:
        return {"kind": self.kind, "ranges": list(self.ranges),
                "coeffs": [list(seg) for seg in self.coeffs], "hf298": self.hf298}


@dataclass(frozen=True, init=False)
class ConstantCp(_ModelBase):
    """Constant heat capacity: H = hf + cp (T − 298.15), S = s298 + cp ln(T/298.15).

    Built as ``ConstantCp(hf, s298, cp, t_min, t_max)``; the constant heat
    capacity is stored as ``cp0`` because ``cp(T)`` is the evaluating method
    shared by all models.  The default range is 298.15 ± 50 K.
    """

    hf: float
    s298: float
    cp0: float
    t_min: float
    t_max: float
    kind: str = field(default="constant-cp", init=False)

    def __init__(self, hf: float, s298: float, cp: float,
                 t_min: float = 248.15, t_max: float = 348.15):
        object.__setattr__(self, "hf", float(hf))
        object.__setattr__(self, "s298", float(s298))
        object.__setattr__(self, "cp0", float(cp))
        object.__setattr__(self, "t_min", float(t_min))
        object.__setattr__(self, "t_max", float(t_max))
        object.__setattr__(self, "kind", "constant-cp")
        if not self.t_max > self.t_min:
            raise LibraryError(f"constant-Cp model: range {self.t_min}..{self.t_max} K is empty")

    @property
    def breakpoints(self) -> tuple[float, ...]:
        return ()

    def _cp(self, T):
        return np.full(T.shape, self.cp0)

    def _h(self, T):
        return self.hf + self.cp0 * (T - T_REF)

    def _s(self, T):
        return self.s298 + self.cp0 * np.log(T / T_REF)

    def sympy(self, T):
        """(cp, h, s) as sympy expressions in the symbol ``T``."""
        import sympy as sp

        cp = sp.Float(self.cp0)
        return (cp + 0 * T, sp.Float(self.hf) + cp * (T - sp.Float(T_REF)),
                sp.Float(self.s298) + cp * sp.log(T / sp.Float(T_REF)))

    def to_dict(self) -> dict:
        return {"kind": self.kind, "hf": self.hf, "s298": self.s298, "cp": self.cp0,
                "t_min": self.t_min, "t_max": self.t_max}


Model = Nasa7 | Shomate | ConstantCp


def model_from_dict(d: Mapping[str, Any]) -> Model:
    """Rebuild a model from :meth:`to_dict` output."""
    kind = d.get("kind")
    try:
        if kind == "nasa7":
            return Nasa7(tuple(d["ranges"]), tuple(tuple(c) for c in d["coeffs"]))
        if kind == "shomate":
            return Shomate(tuple(d["ranges"]), tuple(tuple(c) for c in d["coeffs"]), d["hf298"])
        if kind == "constant-cp":
            return ConstantCp(d["hf"], d["s298"], d["cp"], d["t_min"], d["t_max"])
    except (KeyError, TypeError, ValueError) as exc:
        raise LibraryError(f"thermo model '{kind}' is incomplete: {exc}") from None
    raise LibraryError(f"unknown thermo model kind '{kind}' (expected nasa7, shomate or constant-cp)")


__all__ = ["Nasa7", "Shomate", "ConstantCp", "Model", "model_from_dict"]
