"""Safe file handling: inputs are only read, outputs appear whole or not at all.

* :func:`read_input` opens a file read-only and returns its bytes (bounded).
* :func:`atomic_writer` writes to a temporary file in the output's own
  directory, flushes and fsyncs it, then moves it into place in one step
  (``os.link`` when the output must not exist yet, so a file that appears in
  the meantime is not clobbered; ``os.replace`` with ``force``). A failed or
  interrupted write (disk full, exception, Ctrl-C) removes the temporary file
  and leaves any existing output untouched.
* Signals that stop a program -- SIGINT (Ctrl-C), SIGTERM (CI cancellation,
  container stops), SIGHUP (a closed terminal) -- are caught while a write is
  under way (main thread; signals set to be ignored stay ignored): one that
  arrives while the temporary file is being created waits until it can be
  removed, one during the write removes it, one during the final move waits
  until the output is complete. Each raises :class:`WriteInterrupted`, a
  :class:`KeyboardInterrupt` that carries the signal, the exit code
  (128 + signal number) and a message saying whether the output was written.
* An existing output is refused unless ``force``; the output may never be one
  of the inputs, ``force`` or not.

>>> import tempfile, pathlib
>>> out = pathlib.Path(tempfile.mkdtemp()) / "a.txt"
>>> write_bytes_atomic(out, b"one")
>>> write_bytes_atomic(out, b"two")
Traceback (most recent call last):
...
udfs.xlsx.file_errors.FileSafetyError: a.txt already exists; add --force to replace it
>>> write_bytes_atomic(out, b"two", force=True); out.read_bytes()
b'two'
"""

from __future__ import annotations

import contextlib
import errno
import os
import signal
import tempfile
import threading
from collections.abc import Iterable, Iterator
from pathlib import Path
from types import FrameType
from typing import Any, BinaryIO

from .file_errors import FileSafetyError

__all__ = [
    "STOP_SIGNALS",
    "WriteInterrupted",
    "atomic_writer",
    "check_output",
    "read_input",
    "write_bytes_atomic",
]

StrPath = str | os.PathLike[str]

#: The signals that stop a program and are caught while a write is under way.
STOP_SIGNALS: tuple[signal.Signals, ...] = tuple(
    getattr(signal, name) for name in ("SIGINT", "SIGTERM", "SIGHUP") if hasattr(signal, name)
)


class WriteInterrupted(KeyboardInterrupt):
    """A signal stopped the program while it wrote ``path``.

    ``written`` is False when the temporary file was removed and any existing
    output is unchanged (the usual case), True when the signal came during the
    final move and the output is complete. ``exit_code`` is the shell's
    convention for a program stopped by a signal (128 + its number).

    >>> str(WriteInterrupted(signal.SIGTERM, "out.xlsx"))
    'stopped by SIGTERM; out.xlsx was not written'
    >>> WriteInterrupted(signal.SIGTERM, "out.xlsx").exit_code
    143
    """

    def __init__(self, signum: int, path: StrPath, written: bool = False):
        self.signum = int(signum)
        self.path = Path(path)
        self.written = written
        self.exit_code = 128 + self.signum
        name = signal.Signals(self.signum).name
        outcome = "was written in full" if written else "was not written"
        super().__init__(f"stopped by {name}; {self.path.name} {outcome}")


class _SignalGuard:
    """Catches STOP_SIGNALS during one write: deferred while ``holding``, else raised."""

    def __init__(self, target: Path):
        self.target = target
        self.holding = True
        self.pending: int | None = None
        self.previous: dict[int, Any] = {}

    def _handle(self, signum: int, _frame: FrameType | None) -> None:
        if self.holding:
            if self.pending is None:
                self.pending = signum
            return
        self.holding = True  # a second signal must not interrupt the clean-up
        raise WriteInterrupted(signum, self.target)

    def install(self) -> None:
        if threading.current_thread() is not threading.main_thread():
            return  # only the main thread can set handlers; clean-up still runs on errors
        for sig in STOP_SIGNALS:
            current = signal.getsignal(sig)
            if current in (signal.SIG_DFL, signal.default_int_handler):
                self.previous[sig] = current
                signal.signal(sig, self._handle)

    def restore(self) -> None:
        for sig, handler in self.previous.items():
            signal.signal(sig, handler)
        self.previous.clear()

    def release(self) -> None:
        """Raise a signal that came while holding; from now on signals raise at once."""
        self.holding = False
        if self.pending is not None:
            signum, self.pending = self.pending, None
            self.holding = True
            raise WriteInterrupted(signum, self.target)

    def hold(self) -> None:
        self.holding = True


def _os_reason(exc: OSError) -> str:
    if exc.errno in (errno.ENOSPC, errno.EDQUOT):
        return "the disk is full"
    if exc.errno in (errno.EACCES, errno.EPERM):
        return "permission denied"
    if exc.errno == errno.EROFS:
        return "the file system is read-only"
    return exc.strerror or exc.__class__.__name__


