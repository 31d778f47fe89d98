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
import gc
import hashlib
import json
from dataclasses import dataclass, field
from importlib import resources
from typing import Any, Iterable, Mapping

import numpy as np

from dossier.errors import FormulaError, LibraryError, SpeciesError
from dossier.chem.formula import hill_formula, parse_formula

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


def _trusted(cls, **values):
    """Build a frozen dataclass from values already in canonical form (data file)."""
    obj = object.__new__(cls)
    for k, v in values.items():
        object.__setattr__(obj, k, v)
    return obj


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
    """An immutable collection of species records with lookup by id, name or formula.

    Records read from the data file are kept as parsed JSON and turned into
    :class:`SpeciesRecord` objects on first use, so that loading stays fast.
    """

    def __init__(self, records: Iterable[SpeciesRecord] = (), version: str = "local",
                 sources: Mapping[str, str] | None = None,
                 overridden: Iterable[str] = (), local_ids: Iterable[str] = ()):
        self._entries: dict[str, SpeciesRecord | list] = {}
        for rec in records:
            if rec.id in self._entries:
                raise LibraryError(f"duplicate species id '{rec.id}'")
            self._entries[rec.id] = rec
        self.version = version
        self.sources: dict[str, str] = dict(sources or {})
        self.overridden: frozenset[str] = frozenset(overridden)
        self.local_ids: frozenset[str] = frozenset(local_ids)
        self._names: dict[str, list[str]] | None = None
        self._formulas: dict[tuple[str, str], list[str]] | None = None

    # -- loading -----------------------------------------------------------
    @classmethod
    def default(cls) -> "Library":
        """The library shipped with dossier (loaded once, then cached)."""
        return _default_library()

    @classmethod
    def from_json_bytes(cls, raw: bytes) -> "Library":
        """Build a library from the bytes of a data file written by tools/build_library.py."""
        gc_was_on = gc.isenabled()
        gc.disable()  # parsing creates many small lists; collecting meanwhile only costs time
        try:
            data = json.loads(raw)
        except ValueError as exc:
            raise LibraryError(f"species data file is not valid JSON: {exc}") from None
        finally:
            if gc_was_on:
                gc.enable()
        if not isinstance(data, dict) or data.get("format") != DATA_FORMAT:
            found = data.get("format") if isinstance(data, dict) else "?"
            raise LibraryError(f"species data file has format {found}, "
                               f"this dossier reads format {DATA_FORMAT}")
        if tuple(data.get("fields", ())) != FILE_FIELDS:
            raise LibraryError("species data file lists unexpected record fields "
                               f"{data.get('fields')}; expected {list(FILE_FIELDS)}")
        try:
            citations = {k: v["citation"] for k, v in data["sources"].items()}
            entries: dict[str, list] = {}
            for row in data["records"]:
                if len(row) != len(FILE_FIELDS):
                    raise LibraryError(f"species data file: record {row[:1]} has "
                                       f"{len(row)} fields, expected {len(FILE_FIELDS)}")
                if row[_ID] in entries:
                    raise LibraryError(f"species data file: duplicate id '{row[_ID]}'")
                if row[_SOURCE] not in citations:
                    raise LibraryError(f"species data file: record '{row[_ID]}' names "
                                       f"unknown source '{row[_SOURCE]}'")
                entries[row[_ID]] = row
        except (KeyError, TypeError, AttributeError) as exc:
            raise LibraryError(f"species data file is damaged: missing {exc}") from None
        lib = cls(version=f"{data.get('library_version', '?')}+{hashlib.sha256(raw).hexdigest()[:12]}",
                  sources=citations)
        lib._entries = entries  # type: ignore[assignment]
        return lib

    def _materialise(self, species_id: str) -> SpeciesRecord:
        entry = self._entries[species_id]
        if isinstance(entry, SpeciesRecord):
            return entry
        try:
            rec = _record_from_file(entry, self.sources)
        except (KeyError, TypeError, ValueError, IndexError, LibraryError) as exc:
            raise LibraryError(f"species data file: record '{species_id}' is damaged: {exc!r}") from None
        self._entries[species_id] = rec
        return rec

    # -- basic access ------------------------------------------------------
    @property
    def records(self) -> tuple[SpeciesRecord, ...]:
        return tuple(self._materialise(i) for i in self._entries)

    @property
    def ids(self) -> tuple[str, ...]:
        return tuple(self._entries)

    def __len__(self) -> int:
        return len(self._entries)

    def __contains__(self, species_id: object) -> bool:
        return species_id in self._entries

    def __iter__(self):
        return (self._materialise(i) for i in self._entries)

    def get(self, species_id: str) -> SpeciesRecord:
        if species_id not in self._entries:
            raise SpeciesError(f"no library species with id '{species_id}'")
        return self._materialise(species_id)

    def with_records(self, local_records: Iterable[SpeciesRecord]) -> "Library":
        """A new library where ``local_records`` extend or replace (same id) the records here.

        Local records also win label lookups: a name, alias or formula that a
        local record answers to resolves to it even where library records
        share the label.  ``overridden`` lists the library ids replaced.
        """
        merged = dict(self._entries)
        overridden = set(self.overridden)
        seen: set[str] = set()
        for rec in local_records:
            if rec.id in seen:
                raise SpeciesError(f"case-local species id '{rec.id}' is given twice")
            seen.add(rec.id)
            if rec.id in self._entries and rec.id not in self.local_ids:
                overridden.add(rec.id)
            merged[rec.id] = rec
        lib = Library(version=self.version, sources=self.sources, overridden=overridden,
                      local_ids=self.local_ids | seen)
        lib._entries = merged
        return lib

    # -- indexes -----------------------------------------------------------
    def _index(self) -> None:
        names: dict[str, list[str]] = {}
        formulas: dict[tuple[str, str], list[str]] = {}
        for sid, e in self._entries.items():
            if isinstance(e, SpeciesRecord):
                name, aliases, phase = e.name, e.aliases, e.phase
                fkey = _formula_key(e.composition, e.charge)
            else:  # data-file rows carry the Hill formula already
                name, aliases, phase, fkey = e[_NAME], e[_ALIASES], e[_PHASE], e[_FORMULA]
            for key in {name.lower(), *(a.lower() for a in aliases)}:
                names.setdefault(key, []).append(sid)
            formulas.setdefault((fkey, phase), []).append(sid)
        self._names, self._formulas = names, formulas

    def _by_name(self, key: str) -> list[SpeciesRecord]:
        if self._names is None:
            self._index()
        return [self._materialise(i) for i in self._names.get(key, ())]  # type: ignore[union-attr]

    def _by_formula(self, fkey: str, phase: str) -> list[SpeciesRecord]:
        if self._formulas is None:
            self._index()
        return [self._materialise(i) for i in self._formulas.get((fkey, phase), ())]  # type: ignore[union-attr]

    def _prefer_local(self, matches: list[SpeciesRecord]) -> list[SpeciesRecord]:
        local = [r for r in matches if r.id in self.local_ids]
        return local or matches

    # -- resolution --------------------------------------------------------
    def resolve(self, label: str, phase: str | None = None) -> SpeciesRecord:
        """The record for ``label`` in ``phase``.

        ``label`` is an id (``H2O(g)``), a name or alias (case-insensitive,
        ``water``) or a formula (``H2O``, compared by composition and charge).
        The phase may instead be written in the label (``water(l)``).
        Raises :class:`SpeciesError` when nothing matches (with suggestions)
        or when a formula matches several species (listing them).
        """
        body, label_phase = _split_label(label)
        if phase is None:
            if label in self._entries:
                return self._materialise(label)
            if label_phase is None:
                raise SpeciesError(f"species '{label}' has no phase; write it as "
                                   f"{label}(g), {label}(l), {label}(s) or {label}(aq)")
            phase, label = label_phase, body
        else:
            phase = normalise_phase(phase)
            if label_phase is not None and label_phase == phase:
                label = body
        shown = f"{label}({phase})"

        for candidate in (shown, label):
            if candidate in self._entries:
                rec = self._materialise(candidate)
                if rec.phase == phase:
                    return rec

        by_name = self._prefer_local([r for r in self._by_name(label.lower()) if r.phase == phase])
        if len(by_name) == 1:
            return by_name[0]
        if len(by_name) > 1:
            raise SpeciesError(_ambiguous_message(shown, by_name))

        try:
            parsed = parse_formula(label)
        except FormulaError:
            parsed = None
        if parsed is not None:
            fkey = _formula_key(parsed.composition, parsed.charge)
            by_formula = self._prefer_local(self._by_formula(fkey, phase))
            if len(by_formula) == 1:
                return by_formula[0]
            if len(by_formula) > 1:
                raise SpeciesError(_ambiguous_message(shown, by_formula))
        raise SpeciesError(self._not_found_message(label, phase, parsed))

    def _not_found_message(self, label: str, phase: str, parsed) -> str:
        shown = f"{label}({phase})"
        other = [r for r in self._by_name(label.lower()) if r.phase != phase]
        if parsed is not None:
            fkey = _formula_key(parsed.composition, parsed.charge)
            for ph in PHASES:
                if ph != phase:
                    other += self._by_formula(fkey, ph)
        if other:
            ids = sorted({r.id for r in other})[:5]
            return f"no library species '{shown}'; other phases exist: {', '.join(ids)}"
        keys: dict[str, str] = {}
        for sid, e in self._entries.items():
            if isinstance(e, SpeciesRecord):
                texts, ph = (e.name, e.formula, *e.aliases), e.phase
            else:
                texts, ph = (e[_NAME], e[_FORMULA], *e[_ALIASES]), e[_PHASE]
            if ph != phase:
                continue
            for text in texts:
                keys.setdefault(text.lower(), sid)
        close = difflib.get_close_matches(label.lower(), list(keys), n=5, cutoff=0.6)
        ids = list(dict.fromkeys(keys[c] for c in close))
        if ids:
            return f"no library species '{shown}'; did you mean: {', '.join(ids)}?"
        return (f"no library species '{shown}'; add it to the case as a [[species]] entry "
                f"with formula, phase, hf, s and cp")

    def search(self, query: str) -> list[SpeciesRecord]:
        """Records whose id, name, aliases, formula or CAS number contain ``query``.

        Case-insensitive.  Ranked: exact matches first (a formula query also
        matches by composition), then prefix matches, then other substrings;
        within a rank gas, liquid, solid, aqueous, then shorter names first.
        """
        q = query.strip().lower()
        if not q:
            return []
        try:
            parsed = parse_formula(query.strip())
            fkey: str | None = _formula_key(parsed.composition, parsed.charge)
        except FormulaError:
            fkey = None
        ranked = []
        for sid, e in self._entries.items():
            if isinstance(e, SpeciesRecord):
                name, formula, aliases, cas, phase = e.name, e.formula, e.aliases, e.cas, e.phase
                ekey = _formula_key(e.composition, e.charge) if fkey is not None else None
            else:
                name, formula, aliases, cas, phase = (e[_NAME], e[_FORMULA], e[_ALIASES],
                                                      e[_CAS], e[_PHASE])
                ekey = formula
            lowered = [t.lower() for t in (sid, name, formula, *aliases, *((cas,) if cas else ()))]
            if (fkey is not None and fkey == ekey) or q in lowered:
                rank = 0
            elif any(t.startswith(q) for t in lowered):
                rank = 1
            elif any(q in t for t in lowered):
                rank = 2
            else:
                continue
            ranked.append((rank, PHASES.index(phase), len(name), sid))
        ranked.sort()
        return [self._materialise(x[-1]) for x in ranked]


