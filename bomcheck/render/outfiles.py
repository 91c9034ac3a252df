"""Report stage, file edge: every output file is written whole or not at all, one run at a time.

- A report is written to a temporary file in the target's own folder, named
  ``.<target>.bomcheck-<pid>-<random>.tmp`` so that it is recognisably ours, flushed and fsynced,
  then renamed over the target (``os.replace``, atomic on one file system) and the folder entry
  fsynced. Any exit before the rename (an error, Ctrl-C, SIGTERM) removes it; after a SIGKILL the next run
  writing the same target removes the leftovers of processes that no longer exist.
- openpyxl's write-only sheets stream through temporary files of their own; while a workbook is
  written they go to a private folder beside the target (``.<target>.bomcheck-<pid>-<random>.d``),
  removed with the workbook's temporary file, so none is left in the system temp folder.
- Concurrent runs: **an advisory lock** (``fcntl.flock``) on ``.bomcheck.lock`` in each folder
  that receives an output, taken in sorted folder order for the whole set of a run's outputs, so
  two runs writing the same outputs serialise: each run's set is written complete, and the set
  on disk afterwards is one run's, never a mix. (No lock on systems without ``fcntl``.)
- File names are used as the operating system gives them (a non-UTF-8 name arrives as
  surrogate escapes and is written back byte for byte); text is written as UTF-8 with anything
  that cannot be encoded (a lone surrogate copied from such a name) replaced.
"""

from __future__ import annotations

import errno
import os
import re
import secrets
import shutil
import signal
import sys
import tempfile
import threading
from collections.abc import Iterable, Iterator
from contextlib import contextmanager, nullcontext
from pathlib import Path

from bomcheck.errors import InputError

try:  # POSIX only
    import fcntl
except ImportError:  # pragma: no cover - Windows
    fcntl = None

LOCK_NAME = ".bomcheck.lock"
_OURS = re.compile(r"^\.(?P<target>.+)\.bomcheck-(?P<pid>\d+)-[0-9a-f]{8}\.(tmp|d)$")
_TEMPDIR_LOCK = threading.Lock()


def _alive(pid: int) -> bool:
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # another user's process
        return True
    return True


def clean_stale(target: Path) -> list[Path]:
    """Remove our temporary files and folders for ``target`` left by processes that no longer
    run (a killed run); returns what was removed."""
    removed = []
    folder = target.parent if str(target.parent) else Path(".")
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return removed
    for entry in entries:
        m = _OURS.match(entry.name)
        if not m or m.group("target") != target.name or _alive(int(m.group("pid"))):
            continue
        path = Path(entry.path)
        try:
            if entry.is_dir(follow_symlinks=False):
                shutil.rmtree(path, ignore_errors=True)
            else:
                path.unlink()
            removed.append(path)
        except OSError:
            pass
    return removed


def _fsync_dir(folder: Path) -> None:
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def _cannot_write(path: os.PathLike | str, exc: OSError, what: str = "report") -> InputError:
    return InputError(f"cannot write {what}: {exc.strerror or exc}", path=printable(path))


def printable(path: os.PathLike | str) -> str:
    """A file name as a message can print it (undecodable bytes shown as ``\\xNN``)."""
    text = os.fspath(path)
    return text.encode("utf-8", "surrogateescape").decode("utf-8", "backslashreplace")


@contextmanager
def atomic_path(path: os.PathLike | str, *, private_tempdir: bool = False,
                what: str = "report") -> Iterator[Path]:
    """Yield a temporary path beside ``path``; when the block ends normally the file there is
    fsynced and renamed over ``path``; on any exception it is removed and ``path`` is left as
    it was. With ``private_tempdir``, Python's temporary files made meanwhile (openpyxl's)
    go to a private folder beside ``path``, removed at the end."""
    target = Path(path)
    clean_stale(target)
    stem = f".{target.name}.bomcheck-{os.getpid()}-{secrets.token_hex(4)}"
    tmp = target.with_name(stem + ".tmp")
    private = target.with_name(stem + ".d") if private_tempdir else None
    try:
        if private is not None:
            private.mkdir()
        with _tempdir(private):
            yield tmp
        with open(tmp, "rb+") as f:
            os.fsync(f.fileno())
        os.replace(tmp, target)
        _fsync_dir(target.parent if str(target.parent) else Path("."))
    except OSError as exc:
        tmp.unlink(missing_ok=True)
        raise _cannot_write(path, exc, what) from None
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    finally:
        if private is not None:
            shutil.rmtree(private, ignore_errors=True)


@contextmanager
def _tempdir(folder: Path | None):
    """Point ``tempfile`` at ``folder`` meanwhile (one writer at a time in this process)."""
    if folder is None:
        yield
        return
    with _TEMPDIR_LOCK:
        saved = tempfile.tempdir
        tempfile.tempdir = str(folder)
        try:
            yield
        finally:
            tempfile.tempdir = saved


def write_text(path: str, text: str | Iterable[str]) -> None:
    """Write ``text`` (a string or an iterable of strings) to ``path`` atomically as UTF-8
    ('-' is standard output)."""
    pieces = [text] if isinstance(text, str) else text
    if path == "-":
        out = sys.stdout
        for piece in pieces:
            out.write(piece.encode("utf-8", "replace").decode("utf-8")
                      if _has_surrogate(piece) else piece)
        out.flush()
        return
    with atomic_path(path) as tmp:
        with open(tmp, "w", encoding="utf-8", errors="replace", newline="\n") as f:
            f.writelines(pieces)


def _has_surrogate(text: str) -> bool:
    return any("\ud800" <= ch <= "\udfff" for ch in text) if not text.isascii() else False


def _terminate(signum, frame):  # pragma: no cover - exercised by a signal
    raise SystemExit(128 + signum)


@contextmanager
def _cleanup_on_sigterm():
    """While outputs are written, SIGTERM exits through Python's unwinding, so the temporary
    files are removed (the default action would end the process on the spot)."""
    try:
        previous = signal.signal(signal.SIGTERM, _terminate)
    except (ValueError, AttributeError):  # not the main thread, or no SIGTERM
        yield
        return
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


@contextmanager
def output_lock(paths: Iterable[str]):
    """Hold an advisory lock on every folder receiving one of ``paths`` (module docstring);
    meanwhile a SIGTERM still removes the temporary files."""
    with _cleanup_on_sigterm():
        with _locked(paths):
            yield


@contextmanager
def _locked(paths: Iterable[str]):
    folders = sorted({os.path.abspath(os.path.dirname(os.path.abspath(p)))
                      for p in paths if p != "-"})
    if fcntl is None or not folders:
        with nullcontext():
            yield
        return
    handles = []
    try:
        for folder in folders:
            try:
                fd = os.open(os.path.join(folder, LOCK_NAME), os.O_RDWR | os.O_CREAT, 0o644)
            except OSError as exc:
                if exc.errno in (errno.EACCES, errno.EROFS, errno.ENOENT):
                    continue  # the write itself will report the folder
                raise _cannot_write(folder, exc) from None
            handles.append(fd)
            fcntl.flock(fd, fcntl.LOCK_EX)
        yield
    finally:
        for fd in reversed(handles):
            try:
                fcntl.flock(fd, fcntl.LOCK_UN)
            finally:
                os.close(fd)
