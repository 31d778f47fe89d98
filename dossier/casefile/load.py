"""Reading case files: split, parse TOML, locate keys, validate, build a Case.

A case file is UTF-8 text: a line ``+++``, a TOML header, a line ``+++``,
then the Markdown narrative, kept exactly as written (the format is
described in the case-format design document).  Reading goes in four steps:

1. **split** the text at the first two lines that are ``+++`` (trailing
   blanks allowed; a ``+++`` line inside a multi-line TOML string would end
   the header, so do not write one there);
2. **parse** the header with :mod:`tomllib`; a syntax error becomes a
   :class:`~dossier.errors.Problem` on the right line of the *file*;
3. **locate** every key: :func:`locate_keys` maps key paths such as
   ``"charge.cp"``, ``"species[2].hf"`` or ``"inerts.N2(g)"`` to file lines
   (array entries are counted from 1);
4. **validate** against :data:`SCHEMA`, a declarative table of field specs.
   Every problem is collected; one :class:`~dossier.errors.CaseError` with
   all of them, sorted by line, is raised at the end.  Unknown keys are
   errors with a "did you mean" hint, so a typo never drops a safety input.

Pressures are absolute (see :mod:`dossier.casefile.units`).
"""
from __future__ import annotations

import datetime
import difflib
import re
import tomllib
from dataclasses import dataclass
from pathlib import Path
from types import MappingProxyType
from typing import Any, Callable

from dossier.model.case import (STANDARD_PRESSURE, Case, Charge, Decomposition, LocalSpecies,
                   Measured, Phase, Review, Status, Verdict, Vessel, nearest_line)
from dossier.errors import CaseError, FormulaError, Problem, UnitError
from dossier.chem.formula import parse_formula
from dossier.casefile.units import DIMENSIONS, parse_mass_or_amount, parse_quantity

#: Case-file format versions this code reads.
SUPPORTED_FORMATS = (1,)

#: Largest case file accepted, in bytes.
MAX_FILE_BYTES = 5 * 1024 * 1024

DELIMITER = "+++"

# --------------------------------------------------------------------------
# The schema
# --------------------------------------------------------------------------


