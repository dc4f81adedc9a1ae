"""One report written by a forked copy of this process while this process writes the others.

audit.xlsx takes longer to write than audit.json and summary.txt together, and every report
is written after the last workbook's audit, when the other cores have nothing left to do. A
child made with ``os.fork`` holds the same result without copying it (the memory pages are
shared until written) and writes the workbook into the temporary file this process opened
for it, while this process writes the rest:

    with atomic_output(target) as handle, forked_write(partial(reporter.write, result), handle):
        ...  # the other reports

At the end of the block the child is waited for. The file is renamed into place as before, by
``atomic_output`` (with the rest of the set inside ``staged_outputs``). When the child did not
finish its file (an exception, a signal), this process truncates the file and writes it
itself, so a failure surfaces here exactly as it would have without the child, traceback and
all. When the block ends in an error or an interrupt the child is killed first.

No child is made where ``os.fork`` is missing, nor where forking is unsafe (a process running
other threads, from Python 3.12 on: ``processes.can_fork``, as for the audit's workers); the
report is then written here, after the others. A Ctrl-C at the fork is held back until the
block that stops the child is in place (``processes.interrupts_held``).
"""

from __future__ import annotations

import contextlib
import gc
import os
import signal
from collections.abc import Callable, Iterator
from typing import BinaryIO

from auditor.processes import can_fork, ignore_interrupts, interrupts_held

Write = Callable[[BinaryIO], None]


@contextlib.contextmanager
def forked_write(write: Write, handle: BinaryIO) -> Iterator[None]:
    """``write(handle)`` in a forked child during the block, or here at its end (see above)."""
    if not can_fork():
        yield
        write(handle)
        return
    handle.flush()  # nothing of this process's buffer may reach the file twice
    with interrupts_held() as let_through:  # a Ctrl-C arrives where the child is stopped
        child = os.fork()
        if child == 0:
            _child(write, handle)
        reaped = False
        try:
            let_through()
            yield
            _, status = os.waitpid(child, 0)
            reaped = True
        finally:
            if not reaped:  # an error or Ctrl-C in the block: no child outlives it
                _stop(child)
    if os.waitstatus_to_exitcode(status) != 0:  # write again here: the error surfaces here
        handle.seek(0)
        handle.truncate()
        write(handle)


def _child(write: Write, handle: BinaryIO) -> None:
    """The child's whole life: write, flush, leave without running the parent's exit code."""
    code = 1
    try:
        ignore_interrupts()  # Ctrl-C reaches the whole process group: the parent decides
        gc.freeze()  # the result and the modules are the parent's: no collection walks them
        write(handle)
        handle.flush()
        code = 0
    except BaseException:  # the parent writes the file again and reports what went wrong
        pass
    finally:
        os._exit(code)


def _stop(child: int) -> None:
    with contextlib.suppress(OSError):
        os.kill(child, signal.SIGKILL)
        os.waitpid(child, 0)
