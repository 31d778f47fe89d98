"""Signed reviews: Ed25519 keys, the trusted-keys file and per-case signature files.

A reviewer's verdict on a revision of a case is recorded as a *signed
review*: a short block of ``name: value`` lines holding the case id, the
revision, the integrity digest (:mod:`dossier.review.digest`), who signed in
which role, when, the verdict and its conditions, the public key and an
Ed25519 signature over the other lines.  The blocks of one case are appended
to ``cases/<id>.signatures``; the board's list of keys it trusts is
``cases/trusted-keys.txt``.  Both formats are documented in
``docs/signatures.md``.

The cryptography is the ``cryptography`` package's Ed25519 (RFC 8032); this
module only formats, parses and compares.  I/O is confined to the functions
named ``load_*``, ``write_*``, ``append_*`` and :func:`sign_review`.
"""
from __future__ import annotations

import base64
import binascii
import datetime
import difflib
import os
import re
import stat
import unicodedata
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Iterable, Literal

from cryptography.exceptions import InvalidSignature, UnsupportedAlgorithm
from cryptography.hazmat.primitives import serialization
from cryptography.hazmat.primitives.asymmetric.ed25519 import (Ed25519PrivateKey,
                                                               Ed25519PublicKey)

from dossier.model.case import Verdict
from dossier.errors import Problem, SignatureError

#: Value of the ``format`` line that opens every signed review.
SIGNATURE_FORMAT = "dossier-review-1"

#: The fields of a signed review, in the order they are written.
FIELDS = ("format", "case", "revision", "digest", "signer", "role", "date",
          "verdict", "conditions", "key", "signature")

#: The fields covered by the signature (all but the signature itself).
SIGNED_FIELDS = FIELDS[:-1]

VERDICTS = tuple(v.value for v in Verdict)

#: The only key type of the trusted-keys file.
KEY_TYPE = "ed25519"

TRUSTED_KEYS_FILE = "trusted-keys.txt"
SIGNATURES_SUFFIX = ".signatures"

PUBLIC_KEY_BYTES = 32
SIGNATURE_BYTES = 64
_MAX_KEY_FILE_BYTES = 64 * 1024

Status = Literal["valid", "changed-since-signed", "untrusted-key", "invalid"]
STATUSES: tuple[Status, ...] = ("valid", "changed-since-signed", "untrusted-key", "invalid")

_ORDER_HINT = "the fields of a signed review are " + ", ".join(FIELDS) + ", in this order"
_FIELD_RE = re.compile(r"([a-z]+):(?: (.*))?", re.DOTALL)
_REVISION_RE = re.compile(r"[1-9][0-9]{0,8}")
_DIGEST_RE = re.compile(r"[0-9a-f]{64}")
_DATE_RE = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}")
_TRUSTED_RE = re.compile(r"([^ ]+) +([^ ]+) +(.*)")
_CHAR_NAMES = {"\t": "a tab", "\r": "a carriage return", "\ufeff": "a byte-order mark"}
# Characters that change the direction of displayed text: refused, so a name
# cannot be shown differently from what was signed.
_DIRECTION_MARKS = frozenset("\u200e\u200f\u202a\u202b\u202c\u202d\u202e"
                             "\u2066\u2067\u2068\u2069\ufeff")


# --------------------------------------------------------------------------
# Data
# --------------------------------------------------------------------------


