"""Signing keys: Ed25519 key pairs, private key files and the board's trusted keys.

``dossier keygen`` makes a key pair: the private key goes to a file that only
its owner may read (checked again on every use), the public key to a line of
the trusted-keys file ``cases/trusted-keys.txt`` (documented in
``docs/signatures.md``).  This module also holds the text checks that the
trusted-keys file and the signature blocks (:mod:`dossier.review.signatures`)
share.  I/O is confined to the functions named ``load_*`` and ``write_*``.
"""
from __future__ import annotations

import base64
import binascii
import os
import re
import stat
import unicodedata
from dataclasses import dataclass, field
from pathlib import Path

from dossier.errors import Problem, SignatureError

# cryptography (Ed25519PrivateKey, Ed25519PublicKey in the annotations) is imported in
# the functions that use it: reading a case's files needs only the paths of this module.

#: The only key type of the trusted-keys file.
KEY_TYPE = "ed25519"

TRUSTED_KEYS_FILE = "trusted-keys.txt"

PUBLIC_KEY_BYTES = 32
_MAX_KEY_FILE_BYTES = 64 * 1024

_TRUSTED_RE = re.compile(r"([^ ]+) +([^ ]+) +(.*)")
_CHAR_NAMES = {"\t": "a tab", "\r": "a carriage return", "\ufeff": "a byte-order mark"}
# Characters that change the direction of displayed text: refused, so a name
# cannot be shown differently from what was signed.
_DIRECTION_MARKS = frozenset("\u200e\u200f\u202a\u202b\u202c\u202d\u202e"
                             "\u2066\u2067\u2068\u2069\ufeff")


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


# --------------------------------------------------------------------------
# Text checks shared with the signature blocks
# --------------------------------------------------------------------------


def bad_char(text: str) -> str | None:
    """A description of the first character of ``text`` that no line may hold, or None."""
    for column, char in enumerate(text, 1):
        if char in _DIRECTION_MARKS or unicodedata.category(char) in ("Cc", "Zl", "Zp"):
            what = _CHAR_NAMES.get(char, "a control or text-direction character")
            return f"column {column} holds {what} (U+{ord(char):04X}), which is not allowed"
    return None


def show_text(text: str, limit: int = 40) -> str:
    """``text`` quoted for a message, cut after ``limit`` characters."""
    return repr(text if len(text) <= limit else text[:limit] + "...")


def decode_b64(text: str, size: int, what: str) -> tuple[bytes | None, str | None]:
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


def field_text_problem(name: str, value: str) -> str | None:
    """What no field value may be: a control or direction character, outer spaces."""
    bad = bad_char(value)
    if bad:
        return f"the value of '{name}': {bad}"
    if value != value.strip():
        return f"the value of '{name}' starts or ends with a space"
    return None


def _check_person(value: object, what: str, *, bar_allowed: bool) -> str:
    """A signer name or role, checked; raises SignatureError."""
    if not isinstance(value, str):
        raise SignatureError(Problem(f"the {what} must be text", key=what))
    problem = field_text_problem(what, value)
    if problem is None and not value:
        problem = f"'{what}' is empty"
    if problem is None and not bar_allowed and "|" in value:
        problem = f"the {what} must not contain '|' (it separates name and role in {TRUSTED_KEYS_FILE})"
    if problem:
        raise SignatureError(Problem(problem, key=what))
    return value


def decode_utf8(data: bytes, filename: str) -> str:
    """The text of a signatures or trusted-keys file; refused, naming byte and line, if not UTF-8."""
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as err:
        line = data[:err.start].count(b"\n") + 1
        raise SignatureError(Problem(
            f"the file is not valid UTF-8: byte {err.start} (0x{data[err.start]:02x}) "
            "cannot be decoded", filename, line)) from None


def public_key_text(key: Ed25519PrivateKey | Ed25519PublicKey) -> str:
    """Standard base64 of the raw 32-byte public key."""
    from cryptography.hazmat.primitives import serialization
    from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey

    public = key.public_key() if isinstance(key, Ed25519PrivateKey) else key
    raw = public.public_bytes(serialization.Encoding.Raw, serialization.PublicFormat.Raw)
    return base64.b64encode(raw).decode("ascii")


def trusted_key_line(key: str, name: str, role: str) -> str:
    """A line of the trusted-keys file: ``ed25519 <key> <name> | <role>``."""
    return f"{KEY_TYPE} {key} {name} | {role}"


def trusted_keys_path(cases_dir: str | Path) -> Path:
    """``<cases_dir>/trusted-keys.txt``."""
    return Path(cases_dir) / TRUSTED_KEYS_FILE


def write_all(fd: int, data: bytes) -> None:
    """Write all of ``data`` to the file descriptor ``fd``."""
    view = memoryview(data)
    while view:
        written = os.write(fd, view)
        view = view[written:]


# --------------------------------------------------------------------------
# Keys
# --------------------------------------------------------------------------


def generate_keypair(name: str, role: str) -> tuple[bytes, str]:
    """A new Ed25519 key: (private key as unencrypted PKCS#8 PEM, trusted-keys line)."""
    _check_person(name, "name", bar_allowed=False)
    _check_person(role, "role", bar_allowed=True)
    from cryptography.hazmat.primitives import serialization
    from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey

    private = Ed25519PrivateKey.generate()
    pem = private.private_bytes(serialization.Encoding.PEM, serialization.PrivateFormat.PKCS8,
                                serialization.NoEncryption())
    return pem, trusted_key_line(public_key_text(private), name, role)


def write_private_key_in(folder: str | Path, file_name: str, pem: bytes) -> Path:
    """Make ``folder`` (mode 0700) if needed and write the key there as ``file_name``."""
    folder = Path(folder)
    try:
        folder.mkdir(mode=0o700, parents=True, exist_ok=True)
    except OSError as err:
        raise SignatureError(Problem(f"cannot create the key folder: {err.strerror or err}",
                                     str(folder))) from None
    path = folder / file_name
    write_private_key(path, pem)
    return path


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
        write_all(fd, pem)
        os.fsync(fd)
    except OSError as err:
        os.close(fd)
        os.unlink(path)
        raise SignatureError(Problem(f"cannot write the key file: {err.strerror or err}",
                                     str(path))) from None
    os.close(fd)


def load_private_key(path: str | Path) -> Ed25519PrivateKey:
    """The Ed25519 private key in ``path``; refused when other users may read or change the file."""
    from cryptography.exceptions import UnsupportedAlgorithm
    from cryptography.hazmat.primitives import serialization
    from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey

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
    text = decode_utf8(data, filename)
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
    bad = bad_char(line)
    if bad:
        return bad, None
    first = line.split(" ", 1)[0]
    if first != KEY_TYPE:
        return (f"a key line starts with '{KEY_TYPE}', not {show_text(first)}; "
                f"write: {KEY_TYPE} <public key> <name> | <role>"), None
    match = _TRUSTED_RE.fullmatch(line)
    if not match:
        return f"expected '{KEY_TYPE} <public key> <name> | <role>'", None
    _, key, rest = match.groups()
    problem = decode_b64(key, PUBLIC_KEY_BYTES, "public key")[1]
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


__all__ = ["KEY_TYPE", "TRUSTED_KEYS_FILE", "PUBLIC_KEY_BYTES", "TrustedKey", "bad_char",
           "show_text", "decode_b64", "field_text_problem", "decode_utf8", "public_key_text",
           "trusted_key_line", "trusted_keys_path", "write_all", "generate_keypair",
           "write_private_key", "load_private_key", "parse_trusted_keys", "load_trusted_keys"]
