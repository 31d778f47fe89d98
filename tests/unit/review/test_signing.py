"""Ed25519 keys, trusted keys, signature files and their verification."""
from __future__ import annotations

import base64
import datetime
import os
import stat
from dataclasses import replace
from pathlib import Path

import pytest
from click.testing import CliRunner
from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey

from dossier.cli.main import _Group
from dossier.errors import SignatureError
from dossier.review.digest import case_digest
from dossier.review.keys import (TrustedKey, generate_keypair, load_private_key,
                                 parse_trusted_keys, public_key_text, trusted_key_line,
                                 write_private_key)
from dossier.review.signatures import (SignedReview, append_signature, load_signatures,
                                       make_review, parse_signatures, sign_review,
                                       verify_signature)
from dossier.review.verdicts import verify_reviews
from dossier.cli.signing import COMMANDS, key_file_name
from fuzzing import bounded
from paths import FIXTURES

FIXTURES = FIXTURES / "cases"

# RFC 8032, section 7.1, TEST 1 (Ed25519, empty message).
RFC8032_T1_SECRET = "9d61b19deffd5a60ba844af492ec2cc44449c5697b326919703bac031cae7f60"
RFC8032_T1_PUBLIC = "d75a980182b10ab7d54bfed3c964073a0ee172f3daa62325af021a68f707511a"
RFC8032_T1_SIGNATURE = ("e5564300c360ac729086e2cc806e828a84877f1eb8e5d974d873e06522490155"
                        "5fb8821590a33bacc61e39701cf9b46bd25bf5f0595bbe24655141438e7a100b")

DIGEST = "ab" * 32
DATE = datetime.date(2026, 11, 20)
CONDITIONS = "Feed interlocked on cooling water flow."


def rfc_key() -> Ed25519PrivateKey:
    return Ed25519PrivateKey.from_private_bytes(bytes.fromhex(RFC8032_T1_SECRET))


def review_by(key, *, case="burn", revision=3, digest=DIGEST, signer="R. Example",
              role="process safety", verdict="accepted-with-conditions",
              conditions=CONDITIONS, date=DATE) -> SignedReview:
    return make_review(key, case, revision, digest, signer, role, verdict, conditions, date)


def trusted(key, name="R. Example", role="process safety") -> TrustedKey:
    return TrustedKey(public_key_text(key), name, role)


def status_of(review, keys, digest=DIGEST, revision=3, case_id="burn"):
    (result,) = verify_reviews([review], keys, digest, revision, case_id=case_id)
    return result


# --------------------------------------------------------------------------
# The Ed25519 wiring


def test_rfc8032_test_1_through_our_helpers():
    key = rfc_key()
    assert base64.b64decode(public_key_text(key)).hex() == RFC8032_T1_PUBLIC
    assert key.sign(b"").hex() == RFC8032_T1_SIGNATURE
    public, signature = bytes.fromhex(RFC8032_T1_PUBLIC), bytes.fromhex(RFC8032_T1_SIGNATURE)
    assert verify_signature(public, signature, b"")
    assert not verify_signature(public, signature, b"\x00")
    bent = bytearray(signature)
    bent[0] ^= 1
    assert not verify_signature(public, bytes(bent), b"")


def test_the_signed_message_is_the_first_ten_lines_as_documented():
    review = review_by(rfc_key())
    message = (
        "format: dossier-review-1\n"
        "case: burn\n"
        "revision: 3\n"
        f"digest: {DIGEST}\n"
        "signer: R. Example\n"
        "role: process safety\n"
        "date: 2026-11-20\n"
        "verdict: accepted-with-conditions\n"
        f"conditions: {CONDITIONS}\n"
        f"key: {base64.b64encode(bytes.fromhex(RFC8032_T1_PUBLIC)).decode()}\n"
    ).encode("utf-8")
    assert review.signed_bytes() == message
    assert review.to_text() == message.decode() + f"signature: {review.signature}\n"
    assert verify_signature(bytes.fromhex(RFC8032_T1_PUBLIC),
                            base64.b64decode(review.signature), message)
    assert parse_signatures(review.to_text().encode(), "x") == (review,)


def test_empty_conditions_are_written_without_a_trailing_space():
    review = review_by(rfc_key(), verdict="declined", conditions="")
    assert "\nconditions:\n" in review.to_text()
    assert parse_signatures(review.to_text().encode(), "x") == (review,)