@dataclass(frozen=True)
class TrustedKey:
    """One line of the trusted-keys file: a public key and whose it is."""

    key: str            # standard base64 of the 32-byte Ed25519 public key
    name: str
    role: str
    line: int = field(default=0, compare=False)

    def to_line(self) -> str:
        """The line as written in the trusted-keys file."""
        return trusted_key_line(self.key, self.name, self.role)


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

    def _values(self) -> dict[str, str]:
        return {
            "format": self.format, "case": self.case, "revision": str(self.revision),
            "digest": self.digest, "signer": self.signer, "role": self.role,
            "date": self.date.isoformat(), "verdict": self.verdict,
            "conditions": self.conditions, "key": self.key, "signature": self.signature,
        }

    def signed_bytes(self) -> bytes:
        """The message the signature covers: the block's first ten lines, UTF-8, each ending in LF."""
        values = self._values()
        return "".join(_field_line(name, values[name]) + "\n"
                       for name in SIGNED_FIELDS).encode("utf-8")

    def to_text(self) -> str:
        """The block as written in the ``.signatures`` file (without the separating empty line)."""
        return self.signed_bytes().decode("utf-8") + _field_line("signature", self.signature) + "\n"

    def to_dict(self) -> dict[str, object]:
        values: dict[str, object] = self._values()
        values["revision"] = self.revision
        return values


@dataclass(frozen=True)
class ReviewStatus:
    """The outcome of checking one signed review against the case as it is now."""

    review: SignedReview
    status: Status
    explanation: str                    # plain words, for the table and the pages
    revision_older: bool = False        # the review is for an earlier revision than the current one
    trusted_key: TrustedKey | None = None

    @property
    def valid(self) -> bool:
        return self.status == "valid"


# --------------------------------------------------------------------------
# Small pure helpers
# --------------------------------------------------------------------------


def _field_line(name: str, value: str) -> str:
    return f"{name}: {value}" if value else f"{name}:"


def _bad_char(text: str) -> str | None:
    """A description of the first character of ``text`` that no line may hold, or None."""
    for column, char in enumerate(text, 1):
        if char in _DIRECTION_MARKS or unicodedata.category(char) in ("Cc", "Zl", "Zp"):
            what = _CHAR_NAMES.get(char, "a control or text-direction character")
            return f"column {column} holds {what} (U+{ord(char):04X}), which is not allowed"
    return None


def _show(text: str, limit: int = 40) -> str:
    return repr(text if len(text) <= limit else text[:limit] + "...")


def _b64(text: str, size: int, what: str) -> tuple[bytes | None, str | None]:
    """Decode standard base64 of exactly ``size`` bytes; (bytes, None) or (None, message)."""
    try:
        raw = base64.b64decode(text, validate=True)
    except (binascii.Error, ValueError):
        return None, f"the {what} is not valid base64"
    if len(raw) != size:
        return None, f"the {what} must be {size} bytes, this one is {len(raw)}"
    canonical = base64.b64encode(raw).decode("ascii")
    if canonical != text:
        return None, f"the {what} is not in standard base64 form (that would be {canonical})"
    return raw, None


def _value_problem(name: str, value: str) -> str | None:
    """What is wrong with ``value`` for field ``name``, or None."""
    bad = _bad_char(value)
    if bad:
        return f"the value of '{name}': {bad}"
    if value != value.strip():
        return f"the value of '{name}' starts or ends with a space"
    if not value:
        return None if name == "conditions" else f"'{name}' is empty"
    if name == "format" and value != SIGNATURE_FORMAT:
        return f"unknown format '{value}'; this version of dossier reads '{SIGNATURE_FORMAT}'"
    if name == "revision" and not _REVISION_RE.fullmatch(value):
        return f"revision {_show(value)} is not a whole number of 1 or more"
    if name == "digest" and not _DIGEST_RE.fullmatch(value):
        return f"digest {_show(value)} is not 64 lowercase hexadecimal characters (SHA-256)"
    if name == "date":
        try:
            if not _DATE_RE.fullmatch(value):
                raise ValueError
            datetime.date.fromisoformat(value)
        except ValueError:
            return f"date {_show(value)} is not a calendar date written YYYY-MM-DD"
    if name == "verdict" and value not in VERDICTS:
        return f"verdict {_show(value)} is not one of {', '.join(VERDICTS)}"
    if name == "key":
        return _b64(value, PUBLIC_KEY_BYTES, "public key")[1]
    if name == "signature":
        return _b64(value, SIGNATURE_BYTES, "signature")[1]
    return None


