"""Signed reviews: the per-case signature files, their formats and signing.

A reviewer's verdict on a revision of a case is recorded as a *signed
review*: a short block of ``name: value`` lines holding the case id, the
revision, the integrity digest (:mod:`dossier.review.digest`), who signed in
which role, when, the verdict and its conditions, the public key and an
Ed25519 signature over the other lines.  The blocks of one case are appended
to ``cases/<id>.signatures``; the keys (and the board's list of keys it
trusts, ``cases/trusted-keys.txt``) are :mod:`dossier.review.keys`.  Both
formats are documented in ``docs/signatures.md``.

Two block formats are read: ``dossier-review-1`` (the whole digest) and
``dossier-review-2`` (also the digest's parts, the versions and key figures
the signer saw, conditions with ids, withdrawals).  Checking blocks against
the case as it is now, and which verdict of a signer is current, is
:mod:`dossier.review.verdicts`.

The cryptography is the ``cryptography`` package's Ed25519 (RFC 8032); this
module only formats, parses and compares.  I/O is confined to the functions
named ``load_*``, ``append_*`` and :func:`sign_review`.
"""
from __future__ import annotations

import base64
import datetime
import difflib
import json
import os
import re
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Iterable, Mapping

from dossier.errors import Problem, SignatureError
from dossier.model.case import Verdict
from dossier.review.keys import (PUBLIC_KEY_BYTES, bad_char,
                                 decode_b64, decode_utf8, field_text_problem, load_private_key,
                                 public_key_text, show_text, write_all)

try:
    import fcntl  # POSIX: locks the signatures file while appending
except ImportError:  # pragma: no cover - not POSIX
    fcntl = None  # type: ignore[assignment]

#: Value of the ``format`` line that opens a signed review of the first format
#: (the whole digest only; conditions as one line of text).
SIGNATURE_FORMAT = "dossier-review-1"

#: The second format: the digest's parts, the versions and the key figures the
#: signer saw, conditions with ids, a note; a verdict may be ``withdrawn``.
SIGNATURE_FORMAT_2 = "dossier-review-2"

#: The fields of a signed review, in the order they are written.
FIELDS = ("format", "case", "revision", "digest", "signer", "role", "date",
          "verdict", "conditions", "key", "signature")

#: The fields of a ``dossier-review-2`` block, in the order they are written.
FIELDS_2 = ("format", "case", "revision", "digest", "content", "species", "settings",
            "versions", "figures", "signer", "role", "date", "verdict", "conditions", "note",
            "key", "signature")

FIELDS_BY_FORMAT = {SIGNATURE_FORMAT: FIELDS, SIGNATURE_FORMAT_2: FIELDS_2}

#: The fields covered by the signature (all but the signature itself).
SIGNED_FIELDS = FIELDS[:-1]

VERDICTS = tuple(v.value for v in Verdict)

#: What a signer records to take back their verdict (format 2 only).
WITHDRAWN = "withdrawn"
VERDICTS_2 = VERDICTS + (WITHDRAWN,)

SIGNATURES_SUFFIX = ".signatures"

SIGNATURE_BYTES = 64

_FIELD_RE = re.compile(r"([a-z]+):(?: (.*))?", re.DOTALL)
_REVISION_RE = re.compile(r"[1-9][0-9]{0,8}")
_DIGEST_RE = re.compile(r"[0-9a-f]{64}")
_DATE_RE = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}")
_CONDITION_ID_RE = re.compile(r"C[1-9][0-9]{0,3}")
_VERSIONS_RE = re.compile(r"[A-Za-z0-9_.+-]+ [^ ;]+(?:; [A-Za-z0-9_.+-]+ [^ ;]+)*")


@dataclass(frozen=True)
class ReviewParts:
    """The parts of a case's integrity record that a ``dossier-review-2`` block signs,
    so that a later check can say which part changed (see docs/signatures.md)."""

    content: str    # the case as the loader reads it (the manifest's "case")
    species: str    # SHA-256 of the canonical JSON of the manifest's species list
    settings: str   # SHA-256 of the method settings (board policy included), libraries left out
    versions: str   # "library <v>; dossier <v>[; <method library> <v> ...]"

    def version_pairs(self) -> tuple[tuple[str, str], ...]:
        return parse_versions(self.versions)


def parse_versions(text: str) -> tuple[tuple[str, str], ...]:
    """``"library 1; dossier 2"`` -> ``(("library", "1"), ("dossier", "2"))``."""
    return tuple(tuple(item.split(" ", 1)) for item in text.split("; ") if item)  # type: ignore[misc]


