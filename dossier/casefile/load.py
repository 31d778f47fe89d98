"""Reading case files: the one reader, then split, parse TOML, locate, validate, build.

A case file is UTF-8 text: a line ``+++``, a TOML header, a line ``+++``,
then the Markdown narrative, kept exactly as written (the format is
described in the case-format design document).

:func:`read_source` is the only function that opens a case file: it reads
the bytes once into a :class:`CaseSource`, which the build's cache key, the
loader, the integrity digest and the revision history all use.  Reading the
case from those bytes goes in four steps:

1. **split** the text at the first two lines that are ``+++`` (trailing
   blanks allowed; a ``+++`` line inside a multi-line TOML string would end
   the header, so do not write one there);
2. **parse** the header with :mod:`tomllib`; a syntax error becomes a
   :class:`~dossier.errors.Problem` on the right line of the *file*;
3. **locate** every key (:func:`~dossier.casefile.locate.locate_keys`);
4. **validate** against the schema
   (:func:`~dossier.casefile.validate.validate_header`), then build the
   :class:`~dossier.model.case.Case`.

Pressures are absolute (see :mod:`dossier.casefile.units`).
"""
from __future__ import annotations

import errno
import os
import re
import stat
import sys
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import Any

from dossier.casefile.locate import locate_keys
from dossier.casefile.schema import DELIMITER
from dossier.casefile.validate import INVALID, STATED_UNCERTAINTY, check_header, validate_header
from dossier.casefile.variants import variant_headers
from dossier.chem.formula import is_formula
from dossier.errors import CaseError, Problem
from dossier.constants import P_STANDARD, T_REF
from dossier.model.case import (ActivityModel, Case, Charge, Decomposition, LocalSpecies,
                                Variant,
                                Measured, Phase, Review, Status, Verdict, Vessel)

#: Largest case file accepted, in bytes.
MAX_FILE_BYTES = 5 * 1024 * 1024
#: Most parts in one dotted key (``a.b.c`` has three).  The schema's deepest key
#: has three; the TOML parser's work grows with the square of a key's parts
#: (20,000 parts took 3.6 s and 1.5 GB), so longer keys are refused before parsing.
MAX_KEY_PARTS = 32

_BOM = "\ufeff"

# --------------------------------------------------------------------------
# The one reader
# --------------------------------------------------------------------------


@dataclass(frozen=True)
class CaseSource:
    """A case file's bytes, read once, with the path they came from."""

    path: Path
    data: bytes          # the file's bytes, read once
    name: str = field(default="", compare=False)  # the path as given, for messages

    def __post_init__(self) -> None:
        if not self.name:
            object.__setattr__(self, "name", str(self.path))


def _cannot_read(filename: str, err: OSError) -> CaseError:
    return CaseError(Problem(f"cannot read the case file: {err.strerror or err}", filename))


def _too_large(filename: str) -> CaseError:
    return CaseError(Problem(f"the file is larger than {MAX_FILE_BYTES // 2**20} MB; "
                             "a case file is a few kilobytes", filename))


def _read_up_to(fd: int, limit: int) -> bytes:
    chunks, size = [], 0
    while size < limit:
        chunk = os.read(fd, limit - size)
        if not chunk:
            break
        chunks.append(chunk)
        size += len(chunk)
    return b"".join(chunks)


_KINDS = {stat.S_IFIFO: "a named pipe (FIFO)", stat.S_IFSOCK: "a socket",
          stat.S_IFCHR: "a character device", stat.S_IFBLK: "a block device",
          stat.S_IFDIR: "a folder"}


def not_regular(mode: int) -> str | None:
    """Why a file of this ``st_mode`` is not read ("it is a named pipe (FIFO), not a
    regular file"); None for a regular file."""
    kind = stat.S_IFMT(mode)
    if kind == stat.S_IFREG:
        return None
    return f"it is {_KINDS.get(kind, 'a special file')}, not a regular file"


def outside_link(path: Path) -> Path | None:
    """Where ``path`` leads when it is a symbolic link (or passes through one) to a
    place outside the folder that holds it; None otherwise."""
    real = path.resolve()
    return None if real.is_relative_to(path.parent.resolve()) else real


