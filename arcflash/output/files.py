"""Writing output files atomically: a temporary file in the same folder, then a rename."""

from __future__ import annotations

import contextlib
import itertools
import os
import shutil
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


def _write_all(handle, data):
    """Write ``data`` to an open file and close it."""
    try:
        view = memoryview(data)
        while view:
            view = view[os.write(handle, view):]
    finally:
        os.close(handle)


def _write_beside(path, data):
    """Write ``data`` to a new temporary file beside ``path``; its name. A failure leaves nothing behind."""
    handle, temporary = _open_beside(path)
    try:
        _write_all(handle, data)
    except BaseException as exc:
        error = _failed(temporary, path, exc)
        if error is exc:
            raise
        raise error from exc
    return temporary


def _write_new(path, data):
    """Write ``data`` to ``path``, a file that must not exist yet (a staging folder's)."""
    _write_all(os.open(path, _NEW_FILE, 0o666), data)


def write_bytes_atomic(path, data):
    """Write ``data`` to ``path`` through a temporary file in the same folder and a rename (one open)."""
    with _beside(Path(path)) as (handle, _):
        _write_all(handle, data)


#: Age after which a temporary file of write_atomic is taken as left over by an interrupted run [s] (a run
#: still writing it would have touched it since).
LEFTOVER_AGE_S = 600.0


def remove_leftovers(folder, now=None):
    """Remove the temporary files (``.<name>.<random>.part<suffix>``) and staging folders
    (``.<name>.<random>.part``, :class:`StagedFiles`) that an interrupted run left in ``folder``, if older
    than :data:`LEFTOVER_AGE_S`; return their names."""
    import time

    folder = Path(folder)
    if not folder.is_dir():
        return []
    now = time.time() if now is None else now
    removed = []
    for path in folder.glob(".*.part*"):
        try:
            if now - path.stat().st_mtime <= LEFTOVER_AGE_S:
                continue
            if path.is_dir():  # a staging folder of StagedFiles
                shutil.rmtree(path)
            elif path.is_file():
                path.unlink()
            else:
                continue
            removed.append(path.name)
        except OSError:
            continue  # another run removed it, or it is not ours to remove
    return sorted(removed)


class _Stage:
    """Files written in full to temporaries beside their paths, then all moved onto their paths
    (:meth:`publish`) or all removed (:meth:`discard`). The first error stops the writing and is kept."""

    def __init__(self):
        self.staged = []  # (temporary, path)
        self.error = None

    def write(self, path, data, direct=False):
        """Stage ``data`` for ``path``; ``direct``: write it at ``path`` itself (a new file in a staging
        folder of :class:`StagedFiles`, which the folder's rename publishes)."""
        if self.error is None:
            try:
                if direct:
                    _write_new(path, data)
                else:
                    self.staged.append((_write_beside(path, data), path))
            except OSError as exc:
                self.error = exc

    def publish(self):
        staged, self.staged = self.staged, []
        for k, (temporary, path) in enumerate(staged):
            if self.error is not None:
                self.staged = staged[k:]  # removed by discard
                return
            try:
                os.replace(temporary, path)
            except OSError as exc:
                self.error = OSError(exc.errno, exc.strerror, str(path))

    def discard(self):
        for temporary, _ in self.staged:
            with contextlib.suppress(OSError):
                os.unlink(temporary)
        self.staged = []


#: Frames from the caller to a file-writing process: a file beside its path, or a file written at its path
#: (in a staging folder) (path and data follow, lengths in the header); publish; end.
_FILE, _DIRECT, _PUBLISH = b"W", b"D", b"P"
_HEADER = "<II"


def _serve(source=None, sink=None):
    """A file-writing process's loop (``python -c``; this module loaded on its own, standard library only):
    read frames from ``source`` (stdin), write and publish as :class:`_Stage` does, and at the end of the
    input remove what was not published and report one line to ``sink`` (stdout): ``ok``, or ``error``,
    errno, message and path separated by tabs."""
    import struct
    import sys

    source = source or sys.stdin.buffer
    sink = sink or sys.stdout
    stage, size = _Stage(), struct.calcsize(_HEADER)

    def read(count):
        data = source.read(count)
        if len(data) != count:
            raise EOFError
        return data

    try:
        while True:
            kind = source.read(1)
            if kind in (_FILE, _DIRECT):
                path_length, data_length = struct.unpack(_HEADER, read(size))
                path = os.fsdecode(read(path_length))
                stage.write(path, read(data_length), direct=kind == _DIRECT)
            elif kind == _PUBLISH:
                stage.publish()
            else:
                break
    except EOFError:
        pass
    stage.discard()
    error = stage.error
    sink.write("ok\n" if error is None else f"error\t{error.errno}\t{error.strerror}\t{error.filename}\n")
    sink.flush()


def _staging_folder(folder):
    """Create a new hidden folder beside ``folder`` (its parents made as needed) for its files while they are
    written: ``.<name>.<process>-<number>.part``."""
    folder.parent.mkdir(parents=True, exist_ok=True)
    for _ in range(1000):
        staging = folder.parent / f".{folder.name}.{os.getpid()}-{next(_NUMBERS)}.part"
        try:
            staging.mkdir()
            return staging
        except FileExistsError:
            continue
    return Path(tempfile.mkdtemp(prefix=f".{folder.name}.", suffix=".part", dir=folder.parent))


