"""The cycle collector is held back only while a table's rows are built, and comes back as it
was: on, off, after an error inside, and with one pause inside another."""

from __future__ import annotations

import gc

import pytest

from auditor.extract.bulk import collector_paused


def test_the_collector_is_off_inside_and_on_again_after() -> None:
    assert gc.isenabled()
    with collector_paused():
        assert not gc.isenabled()
        with collector_paused():
            assert not gc.isenabled()
        assert not gc.isenabled()  # the inner pause ends: the outer one still holds
    assert gc.isenabled()


def test_an_error_inside_still_gives_the_collector_back() -> None:
    with pytest.raises(ZeroDivisionError), collector_paused():
        _ = 1 / 0
    assert gc.isenabled()


def test_a_collector_already_off_stays_off() -> None:
    gc.disable()
    try:
        with collector_paused():
            assert not gc.isenabled()
        assert not gc.isenabled()
    finally:
        gc.enable()
