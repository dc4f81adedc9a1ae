"""Python's cyclic garbage collector around a run's long-lived objects.

A run imports the audit's modules first: some 70,000 objects (classes, functions, compiled
patterns) that live until the process ends. The collector would walk them again and again as
they are made, and on every later full collection, finding no garbage in them (a few hundredths
of a second of a small file's run); in a forked worker each walk also writes to the memory
pages the worker shares with its parent. So:

    with paused():   # the imports: no collection while they are made
        import ...
    with frozen():   # the run: what exists now is left out of every collection (gc.freeze)
        ...

``frozen`` blocks nest (a pool inside a run): only the outermost one freezes and, at its end,
unfreezes, so a caller that lives on (a test session, a notebook) gets its collector back as it
was. Objects are still freed by reference counting as usual; only cycles among frozen objects
wait for the end of the block.
"""

from __future__ import annotations

import contextlib
import gc
import threading
from collections.abc import Iterator

_lock = threading.Lock()
_depth = 0


@contextlib.contextmanager
def paused() -> Iterator[None]:
    """No automatic collection inside the block; the collector's state is restored after it."""
    enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if enabled:
            gc.enable()


@contextlib.contextmanager
def frozen() -> Iterator[None]:
    """The objects that exist when the outermost block starts stay out of collections until it
    ends (``gc.freeze`` / ``gc.unfreeze``)."""
    global _depth
    with _lock:
        if _depth == 0:
            gc.freeze()
        _depth += 1
    try:
        yield
    finally:
        with _lock:
            _depth -= 1
            if _depth == 0:
                gc.unfreeze()
