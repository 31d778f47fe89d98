"""Which verdicts hold: signed reviews checked against the case as it is now.

Every block of a ``.signatures`` file is first checked on its own
(:func:`verify_reviews`): does the signature verify over the block's text, is
the key trusted for that name and role, is the digest the current one.  Then
:func:`judge_reviews` applies the verdict lifecycle:

* a signer's verdicts on a case follow each other: the latest (by the signed
  date, then by its place in the append-only file) is the signer's *current*
  entry, every earlier one is ``superseded`` (kept and shown, never judged);
  only blocks with a good signature and a trusted key take part, so nobody
  can supersede another person's verdict;
* a current withdrawal (verdict ``withdrawn``) takes the signer's verdict back:
  it holds, and no verdict of that signer counts any more;
* a current verdict whose digest differs is compared part by part when its
  block carries the parts (format 2): the case content, the species records
  used, the method settings (with the board's policy) and the versions of the
  data library, of dossier and of the method libraries.  When only versions
  differ, the key figures re-assessed now are compared with the ones the
  signer saw: none moved, the verdict holds (``versions-changed``); some moved,
  it is ``changed-since-signed`` and the moved figures are listed.

Pure: no files.  The wording is ours (``docs/signatures.md`` lists it).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Iterable, Literal, Mapping

from dossier.model.decisions import Change
from dossier.review.keys import PUBLIC_KEY_BYTES, TRUSTED_KEYS_FILE, TrustedKey, decode_b64
from dossier.review.signatures import (SIGNATURE_BYTES, WITHDRAWN, ReviewParts, SignedReview,
                                       verify_signature)

Status = Literal["valid", "versions-changed", "withdrawn", "changed-since-signed", "superseded",
                 "untrusted-key", "invalid"]
STATUSES: tuple[Status, ...] = ("valid", "versions-changed", "withdrawn", "changed-since-signed",
                                "superseded", "untrusted-key", "invalid")

#: The statuses of a current entry that hold: ``verify`` exits 0 when every
#: current entry has one of them and no block is untrusted or invalid.
HOLDING: tuple[Status, ...] = ("valid", "versions-changed", "withdrawn")

#: The parts of the integrity record, as people read them.
PART_WORDS = {"content": "the case file's content", "species": "the species records used",
              "settings": "the method settings and board policy",
              "versions": "the versions of the data library, dossier and method libraries"}


@dataclass(frozen=True)
class CurrentCase:
    """The case as it is now, as the verdicts are judged against it."""

    digest: str
    revision: int
    parts: ReviewParts | None = None
    figures: tuple[tuple[str, str], ...] = ()   # key figures re-assessed now (display text)


@dataclass(frozen=True)
class ReviewStatus:
    """The outcome of checking one signed review against the case as it is now."""

    review: SignedReview
    status: Status
    explanation: str                    # plain words, for the table and the pages
    revision_older: bool = False        # the review is for an earlier revision than the current one
    trusted_key: TrustedKey | None = None
    changed_parts: tuple[str, ...] = ()  # keys of PART_WORDS that differ (format 2 only)
    moved: tuple[Change, ...] = ()       # key figures: as signed, as re-assessed now

    @property
    def valid(self) -> bool:
        return self.status == "valid"

    @property
    def current(self) -> bool:
        """The signer's latest entry (not superseded); untrusted and invalid blocks count."""
        return self.status != "superseded"

    @property
    def holds(self) -> bool:
        return self.status in HOLDING or self.status == "superseded"


def verify_reviews(reviews: Iterable[SignedReview], trusted_keys: Iterable[TrustedKey],
                   current_digest: str, current_revision: int,
                   case_id: str | None = None) -> tuple[ReviewStatus, ...]:
    """The status of every review on its own against the case as it is now
    (no lifecycle: see :func:`judge_reviews`).

    ``case_id``, when given, is the case whose signatures file holds the
    reviews; a review signed for another case is then "invalid".
    """
    by_key = {k.key: k for k in trusted_keys}
    return tuple(_review_status(r, by_key, current_digest, current_revision, case_id)
                 for r in reviews)


