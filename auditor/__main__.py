"""``python -m auditor`` and the ``regaudit`` command: :func:`auditor.cli.main.main`, then the
end of the process."""

import gc
from typing import NoReturn

from auditor.cli.main import main


def command() -> NoReturn:
    """Run the command line, then end the process.

    What is left after ``main`` is the interpreter's teardown, whose garbage collections walk
    every object of the run again (about 0.1 s of CPU after a small file). ``gc.freeze`` leaves
    those objects to reference counting alone: every report and the ledger are closed by then,
    and the standard streams are still flushed as usual. Only the process's own end does this,
    never a ``main`` called from Python.
    """
    code = main()
    gc.freeze()
    raise SystemExit(code)


if __name__ == "__main__":
    command()
