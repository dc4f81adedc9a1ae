"""What this process may do with others: how many cores it may use, whether it may fork, and
Ctrl-C held back while a child is made.

Shared by the audit's worker pool (``pipeline.limits``) and the reporters' forked children
(``report.forked``, ``report.html_many``), which may not import each other.

**Forking.** A fork starts a child in milliseconds with everything already imported. Forking a
process that runs other threads can deadlock the child (Python 3.12 warns of it; OpenBLAS starts
threads of its own), so from 3.12 on a process forks only while it runs a single thread.

**Ctrl-C.** It reaches the whole process group. Children leave it to this process, which stops
them and says so in one line. A child made while Ctrl-C arrives must be known to the code that
stops it before the interrupt is raised here, or it outlives the run and holds the console
open. So Ctrl-C is held back (not lost) while a child is made, and let through once the code
that stops it is in place::

    with interrupts_held() as let_through:
        child = make_child()  # the child ignores SIGINT, then unblocks it
        with stopping(child):
            let_through()  # a Ctrl-C held back arrives here
            ...
"""

from __future__ import annotations

import contextlib
import os
import signal
import sys
import threading
from collections.abc import Callable, Iterator
from typing import Any


def usable_cores() -> int:
    """The cores this process may run on (not all of the machine's, under a CPU affinity mask)."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not on Linux
        return max(1, os.cpu_count() or 1)


def os_threads() -> int:
    """Threads of this process, the interpreter's and the libraries' (OpenBLAS starts some)."""
    try:
        return len(os.listdir("/proc/self/task"))
    except OSError:
        return threading.active_count()


def can_fork() -> bool:
    """Whether a child may be forked here (see the module's docstring)."""
    if not hasattr(os, "fork"):
        return False
    return sys.version_info < (3, 12) or os_threads() == 1


@contextlib.contextmanager
def interrupts_held() -> Iterator[Callable[[], None]]:
    """Ctrl-C held back until the returned function is called, or the block ends; one that
    arrived meanwhile is raised then (see the module's docstring).

    Two holds, as a process may run other threads (OpenBLAS starts some outside the command
    line): SIGINT is blocked in this thread, which children made here inherit until they ignore
    it; and one delivered to another thread, whose Python handler would still run here, is only
    noted by a handler of this block's own (where this is the main thread, the only one whose
    handlers Python runs)."""
    arrived: list[int] = []
    replace = threading.current_thread() is threading.main_thread()
    replace = replace and signal.getsignal(signal.SIGINT) is not None  # None: set outside Python
    before = signal.signal(signal.SIGINT, _noting(arrived)) if replace else None
    mask = signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
    held = True

    def let_through() -> None:
        nonlocal held
        if not held:
            return
        held = False
        signal.pthread_sigmask(signal.SIG_SETMASK, mask)  # one blocked until now is noted
        if replace:
            signal.signal(signal.SIGINT, before)  # runs any noted before replacing
        if arrived:
            signal.raise_signal(signal.SIGINT)  # to the handler of before the block

    try:
        yield let_through
    finally:
        let_through()


def _noting(arrived: list[int]) -> Callable[[int, Any], None]:
    def note(signum: int, _frame: Any) -> None:
        arrived.append(signum)

    return note


def ignore_interrupts() -> None:
    """A child's first step: Ctrl-C is its parent's to handle. SIGINT came blocked from the
    parent (``interrupts_held``), so none slips in before it is ignored."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.pthread_sigmask(signal.SIG_UNBLOCK, {signal.SIGINT})