def read_input(path: StrPath, max_bytes: int) -> bytes:
    """The bytes of ``path``, opened read-only; refuses files over ``max_bytes``.

    >>> read_input("/no/such/file.xlsx", 10)
    Traceback (most recent call last):
    ...
    udfs.xlsx.file_errors.FileSafetyError: /no/such/file.xlsx: no such file
    """
    p = Path(path)
    try:
        with open(p, "rb") as fh:  # read-only: the input is never modified
            data = fh.read(max_bytes + 1)
    except FileNotFoundError:
        raise FileSafetyError(f"{p}: no such file") from None
    except IsADirectoryError:
        raise FileSafetyError(f"{p}: is a directory, not a file") from None
    except OSError as exc:
        raise FileSafetyError(f"{p}: cannot be read: {_os_reason(exc)}") from None
    if len(data) > max_bytes:
        raise FileSafetyError(
            f"{p}: larger than the {max_bytes // (1024 * 1024)} MiB the engine accepts"
        )
    return data


def _same_file(a: Path, b: Path) -> bool:
    try:
        return a.exists() and b.exists() and os.path.samefile(a, b)
    except OSError:
        return False


def check_output(path: StrPath, force: bool = False, inputs: Iterable[StrPath] = ()) -> Path:
    """Refuse an output that cannot or must not be written; return it as a Path.

    Reasons: it is one of the inputs, it exists (without ``force``), it is a
    directory, its directory is missing or not writable.
    """
    p = Path(path)
    for src in inputs:
        s = Path(src)
        if _same_file(p, s) or p.resolve() == s.resolve():
            raise FileSafetyError(f"{p}: is the input file; choose another output name")
    if p.is_dir():
        raise FileSafetyError(f"{p}: is a directory; give a file name")
    if (p.exists() or p.is_symlink()) and not force:
        raise FileSafetyError(f"{p.name} already exists; add --force to replace it")
    parent = p.parent if str(p.parent) else Path(".")
    if not parent.is_dir():
        raise FileSafetyError(f"{p}: the directory {parent} does not exist")
    if not os.access(parent, os.W_OK | os.X_OK):
        raise FileSafetyError(f"{p}: the directory {parent} is not writable")
    return p


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


@contextlib.contextmanager
def atomic_writer(
    path: StrPath, force: bool = False, inputs: Iterable[StrPath] = ()
) -> Iterator[BinaryIO]:
    """Context manager yielding a binary file; on success it becomes ``path``.

    The temporary file lives beside ``path`` (same file system, so the final
    move is atomic). Any exception inside the block, or while flushing, and
    any of STOP_SIGNALS removes it and leaves an existing ``path`` as it was
    (see the module doc).
    """
    target = check_output(path, force, inputs)
    parent = target.parent if str(target.parent) else Path(".")
    guard = _SignalGuard(target)
    guard.install()  # holding: a signal now waits until the temporary file is known
    committed = False
    try:
        try:
            fd, tmp_name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=parent)
        except OSError as exc:
            raise FileSafetyError(
                f"{target}: cannot create a file in {parent}: {_os_reason(exc)}"
            ) from None
        tmp = Path(tmp_name)
        try:
            with os.fdopen(fd, "wb") as fh:
                guard.release()  # a signal from here on removes the temporary file
                yield fh
                fh.flush()
                os.fsync(fh.fileno())
            mode = 0o666 & ~_umask()
            if target.exists() and force:
                mode = target.stat().st_mode & 0o777
            os.chmod(tmp, mode)
            guard.hold()  # the move is not interrupted half-way
            _commit(tmp, target, force)
            committed = True
            _fsync_dir(parent)
        except OSError as exc:
            if isinstance(exc, FileExistsError) and not force:
                raise FileSafetyError(
                    f"{target.name} already exists; add --force to replace it"
                ) from None
            raise FileSafetyError(
                f"{target}: write failed: {_os_reason(exc)}; any existing file is unchanged"
            ) from None
        finally:
            if not committed:
                guard.hold()
                with contextlib.suppress(OSError):
                    tmp.unlink()
    finally:
        guard.restore()
    if committed and guard.pending is not None:  # it came during the move: output complete
        raise WriteInterrupted(guard.pending, target, written=True)


def _commit(tmp: Path, target: Path, force: bool) -> None:
    if force:
        os.replace(tmp, target)
        return
    try:
        os.link(tmp, target)  # fails if target appeared meanwhile: nothing is clobbered
    except FileExistsError:
        raise
    except OSError:  # no hard links on this file system: check, then rename
        if target.exists():
            raise FileExistsError(errno.EEXIST, "exists", str(target)) from None
        os.replace(tmp, target)
        return
    tmp.unlink()


def _fsync_dir(directory: Path) -> None:
    with contextlib.suppress(OSError):  # not possible on every platform; best effort
        fd = os.open(directory, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def write_bytes_atomic(
    path: StrPath, data: bytes, force: bool = False, inputs: Iterable[StrPath] = ()
) -> None:
    """Write ``data`` to ``path`` atomically (see :func:`atomic_writer`)."""
    with atomic_writer(path, force, inputs) as fh:
        fh.write(data)