def _move_folder(staging, folder):
    """Publish a staging folder: renamed to ``folder``, or, when ``folder`` exists by now, its files moved
    into it one by one."""
    try:
        os.rename(staging, folder)
        return
    except OSError:
        if not folder.is_dir():
            raise
    for entry in os.scandir(staging):
        os.replace(entry.path, folder / entry.name)


#: Bytes the pipe to the helper process holds where the system lets it be widened (Linux, F_SETPIPE_SZ):
#: about 250 labels, so that a moment's stall of the disk does not stop the drawing [-].
PIPE_BYTES = 1 << 20


def _widen_pipe(stream):
    """Widen a pipe's buffer to :data:`PIPE_BYTES` where the system allows (Linux); otherwise leave it."""
    try:
        import fcntl

        fcntl.fcntl(stream.fileno(), getattr(fcntl, "F_SETPIPE_SZ", 1031), PIPE_BYTES)
    except (ImportError, OSError, ValueError):
        pass


class StagedFiles:
    """Files written in two stages (:class:`_Stage`): each in full to a temporary beside its path, then,
    once every one is written, all moved onto their paths (:meth:`publish`, a rename each, in order).
    Leaving the block without publishing, or on an error, removes every temporary: nothing staged reaches
    its path.

    With ``helper`` true the files are written by a small process of its own (this module, standard library
    only) that the caller feeds through a pipe: creating thousands of files is kernel work that then runs
    beside the caller's Python instead of waiting for it (a thread would wait for the interpreter's lock
    after every system call). Otherwise they are written in the caller's process as they come.

    Each of the folders ``fresh`` that does not exist yet is staged whole: its files are written with their
    own names into a hidden staging folder beside it (``.<name>.<process>-<number>.part``), which is renamed
    to the folder on publishing (one rename, half the file system's work of a temporary and a rename per
    file); should the folder have appeared meanwhile, the files are moved into it one by one.

    Use as a context manager; ``staged(path, data)`` stages a file. The first error stops the writing; it
    is raised when the block ends (after the temporaries are removed), naming the file.
    """

    def __init__(self, helper=False, fresh=()):
        self._helper = None
        self._stage = _Stage()
        self._publish = False
        self._lost = None
        self._helper_wanted = helper
        self._fresh_wanted = [Path(folder) for folder in fresh]
        self._fresh = {}  # folder (text) -> (folder, staging folder)

    def __enter__(self):
        for folder in self._fresh_wanted:
            if not folder.exists():
                self._fresh[os.fspath(folder)] = (folder, _staging_folder(folder))
        if self._helper_wanted:
            import subprocess
            import sys

            code = ("import importlib.util, sys; spec = importlib.util.spec_from_file_location('arcflash_files', "
                    "sys.argv[1]); module = importlib.util.module_from_spec(spec); spec.loader.exec_module(module); "
                    "module._serve()")
            try:
                self._helper = subprocess.Popen([sys.executable, "-I", "-c", code, __file__], bufsize=1 << 16,
                                                stdin=subprocess.PIPE, stdout=subprocess.PIPE,
                                                stderr=subprocess.PIPE)
            except (OSError, ValueError):  # no interpreter to start (an embedded one): written in-process
                self._helper = None
            else:
                _widen_pipe(self._helper.stdin)
        return self

    def __call__(self, path, data):
        folder, name = os.path.split(os.fspath(path))
        staged = self._fresh.get(folder)
        if staged is not None:  # a file of a fresh folder: written with its name in the staging folder
            path = os.path.join(staged[1], name)
        if self._helper is None:
            self._stage.write(path, data, direct=staged is not None)
            if self._stage.error is not None:
                raise self._stage.error
            return
        import struct

        name = os.fsencode(os.fspath(path))
        try:
            kind = _DIRECT if staged is not None else _FILE
            self._helper.stdin.write(kind + struct.pack(_HEADER, len(name), len(data)) + name)
            self._helper.stdin.write(data)
        except (BrokenPipeError, OSError) as exc:  # the writing process has gone: said when the block ends
            self._lost = exc

    def publish(self):
        """Move every staged file onto its path, once all are written (when the block ends)."""
        self._publish = True

    def __exit__(self, kind, value, traceback):
        publish = kind is None and self._publish
        if self._helper is None:
            if publish:
                self._stage.publish()
            self._stage.discard()
            error = self._stage.error
        else:
            error = self._finish_helper(publish)
        for folder, staging in self._fresh.values():
            if publish and error is None:
                try:
                    _move_folder(staging, folder)
                except OSError as exc:
                    error = exc
            shutil.rmtree(staging, ignore_errors=True)  # what was not published
        if kind is None and error is not None:
            raise error
        return False

    def _finish_helper(self, publish):
        """End the writing process (publishing first if asked); the error it reports, or None."""
        lost = self._lost
        try:
            if publish and lost is None:
                self._helper.stdin.write(_PUBLISH)
            self._helper.stdin.close()
        except OSError as exc:
            lost = lost or exc
        report = self._helper.stdout.read().decode("utf-8", "replace").strip()
        complaint = self._helper.stderr.read().decode("utf-8", "replace").strip().splitlines()
        self._helper.stdout.close()
        self._helper.stderr.close()
        self._helper.wait()
        if report.startswith("error\t"):
            _, errno, message, path = report.split("\t", 3)
            return OSError(int(errno) if errno.lstrip("-").isdigit() else None, message, path)
        if report != "ok" or lost is not None:
            why = report or (complaint[-1] if complaint else None) or lost or "no report"
            return OSError(f"the file-writing process stopped ({why}); check the output folder: its files may "
                           "be incomplete")
        return None
