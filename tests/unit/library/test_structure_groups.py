"""The table of the library structures' explosophore groups
(dossier/data/structure_groups.json) against RDKit, the reference toolkit that
reads structures: the table must give exactly what RDKit as installed gives,
for every structure of the library, and the screening must come out the same
with and without it.  The table is made by tools/make_structure_groups.py.
"""
from __future__ import annotations

import dataclasses
import json

import pytest

from dossier.assess.screening import known_groups, screen_species
from dossier.engine import energetics
from dossier.engine.settings import DEFAULT
from dossier.errors import LibraryError
from dossier.library.datafile import (COL_SMILES, StructureGroups, read_package_data,
                                      read_package_groups, read_species_data,
                                      read_structure_groups)
from dossier.library.lookup import Library, structure_groups

Chem = pytest.importorskip("rdkit.Chem")


def _library_smiles() -> set[str]:
    rows = read_species_data(read_package_data()).parsed_rows()
    return {row[COL_SMILES] for row in rows if row[COL_SMILES]}


def test_the_table_holds_every_library_structure_and_nothing_else():
    assert set(structure_groups().entries) == _library_smiles()


def test_the_table_was_made_with_todays_patterns():
    # tools/make_structure_groups.py writes the digest of the patterns it used; a
    # change of the SMARTS in engine/energetics.py must be followed by a new table.
    assert structure_groups().patterns == energetics.patterns_key()


@pytest.mark.slow
def test_every_entry_is_what_rdkit_finds():
    table = structure_groups()
    wrong = []
    for smiles, (elements, counts) in table.entries.items():
        mol = Chem.MolFromSmiles(smiles)
        want_elements = {k: int(v) for k, v in energetics.smiles_elements(Chem, mol).items()}
        want_counts = energetics.group_counts(Chem, mol)
        if elements != want_elements or counts != want_counts:
            wrong.append((smiles, elements, want_elements, counts, want_counts))
    assert wrong == []
    # the table is not empty of hits: nitro compounds carry N-O (Table A6.1), so the
    # comparison above compares groups and not only empty dictionaries
    assert sum(1 for _e, c in table.entries.values() if c.get("n_o")) > 10


def _record(name: str):
    return Library.default().resolve(name, "l" if name not in ("acetylene", "ethylene oxide") else "g")


@pytest.mark.parametrize("name", ["nitrobenzene", "benzene", "acetylene", "ethylene oxide",
                                  "nitromethane", "aniline"])
def test_the_screening_is_the_same_with_the_table_and_with_rdkit(name):
    rec = _record(name)
    assert rec.smiles, f"{name} has a structure in the library"
    table = structure_groups()
    assert known_groups(rec, rec.smiles, table) is not None  # the table is used
    with_table = screen_species(rec, rec.smiles, (), DEFAULT, table)
    with_rdkit = screen_species(rec, rec.smiles, (), DEFAULT, None)
    assert with_table == with_rdkit


def test_nitrobenzene_from_the_table_carries_the_n_o_group():
    # Table A6.1 lists nitro compounds under N-O (UN Manual of Tests and Criteria,
    # Appendix 6, as quoted in ECHA registration dossiers)
    rec = _record("nitrobenzene")
    check = known_groups(rec, rec.smiles, structure_groups())
    assert [h.key for h in check.un_hits] == ["n_o"]
    assert check.note == "groups found: N-O"


def test_a_table_made_with_other_patterns_is_not_used():
    rec = _record("nitrobenzene")
    stale = dataclasses.replace(structure_groups(), patterns="0" * 16)
    assert known_groups(rec, rec.smiles, stale) is None


def test_a_structure_the_table_lacks_is_read_with_rdkit():
    rec = _record("nitrobenzene")
    other = "O=[N+]([O-])c1ccc(C)cc1"  # 4-nitrotoluene, written as the case would
    assert known_groups(rec, other, structure_groups()) is None


def test_an_entry_whose_elements_differ_from_the_record_is_not_used():
    # A record whose formula disagrees with the structure must reach RDKit, which
    # refuses the mismatch (a wrong structure would drop a safety alert).
    rec = _record("nitrobenzene")
    table = StructureGroups(patterns=energetics.patterns_key(), made_with="test",
                            entries={rec.smiles: [{"C": 6, "H": 6}, {}]})
    assert known_groups(rec, rec.smiles, table) is None


@pytest.mark.parametrize("raw, message", [
    (b"{", "structure groups file is not valid JSON: Expecting property name enclosed in "
           "double quotes: line 1 column 2 (char 1)"),
    (b'{"format": 9}', "structure groups file has format 9, this dossier reads format 1"),
    (b'{"format": 1, "patterns": "x", "made_with": "y"}',
     "structure groups file is damaged: 'groups'"),
    (b'{"format": 1, "patterns": "x", "made_with": "y", "groups": {"C": [1]}}',
     "structure groups file is damaged: an entry is not [elements, groups]"),
])
def test_a_damaged_table_is_refused_with_a_message(raw, message):
    with pytest.raises(LibraryError) as err:
        read_structure_groups(raw)
    assert str(err.value) == message


def test_the_shipped_file_is_what_the_tool_writes(tmp_path):
    # tools/make_structure_groups.py is deterministic: running it again gives the
    # shipped bytes (so the file was not edited by hand).
    import subprocess
    import sys

    out = tmp_path / "groups.json"
    subprocess.run([sys.executable, "tools/make_structure_groups.py", "--out", str(out)],
                   check=True, capture_output=True)
    assert out.read_bytes() == read_package_groups()
    assert json.loads(out.read_bytes())["made_with"].startswith("rdkit ")