def conditions_text(conditions: Iterable[tuple[str, str]]) -> str:
    """The ``conditions`` value of a format-2 block: a JSON list of ``[id, text]``."""
    items = [[cid, text] for cid, text in conditions]
    return json.dumps(items, ensure_ascii=False, separators=(",", ":")) if items else ""


def figures_text(figures: Mapping[str, str]) -> str:
    """The ``figures`` value of a format-2 block: a JSON object, keys sorted."""
    return json.dumps(dict(figures), ensure_ascii=False, sort_keys=True, separators=(",", ":"))


@dataclass(frozen=True)
class SignedReview:
    """One signed verdict, as one block of a ``.signatures`` file."""

    case: str
    revision: int
    digest: str                 # integrity digest of the case, SHA-256 hex
    signer: str
    role: str
    date: datetime.date
    verdict: str                # one of VERDICTS
    conditions: str             # "" when there are none
    key: str                    # standard base64 of the signer's public key
    signature: str              # standard base64 of the Ed25519 signature
    format: str = SIGNATURE_FORMAT
    line: int = field(default=0, compare=False)  # first line of the block in its file
    # Format 2 only ("" in format 1):
    content: str = ""
    species: str = ""
    settings: str = ""
    versions: str = ""
    figures: str = ""           # JSON object of the key figures the signer saw
    note: str = ""              # the reason of a withdrawal or of a decline

    @property
    def fields(self) -> tuple[str, ...]:
        return FIELDS_BY_FORMAT.get(self.format, FIELDS)

    @property
    def parts(self) -> ReviewParts | None:
        """The signed parts of the integrity record (None in format 1)."""
        if self.format != SIGNATURE_FORMAT_2:
            return None
        return ReviewParts(self.content, self.species, self.settings, self.versions)

    @property
    def condition_list(self) -> tuple[tuple[str, str], ...]:
        """``(id, text)`` per condition; a format-1 condition has the id ``""``."""
        if not self.conditions:
            return ()
        if self.format != SIGNATURE_FORMAT_2:
            return (("", self.conditions),)
        return tuple((cid, text) for cid, text in json.loads(self.conditions))

    @property
    def figure_map(self) -> dict[str, str]:
        return dict(json.loads(self.figures)) if self.figures else {}

    def _values(self) -> dict[str, str]:
        return {
            "format": self.format, "case": self.case, "revision": str(self.revision),
            "digest": self.digest, "content": self.content, "species": self.species,
            "settings": self.settings, "versions": self.versions, "figures": self.figures,
            "signer": self.signer, "role": self.role,
            "date": self.date.isoformat(), "verdict": self.verdict,
            "conditions": self.conditions, "note": self.note, "key": self.key,
            "signature": self.signature,
        }

    def signed_bytes(self) -> bytes:
        """The message the signature covers: every line of the block but the last
        (the signature), UTF-8, each ending in LF."""
        values = self._values()
        return "".join(_field_line(name, values[name]) + "\n"
                       for name in self.fields[:-1]).encode("utf-8")

    def to_text(self) -> str:
        """The block as written in the ``.signatures`` file (without the separating empty line)."""
        return self.signed_bytes().decode("utf-8") + _field_line("signature", self.signature) + "\n"

    def to_dict(self) -> dict[str, object]:
        everything = self._values()
        values: dict[str, object] = {name: everything[name] for name in self.fields}
        values["revision"] = self.revision
        return values


# --------------------------------------------------------------------------
# Small pure helpers
# --------------------------------------------------------------------------


def _field_line(name: str, value: str) -> str:
    return f"{name}: {value}" if value else f"{name}:"


_MAY_BE_EMPTY = ("conditions", "note")


