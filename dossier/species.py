"""Species thermochemistry: per-species models and the species library.

Three model kinds, all on the formation scale (H(298.15 K) = ΔfH°, elements
in their reference states have H = 0 at 298.15 K) with absolute (third-law)
entropies, SI units throughout (K, J/mol, J/(mol K)):

* :class:`Nasa7`     NASA 7-coefficient polynomials on one or more ranges;
* :class:`Shomate`   the Shomate equation as tabulated by NIST (t = T/1000);
* :class:`ConstantCp` a constant heat capacity about 298.15 K.

Every model has a validity range ``t_min``..``t_max``.  Numeric evaluation
outside it uses the nearest end segment (extrapolation); callers decide
whether to flag it with :meth:`in_range`.

The :class:`Library` holds :class:`SpeciesRecord` entries with their
provenance and resolves the labels used in reaction strings.  Its data file
(``dossier/data/species.json``) is written by ``tools/build_library.py``.

This module does no I/O apart from the library loader reading its own
package data file.  sympy is imported lazily, inside :meth:`sympy` methods.
"""
from __future__ import annotations

import difflib
import functools
import hashlib
import json
import math
from dataclasses import dataclass, field
from importlib import resources
from typing import Any, Iterable, Mapping

import numpy as np

from .errors import FormulaError, LibraryError, SpeciesError
from .formula import hill_formula, parse_formula

R = 8.314462618  # J/(mol K), CODATA 2018 (exact N_A k)
T_REF = 298.15  # K
PHASES = ("g", "l", "s", "aq")
PHASE_NAMES = {"g": "gas", "l": "liquid", "s": "solid", "aq": "aqueous"}
_PHASE_ALIASES = {"g": "g", "l": "l", "s": "s", "cr": "s", "aq": "aq"}
DATA_FORMAT = 1


# --------------------------------------------------------------------------
# helpers

def _as_array(T) -> tuple[np.ndarray, bool]:
    arr = np.asarray(T, dtype=float)
    return arr, arr.ndim == 0


def _out(values: np.ndarray, scalar: bool):
    return float(values) if scalar else values


def _segment_index(T: np.ndarray, breakpoints: tuple[float, ...]) -> np.ndarray:
    """Segment for each T: T below a join uses the lower segment (Cantera's rule)."""
    if not breakpoints:
        return np.zeros(T.shape, dtype=int)
    return np.searchsorted(np.asarray(breakpoints), T, side="right")


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


def _piecewise(T, exprs: list, breakpoints: tuple[float, ...]):
    import sympy as sp

    if len(exprs) == 1:
        return exprs[0]
    pieces = [(e, T < sp.Float(bp)) for e, bp in zip(exprs, breakpoints)]
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
        object.__setattr__(self, "_a", np.array(coeffs, dtype=float))

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
        return self._a[_segment_index(T, self.breakpoints)]  # type: ignore[attr-defined]

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
        object.__setattr__(self, "_a", np.array(coeffs, dtype=float))

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
        return self._a[_segment_index(T, self.breakpoints)]  # type: ignore[attr-defined]

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
                 t_min: float = T_REF - 50.0, t_max: float = T_REF + 50.0):
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


# --------------------------------------------------------------------------
# records

def normalise_phase(phase: str) -> str:
    """'g', 'l', 's' (or 'cr'), 'aq' -> canonical phase code."""
    key = phase.strip().lower()
    if key not in _PHASE_ALIASES:
        raise SpeciesError(f"unknown phase '{phase}' (expected g, l, s, cr or aq)")
    return _PHASE_ALIASES[key]