def judge_reviews(reviews: Iterable[SignedReview], trusted_keys: Iterable[TrustedKey],
                  current: CurrentCase, case_id: str | None = None) -> tuple[ReviewStatus, ...]:
    """Every review's status with the lifecycle applied (module documentation),
    in the order given."""
    reviews = tuple(reviews)
    plain = verify_reviews(reviews, trusted_keys, current.digest, current.revision, case_id)
    entries: dict[str, list[int]] = {}   # signer -> indices in lifecycle order
    for index, s in enumerate(plain):
        if s.status not in ("untrusted-key", "invalid") and s.trusted_key is not None:
            entries.setdefault(s.trusted_key.name, []).append(index)
    following: dict[int, int] = {}       # index -> the same signer's next entry
    for indices in entries.values():
        ordered = sorted(indices, key=lambda i: (reviews[i].date, i))
        following.update(zip(ordered, ordered[1:]))
    out = []
    for index, s in enumerate(plain):
        if index in following:
            out.append(_superseded(s, reviews[following[index]]))
        elif s.status in ("untrusted-key", "invalid") or s.trusted_key is None:
            out.append(s)
        elif s.review.verdict == WITHDRAWN:
            out.append(ReviewStatus(
                s.review, "withdrawn",
                f"{s.review.signer} withdrew their verdict on {s.review.date.isoformat()}: "
                f"{s.review.note}", trusted_key=s.trusted_key))
        elif s.status == "changed-since-signed":
            out.append(_compare_parts(s, current))
        else:
            out.append(s)
    return tuple(out)


def _superseded(s: ReviewStatus, later: SignedReview) -> ReviewStatus:
    if later.verdict == WITHDRAWN and s.review.verdict != WITHDRAWN:
        why = (f"withdrawn by {later.signer} on {later.date.isoformat()} ({later.note}); "
               "kept in the history")
    else:
        why = (f"replaced by {later.signer}'s verdict of {later.date.isoformat()} on revision "
               f"{later.revision}; kept in the history")
    return ReviewStatus(s.review, "superseded", why, s.revision_older, s.trusted_key)


def _compare_parts(s: ReviewStatus, current: CurrentCase) -> ReviewStatus:
    """A current verdict on other data: which parts changed, and what moved."""
    signed = s.review.parts
    if signed is None or current.parts is None:
        if s.review.parts is None:
            return ReviewStatus(s.review, s.status, s.explanation + "; this signature (format "
                                "dossier-review-1) records the whole digest only, so which part "
                                "changed cannot be told", s.revision_older, s.trusted_key)
        return s
    changed = tuple(name for name in PART_WORDS
                    if getattr(signed, name) != getattr(current.parts, name))
    saw = s.review.figure_map
    moved = tuple(Change(what, saw.get(what, "not recorded"), now)
                  for what, now in current.figures if saw.get(what) != now)
    parts = _parts_words(changed, signed, current.parts)
    if s.review.revision != current.revision or changed != ("versions",):
        return ReviewStatus(s.review, "changed-since-signed", f"{s.explanation}; {parts}",
                            s.revision_older, s.trusted_key, changed, moved)
    if moved:
        figures = "; ".join(f"{c.what}: {c.before} signed, {c.after} now" for c in moved)
        return ReviewStatus(s.review, "changed-since-signed",
                            f"{parts}; re-assessed now, key figures moved: {figures}",
                            s.revision_older, s.trusted_key, changed, moved)
    return ReviewStatus(s.review, "versions-changed",
                        f"{parts}; re-assessed now, no key figure moved, so the verdict holds",
                        s.revision_older, s.trusted_key, changed, ())


def _parts_words(changed: tuple[str, ...], signed: ReviewParts, now: ReviewParts) -> str:
    if changed == ("versions",):
        before, after = dict(signed.version_pairs()), dict(now.version_pairs())
        moves = ", ".join(f"{name} {before.get(name, '(not used)')} -> "
                          f"{after.get(name, '(not used)')}"
                          for name in sorted(set(before) | set(after))
                          if before.get(name) != after.get(name))
        return (f"only versions changed ({moves}); the case file's content, the species "
                "records used and the method settings are as signed")
    same = [PART_WORDS[p] for p in PART_WORDS if p not in changed]
    return ("changed since signing: " + ", ".join(PART_WORDS[p] for p in changed)
            + ("; unchanged: " + ", ".join(same) if same else ""))


def _review_status(review: SignedReview, by_key: Mapping[str, TrustedKey], current_digest: str,
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


__all__ = ["Status", "STATUSES", "HOLDING", "PART_WORDS", "CurrentCase", "ReviewStatus",
           "verify_reviews", "judge_reviews"]