def _verdict_problem(verdict: str, conditions: str) -> str | None:
    if verdict == "accepted-with-conditions" and not conditions:
        return "verdict 'accepted-with-conditions' needs the conditions"
    if verdict == "accepted" and conditions:
        return "verdict 'accepted' has conditions; use 'accepted-with-conditions'"
    return None


def _check_person(value: object, what: str, *, bar_allowed: bool) -> str:
    """A signer name or role, checked; raises SignatureError."""
    if not isinstance(value, str):
        raise SignatureError(Problem(f"the {what} must be text", key=what))
    problem = _value_problem(what, value)
    if problem is None and not value:
        problem = f"'{what}' is empty"
    if problem is None and not bar_allowed and "|" in value:
        problem = f"the {what} must not contain '|' (it separates name and role in {TRUSTED_KEYS_FILE})"
    if problem:
        raise SignatureError(Problem(problem, key=what))
    return value


def _decode(data: bytes, filename: str) -> str:
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as err:
        line = data[:err.start].count(b"\n") + 1
        raise SignatureError(Problem(
            f"the file is not valid UTF-8: byte {err.start} (0x{data[err.start]:02x}) "
            "cannot be decoded", filename, line)) from None


def public_key_text(key: Ed25519PrivateKey | Ed25519PublicKey) -> str:
    """Standard base64 of the raw 32-byte public key."""
    public = key.public_key() if isinstance(key, Ed25519PrivateKey) else key
    raw = public.public_bytes(serialization.Encoding.Raw, serialization.PublicFormat.Raw)
    return base64.b64encode(raw).decode("ascii")


def trusted_key_line(key: str, name: str, role: str) -> str:
    """A line of the trusted-keys file: ``ed25519 <key> <name> | <role>``."""
    return f"{KEY_TYPE} {key} {name} | {role}"


def verify_signature(public_key: bytes, signature: bytes, message: bytes) -> bool:
    """True when ``signature`` is a valid Ed25519 signature of ``message`` by ``public_key``."""
    try:
        Ed25519PublicKey.from_public_bytes(public_key).verify(signature, message)
    except (InvalidSignature, ValueError):
        return False
    return True


def signatures_path(case_path: str | Path) -> Path:
    """``cases/<id>.signatures`` for the case file ``cases/<id>.md``."""
    path = Path(case_path)
    return path.with_name(path.stem + SIGNATURES_SUFFIX)


def trusted_keys_path(cases_dir: str | Path) -> Path:
    """``<cases_dir>/trusted-keys.txt``."""
    return Path(cases_dir) / TRUSTED_KEYS_FILE


# --------------------------------------------------------------------------
# Keys
# --------------------------------------------------------------------------


def generate_keypair(name: str, role: str) -> tuple[bytes, str]:
    """A new Ed25519 key: (private key as unencrypted PKCS#8 PEM, trusted-keys line)."""
    _check_person(name, "name", bar_allowed=False)
    _check_person(role, "role", bar_allowed=True)
    private = Ed25519PrivateKey.generate()
    pem = private.private_bytes(serialization.Encoding.PEM, serialization.PrivateFormat.PKCS8,
                                serialization.NoEncryption())
    return pem, trusted_key_line(public_key_text(private), name, role)


def write_private_key(path: str | Path, pem: bytes) -> None:
    """Create ``path`` with mode 0600 from the start and write ``pem``; never overwrite."""
    flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0)
    try:
        fd = os.open(path, flags, 0o600)
    except FileExistsError:
        raise SignatureError(Problem("the key file exists already; refusing to overwrite it "
                                     "(choose another folder or move the old key away first)",
                                     str(path))) from None
    except OSError as err:
        raise SignatureError(Problem(f"cannot create the key file: {err.strerror or err}",
                                     str(path))) from None
    try:
        _write_all(fd, pem)
        os.fsync(fd)
    except OSError as err:
        os.close(fd)
        os.unlink(path)
        raise SignatureError(Problem(f"cannot write the key file: {err.strerror or err}",
                                     str(path))) from None
    os.close(fd)


