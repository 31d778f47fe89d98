"""The `dossier keygen`, `dossier sign` and `dossier verify` commands.

They are plain click commands; :mod:`dossier.cli.main` adds them to the main
group, which turns a :class:`dossier.errors.DossierError` into one line per
problem and exit code 2.  ``verify`` exits 0 when every signature is valid,
1 when any signature is not (changed since signed, untrusted key, invalid)
and 2 when an input could not be read.
"""
from __future__ import annotations

import datetime
import re
import sys
from pathlib import Path

import click

from dossier.assess.evaluate import evaluate
from dossier.casefile.load import CaseSource, parse_source, read_source
from dossier.library.lookup import Library
from dossier.model.case import Case
from dossier.model.integrity import IntegrityRecord
from dossier.errors import (EXIT_BAD_INPUT, EXIT_CHECK_FAILED, EXIT_OK, DossierError, Problem,
                            SignatureError)
from dossier.review import digest as integrity
from dossier.review.digest import short_digest
from dossier.review.inputs import policy_settings, read_policy
from dossier.review.inputs import read_optional
from dossier.review.keys import (TRUSTED_KEYS_FILE, TrustedKey, generate_keypair,
                                 load_private_key, parse_trusted_keys, public_key_text,
                                 trusted_keys_path, write_private_key_in)
from dossier.review.signatures import (SIGNATURES_SUFFIX, VERDICTS, ReviewStatus, append_signature,
                                       make_review, parse_signatures, signatures_path,
                                       verify_reviews)

_DATE_RE = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}")
_TABLE_HEADER = ("case", "revision", "signer", "verdict", "status")


def key_file_name(name: str) -> str:
    """``"R. Example"`` -> ``"r-example.key"``."""
    slug = re.sub(r"[^0-9a-z]+", "-", name.lower()).strip("-")
    return f"{slug or 'signer'}.key"


def _parse_date(text: str | None) -> datetime.date:
    if text is None:
        return datetime.date.today()
    try:
        if not _DATE_RE.fullmatch(text):
            raise ValueError
        return datetime.date.fromisoformat(text)
    except ValueError:
        raise SignatureError(Problem(f"'{text}' is not a calendar date written YYYY-MM-DD",
                                     key="--date")) from None


def format_table(statuses: list[tuple[str, ReviewStatus]]) -> list[str]:
    """The table of ``verify``: one row per signature, explanations under the rows that are not valid."""
    rows = [_TABLE_HEADER] + [
        (case_id, str(s.review.revision), s.review.signer, s.review.verdict, s.status)
        for case_id, s in statuses]
    widths = [max(len(row[i]) for row in rows) for i in range(len(_TABLE_HEADER))]
    lines = []
    for index, row in enumerate(rows):
        lines.append("  ".join(cell.ljust(w) for cell, w in zip(row, widths)).rstrip())
        if index == 0:
            lines.append("  ".join("-" * w for w in widths))
        elif statuses[index - 1][1].status != "valid":
            lines.append(f"    {statuses[index - 1][1].explanation}")
    return lines


@click.command()
@click.option("--name", required=True, help="Your name as the board knows it.")
@click.option("--role", required=True, help='Your role on the board, e.g. "process safety".')
@click.option("--out", "out_dir", default=".", show_default=True,
              type=click.Path(file_okay=False, path_type=Path),
              help="Folder for the private key file.")
def keygen(name: str, role: str, out_dir: Path) -> None:
    """Make a key pair for signing reviews; prints the line for trusted-keys.txt."""
    name, role = name.strip(), role.strip()
    pem, line = generate_keypair(name, role)
    path = write_private_key_in(out_dir, key_file_name(name), pem)
    click.echo(f"Private key written to {path} (mode 0600: only you can read it).")
    click.echo("Keep it secret: not in the cases folder, not under version control.")
    click.echo("")
    click.echo(f"Your public key line; ask the board to add it to cases/{TRUSTED_KEYS_FILE}:")
    click.echo("")
    click.echo(line)


@click.command()
@click.argument("case_file", type=click.Path(dir_okay=False, path_type=Path))
@click.option("--key", "key_file", required=True,
              type=click.Path(dir_okay=False, path_type=Path), help="Your private key file.")
@click.option("--verdict", required=True, type=click.Choice(VERDICTS), help="The decision.")
@click.option("--conditions", default="", help="Conditions of the verdict (one line).")
@click.option("--signer", default=None, help=f"Your name (default: as in {TRUSTED_KEYS_FILE}).")
@click.option("--role", default=None, help=f"Your role (default: as in {TRUSTED_KEYS_FILE}).")
@click.option("--date", "date_text", default=None, metavar="YYYY-MM-DD",
              help="Date of the decision (default: today).")
def sign(case_file: Path, key_file: Path, verdict: str, conditions: str, signer: str | None,
         role: str | None, date_text: str | None) -> None:
    """Sign a verdict on CASE_FILE as it is now; appends to <id>.signatures beside it."""
    date = _parse_date(date_text)
    private_key = load_private_key(key_file)
    record, revision, case_id = integrity.digest_for_case(case_file)
    trusted = _trusted_entry(case_file.parent, public_key_text(private_key))
    if trusted is not None:
        for given, listed, option in ((signer, trusted.name, "--signer"),
                                      (role, trusted.role, "--role")):
            if given is not None and given.strip() != listed:
                raise SignatureError(Problem(
                    f"'{given.strip()}' differs from '{listed}', which {TRUSTED_KEYS_FILE} "
                    "lists for this key; leave the option out or fix the trusted keys",
                    key=option))
        signer, role = trusted.name, trusted.role
    elif signer is None or role is None:
        raise SignatureError(Problem(
            f"this key is not in {trusted_keys_path(case_file.parent)}; give --signer and "
            "--role, or have the key added to the trusted keys first", key="--key"))
    review = make_review(private_key, case_id, revision, record.digest, signer.strip(),
                         role.strip(), verdict, conditions.strip(), date)
    target = signatures_path(case_file)
    append_signature(target, review)
    click.echo(f"Signed case {case_id}, revision {revision} (integrity {short_digest(record.digest)}): "
               f"{verdict}, by {review.signer} ({review.role}), {date.isoformat()}.")
    click.echo(f"Appended to {target}.")
    if trusted is None:
        click.echo(f"warning: the key is not in {TRUSTED_KEYS_FILE}; 'dossier verify' shows "
                   "this signature as untrusted-key until it is added.", err=True)


