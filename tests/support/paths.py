"""Where the tests find the repository, the demo cases and the fixtures."""
from __future__ import annotations

from pathlib import Path

TESTS = Path(__file__).resolve().parents[1]
ROOT = TESTS.parent
CASES = ROOT / "cases"
FIXTURES = TESTS / "fixtures"