@dataclass(frozen=True)
class FieldSpec:
    """One key of a table in the case header.

    ``kind`` is one of: ``text`` (non-empty string), ``whole`` (positive
    integer), ``format`` (the format version), ``date`` (a TOML date),
    ``choice`` (one of ``choices``), ``quantity`` (text with a unit of
    ``dimension``), ``mass_or_amount``, ``temperature_pair`` (two
    temperatures, low < high), ``quantity_map`` (a table of labels, each a
    quantity of ``dimension``), ``table`` (a sub-table per ``table``),
    ``tables`` (an array of tables per ``table``).
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
       sign: str = "any", help: str = "") -> FieldSpec:
    return FieldSpec(name, "quantity", required=required, dimension=dimension,
                     sign=sign, example=f'"{example}"', help=help)


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
    _q("hf", "energy_per_amount", "-310 kJ/mol", required=True),
    _q("s", "molar_entropy", "250 J/(mol*K)", required=True),
    _q("cp", "molar_heat_capacity", "290 J/(mol*K)", required=True, sign="positive"),
    FieldSpec("source", "text", required=True,
              example='"estimate by group additivity"'),
    FieldSpec("uncertainty", "table", table=SPECIES_UNCERTAINTY,
              example='{ hf = "15 kJ/mol" }'),
    FieldSpec("smiles", "text", example='"CC(=O)Nc1ccccc1"'),
    FieldSpec("t_range", "temperature_pair", example='["250 K", "400 K"]'),
))

REVIEW = TableSpec("[[review]]", (
    FieldSpec("name", "text", required=True, example='"R. Example"'),
    FieldSpec("role", "text", required=True, example='"process safety"'),
    FieldSpec("date", "date", required=True, example="2026-11-20"),
    FieldSpec("verdict", "choice", required=True,
              choices=tuple(v.value for v in Verdict),
              example='"accepted-with-conditions"'),
    FieldSpec("conditions", "text", example='"Feed interlocked on cooling water flow."'),
    FieldSpec("digest", "text", example='"..."'),
))

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
    FieldSpec("charge", "table", table=CHARGE, example="[charge]"),
    FieldSpec("vessel", "table", table=VESSEL, example="[vessel]"),
    FieldSpec("decomposition", "table", table=DECOMPOSITION, example="[decomposition]"),
    FieldSpec("measured", "table", table=MEASURED, example="[measured]"),
    FieldSpec("species", "tables", table=SPECIES, example="[[species]]"),
    FieldSpec("review", "tables", table=REVIEW, example="[[review]]"),
))

_LABEL_RE = re.compile(r"^\S.*\((?:g|l|s|cr|aq)\)$")

# --------------------------------------------------------------------------
# Splitting
# --------------------------------------------------------------------------


@dataclass(frozen=True)
class _Parts:
    header: str
    header_line: int       # file line of the header's first line
    closing_line: int      # file line of the closing +++
    narrative: str
    narrative_line: int


def _split(text: str, filename: str) -> _Parts:
    lines = text.split("\n")
    first = lines[0].rstrip()
    if text.strip() == "":
        raise CaseError(Problem(f"the file is empty; a case starts with a line "
                                f"'{DELIMITER}', then the TOML header", filename, 1))
    if first != DELIMITER:
        hint = ""
        if first == "---":
            hint = (" (this looks like YAML front matter: case files use a TOML "
                    f"header between two lines '{DELIMITER}')")
        raise CaseError(Problem(
            f"the first line must be '{DELIMITER}', which opens the TOML header; "
            f"got {first[:40]!r}{hint}", filename, 1))
    for index in range(1, len(lines)):
        if lines[index].rstrip() == DELIMITER:
            return _Parts(
                # the trailing newline ends a CRLF header's last line properly
                header="\n".join(lines[1:index]) + "\n",
                header_line=2,
                closing_line=index + 1,
                narrative="\n".join(lines[index + 1:]),
                narrative_line=index + 2,
            )
    raise CaseError(Problem(
        f"the header opened on line 1 is never closed: add a line '{DELIMITER}' "
        "after the last header key", filename, 1))


# --------------------------------------------------------------------------
# TOML parsing
# --------------------------------------------------------------------------

_TOML_AT_RE = re.compile(r"\s*\(at line (\d+), column (\d+)\)\s*$")
_TOML_END_RE = re.compile(r"\s*\(at end of document\)\s*$")
_UNQUOTED_QUANTITY_RE = re.compile(
    r"^\s*[\w.\"'-]+\s*=\s*[-+]?(?:\d|\.\d)[\d.eE+-]*\s*[A-Za-z%°µ]")
_DATE_LIKE_RE = re.compile(r"=\s*\d{4}-\d{1,2}-\d{1,2}")


def _parse_toml(parts: _Parts, filename: str) -> dict[str, Any]:
    try:
        return tomllib.loads(parts.header)
    except tomllib.TOMLDecodeError as err:
        message = str(err)
        line = parts.closing_line
        column = None
        at = _TOML_AT_RE.search(message)
        if at:
            line = int(at.group(1)) + parts.header_line - 1
            column = int(at.group(2))
            message = message[:at.start()]
        elif _TOML_END_RE.search(message):
            message = _TOML_END_RE.sub("", message) + " (the header ends here)"
        header_lines = parts.header.split("\n")
        source = header_lines[line - parts.header_line] \
            if 0 <= line - parts.header_line < len(header_lines) else ""
        where = f" at column {column}" if column else ""
        hint = ""
        if _UNQUOTED_QUANTITY_RE.match(source):
            hint = ('; quantities are text in quotes, like pressure = "5 bar"')
        elif _DATE_LIKE_RE.search(source):
            hint = "; write a valid date as YYYY-MM-DD without quotes, like 2026-11-20"
        raise CaseError(Problem(f"TOML syntax error{where}: {message}{hint}",
                                filename, line)) from None
    except RecursionError:
        raise CaseError(Problem("the header nests arrays or tables too deeply",
                                filename, parts.header_line)) from None


# --------------------------------------------------------------------------
# Locating keys
# --------------------------------------------------------------------------

_BARE_KEY_RE = re.compile(r"[A-Za-z0-9_-]+")
_SCALAR_RE = re.compile(r"[^,\]}\r\n#]*")


class _Scanner:
    """Walks TOML text that tomllib has accepted, noting the line of each key."""

    def __init__(self, text: str, first_line: int):
        self.text = text
        self.pos = 0
        self.line = first_line
        self.lines: dict[str, int] = {}
        self.array_counts: dict[str, int] = {}

    # -- characters ---------------------------------------------------------
    def peek(self, n: int = 1) -> str:
        return self.text[self.pos:self.pos + n]

    def advance(self, n: int = 1) -> None:
        chunk = self.text[self.pos:self.pos + n]
        self.line += chunk.count("\n")
        self.pos += len(chunk)

    def skip_blank(self, newlines: bool) -> None:
        while self.pos < len(self.text):
            c = self.text[self.pos]
            if c in " \t" or (newlines and c in "\r\n"):
                self.advance()
            elif c == "#":
                end = self.text.find("\n", self.pos)
                self.advance((end if end >= 0 else len(self.text)) - self.pos)
            else:
                break

    # -- pieces ---------------------------------------------------------------
    def string_end(self) -> int:
        """Index just past the string starting at pos (IndexError if unclosed)."""
        t, p = self.text, self.pos
        for quote in ('"""', "'''"):
            if t.startswith(quote, p):
                i = p + 3
                while True:
                    if quote == '"""' and t[i] == "\\":
                        i += 2
                    elif t.startswith(quote, i):
                        j, extra = i + 3, 0  # up to two quotes may end the content
                        while extra < 2 and j < len(t) and t[j] == quote[0]:
                            j, extra = j + 1, extra + 1
                        return j
                    else:
                        i += 1
        q = t[p]
        i = p + 1
        while t[i] != q:
            i += 2 if (q == '"' and t[i] == "\\") else 1
        return i + 1

    def progress(self, before: int) -> None:
        if self.pos == before:
            raise ValueError("the scanner is stuck")

    def read_key(self) -> list[str]:
        parts = []
        while True:
            self.skip_blank(newlines=False)
            c = self.peek()
            if c in "\"'":
                end = self.string_end()
                raw = self.text[self.pos:end]
                parts.append(tomllib.loads(f"k = {raw}")["k"])
                self.advance(end - self.pos)
            else:
                m = _BARE_KEY_RE.match(self.text, self.pos)
                if not m:
                    raise ValueError("no key")
                parts.append(m.group(0))
                self.advance(m.end() - self.pos)
            self.skip_blank(newlines=False)
            if self.peek() == ".":
                self.advance()
                continue
            return parts

    def note(self, path: str, line: int) -> None:
        self.lines.setdefault(path, line)

    def note_key(self, prefix: str, parts: list[str], line: int) -> str:
        path = prefix
        for part in parts:
            path = f"{path}.{part}" if path else part
            self.note(path, line)
        return path

    def value(self, path: str) -> None:
        self.skip_blank(newlines=False)
        c = self.peek()
        if c in "\"'":
            self.advance(self.string_end() - self.pos)
        elif c == "[":
            self.advance()
            index = 0
            while True:
                before = self.pos
                self.skip_blank(newlines=True)
                if self.peek() == "]":
                    self.advance()
                    return
                index += 1
                self.note(f"{path}[{index}]", self.line)
                self.value(f"{path}[{index}]")
                self.skip_blank(newlines=True)
                if self.peek() == ",":
                    self.advance()
                self.progress(before)
        elif c == "{":
            self.advance()
            while True:
                before = self.pos
                self.skip_blank(newlines=True)
                if self.peek() == "}":
                    self.advance()
                    return
                line = self.line
                sub = self.note_key(path, self.read_key(), line)
                self.skip_blank(newlines=False)
                self.advance()  # "="
                self.value(sub)
                self.skip_blank(newlines=True)
                if self.peek() == ",":
                    self.advance()
                self.progress(before)
        else:
            m = _SCALAR_RE.match(self.text, self.pos)
            if m.end() == self.pos:
                raise ValueError("no value")
            self.advance(m.end() - self.pos)

    def table_path(self, parts: list[str], line: int) -> str:
        path = ""
        for part in parts:
            path = f"{path}.{part}" if path else part
            self.note(path, line)
            if path in self.array_counts:
                path = f"{path}[{self.array_counts[path]}]"
        return path

    def run(self) -> dict[str, int]:
        prefix = ""
        while True:
            before = self.pos
            self.skip_blank(newlines=True)
            if self.pos >= len(self.text):
                return self.lines
            line = self.line
            if self.peek(2) == "[[":
                self.advance(2)
                parts = self.read_key()
                self.advance(2)
                base = self.table_path(parts[:-1], line)
                name = f"{base}.{parts[-1]}" if base else parts[-1]
                self.array_counts[name] = self.array_counts.get(name, 0) + 1
                self.note(name, line)
                prefix = f"{name}[{self.array_counts[name]}]"
                self.note(prefix, line)
            elif self.peek() == "[":
                self.advance()
                parts = self.read_key()
                self.advance()
                prefix = self.table_path(parts, line)
                self.note(prefix, line)
            else:
                path = self.note_key(prefix, self.read_key(), line)
                self.skip_blank(newlines=False)
                self.advance()  # "="
                self.value(path)
            self.progress(before)


