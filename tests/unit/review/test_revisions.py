"""Revision history: archived revisions and what changed between them."""
from __future__ import annotations

import os

import pytest

from dossier.assess.evaluate import assess_case
from dossier.casefile.load import parse_case_text, read_header
from dossier.review.revisions import archived_revisions, flatten, history, input_changes
from dossier.library.lookup import Library

LIB = Library.default()

REV1 = """+++
title = "Ammonia loop"
revision = 1
status = "submitted"
reaction = "N2(g) + 3 H2(g) <=> 2 NH3(g)"
temperature = ["400 K", "440 K"]
pressure = "100 bar"
+++

First text.
"""
REV2 = REV1.replace("revision = 1", "revision = 2").replace('"440 K"', '"500 K"')


def _rev(text: str, n: int):
    case = parse_case_text(text, f"ammonia-rev{n}.md")
    return (n, read_header(text, "x.md"), case.narrative, assess_case(case, LIB))


def test_inputs_and_moved_figures_between_two_revisions():
    h = history("ammonia", [_rev(REV2, 2), _rev(REV1, 1)])
    assert h.revisions == (1, 2)
    step = h.steps[0]
    assert [(c.what, c.before, c.after) for c in step.inputs] == [
        ("temperature", "[400 K, 440 K]", "[400 K, 500 K]")]
    moved = {c.what for c in step.figures}
    # The wider window now contains the crossover near 456 K and the high
    # end's ΔG° moved; the low end did not.
    assert "ΔG° at the window's high end" in moved
    assert "ΔG° at the window's low end" not in moved
    assert "caution: crossover-in-window" in step.findings_added


def test_narrative_and_ignored_keys():
    changes = input_changes({"revision": 1, "title": "a", "review": [{"name": "x"}]},
                            {"revision": 2, "title": "a", "review": [{"name": "y"}]},
                            "old", "new")
    assert [c.what for c in changes] == ["narrative"]


def test_flatten_counts_tables_from_one():
    flat = flatten({"species": [{"name": "a"}, {"name": "b"}], "charge": {"mass": "1 kg"}})
    assert flat == {"species[1].name": "a", "species[2].name": "b", "charge.mass": "1 kg"}


def test_archived_revisions_are_found_in_order_and_links_are_ignored(tmp_path):
    case = tmp_path / "ammonia.md"
    case.write_text(REV2)
    folder = tmp_path / "ammonia"
    folder.mkdir()
    (folder / "rev-1.md").write_text(REV1)
    (folder / "rev-10.md").write_text(REV1)
    (folder / "notes.md").write_text("not a revision")
    outside = tmp_path / "elsewhere.md"
    outside.write_text(REV1)
    if hasattr(os, "symlink"):
        os.symlink(outside, folder / "rev-3.md")
    assert [n for n, _ in archived_revisions(case)] == [1, 10]


def test_no_archive_folder_means_no_history(tmp_path):
    case = tmp_path / "alone.md"
    case.write_text(REV1)
    assert archived_revisions(case) == []


@pytest.mark.parametrize("bad", ["rev-.md", "rev-1.txt", "rev-12345.md", "REV-1.md"])
def test_only_well_named_files_count(tmp_path, bad):
    case = tmp_path / "c.md"
    case.write_text(REV1)
    (tmp_path / "c").mkdir()
    (tmp_path / "c" / bad).write_text(REV1)
    assert archived_revisions(case) == []
