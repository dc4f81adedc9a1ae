"""``python -m auditor`` and the ``regaudit`` command: :func:`auditor.cli.main.main`, then the
end of the process."""

import atexit
import gc
import os
import sys
import threading
from typing import NoReturn

from auditor.cli.main import main


def command() -> NoReturn:
    """Run the command line, then end the process.

    What is left after ``main`` is the interpreter's teardown: garbage collections that walk
    every object of the run again (about 0.1 s of CPU after a small file), then every module
    and object freed one by one (about 0.03 s). Neither is of any use to a process that ends:
    every report and the ledger are closed by then. So the exit handlers run (``atexit``:
    the libraries' own, a coverage tool's), the standard streams are flushed, and the process
    ends there (``os._exit``). With another thread still running, or a stream that cannot be
    flushed, the end is the ordinary one, with its collector frozen (``gc.freeze``). Only the
    process's own end does this, never a ``main`` called from Python.
    """
    code = main()
    gc.freeze()
    if threading.active_count() == 1:
        atexit._run_exitfuncs()
        try:
            sys.stdout.flush()
            sys.stderr.flush()
        except (OSError, ValueError):
            pass  # the ordinary end reports it
        else:
            os._exit(code)
    raise SystemExit(code)


if __name__ == "__main__":
    command()
