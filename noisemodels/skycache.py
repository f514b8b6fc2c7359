"""A persistent cache of computed sky maps (and of the half-space field tables, noisemodels.halfspace), so that a
run that leaves the noise and the ground alone does not recompute them.

Each entry is one array (a .npy file) named by the SHA-256 of a key: a dict of every input that enters the
array, with a kind and a version (bumped when the model's code changes what it computes).  The folder is the
user's cache folder (platformdirs), under ``sky/v<FORMAT>``, or $SNRGAIN_CACHE_DIR.

- Opt-out: SNRGAIN_NO_CACHE set to anything but "" or "0" (nothing is read or written).
- Size bound: $SNRGAIN_CACHE_MAX_MB (default 200); after a write, the least recently used entries are removed
  until the folder is within the bound.  A hit refreshes its entry's time.
- Safe under concurrent runs: an entry is written to a temporary file in the same folder and renamed into
  place (atomic on one file system), so a reader sees a whole entry or none; an unreadable entry counts as a
  miss and is removed.  Failures to write (read-only or full disk) are ignored: the cache only saves time.

Small values (a loop's static constants, a wire's line-mode constants: a few numbers that cost milliseconds each)
go through :func:`remembered`: read back when a run has made them before, else computed and written, at most
:data:`SMALL_WRITES` of a kind per process (a sweep or a layout trying thousands of designs writes no more than
that), without the size bound's walk over the folder (a few hundred bytes each; the next large write counts them).
Their keys carry a version and a digest of the code that computes them (:func:`code_digest`).
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import tempfile
from pathlib import Path

import numpy as np

FORMAT = 1
"""Version of the file layout; part of the folder name."""
DEFAULT_MAX_MB = 200.0
ENV_DIR = "SNRGAIN_CACHE_DIR"
ENV_OFF = "SNRGAIN_NO_CACHE"
ENV_MAX_MB = "SNRGAIN_CACHE_MAX_MB"


def enabled() -> bool:
    """False when the user opted out ($SNRGAIN_NO_CACHE)."""
    return os.environ.get(ENV_OFF, "") in ("", "0")


_FOLDERS: dict[tuple, Path] = {}


def folder() -> Path:
    """Where the entries live: $SNRGAIN_CACHE_DIR, else the user cache folder of snrgain.  Worked out once per process
    and setting of the variables it reads (each read of a small entry asked it again: 40 us, a fifth of a wire mode's
    read)."""
    env = os.environ
    settings = (env.get(ENV_DIR), env.get("XDG_CACHE_HOME"), env.get("HOME"))
    where = _FOLDERS.get(settings)
    if where is None:
        base = settings[0]
        if not base:
            from platformdirs import user_cache_dir

            base = user_cache_dir("snrgain")
        where = _FOLDERS[settings] = Path(base).expanduser() / "sky" / f"v{FORMAT}"
    return where


def max_bytes() -> float:
    try:
        return float(os.environ.get(ENV_MAX_MB, DEFAULT_MAX_MB)) * 1e6
    except ValueError:
        return DEFAULT_MAX_MB * 1e6


def key_name(kind: str, key: dict) -> str:
    """The file name of an entry: its kind and the SHA-256 of its key (floats written exactly, via repr)."""
    text = json.dumps({"kind": kind, "format": FORMAT, **key}, sort_keys=True, default=repr)
    return f"{kind}-{hashlib.sha256(text.encode()).hexdigest()}.npy"


def load(kind: str, key: dict) -> np.ndarray | None:
    """The stored array for a key, or None (a miss, or the cache is off)."""
    if not enabled():
        return None
    return _read(folder() / key_name(kind, key))


_HEADER = re.compile(
    r"\{'descr': '([<>|=][a-zA-Z][0-9]*)', 'fortran_order': False, 'shape': \(((?:\d+, )*\d*,?)\), \}\s*"
)
"""The header np.save writes for a C-ordered array of a plain dtype (format 1.0)."""


def _parse(data: bytearray) -> np.ndarray | None:
    """The array of a .npy file's bytes as np.save writes them (format 1.0, a plain dtype, C order), without
    numpy's reader (which evaluates the header as Python: most of the cost of reading a small entry); None for any
    other layout (then read by np.load)."""
    if data[:8] != b"\x93NUMPY\x01\x00" or len(data) < 10:
        return None
    start = 10 + int.from_bytes(data[8:10], "little")
    m = _HEADER.fullmatch(data[10:start].decode("latin-1"))
    if m is None:
        return None
    try:
        dtype = np.dtype(m.group(1))
    except TypeError:
        return None
    shape = tuple(int(x) for x in m.group(2).replace(",", " ").split())
    if dtype.hasobject or len(data) - start != dtype.itemsize * int(np.prod(shape)):
        return None
    return np.frombuffer(data, dtype=dtype, offset=start).reshape(shape)  # writeable: over a bytearray


def _read(path: Path) -> np.ndarray | None:
    try:
        with open(path, "rb") as fh:
            data = bytearray(os.fstat(fh.fileno()).st_size)
            got = fh.readinto(data)
            arr = _parse(data) if got == len(data) else None
            if arr is None:
                fh.seek(0)
                arr = np.load(fh, allow_pickle=False)
    except FileNotFoundError:
        return None
    except (OSError, ValueError, EOFError):  # damaged or half-removed: recompute, and drop it
        _remove(path)
        return None
    try:
        os.utime(path)  # least recently used goes first
    except OSError:
        pass
    return arr


def store(kind: str, key: dict, arr: np.ndarray) -> None:
    """Keep an array for a key (atomically; failures are ignored), then hold the folder to its size bound."""
    if not enabled():
        return
    where = folder()
    arr = np.asarray(arr)
    if not _write(where, key_name(kind, key), arr):
        return
    known = _held_bytes.get(where)
    written = arr.nbytes + NPY_HEADER_BYTES
    if known is None or known + written > max_bytes():
        _held_bytes[where] = trim(where)
    else:
        _held_bytes[where] = known + written


NPY_HEADER_BYTES = 128
"""An .npy file's header (numpy writes it padded to a multiple of 64 bytes; 128 for the arrays kept here)."""
_held_bytes: dict[Path, float] = {}
"""Per folder, its size at this process's last walk (:func:`trim`) plus what :func:`store` wrote since: the folder is
walked again only when that passes the bound (the first store of a process walks it), not at every store (a run
writing 56 hours' maps walked the folder 56 times: 25 ms of a cold run).  Entries other processes write meanwhile
are found by their own first store and by this process's next walk."""


