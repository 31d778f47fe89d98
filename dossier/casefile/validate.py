"""The validator: every value of a case header checked against the schema.

:func:`validate_header` walks the parsed TOML with :data:`SCHEMA`, converts
quantities to SI, and collects every problem, each on its file line (from
:func:`~dossier.casefile.locate.locate_keys`).  Unknown keys are errors with
a "did you mean" hint, so a typo never drops a safety input.  One
:class:`~dossier.errors.CaseError` with all problems, sorted by line, is
raised at the end.
"""
from __future__ import annotations

import datetime
import difflib
import re
from typing import Any, Callable

from dossier.casefile.schema import (SCHEMA, SPECIES, SPECIES_ESTIMATED_KEYS, SUPPORTED_FORMATS,
                                     UNCERTAIN_TABLES, FieldSpec, TableSpec)
from dossier.casefile.uncertain import has_uncertainty, split_uncertainty
from dossier.casefile.units import DIMENSIONS, parse_mass_or_amount, parse_quantity
from dossier.chem.formula import parse_formula
from dossier.chem.phases import PHASE_ALIASES
from dossier.errors import CaseError, FormulaError, Problem, UnitError
from dossier.model.case import Verdict, nearest_line

_LABEL_RE = re.compile(r"^\S.*\((?:%s)\)$" % "|".join(PHASE_ALIASES))

_BAD = object()  # a value that failed validation; its problem is recorded
#: What :func:`check_header` gives for a value that failed validation.
INVALID = _BAD

#: Highest temperature (K) a window may reach: an input limit that keeps the work
#: of an assessment bounded.  The library's species data end at 6,000 K or below
#: (checked in tests/unit/casefile/test_window_limit.py); a process window lies
#: far below either.
MAX_WINDOW_K = 10_000.0