def load_private_key(path: str | Path) -> Ed25519PrivateKey:
    """The Ed25519 private key in ``path``; refused when other users may read or change the file."""
    shown = str(path)
    try:
        fd = os.open(path, os.O_RDONLY)
    except OSError as err:
        raise SignatureError(Problem(f"cannot read the key file: {err.strerror or err}",
                                     shown)) from None
    try:
        mode = stat.S_IMODE(os.fstat(fd).st_mode)
        if os.name == "posix" and mode & 0o077:
            what = "readable by others" if mode & 0o044 else "open to others"
            raise SignatureError(f"key file {shown} is {what} (mode {mode:04o}); "
                                 f"run chmod 600 {shown}")
        data = os.read(fd, _MAX_KEY_FILE_BYTES + 1)
    finally:
        os.close(fd)
    try:
        key = serialization.load_pem_private_key(data, password=None)
    except TypeError:
        raise SignatureError(Problem("the key is protected by a passphrase; dossier reads "
                                     "unencrypted keys guarded by file permissions", shown)) from None
    except (ValueError, UnsupportedAlgorithm):
        raise SignatureError(Problem("the file does not hold a PEM private key "
                                     "(make one with 'dossier keygen')", shown)) from None
    if not isinstance(key, Ed25519PrivateKey):
        raise SignatureError(Problem(f"the file holds a {type(key).__name__} key; dossier signs "
                                     "with Ed25519 keys (make one with 'dossier keygen')", shown))
    return key


# --------------------------------------------------------------------------
# The trusted-keys file
# --------------------------------------------------------------------------


def parse_trusted_keys(data: bytes, filename: str) -> tuple[TrustedKey, ...]:
    """The keys listed in a trusted-keys file's bytes; ``filename`` names it in messages."""
    text = _decode(data, filename)
    if text.startswith("\ufeff"):
        text = text[1:]
    problems: list[Problem] = []
    keys: list[TrustedKey] = []
    first_line: dict[str, int] = {}
    for number, raw in enumerate(text.split("\n"), 1):
        line = raw.strip(" ")
        if not line or line.startswith("#"):
            continue
        problem, entry = _trusted_line(line, number)
        if problem is None and entry.key in first_line:
            problem = f"this key is listed already on line {first_line[entry.key]}; list each key once"
        if problem is not None:
            problems.append(Problem(problem, filename, number))
            continue
        first_line[entry.key] = number
        keys.append(entry)
    if problems:
        raise SignatureError(problems)
    return tuple(keys)


def _trusted_line(line: str, number: int) -> tuple[str | None, TrustedKey | None]:
    bad = _bad_char(line)
    if bad:
        return bad, None
    first = line.split(" ", 1)[0]
    if first != KEY_TYPE:
        return (f"a key line starts with '{KEY_TYPE}', not {_show(first)}; "
                f"write: {KEY_TYPE} <public key> <name> | <role>"), None
    match = _TRUSTED_RE.fullmatch(line)
    if not match:
        return f"expected '{KEY_TYPE} <public key> <name> | <role>'", None
    _, key, rest = match.groups()
    problem = _b64(key, PUBLIC_KEY_BYTES, "public key")[1]
    if problem:
        return problem, None
    if "|" not in rest:
        return "missing '|' between the name and the role (write: <name> | <role>)", None
    name, role = (part.strip(" ") for part in rest.split("|", 1))
    if not name:
        return "the name before '|' is empty", None
    if not role:
        return "the role after '|' is empty", None
    return None, TrustedKey(key, name, role, number)


def load_trusted_keys(path: str | Path) -> tuple[TrustedKey, ...]:
    """The keys listed in the trusted-keys file at ``path``."""
    try:
        data = Path(path).read_bytes()
    except OSError as err:
        raise SignatureError(Problem(f"cannot read the trusted keys: {err.strerror or err}",
                                     str(path))) from None
    return parse_trusted_keys(data, str(path))