def read_source(path: str | Path) -> CaseSource:
    """Read the case file at ``path`` once; the only function that opens a case file.

    The path is shown in messages as given.  Raises :class:`CaseError` for a
    file that cannot be read, is not a regular file (a folder, a pipe, a
    device), is a symbolic link out of its folder, or is larger than
    :data:`MAX_FILE_BYTES`.
    """
    filename = str(path)
    real = outside_link(Path(path))
    if real is not None:
        raise CaseError(Problem(
            f"the case file is a symbolic link to {real}, outside its folder "
            f"{Path(path).parent.resolve()}; copy the file into the folder instead", filename))
    try:
        # non-blocking, so that a named pipe is refused rather than waited on
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as err:
        raise _cannot_read(filename, err) from None
    try:
        kind = stat.S_IFMT(os.fstat(fd).st_mode)
        if kind == stat.S_IFDIR:
            raise IsADirectoryError(errno.EISDIR, os.strerror(errno.EISDIR))
        if kind != stat.S_IFREG:
            raise CaseError(Problem("cannot read the case file: "
                                    + not_regular(os.fstat(fd).st_mode), filename))
        data = _read_up_to(fd, MAX_FILE_BYTES + 1)
    except OSError as err:
        raise _cannot_read(filename, err) from None
    finally:
        os.close(fd)
    if len(data) > MAX_FILE_BYTES:
        raise _too_large(filename)
    return CaseSource(Path(path), data, filename)


def _text_of(source: CaseSource) -> str:
    """The source's text; refused when too large or not UTF-8 (naming the byte and line)."""
    data = source.data
    if len(data) > MAX_FILE_BYTES:
        raise _too_large(source.name)
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as err:
        line = data[:err.start].count(b"\n") + 1
        raise CaseError(Problem(f"the file is not valid UTF-8: byte {err.start} "
                                f"(0x{data[err.start]:02x}) cannot be decoded; save the "
                                "file as UTF-8", source.name, line)) from None


def parse_source(source: CaseSource) -> Case:
    """The validated case in ``source`` (see :func:`parse_case_text`)."""
    return parse_case_text(_text_of(source), source.name)


def header_of(source: CaseSource) -> dict[str, Any]:
    """The header's values in ``source``, unvalidated (see :func:`read_header`)."""
    return read_header(_text_of(source), source.name)


def load_case(path: str | Path) -> Case:
    """Read and validate the case file at ``path``.

    The path is shown in messages as given.  Raises :class:`CaseError` for a
    file that cannot be read, is too large, is not UTF-8 or is invalid.
    """
    return parse_source(read_source(path))


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


# a key (bare, "basic" or 'literal' parts) of more than MAX_KEY_PARTS parts, where
# a key can start: a line's start, after '[' (tables) or after '{' or ',' (inline
# tables); possessive quantifiers keep the search linear in the header's length
_KEY_PART = r"""(?:[A-Za-z0-9_-]++|"(?:[^"\\\n]|\\.)*+"|'[^'\n]*+')"""
_DEEP_KEY_RE = re.compile(
    r"(?:^|(?<=[\[{,]))[ \t]*+(?:" + _KEY_PART + r"[ \t]*+\.[ \t]*+)"
    + "{" + str(MAX_KEY_PARTS) + ",}+" + _KEY_PART + r"[ \t]*+[=\]]", re.MULTILINE)
_LONG_DIGITS_RE = re.compile(r"\d[\d_]*+")


def _refuse_costly_header(parts: _Parts, filename: str) -> None:
    """Refuse, before parsing, a dotted key too long to parse in bounded work."""
    deep = _DEEP_KEY_RE.search(parts.header)
    if deep:
        line = parts.header_line + parts.header.count("\n", 0, deep.start())
        raise CaseError(Problem(
            f"a dotted key here has more than {MAX_KEY_PARTS} parts; the keys of a case "
            "file have at most three (like decomposition.rate.temperature)", filename, line))


def _too_many_digits(parts: _Parts, filename: str) -> CaseError:
    """The problem for a whole number longer than Python converts (its ValueError)."""
    limit = sys.get_int_max_str_digits()
    line = parts.header_line
    for run in _LONG_DIGITS_RE.finditer(parts.header):
        if len(run.group().replace("_", "")) > limit:
            line += parts.header.count("\n", 0, run.start())
            break
    return CaseError(Problem(f"a number here has more than {limit:,} digits; write "
                             "the value it stands for with fewer digits", filename, line))