def _show(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return repr(value if len(value) <= 60 else value[:60] + "...")
    if isinstance(value, (int, float)):
        return repr(value)
    if isinstance(value, datetime.datetime):
        return value.isoformat()
    if isinstance(value, (datetime.date, datetime.time)):
        return value.isoformat()
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return "a list"
    return type(value).__name__


def _did_you_mean(word: str, options: tuple[str, ...]) -> str:
    lowered = {o.lower(): o for o in options}
    if word.lower() in lowered:
        return f"; did you mean '{lowered[word.lower()]}'?"
    close = difflib.get_close_matches(word.lower(), list(lowered), n=1, cutoff=0.6)
    return f"; did you mean '{lowered[close[0]]}'?" if close else ""


def _sub_tables(spec: TableSpec) -> list[tuple[str, TableSpec]]:
    """The tables ``spec`` holds, each with how to name it in a message."""
    return [(f"[{f.name}]" if spec is SCHEMA else f"the {f.name} table of {spec.title}",
             f.table) for f in spec.fields if f.kind in ("table", "tables") and f.table]


def _belongs_in(name: str, spec: TableSpec) -> str:
    """A hint naming the table(s) of :data:`SCHEMA` where the key ``name`` belongs, for a
    key written in ``spec`` where it is unknown ("" when no table has it).  Looked for
    first in the tables ``spec`` holds, then in the header's tables, then in theirs."""
    top = [(table.title, table) for _n, table in _sub_tables(SCHEMA)]
    nested = [pair for _t, table in top for pair in _sub_tables(table)]
    for level in (_sub_tables(spec) if spec is not SCHEMA else [], top, nested):
        places = list(dict.fromkeys(title for title, table in level
                                    if table is not spec and table.field(name)))
        if places:
            where = " or ".join([", ".join(places[:-1]), places[-1]] if len(places) > 2
                                else places)
            here = "" if spec is SCHEMA else f", not in {spec.title}"
            fix = "move it there" if len(places) == 1 else "move it to the one meant"
            return f"; '{name}' belongs in {where}{here}: {fix}"
    return ""


class _Validator:
    def __init__(self, filename: str, lines: dict[str, int], default_line: int):
        self.filename = filename
        self.lines = lines
        self.default_line = default_line
        self.problems: list[Problem] = []
        #: key path -> half-width of the 95 % interval in SI, for values written with ±
        self.uncertainties: dict[str, float] = {}

    def line_of(self, key: str) -> int:
        line = nearest_line(self.lines, key)
        return self.default_line if line is None else line

    def problem(self, key: str, message: str) -> object:
        self.problems.append(Problem(message, self.filename, self.line_of(key), key))
        return _BAD

    # -- tables -------------------------------------------------------------
    def table(self, raw: dict[str, Any], spec: TableSpec, path: str) -> dict[str, Any]:
        """Validate one table; return {name: converted value or _BAD or None}."""
        out: dict[str, Any] = {}
        for name, value in raw.items():
            key = f"{path}.{name}" if path else name
            fspec = spec.field(name)
            if fspec is None:
                self.unknown(key, name, spec, path)
                continue
            out[name] = self.field(value, fspec, key)
        for fspec in spec.fields:
            if fspec.name not in raw:
                if fspec.required or (fspec.required_unless
                                      and fspec.required_unless not in raw):
                    key = f"{path}.{fspec.name}" if path else fspec.name
                    where = f" in {spec.title}" if path else ""
                    self.problems.append(Problem(
                        f"required key is missing{where}; add a line like: "
                        f"{fspec.name} = {fspec.example}",
                        self.filename, self.line_of(path) if path else self.default_line,
                        key))
                    out[fspec.name] = _BAD
                else:
                    out[fspec.name] = None
        return out

    def unknown(self, key: str, name: str, spec: TableSpec, path: str) -> None:
        hint = ""
        if name.lower() in (n.lower() for n in spec.names):
            hint = _did_you_mean(name, spec.names)  # the right key in another letter case
        elif path and SCHEMA.field(name) is not None:
            hint = (f"; '{name}' is a top-level key: move it above the first "
                    "[table] line, or it belongs to the table above it")
        hint = hint or _belongs_in(name, spec) or _did_you_mean(name, spec.names)
        if not hint:
            hint = f"; known keys in {spec.title}: {', '.join(spec.names)}"
        self.problem(key, f"unknown key{hint}")

    # -- fields -------------------------------------------------------------
    def field(self, value: Any, spec: FieldSpec, key: str) -> Any:
        reader: Callable[[Any, FieldSpec, str], Any] = getattr(self, f"read_{spec.kind}")
        return reader(value, spec, key)

    def read_text(self, value, spec, key):
        if not isinstance(value, str):
            return self.problem(key, f"expected text in quotes, like {spec.example}; "
                                     f"got {_show(value)}")
        if value.strip() == "":
            return self.problem(key, f"expected some text, like {spec.example}; "
                                     "got an empty string")
        return value

    def read_whole(self, value, spec, key):
        if isinstance(value, bool) or not isinstance(value, int) or value < 1:
            quoted = " without quotes" if isinstance(value, str) else ""
            return self.problem(key, f"expected a positive whole number{quoted}, like "
                                     f"{spec.example}; got {_show(value)}")
        return value

    def read_format(self, value, spec, key):
        if isinstance(value, bool) or not isinstance(value, int):
            return self.problem(key, f"expected the format version as a whole number, "
                                     f"like format = 1; got {_show(value)}")
        if value not in SUPPORTED_FORMATS:
            return self.problem(key, f"this file is written in case format {value}, "
                                     "but this version of dossier reads format "
                                     f"{', '.join(map(str, SUPPORTED_FORMATS))} only")
        return value

    def read_date(self, value, spec, key):
        if type(value) is datetime.date:
            return value
        if isinstance(value, datetime.datetime):
            return self.problem(key, f"expected a date without a time of day, like "
                                     f"{spec.example}; got {_show(value)}")
        if isinstance(value, str):
            return self.problem(key, f"expected a date without quotes, like "
                                     f"{spec.example}; got {_show(value)}")
        return self.problem(key, f"expected a date, like {spec.example}; "
                                 f"got {_show(value)}")

    def read_choice(self, value, spec, key):
        if isinstance(value, str) and value in spec.choices:
            return value
        hint = _did_you_mean(value, spec.choices) if isinstance(value, str) else ""
        return self.problem(key, f"expected one of {', '.join(spec.choices)}; "
                                 f"got {_show(value)}{hint}")

    def _signed(self, value: float, spec: FieldSpec, key: str, raw: Any) -> Any:
        noun = DIMENSIONS[spec.dimension].noun if spec.dimension else "a quantity"
        extra = f" ({spec.help})" if spec.help else ""
        if spec.sign == "positive" and not value > 0:
            return self.problem(key, f"expected {noun} above zero{extra}, like "
                                     f"{spec.example}; got {_show(raw)}")
        if spec.sign == "non-negative" and not value >= 0:
            return self.problem(key, f"expected {noun} of zero or more{extra}, like "
                                     f"{spec.example}; got {_show(raw)}")
        return value

    def read_quantity(self, value, spec, key):
        if has_uncertainty(value):
            return self.read_uncertain(value, spec, key)
        try:
            si = parse_quantity(value, spec.dimension)
        except UnitError as err:
            for p in err.problems:
                self.problem(key, p.message)
            return _BAD
        return self._signed(si, spec, key, value)

    def read_uncertain(self, value, spec, key):
        """A quantity written with ± and the half-width of its 95 % interval."""
        parts = key.split(".")
        table = parts[1] if parts[0].startswith("variant[") and len(parts) > 2 else parts[0]
        if table not in UNCERTAIN_TABLES or parts[-1] == "uncertainty" or len(parts) < 2:
            where = (" give a species' uncertainty in its own table, like uncertainty = "
                     "{ hf = \"15 kJ/mol\" }" if table.startswith("species[") else
                     " write this value without one")
            return self.problem(key, "an uncertainty (±) is read only in the quantities of "
                                     "[charge], [vessel], [decomposition] and [measured];"
                                     f"{where}; got {_show(value)}")
        split = split_uncertainty(value)
        if split is None:
            return self.problem(key, "expected a value, ± and the half-width of its 95 % "
                                     f"interval, in one unit, like "
                                     f"\"{_uncertain_example(spec)}\"; got {_show(value)}")
        if split.half_width < 0:
            return self.problem(key, "the half-width after ± must be zero or more; got "
                                     f"{_show(value)}")
        try:
            if spec.kind == "mass_or_amount":
                (kind, si), (kind_up, up) = (parse_mass_or_amount(split.central),
                                             parse_mass_or_amount(split.upper))
                central = (kind, si) if si > 0 else self.problem(
                    key, f"expected a mass or an amount above zero, like {spec.example}; "
                         f"got {_show(value)}")
            else:
                si = parse_quantity(split.central, spec.dimension)
                up = parse_quantity(split.upper, spec.dimension)
                central = self._signed(si, spec, key, value)
        except UnitError as err:
            for p in err.problems:
                self.problem(key, p.message)
            return _BAD
        if central is not _BAD:
            self.uncertainties[key] = abs(up - si)
        return central

    def read_mass_or_amount(self, value, spec, key):
        if has_uncertainty(value):
            return self.read_uncertain(value, spec, key)
        try:
            kind, si = parse_mass_or_amount(value)
        except UnitError as err:
            for p in err.problems:
                self.problem(key, p.message)
            return _BAD
        if not si > 0:
            return self.problem(key, f"expected a mass or an amount above zero, like "
                                     f"{spec.example}; got {_show(value)}")
        return kind, si

    def read_temperature_pair(self, value, spec, key):
        if not isinstance(value, list) or len(value) != 2:
            got = f"a list of {len(value)}" if isinstance(value, list) else _show(value)
            return self.problem(key, f"expected two temperatures [low, high], like "
                                     f"{spec.example}; got {got}")
        ends = []
        for index, item in enumerate(value, start=1):
            try:
                ends.append(parse_quantity(item, "temperature"))
            except UnitError as err:
                for p in err.problems:
                    self.problem(f"{key}[{index}]", p.message)
                ends.append(_BAD)
        if _BAD in ends:
            return _BAD
        low, high = ends
        if not low < high:
            return self.problem(key, f"expected the low temperature first and below the "
                                     f"high one, like {spec.example}; got "
                                     f"{_show(value[0])} to {_show(value[1])}")
        if high > MAX_WINDOW_K:
            return self.problem(key, f"the high temperature {_show(value[1])} is above "
                                     f"{MAX_WINDOW_K:,.0f} K, the highest a window may "
                                     "reach; the library's species data end at 6,000 K "
                                     "or below")
        return (low, high)

    def read_quantity_map(self, value, spec, key):
        if not isinstance(value, dict):
            return self.problem(key, f"expected a table, like {key} = {spec.example}; "
                                     f"got {_show(value)}")
        out = []
        bad = False
        qspec = FieldSpec(spec.name, "quantity", dimension=spec.dimension,
                          sign=spec.sign, example=spec.example)
        for label, item in value.items():
            sub = f"{key}.{label}"
            if not _LABEL_RE.match(label):
                self.problem(sub, "expected a species with its phase, like 'N2(g)'")
                bad = True
                continue
            si = self.read_quantity(item, qspec, sub)
            bad = bad or si is _BAD
            out.append((label, si))
        return _BAD if bad else tuple(out)

    def read_table(self, value, spec, key):
        if isinstance(value, list):
            return self.problem(key, f"expected one {spec.table.title} table; got "
                                     f"a list of {len(value)} (write [{key}], not [[{key}]])")
        if not isinstance(value, dict):
            return self.problem(key, f"expected a table, like {key} = {spec.example}; "
                                     f"got {_show(value)}")
        return self.table(value, spec.table, key)

    def read_tables(self, value, spec, key):
        if isinstance(value, dict):
            return self.problem(key, f"expected {spec.table.title} (double brackets, one "
                                     f"per entry); got a single table [{key}]")
        if not isinstance(value, list) or not all(isinstance(v, dict) for v in value):
            return self.problem(key, f"expected {spec.table.title} tables; "
                                     f"got {_show(value)}")
        return [self.table(v, spec.table, f"{key}[{i}]")
                for i, v in enumerate(value, start=1)]

    def read_text_or_tables(self, value, spec, key):
        """One text, or one table or an array of tables (read as a tuple of each
        table's values in the order of the schema)."""
        if isinstance(value, str):
            return self.field(value, FieldSpec(spec.name, "text",
                                               example='"Feed interlocked on cooling water '
                                                       'flow."'), key)
        if isinstance(value, dict):
            value = [value]
        if isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
            tables = self.read_tables(value, spec, key)
            return tuple(tuple(t.get(f.name) for f in spec.table.fields) for t in tables)
        return self.problem(key, f"expected text in quotes, like {spec.example}, or "
                                 f"{spec.table.title} tables; got {_show(value)}")


def _uncertain_example(spec: FieldSpec) -> str:
    """The key's example written with an uncertainty: "950 kg" -> "950 ± 10 kg"."""
    number, _, unit = spec.example.strip('"').partition(" ")
    return f"{number} ± {abs(float(number)) * 0.05:g} {unit}".strip()


def _species_data(v: _Validator, index: int, sp: dict[str, Any]) -> None:
    """A [[species]] table that asks for an estimate gives the structure, is a gas or a
    liquid, and gives either all of hf, s and cp (with their source: those values are
    used and the estimate is shown beside them) or none of them (the estimate is used,
    with its own uncertainty and range)."""
    key = f"species[{index}]"
    if sp.get("estimate") in (None, _BAD):
        return  # hf, s, cp and source are then required (schema: required_unless)
    given = [n for n in ("hf", "s", "cp") if sp.get(n) is not None]
    if given and len(given) < 3:
        for name in ("hf", "s", "cp"):
            if name not in given:
                v.problem(f"{key}.{name}", "with 'estimate', give all of hf, s and cp (they "
                                           "are used, and the estimate is shown beside them "
                                           f"as a check) or none of them; '{name}' is missing")
    elif given and sp.get("source") is None:
        v.problem(f"{key}.source", "required key is missing in [[species]]: the values given "
                                   "beside 'estimate' need their source; add a line like: "
                                   f"source = {SPECIES.field('source').example}")
    elif not given:
        for name in SPECIES_ESTIMATED_KEYS:
            if sp.get(name) is not None:
                v.problem(f"{key}.{name}",
                          f"'{name}' goes with values given in the table; here the estimate "
                          f"brings its own {_ESTIMATED_WORDS[name]}: remove '{name}', or give "
                          "hf, s and cp too (they are then used, and the estimate shown "
                          "beside them)")
    if sp.get("smiles") is None:
        v.problem(f"{key}.estimate", "an estimate is made from the structure: add a line "
                                     f"like: smiles = {SPECIES.field('smiles').example}")
    if sp.get("phase") not in (None, _BAD, "g", "l"):
        v.problem(f"{key}.phase",
                  f"an estimate can be made for a gas (g) or a liquid (l) only, not for "
                  f"phase '{sp['phase']}': group additivity gives ideal-gas values and the "
                  "liquid is reached by subtracting an estimated heat of vaporisation; "
                  "remove 'estimate' and give measured hf, s and cp")


#: What an estimate brings in place of each key it replaces.
_ESTIMATED_WORDS = {"uncertainty": "uncertainties (the method's published accuracy)",
                    "t_range": "temperature range (the method's)"}


def _cross_checks(v: _Validator, top: dict[str, Any]) -> None:
    """Checks that involve more than one key."""
    species = top.get("species")
    if isinstance(species, list):
        seen: dict[str, int] = {}
        for index, sp in enumerate(species, start=1):
            _species_data(v, index, sp)
            formula = sp.get("formula")
            if isinstance(formula, str) and formula.strip():
                try:
                    parse_formula(formula)
                except FormulaError as err:
                    for p in err.problems:
                        v.problem(f"species[{index}].formula", p.message)
            name = sp.get("name")
            if isinstance(name, str):
                if name in seen:
                    v.problem(f"species[{index}].name",
                              f"the same name as species[{seen[name]}]; each "
                              "[[species]] needs its own name")
                else:
                    seen[name] = index
    reviews = top.get("review")
    if isinstance(reviews, list):
        for index, rv in enumerate(reviews, start=1):
            if rv.get("verdict") == Verdict.ACCEPTED_WITH_CONDITIONS.value \
                    and rv.get("conditions") is None:
                v.problem(f"review[{index}].verdict",
                          "a verdict 'accepted-with-conditions' needs the conditions: "
                          "add a line like: conditions = \"...\"")
    _condition_checks(v, top)


_CONDITION_ID = re.compile(r"C[1-9][0-9]{0,3}")


def _condition_checks(v: _Validator, top: dict[str, Any]) -> None:
    """Condition ids are C1, C2, ... and one id has one text in the case; a closure
    names an id of the form C<n> or, for a condition written without one, R<n>/S<n>
    (the n-th [[review]] table, the n-th signed block: docs/signatures.md)."""
    texts: dict[str, str] = {}
    for index, rv in enumerate(top.get("review") or (), start=1):
        conditions = rv.get("conditions") if isinstance(rv, dict) else None
        if not isinstance(conditions, tuple):
            continue
        for number, (cid, text) in enumerate(conditions, start=1):
            key = f"review[{index}].conditions[{number}].id"
            if not isinstance(cid, str) or not isinstance(text, str):
                continue
            if not _CONDITION_ID.fullmatch(cid):
                v.problem(key, f"expected a condition id C followed by a number, like \"C1\"; "
                               f"got {_show(cid)}")
            elif texts.setdefault(cid, text) != text:
                v.problem(key, f"condition {cid} is given another text elsewhere in the case; "
                               "one id stands for one condition: give this one a new id")
    for index, closure in enumerate(top.get("closure") or (), start=1):
        cid = closure.get("condition") if isinstance(closure, dict) else None
        if isinstance(cid, str) and not re.fullmatch(r"[CRS][1-9][0-9]{0,3}", cid):
            v.problem(f"closure[{index}].condition",
                      f"expected the id of a condition, like \"C1\"; got {_show(cid)}")


#: The key of :func:`validate_header`'s result that holds the uncertainties written with
#: ± (key path -> half-width of the 95 % interval, SI); not a key of the case file.
STATED_UNCERTAINTY = "stated uncertainty"


def _variant_checks(v: _Validator, top: dict[str, Any]) -> None:
    """Each [[variant]] changes something, has its own name, and overrides tables the case
    has (a [vessel] or [decomposition] of optional keys it may add)."""
    variants = top.get("variant")
    if not isinstance(variants, list):
        return
    names: dict[str, int] = {}
    for index, var in enumerate(variants, start=1):
        key = f"variant[{index}]"
        tables = [t for t in ("charge", "vessel", "decomposition", "measured")
                  if isinstance(var.get(t), dict)]
        changed = [n for t in tables for n, val in var[t].items() if val is not None]
        if isinstance(var.get("charge"), dict) and var["charge"].get("basis") is not None:
            v.problem(f"{key}.charge.basis", "a variant cannot change the basis: the "
                                             "conversions and the reaction's figures refer "
                                             "to it; make a separate case for another basis")
        own_problems = any(p.key and p.key.startswith(key + ".") for p in v.problems)
        if not changed and not own_problems:
            v.problem(key, "a variant changes at least one input; add a line like: "
                           "charge.feed_time = \"2 h\"")
        for t in ("charge", "measured"):
            if t in tables and top.get(t) is None:
                v.problem(f"{key}.{t}", f"the variant changes [{t}], but the case has no "
                                        f"[{t}] table to change; add [{t}] to the case first")
        name = var.get("name")
        if isinstance(name, str):
            if name in names:
                v.problem(f"{key}.name", f"the same name as variant[{names[name]}]; each "
                                         "[[variant]] needs its own name")
            names.setdefault(name, index)


def _measured_uncertainty(v: _Validator, top: dict[str, Any]) -> None:
    """The measured enthalpy's uncertainty is given once: with ± or as ``uncertainty``."""
    for prefix, table in [("", top.get("measured"))] + [
            (f"variant[{i}].", var.get("measured"))
            for i, var in enumerate(top.get("variant") or [], start=1)
            if isinstance(var, dict)]:
        if isinstance(table, dict) and table.get("uncertainty") is not None \
                and f"{prefix}measured.reaction_enthalpy" in v.uncertainties:
            v.problem(f"{prefix}measured.uncertainty",
                      "the reaction enthalpy already carries an uncertainty (±); give it "
                      "once: remove this line or the ± part")


def check_header(raw: dict[str, Any], lines: dict[str, int],
                 filename: str) -> tuple[dict[str, Any], tuple[Problem, ...]]:
    """The header's values converted per :data:`SCHEMA`, and every problem found, sorted
    by line; a value with a problem is :data:`INVALID` (absent optional keys are None).

    For checks that go on past a bad value (``dossier check`` runs the reaction's checks
    on what is valid); the loader uses :func:`validate_header`.
    """
    validator = _Validator(filename, lines, default_line=1)
    top = validator.table(raw, SCHEMA, "")
    _cross_checks(validator, top)
    _variant_checks(validator, top)
    _measured_uncertainty(validator, top)
    top[STATED_UNCERTAINTY] = dict(validator.uncertainties)
    return top, tuple(sorted(validator.problems, key=lambda p: p.line or 0))


def validate_header(raw: dict[str, Any], lines: dict[str, int],
                    filename: str) -> dict[str, Any]:
    """The header's values converted per :data:`SCHEMA` (absent optional keys are None).

    ``lines`` maps key paths to file lines; ``filename`` names the file in
    messages.  Raises :class:`CaseError` carrying every problem, sorted by line.
    """
    top, problems = check_header(raw, lines, filename)
    if problems:
        raise CaseError(problems)
    return top


__all__ = ["MAX_WINDOW_K", "STATED_UNCERTAINTY", "INVALID", "check_header",
           "validate_header"]
