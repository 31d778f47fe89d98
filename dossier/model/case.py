"""A case as typed, validated, immutable data.

Objects here are produced by :mod:`dossier.casefile.load` (the only place that
reads case files) and consumed by every later step.  All physical values are
SI floats: K, Pa, kg, mol, m3, s, J, W and their quotients.  Optional inputs
are ``None`` when the case file does not give them; the safety assessment
reports what is missing rather than guessing.

Key paths
---------
``Case.header_lines`` maps a *key path* to the line of the case file where
that key is written, so later steps can point at the right line.  Key paths
join table and key names with ``.``; entries of arrays of tables and of
arrays carry a **1-based** index in brackets, as a reader counts them:
``"pressure"``, ``"charge.cp"``, ``"species[2].hf"``, ``"review[1].verdict"``,
``"inerts.N2(g)"``, ``"decomposition.rate.power"``, ``"temperature[2]"``.
Use :meth:`Case.line_of`, which falls back to the nearest enclosing key.
"""
from __future__ import annotations

import datetime
import enum
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import Literal, Mapping

from dossier.constants import P_STANDARD


class Status(enum.StrEnum):
    """Where a case stands in the review process."""

    DRAFT = "draft"
    SUBMITTED = "submitted"
    ACCEPTED = "accepted"
    ACCEPTED_WITH_CONDITIONS = "accepted-with-conditions"
    DECLINED = "declined"
    WITHDRAWN = "withdrawn"


class Verdict(enum.StrEnum):
    """A reviewer's decision on one revision of a case."""

    ACCEPTED = "accepted"
    ACCEPTED_WITH_CONDITIONS = "accepted-with-conditions"
    DECLINED = "declined"


class ActivityModel(enum.StrEnum):
    """How the activities of a liquid solution are computed (``[equilibrium]``)."""

    IDEAL = "ideal"                        # activity = mole fraction
    UNIFAC = "unifac"                      # original UNIFAC
    UNIFAC_DORTMUND = "unifac-dortmund"    # modified UNIFAC (Dortmund)


class EstimateMethod(enum.StrEnum):
    """Group-additivity method a ``[[species]]`` table may ask its data from."""

    BENSON = "benson"                      # Benson groups, Joback where they lack a value
    JOBACK = "joback"                      # Joback groups only


class Phase(enum.StrEnum):
    """Phase of a case-local species (``cr`` is a crystalline solid)."""

    GAS = "g"
    LIQUID = "l"
    SOLID = "s"
    CRYSTAL = "cr"
    AQUEOUS = "aq"


@dataclass(frozen=True)
class Charge:
    """The batch: how much of the basis species, in how much mass.

    ``amount`` is in kg when ``amount_kind == "mass"`` and in mol when it is
    ``"amount"``; converting a mass to moles needs the basis species' molar
    mass, which is resolved later.
    """

    basis: str                              # species label as in the reaction, e.g. "C6H5NO2(l)"
    amount_kind: Literal["mass", "amount"]
    amount: float                           # kg or mol, see amount_kind
    mass: float                             # kg, total reaction mass
    cp: float                               # J/(kg K), specific heat of that mass
    process_temperature: float              # K
    accumulation: float                     # 0..1, unreacted share at the worst moment
    feed_time: float | None = None          # s, dosing time


@dataclass(frozen=True)
class Vessel:
    """The equipment.  Every value is optional; missing ones are reported later."""

    mtt: float | None = None                # K, maximum technical temperature
    free_volume: float | None = None        # m3, gas space
    design_pressure: float | None = None    # Pa, absolute
    cooling_ua: float | None = None         # W/K, overall U*A
    coolant_temperature: float | None = None  # K


@dataclass(frozen=True)
class Decomposition:
    """The secondary (decomposition) reaction, as far as it is known."""

    energy: float | None = None             # J/kg released (positive)
    onset: float | None = None              # K, screening onset (e.g. DSC)
    td24: float | None = None               # K, if known
    activation_energy: float | None = None  # J/mol
    rate_temperature: float | None = None   # K, where rate_power was measured
    rate_power: float | None = None         # W/kg, heat-release rate at rate_temperature


@dataclass(frozen=True)
class Measured:
    """A measured reaction enthalpy (calorimetry)."""

    reaction_enthalpy: float                # J/mol of reaction as written
    method: str
    uncertainty: float | None = None        # J/mol, non-negative


