"""The `dossier keygen`, `dossier sign`, `dossier withdraw` and `dossier verify` commands.

They are plain click commands; :mod:`dossier.cli.main` adds them to the main
group, which turns a :class:`dossier.errors.DossierError` into one line per
problem and exit code 2.  ``verify`` judges the current verdicts (a signer's
latest entry; superseded ones are history) and exits 0 when every one holds,
1 when any does not (changed since signed, untrusted key, invalid, a recorded
verdict changed since reviewed) and 2 when an input could not be read.
"""
from __future__ import annotations

import datetime
import re
import sys
from pathlib import Path

import click

from dossier.casefile.load import CaseSource, header_of, parse_source, read_source
from dossier.model.case import Case, Status
from dossier.errors import (EXIT_BAD_INPUT, EXIT_CHECK_FAILED, EXIT_OK, DossierError, Problem,
                            SignatureError)
from dossier.review import digest as integrity
from dossier.review.conditions import next_condition_number, track_conditions
from dossier.review.digest import short_digest
from dossier.review.optional import read_optional
from dossier.review.keys import (TRUSTED_KEYS_FILE, TrustedKey, generate_keypair,
                                 load_private_key, parse_trusted_keys, public_key_text,
                                 trusted_keys_path, write_private_key_in)
from dossier.review.signatures import (SIGNATURES_SUFFIX, VERDICTS, WITHDRAWN, SignedReview,
                                       append_signature, make_review, parse_signatures,
                                       signatures_path)
from dossier.review.verdicts import HOLDING, STATUSES, CurrentCase, ReviewStatus, judge_reviews

_DATE_RE = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}")
_TABLE_HEADER = ("case", "revision", "signer", "date", "verdict", "status")


def key_file_name(name: str) -> str:
    """``"R. Example"`` -> ``"r-example.key"``."""
    slug = re.sub(r"[^0-9a-z]+", "-", name.lower()).strip("-")
    return f"{slug or 'signer'}.key"


def _parse_date(text: str | None) -> datetime.date:
    """The ``--date`` of a verdict: today when not given; never after today."""
    today = datetime.date.today()
    if text is None:
        return today
    try:
        if not _DATE_RE.fullmatch(text):
            raise ValueError
        date = datetime.date.fromisoformat(text)
    except ValueError:
        raise SignatureError(Problem(f"'{text}' is not a calendar date written YYYY-MM-DD",
                                     key="--date")) from None
    if date > today:
        raise SignatureError(Problem(f"{text} is after today ({today.isoformat()}); a verdict "
                                     "is dated the day it is given", key="--date"))
    return date