def locate_keys(header: str, first_line: int = 1) -> dict[str, int]:
    """Map key paths in a TOML header to line numbers.

    ``first_line`` is the file line of the header's first line.  Paths look
    like ``"pressure"``, ``"charge.cp"``, ``"species[2].hf"`` (arrays of
    tables and arrays counted from 1), ``"inerts.N2(g)"``,
    ``"decomposition.rate.power"`` and ``"temperature[2]"``.  The header is
    expected to be valid TOML; on anything unexpected the keys found so far
    are returned.
    """
    scanner = _Scanner(header, first_line)
    try:
        return scanner.run()
    except (ValueError, IndexError, RecursionError, tomllib.TOMLDecodeError):
        return scanner.lines


# --------------------------------------------------------------------------
# Validation
# --------------------------------------------------------------------------

_BAD = object()  # a value that failed validation; its problem is recorded


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


class _Validator:
    def __init__(self, filename: str, lines: dict[str, int], default_line: int):
        self.filename = filename
        self.lines = lines
        self.default_line = default_line
        self.problems: list[Problem] = []

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
                if fspec.required:
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
        if path and SCHEMA.field(name) is not None:
            hint = (f"; '{name}' is a top-level key: move it above the first "
                    "[table] line, or it belongs to the table above it")
        hint = hint or _did_you_mean(name, spec.names)
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
        try:
            si = parse_quantity(value, spec.dimension)
        except UnitError as err:
            for p in err.problems:
                self.problem(key, p.message)
            return _BAD
        return self._signed(si, spec, key, value)

    def read_mass_or_amount(self, value, spec, key):
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


