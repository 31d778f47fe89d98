"""The garbage collector's setting while a build runs (build.runner.fewer_collections)."""
from __future__ import annotations

import gc
import weakref

import pytest

from dossier.build.runner import GC_THRESHOLD0, fewer_collections, run_unit


@pytest.fixture
def default_threshold():
    before = gc.get_threshold()
    gc.set_threshold(700, 10, 10)  # CPython's default (gc module documentation)
    yield
    gc.set_threshold(*before)


def test_a_build_collects_less_often_and_puts_the_setting_back(default_threshold):
    with fewer_collections():
        assert gc.get_threshold() == (GC_THRESHOLD0, 10, 10)  # older generations as they were
    assert gc.get_threshold() == (700, 10, 10)


def test_the_setting_is_put_back_when_the_build_fails(default_threshold):
    with pytest.raises(RuntimeError), fewer_collections():
        raise RuntimeError("a build that fails")
    assert gc.get_threshold() == (700, 10, 10)


def test_a_higher_setting_is_never_lowered(default_threshold):
    gc.set_threshold(10 * GC_THRESHOLD0, 10, 10)
    with fewer_collections():
        assert gc.get_threshold()[0] == 10 * GC_THRESHOLD0
    assert gc.get_threshold() == (10 * GC_THRESHOLD0, 10, 10)


class _Node:
    pass


def _unit_leaving_a_cycle(refs: list) -> str:
    a, b = _Node(), _Node()
    a.other, b.other = b, a  # freed only by the cyclic collector
    refs.append(weakref.ref(a))
    return "made"


def test_a_unit_s_cyclic_garbage_is_freed_when_it_ends(default_threshold):
    refs: list = []
    with fewer_collections():
        gc.collect()
        assert run_unit(_unit_leaving_a_cycle, refs) == "made"
        assert refs[0]() is None  # not left waiting for a full collection


def test_a_failing_unit_raises_as_it_would_alone():
    def fails():
        raise ValueError("a defect")

    with pytest.raises(ValueError, match="a defect"):
        run_unit(fails)