@dataclass(frozen=True)
class LocalSpecies:
    """Thermochemical data for a species the library does not hold: given (``hf``,
    ``s``, ``cp`` and ``source``) or to be estimated from ``smiles`` by the method
    ``estimate`` names (then ``hf``, ``s``, ``cp`` are None and ``source`` optional)."""

    name: str
    formula: str
    phase: Phase
    hf: float | None                        # J/mol, standard enthalpy of formation, 298.15 K
    s: float | None                         # J/(mol K), standard molar entropy, 298.15 K
    cp: float | None                        # J/(mol K), taken as constant
    source: str | None                      # provenance: required unless estimated
    uncertainty: tuple[tuple[str, float], ...] = ()  # ("hf", J/mol), ("s", ...), ("cp", ...)
    smiles: str | None = None
    t_range: tuple[float, float] | None = None  # K, where the data may be used
    estimate: str | None = None             # "benson" or "joback": estimate from smiles

    @property
    def estimated(self) -> bool:
        """True when the data come from the estimate (the table gives no hf, s, cp);
        with them given as well, they are used and the estimate is only a check."""
        return self.estimate is not None and self.hf is None


@dataclass(frozen=True)
class Review:
    """One reviewer's verdict."""

    name: str
    role: str
    date: datetime.date
    verdict: Verdict
    conditions: str = ""
    digest: str | None = None               # integrity digest the verdict accepted


@dataclass(frozen=True)
class Variant:
    """A what-if: the case with a few inputs of [charge], [vessel], [decomposition] or
    [measured] changed.  ``case`` is the whole case with the changes made (its own
    ``variants`` empty); ``changes`` lists each changed key path with the value as the
    file writes it."""

    name: str
    note: str
    changes: tuple[tuple[str, str], ...]   # ("charge.feed_time", "2 h")
    case: "Case"


@dataclass(frozen=True)
class Case:
    """One proposed reaction put before the review board."""

    id: str                                 # file stem, e.g. "nitro-hydrogenation"
    path: Path
    title: str
    revision: int                           # >= 1
    status: Status
    reaction: str                           # raw reaction string; parsed elsewhere
    window: tuple[float, float]             # K, (low, high), low < high
    owner: str | None = None
    gate: str | None = None
    meeting: datetime.date | None = None    # the board meeting this case goes to
    pressure: float = P_STANDARD             # Pa, absolute (default: p° = 1 bar)
    inerts: tuple[tuple[str, float], ...] = ()  # (label with phase, mol per mol of basis)
    activity_model: ActivityModel = ActivityModel.IDEAL  # of the liquid solution
    charge: Charge | None = None
    vessel: Vessel | None = None
    decomposition: Decomposition | None = None
    measured: Measured | None = None
    species: tuple[LocalSpecies, ...] = ()
    reviews: tuple[Review, ...] = ()
    #: Safety inputs the case says do not apply, with the reason ([not_applicable]):
    #: ("decomposition", "dilute aqueous salts ..."), in the schema's key order.
    not_applicable: tuple[tuple[str, str], ...] = ()
    #: Half-widths of the 95 % intervals of the values written with ±, by key path
    #: ("charge.cp", J/(kg K)), in SI units.
    uncertainty: tuple[tuple[str, float], ...] = ()
    variants: tuple[Variant, ...] = ()
    narrative: str = ""                     # Markdown after the header, as written
    narrative_line: int = 1                 # file line where the narrative starts
    format_version: int = 1                 # the header's `format` key
    header_lines: Mapping[str, int] = field(
        default_factory=lambda: MappingProxyType({}), compare=False, hash=False,
        repr=False)

    def line_of(self, key: str) -> int | None:
        """Line of ``key`` (a key path) or of its nearest enclosing key."""
        return nearest_line(self.header_lines, key)

    def half_width(self, key: str) -> float:
        """The stated 95 % half-width of the value at ``key`` (SI), 0 when none is stated."""
        return dict(self.uncertainty).get(key, 0.0)


def nearest_line(lines: Mapping[str, int], key: str) -> int | None:
    """Line of the key path ``key`` in ``lines``, else of its nearest parent.

    ``"species[2].hf"`` falls back to ``"species[2]"``, then ``"species"``.
    """
    path = key
    while path:
        if path in lines:
            return lines[path]
        cut = max(path.rfind("."), path.rfind("["))
        path = path[:cut] if cut > 0 else ""
    return None