def _value_problem(name: str, value: str, fmt: str = SIGNATURE_FORMAT) -> str | None:
    """What is wrong with ``value`` for field ``name`` of a block in format ``fmt``, or None."""
    problem = field_text_problem(name, value)
    if problem:
        return problem
    if not value:
        return None if name in _MAY_BE_EMPTY else f"'{name}' is empty"
    if name == "format" and value not in FIELDS_BY_FORMAT:
        return (f"unknown format '{value}'; this version of dossier reads "
                f"'{SIGNATURE_FORMAT}' and '{SIGNATURE_FORMAT_2}'")
    if fmt == SIGNATURE_FORMAT_2:
        problem = _value_problem_2(name, value)
        if problem != "":
            return problem
    if name == "revision" and not _REVISION_RE.fullmatch(value):
        return f"revision {show_text(value)} is not a whole number of 1 or more"
    if name in ("digest", "content", "species", "settings") and not _DIGEST_RE.fullmatch(value):
        return (f"{name} {show_text(value)} is not 64 lowercase hexadecimal characters "
                "(SHA-256)")
    if name == "date":
        try:
            if not _DATE_RE.fullmatch(value):
                raise ValueError
            datetime.date.fromisoformat(value)
        except ValueError:
            return f"date {show_text(value)} is not a calendar date written YYYY-MM-DD"
    if name == "verdict" and value not in VERDICTS:
        return f"verdict {show_text(value)} is not one of {', '.join(VERDICTS)}"
    if name == "key":
        return decode_b64(value, PUBLIC_KEY_BYTES, "public key")[1]
    if name == "signature":
        return decode_b64(value, SIGNATURE_BYTES, "signature")[1]
    return None


def _value_problem_2(name: str, value: str) -> str | None:
    """The checks of format 2's own fields: None when fine, "" when not one of them."""
    if name == "versions":
        return None if _VERSIONS_RE.fullmatch(value) else (
            f"versions {show_text(value)} is not '<name> <version>' pairs separated by '; '")
    if name == "verdict":
        return None if value in VERDICTS_2 else (
            f"verdict {show_text(value)} is not one of {', '.join(VERDICTS_2)}")
    if name == "figures":
        try:
            figures = json.loads(value)
        except ValueError:
            figures = None
        ok = isinstance(figures, dict) and all(isinstance(v, str) for v in figures.values())
        return None if ok else f"figures {show_text(value)} is not a JSON object of texts"
    if name == "conditions":
        return _conditions_problem(value)
    return ""


def _conditions_problem(value: str) -> str | None:
    try:
        items = json.loads(value)
    except ValueError:
        items = None
    if not isinstance(items, list) or not all(
            isinstance(i, list) and len(i) == 2 and all(isinstance(x, str) for x in i)
            for i in items):
        return f"conditions {show_text(value)} is not a JSON list of [id, text] pairs"
    seen = set()
    for cid, text in items:
        if not _CONDITION_ID_RE.fullmatch(cid):
            return f"condition id {show_text(cid)} is not C followed by a number (C1, C2, ...)"
        if cid in seen:
            return f"condition id '{cid}' is given twice"
        seen.add(cid)
        problem = field_text_problem(f"condition {cid}", text)
        if problem or not text:
            return problem or f"condition {cid} has no text"
    return None


def _verdict_problem(verdict: str, conditions: str, note: str = "") -> str | None:
    if verdict == WITHDRAWN and conditions:
        return "a withdrawal has no conditions; give the reason as the note"
    if verdict == WITHDRAWN and not note:
        return "a withdrawal needs its reason (the note)"
    if verdict == "accepted-with-conditions" and not conditions:
        return "verdict 'accepted-with-conditions' needs the conditions"
    if verdict == "accepted" and conditions:
        return "verdict 'accepted' has conditions; use 'accepted-with-conditions'"
    return None


def verify_signature(public_key: bytes, signature: bytes, message: bytes) -> bool:
    """True when ``signature`` is a valid Ed25519 signature of ``message`` by ``public_key``."""
    from cryptography.exceptions import InvalidSignature
    from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PublicKey

    try:
        Ed25519PublicKey.from_public_bytes(public_key).verify(signature, message)
    except (InvalidSignature, ValueError):
        return False
    return True


def signatures_path(case_path: str | Path) -> Path:
    """``cases/<id>.signatures`` for the case file ``cases/<id>.md``."""
    path = Path(case_path)
    return path.with_name(path.stem + SIGNATURES_SUFFIX)


# --------------------------------------------------------------------------
# Signature files
# --------------------------------------------------------------------------


def parse_signatures(data: bytes, filename: str) -> tuple[SignedReview, ...]:
    """The signed reviews in a ``.signatures`` file's bytes; ``filename`` names it in messages."""
    text = decode_utf8(data, filename)
    if not text:
        return ()
    lines = text.split("\n")
    if lines[-1] != "":
        raise SignatureError(Problem("the file does not end with a line break; it may have "
                                     "been cut short while being written", filename, len(lines)))
    blocks: list[list[tuple[int, str]]] = [[]]
    for number, raw in enumerate(lines[:-1], 1):
        if raw == "":
            if blocks[-1]:
                blocks.append([])
        else:
            blocks[-1].append((number, raw))
    problems: list[Problem] = []
    reviews: list[SignedReview] = []
    for block in blocks:
        if block:
            review = _parse_block(block, filename, problems)
            if review is not None:
                reviews.append(review)
    if problems:
        raise SignatureError(sorted(problems, key=lambda p: p.line or 0))
    return tuple(reviews)