@pytest.mark.parametrize("changes, message", [
    ({"verdict": "accepted-with-conditions", "conditions": ""},
     "key 'conditions': verdict 'accepted-with-conditions' needs the conditions"),
    ({"verdict": "accepted"}, "key 'conditions': verdict 'accepted' has conditions; "
                              "use 'accepted-with-conditions'"),
    ({"verdict": "approved"}, "key 'verdict': verdict 'approved' is not one of accepted, "
                              "accepted-with-conditions, declined"),
    ({"signer": " R. Example"}, "key 'signer': the value of 'signer' starts or ends with a space"),
    ({"conditions": "two\nlines"}, "key 'conditions': the value of 'conditions': column 4 holds "
                                   "a control or text-direction character (U+000A), which is "
                                   "not allowed"),
    ({"digest": "AB" * 32}, "key 'digest': digest 'ABABABABABABABABABABABABABABABABABABABAB...' "
                            "is not 64 lowercase hexadecimal characters (SHA-256)"),
    ({"revision": 0}, "key 'revision': revision '0' is not a whole number of 1 or more"),
    ({"revision": True}, "key 'revision': revision True is not a whole number"),
])
def test_make_review_refuses_bad_fields(changes, message):
    with pytest.raises(SignatureError) as info:
        review_by(rfc_key(), **changes)
    assert str(info.value) == message


# --------------------------------------------------------------------------
# Statuses


def test_sign_then_verify_is_valid(tmp_path):
    key_path = tmp_path / "k.key"
    pem, line = generate_keypair("R. Example", "process safety")
    write_private_key(key_path, pem)
    keys = parse_trusted_keys((line + "\n").encode(), "trusted-keys.txt")
    review = sign_review(key_path, "burn", 3, DIGEST, "R. Example", "process safety",
                         "accepted-with-conditions", CONDITIONS, DATE)
    append_signature(tmp_path / "burn.signatures", review)
    (loaded,) = load_signatures(tmp_path / "burn.signatures")
    assert loaded == review and loaded.line == 1
    result = status_of(loaded, keys)
    assert result.valid and result.status == "valid"
    assert result.trusted_key == keys[0]
    assert result.explanation == ("signed by R. Example (process safety) on 2026-11-20 for "
                                  "revision 3; the case and the data it uses are unchanged since")


@pytest.mark.parametrize("revision, older, explanation", [
    (4, True, "signed for revision 3, but the case is now at revision 4: the verdict is about "
              "an earlier version"),
    (3, False, "signed for this revision (3), but the case file or the data it uses (species "
               "records, library or dossier version, method settings) changed since, without "
               "a new revision number"),
    (2, False, "signed for revision 3, but the case is at revision 2: the case file is older "
               "than the one signed, or its revision was lowered"),
])
def test_changed_since_signed(revision, older, explanation):
    key = rfc_key()
    result = status_of(review_by(key), [trusted(key)], digest="cd" * 32, revision=revision)
    assert (result.status, result.revision_older, result.explanation) == (
        "changed-since-signed", older, explanation)
    assert not result.valid


def test_same_digest_but_other_revision_is_not_valid():
    key = rfc_key()
    result = status_of(review_by(key), [trusted(key)], revision=4)
    assert result.status == "changed-since-signed" and result.revision_older


def test_key_of_another_keypair_is_untrusted_never_valid():
    signer, board = Ed25519PrivateKey.generate(), Ed25519PrivateKey.generate()
    result = status_of(review_by(signer), [trusted(board)])
    assert result.status == "untrusted-key" and not result.valid
    assert result.explanation == (
        "the signature is intact, but the key that made it is not in trusted-keys.txt; a "
        "verdict counts only when the board trusts the signer's key")
    assert status_of(review_by(signer), []).status == "untrusted-key"


@pytest.mark.parametrize("name, role", [("R. Other", "process safety"), ("R. Example", "QA")])
def test_trusted_key_with_another_name_or_role_is_untrusted(name, role):
    key = rfc_key()
    result = status_of(review_by(key), [trusted(key, name, role)])
    assert result.status == "untrusted-key"
    assert result.explanation == (
        f"the signature is intact and its key is trusted, but for {name} ({role}), not for "
        "R. Example (process safety) as the review says")


def test_altered_review_is_invalid():
    key = rfc_key()
    good = review_by(key)
    keys = [trusted(key)]
    for altered in (replace(good, conditions="None."), replace(good, revision=4),
                    replace(good, digest="cd" * 32), replace(good, verdict="declined"),
                    replace(good, date=datetime.date(2026, 11, 21)),
                    replace(good, signature=review_by(key, conditions="Other.").signature),
                    replace(good, key=public_key_text(Ed25519PrivateKey.generate())),
                    replace(good, signature="not base64")):
        result = status_of(altered, keys, digest=altered.digest, revision=altered.revision)
        assert result.status == "invalid", altered
        assert result.explanation.startswith("the signature does not match the text")


