"""Writing output files whole or not at all.

Every file snrgain writes goes through :func:`write_atomic`: the content is
written to a temporary file in the same folder, then renamed over the target,
so a reader never sees half a file and an interrupted run leaves the old file
(or none).  An existing file is replaced only when ``overwrite`` is true.
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Callable
from pathlib import Path


class OutputExistsError(FileExistsError):
    """The output file exists and overwriting was not asked for; ``path`` names it."""

    def __init__(self, path: Path):
        self.path = Path(path)
        super().__init__(f"{self.path} exists; it was not replaced")


def check_writable(path: str | Path, *, overwrite: bool) -> Path:
    """Check, before any work, that ``path`` can be written: not an existing file unless ``overwrite``, never a
    link, a folder or a device, in a folder that exists and can be written.  Returns the path."""
    p = Path(path)
    if p.is_symlink():
        raise ValueError(f"{p} is a symbolic link; give the file it points to, or another name")
    if p.exists() and not p.is_file():
        raise ValueError(f"{p} exists and is not a regular file (a folder or a device); give a file name")
    if p.exists() and not overwrite:
        raise OutputExistsError(p)
    if not p.parent.exists():
        raise FileNotFoundError(f"folder {p.parent} does not exist")
    if not os.access(p.parent, os.W_OK | os.X_OK):
        raise PermissionError(f"folder {p.parent} cannot be written")
    return p


def write_atomic(path: str | Path, content: str | bytes | Callable[[Path], None], *, overwrite: bool = False) -> Path:
    """Write ``content`` to ``path`` whole or not at all.

    ``content`` is text (UTF-8), bytes, or a function that writes the file at the temporary path it is given
    (e.g. ``lambda p: fig.savefig(p)``).  A new file gets the permissions the user's umask gives new files; a
    replaced one keeps its own.  Interrupted (an exception, Ctrl-C, or SIGTERM through the command line's
    handler), the temporary file is removed and the old file stays as it was.
    """
    p = check_writable(path, overwrite=overwrite)
    fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=p.suffix, dir=p.parent)
    tmp_path = Path(tmp)
    try:
        if callable(content):
            os.close(fd)
            content(tmp_path)
        else:
            data = content.encode("utf-8") if isinstance(content, str) else content
            with os.fdopen(fd, "wb") as fh:
                fh.write(data)
        if not overwrite and p.exists():
            raise OutputExistsError(p)
        if p.is_file():  # a replaced file keeps its permissions
            mode = p.stat().st_mode & 0o7777
        else:
            mask = os.umask(0)
            os.umask(mask)
            mode = 0o666 & ~mask
        os.chmod(tmp_path, mode)
        os.replace(tmp_path, p)
    except BaseException:
        tmp_path.unlink(missing_ok=True)
        raise
    return p