def _parse_block(block: list[tuple[int, str]], filename: str,
                 problems: list[Problem]) -> SignedReview | None:
    before = len(problems)
    fields: list[tuple[int, str, str]] = []
    for number, raw in block:
        bad = bad_char(raw)
        match = None if bad else _FIELD_RE.fullmatch(raw)
        if bad or match is None:
            problems.append(Problem(bad or f"expected 'name: value', got {show_text(raw)}",
                                    filename, number))
            continue
        name, value = match.group(1), match.group(2)
        if value == "":
            problems.append(Problem(f"the value of '{name}' starts or ends with a space",
                                    filename, number))
            continue
        fields.append((number, name, value or ""))
    if len(problems) > before:
        return None
    order = FIELDS
    if fields and fields[0][1] == "format" and fields[0][2] in FIELDS_BY_FORMAT:
        order = FIELDS_BY_FORMAT[fields[0][2]]
    hint = "the fields of a signed review are " + ", ".join(order) + ", in this order"

    for index, expected in enumerate(order):
        if index == len(fields):
            problems.append(Problem(f"field '{expected}' is missing after '{fields[-1][1]}'; "
                                    f"{hint}", filename, fields[-1][0]))
            return None
        number, name, _ = fields[index]
        if name != expected:
            if name in order:
                message = f"field '{name}' found where '{expected}' belongs; {hint}"
            else:
                close = difflib.get_close_matches(name, order, n=1)
                message = (f"unknown field '{name}'"
                           + (f"; did you mean '{close[0]}'?" if close else f"; {hint}"))
            problems.append(Problem(message, filename, number))
            return None
    if len(fields) > len(order):
        problems.append(Problem(f"field '{fields[len(order)][1]}' after 'signature'; every "
                                "review ends with its signature line, followed by an empty line",
                                filename, fields[len(order)][0]))
        return None

    values = {}
    fmt = fields[0][2]
    for number, name, value in fields:
        problem = _value_problem(name, value, fmt)
        if problem:
            problems.append(Problem(problem, filename, number))
        values[name] = value
    problem = _verdict_problem(values["verdict"], values["conditions"], values.get("note", ""))
    if problem:
        problems.append(Problem(problem, filename, fields[order.index("conditions")][0]))
    if len(problems) > before:
        return None
    extra = {name: values[name] for name in FIELDS_2 if name not in FIELDS and name in values}
    return SignedReview(
        case=values["case"], revision=int(values["revision"]), digest=values["digest"],
        signer=values["signer"], role=values["role"],
        date=datetime.date.fromisoformat(values["date"]), verdict=values["verdict"],
        conditions=values["conditions"], key=values["key"], signature=values["signature"],
        format=values["format"], line=block[0][0], **extra)


def load_signatures(path: str | Path) -> tuple[SignedReview, ...]:
    """The signed reviews in the ``.signatures`` file at ``path``."""
    try:
        data = Path(path).read_bytes()
    except OSError as err:
        raise SignatureError(Problem(f"cannot read the signatures: {err.strerror or err}",
                                     str(path))) from None
    return parse_signatures(data, str(path))


# --------------------------------------------------------------------------
# Signing
# --------------------------------------------------------------------------


