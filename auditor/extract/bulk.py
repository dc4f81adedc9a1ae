"""Building a table's rows without the cycle collector walking the whole heap meanwhile.

A large table becomes hundreds of thousands of new objects at once (a DataPoint and its x list
per row). Python's cycle collector counts allocations, and a full collection walks every object
alive, the workbook's cells among them: at 200,000 rows it ran several times while the rows
were built and took more time than building them. The rows hold no reference cycles, so
reference counting frees them as always; the collector is only held back while they are made.
"""

from __future__ import annotations

import gc
from collections.abc import Iterator
from contextlib import contextmanager


@contextmanager
def collector_paused() -> Iterator[None]:
    """The cycle collector off inside the block, and back as it was afterwards (also when the
    block raises); nested use leaves it off until the outermost block ends."""
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_enabled:
            gc.enable()