@dataclass(frozen=True)
class SpeciesRecord:
    """One substance in one phase, with its thermo model and provenance."""

    id: str
    name: str
    formula: str
    elements: tuple[tuple[str, float], ...]
    charge: int
    phase: str
    model: Model
    source: str
    aliases: tuple[str, ...] = ()
    note: str = ""
    uncertainty: tuple[tuple[str, float], ...] = ()
    stable_range: tuple[float, float] | None = None
    cas: str | None = None
    molar_mass: float = 0.0

    def __post_init__(self):
        if self.phase not in PHASES:
            raise LibraryError(f"species '{self.id}': unknown phase '{self.phase}'")
        object.__setattr__(self, "elements",
                           tuple((str(e), float(n)) for e, n in self.elements))
        object.__setattr__(self, "aliases", tuple(self.aliases))
        object.__setattr__(self, "uncertainty",
                           tuple((str(k), float(v)) for k, v in self.uncertainty))
        if self.stable_range is not None:
            lo, hi = self.stable_range
            object.__setattr__(self, "stable_range", (float(lo), float(hi)))

    @property
    def hf298(self) -> float:
        """ΔfH°(298.15 K), J/mol (from the model)."""
        return float(self.model.h(T_REF))

    @property
    def s298(self) -> float:
        """S°(298.15 K), J/(mol K) (from the model)."""
        return float(self.model.s(T_REF))

    @property
    def composition(self) -> dict[str, float]:
        return dict(self.elements)

    @property
    def label(self) -> str:
        """Formula with phase, e.g. ``C2H6O(l)``."""
        return f"{self.formula}({self.phase})"

    def to_dict(self) -> dict:
        return {
            "id": self.id,
            "name": self.name,
            "aliases": list(self.aliases),
            "formula": self.formula,
            "elements": [[e, n] for e, n in self.elements],
            "charge": self.charge,
            "phase": self.phase,
            "model": self.model.to_dict(),
            "source": self.source,
            "note": self.note,
            "uncertainty": [[k, v] for k, v in self.uncertainty],
            "stable_range": list(self.stable_range) if self.stable_range else None,
            "cas": self.cas,
            "molar_mass": self.molar_mass,
        }

    @classmethod
    def from_dict(cls, d: Mapping[str, Any]) -> "SpeciesRecord":
        try:
            sr = d.get("stable_range")
            return cls(
                id=d["id"],
                name=d["name"],
                aliases=tuple(d.get("aliases", ())),
                formula=d["formula"],
                elements=tuple((e, n) for e, n in d["elements"]),
                charge=int(d.get("charge", 0)),
                phase=d["phase"],
                model=model_from_dict(d["model"]),
                source=d["source"],
                note=d.get("note", ""),
                uncertainty=tuple((k, v) for k, v in d.get("uncertainty", ())),
                stable_range=tuple(sr) if sr else None,
                cas=d.get("cas"),
                molar_mass=float(d.get("molar_mass", 0.0)),
            )
        except (KeyError, TypeError, ValueError) as exc:
            raise LibraryError(f"species record {d.get('id', '?')!r} is incomplete: {exc}") from None

    def digest(self) -> str:
        """SHA-256 (hex) of the canonical JSON form of the record."""
        text = json.dumps(self.to_dict(), sort_keys=True, separators=(",", ":"), ensure_ascii=False)
        return hashlib.sha256(text.encode("utf-8")).hexdigest()


# --------------------------------------------------------------------------
# the library

def _formula_key(composition: Mapping[str, Any], charge: int) -> str:
    return hill_formula({e: n for e, n in composition.items()}, charge)


def _split_label(label: str) -> tuple[str, str | None]:
    """'water(l)' -> ('water', 'l'); 'water' -> ('water', None)."""
    text = label.strip()
    if text.endswith(")") and "(" in text:
        body, _, tail = text[:-1].rpartition("(")
        if tail.strip().lower() in _PHASE_ALIASES and body:
            return body.strip(), _PHASE_ALIASES[tail.strip().lower()]
    return text, None