def test_review_moved_to_another_case_is_invalid():
    key = rfc_key()
    result = status_of(review_by(key), [trusted(key)], case_id="other")
    assert (result.status, result.explanation) == (
        "invalid", "the review was signed for case 'burn' but sits in the signatures of case "
                   "'other'; it was copied or moved there")


# --------------------------------------------------------------------------
# Every single flip is caught


def _flips(data: bytes, start: int = 0, end: int | None = None, masks=(0x01, 0x20, 0x80)):
    for position in range(start, len(data) if end is None else end):
        for mask in masks:
            flipped = bytearray(data)
            flipped[position] ^= mask
            yield bytes(flipped)


def test_every_flip_of_a_signed_case_file_is_caught():
    key = rfc_key()
    data = (FIXTURES / "full.md").read_bytes()
    species = [{"id": "H2(g)", "molar_mass": 2.016}]   # invented, test data only

    def digest(case_bytes):
        return case_digest(case_bytes, species, "L1", "T1", {"t": 1}).digest

    review = review_by(key, digest=digest(data))
    keys = [trusted(key)]
    assert status_of(review, keys, digest=digest(data)).valid
    count = 0
    for flipped in _flips(data, masks=(0x01,)):
        assert status_of(review, keys, digest=digest(flipped)).status == "changed-since-signed"
        count += 1
    assert count >= 200


def test_every_flip_of_a_species_record_value_is_caught():
    key = rfc_key()
    record = {"id": "H2O(l)", "name": "water", "formula": "H2O", "phase": "l",
              "source": "invented for a test: a source text long enough to flip, with a table "
                        "number, an edition and a page, as real provenance notes have",
              "model": {"kind": "constant-cp", "hf": -285830.0, "s298": 69.95, "cp": 75.3}}

    def digest(rec):
        return case_digest(b"case", [rec], "L1", "T1", {}).digest

    review = review_by(key, digest=digest(record))
    keys = [trusted(key)]
    count = 0
    for field in ("name", "formula", "phase", "source"):
        for i, char in enumerate(record[field]):
            for mask in (0x01, 0x20):
                changed = dict(record, **{field: record[field][:i] + chr(ord(char) ^ mask)
                                          + record[field][i + 1:]})
                result = status_of(review, keys, digest=digest(changed))
                assert result.status == "changed-since-signed", (field, i, mask)
                count += 1
    for name in ("hf", "s298", "cp"):
        value = record["model"][name]
        for new in (value * (1 + 1e-15), -value, value + 1):
            changed = dict(record, model=dict(record["model"], **{name: new}))
            assert status_of(review, keys, digest=digest(changed)).status != "valid"
            count += 1
    assert count >= 200


def test_every_flip_of_a_signature_block_is_caught():
    key = rfc_key()
    review = review_by(key)
    data = review.to_text().encode("utf-8")
    keys = [trusted(key)]
    assert status_of(parse_signatures(data, "burn.signatures")[0], keys).valid
    outcomes = {"parse error": 0, "invalid": 0}
    for flipped in _flips(data):
        try:
            reviews = parse_signatures(flipped, "burn.signatures")
        except SignatureError:
            outcomes["parse error"] += 1
            continue
        results = verify_reviews(reviews, keys, DIGEST, 3, case_id="burn")
        assert results and not any(r.valid for r in results), flipped
        for r in results:
            outcomes[r.status] = outcomes.get(r.status, 0) + 1
    assert sum(outcomes.values()) == 3 * len(data)
    assert outcomes["invalid"] >= 200   # the signature check itself caught these


BASE64_ALPHABET = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/"


@pytest.mark.parametrize("field", ["key", "signature"])
def test_every_bit_of_every_base64_character_is_caught(field):
    # Flips in base64 space, including the unused bits of the last character
    # before '=', which decode to the same bytes.
    key = rfc_key()
    review = review_by(key)
    keys = [trusted(key)]
    value = getattr(review, field)
    count = 0
    for i, char in enumerate(value.rstrip("=")):
        for bit in range(6):
            other = BASE64_ALPHABET[BASE64_ALPHABET.index(char) ^ (1 << bit)]
            changed = replace(review, **{field: value[:i] + other + value[i + 1:]})
            data = changed.to_text().encode("utf-8")
            try:
                reviews = parse_signatures(data, "burn.signatures")
            except SignatureError:
                count += 1
                continue
            assert status_of(reviews[0], keys).status == "invalid", (i, bit)
            count += 1
    assert count >= 6 * 43


