"""Integrity records: the documented serialisation, and sensitivity to every input."""
from __future__ import annotations

import hashlib
import json
import math
from pathlib import Path

import pytest

from dossier.assess.evaluate import assess_case
from dossier.casefile.load import load_case, read_source
from dossier.engine.settings import DEFAULT
from dossier.errors import CaseError, LibraryError, SpeciesError
from dossier.library.lookup import Library
from dossier.review.digest import (INTEGRITY_FORMAT, IntegrityRecord, canonical_json, case_digest,
                               check_recorded_reviews, content_bytes, digest_for_case,
                               short_digest)
from paths import FIXTURES

FIXTURES = FIXTURES / "cases"

# SHA-256("abc"): FIPS 180-2, Appendix B.1 (SHA-256 example, one-block message).
SHA256_ABC = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"

# A species record shaped like SpeciesRecord.to_dict(); invented values (test data only).
RECORD = {
    "id": "H2O(l)", "name": "water", "aliases": ["aqua"], "formula": "H2O",
    "elements": [["H", 2.0], ["O", 1.0]], "charge": 0, "phase": "l",
    "model": {"kind": "nasa7", "ranges": [273.15, 600.0],
              "coeffs": [[72.55, -0.6624, 0.002562, -4.366e-06, 2.782e-09, -41886.5, -288.28]]},
    "source": "invented for a test", "note": "", "uncertainty": [["hf", 40.0]],
    "stable_range": [273.15, 373.12], "cas": "7732-18-5", "molar_mass": 18.015,
}
OTHER = {"id": "H2(g)", "name": "hydrogen", "phase": "g", "molar_mass": 2.016}
SETTINGS = {"severity_bands_K": [["low", None, 50.0], ["high", 200.0, None]], "td24_h": 24}


def _digest(case=b"case text\n", records=(RECORD, OTHER), library="L1", tool="T1",
            settings=SETTINGS) -> str:
    return case_digest(case, records, library, tool, settings).digest


def _sha(text: str) -> str:
    return hashlib.sha256(text.encode("ascii")).hexdigest()


def test_known_answer_follows_the_documented_serialisation():
    # The expected bytes are written out by hand from docs/signatures.md.
    record = case_digest(b"abc", [{"id": "X(g)", "b": 1, "a": "\u00e9"}], "L1", "T1",
                         {"z": 1.5, "a": [1, None, True]})
    species = _sha('{"a":"\\u00e9","b":1,"id":"X(g)"}')
    settings = _sha('{"a":[1,null,true],"z":1.5}')
    manifest = ('{"case":"' + SHA256_ABC + '","format":"dossier-integrity-2",'
                '"library_version":"L1","settings":"' + settings + '",'
                '"species":[["X(g)","' + species + '"]],"tool_version":"T1"}')
    assert record.case_file_digest == SHA256_ABC
    assert record.species_digests == (("X(g)", species),)
    assert record.settings_digest == settings
    assert record.digest == _sha(manifest)
    assert record.format == INTEGRITY_FORMAT == "dossier-integrity-2"


def test_to_dict_carries_the_manifest_and_the_digest():
    record = case_digest(b"abc", [OTHER], "L1", "T1", {})
    data = record.to_dict()
    assert data["digest"] == record.digest
    assert data["case"] == SHA256_ABC
    assert data["species"] == [["H2(g)", record.species_digests[0][1]]]
    assert (data["library_version"], data["tool_version"]) == ("L1", "T1")
    manifest = {k: v for k, v in data.items() if k != "digest"}
    text = json.dumps(manifest, sort_keys=True, separators=(",", ":"), ensure_ascii=True)
    assert _sha(text) == record.digest
    with pytest.raises(AttributeError):
        record.digest = "0" * 64  # frozen


def test_short_form_is_twelve_hex_characters_in_groups_of_four():
    assert short_digest(SHA256_ABC) == "ba78 16bf 8f01"
    assert case_digest(b"abc", [], "L", "T", {}).short == short_digest(
        case_digest(b"abc", [], "L", "T", {}).digest)


def test_order_of_records_and_keys_does_not_matter_and_duplicates_count_once():
    reordered = dict(reversed(list(RECORD.items())))
    settings = dict(reversed(list(SETTINGS.items())))
    assert _digest(records=(OTHER, reordered), settings=settings) == _digest()
    assert _digest(records=(RECORD, OTHER, RECORD)) == _digest()
    # Sorted by id: H2(g) before H2O(l).
    ids = [sid for sid, _ in case_digest(b"", (RECORD, OTHER), "L", "T", {}).species_digests]
    assert ids == ["H2(g)", "H2O(l)"]


