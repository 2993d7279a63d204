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
    for _ in range(1000):
        temporary = os.path.join(path.parent, f".{path.stem}.{os.getpid()}-{next(_NUMBERS)}.part{path.suffix}")
        try:
            return os.open(temporary, _NEW_FILE, 0o666), temporary
        except FileExistsError:  # left by an earlier process of the same number: take the next
            continue
        except FileNotFoundError:  # the folder is not there yet
            path.parent.mkdir(parents=True, exist_ok=True)
    handle, temporary = tempfile.mkstemp(prefix=f".{path.stem}.", suffix=f".part{path.suffix}", dir=path.parent)
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(temporary, 0o666 & ~umask)  # mkstemp makes the file private; give it the usual mode
    return handle, temporary


@contextlib.contextmanager
def _beside(path):
    """A temporary file in ``path``'s folder, as (open handle, name), moved onto ``path`` when the block ends
    without an error; otherwise removed. Errors name ``path``, never the temporary file."""
    try:
        handle, temporary = _create_beside(path)
    except OSError as exc:  # name the file the user asked for, not a temporary one
        raise OSError(exc.errno, exc.strerror, str(path)) from exc
    try:
        yield handle, temporary
        os.replace(temporary, path)
    except BaseException as exc:
        if os.path.exists(temporary):
            os.unlink(temporary)
        if isinstance(exc, OSError) and exc.filename == temporary:
            raise OSError(exc.errno, exc.strerror, str(path)) from exc
        raise


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
    """Write ``data`` to ``path`` through a temporary file in the same folder and a rename (one open)."""
    with _beside(Path(path)) as (handle, _):
        try:
            view = memoryview(data)
            while view:
                view = view[os.write(handle, view):]
        finally:
            os.close(handle)


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