class Library:
    """An immutable collection of species records with lookup by id, name or formula."""

    def __init__(self, records: Iterable[SpeciesRecord], version: str = "local",
                 sources: Mapping[str, str] | None = None,
                 overridden: Iterable[str] = (), local_ids: Iterable[str] = ()):
        self._by_id: dict[str, SpeciesRecord] = {}
        for rec in records:
            if rec.id in self._by_id:
                raise LibraryError(f"duplicate species id '{rec.id}'")
            self._by_id[rec.id] = rec
        self.version = version
        self.sources: dict[str, str] = dict(sources or {})
        self.overridden: frozenset[str] = frozenset(overridden)
        self.local_ids: frozenset[str] = frozenset(local_ids)
        self._names: dict[str, list[SpeciesRecord]] | None = None
        self._formulas: dict[tuple[str, str], list[SpeciesRecord]] | None = None

    # -- loading -----------------------------------------------------------
    @classmethod
    def default(cls) -> "Library":
        """The library shipped with dossier (loaded once, then cached)."""
        return _default_library()

    @classmethod
    def from_json_bytes(cls, raw: bytes) -> "Library":
        """Build a library from the bytes of a data file written by tools/build_library.py."""
        try:
            data = json.loads(raw)
        except ValueError as exc:
            raise LibraryError(f"species data file is not valid JSON: {exc}") from None
        if not isinstance(data, dict) or data.get("format") != DATA_FORMAT:
            raise LibraryError(f"species data file has format {data.get('format') if isinstance(data, dict) else '?'}, "
                               f"this dossier reads format {DATA_FORMAT}")
        sources = data.get("sources", {})
        records = []
        for d in data.get("records", ()):
            key = d.get("source")
            if key in sources:
                d = dict(d, source=sources[key]["citation"])
            records.append(SpeciesRecord.from_dict(d))
        digest = hashlib.sha256(raw).hexdigest()[:12]
        version = f"{data.get('library_version', '?')}+{digest}"
        return cls(records, version=version,
                   sources={k: v["citation"] for k, v in sources.items()})

    # -- basic access ------------------------------------------------------
    @property
    def records(self) -> tuple[SpeciesRecord, ...]:
        return tuple(self._by_id.values())

    def __len__(self) -> int:
        return len(self._by_id)

    def __contains__(self, species_id: str) -> bool:
        return species_id in self._by_id

    def __iter__(self):
        return iter(self._by_id.values())

    def get(self, species_id: str) -> SpeciesRecord:
        try:
            return self._by_id[species_id]
        except KeyError:
            raise SpeciesError(f"no library species with id '{species_id}'") from None

    def with_records(self, local_records: Iterable[SpeciesRecord]) -> "Library":
        """A new library where ``local_records`` extend or replace (same id) the records here.

        Local records also win label lookups: a name, alias or formula that a
        local record answers to resolves to it even where library records
        share the label.
        """
        local = list(local_records)
        merged = dict(self._by_id)
        overridden = set(self.overridden)
        seen: set[str] = set()
        for rec in local:
            if rec.id in seen:
                raise SpeciesError(f"case-local species id '{rec.id}' is given twice")
            seen.add(rec.id)
            if rec.id in self._by_id and rec.id not in self.local_ids:
                overridden.add(rec.id)
            merged[rec.id] = rec
        return Library(merged.values(), version=self.version, sources=self.sources,
                       overridden=overridden, local_ids=self.local_ids | seen)

    # -- indexes -----------------------------------------------------------
    def _index(self) -> None:
        names: dict[str, list[SpeciesRecord]] = {}
        formulas: dict[tuple[str, str], list[SpeciesRecord]] = {}
        for rec in self._by_id.values():
            keys = {rec.name.lower(), *(a.lower() for a in rec.aliases)}
            for key in keys:
                names.setdefault(key, []).append(rec)
            formulas.setdefault((_formula_key(rec.composition, rec.charge), rec.phase), []).append(rec)
        self._names, self._formulas = names, formulas

    def _name_index(self) -> dict[str, list[SpeciesRecord]]:
        if self._names is None:
            self._index()
        return self._names  # type: ignore[return-value]

    def _formula_index(self) -> dict[tuple[str, str], list[SpeciesRecord]]:
        if self._formulas is None:
            self._index()
        return self._formulas  # type: ignore[return-value]

    def _prefer_local(self, matches: list[SpeciesRecord]) -> list[SpeciesRecord]:
        local = [r for r in matches if r.id in self.local_ids]
        return local or matches

    # -- resolution --------------------------------------------------------
    def resolve(self, label: str, phase: str | None = None) -> SpeciesRecord:
        """The record for ``label`` in ``phase``.

        ``label`` is an id (``H2O(g)``), a name or alias (case-insensitive,
        ``water``) or a formula (``H2O``, compared by composition and charge).
        The phase may also be written in the label (``water(l)``).
        """
        body, label_phase = _split_label(label)
        if phase is None:
            if label in self._by_id:
                return self._by_id[label]
            if label_phase is None:
                raise SpeciesError(f"species '{label}' has no phase; write it as "
                                   f"{label}(g), {label}(l), {label}(s) or {label}(aq)")
            phase = label_phase
        else:
            phase = normalise_phase(phase)
            if label_phase is not None and label_phase == phase:
                label = body
        shown = f"{label}({phase})"

        for candidate in (shown, label):
            rec = self._by_id.get(candidate)
            if rec is not None and rec.phase == phase:
                return rec

        by_name = [r for r in self._name_index().get(label.lower(), ()) if r.phase == phase]
        by_name = self._prefer_local(by_name)
        if len(by_name) == 1:
            return by_name[0]
        if len(by_name) > 1:
            raise SpeciesError(_ambiguous_message(shown, by_name))

        try:
            parsed = parse_formula(label)
        except FormulaError:
            parsed = None
        if parsed is not None:
            key = (_formula_key(parsed.composition, parsed.charge), phase)
            by_formula = self._prefer_local(list(self._formula_index().get(key, ())))
            if len(by_formula) == 1:
                return by_formula[0]
            if len(by_formula) > 1:
                raise SpeciesError(_ambiguous_message(shown, by_formula))
        raise SpeciesError(self._not_found_message(label, phase, parsed))

    def _not_found_message(self, label: str, phase: str, parsed) -> str:
        shown = f"{label}({phase})"
        other = [r for r in self._name_index().get(label.lower(), ()) if r.phase != phase]
        if parsed is not None:
            for ph in PHASES:
                if ph != phase:
                    other += self._formula_index().get(
                        (_formula_key(parsed.composition, parsed.charge), ph), [])
        if other:
            ids = sorted({r.id for r in other})[:5]
            return (f"no library species '{shown}'; other phases exist: {', '.join(ids)}")
        keys = {}
        for rec in self._by_id.values():
            if rec.phase != phase:
                continue
            for text in (rec.name, rec.formula, *rec.aliases):
                keys.setdefault(text.lower(), rec.id)
        close = difflib.get_close_matches(label.lower(), list(keys), n=5, cutoff=0.6)
        ids = list(dict.fromkeys(keys[c] for c in close))
        if ids:
            return f"no library species '{shown}'; did you mean: {', '.join(ids)}?"
        return (f"no library species '{shown}'; add it to the case as a [[species]] entry "
                f"with formula, phase, hf, s and cp")

    def search(self, query: str) -> list[SpeciesRecord]:
        """Records whose id, name, aliases, formula or CAS number contain ``query``.

        Ranked: exact matches first, then prefix matches, then other
        substrings; formula matches (by composition) count as exact.
        """
        q = query.strip().lower()
        if not q:
            return []
        try:
            parsed = parse_formula(query.strip())
            fkey = _formula_key(parsed.composition, parsed.charge)
        except FormulaError:
            fkey = None
        ranked = []
        for rec in self._by_id.values():
            texts = [rec.id, rec.name, rec.formula, *rec.aliases] + ([rec.cas] if rec.cas else [])
            lowered = [t.lower() for t in texts]
            if fkey is not None and fkey == _formula_key(rec.composition, rec.charge):
                rank = 0
            elif q in lowered:
                rank = 0
            elif any(t.startswith(q) for t in lowered):
                rank = 1
            elif any(q in t for t in lowered):
                rank = 2
            else:
                continue
            ranked.append((rank, PHASES.index(rec.phase), len(rec.name), rec.id, rec))
        ranked.sort(key=lambda x: x[:4])
        return [x[-1] for x in ranked]