def test_every_single_bit_flip_of_the_case_file_changes_the_digest():
    data = (FIXTURES / "full.md").read_bytes()
    original = _digest(case=data)
    seen = {original}
    for position in range(len(data)):
        for mask in (0x01, 0x80):
            flipped = bytearray(data)
            flipped[position] ^= mask
            digest = _digest(case=bytes(flipped))
            assert digest not in seen, (position, mask)
            seen.add(digest)
    assert len(seen) == 2 * len(data) + 1
    assert _digest(case=data + b"\n") != original
    assert _digest(case=data[:-1]) != original


def _leaf_mutations(value, path=()):
    """(path, changed value) for one small change of every leaf of a JSON value."""
    if isinstance(value, dict):
        for key, item in value.items():
            yield from _leaf_mutations(item, path + (key,))
    elif isinstance(value, list):
        for index, item in enumerate(value):
            yield from _leaf_mutations(item, path + (index,))
    elif isinstance(value, str):
        for i, char in enumerate(value):
            yield path, value[:i] + chr(ord(char) ^ 1) + value[i + 1:]
        yield path, value + " "
    elif isinstance(value, bool):
        yield path, not value
    elif isinstance(value, int):
        yield path, value + 1
        yield path, float(value)          # 0 and 0.0 are different record values
    elif isinstance(value, float):
        yield path, math.nextafter(value, math.inf)
        yield path, math.nextafter(value, -math.inf)
        yield path, -value
    elif value is None:
        yield path, 0


def _set(record, path, new):
    copy = json.loads(json.dumps(record))
    target = copy
    for step in path[:-1]:
        target = target[step]
    target[path[-1]] = new
    return copy


@pytest.mark.parametrize("which", ["invented", "library"])
def test_every_change_to_a_species_record_value_changes_the_digest(which):
    from dossier.library.lookup import Library

    record = RECORD if which == "invented" else Library.default().resolve("H2O", "l").to_dict()
    original = _digest(records=(record, OTHER))
    count = 0
    for path, new in _leaf_mutations(record):
        changed = _set(record, path, new)
        assert _digest(records=(changed, OTHER)) != original, (path, new)
        count += 1
    assert count >= (100 if which == "invented" else 200)


def test_every_bit_flip_of_a_record_s_json_that_still_parses_changes_the_digest():
    text = json.dumps(RECORD, sort_keys=True).encode("ascii")
    original = _digest()
    parsed = 0
    for position in range(len(text)):
        flipped = bytearray(text)
        flipped[position] ^= 0x01
        try:
            changed = json.loads(bytes(flipped))
        except ValueError:
            continue
        if not isinstance(changed, dict) or not isinstance(changed.get("id"), str):
            continue
        parsed += 1
        assert _digest(records=(changed, OTHER)) != original, position
    assert parsed >= 200


def test_versions_and_settings_are_part_of_the_digest():
    original = _digest()
    assert _digest(library="L2") != original
    assert _digest(tool="T2") != original
    assert _digest(settings={**SETTINGS, "td24_h": 25}) != original
    assert _digest(settings={**SETTINGS, "extra": None}) != original
    assert _digest(records=(RECORD,)) != original
    # A field must not be able to stand in for another: same text, other slot.
    assert _digest(library="T1", tool="L1") != original


@pytest.mark.parametrize("settings, error, text", [
    ({"t": math.inf}, ValueError, "value.t is inf; only finite numbers can be digested"),
    ({"t": [math.nan]}, ValueError, "value.t[0] is nan"),
    ({1: "a"}, TypeError, "value has the key 1; keys must be strings"),
    ({"t": {1, 2}}, TypeError, "value.t is a set; only JSON values can be digested"),
])
def test_settings_that_are_not_plain_json_are_refused(settings, error, text):
    with pytest.raises(error) as info:
        case_digest(b"", [], "L", "T", settings)
    assert text in str(info.value)


def test_a_species_record_without_id_is_refused():
    with pytest.raises(LibraryError, match="a species record without a text id"):
        case_digest(b"", [{"name": "water"}], "L", "T", {})


def test_canonical_json_escapes_non_ascii_and_has_no_whitespace():
    assert canonical_json({"b": [1, 2.5], "a": "Δ"}) == '{"a":"\\u0394","b":[1,2.5]}'


CASE_TEXT = """+++
title = "Intermediate burn"
revision = 2
status = "submitted"
reaction = "intermediate B(l) + 9.25 O2(g) -> 8 CO2(g) + 4.5 H2O(l) + 0.5 N2(g)"
temperature = ["20 degC", "78 degC"]
inerts = {{ "Ar(g)" = "0.5 mol" }}

[[species]]
name = "intermediate B"
formula = "C8H9NO2"
phase = "l"
hf = "-310 kJ/mol"
s = "250 J/(mol*K)"
cp = "290 J/(mol*K)"
source = "{source}"
+++
Narrative.
"""