SMALL_WRITES = 64
"""Entries of one kind :func:`remembered` writes at most per process."""
_small_writes: dict[str, int] = {}


def remembered(kind: str, key: dict, compute, *, dtype=None, shapes=None) -> np.ndarray:
    """``compute()`` (a small array: a few numbers) kept for ``key``: the stored array when a run has made it, else
    computed and stored (up to :data:`SMALL_WRITES` per kind and process; atomically, as :func:`store`, without its
    walk over the folder).  The key should name what enters the numbers and a digest of the code computing them
    (:func:`code_digest`).  A stored array of another dtype than float or complex, or than ``dtype`` where given, or
    of a shape not among ``shapes`` where given, counts as a miss (not what the caller writes)."""
    if not enabled():
        return np.asarray(compute())
    where = folder()
    name = key_name(kind, key)
    kept = _read(where / name)
    if (
        kept is not None
        and kept.dtype.kind in "fc"
        and (dtype is None or kept.dtype == dtype)
        and (shapes is None or kept.shape in shapes)
    ):
        return kept
    value = np.asarray(compute())
    if _small_writes.get(kind, 0) < SMALL_WRITES:
        _small_writes[kind] = _small_writes.get(kind, 0) + 1
        _write(where, name, value)
    return value


_DIGESTS: dict[tuple, str] = {}


def code_digest(*files) -> str:
    """SHA-256 of the given source files' bytes (once per process and set of files): part of a key, so that a change
    to the code that computes an entry makes it a miss.  An unreadable file enters as a fixed marker."""
    names = tuple(str(f) for f in files)
    if names not in _DIGESTS:
        h = hashlib.sha256()
        for f in names:
            try:
                h.update(Path(f).read_bytes())
            except OSError:
                h.update(b"?")
        _DIGESTS[names] = h.hexdigest()
    return _DIGESTS[names]


def _write(where: Path, name: str, arr) -> bool:
    """Write one entry atomically (a temporary file renamed into place); False when it could not be written."""
    tmp = None
    try:
        where.mkdir(parents=True, exist_ok=True)
        with tempfile.NamedTemporaryFile(dir=where, prefix=".tmp-", suffix=".npy", delete=False) as fh:
            tmp = Path(fh.name)
            np.save(fh, np.asarray(arr), allow_pickle=False)
        os.replace(tmp, where / name)
        tmp = None
    except OSError:
        return False
    finally:
        if tmp is not None:
            _remove(tmp)
    return True


def trim(where: Path | None = None) -> float:
    """Remove the least recently used entries until the folder holds no more than the size bound; the bytes it then
    holds."""
    import time

    where = folder() if where is None else where
    entries = []
    for p in where.glob("*.npy"):
        try:
            st = p.stat()
        except OSError:
            continue
        if p.name.startswith(".tmp-"):  # a writer's temporary file; one left by a crash an hour ago goes
            if st.st_mtime < time.time() - 3600:
                _remove(p)
            continue
        entries.append((st.st_mtime, st.st_size, p))
    total = sum(size for _, size, _ in entries)
    limit = max_bytes()
    for _, size, p in sorted(entries, key=lambda e: e[0]):
        if total <= limit:
            break
        _remove(p)
        total -= size
    return float(total)


def _remove(path: Path) -> None:
    try:
        path.unlink()
    except OSError:
        pass
