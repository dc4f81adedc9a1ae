"""The collector around a run (auditor.pipeline.collector): paused and frozen blocks restore
what they found, nested blocks freeze once, and an error inside changes nothing of that."""

from __future__ import annotations

import gc
import weakref

import pytest

from auditor.pipeline.collector import frozen, paused


def test_paused_restores_the_state_it_found() -> None:
    assert gc.isenabled()
    with paused():
        assert not gc.isenabled()
    assert gc.isenabled()
    gc.disable()
    try:
        with paused():
            assert not gc.isenabled()
        assert not gc.isenabled()  # it was off before: it stays off
    finally:
        gc.enable()


def test_paused_restores_after_an_error() -> None:
    with pytest.raises(RuntimeError), paused():
        raise RuntimeError("inside")
    assert gc.isenabled()


def test_nested_frozen_blocks_freeze_once_and_unfreeze_at_the_outer_end() -> None:
    assert gc.get_freeze_count() == 0
    with frozen():
        outer = gc.get_freeze_count()
        assert outer > 1000  # this process's modules at least
        with frozen():
            assert gc.get_freeze_count() == outer
        assert gc.get_freeze_count() == outer
    assert gc.get_freeze_count() == 0


class Node:
    def __init__(self) -> None:
        self.me = self  # a reference cycle: only the collector frees it


def test_a_cycle_made_inside_a_frozen_block_is_still_collected() -> None:
    with frozen():
        alive = weakref.ref(Node())
        gc.collect()
        assert alive() is None


def test_frozen_unfreezes_after_an_error() -> None:
    with pytest.raises(RuntimeError), frozen():
        raise RuntimeError("inside")
    assert gc.get_freeze_count() == 0
