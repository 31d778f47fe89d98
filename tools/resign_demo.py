"""Re-sign the demonstration register after a change to what the integrity digest covers.

The demo board's private keys are not kept (they are demonstration keys of
invented people), so this makes a fresh key pair for every person in
``cases/trusted-keys.txt``, writes their new public keys there, and signs again
every review in ``cases/*.signatures`` with the same signer, role, date,
verdict and conditions, on the case as it is now.  The private keys live only
in memory while this runs.

Run it only for the demonstration cases, and only when the digest's inputs
changed on purpose (a new library, new method settings, a new digest format):
    .venv/bin/python tools/resign_demo.py cases
"""
from __future__ import annotations

import sys
from pathlib import Path

from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey

from dossier.review.digest import digest_for_case
from dossier.review.keys import load_trusted_keys, public_key_text, trusted_key_line, trusted_keys_path
from dossier.review.signatures import append_signature, load_signatures, make_review


def resign(cases: Path) -> list[str]:
    keys_file = trusted_keys_path(cases)
    trusted = load_trusted_keys(keys_file)
    fresh = {(k.name, k.role): Ed25519PrivateKey.generate() for k in trusted}
    header = [line for line in keys_file.read_text(encoding="utf-8").splitlines()
              if line.startswith("#")]
    lines = [trusted_key_line(public_key_text(fresh[(k.name, k.role)]), k.name, k.role)
             for k in trusted]
    keys_file.write_text("\n".join(header + lines) + "\n", encoding="utf-8")
    done = []
    for sig_file in sorted(cases.glob("*.signatures")):
        case_file = sig_file.with_suffix(".md")
        reviews = load_signatures(sig_file)
        record, revision, case_id = digest_for_case(case_file)
        sig_file.unlink()
        for r in reviews:
            review = make_review(fresh[(r.signer, r.role)], case_id, revision, record.digest,
                                 r.signer, r.role, r.verdict, r.conditions, r.date)
            append_signature(sig_file, review)
            done.append(f"{case_id}: {r.signer} ({r.verdict}, {r.date})")
    return done


if __name__ == "__main__":
    for line in resign(Path(sys.argv[1] if len(sys.argv) > 1 else "cases")):
        print("signed again:", line)