def format_table(statuses: list[tuple[str, ReviewStatus]]) -> list[str]:
    """The table of ``verify``: one row per signature in the order of each file (the
    case's signed history), explanations under the rows that are not valid."""
    rows = [_TABLE_HEADER] + [
        (case_id, str(s.review.revision), s.review.signer, s.review.date.isoformat(),
         s.review.verdict, s.status)
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


def _refuse_draft(case: Case, source: CaseSource) -> None:
    if case.status == Status.DRAFT:
        raise SignatureError(Problem(
            "the case is a draft (status = \"draft\"); the board gives verdicts on submitted "
            "cases: set status = \"submitted\" when the case is ready, then sign",
            str(source.path), case.line_of("status"), "status"))


def _signer(case_file: Path, key_text: str, signer: str | None,
            role: str | None) -> tuple[str, str, TrustedKey | None]:
    """Name and role of the signer: as the trusted keys list the key, else as given."""
    trusted = _trusted_entry(case_file.parent, key_text)
    if trusted is not None:
        for given, listed, option in ((signer, trusted.name, "--signer"),
                                      (role, trusted.role, "--role")):
            if given is not None and given.strip() != listed:
                raise SignatureError(Problem(
                    f"'{given.strip()}' differs from '{listed}', which {TRUSTED_KEYS_FILE} "
                    "lists for this key; leave the option out or fix the trusted keys",
                    key=option))
        return trusted.name, trusted.role, trusted
    if signer is None or role is None:
        raise SignatureError(Problem(
            f"this key is not in {trusted_keys_path(case_file.parent)}; give --signer and "
            "--role, or have the key added to the trusted keys first", key="--key"))
    return signer.strip(), role.strip(), None


def _earlier_reviews(target: Path) -> tuple[SignedReview, ...]:
    if not target.exists():
        return ()
    return parse_signatures(_read_or_refuse(target, "signatures"), str(target))


_GIVEN_ID = re.compile(r"(C[1-9][0-9]{0,3})(?:: (.*))?", re.DOTALL)


def condition_ids(items: tuple[str, ...], source: CaseSource,
                  earlier: tuple[SignedReview, ...]) -> tuple[tuple[str, str], ...]:
    """``--condition`` values with their ids: ``"C2: text"`` keeps C2; ``"C2"`` alone
    repeats the text of C2 from an earlier verdict of the case; any other text gets
    the next free id."""
    header = header_of(source)
    known = {cid: text for r in earlier for cid, text in r.condition_list if cid}
    number = next_condition_number(header, earlier)
    out: list[tuple[str, str]] = []
    for item in (i.strip() for i in items):
        given = _GIVEN_ID.fullmatch(item)
        if given and given.group(2) is None:
            if given.group(1) not in known:
                raise SignatureError(Problem(
                    f"no earlier signed verdict of this case has a condition {given.group(1)} "
                    "to repeat; write its text: --condition \"C1: ...\"", key="--condition"))
            out.append((given.group(1), known[given.group(1)]))
        elif given:
            out.append((given.group(1), given.group(2).strip()))
        else:
            out.append((f"C{number}", item))
            number += 1
    ids = [cid for cid, _ in out]
    if len(set(ids)) != len(ids):
        raise SignatureError(Problem(f"a condition id is given twice: {', '.join(ids)}",
                                     key="--condition"))
    return tuple(out)


@click.command()
@click.argument("case_file", type=click.Path(dir_okay=False, path_type=Path))
@click.option("--key", "key_file", required=True,
              type=click.Path(dir_okay=False, path_type=Path), help="Your private key file.")
@click.option("--verdict", required=True, type=click.Choice(VERDICTS), help="The decision.")
@click.option("--condition", "condition_items", multiple=True, metavar="TEXT",
              help='One condition (repeat for each); it gets the next id C1, C2, ... '
                   '"C2: text" gives the id; "C2" alone repeats C2 of an earlier verdict.')
@click.option("--conditions", default="", help="One condition (the same as one --condition).")
@click.option("--note", default="", help="Why (for a decline: what a resubmission needs).")
@click.option("--signer", default=None, help=f"Your name (default: as in {TRUSTED_KEYS_FILE}).")
@click.option("--role", default=None, help=f"Your role (default: as in {TRUSTED_KEYS_FILE}).")
@click.option("--date", "date_text", default=None, metavar="YYYY-MM-DD",
              help="Date of the decision (default: today; never after today).")
def sign(case_file: Path, key_file: Path, verdict: str, condition_items: tuple[str, ...],
         conditions: str, note: str, signer: str | None, role: str | None,
         date_text: str | None) -> None:
    """Sign a verdict on CASE_FILE as it is now; appends to <id>.signatures beside it.

    Your new verdict supersedes your earlier ones on the case (they stay in the
    file and the history)."""
    date = _parse_date(date_text)
    private_key = load_private_key(key_file)
    source, record, case, current = integrity.assess_for_review(case_file)
    _refuse_draft(case, source)
    signer, role, trusted = _signer(case_file, public_key_text(private_key), signer, role)
    target = signatures_path(case_file)
    items = condition_items + ((conditions,) if conditions.strip() else ())
    ids = condition_ids(items, source, _earlier_reviews(target))
    review = make_review(private_key, case.id, case.revision, record.digest, signer, role,
                         verdict, ids, date, parts=current.parts,
                         figures=dict(current.figures), note=note.strip())
    append_signature(target, review)
    click.echo(f"Signed case {case.id}, revision {case.revision} (integrity "
               f"{short_digest(record.digest)}): {verdict}, by {review.signer} ({review.role}), "
               f"{date.isoformat()}.")
    for cid, text in ids:
        click.echo(f"  condition {cid}: {text}")
    click.echo(f"Appended to {target}.")
    if trusted is None:
        click.echo(f"warning: the key is not in {TRUSTED_KEYS_FILE}; 'dossier verify' shows "
                   "this signature as untrusted-key until it is added.", err=True)


@click.command()
@click.argument("case_file", type=click.Path(dir_okay=False, path_type=Path))
@click.option("--key", "key_file", required=True,
              type=click.Path(dir_okay=False, path_type=Path), help="Your private key file.")
@click.option("--reason", required=True, help="Why you take your verdict back (one line).")
@click.option("--date", "date_text", default=None, metavar="YYYY-MM-DD",
              help="Date of the withdrawal (default: today; never after today).")
def withdraw(case_file: Path, key_file: Path, reason: str, date_text: str | None) -> None:
    """Withdraw your current verdict on CASE_FILE: appends a signed withdrawal.

    The verdict stays in the file and the history, shown as withdrawn."""
    date = _parse_date(date_text)
    private_key = load_private_key(key_file)
    source, record, case, current = integrity.assess_for_review(case_file)
    key_text = public_key_text(private_key)
    trusted = _trusted_entry(case_file.parent, key_text)
    if trusted is None:
        raise SignatureError(Problem(f"this key is not in {trusted_keys_path(case_file.parent)}; "
                                     "only a trusted signer can withdraw a verdict", key="--key"))
    target = signatures_path(case_file)
    statuses = judge_reviews(_earlier_reviews(target), _trusted_keys(
        trusted_keys_path(case_file.parent)), current, case_id=case.id)
    mine = [s for s in statuses if s.current and s.trusted_key is not None
            and s.trusted_key.name == trusted.name and s.status not in ("untrusted-key", "invalid")]
    if not mine or mine[-1].review.verdict == WITHDRAWN:
        raise SignatureError(Problem(f"{trusted.name} has no current verdict on case "
                                     f"'{case.id}' to withdraw", str(target)))
    review = make_review(private_key, case.id, case.revision, record.digest, trusted.name,
                         trusted.role, WITHDRAWN, (), date, parts=current.parts,
                         figures=dict(current.figures), note=reason.strip())
    append_signature(target, review)
    click.echo(f"Withdrawn: the verdict of {trusted.name} ({mine[-1].review.verdict}, "
               f"{mine[-1].review.date.isoformat()}) on case {case.id}, {date.isoformat()}: "
               f"{review.note}")
    click.echo(f"Appended to {target}.")


class _CasesSeen:
    """Each case file of a ``verify`` run read once, parsed once and assessed at most once."""

    def __init__(self) -> None:
        self._sources: dict[Path, tuple[CaseSource, Case]] = {}
        self._current: dict[Path, CurrentCase] = {}

    def case(self, case_file: Path) -> Case:
        if case_file not in self._sources:
            source = read_source(case_file)
            self._sources[case_file] = (source, parse_source(source))
        return self._sources[case_file][1]

    def source(self, case_file: Path) -> CaseSource:
        self.case(case_file)
        return self._sources[case_file][0]

    def current(self, case_file: Path) -> CurrentCase:
        if case_file not in self._current:
            _, _, _, self._current[case_file] = integrity.assess_source_for_review(
                self.source(case_file))
        return self._current[case_file]


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


def _judge_case(sig_file: Path, trusted: tuple[TrustedKey, ...],
                cases: _CasesSeen) -> tuple[str, tuple[ReviewStatus, ...], list[str]]:
    """(case id, judged statuses, condition lines) of one signatures file."""
    case_id = sig_file.name[:-len(SIGNATURES_SUFFIX)]
    case_file = sig_file.with_name(case_id + ".md")
    reviews = parse_signatures(_read_or_refuse(sig_file, "signatures"), str(sig_file))
    if not case_file.exists():
        raise SignatureError(Problem(f"there is no case file {case_file} for these "
                                     "signatures", str(sig_file)))
    statuses = judge_reviews(reviews, trusted, cases.current(case_file), case_id=case_id)
    return case_id, statuses, condition_report(case_id, cases.source(case_file), statuses)


def condition_report(case_id: str, source: CaseSource,
                     statuses: tuple[ReviewStatus, ...]) -> list[str]:
    """The lines of ``verify`` for a case's conditions: open ones first."""
    conditions, problems = track_conditions(header_of(source), statuses)
    lines = []
    for c in sorted(conditions, key=lambda c: (not c.open, c.id)):
        if c.open:
            lines.append(f"  {case_id} {c.id}: open: {c.text}")
        else:
            lines.append(f"  {case_id} {c.id}: closed {c.closed_on} by {c.closed_by} "
                         f"({c.evidence}): {c.text}")
    return lines + [f"  {case_id}: {p}" for p in problems]


@click.command()
@click.argument("cases_dir", default="cases", type=click.Path(file_okay=False, path_type=Path))
def verify(cases_dir: Path) -> None:
    """Check every signature in CASES_DIR against the cases as they are now.

    A signer's latest entry on a case is their current verdict; earlier ones
    are shown as superseded.  Exit code 0: every current verdict holds; 1: a
    case changed since it was signed, or a signature is untrusted or invalid;
    2: an input could not be read.
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
    condition_lines: list[str] = []
    bad_input = False
    cases = _CasesSeen()

    def report(err: DossierError) -> None:
        nonlocal bad_input
        bad_input = True
        for problem in err.problems:
            click.echo(f"error: {problem}", err=True)

    for sig_file in sorted(cases_dir.glob("*" + SIGNATURES_SUFFIX)):
        try:
            case_id, statuses, lines = _judge_case(sig_file, trusted, cases)
        except DossierError as err:
            report(err)
            continue
        results += [(case_id, s) for s in statuses]
        condition_lines += lines

    # Verdicts recorded in the case files' [[review]] tables name the digest
    # they accepted; a case changed since then is reported the same way.
    for case_file in sorted(cases_dir.glob("*.md")):
        try:
            case = cases.case(case_file)
            if not case.reviews:
                continue
            digest = cases.current(case_file).digest
            if not signatures_path(case_file).exists():
                condition_lines += condition_report(case.id, cases.source(case_file), ())
        except DossierError as err:
            report(err)
            continue
        recorded += [(case.id, r) for r in integrity.check_recorded_reviews(case.reviews, digest)]
    _print_report(results, recorded, condition_lines)
    if bad_input:
        sys.exit(EXIT_BAD_INPUT)
    changed = any(r.status == "changed since reviewed" for _, r in recorded)
    ok = all(s.status in HOLDING or s.status == "superseded" for _, s in results) and not changed
    sys.exit(EXIT_OK if ok else EXIT_CHECK_FAILED)


def _print_report(results: list[tuple[str, ReviewStatus]],
                  recorded: list[tuple[str, integrity.RecordedReview]],
                  condition_lines: list[str]) -> None:
    if results:
        for line in format_table(results):
            click.echo(line)
        click.echo("")
    counts = {s: sum(1 for _, r in results if r.status == s) for s in STATUSES}
    current = sum(1 for _, r in results if r.status != "superseded")
    holding = sum(1 for _, r in results if r.status in HOLDING)
    click.echo(f"{len(results)} signatures: " + ", ".join(
        f"{n} {s}" for s, n in counts.items() if n or s in ("valid", "changed-since-signed",
                                                            "untrusted-key", "invalid")) + ".")
    click.echo(f"{current} current verdicts: {holding} hold.")
    if recorded:
        click.echo("")
        click.echo("Verdicts recorded in the case files:")
        for cid, r in recorded:
            click.echo(f"  {cid}: {r.verdict} by {r.name} ({r.role}) on {r.date}: {r.status}")
        tally = {status: sum(1 for _, r in recorded if r.status == status)
                 for status in ("matches", "changed since reviewed", "not checkable: no digest")}
        click.echo(f"{len(recorded)} recorded verdicts: " + ", ".join(
            f"{n} {status}" for status, n in tally.items()) + ".")
    if condition_lines:
        click.echo("")
        click.echo("Conditions:")
        for line in condition_lines:
            click.echo(line)


#: The commands of this module, for ``main.add_command``.
COMMANDS = (keygen, sign, withdraw, verify)