def _parse_toml(parts: _Parts, filename: str) -> dict[str, Any]:
    _refuse_costly_header(parts, filename)
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
    except ValueError:  # a whole number longer than Python's conversion limit
        raise _too_many_digits(parts, filename) from None


# --------------------------------------------------------------------------
# Building the Case
# --------------------------------------------------------------------------


def _build(top: dict[str, Any], parts: _Parts, filename: str,
           lines: dict[str, int], raw: dict[str, Any] | None = None) -> Case:
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
    stated = dict(top.get(STATED_UNCERTAINTY) or {})
    if top["measured"] is not None and top["measured"].get("uncertainty") is not None:
        stated["measured.reaction_enthalpy"] = top["measured"]["uncertainty"]
    variants = tuple(
        Variant(v.name, v.note, v.changes,
                _build({**v.top, STATED_UNCERTAINTY: v.uncertainty}, parts, filename, lines))
        for v in variant_headers(top, raw or {}, stated))
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
        pressure=P_STANDARD if top["pressure"] is None else top["pressure"],
        inerts=top["inerts"] or (),
        activity_model=ActivityModel((top["equilibrium"] or {}).get("activity_model")
                                     or ActivityModel.IDEAL),
        charge=charge,
        vessel=opt(top["vessel"], Vessel),
        decomposition=decomposition,
        measured=opt(top["measured"], Measured),
        species=tuple(species),
        reviews=tuple(reviews),
        uncertainty=tuple(sorted((k, u) for k, u in stated.items()
                                 if not k.startswith("variant["))),
        variants=variants,
        not_applicable=tuple((k, v) for k, v in (top.get("not_applicable") or {}).items()
                             if v is not None),
        narrative=parts.narrative,
        narrative_line=parts.narrative_line,
        format_version=top["format"] or 1,
        header_lines=MappingProxyType(dict(lines)),
    )


# --------------------------------------------------------------------------
# Text-level entry points
# --------------------------------------------------------------------------


def read_header(text: str, filename: str) -> dict[str, Any]:
    """The header's values as TOML gives them, unvalidated (e.g. "5 bar").

    For showing people what changed between two revisions of a case; the
    validated case comes from :func:`parse_case_text`.
    """
    if text.startswith(_BOM):
        text = text[1:]
    return _parse_toml(_split(text, filename), filename)


def parse_case_text(text: str, filename: str) -> Case:
    """Parse the text of a case file; ``filename`` names it in messages.

    The case id is the file name's stem.  Raises :class:`CaseError` carrying
    every problem found, sorted by line.
    """
    if len(text) > MAX_FILE_BYTES or \
            len(text.encode("utf-8", "surrogatepass")) > MAX_FILE_BYTES:
        raise _too_large(filename)
    parts, raw, lines = _header_of_text(text, filename)
    top = validate_header(raw, lines, filename)
    return _build(top, parts, filename, lines, raw)


def _header_of_text(text: str, filename: str) -> tuple[_Parts, dict[str, Any], dict[str, int]]:
    """The text's parts, its header's TOML values and the line of each key."""
    if text.startswith(_BOM):
        text = text[1:]
    parts = _split(text, filename)
    raw = _parse_toml(parts, filename)
    return parts, raw, locate_keys(parts.header, parts.header_line)


# --------------------------------------------------------------------------
# Checking: every problem of the header, and what the reaction's checks can read
# --------------------------------------------------------------------------

#: The window a case whose own window is invalid is given for the reaction's checks
#: (K): it bounds only the range of a [[species]] table's constant-Cp record, which
#: those checks never evaluate.
_CHECK_WINDOW = (T_REF, T_REF + 100.0)


