"""Shared set-up for the whole suite.

The tests mirror the package: ``unit/<layer>/`` for each layer of
``dossier/``, ``contracts/`` for the rules that keep the layers clean, and
``system/`` for fuzzing, kills, the network, the browser and the demo
register.  Shared helpers live in ``support/`` (on the import path through
pytest's ``pythonpath`` setting in pyproject.toml, not by editing sys.path).
"""
from __future__ import annotations

import pytest

from dossier.library.lookup import Library


@pytest.fixture(scope="session")
def library() -> Library:
    """The shipped species library (loaded once)."""
    return Library.default()
