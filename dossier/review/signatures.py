"""Signed reviews: the per-case signature files and their verification.

A reviewer's verdict on a revision of a case is recorded as a *signed
review*: a short block of ``name: value`` lines holding the case id, the
revision, the integrity digest (:mod:`dossier.review.digest`), who signed in
which role, when, the verdict and its conditions, the public key and an
Ed25519 signature over the other lines.  The blocks of one case are appended
to ``cases/<id>.signatures``; the keys (and the board's list of keys it
trusts, ``cases/trusted-keys.txt``) are :mod:`dossier.review.keys`.  Both
formats are documented in ``docs/signatures.md``.

The cryptography is the ``cryptography`` package's Ed25519 (RFC 8032); this
module only formats, parses and compares.  I/O is confined to the functions
named ``load_*``, ``append_*`` and :func:`sign_review`.
"""
from __future__ import annotations

import base64
import datetime
import difflib
import os
import re
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Iterable, Literal

from cryptography.exceptions import InvalidSignature
from cryptography.hazmat.primitives.asymmetric.ed25519 import (Ed25519PrivateKey,
                                                               Ed25519PublicKey)

from dossier.errors import Problem, SignatureError
from dossier.model.case import Verdict
from dossier.review.keys import (PUBLIC_KEY_BYTES, TRUSTED_KEYS_FILE, TrustedKey, bad_char,
                                 decode_b64, decode_utf8, field_text_problem, load_private_key,
                                 public_key_text, show_text, write_all)

try:
    import fcntl  # POSIX: locks the signatures file while appending
except ImportError:  # pragma: no cover - not POSIX
    fcntl = None  # type: ignore[assignment]

#: Value of the ``format`` line that opens every signed review.
SIGNATURE_FORMAT = "dossier-review-1"

#: The fields of a signed review, in the order they are written.
FIELDS = ("format", "case", "revision", "digest", "signer", "role", "date",
          "verdict", "conditions", "key", "signature")

#: The fields covered by the signature (all but the signature itself).
SIGNED_FIELDS = FIELDS[:-1]

VERDICTS = tuple(v.value for v in Verdict)

SIGNATURES_SUFFIX = ".signatures"

SIGNATURE_BYTES = 64

Status = Literal["valid", "changed-since-signed", "untrusted-key", "invalid"]
STATUSES: tuple[Status, ...] = ("valid", "changed-since-signed", "untrusted-key", "invalid")

_ORDER_HINT = "the fields of a signed review are " + ", ".join(FIELDS) + ", in this order"
_FIELD_RE = re.compile(r"([a-z]+):(?: (.*))?", re.DOTALL)
_REVISION_RE = re.compile(r"[1-9][0-9]{0,8}")
_DIGEST_RE = re.compile(r"[0-9a-f]{64}")
_DATE_RE = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}")


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


def _value_problem(name: str, value: str) -> str | None:
    """What is wrong with ``value`` for field ``name``, or None."""
    problem = field_text_problem(name, value)
    if problem:
        return problem
    if not value:
        return None if name == "conditions" else f"'{name}' is empty"
    if name == "format" and value != SIGNATURE_FORMAT:
        return f"unknown format '{value}'; this version of dossier reads '{SIGNATURE_FORMAT}'"
    if name == "revision" and not _REVISION_RE.fullmatch(value):
        return f"revision {show_text(value)} is not a whole number of 1 or more"
    if name == "digest" and not _DIGEST_RE.fullmatch(value):
        return f"digest {show_text(value)} is not 64 lowercase hexadecimal characters (SHA-256)"
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


def _verdict_problem(verdict: str, conditions: str) -> str | None:
    if verdict == "accepted-with-conditions" and not conditions:
        return "verdict 'accepted-with-conditions' needs the conditions"
    if verdict == "accepted" and conditions:
        return "verdict 'accepted' has conditions; use 'accepted-with-conditions'"
    return None


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
    key, _ = decode_b64(review.key, PUBLIC_KEY_BYTES, "public key")
    signature, _ = decode_b64(review.signature, SIGNATURE_BYTES, "signature")
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


__all__ = ["SIGNATURE_FORMAT", "FIELDS", "SIGNED_FIELDS", "VERDICTS", "SIGNATURES_SUFFIX",
           "SIGNATURE_BYTES", "Status", "STATUSES", "SignedReview", "ReviewStatus",
           "verify_signature", "signatures_path", "parse_signatures", "load_signatures",
           "make_review", "sign_review", "append_signature", "verify_reviews"]