# --------------------------------------------------------------------------
# Signature files
# --------------------------------------------------------------------------


def parse_signatures(data: bytes, filename: str) -> tuple[SignedReview, ...]:
    """The signed reviews in a ``.signatures`` file's bytes; ``filename`` names it in messages."""
    text = _decode(data, filename)
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
        bad = _bad_char(raw)
        match = None if bad else _FIELD_RE.fullmatch(raw)
        if bad or match is None:
            problems.append(Problem(bad or f"expected 'name: value', got {_show(raw)}",
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

    for index, expected in enumerate(FIELDS):
        if index == len(fields):
            problems.append(Problem(f"field '{expected}' is missing after '{fields[-1][1]}'; "
                                    f"{_ORDER_HINT}", filename, fields[-1][0]))
            return None
        number, name, _ = fields[index]
        if name != expected:
            if name in FIELDS:
                message = f"field '{name}' found where '{expected}' belongs; {_ORDER_HINT}"
            else:
                close = difflib.get_close_matches(name, FIELDS, n=1)
                hint = f"; did you mean '{close[0]}'?" if close else f"; {_ORDER_HINT}"
                message = f"unknown field '{name}'{hint}"
            problems.append(Problem(message, filename, number))
            return None
    if len(fields) > len(FIELDS):
        problems.append(Problem(f"field '{fields[len(FIELDS)][1]}' after 'signature'; every "
                                "review ends with its signature line, followed by an empty line",
                                filename, fields[len(FIELDS)][0]))
        return None

    values = {}
    for number, name, value in fields:
        problem = _value_problem(name, value)
        if problem:
            problems.append(Problem(problem, filename, number))
        values[name] = value
    problem = _verdict_problem(values["verdict"], values["conditions"])
    if problem:
        problems.append(Problem(problem, filename, fields[FIELDS.index("conditions")][0]))
    if len(problems) > before:
        return None
    return SignedReview(
        case=values["case"], revision=int(values["revision"]), digest=values["digest"],
        signer=values["signer"], role=values["role"],
        date=datetime.date.fromisoformat(values["date"]), verdict=values["verdict"],
        conditions=values["conditions"], key=values["key"], signature=values["signature"],
        format=values["format"], line=block[0][0])


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
                signer: str, role: str, verdict: str, conditions: str,
                date: datetime.date) -> SignedReview:
    """A review signed with ``private_key`` (pure: no files)."""
    if isinstance(revision, bool) or not isinstance(revision, int):
        raise SignatureError(Problem(f"revision {revision!r} is not a whole number", key="revision"))
    if not isinstance(date, datetime.date) or isinstance(date, datetime.datetime):
        raise SignatureError(Problem(f"date {date!r} is not a calendar date", key="date"))
    if not all(isinstance(v, str) for v in (case_id, digest, signer, role, verdict, conditions)):
        raise SignatureError("case id, digest, signer, role, verdict and conditions must be text")
    review = SignedReview(case=case_id, revision=revision, digest=digest, signer=signer,
                          role=role, date=date, verdict=verdict, conditions=conditions,
                          key=public_key_text(private_key), signature="")
    values = review._values()
    for name in SIGNED_FIELDS:
        problem = _value_problem(name, values[name])
        if problem:
            raise SignatureError(Problem(problem, key=name))
    problem = _verdict_problem(verdict, conditions)
    if problem:
        raise SignatureError(Problem(problem, key="conditions"))
    signature = private_key.sign(review.signed_bytes())
    return replace(review, signature=base64.b64encode(signature).decode("ascii"))


def sign_review(private_key_path: str | Path, case_id: str, revision: int, digest: str,
                signer: str, role: str, verdict: str, conditions: str,
                date: datetime.date) -> SignedReview:
    """A review signed with the private key in ``private_key_path``."""
    key = load_private_key(private_key_path)
    return make_review(key, case_id, revision, digest, signer, role, verdict, conditions, date)


def _write_all(fd: int, data: bytes) -> None:
    view = memoryview(data)
    while view:
        written = os.write(fd, view)
        view = view[written:]


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
        _write_all(fd, (b"\n" if existing else b"") + block)
        os.fsync(fd)
    except OSError as err:
        raise SignatureError(Problem(f"cannot append to the signatures file: {err.strerror or err}",
                                     shown)) from None
    finally:
        os.close(fd)


def _lock(fd: int) -> None:
    """Exclusive lock for the read-check-append sequence (released on close)."""
    try:
        import fcntl
    except ImportError:  # pragma: no cover - not POSIX
        return
    fcntl.flock(fd, fcntl.LOCK_EX)


# --------------------------------------------------------------------------
# Verification
# --------------------------------------------------------------------------


def verify_reviews(reviews: Iterable[SignedReview], trusted_keys: Iterable[TrustedKey],
                   current_digest: str, current_revision: int,
                   case_id: str | None = None) -> tuple[ReviewStatus, ...]:
    """The status of every review against the case as it is now.

    ``case_id``, when given, is the case whose signatures file holds the
    reviews; a review signed for another case is then "invalid".
    """
    by_key = {k.key: k for k in trusted_keys}
    return tuple(_review_status(r, by_key, current_digest, current_revision, case_id)
                 for r in reviews)


def _review_status(review: SignedReview, by_key: dict[str, TrustedKey], current_digest: str,
                   current_revision: int, case_id: str | None) -> ReviewStatus:
    key, _ = _b64(review.key, PUBLIC_KEY_BYTES, "public key")
    signature, _ = _b64(review.signature, SIGNATURE_BYTES, "signature")
    if key is None or signature is None or not verify_signature(key, signature,
                                                                review.signed_bytes()):
        return ReviewStatus(review, "invalid",
                            "the signature does not match the text of the review: the review "
                            "was altered after signing, or its signature was damaged; the "
                            "verdict must be treated as not given")
    if case_id is not None and review.case != case_id:
        return ReviewStatus(review, "invalid",
                            f"the review was signed for case '{review.case}' but sits in the "
                            f"signatures of case '{case_id}'; it was copied or moved there")
    trusted = by_key.get(review.key)
    if trusted is None:
        return ReviewStatus(review, "untrusted-key",
                            f"the signature is intact, but the key that made it is not in "
                            f"{TRUSTED_KEYS_FILE}; a verdict counts only when the board trusts "
                            "the signer's key")
    if (trusted.name, trusted.role) != (review.signer, review.role):
        return ReviewStatus(review, "untrusted-key",
                            f"the signature is intact and its key is trusted, but for "
                            f"{trusted.name} ({trusted.role}), not for {review.signer} "
                            f"({review.role}) as the review says", trusted_key=trusted)
    older = review.revision < current_revision
    if review.digest == current_digest and review.revision == current_revision:
        return ReviewStatus(review, "valid",
                            f"signed by {review.signer} ({review.role}) on "
                            f"{review.date.isoformat()} for revision {review.revision}; the case "
                            "and the data it uses are unchanged since", trusted_key=trusted)
    if older:
        explanation = (f"signed for revision {review.revision}, but the case is now at revision "
                       f"{current_revision}: the verdict is about an earlier version")
    elif review.revision > current_revision:
        explanation = (f"signed for revision {review.revision}, but the case is at revision "
                       f"{current_revision}: the case file is older than the one signed, or "
                       "its revision was lowered")
    else:
        explanation = (f"signed for this revision ({review.revision}), but the case file or "
                       "the data it uses (species records, library or dossier version, method "
                       "settings) changed since, without a new revision number")
    return ReviewStatus(review, "changed-since-signed", explanation, revision_older=older,
                        trusted_key=trusted)
