"""Keep freed memory for the next array instead of handing it back to the system after every evaluation.

A pattern on a fine grid works on complex arrays of a few hundred kilobytes.  With glibc's default settings an
array over 128 KB is mapped afresh from the system and its pages are faulted in again for every temporary, and
the top of the heap is trimmed back after each free; that more than doubled the time of a 8,280-direction
long-wire pattern (measured: 1.09 ms against 0.39 ms with the thresholds below; benchmarks/bench.py).  This
module raises glibc's mmap threshold to 16 MB and its trim threshold to 64 MB, the same as setting
MALLOC_MMAP_THRESHOLD_ and MALLOC_TRIM_THRESHOLD_ (glibc's mallopt(3)).  It changes no results, only where
freed memory waits.  Elsewhere than glibc, or with SNRGAIN_KEEP_MALLOC set, it does nothing.

It is a process-wide setting, so only the command line makes it (``snrgain.cli.main.main``); ``import snrgain``
does not.  A program of one's own may call :func:`tune`.  The cyclic garbage collector's threshold
(:func:`collect_less`) is the command line's other process-wide setting, kept here too so that a sweep's Dask
workers make both.
"""

from __future__ import annotations

import os
import sys

M_TRIM_THRESHOLD = -1
M_MMAP_THRESHOLD = -3
MMAP_THRESHOLD_BYTES = 16 * 1024 * 1024
TRIM_THRESHOLD_BYTES = 64 * 1024 * 1024

_done = False


def tune() -> bool:
    """Set the thresholds once (True if they were set)."""
    global _done
    if _done or not sys.platform.startswith("linux") or os.environ.get("SNRGAIN_KEEP_MALLOC"):
        return False
    _done = True
    try:
        import ctypes

        libc = ctypes.CDLL("libc.so.6")
        ok = libc.mallopt(M_MMAP_THRESHOLD, MMAP_THRESHOLD_BYTES) == 1
        ok &= libc.mallopt(M_TRIM_THRESHOLD, TRIM_THRESHOLD_BYTES) == 1
        return bool(ok)
    except (OSError, AttributeError):  # not glibc
        return False


GC_FIRST_THRESHOLD = 100_000
"""New container objects between two passes of the cyclic collector's youngest generation in the command line's
process and in a local Dask cluster's workers (snrgain.cli explains why)."""


def collect_less() -> None:
    """Raise the cyclic collector's first threshold to :data:`GC_FIRST_THRESHOLD` (a process that set a higher one
    keeps it)."""
    import gc

    if gc.get_threshold()[0] < GC_FIRST_THRESHOLD:
        gc.set_threshold(GC_FIRST_THRESHOLD, *gc.get_threshold()[1:])
