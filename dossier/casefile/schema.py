"""The case-file format: the delimiter, the format versions read and the header schema.

The header is described declaratively: :data:`SCHEMA` is a table of
:class:`FieldSpec` entries, some of which hold further tables
(:class:`TableSpec`).  The validator (:mod:`dossier.casefile.validate`) and
the new-case template (:mod:`dossier.casefile.template`) both work from it,
so a key exists in one place.  Pressures are absolute (see
:mod:`dossier.casefile.units`).
"""
from __future__ import annotations

from dataclasses import dataclass, replace

from dossier.model.case import ActivityModel, EstimateMethod, Phase, Status, Verdict

#: Case-file format versions this code reads.
SUPPORTED_FORMATS = (1,)

#: The line that opens and closes the TOML header.
DELIMITER = "+++"

@dataclass(frozen=True)
class FieldSpec:
    """One key of a table in the case header.

    ``kind`` is one of: ``text`` (non-empty string), ``whole`` (positive
    integer), ``format`` (the format version), ``date`` (a TOML date),
    ``choice`` (one of ``choices``), ``quantity`` (text with a unit of
    ``dimension``), ``mass_or_amount``, ``temperature_pair`` (two
    temperatures, low < high), ``quantity_map`` (a table of labels, each a
    quantity of ``dimension``), ``table`` (a sub-table per ``table``),
    ``tables`` (an array of tables per ``table``), ``text_or_tables`` (one
    text, or an array of tables per ``table``).
    """

    name: str
    kind: str
    required: bool = False
    dimension: str | None = None
    choices: tuple[str, ...] = ()
    sign: str = "any"            # any | positive | non-negative
    example: str = ""            # TOML right-hand side shown in messages
    help: str = ""               # extra words for a sign or range message
    table: "TableSpec | None" = None
    required_unless: str = ""    # required unless this other key of the table is given


@dataclass(frozen=True)
class TableSpec:
    """The keys a table may hold."""

    title: str                   # as written in the file: "[charge]", "[[species]]"
    fields: tuple[FieldSpec, ...]

    def field(self, name: str) -> FieldSpec | None:
        for f in self.fields:
            if f.name == name:
                return f
        return None

    @property
    def names(self) -> tuple[str, ...]:
        return tuple(f.name for f in self.fields)


def _q(name: str, dimension: str, example: str, *, required: bool = False,
       sign: str = "any", help: str = "", required_unless: str = "") -> FieldSpec:
    return FieldSpec(name, "quantity", required=required, dimension=dimension,
                     sign=sign, example=f'"{example}"', help=help,
                     required_unless=required_unless)


CHARGE = TableSpec("[charge]", (
    FieldSpec("basis", "text", required=True, example='"C6H5NO2(l)"'),
    FieldSpec("amount", "mass_or_amount", required=True, sign="positive",
              example='"120 kg"'),
    _q("mass", "mass", "950 kg", required=True, sign="positive"),
    _q("cp", "specific_heat", "1.9 kJ/(kg*K)", required=True, sign="positive"),
    _q("process_temperature", "temperature", "60 degC", required=True),
    _q("accumulation", "fraction", "35 %", required=True),
    _q("feed_time", "time", "4 h", sign="positive"),
))

VESSEL = TableSpec("[vessel]", (
    _q("mtt", "temperature", "100 degC"),
    _q("free_volume", "volume", "0.8 m3", sign="positive"),
    _q("design_pressure", "pressure", "6 bar"),
    _q("cooling_ua", "heat_transfer", "2.5 kW/K", sign="non-negative"),
    _q("coolant_temperature", "temperature", "15 degC"),
))

RATE = TableSpec("rate", (
    _q("temperature", "temperature", "200 degC", required=True),
    _q("power", "power_per_mass", "8 W/kg", required=True, sign="positive"),
))

DECOMPOSITION = TableSpec("[decomposition]", (
    _q("energy", "energy_per_mass", "420 J/g", sign="non-negative",
       help="the heat released, as a positive number"),
    _q("onset", "temperature", "215 degC"),
    _q("td24", "temperature", "165 degC"),
    _q("activation_energy", "energy_per_amount", "95 kJ/mol", sign="positive"),
    FieldSpec("rate", "table", table=RATE,
              example='{ temperature = "200 degC", power = "8 W/kg" }'),
))