@dataclass(frozen=True)
class CaseCheck:
    """What ``dossier check`` learns from a case file's header.

    ``problems`` are the header's (schema, units, cross-checks), sorted by line;
    ``case`` is the case when there are none.  When there are some but the reaction
    is valid text, ``reaction_case`` holds what the reaction's checks read (the
    reaction, the valid inerts and window, the [[species]] tables whose name,
    formula and phase are valid and whose formula reads) so that an unbalanced reaction or an unknown species
    is reported with the rest.  A [[species]] table with an invalid value there is
    kept for its identity only, with zero data (``source`` says so): the reaction's
    checks use its name, formula and phase, never its values.  The names of tables
    too damaged to keep are in ``unreadable_species``; a term they would answer is
    not reported as unknown.
    """

    problems: tuple[Problem, ...]
    case: Case | None = None
    reaction_case: Case | None = None
    unreadable_species: tuple[str, ...] = ()


#: The ``source`` of a [[species]] table kept for the reaction's checks only.
UNCHECKED_SOURCE = "not read: the table has invalid values"


def check_source(source: CaseSource) -> CaseCheck:
    """Every problem of the header of ``source``, and the case or what the reaction's
    checks can read (see :class:`CaseCheck`).

    Raises :class:`CaseError` only when the header cannot be read at all (too large,
    not UTF-8, no header, a TOML syntax error): nothing after that can be checked.
    """
    parts, raw, lines = _header_of_text(_text_of(source), source.name)
    top, problems = check_header(raw, lines, source.name)
    if not problems:
        return CaseCheck((), _build(top, parts, source.name, lines, raw))
    if not isinstance(top.get("reaction"), str):
        return CaseCheck(problems)
    species, unreadable = [], []
    for sp in top.get("species") or []:
        if isinstance(sp, dict) and all(isinstance(sp.get(k), str)
                                        for k in ("name", "formula", "phase")) \
                and is_formula(sp["formula"]):
            species.append(_checked_species(sp))
        elif isinstance(sp, dict) and isinstance(sp.get("name"), str):
            unreadable.append(sp["name"])
    valid = {k: v for k, v in top.items() if v is not INVALID}
    path = Path(source.name)
    case = Case(id=path.stem, path=path, title=valid.get("title") or path.stem, revision=1,
                status=Status.DRAFT, reaction=top["reaction"],
                window=valid.get("temperature") or _CHECK_WINDOW,
                pressure=valid.get("pressure") or P_STANDARD, inerts=valid.get("inerts") or (),
                species=tuple(species), header_lines=MappingProxyType(dict(lines)))
    return CaseCheck(problems, None, case, tuple(unreadable))


def _checked_species(sp: dict[str, Any]) -> LocalSpecies:
    """A [[species]] table for the reaction's checks: as written when every value is
    valid, else its identity only (see :class:`CaseCheck`)."""
    if all(v is not INVALID for v in sp.values()):
        s = dict(sp)
        unc = s.pop("uncertainty") or {}
        return LocalSpecies(phase=Phase(s.pop("phase")),
                            uncertainty=tuple((k, v) for k, v in unc.items() if v is not None),
                            **s)
    return LocalSpecies(name=sp["name"], formula=sp["formula"], phase=Phase(sp["phase"]),
                        hf=0.0, s=0.0, cp=0.0, source=UNCHECKED_SOURCE)


def signed_content(source: CaseSource) -> dict[str, Any]:
    """What a signature on this case covers: the header's values exactly as the loader
    reads them, without the verdicts recorded in ``[[review]]`` tables, and the
    narrative with its line endings as ``\n``.

    So a byte-order mark, CRLF or CR line endings, comments, blank lines, the order
    of keys and tables, and recorded verdicts do not change it; any change to a value
    the assessment reads, or to the narrative, does (see docs/signatures.md).
    """
    text = _text_of(source)
    if text.startswith(_BOM):
        text = text[1:]
    parts = _split(text, source.name)
    header = _parse_toml(parts, source.name)
    header.pop("review", None)
    narrative = parts.narrative.replace("\r\n", "\n").replace("\r", "\n")
    return {"header": header, "narrative": narrative}


__all__ = ["CaseCheck", "check_source", "UNCHECKED_SOURCE", "MAX_FILE_BYTES", "MAX_KEY_PARTS", "not_regular", "outside_link", "CaseSource", "read_source", "parse_source", "header_of",
           "load_case", "read_header", "parse_case_text", "signed_content"]