def _used_ids(path) -> set[str]:
    """The record ids the assessment itself reports using: its reaction terms, and the
    decomposition products of the energetic screening (intermediate B has N and O)."""
    lib = Library.default()
    a = assess_case(load_case(path), lib)
    products = set()
    for _name, label, phase in DEFAULT.decomposition_products:
        try:
            products.add(lib.resolve(label, phase).id)
        except SpeciesError:
            pass
    assert a.safety is not None and a.safety.energetics  # the screening ran
    return {u.record_id for u in a.species} | products


def test_digest_for_case_covers_exactly_the_records_the_assessment_used(tmp_path):
    path = tmp_path / "burn.md"
    path.write_text(CASE_TEXT.format(source="estimate"), encoding="utf-8")
    record, revision, case_id = digest_for_case(path)
    assert (revision, case_id) == (2, "burn")
    assert record.case_file_digest == hashlib.sha256(content_bytes(read_source(path))).hexdigest()
    ids = [sid for sid, _ in record.species_digests]
    assert set(ids) == _used_ids(path)
    # the case's own table is a record the assessment used; the inert is used by
    # its phase only (written in the case file), so no library record of it is
    assert "intermediate B(l)" in ids and "H2O(g)" in ids and "Ar(g)" not in ids
    assert digest_for_case(path)[0] == record

    path.write_text(CASE_TEXT.format(source="estimaTe"), encoding="utf-8")
    assert digest_for_case(path)[0].digest != record.digest


def test_digest_for_case_reports_an_unknown_species_with_file_and_line(tmp_path):
    path = tmp_path / "bad.md"
    path.write_text(CASE_TEXT.format(source="x").replace("9.25 O2(g) ->", "9.25 Zz9(g) ->"),
                    encoding="utf-8")
    with pytest.raises(CaseError) as info:
        digest_for_case(path)
    problem = info.value.problems[0]
    assert (problem.file, problem.line, problem.key) == (str(path), 5, "reaction")
    assert problem.message.startswith("species 'Zz9(g)': no library species 'Zz9(g)'")


def test_digest_for_case_reports_a_missing_file(tmp_path):
    with pytest.raises(CaseError, match="cannot read the case file"):
        digest_for_case(tmp_path / "none.md")


def test_integrity_record_is_a_frozen_dataclass():
    record = IntegrityRecord("d", "c", (), "s", "L", "T")
    assert record.short == "d"
    with pytest.raises(AttributeError):
        record.tool_version = "x"


# --------------------------------------------------------------------------
# Verdicts recorded in the case file

_REVIEWED = b'''+++
title = "Neutralisation"
revision = 2
status = "accepted"
reaction = "H+(aq) + OH-(aq) -> H2O(l)"
temperature = ["20 degC", "40 degC"]

[[review]]
name = "A. Reviewer"
role = "process safety"
date = 2026-11-20
verdict = "accepted"
digest = "%s"
+++

Narrative.
'''


def _write(tmp_path, digest: str = "not yet known", body: bytes = _REVIEWED):
    p = tmp_path / "neut.md"
    p.write_bytes(body.replace(b"%s", digest.encode()))
    return p


_GUARDED = b'''+++
title = "Neutralisation"
revision = 2
status = "accepted"
reaction = "H+(aq) + OH-(aq) -> H2O(l)"
temperature = ["20 degC", "40 degC"]

[[review]]
name = "A. Reviewer"
role = "process safety"
date = 2026-11-20
verdict = "accepted-with-conditions"
conditions = "Dose acid under level control."

[charge]
basis = "OH-(aq)"
amount = "100 mol"
mass = "1000 kg"
cp = "4.1 kJ/(kg*K)"
process_temperature = "25 degC"
accumulation = "100 %"

[vessel]
mtt = "100 degC"
+++

Narrative.
'''


def _digest_of(tmp_path, data: bytes, name: str = "neut.md") -> str:
    p = tmp_path / name
    p.write_bytes(data)
    return digest_for_case(p)[0].digest