def _ok(*values: Any) -> bool:
    return all(v is not _BAD for v in values)


def _cross_checks(v: _Validator, top: dict[str, Any]) -> None:
    """Checks that involve more than one key."""
    species = top.get("species")
    if isinstance(species, list):
        seen: dict[str, int] = {}
        for index, sp in enumerate(species, start=1):
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


# --------------------------------------------------------------------------
# Building the Case
# --------------------------------------------------------------------------


def _build(top: dict[str, Any], parts: _Parts, filename: str,
           lines: dict[str, int]) -> Case:
    def opt(table: dict | None, cls):
        return None if table is None else cls(**table)

    charge = None
    if top["charge"] is not None:
        c = dict(top["charge"])
        kind, amount = c.pop("amount")
        charge = Charge(amount_kind=kind, amount=amount, **c)
    decomposition = None
    if top["decomposition"] is not None:
        d = dict(top["decomposition"])
        rate = d.pop("rate") or {"temperature": None, "power": None}
        decomposition = Decomposition(rate_temperature=rate["temperature"],
                                      rate_power=rate["power"], **d)
    species = []
    for sp in top["species"] or []:
        s = dict(sp)
        unc = s.pop("uncertainty") or {}
        species.append(LocalSpecies(
            phase=Phase(s.pop("phase")),
            uncertainty=tuple((k, val) for k, val in unc.items() if val is not None),
            **s))
    reviews = []
    for rv in top["review"] or []:
        r = dict(rv)
        reviews.append(Review(verdict=Verdict(r.pop("verdict")),
                              conditions=r.pop("conditions") or "", **r))
    path = Path(filename)
    return Case(
        id=path.stem,
        path=path,
        title=top["title"],
        revision=top["revision"],
        status=Status(top["status"]),
        reaction=top["reaction"],
        window=top["temperature"],
        owner=top["owner"],
        gate=top["gate"],
        meeting=top["meeting"],
        pressure=STANDARD_PRESSURE if top["pressure"] is None else top["pressure"],
        inerts=top["inerts"] or (),
        charge=charge,
        vessel=opt(top["vessel"], Vessel),
        decomposition=decomposition,
        measured=opt(top["measured"], Measured),
        species=tuple(species),
        reviews=tuple(reviews),
        narrative=parts.narrative,
        narrative_line=parts.narrative_line,
        format_version=top["format"] or 1,
        header_lines=MappingProxyType(dict(lines)),
    )


