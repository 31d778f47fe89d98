"""Shared set-up for the whole suite.

The tests mirror the package: ``unit/<layer>/`` for each layer of
``dossier/``, ``contracts/`` for the rules that keep the layers clean, and
``system/`` for fuzzing, kills, the network, the browser and the demo
register.  Shared helpers live in ``support/`` (on the import path through
pytest's ``pythonpath`` setting in pyproject.toml, not by editing sys.path).
"""
from __future__ import annotations

from pathlib import Path

import pytest

import harness

from dossier.library.lookup import Library

#: Tests marked ``slow`` (left out by ``make test-fast``, i.e. ``pytest -m "not slow"``):
#: whole builds of sites, PDF printing, the browser, killed processes and fuzzing.  A
#: path names a whole file or folder; a path with "::" one test.
SLOW = (
    "tests/system/",
    "tests/unit/build/test_cache.py",
    "tests/unit/build/test_failures.py",
    "tests/unit/build/test_parallel.py",
    "tests/unit/build/test_paths.py",
    "tests/unit/render/test_packets.py",
    "tests/unit/engine/test_settings.py::test_changing_any_setting_changes_the_integrity_record",
    "tests/unit/library/test_library_data.py::test_regenerating_gives_identical_bytes",
)

#: Tests that must not run beside each other (pytest-xdist ``--dist loadgroup`` sends a
#: group to one worker, one test after another): those that kill builds and count the
#: processes left, time their kills against a measured build, or overlap two builds.
GROUPS = {"tests/system/test_kill.py": "processes"}


def pytest_collection_modifyitems(config, items):
    root = Path(str(config.rootpath))
    for item in items:
        node = Path(str(item.path)).relative_to(root).as_posix()
        test = f"{node}::{item.name}"
        if any(test.startswith(s) if "::" in s else node.startswith(s) for s in SLOW):
            item.add_marker(pytest.mark.slow)
        if node in GROUPS:
            item.add_marker(pytest.mark.xdist_group(GROUPS[node]))


def pytest_configure(config):
    """Under pytest-xdist, the sites the harness builds are built once per run and
    shared by the workers (the first to ask builds; the others find it unchanged)."""
    basetemp = getattr(config.option, "basetemp", None)
    if hasattr(config, "workerinput") and basetemp:
        # xdist gives each worker <the run's temporary folder>/popen-gw<N>
        harness.share_builds(Path(basetemp).parent / "shared-sites")


@pytest.fixture(scope="session")
def library() -> Library:
    """The shipped species library (loaded once)."""
    return Library.default()