#: Why a safety input does not apply to a case: one reason per table it stands
#: for, so that a submitted case gives every safety input or says why not.
NOT_APPLICABLE = TableSpec("[not_applicable]", (
    FieldSpec("charge", "text", example='"continuous loop: no batch; see the narrative"'),
    FieldSpec("vessel", "text", example='"open tank vented to the scrubber; no closed gas space"'),
    FieldSpec("decomposition", "text",
              example='"dilute aqueous salts below 60 degC; no decomposing species"'),
))

MEASURED = TableSpec("[measured]", (
    _q("reaction_enthalpy", "energy_per_amount", "-540 kJ/mol", required=True),
    FieldSpec("method", "text", required=True,
              example='"isothermal reaction calorimetry, 1 L scale"'),
    _q("uncertainty", "energy_per_amount", "20 kJ/mol", sign="non-negative"),
))

SPECIES_UNCERTAINTY = TableSpec("uncertainty", (
    _q("hf", "energy_per_amount", "15 kJ/mol", sign="non-negative"),
    _q("s", "molar_entropy", "10 J/(mol*K)", sign="non-negative"),
    _q("cp", "molar_heat_capacity", "20 J/(mol*K)", sign="non-negative"),
))

SPECIES = TableSpec("[[species]]", (
    FieldSpec("name", "text", required=True, example='"intermediate B"'),
    FieldSpec("formula", "text", required=True, example='"C8H9NO2"'),
    FieldSpec("phase", "choice", required=True, choices=tuple(p.value for p in Phase),
              example='"l"'),
    _q("hf", "energy_per_amount", "-310 kJ/mol", required_unless="estimate"),
    _q("s", "molar_entropy", "250 J/(mol*K)", required_unless="estimate"),
    _q("cp", "molar_heat_capacity", "290 J/(mol*K)", sign="positive",
       required_unless="estimate"),
    FieldSpec("source", "text", example='"estimate by group additivity"',
              required_unless="estimate"),
    FieldSpec("uncertainty", "table", table=SPECIES_UNCERTAINTY,
              example='{ hf = "15 kJ/mol" }'),
    FieldSpec("smiles", "text", example='"CC(=O)Nc1ccccc1"'),
    FieldSpec("t_range", "temperature_pair", example='["250 K", "400 K"]'),
    FieldSpec("estimate", "choice", choices=tuple(m.value for m in EstimateMethod),
              example='"benson"'),
))

#: The [[species]] keys that go with given values only: an estimate brings its own.
SPECIES_ESTIMATED_KEYS = ("uncertainty", "t_range")

EQUILIBRIUM = TableSpec("[equilibrium]", (
    FieldSpec("activity_model", "choice", choices=tuple(m.value for m in ActivityModel),
              example='"unifac"'),
))

#: One condition of a recorded verdict, with the id its closure names (C1, C2, ...).
CONDITION = TableSpec("[[review.conditions]]", (
    FieldSpec("id", "text", required=True, example='"C1"'),
    FieldSpec("text", "text", required=True, example='"Feed interlocked on cooling water flow."'),
))

REVIEW = TableSpec("[[review]]", (
    FieldSpec("name", "text", required=True, example='"R. Example"'),
    FieldSpec("role", "text", required=True, example='"process safety"'),
    FieldSpec("date", "date", required=True, example="2026-11-20"),
    FieldSpec("verdict", "choice", required=True,
              choices=tuple(v.value for v in Verdict),
              example='"accepted-with-conditions"'),
    # one text (the first form, no id), or a table / [[review.conditions]] tables with ids
    FieldSpec("conditions", "text_or_tables", table=CONDITION,
              example='{ id = "C1", text = "Feed interlocked on cooling water flow." }'),
    FieldSpec("digest", "text", example='"..."'),
))

#: A condition closed out: recorded in the case file like a verdict (outside the digest).
CLOSURE = TableSpec("[[closure]]", (
    FieldSpec("condition", "text", required=True, example='"C1"'),
    FieldSpec("evidence", "text", required=True,
              example='"interlock function test IT-2291 passed, record in the plant file"'),
    FieldSpec("by", "text", required=True, example='"M. Okafor, plant manager"'),
    FieldSpec("date", "date", required=True, example="2026-12-01"),
))

