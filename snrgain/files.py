"""Reading input files within limits, and writing output files whole or not at all.

Every file snrgain reads goes through :func:`read_limited`: it must be a regular file (not a device such as
``/dev/zero``, a pipe or a folder) no larger than the reader's limit, checked before any byte is read.

Every file snrgain writes goes through :func:`write_atomic`: the content is
written to a temporary file in the same folder, then renamed over the target,
so a reader never sees half a file and an interrupted run leaves the old file
(or none).  An existing file is replaced only when ``overwrite`` is true.  A set of files (the figures) goes
through :func:`write_set`: written into a temporary folder beside the targets, then moved into place together.
Temporary files and folders are named ``.snrgain-tmp-<process id>-...``; one left by a process that no longer
runs (killed with SIGKILL, or the machine stopped) is removed the next time snrgain writes into that folder.
"""

from __future__ import annotations

import contextlib
import errno
import os
import re
import shutil
import signal
import stat
import tempfile
from collections.abc import Callable
from pathlib import Path

from snrgain.errors import stop_if_asked

TMP_PREFIX = ".snrgain-tmp-"
"""The start of every temporary file or folder snrgain makes beside its outputs."""
_TMP_NAME = re.compile(re.escape(TMP_PREFIX) + r"(\d+)-")


class InputFileError(ValueError):
    """A file that is not read: not a regular file, too large, or unreadable; the message names it and the limit."""


_INPUTS: set | None = None
"""(device, inode) of every file :func:`read_limited` read within :func:`command_inputs` (one command's run);
None outside one."""


@contextlib.contextmanager
def command_inputs():
    """Within it, the files read are remembered and :func:`check_writable` refuses to write over one of them (an
    output named like the command's own scenario or readings, with --overwrite, would destroy it)."""
    global _INPUTS, _OUTPUTS
    saved, _INPUTS, _OUTPUTS = (_INPUTS, _OUTPUTS), set(), set()
    try:
        yield
    finally:
        _INPUTS, _OUTPUTS = saved


_OUTPUTS: set | None = None
"""The output paths one command's run has claimed (:func:`claim_output`); None outside one."""


def claim_output(path: str | Path) -> None:
    """Within :func:`command_inputs`, refuse a path given for two of the command's outputs (the second would
    replace the first, or be refused as existing after the first was written)."""
    if _OUTPUTS is None:
        return
    key = os.path.abspath(path)
    if key in _OUTPUTS:
        raise ValueError(f"{path} is given for two outputs; give each its own file")
    _OUTPUTS.add(key)


def kind_of(mode: int) -> str:
    """What a path that is not a regular file is, by its ``st_mode``: "a folder", or "a device, a pipe or a socket"."""
    return "a folder" if stat.S_ISDIR(mode) else "a device, a pipe or a socket"