def _ambiguous_message(shown: str, matches: list[SpeciesRecord]) -> str:
    listing = ", ".join(f"{r.name} [{r.id}]" for r in sorted(matches, key=lambda r: (r.name.lower(), r.id)))
    example = sorted(matches, key=lambda r: (r.name.lower(), r.id))[0]
    return (f"'{shown}' matches {len(matches)} library species: {listing}; "
            f"write the name or id instead, e.g. '{example.id}'")


def _model_from_file(m: dict) -> Model:
    kind = m["kind"]
    if kind == "nasa7":
        return _trusted(Nasa7, ranges=tuple(m["ranges"]),
                        coeffs=tuple(map(tuple, m["coeffs"])), kind=kind)
    if kind == "shomate":
        return _trusted(Shomate, ranges=tuple(m["ranges"]),
                        coeffs=tuple(map(tuple, m["coeffs"])), hf298=m["hf298"], kind=kind)
    return model_from_dict(m)


# Column order of records in the data file (its header repeats it as "fields").
FILE_FIELDS = ("id", "name", "aliases", "formula", "elements", "charge", "phase", "model",
               "source", "note", "uncertainty", "stable_range", "cas", "molar_mass")
_F = {name: i for i, name in enumerate(FILE_FIELDS)}
_ID, _NAME, _ALIASES, _FORMULA, _PHASE, _SOURCE, _CAS = (
    _F["id"], _F["name"], _F["aliases"], _F["formula"], _F["phase"], _F["source"], _F["cas"])


def _record_from_file(row: list, citations: Mapping[str, str]) -> SpeciesRecord:
    """Fast path for records of the generated data file (already canonical)."""
    (sid, name, aliases, formula, elements, charge, phase, model, source, note,
     uncertainty, sr, cas, molar_mass) = row
    if phase not in PHASES:
        raise ValueError(f"unknown phase {phase!r}")
    return _trusted(
        SpeciesRecord, id=sid, name=name, formula=formula,
        elements=tuple(map(tuple, elements)), charge=charge, phase=phase,
        model=_model_from_file(model), source=citations.get(source, source),
        aliases=tuple(aliases), note=note, uncertainty=tuple(map(tuple, uncertainty)),
        stable_range=tuple(sr) if sr else None, cas=cas, molar_mass=molar_mass)


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
    if abs(x) < 0.5 * 10.0**-digits:
        x = 0.0  # no "−0.000"
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
