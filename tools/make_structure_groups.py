#!/usr/bin/env python3
"""Generate dossier/data/structure_groups.json: the explosophore groups of every
structure (SMILES) in the species library, found once with RDKit.

Run from the repository root after tools/build_library.py (or after changing the
group patterns in dossier/engine/energetics.py):

    .venv/bin/python tools/make_structure_groups.py [--out PATH]

Why: reading a structure needs RDKit, whose import and pattern matching cost
a `dossier evaluate` about 50 ms, most of its start-up beyond numpy.  The
screening of a library species reads its groups from this table instead;
a structure the table does not hold (a case's own ``smiles``) is still read
with RDKit.  The table records the digest of the patterns it was made with
(:func:`dossier.engine.energetics.patterns_key`); when the patterns change,
the table is not used until it is made again.  tests/unit/library/
test_structure_groups.py checks every entry against RDKit as installed.

The output is deterministic: entries sorted by SMILES, compact JSON, one entry
per line.
"""
from __future__ import annotations

import argparse
import json
import os
import sys

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, ROOT)

from dossier.engine.energetics import group_counts, patterns_key, smiles_elements  # noqa: E402
from dossier.library.datafile import (COL_SMILES, STRUCTURE_GROUPS_FORMAT,  # noqa: E402
                                      read_package_data, read_species_data)

DEFAULT_OUT = os.path.join(ROOT, "dossier", "data", "structure_groups.json")


def table(smiles: list[str]) -> dict[str, list]:
    """SMILES -> [element counts, group counts], read with RDKit."""
    from rdkit import Chem, RDLogger

    RDLogger.DisableLog("rdApp.*")
    out: dict[str, list] = {}
    for text in sorted(set(smiles)):
        mol = Chem.MolFromSmiles(text)
        if mol is None:
            raise SystemExit(f"RDKit cannot read the library's SMILES {text!r}")
        elements = {el: int(n) for el, n in sorted(smiles_elements(Chem, mol).items())}
        out[text] = [elements, dict(sorted(group_counts(Chem, mol).items()))]
    return out


def render(entries: dict[str, list], rdkit_version: str) -> str:
    head = {"format": STRUCTURE_GROUPS_FORMAT, "generator": "tools/make_structure_groups.py",
            "made_with": f"rdkit {rdkit_version}", "patterns": patterns_key()}
    lines = [json.dumps(head, sort_keys=True)[:-1] + ', "groups": {']
    body = [f"{json.dumps(k)}: {json.dumps(v, separators=(',', ':'))}"
            for k, v in entries.items()]
    return "\n".join(lines + [",\n".join(body), "}}"]) + "\n"


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default=DEFAULT_OUT)
    args = parser.parse_args()
    rows = read_species_data(read_package_data()).parsed_rows()
    smiles = [row[COL_SMILES] for row in rows if row[COL_SMILES]]
    from rdkit import __version__ as rdkit_version

    text = render(table(smiles), rdkit_version)
    with open(args.out, "w", encoding="utf-8") as fh:
        fh.write(text)
    print(f"{args.out}: {len(set(smiles))} structures")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