# The promises of docs/signatures.md, each against the file above.
@pytest.mark.parametrize("what, edit", [
    ("a byte-order mark", lambda d: b"\xef\xbb\xbf" + d),
    ("CRLF line endings", lambda d: d.replace(b"\n", b"\r\n")),
    ("a comment and blank lines in the header",
     lambda d: d.replace(b"[vessel]", b"# checked by the lab\n\n[vessel]")),
    ("the tables in another order",
     lambda d: d.replace(b"[vessel]\nmtt = \"100 degC\"\n", b"").replace(
         b"[charge]", b"[vessel]\nmtt = \"100 degC\"\n\n[charge]")),
    ("a second recorded verdict",
     lambda d: d.replace(b"[charge]", b'[[review]]\nname = "B"\nrole = "x"\n'
                         b'date = 2026-11-21\nverdict = "declined"\n\n[charge]')),
    ("a recorded verdict's text changed",
     lambda d: d.replace(b"level control.", b"level control and a second operator.")),
    ("a recorded verdict's condition rewritten as a table with an id",
     lambda d: d.replace(b'conditions = "Dose acid under level control."',
                         b'[[review.conditions]]\nid = "C1"\n'
                         b'text = "Dose acid under level control."')),
    ("a closure of a condition added",
     lambda d: d.replace(b"[charge]", b'[[closure]]\ncondition = "R1"\nevidence = "level '
                         b'control loop LC-4 commissioned"\nby = "M. Okafor"\n'
                         b'date = 2026-12-01\n\n[charge]')),
])
def test_edits_that_do_not_change_what_the_loader_reads_keep_the_digest(tmp_path, what, edit):
    assert _digest_of(tmp_path, edit(_GUARDED)) == _digest_of(tmp_path, _GUARDED, "base.md"), what


@pytest.mark.parametrize("what, edit", [
    # hostile: a recorded verdict's multi-line string swallows the tables that follow
    ("tables moved into a review's multi-line string",
     lambda d: d.replace(b'conditions = "Dose acid under level control."',
                         b'conditions = """Dose acid under level control.\n').replace(
                         b"mtt = \"100 degC\"\n+++", b"mtt = \"100 degC\"\n\"\"\"\n+++")),
    ("a value of a table after a review", lambda d: d.replace(b"100 degC", b"120 degC")),
    ("a value written in other units", lambda d: d.replace(b"1000 kg", b"1 t")),
    ("a key removed", lambda d: d.replace(b'mtt = "100 degC"\n', b"")),
    ("the narrative", lambda d: d.replace(b"Narrative.", b"Narrative, edited.")),
    ("trailing text in the narrative", lambda d: d + b"More.\n"),
])
def test_edits_that_change_what_the_loader_reads_change_the_digest(tmp_path, what, edit):
    edited = edit(_GUARDED)
    assert edited != _GUARDED, what
    assert _digest_of(tmp_path, edited) != _digest_of(tmp_path, _GUARDED, "base.md"), what


def test_the_swallowed_tables_are_really_gone_for_the_loader(tmp_path):
    # the hostile edit above leaves a file that parses, with no [vessel] and no [charge]:
    # the assessment reads something else, so the digest must move (it does, above)
    swallowed = _GUARDED.replace(b'conditions = "Dose acid under level control."',
                                 b'conditions = """Dose acid under level control.\n').replace(
        b"mtt = \"100 degC\"\n+++", b"mtt = \"100 degC\"\n\"\"\"\n+++")
    p = tmp_path / "swallowed.md"
    p.write_bytes(swallowed)
    case = load_case(p)
    assert case.vessel is None and case.charge is None
    assert "[vessel]" in case.reviews[0].conditions


def test_recorded_verdict_matches_then_flags_a_change(tmp_path):
    record, _, _ = digest_for_case(_write(tmp_path))
    path = _write(tmp_path, record.digest)
    from dossier.casefile.load import load_case

    case = load_case(path)
    again, _, _ = digest_for_case(path)
    assert again.digest == record.digest  # recording the digest did not change it
    assert [r.status for r in check_recorded_reviews(case.reviews, again.digest)] == ["matches"]
    # the short form printed on pages is accepted too
    short = record.short
    assert [r.status for r in check_recorded_reviews(
        load_case(_write(tmp_path, short)).reviews, again.digest)] == ["matches"]
    # Edit the window: the verdict no longer covers the case.
    path.write_bytes(path.read_bytes().replace(b"40 degC", b"45 degC"))
    changed, _, _ = digest_for_case(path)
    status = check_recorded_reviews(load_case(path).reviews, changed.digest)[0]
    assert status.status == "changed since reviewed"
    assert status.explanation.startswith(f"the verdict names digest {record.short}")


def test_verify_exits_1_when_a_recorded_verdict_no_longer_matches(tmp_path):
    from click.testing import CliRunner

    from dossier.cli.main import main

    record, _, _ = digest_for_case(_write(tmp_path))
    path = _write(tmp_path, record.digest)
    runner = CliRunner()
    ok = runner.invoke(main, ["verify", str(tmp_path)])
    assert ok.exit_code == 0, ok.output
    assert "neut: accepted by A. Reviewer (process safety) on 2026-11-20: matches" in ok.output
    path.write_bytes(path.read_bytes().replace(b"Narrative.", b"Narrative, edited."))
    bad = runner.invoke(main, ["verify", str(tmp_path)])
    assert bad.exit_code == 1
    assert ("1 recorded verdicts: 0 matches, 1 changed since reviewed, 0 not checkable: "
            "no digest.") in bad.output