def make_review(private_key: Ed25519PrivateKey, case_id: str, revision: int, digest: str,
                signer: str, role: str, verdict: str,
                conditions: str | Iterable[tuple[str, str]], date: datetime.date, *,
                parts: ReviewParts | None = None, figures: Mapping[str, str] | None = None,
                note: str = "") -> SignedReview:
    """A review signed with ``private_key`` (pure: no files).

    Without ``parts`` the block is written in format 1 (``conditions`` one line
    of text).  With them it is format 2: ``conditions`` are ``(id, text)``
    pairs, ``figures`` the key figures the signer saw, ``note`` the reason of a
    withdrawal or decline.
    """
    if isinstance(revision, bool) or not isinstance(revision, int):
        raise SignatureError(Problem(f"revision {revision!r} is not a whole number", key="revision"))
    if not isinstance(date, datetime.date) or isinstance(date, datetime.datetime):
        raise SignatureError(Problem(f"date {date!r} is not a calendar date", key="date"))
    if parts is None:
        if not isinstance(conditions, str) or note or figures:
            raise SignatureError("a format-1 review takes its conditions as one text and no "
                                 "note or figures; give the parts for format 2")
        extra: dict[str, str] = {}
        fmt = SIGNATURE_FORMAT
    else:
        if isinstance(conditions, str):
            raise SignatureError("a format-2 review takes its conditions as (id, text) pairs")
        conditions = conditions_text(conditions)
        extra = {"content": parts.content, "species": parts.species,
                 "settings": parts.settings, "versions": parts.versions,
                 "figures": figures_text(figures or {}), "note": note}
        fmt = SIGNATURE_FORMAT_2
    if not all(isinstance(v, str) for v in (case_id, digest, signer, role, verdict, conditions,
                                             *extra.values())):
        raise SignatureError("case id, digest, signer, role, verdict and conditions must be text")
    review = SignedReview(case=case_id, revision=revision, digest=digest, signer=signer,
                          role=role, date=date, verdict=verdict, conditions=conditions,
                          key=public_key_text(private_key), signature="", format=fmt, **extra)
    values = review._values()
    for name in review.fields[:-1]:
        problem = _value_problem(name, values[name], fmt)
        if problem:
            raise SignatureError(Problem(problem, key=name))
    problem = _verdict_problem(verdict, review.conditions, note)
    if problem:
        raise SignatureError(Problem(problem, key="conditions"))
    signature = private_key.sign(review.signed_bytes())
    return replace(review, signature=base64.b64encode(signature).decode("ascii"))


def sign_review(private_key_path: str | Path, case_id: str, revision: int, digest: str,
                signer: str, role: str, verdict: str, conditions: str,
                date: datetime.date, **format_2) -> SignedReview:
    """A review signed with the private key in ``private_key_path``."""
    key = load_private_key(private_key_path)
    return make_review(key, case_id, revision, digest, signer, role, verdict, conditions, date,
                       **format_2)


def _read_all(fd: int) -> bytes:
    size = os.fstat(fd).st_size
    chunks, offset = [], 0
    while offset < size:
        chunk = os.pread(fd, size - offset, offset)
        if not chunk:
            break
        chunks.append(chunk)
        offset += len(chunk)
    return b"".join(chunks)


def append_signature(sig_path: str | Path, review: SignedReview) -> None:
    """Append ``review`` to the ``.signatures`` file at ``sig_path`` (created if missing).

    The file is only ever appended to.  Refused when the file name does not
    match the review's case, the review's signature does not verify, or the
    existing file is malformed.
    """
    path = Path(sig_path)
    shown = str(sig_path)
    expected = review.case + SIGNATURES_SUFFIX
    if path.name != expected:
        raise SignatureError(Problem(f"the review is for case '{review.case}', so it belongs "
                                     f"in {expected}", shown))
    block = review.to_text().encode("utf-8")
    if parse_signatures(block, "the new review") != (review,):  # the block reads back as itself
        raise SignatureError(Problem("the new review does not read back unchanged", shown))
    if not verify_signature(base64.b64decode(review.key), base64.b64decode(review.signature),
                            review.signed_bytes()):
        raise SignatureError(Problem("the new review's signature does not verify; not appended",
                                     shown))
    try:
        fd = os.open(path, os.O_RDWR | os.O_APPEND | os.O_CREAT, 0o644)
    except OSError as err:
        raise SignatureError(Problem(f"cannot open the signatures file: {err.strerror or err}",
                                     shown)) from None
    try:
        _lock(fd)
        existing = _read_all(fd)
        parse_signatures(existing, shown)
        write_all(fd, (b"\n" if existing else b"") + block)
        os.fsync(fd)
    except OSError as err:
        raise SignatureError(Problem(f"cannot append to the signatures file: {err.strerror or err}",
                                     shown)) from None
    finally:
        os.close(fd)


def _lock(fd: int) -> None:
    """Exclusive lock for the read-check-append sequence (released on close)."""
    if fcntl is not None:
        fcntl.flock(fd, fcntl.LOCK_EX)


__all__ = ["SIGNATURE_FORMAT", "SIGNATURE_FORMAT_2", "FIELDS", "FIELDS_2", "FIELDS_BY_FORMAT",
           "WITHDRAWN", "VERDICTS_2", "ReviewParts", "parse_versions", "conditions_text",
           "figures_text", "SIGNED_FIELDS", "VERDICTS", "SIGNATURES_SUFFIX",
           "SIGNATURE_BYTES", "SignedReview",
           "verify_signature", "signatures_path", "parse_signatures", "load_signatures",
           "make_review", "sign_review", "append_signature"]