def _optional(spec: TableSpec, title: str, leave_out: tuple[str, ...] = ()) -> TableSpec:
    """``spec`` with every key optional (a variant overrides only what it names)."""
    return TableSpec(title, tuple(replace(f, required=False, required_unless="")
                                  for f in spec.fields if f.name not in leave_out))


#: The tables a variant may override.  The basis species sets what every conversion
#: refers to, so a variant may not change it (the validator says so).
VARIANT_TABLES: dict[str, TableSpec] = {
    "charge": _optional(CHARGE, "[charge] of a variant"),
    "vessel": _optional(VESSEL, "[vessel] of a variant"),
    "decomposition": _optional(DECOMPOSITION, "[decomposition] of a variant"),
    "measured": _optional(MEASURED, "[measured] of a variant"),
}

_VARIANT_EXAMPLES = {
    "charge": '{ accumulation = "50 %", feed_time = "2 h" }',
    "vessel": '{ cooling_ua = "1.5 kW/K" }',
    "decomposition": '{ energy = "600 J/g" }',
    "measured": '{ reaction_enthalpy = "-560 kJ/mol", method = "heat-flow calorimetry" }',
}

VARIANT = TableSpec("[[variant]]", (
    FieldSpec("name", "text", required=True, example='"faster dosing"'),
    FieldSpec("note", "text", example='"feed in 2 h instead of 4 h"'),
) + tuple(FieldSpec(name, "table", table=spec, example=_VARIANT_EXAMPLES[name])
          for name, spec in VARIANT_TABLES.items()))

#: The tables whose quantities may carry an uncertainty, "1.90 ± 0.10 kJ/(kg*K)".
UNCERTAIN_TABLES = ("charge", "vessel", "decomposition", "measured")

#: The whole header.
SCHEMA = TableSpec("the header", (
    FieldSpec("format", "format", example="1"),
    FieldSpec("title", "text", required=True, example='"Hydrogenation of the nitro intermediate"'),
    FieldSpec("revision", "whole", required=True, example="1"),
    FieldSpec("status", "choice", required=True, choices=tuple(s.value for s in Status),
              example='"draft"'),
    FieldSpec("owner", "text", example='"Process development, building 7"'),
    FieldSpec("gate", "text", example='"pilot"'),
    FieldSpec("meeting", "date", example="2026-11-20"),
    FieldSpec("reaction", "text", required=True,
              example='"C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)"'),
    FieldSpec("temperature", "temperature_pair", required=True,
              example='["40 degC", "80 degC"]'),
    _q("pressure", "pressure", "5 bar"),
    FieldSpec("inerts", "quantity_map", dimension="amount", sign="non-negative",
              example='{ "N2(g)" = "0.5 mol" }'),
    FieldSpec("equilibrium", "table", table=EQUILIBRIUM, example="[equilibrium]"),
    FieldSpec("charge", "table", table=CHARGE, example="[charge]"),
    FieldSpec("vessel", "table", table=VESSEL, example="[vessel]"),
    FieldSpec("decomposition", "table", table=DECOMPOSITION, example="[decomposition]"),
    FieldSpec("not_applicable", "table", table=NOT_APPLICABLE, example="[not_applicable]"),
    FieldSpec("measured", "table", table=MEASURED, example="[measured]"),
    FieldSpec("species", "tables", table=SPECIES, example="[[species]]"),
    FieldSpec("variant", "tables", table=VARIANT, example="[[variant]]"),
    FieldSpec("review", "tables", table=REVIEW, example="[[review]]"),
    FieldSpec("closure", "tables", table=CLOSURE, example="[[closure]]"),
))


__all__ = ["SUPPORTED_FORMATS", "DELIMITER", "FieldSpec", "TableSpec", "SCHEMA", "CHARGE",
           "VESSEL", "RATE", "DECOMPOSITION", "MEASURED", "SPECIES_UNCERTAINTY", "SPECIES",
           "REVIEW", "CONDITION", "CLOSURE", "EQUILIBRIUM", "SPECIES_ESTIMATED_KEYS", "VARIANT", "VARIANT_TABLES",
           "UNCERTAIN_TABLES"]