class _CasesSeen:
    """Each case file of a ``verify`` run read once, parsed once and digested at most once."""

    def __init__(self) -> None:
        self._sources: dict[Path, tuple[CaseSource, Case]] = {}
        self._records: dict[Path, IntegrityRecord] = {}

    def case(self, case_file: Path) -> Case:
        if case_file not in self._sources:
            source = read_source(case_file)
            self._sources[case_file] = (source, parse_source(source))
        return self._sources[case_file][1]

    def record(self, case_file: Path) -> IntegrityRecord:
        if case_file not in self._records:
            case = self.case(case_file)
            source = self._sources[case_file][0]
            self._records[case_file] = integrity.integrity_of(
                source, evaluate(case, Library.default(),
                                 settings=policy_settings(read_policy(case_file.parent))))
        return self._records[case_file]


def _read_or_refuse(path: Path, what: str) -> bytes:
    """The bytes of a regular file (a named pipe, device or socket is refused
    rather than waited on); a :class:`SignatureError` naming it otherwise."""
    read = read_optional(path, what)
    if read.data is None:
        why = (read.problem or f"cannot read the {what}: no such file")
        raise SignatureError(Problem(why.removeprefix(f"{path}: "), str(path)))
    return read.data


def _trusted_keys(path: Path) -> tuple[TrustedKey, ...]:
    return parse_trusted_keys(_read_or_refuse(path, "trusted keys"), str(path))


def _trusted_entry(cases_dir: Path, key: str) -> TrustedKey | None:
    path = trusted_keys_path(cases_dir)
    if not path.exists():
        return None
    return next((k for k in _trusted_keys(path) if k.key == key), None)


@click.command()
@click.argument("cases_dir", default="cases", type=click.Path(file_okay=False, path_type=Path))
def verify(cases_dir: Path) -> None:
    """Check every signature in CASES_DIR against the cases as they are now.

    Exit code 0: all valid; 1: a case changed since it was signed, or a
    signature is untrusted or invalid; 2: an input could not be read.
    """
    if not cases_dir.is_dir():
        raise SignatureError(Problem("no such folder", str(cases_dir)))
    keys_file = trusted_keys_path(cases_dir)
    if keys_file.exists():
        trusted = _trusted_keys(keys_file)
    else:
        trusted = ()
        click.echo(f"warning: {keys_file} does not exist; no signature can be valid.", err=True)

    results: list[tuple[str, ReviewStatus]] = []
    recorded: list[tuple[str, integrity.RecordedReview]] = []
    bad_input = False
    cases = _CasesSeen()

    def report(err: DossierError) -> None:
        nonlocal bad_input
        bad_input = True
        for problem in err.problems:
            click.echo(f"error: {problem}", err=True)

    for sig_file in sorted(cases_dir.glob("*" + SIGNATURES_SUFFIX)):
        case_id = sig_file.name[:-len(SIGNATURES_SUFFIX)]
        case_file = sig_file.with_name(case_id + ".md")
        try:
            reviews = parse_signatures(_read_or_refuse(sig_file, "signatures"), str(sig_file))
            if not case_file.exists():
                raise SignatureError(Problem(f"there is no case file {case_file} for these "
                                             "signatures", str(sig_file)))
            record, revision = cases.record(case_file), cases.case(case_file).revision
        except DossierError as err:
            report(err)
            continue
        results += [(case_id, s) for s in
                    verify_reviews(reviews, trusted, record.digest, revision, case_id=case_id)]

    # Verdicts recorded in the case files' [[review]] tables name the digest
    # they accepted; a case changed since then is reported the same way.
    for case_file in sorted(cases_dir.glob("*.md")):
        try:
            case = cases.case(case_file)
            if not case.reviews:
                continue
            record = cases.record(case_file)
        except DossierError as err:
            report(err)
            continue
        recorded += [(case.id, r) for r in integrity.check_recorded_reviews(case.reviews, record.digest)]

    if results:
        for line in format_table(results):
            click.echo(line)
        click.echo("")
    counts = {s: sum(1 for _, r in results if r.status == s)
              for s in ("valid", "changed-since-signed", "untrusted-key", "invalid")}
    click.echo(f"{len(results)} signatures: " + ", ".join(f"{n} {s}" for s, n in counts.items()) + ".")
    changed = [(cid, r) for cid, r in recorded if r.status == "changed since reviewed"]
    if recorded:
        click.echo("")
        click.echo("Verdicts recorded in the case files:")
        for cid, r in recorded:
            click.echo(f"  {cid}: {r.verdict} by {r.name} ({r.role}) on {r.date}: {r.status}")
        click.echo(f"{len(recorded)} recorded verdicts: {len(changed)} changed since reviewed.")
    if bad_input:
        sys.exit(EXIT_BAD_INPUT)
    ok = counts["valid"] == len(results) and not changed
    sys.exit(EXIT_OK if ok else EXIT_CHECK_FAILED)


#: The commands of this module, for ``main.add_command``.
COMMANDS = (keygen, sign, verify)
