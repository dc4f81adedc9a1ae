"""The one place that creates report files.

Every report is written to a temporary file in the target's own folder, flushed to disk and then
moved over the target with ``os.replace``. A reader therefore sees either the previous report or
the complete new one, never half a file; when writing fails, the temporary file is removed and the
previous report stays as it was. The same folder matters: ``os.replace`` is only atomic within one
file system.

The writer also refuses to write onto a file that is being audited, so a careless ``--out`` can
never destroy a source workbook.

A set of outputs that belong together (the reports and annotated copies of one run) is written
inside ``staged_outputs()``: every file goes to its temporary file first and all are renamed at
the end, with Ctrl-C held back for those few renames, so an interrupted run leaves either the
previous set or the complete new one, never a mix.
"""

from __future__ import annotations

import contextlib
import contextvars
import os
import signal
import tempfile
import threading
from collections.abc import Iterable, Iterator
from pathlib import Path
from typing import Any, BinaryIO

from auditor.errors import UsageError


class ProtectedFiles:
    """The audited files a report must never overwrite, resolved once: a run's reports are each
    checked against every input, hundreds of them in a batch.

    A target is one of them when its resolved path is (catching "./a.xlsx" against "a.xlsx" and
    symbolic links) or, both existing, it is the same file (``os.path.samefile``: hard links and
    case-insensitive file systems too). The file named is the first input in the given order
    that matches."""

    def __init__(self, inputs: Iterable[Path | str]) -> None:
        self.sources: list[Path | str] = []
        self._by_path: dict[Path, int] = {}
        self._by_file: dict[tuple[int, int], int] = {}
        for index, source in enumerate(inputs):
            self.sources.append(source)
            self._by_path.setdefault(Path(source).resolve(), index)
            identity = _file_identity(Path(source))
            if identity is not None:
                self._by_file.setdefault(identity, index)

    def matching(self, target: Path) -> Path | str | None:
        """The first input ``target`` is, or None."""
        hits = [self._by_path.get(target.resolve())]
        identity = _file_identity(target)
        if identity is not None:
            hits.append(self._by_file.get(identity))
        found = [hit for hit in hits if hit is not None]
        return self.sources[min(found)] if found else None


def _file_identity(path: Path) -> tuple[int, int] | None:
    """(device, inode) as ``os.path.samefile`` compares them, or None when ``path`` is missing."""
    try:
        status = os.stat(path)
    except OSError:
        return None
    return status.st_dev, status.st_ino


def refuse_inputs(target: Path, inputs: Iterable[Path | str] | ProtectedFiles) -> None:
    """Raise UsageError when ``target`` is one of the audited input files."""
    protected = inputs if isinstance(inputs, ProtectedFiles) else ProtectedFiles(inputs)
    source = protected.matching(Path(target))
    if source is not None:
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


class _Stage:
    """Temporary files written in one ``staged_outputs()`` block, waiting for their rename."""

    def __init__(self) -> None:
        self.pending: list[tuple[Path, Path, int]] = []  # (temporary, target, mode)

    def discard(self) -> None:
        for temporary, _, _ in self.pending:
            with contextlib.suppress(OSError):
                temporary.unlink()
        self.pending.clear()

    def commit(self) -> None:
        with held_interrupt():
            for temporary, target, mode in self.pending:
                os.chmod(temporary, mode)
                os.replace(temporary, target)
            for folder in dict.fromkeys(target.parent for _, target, _ in self.pending):
                _sync_folder(folder)
            self.pending.clear()


_STAGE: contextvars.ContextVar[_Stage | None] = contextvars.ContextVar("stage", default=None)


@contextlib.contextmanager
def held_interrupt() -> Iterator[None]:
    """Hold Ctrl-C back until the block ends, then raise it (main thread only)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    received: list[Any] = []
    previous = signal.signal(signal.SIGINT, lambda *_: received.append(True))
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, previous)
    if received:
        raise KeyboardInterrupt


@contextlib.contextmanager
def staged_outputs() -> Iterator[None]:
    """Every ``atomic_output`` inside the block is renamed into place only when the whole block
    succeeds; on any error or interrupt none is, and the temporary files are removed."""
    stage = _Stage()
    token = _STAGE.set(stage)
    try:
        yield
    except BaseException:
        stage.discard()
        raise
    finally:
        _STAGE.reset(token)
    stage.commit()


def one_set() -> contextlib.AbstractContextManager[None]:
    """``staged_outputs()``, unless the caller has one open already (its set includes these)."""
    return contextlib.nullcontext() if _STAGE.get() is not None else staged_outputs()


def prepare_out_dir(out_dir: Path) -> None:
    """Create ``out_dir`` if missing and make sure files can be written into it, before any
    audit work is spent; a UsageError says what is wrong and what to do."""
    out_dir = Path(out_dir)
    if out_dir.exists() and not out_dir.is_dir():
        raise UsageError(
            f"--out {str(out_dir)!r} is an existing file, not a folder; give a folder name "
            "(it is created if missing)"
        )
    try:
        out_dir.mkdir(parents=True, exist_ok=True)
        with tempfile.TemporaryFile(dir=out_dir, prefix=".regaudit-probe."):
            pass
    except OSError as exc:
        raise UsageError(
            f"cannot write into the output folder {str(out_dir)!r} "
            f"({exc.strerror or exc}); choose a folder you can write to with --out"
        ) from exc


@contextlib.contextmanager
def atomic_output(
    target: Path, inputs: Iterable[Path | str] | ProtectedFiles = ()
) -> Iterator[BinaryIO]:
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
        stage = _STAGE.get()
        if stage is not None:
            stage.pending.append((temporary, target, mode))
            return  # renamed with the rest of the set by staged_outputs()
        os.chmod(temporary, mode)
        os.replace(temporary, target)
    except BaseException:
        # BaseException: an interrupt (Ctrl-C) must not leave a stray ".part" file either.
        with contextlib.suppress(OSError):
            temporary.unlink()
        raise
    _sync_folder(folder)