def _ambiguous_message(shown: str, matches: list[SpeciesRecord]) -> str:
    listing = ", ".join(f"{r.name} [{r.id}]" for r in sorted(matches, key=lambda r: (r.name.lower(), r.id)))
    example = sorted(matches, key=lambda r: (r.name.lower(), r.id))[0]
    return (f"'{shown}' matches {len(matches)} library species: {listing}; "
            f"write the name or id instead, e.g. '{example.id}'")


@functools.lru_cache(maxsize=1)
def _default_library() -> Library:
    try:
        raw = resources.files("dossier").joinpath("data/species.json").read_bytes()
    except (FileNotFoundError, OSError) as exc:
        raise LibraryError(f"species data file is missing: {exc}") from None
    return Library.from_json_bytes(raw)


# --------------------------------------------------------------------------
# description for `dossier species QUERY`

_MODEL_NAMES = {"nasa7": "NASA 7-coefficient polynomials", "shomate": "Shomate equation",
                "constant-cp": "constant Cp"}


def _fmt(x: float, digits: int = 3) -> str:
    text = f"{x:,.{digits}f}".replace(",", " ")
    return text.replace("-", "−")


def _krange(lo: float, hi: float) -> str:
    return f"{lo:g}–{hi:g} K"


def describe(record: SpeciesRecord) -> list[tuple[str, str]]:
    """Labelled lines describing a record (for the ``dossier species`` command)."""
    m = record.model
    model = f"{_MODEL_NAMES[m.kind]}, {_krange(m.t_min, m.t_max)}"
    if m.breakpoints:
        model += f" (segments join at {', '.join(f'{b:g}' for b in m.breakpoints)} K)"
    extrap = "" if m.in_range(T_REF) else " (extrapolated: 298.15 K is outside the model range)"
    lines = [
        ("name", record.name),
        ("id", record.id),
        ("formula", f"{record.formula}, M = {record.molar_mass:.3f} g/mol"),
        ("phase", PHASE_NAMES[record.phase]),
    ]
    if record.aliases:
        lines.append(("aliases", ", ".join(record.aliases)))
    if record.cas:
        lines.append(("CAS", record.cas))
    lines.append(("model", model))
    if record.stable_range:
        lines.append(("stable at 1 bar", _krange(*record.stable_range)))
    lines += [
        ("ΔfH°(298.15 K)", f"{_fmt(record.hf298 / 1000)} kJ/mol{extrap}"),
        ("S°(298.15 K)", f"{_fmt(record.s298)} J/(mol·K){extrap}"),
        ("Cp(298.15 K)", f"{_fmt(float(m.cp(T_REF)))} J/(mol·K){extrap}"),
        ("source", record.source),
    ]
    if record.note:
        lines.append(("note", record.note))
    if record.uncertainty:
        parts = []
        for key, value in record.uncertainty:
            if key.startswith("hf") or key.startswith("h"):
                parts.append(f"{key} ± {_fmt(value / 1000)} kJ/mol")
            else:
                parts.append(f"{key} ± {_fmt(value)} J/(mol·K)")
        lines.append(("uncertainty", "; ".join(parts)))
    return lines


__all__ = [
    "R", "T_REF", "PHASES", "Nasa7", "Shomate", "ConstantCp", "Model", "model_from_dict",
    "SpeciesRecord", "Library", "describe", "normalise_phase",
]
