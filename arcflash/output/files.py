"""Writing output files atomically: a temporary file in the same folder, then a rename."""

from __future__ import annotations

import contextlib
import itertools
import os
import tempfile
from pathlib import Path


_NUMBERS = itertools.count()
_NEW_FILE = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)


def _create_beside(path):
    """Create a new temporary file in ``path``'s folder, ``.<name>.<process>-<number>.part<suffix>``, with
    the usual mode of a new file (0666 less the umask, as the final file gets); (handle, name)."""
    folder, name = os.path.split(os.fspath(path))
    stem, suffix = os.path.splitext(name)
    prefix = os.path.join(folder, f".{stem}.{os.getpid()}-")
    for _ in range(1000):
        temporary = f"{prefix}{next(_NUMBERS)}.part{suffix}"
        try:
            return os.open(temporary, _NEW_FILE, 0o666), temporary
        except FileExistsError:  # left by an earlier process of the same number: take the next
            continue
        except FileNotFoundError:  # the folder is not there yet
            Path(folder or ".").mkdir(parents=True, exist_ok=True)
    handle, temporary = tempfile.mkstemp(prefix=f".{stem}.", suffix=f".part{suffix}", dir=folder or None)
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(temporary, 0o666 & ~umask)  # mkstemp makes the file private; give it the usual mode
    return handle, temporary


def _open_beside(path):
    """:func:`_create_beside`, its errors naming ``path`` (the file the user asked for), not a temporary."""
    try:
        return _create_beside(path)
    except OSError as exc:
        raise OSError(exc.errno, exc.strerror, str(path)) from exc


def _failed(temporary, path, exc):
    """Remove the temporary file of a failed write; the error to raise: ``exc``, or one naming ``path``
    where ``exc`` names the temporary file."""
    if os.path.exists(temporary):
        os.unlink(temporary)
    if isinstance(exc, OSError) and exc.filename == temporary:
        return OSError(exc.errno, exc.strerror, str(path))
    return exc


@contextlib.contextmanager
def _beside(path):
    """A temporary file in ``path``'s folder, as (open handle, name), moved onto ``path`` when the block ends
    without an error; otherwise removed. Errors name ``path``, never the temporary file."""
    handle, temporary = _open_beside(path)
    try:
        yield handle, temporary
        os.replace(temporary, path)
    except BaseException as exc:
        error = _failed(temporary, path, exc)
        if error is exc:
            raise
        raise error from exc


def write_atomic(path, write):
    """Call ``write(temporary_path)`` and move the result onto ``path``.

    A failure leaves ``path`` as it was (absent or the previous version) and
    removes the temporary file.

    Parameters
    ----------
    path : str or pathlib.Path
        Final file.
    write : callable
        Writes the whole content to the path it is given.
    """
    with _beside(Path(path)) as (handle, temporary):
        os.close(handle)
        write(temporary)


def write_bytes_atomic(path, data):
    """Write ``data`` to ``path`` through a temporary file in the same folder and a rename (one open); the
    steps of :func:`_beside` without a context manager (a label batch writes thousands of files)."""
    handle, temporary = _open_beside(path)
    try:
        try:
            view = memoryview(data)
            while view:
                view = view[os.write(handle, view):]
        finally:
            os.close(handle)
        os.replace(temporary, path)
    except BaseException as exc:
        error = _failed(temporary, path, exc)
        if error is exc:
            raise
        raise error from exc


#: Age after which a temporary file of write_atomic is taken as left over by an interrupted run [s] (a run
#: still writing it would have touched it since).
LEFTOVER_AGE_S = 600.0


def remove_leftovers(folder, now=None):
    """Remove the temporary files (``.<name>.<random>.part<suffix>``) that an interrupted run left in
    ``folder``, if older than :data:`LEFTOVER_AGE_S`; return their names."""
    import time

    folder = Path(folder)
    if not folder.is_dir():
        return []
    now = time.time() if now is None else now
    removed = []
    for path in folder.glob(".*.part*"):
        try:
            if path.is_file() and now - path.stat().st_mtime > LEFTOVER_AGE_S:
                path.unlink()
                removed.append(path.name)
        except OSError:
            continue  # another run removed it, or it is not ours to remove
    return sorted(removed)


class BackgroundWriter:
    """Files written atomically (:func:`write_bytes_atomic`) by one background thread while the caller
    prepares the next: creating a file is kernel work that overlaps with the caller's Python.

    Use as a context manager; ``writer(path, data)`` queues a file (at most ``depth`` waiting). The first
    error stops the writing; it is raised when the block ends (after the thread has stopped), or at the next
    ``writer(...)`` call. Every file written is complete: a failure leaves the rest unwritten.
    """

    def __init__(self, depth=64):
        import queue
        import threading

        self._queue = queue.Queue(maxsize=depth)
        self._error = None
        self._thread = threading.Thread(target=self._run, name="arcflash-writer", daemon=True)

    def _run(self):
        while True:
            item = self._queue.get()
            if item is None:
                return
            if self._error is None:
                try:
                    write_bytes_atomic(*item)
                except BaseException as exc:  # handed to the caller's thread
                    self._error = exc

    def __call__(self, path, data):
        if self._error is not None:
            raise self._error
        self._queue.put((path, data))

    def __enter__(self):
        self._thread.start()
        return self

    def __exit__(self, kind, value, traceback):
        self._queue.put(None)
        self._thread.join()
        if kind is None and self._error is not None:
            raise self._error
        return False