# --------------------------------------------------------------------------
# Entry points
# --------------------------------------------------------------------------


def read_header(text: str, filename: str) -> dict[str, Any]:
    """The header's values as TOML gives them, unvalidated (e.g. "5 bar").

    For showing people what changed between two revisions of a case; the
    validated case comes from :func:`parse_case_text`.
    """
    return _parse_toml(_split(text, filename), filename)


def parse_case_text(text: str, filename: str) -> Case:
    """Parse the text of a case file; ``filename`` names it in messages.

    The case id is the file name's stem.  Raises :class:`CaseError` carrying
    every problem found, sorted by line.
    """
    if len(text) > MAX_FILE_BYTES or \
            len(text.encode("utf-8", "surrogatepass")) > MAX_FILE_BYTES:
        raise CaseError(Problem(f"the file is larger than {MAX_FILE_BYTES // 2**20} MB; "
                                "a case file is a few kilobytes", filename))
    if text.startswith("\ufeff"):
        text = text[1:]
    parts = _split(text, filename)
    raw = _parse_toml(parts, filename)
    lines = locate_keys(parts.header, parts.header_line)
    validator = _Validator(filename, lines, default_line=1)
    top = validator.table(raw, SCHEMA, "")
    _cross_checks(validator, top)
    if validator.problems:
        raise CaseError(sorted(validator.problems, key=lambda p: p.line or 0))
    return _build(top, parts, filename, lines)


def load_case(path: str | Path) -> Case:
    """Read and validate the case file at ``path``.

    The path is shown in messages as given.  Raises :class:`CaseError` for a
    file that cannot be read, is too large, is not UTF-8 or is invalid.
    """
    filename = str(path)
    try:
        with open(path, "rb") as handle:
            data = handle.read(MAX_FILE_BYTES + 1)
    except OSError as err:
        raise CaseError(Problem(f"cannot read the case file: {err.strerror or err}",
                                filename)) from None
    if len(data) > MAX_FILE_BYTES:
        raise CaseError(Problem(f"the file is larger than {MAX_FILE_BYTES // 2**20} MB; "
                                "a case file is a few kilobytes", filename))
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as err:
        line = data[:err.start].count(b"\n") + 1
        raise CaseError(Problem(f"the file is not valid UTF-8: byte {err.start} "
                                f"(0x{data[err.start]:02x}) cannot be decoded; save the "
                                "file as UTF-8", filename, line)) from None
    return parse_case_text(text, filename)