def test_every_flip_of_a_trusted_key_line_is_caught():
    key = rfc_key()
    review = review_by(key)
    head = b"# keys the board trusts\n"
    line = (trusted(key).to_line() + "\n").encode("utf-8")
    data = head + line
    assert status_of(review, parse_trusted_keys(data, "t")).valid
    checked = 0
    for flipped in _flips(data, start=len(head)):
        checked += 1
        try:
            keys = parse_trusted_keys(flipped, "trusted-keys.txt")
        except SignatureError:
            continue
        assert status_of(review, keys).status == "untrusted-key", flipped
    assert checked == 3 * len(line) >= 200


# --------------------------------------------------------------------------
# Private keys


@pytest.mark.parametrize("mode", [0o644, 0o640, 0o604, 0o660, 0o666])
def test_private_key_readable_by_others_is_refused(tmp_path, mode):
    path = tmp_path / "k.key"
    write_private_key(path, generate_keypair("A", "B")[0])
    os.chmod(path, mode)
    with pytest.raises(SignatureError) as info:
        load_private_key(path)
    assert str(info.value) == (f"key file {path} is readable by others (mode {mode:04o}); "
                               f"run chmod 600 {path}")


def test_private_key_mode_0644_message_is_exact(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    write_private_key("k.pem", generate_keypair("A", "B")[0])
    os.chmod("k.pem", 0o644)
    with pytest.raises(SignatureError) as info:
        load_private_key("k.pem")
    assert str(info.value) == "key file k.pem is readable by others (mode 0644); run chmod 600 k.pem"
    os.chmod("k.pem", 0o620)
    with pytest.raises(SignatureError, match=r"is open to others \(mode 0620\)"):
        load_private_key("k.pem")


@pytest.mark.parametrize("mode", [0o600, 0o400])
def test_private_key_for_the_owner_only_is_accepted(tmp_path, mode):
    path = tmp_path / "k.key"
    pem, line = generate_keypair("A", "B")
    write_private_key(path, pem)
    os.chmod(path, mode)
    assert line.split(" ")[1] == public_key_text(load_private_key(path))


def test_write_private_key_is_0600_from_the_start_and_never_overwrites(tmp_path):
    path = tmp_path / "k.key"
    old_umask = os.umask(0)
    try:
        write_private_key(path, b"first")
    finally:
        os.umask(old_umask)
    assert stat.S_IMODE(path.stat().st_mode) == 0o600
    with pytest.raises(SignatureError) as info:
        write_private_key(path, b"second")
    assert str(info.value) == (f"{path}: the key file exists already; refusing to overwrite it "
                               "(choose another folder or move the old key away first)")
    assert path.read_bytes() == b"first"


def test_a_file_that_is_not_a_key_is_refused(tmp_path):
    path = tmp_path / "k.key"
    write_private_key(path, b"hello\n")
    with pytest.raises(SignatureError) as info:
        load_private_key(path)
    assert str(info.value) == (f"{path}: the file does not hold a PEM private key "
                               "(make one with 'dossier keygen')")


@pytest.mark.parametrize("name, role, message", [
    ("A | B", "C", "key 'name': the name must not contain '|' (it separates name and role in "
                   "trusted-keys.txt)"),
    ("", "C", "key 'name': 'name' is empty"),
    ("A", "C\tD", "key 'role': the value of 'role': column 2 holds a tab (U+0009), which is "
                  "not allowed"),
])
def test_generate_keypair_refuses_bad_names(name, role, message):
    with pytest.raises(SignatureError) as info:
        generate_keypair(name, role)
    assert str(info.value) == message


# --------------------------------------------------------------------------
# Append only


def test_signature_file_is_append_only(tmp_path):
    key = rfc_key()
    path = tmp_path / "burn.signatures"
    append_signature(path, review_by(key))
    before = path.read_bytes()
    second = review_by(key, verdict="declined", conditions="", date=datetime.date(2026, 12, 1))
    append_signature(path, second)
    after = path.read_bytes()
    assert after[:len(before)] == before
    assert after[len(before):] == b"\n" + second.to_text().encode("utf-8")
    first, again = load_signatures(path)
    assert (first, again) == (review_by(key), second)
    assert (first.line, again.line) == (1, 13)


def test_append_refuses_wrong_file_damaged_file_and_bad_signature(tmp_path):
    key = rfc_key()
    good = review_by(key)
    with pytest.raises(SignatureError, match="belongs in burn.signatures"):
        append_signature(tmp_path / "other.signatures", good)
    damaged = tmp_path / "burn.signatures"
    damaged.write_bytes(b"format: dossier-review-1\n")
    with pytest.raises(SignatureError, match="field 'case' is missing after 'format'"):
        append_signature(damaged, good)
    assert damaged.read_bytes() == b"format: dossier-review-1\n"
    damaged.unlink()
    with pytest.raises(SignatureError, match="signature does not verify; not appended"):
        append_signature(damaged, replace(good, conditions="Other."))
    assert not damaged.exists()


# --------------------------------------------------------------------------
# Malformed files: line-numbered messages


def _block_lines() -> list[str]:
    return review_by(rfc_key()).to_text().split("\n")[:-1]


def _text(lines: list[str]) -> bytes:
    return ("\n".join(lines) + "\n").encode("utf-8")


def _error(data: bytes, parse=parse_signatures, name="burn.signatures") -> str:
    with pytest.raises(SignatureError) as info:
        parse(data, name)
    return str(info.value)


ORDER = ("the fields of a signed review are format, case, revision, digest, signer, role, "
         "date, verdict, conditions, key, signature, in this order")


@pytest.mark.parametrize("line, text, message", [
    (3, "revision: 2a", "revision '2a' is not a whole number of 1 or more"),
    (3, "revision: 03", "revision '03' is not a whole number of 1 or more"),
    (2, "cbse: burn", "unknown field 'cbse'; did you mean 'case'?"),
    (2, "revision: 3", f"field 'revision' found where 'case' belongs; {ORDER}"),
    (4, "digest: abc", "digest 'abc' is not 64 lowercase hexadecimal characters (SHA-256)"),
    (7, "date: 2026-02-30", "date '2026-02-30' is not a calendar date written YYYY-MM-DD"),
    (7, "date: 20261120", "date '20261120' is not a calendar date written YYYY-MM-DD"),
    (8, "verdict: approved",
     "verdict 'approved' is not one of accepted, accepted-with-conditions, declined"),
    (1, "format: dossier-review-3",
     "unknown format 'dossier-review-3'; this version of dossier reads 'dossier-review-1' and "
     "'dossier-review-2'"),
    (10, "key: abc", "the public key is not valid base64"),
    (10, "key: " + base64.b64encode(bytes(31)).decode(),
     "the public key must be 32 bytes, this one is 31"),
    (5, "signer: R.\tExample", "column 11 holds a tab (U+0009), which is not allowed"),
    (5, "signer: R. Example\r", "column 19 holds a carriage return (U+000D), which is not allowed"),
    (5, "signer: R. \u202eelpmaxE",
     "column 12 holds a control or text-direction character (U+202E), which is not allowed"),
    (9, "conditions: ", "the value of 'conditions' starts or ends with a space"),
    (5, "signer:R. Example", "expected 'name: value', got 'signer:R. Example'"),
    (5, "   ", "expected 'name: value', got '   '"),
])
def test_malformed_signature_lines(line, text, message):
    lines = _block_lines()
    lines[line - 1] = text
    assert _error(_text(lines)) == f"burn.signatures:{line}: {message}"


def test_non_standard_base64_is_refused():
    lines = _block_lines()
    key = lines[9][len("key: "):]
    alphabet = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/"
    # The last character before '=' carries two unused bits: flip one of them.
    odd = key[:42] + alphabet[alphabet.index(key[42]) ^ 1] + "="   # same 32 bytes, other spelling
    assert base64.b64decode(odd) == base64.b64decode(key)
    lines[9] = "key: " + odd
    assert _error(_text(lines)) == (
        f"burn.signatures:10: the public key is not in standard base64 form (that would be {key})")


def test_structural_errors_name_the_right_line():
    lines = _block_lines()
    assert _error(_text(lines[:10])) == (
        f"burn.signatures:10: field 'signature' is missing after 'key'; {ORDER}")
    assert _error(_text(lines + ["note: x"])) == (
        "burn.signatures:12: field 'note' after 'signature'; every review ends with its "
        "signature line, followed by an empty line")
    assert _error(_text(lines)[:-1]) == (
        "burn.signatures:11: the file does not end with a line break; it may have been cut "
        "short while being written")
    accepted = list(lines)
    accepted[7] = "verdict: accepted"
    assert _error(_text(accepted)) == (
        "burn.signatures:9: verdict 'accepted' has conditions; use 'accepted-with-conditions'")
    raw = bytearray(_text(lines))
    raw[raw.index(b"R. Example")] = 0xFF
    assert _error(bytes(raw)) == (
        f"burn.signatures:5: the file is not valid UTF-8: byte {raw.index(0xFF)} (0xff) "
        "cannot be decoded")


def test_errors_in_several_blocks_are_all_reported_with_their_lines():
    lines = _block_lines()
    second = list(lines)
    second[2] = "revision: x"
    first = list(lines)
    first[6] = "date: soon"
    assert _error(_text(first + [""] + second)) == (
        "burn.signatures:7: date 'soon' is not a calendar date written YYYY-MM-DD\n"
        "burn.signatures:15: revision 'x' is not a whole number of 1 or more")


def test_blocks_may_be_separated_by_several_empty_lines_and_an_empty_file_has_none():
    lines = _block_lines()
    reviews = parse_signatures(_text([""] + lines + ["", "", ""] + lines), "x")
    assert [r.line for r in reviews] == [2, 16]
    assert parse_signatures(b"", "x") == ()


KEY = base64.b64encode(bytes.fromhex(RFC8032_T1_PUBLIC)).decode()


@pytest.mark.parametrize("text, message", [
    (f"ed25519 {KEY} R. Example process safety",
     "missing '|' between the name and the role (write: <name> | <role>)"),
    (f"rsa {KEY} R. Example | QA",
     "a key line starts with 'ed25519', not 'rsa'; write: ed25519 <public key> <name> | <role>"),
    (f"{KEY} R. Example | QA",
     f"a key line starts with 'ed25519', not '{KEY[:40]}...'; write: ed25519 <public key> "
     "<name> | <role>"),
    (f"ed25519 {KEY}", "expected 'ed25519 <public key> <name> | <role>'"),
    ("ed25519 abc R. Example | QA", "the public key is not valid base64"),
    (f"ed25519 {base64.b64encode(bytes(31)).decode()} R. Example | QA",
     "the public key must be 32 bytes, this one is 31"),
    (f"ed25519 {KEY}  | QA", "the name before '|' is empty"),
    (f"ed25519 {KEY} R. Example |  ", "the role after '|' is empty"),
    (f"ed25519\t{KEY} R. Example | QA", "column 8 holds a tab (U+0009), which is not allowed"),
    (f"ed25519 {KEY} R. Example | QA\r",
     "column 69 holds a carriage return (U+000D), which is not allowed"),
])
def test_malformed_trusted_key_lines(text, message):
    data = f"# board keys\n\n{text}\n".encode("utf-8")
    assert _error(data, parse_trusted_keys, "trusted-keys.txt") == f"trusted-keys.txt:3: {message}"


def test_trusted_keys_file_reads_names_roles_and_reports_duplicates():
    other = public_key_text(Ed25519PrivateKey.generate())
    data = (f"\ufeff# board\n   # indented comment\nED25519 {KEY} A | B\n"
            f"ed25519 {KEY}   R. Example  |  process | safety  \n"
            f"ed25519 {other} A. Other | QA\n"
            f"ed25519 {KEY} R. Example | process safety\n").encode("utf-8")
    assert _error(data, parse_trusted_keys, "t.txt") == (
        "t.txt:3: a key line starts with 'ed25519', not 'ED25519'; write: ed25519 <public key> "
        "<name> | <role>\n"
        "t.txt:6: this key is listed already on line 4; list each key once")
    keys = parse_trusted_keys(b"\n".join(data.split(b"\n")[:2] + data.split(b"\n")[3:5]), "t.txt")
    assert [(k.name, k.role, k.line) for k in keys] == [
        ("R. Example", "process | safety", 3), ("A. Other", "QA", 4)]
    assert keys[1].to_line() == trusted_key_line(other, "A. Other", "QA")


# --------------------------------------------------------------------------
# The commands

CASE = """+++
title = "Hydrogen burn"
revision = 2
status = "submitted"
reaction = "2 H2(g) + O2(g) -> 2 H2O(l)"
temperature = ["20 degC", "78 degC"]
+++
Narrative.
"""


@pytest.fixture()
def cli():
    group = _Group(commands=list(COMMANDS))
    runner = CliRunner()
    return lambda *args: runner.invoke(group, [str(a) for a in args])


@pytest.fixture()
def board(tmp_path, cli):
    """A cases folder with one case and a trusted key; the key file in keys/."""
    cases = tmp_path / "cases"
    cases.mkdir()
    (cases / "burn.md").write_text(CASE, encoding="utf-8")
    result = cli("keygen", "--name", "R. Example", "--role", "process safety",
                 "--out", tmp_path / "keys")
    assert result.exit_code == 0, result.output
    line = result.stdout.strip().splitlines()[-1]
    (cases / "trusted-keys.txt").write_text(f"# board\n{line}\n", encoding="utf-8")
    return cases, tmp_path / "keys" / "r-example.key", line


def test_keygen_writes_a_0600_key_and_prints_its_trusted_line(board):
    _, key_path, line = board
    assert key_path.name == key_file_name("R. Example") == "r-example.key"
    assert stat.S_IMODE(key_path.stat().st_mode) == 0o600
    (entry,) = parse_trusted_keys(line.encode(), "line")
    assert (entry.name, entry.role) == ("R. Example", "process safety")
    assert entry.key == public_key_text(load_private_key(key_path))


def test_keygen_refuses_to_overwrite(board, cli):
    _, key_path, _ = board
    before = key_path.read_bytes()
    result = cli("keygen", "--name", "R. Example", "--role", "x", "--out", key_path.parent)
    assert result.exit_code == 2
    assert "the key file exists already; refusing to overwrite it" in result.stderr
    assert key_path.read_bytes() == before


def test_sign_and_verify_commands(board, cli):
    cases, key_path, _ = board
    result = cli("sign", cases / "burn.md", "--key", key_path, "--verdict",
                 "accepted-with-conditions", "--conditions", CONDITIONS, "--date", "2026-11-20")
    assert result.exit_code == 0, result.output
    assert f"Appended to {cases / 'burn.signatures'}." in result.stdout
    assert f"  condition C1: {CONDITIONS}" in result.stdout
    (review,) = load_signatures(cases / "burn.signatures")
    assert (review.case, review.revision, review.signer, review.role, review.date) == (
        "burn", 2, "R. Example", "process safety", DATE)
    assert review.format == "dossier-review-2"
    assert review.condition_list == (("C1", CONDITIONS),)

    result = cli("verify", cases)
    assert result.exit_code == 0, result.output
    assert result.stdout.splitlines()[2].split() == [
        "burn", "2", "R.", "Example", "2026-11-20", "accepted-with-conditions", "valid"]
    assert "1 signatures: 1 valid, 0 changed-since-signed, 0 untrusted-key, 0 invalid." in result.stdout
    assert "1 current verdicts: 1 hold." in result.stdout
    assert f"  burn C1: open: {CONDITIONS}" in result.stdout

    # Append only: a second signature leaves the first block as it was, and
    # supersedes it (same signer).
    before = (cases / "burn.signatures").read_bytes()
    result = cli("sign", cases / "burn.md", "--key", key_path, "--verdict", "declined",
                 "--note", "The cooling case is missing.")
    assert result.exit_code == 0, result.output
    assert (cases / "burn.signatures").read_bytes().startswith(before + b"\n")
    result = cli("verify", cases)
    assert result.exit_code == 0, result.output
    assert ("2 signatures: 1 valid, 0 changed-since-signed, 1 superseded, 0 untrusted-key, "
            "0 invalid.") in result.stdout
    assert (f"    replaced by R. Example's verdict of {datetime.date.today().isoformat()} on "
            "revision 2; kept in the history") in result.stdout
    assert "Conditions:" not in result.stdout  # the declined verdict sets none

    # One changed byte in the narrative: the current verdict no longer holds.
    case = cases / "burn.md"
    case.write_bytes(case.read_bytes().replace(b"Narrative.", b"Narrativ!."))
    result = cli("verify", cases)
    assert result.exit_code == 1
    assert result.stdout.count("changed-since-signed") == 2  # the row and the counts
    assert ("signed for this revision (2), but the case file or the data it uses (species "
            "records, library or dossier version, method settings) changed since, without a "
            "new revision number; changed since signing: the case file's content; unchanged: "
            "the species records used, the method settings and board policy, the versions of "
            "the data library, dossier and method libraries") in result.stdout


def test_verify_exit_2_on_a_damaged_signature_file(board, cli):
    cases, key_path, _ = board
    assert cli("sign", cases / "burn.md", "--key", key_path, "--verdict", "accepted").exit_code == 0
    path = cases / "burn.signatures"
    path.write_bytes(path.read_bytes().replace(b"revision: 2", b"revision: two"))
    result = cli("verify", cases)
    assert result.exit_code == 2
    assert f"error: {path}:3: revision 'two' is not a whole number of 1 or more" in result.stderr


def test_verify_flags_an_untrusted_signature_with_exit_1(board, cli, tmp_path):
    cases, _, _ = board
    other = tmp_path / "other.key"
    write_private_key(other, generate_keypair("X", "Y")[0])
    result = cli("sign", cases / "burn.md", "--key", other, "--verdict", "accepted")
    assert result.exit_code == 2
    assert "this key is not in" in result.stderr and "give --signer and --role" in result.stderr
    result = cli("sign", cases / "burn.md", "--key", other, "--verdict", "accepted",
                 "--signer", "X", "--role", "Y")
    assert result.exit_code == 0 and "untrusted-key until it is added" in result.stderr
    result = cli("verify", cases)
    assert result.exit_code == 1
    assert "untrusted-key" in result.stdout


def test_sign_refuses_a_name_the_trusted_keys_do_not_give(board, cli):
    cases, key_path, _ = board
    result = cli("sign", cases / "burn.md", "--key", key_path, "--verdict", "accepted",
                 "--signer", "Someone Else")
    assert result.exit_code == 2
    assert ("error: key '--signer': 'Someone Else' differs from 'R. Example', which "
            "trusted-keys.txt lists for this key") in result.stderr
    assert not (cases / "burn.signatures").exists()


def test_sign_refuses_a_bad_date_and_a_readable_key(board, cli):
    cases, key_path, _ = board
    result = cli("sign", cases / "burn.md", "--key", key_path, "--verdict", "accepted",
                 "--date", "20.11.2026")
    assert result.exit_code == 2
    assert "error: key '--date': '20.11.2026' is not a calendar date written YYYY-MM-DD" in result.stderr
    os.chmod(key_path, 0o644)
    result = cli("sign", cases / "burn.md", "--key", key_path, "--verdict", "accepted")
    assert result.exit_code == 2
    assert (f"error: key file {key_path} is readable by others (mode 0644); "
            f"run chmod 600 {key_path}") in result.stderr


def test_verify_without_trusted_keys_or_with_an_orphan_signature_file(board, cli):
    cases, key_path, _ = board
    assert cli("sign", cases / "burn.md", "--key", key_path, "--verdict", "accepted").exit_code == 0
    (cases / "trusted-keys.txt").unlink()
    result = cli("verify", cases)
    assert result.exit_code == 1
    assert "does not exist; no signature can be valid" in result.stderr
    (cases / "burn.md").rename(cases / "gone.txt")
    result = cli("verify", cases)
    assert result.exit_code == 2
    assert f"there is no case file {cases / 'burn.md'} for these signatures" in result.stderr


# --------------------------------------------------------------------------
# verify: unreadable input is exit 2, never "not valid" (issue 16)


def test_verify_exits_2_on_a_case_with_a_5001_digit_number(board, cli):
    """Python refuses to convert a whole number of over 4,300 digits (its documented
    int_max_str_digits default, "Integer string conversion length limitation",
    Python 3.11 docs); the case is unreadable input, not a failed signature."""
    cases, key_path, _ = board
    assert cli("sign", cases / "burn.md", "--key", key_path, "--verdict", "accepted").exit_code == 0
    text = (cases / "burn.md").read_text(encoding="utf-8")
    huge = cases / "huge.md"
    huge.write_text(text.replace("revision = 2", "revision = 1" + "0" * 5000), encoding="utf-8")
    assert "revision = 2" in text
    result = cli("verify", cases)
    assert result.exit_code == 2, result.output
    assert result.exception is None or isinstance(result.exception, SystemExit)
    assert (f"error: {huge}:3: a number here has more than 4,300 digits; write the value it "
            "stands for with fewer digits") in result.stderr


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes are POSIX")
@pytest.mark.parametrize("name,what", [("burn.signatures", "signatures"),
                                       ("trusted-keys.txt", "trusted keys"),
                                       ("pipe.md", "case file")])
def test_verify_refuses_a_named_pipe_rather_than_waiting(board, cli, name, what):
    cases, key_path, _ = board
    assert cli("sign", cases / "burn.md", "--key", key_path, "--verdict", "accepted").exit_code == 0
    if name == "pipe.md":  # signatures that name the pipe's case
        (cases / "pipe.signatures").write_bytes(b"")
    path = cases / name
    path.unlink(missing_ok=True)
    os.mkfifo(path)
    with bounded(20):
        result = cli("verify", cases)
    assert result.exit_code == 2, result.output
    assert (f"{path}: cannot read the {what}: it is a named pipe (FIFO), not a regular file"
            in result.stderr), result.stderr
