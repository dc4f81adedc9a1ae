"""The one place that creates report files.

Every report is written to a temporary file in the target's own folder, flushed to disk and then
moved over the target with ``os.replace``. A reader therefore sees either the previous report or
the complete new one, never half a file; when writing fails, the temporary file is removed and the
previous report stays as it was. The same folder matters: ``os.replace`` is only atomic within one
file system.

The writer also refuses to write onto a file that is being audited, so a careless ``--out`` can
never destroy a source workbook.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from collections.abc import Iterable, Iterator
from pathlib import Path
from typing import BinaryIO

from auditor.errors import UsageError


def _same_file(first: Path, second: Path) -> bool:
    # Resolved paths catch "./a.xlsx" versus "a.xlsx" and symbolic links; samefile also catches
    # hard links and case-insensitive file systems, but only works when both exist.
    if first.resolve() == second.resolve():
        return True
    try:
        return os.path.samefile(first, second)
    except OSError:
        return False


def refuse_inputs(target: Path, inputs: Iterable[Path | str]) -> None:
    """Raise UsageError when ``target`` is one of the audited input files."""
    for source in inputs:
        if _same_file(target, Path(source)):
            raise UsageError(
                f"refusing to write the report {str(target)!r} over the audited file "
                f"{str(source)!r}; choose another output folder with --out"
            )


def _default_mode(target: Path) -> int:
    # NamedTemporaryFile creates files readable by the owner only. A report should get the mode
    # an ordinary new file would get (or keep the mode of the report it replaces).
    try:
        return target.stat().st_mode & 0o7777
    except OSError:
        pass
    current_umask = os.umask(0)
    os.umask(current_umask)
    return 0o666 & ~current_umask


def _sync_folder(folder: Path) -> None:
    # Makes the rename itself durable on POSIX; folders cannot be opened like this on Windows.
    if os.name != "posix":
        return
    descriptor = os.open(folder, os.O_RDONLY)
    try:
        os.fsync(descriptor)
    except OSError:
        pass  # some file systems do not support syncing a folder; the data is already synced
    finally:
        os.close(descriptor)


@contextlib.contextmanager
def atomic_output(target: Path, inputs: Iterable[Path | str] = ()) -> Iterator[BinaryIO]:
    """Yield a binary handle whose content replaces ``target`` when the block ends without error.

    ``inputs`` are the audited files; writing onto one of them raises UsageError before anything
    is touched.
    """
    target = Path(target)
    refuse_inputs(target, inputs)
    folder = target.parent
    mode = _default_mode(target)
    handle = tempfile.NamedTemporaryFile(
        mode="w+b", dir=folder, prefix=f".{target.name}.", suffix=".part", delete=False
    )
    temporary = Path(handle.name)
    try:
        with handle:
            yield handle  # type: ignore[misc]  # the wrapper behaves as a BinaryIO
            handle.flush()
            os.fsync(handle.fileno())
        os.chmod(temporary, mode)
        os.replace(temporary, target)
    except BaseException:
        # BaseException: an interrupt (Ctrl-C) must not leave a stray ".part" file either.
        with contextlib.suppress(OSError):
            temporary.unlink()
        raise
    _sync_folder(folder)