def read_limited(path: str | Path, *, limit_bytes: int, what: str = "file") -> bytes:
    """The bytes of ``path``, refused up front unless it is a regular file of at most ``limit_bytes``.

    The file is opened without blocking (a named pipe with no writer does not hang) and checked by ``fstat`` on
    the open descriptor, so what is checked is what is read; at most ``limit_bytes + 1`` bytes are ever read
    (a file that grows meanwhile is refused too).
    """
    p = Path(path)
    try:
        fd = os.open(p, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        raise InputFileError(f"{p}: cannot read the {what} ({exc.strerror or exc})") from None
    try:
        st = os.fstat(fd)
        if _INPUTS is not None:
            _INPUTS.add((st.st_dev, st.st_ino))
        if not stat.S_ISREG(st.st_mode):
            raise InputFileError(f"{p}: the {what} is {kind_of(st.st_mode)}, not a regular file; give a file")
        if st.st_size > limit_bytes:
            raise InputFileError(f"{p}: the {what} is {st.st_size:,} bytes; at most {_size(limit_bytes)} is read")
        chunks, total = [], 0
        while total <= limit_bytes:
            chunk = os.read(fd, min(1 << 20, limit_bytes + 1 - total))
            if not chunk:
                break
            chunks.append(chunk)
            total += len(chunk)
        if total > limit_bytes:
            raise InputFileError(f"{p}: the {what} grew beyond {_size(limit_bytes)} while it was read")
        return b"".join(chunks)
    except OSError as exc:
        raise InputFileError(f"{p}: cannot read the {what} ({exc.strerror or exc})") from None
    finally:
        os.close(fd)


def _size(n: int) -> str:
    return f"{n / 1e6:g} MB" if n >= 1_000_000 else f"{n / 1e3:g} kB"


def _alive(pid: int) -> bool:
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:  # exists, owned by someone else
        return True
    return True


def remove_stale(folder: str | Path) -> list[Path]:
    """Remove the temporary files and folders (``.snrgain-tmp-<pid>-...``) that processes no longer running left
    in ``folder``; returns what was removed.  Those of running processes (another snrgain writing) are kept."""
    removed = []
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return removed
    for entry in entries:
        m = _TMP_NAME.match(entry.name)
        if m is None or _alive(int(m.group(1))):
            continue
        try:
            if entry.is_dir(follow_symlinks=False):
                shutil.rmtree(entry.path)
            else:
                os.unlink(entry.path)
            removed.append(Path(entry.path))
        except OSError:
            pass
    return removed


def _tmp_prefix(name: str) -> str:
    return f"{TMP_PREFIX}{os.getpid()}-{name}."


class _SignalsDeferred:
    """SIGINT and SIGTERM recorded, not acted on, for a few system calls (making a temporary and noting it for
    clean-up; the renames that put a set in place); on leaving, a recorded signal is handed to the handler that
    was in force (the command line's raises there, where the caller's clean-up runs).

    Python runs signal handlers in the main thread whichever thread the kernel picked, so swapping the Python
    handlers covers every thread; outside the main thread nothing is swapped (handlers cannot be set there)."""

    _SIGNALS = (signal.SIGINT, signal.SIGTERM)

    def __enter__(self):
        import threading

        self._old, self._got = {}, []
        if threading.current_thread() is threading.main_thread():
            for sig in self._SIGNALS:
                self._old[sig] = signal.signal(sig, lambda signum, frame: self._got.append(signum))
        return self

    def __exit__(self, *exc):
        for sig, handler in self._old.items():
            signal.signal(sig, handler)
        if self._got:
            signum = self._got[0]
            handler = self._old.get(signum)
            if callable(handler):
                handler(signum, None)
            elif handler == signal.SIG_DFL:
                os.kill(os.getpid(), signum)
        return False


class OutputExistsError(FileExistsError):
    """The output file exists and overwriting was not asked for; ``path`` names it."""

    def __init__(self, path: Path):
        self.path = Path(path)
        super().__init__(f"{self.path} exists; it was not replaced")


class OutputWriteError(OSError):
    """An output that could not be written (a folder the user cannot write, a full disk): the message names the
    output the user gave and the reason, never the temporary file it was written through."""

    def __init__(self, path: Path, exc: OSError, *, folder: bool = False):
        self.path = Path(path)
        where = f"into the folder {self.path}" if folder else str(self.path)
        super().__init__(f"cannot write {where} ({exc.strerror or exc}); nothing was written")
        self.refused = exc.errno in (errno.EACCES, errno.EPERM, errno.EROFS)
        """The place refuses writing (the user's choice of output, an input error), not a failure such as a full
        disk."""


def _about_output(exc: OSError, paths) -> bool:
    """Whether ``exc`` is about writing one of ``paths`` or a temporary beside them (not about some other file)."""
    names = [n for n in (exc.filename, exc.filename2) if n is not None]
    return all(Path(n) in paths or TMP_PREFIX in str(n) for n in names)


def missing_folder(d: str | Path) -> FileNotFoundError:
    """The error for an output folder that does not exist: what to do about it (snrgain makes no folders)."""
    return FileNotFoundError(f"folder {d} does not exist; create it first (mkdir {d}) or name another")


def check_writable(path: str | Path, *, overwrite: bool, replaces: str | Path | None = None) -> Path:
    """Check, before any work, that ``path`` can be written: not an existing file unless ``overwrite``, never a
    link, a folder or a device, in a folder that exists and can be written, never a file the command read
    (:func:`command_inputs`) but ``replaces``, the one it is an updated copy of (a scenario edited in place).
    Returns the path."""
    p = Path(path)
    if str(path).endswith(("/", os.sep)):  # Path() drops the slash: 'out/' would write a file named 'out'
        raise ValueError(f"{path} names a folder; give a file name")
    if p.is_symlink():
        raise ValueError(f"{p} is a symbolic link; give the file it points to, or another name")
    if p.exists() and not p.is_file():
        raise ValueError(f"{p} exists and is not a regular file (a folder or a device); give a file name")
    if _INPUTS and p.is_file() and not (replaces is not None and Path(replaces).is_file() and p.samefile(replaces)):
        st = p.stat()
        if (st.st_dev, st.st_ino) in _INPUTS:
            raise ValueError(f"{p} is one of this command's inputs; give the output another name (nothing was written)")
    if p.exists() and not overwrite:
        raise OutputExistsError(p)
    if not p.parent.exists():
        raise missing_folder(p.parent)
    if not os.access(p.parent, os.W_OK | os.X_OK):
        raise PermissionError(f"folder {p.parent} cannot be written")
    return p


def write_atomic(
    path: str | Path,
    content: str | bytes | Callable[[Path], None],
    *,
    overwrite: bool = False,
    replaces: str | Path | None = None,
) -> Path:
    """Write ``content`` to ``path`` whole or not at all.

    ``content`` is text (UTF-8), bytes, or a function that writes the file at the temporary path it is given
    (e.g. ``lambda p: fig.savefig(p)``).  A new file gets the permissions the user's umask gives new files; a
    replaced one keeps its own.  Interrupted (an exception, Ctrl-C, or SIGTERM through the command line's
    handler), the temporary file is removed and the old file stays as it was.
    """
    p = check_writable(path, overwrite=overwrite, replaces=replaces)
    remove_stale(p.parent)
    tmp_path = None
    try:
        with _SignalsDeferred():  # no signal between making the temporary and knowing to remove it
            fd, tmp = tempfile.mkstemp(prefix=_tmp_prefix(p.name), suffix=p.suffix, dir=p.parent)
            tmp_path = Path(tmp)
        if callable(content):
            os.close(fd)
            content(tmp_path)
        else:
            data = content.encode("utf-8") if isinstance(content, str) else content
            with os.fdopen(fd, "wb") as fh:
                fh.write(data)
        if not overwrite and p.exists():
            raise OutputExistsError(p)
        stop_if_asked()  # a stop whose exception was lost on the way (errors.RECEIVED) still stops here
        if p.is_file():  # a replaced file keeps its permissions
            mode = p.stat().st_mode & 0o7777
        else:
            mask = os.umask(0)
            os.umask(mask)
            mode = 0o666 & ~mask
        os.chmod(tmp_path, mode)
        os.replace(tmp_path, p)
    except BaseException as exc:
        if tmp_path is not None:
            with _SignalsDeferred():  # a second signal must not cut the clean-up short
                tmp_path.unlink(missing_ok=True)
        if isinstance(exc, OSError) and not isinstance(exc, FileExistsError) and _about_output(exc, [p]):
            raise OutputWriteError(p, exc) from None
        raise
    return p


def write_set(folder: str | Path, writers: dict[str, Callable[[Path], None]], *, overwrite: bool = False) -> list[Path]:
    """Write several files into ``folder`` as one set: all new ones or, interrupted, the old ones.

    ``writers`` maps each file name to a function that writes the file at the path it is given.  Every target is
    checked first (existing files need ``overwrite``); the files are written into a temporary folder beside them,
    then renamed into place with SIGINT and SIGTERM deferred, so a Ctrl-C or a kill leaves the old set (or the
    new one) whole.  Only SIGKILL or a power cut during the renames (microseconds) can leave a mix.  Returns the
    paths written.
    """
    d = Path(folder)
    if not d.is_dir():
        raise missing_folder(d)
    targets = [check_writable(d / name, overwrite=overwrite) for name in writers]
    remove_stale(d)
    try:
        _write_set(d, writers, targets)
    except OSError as exc:
        if not isinstance(exc, FileExistsError) and _about_output(exc, [d, *targets]):
            raise OutputWriteError(d, exc, folder=True) from None
        raise
    return targets


def _write_set(d: Path, writers: dict[str, Callable[[Path], None]], targets: list[Path]) -> None:
    tmp_dir = None
    try:
        with _SignalsDeferred():  # no signal between making the folder and knowing to remove it
            tmp_dir = Path(tempfile.mkdtemp(prefix=_tmp_prefix("set"), dir=d))
        for name, write in writers.items():
            write(tmp_dir / name)
        stop_if_asked()
        with _SignalsDeferred():
            for name, target in zip(writers, targets):
                src = tmp_dir / name
                if target.is_file():
                    os.chmod(src, target.stat().st_mode & 0o7777)
                os.replace(src, target)
    finally:
        if tmp_dir is not None:
            with _SignalsDeferred():  # a signal must not cut the clean-up short
                shutil.rmtree(tmp_dir, ignore_errors=True)
