"""The one message a quantity that cannot be read gives (shared by the unit tests)."""
from __future__ import annotations

import pytest

from dossier.casefile.units import parse_quantity
from dossier.errors import UnitError


def message(text: str, dimension: str) -> str:
    """The text of the single problem ``parse_quantity(text, dimension)`` raises."""
    with pytest.raises(UnitError) as info:
        parse_quantity(text, dimension)
    assert len(info.value.problems) == 1
    return str(info.value)
