"""auditor.processes: the cores, whether to fork, and Ctrl-C held back while a child is made."""

from __future__ import annotations

import os
import signal
import sys
import threading

import pytest

from auditor.processes import can_fork, interrupts_held, os_threads, usable_cores


def _blocked() -> bool:
    return signal.SIGINT in signal.pthread_sigmask(signal.SIG_BLOCK, set())


def test_usable_cores_are_those_of_the_affinity_mask() -> None:
    assert usable_cores() == len(os.sched_getaffinity(0))


def test_forking_is_allowed_on_3_11_and_with_one_thread_later() -> None:
    assert os_threads() >= 1
    expected = sys.version_info < (3, 12) or os_threads() == 1
    assert can_fork() is (hasattr(os, "fork") and expected)


def test_an_interrupt_is_held_until_let_through() -> None:
    reached = []
    with pytest.raises(KeyboardInterrupt):
        with interrupts_held() as let_through:
            assert _blocked()
            os.kill(os.getpid(), signal.SIGINT)
            reached.append("after the signal")  # held back: the block goes on
            let_through()
            reached.append("after let_through")  # never: the held interrupt arrives first
    assert reached == ["after the signal"]
    assert not _blocked()


def test_an_interrupt_held_to_the_end_of_the_block_arrives_there() -> None:
    reached = []
    with pytest.raises(KeyboardInterrupt):
        with interrupts_held():
            os.kill(os.getpid(), signal.SIGINT)
            reached.append("inside")
        reached.append("after the block")
    assert reached == ["inside"]
    assert not _blocked()


def test_without_an_interrupt_the_mask_is_restored_once() -> None:
    with interrupts_held() as let_through:
        let_through()
        assert not _blocked()
        let_through()  # a second call changes nothing
    assert not _blocked()
    signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
    try:
        with interrupts_held() as let_through:
            let_through()
            assert _blocked()  # blocked before: still blocked, as it was
    finally:
        signal.pthread_sigmask(signal.SIG_UNBLOCK, {signal.SIGINT})


def test_an_interrupt_delivered_to_another_thread_is_held_too() -> None:
    # A process may run threads that do not block SIGINT (OpenBLAS starts some when numpy is
    # imported outside the command line); Python runs the handler of a signal one of them
    # receives in the main thread all the same. Such a delivery is held back as well.
    go, sent = threading.Event(), threading.Event()

    def interrupt_from_here() -> None:
        go.wait()
        signal.raise_signal(signal.SIGINT)  # delivered to this thread, before it returns
        sent.set()

    other = threading.Thread(target=interrupt_from_here)
    other.start()  # made before the block: SIGINT not blocked in it
    reached = []
    try:
        with pytest.raises(KeyboardInterrupt):
            with interrupts_held() as let_through:
                go.set()
                sent.wait()  # the main thread runs the handler at its next step
                reached.extend(range(100))
                reached.append("held")
                let_through()
                reached.append("after let_through")
    finally:
        go.set()
        other.join()
    assert reached[-1] == "held"


def test_held_from_a_thread_other_than_the_main_one() -> None:
    # Only the main thread may replace a signal handler; elsewhere the block masks SIGINT only.
    seen: list[bool] = []

    def hold() -> None:
        with interrupts_held() as let_through:
            seen.append(_blocked())
            let_through()
            seen.append(_blocked())

    thread = threading.Thread(target=hold)
    thread.start()
    thread.join()
    assert seen == [True, False]
