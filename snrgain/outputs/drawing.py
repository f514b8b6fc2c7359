"""Figures drawn side by side: each figure made and serialised (PNG or SVG bytes) in a worker process.

Drawing is most of the time of ``report`` and ``figures`` (matplotlib lays out and draws every figure twice for
a tight bounding box), and one figure does not need another, so on a machine with more than one core the
figures are shared among forked workers.  A worker inherits the evaluated results by the fork (nothing is
pickled on the way in) and sends back only the bytes.  Where fork is not available (Windows, macOS' default),
with one core, one figure, or ``SNRGAIN_WORKERS=1``, the figures are drawn one after the other in this
process: the bytes are the same either way (tested).
"""

from __future__ import annotations

import io
import multiprocessing
import os
from collections.abc import Callable, Sequence

ENV_WORKERS = "SNRGAIN_WORKERS"
"""Environment variable: the most worker processes to draw with (1: draw in this process)."""

_JOBS: Sequence[tuple[Callable, str, dict]] = ()
"""The jobs of the current drawing, read by forked workers (set before the pool forks)."""


def figure_bytes(fig, fmt: str, **savefig) -> bytes:
    """One figure serialised as PNG or SVG, closed afterwards."""
    buf = io.BytesIO()
    try:
        fig.savefig(buf, format=fmt, **savefig)
    finally:
        fig.clear()
    return buf.getvalue()


def _worker_start(parent: int) -> None:
    """In each worker: die with the command (Linux PR_SET_PDEATHSIG), so a killed command leaves no worker behind
    holding its output pipes; leave Ctrl-C and SIGTERM to the command, which stops the drawing cleanly."""
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    try:
        import ctypes

        ctypes.CDLL(None, use_errno=True).prctl(1, signal.SIGKILL)  # 1: PR_SET_PDEATHSIG
    except (OSError, AttributeError):  # not Linux: the pool's own shutdown still ends the workers
        pass
    if os.getppid() != parent:  # the command died before the line above took effect
        os._exit(1)


def _run(index: int) -> bytes:
    make, fmt, savefig = _JOBS[index]
    return figure_bytes(make(), fmt, **savefig)


def workers(count: int) -> int:
    """How many processes to draw ``count`` figures with: the cores this process may use, at most the figures and
    $SNRGAIN_WORKERS; 1 where fork is not available."""
    try:
        cores = len(os.sched_getaffinity(0))
    except AttributeError:  # not on Linux
        cores = os.cpu_count() or 1
    limit = os.environ.get(ENV_WORKERS, "").strip()
    if limit:
        try:
            cores = min(cores, max(1, int(limit)))
        except ValueError:
            raise ValueError(f"{ENV_WORKERS}={limit!r}: give a whole number of processes, 1 or more") from None
    if "fork" not in multiprocessing.get_all_start_methods():
        return 1
    return max(1, min(cores, count))


def draw_all(jobs: Sequence[tuple[Callable, str, dict]], *, done: Callable[[], None] | None = None) -> list[bytes]:
    """The bytes of each job, in order: a job is (a function that makes the figure, "png" or "svg", savefig's
    keywords).  ``done()`` is called as each figure is finished."""
    global _JOBS
    from snrgain.errors import stop_if_asked

    n = workers(len(jobs))
    out = []
    if n <= 1:
        for make, fmt, savefig in jobs:
            out.append(figure_bytes(make(), fmt, **savefig))
            if done:
                done()
            stop_if_asked()
        return out
    from concurrent.futures import ProcessPoolExecutor

    _JOBS = jobs
    pool = ProcessPoolExecutor(
        max_workers=n,
        mp_context=multiprocessing.get_context("fork"),
        initializer=_worker_start,
        initargs=(os.getpid(),),
    )
    try:
        futures = [pool.submit(_run, i) for i in range(len(jobs))]
        for f in futures:
            out.append(f.result())
            if done:
                done()
            stop_if_asked()  # Ctrl-C: the figures not started are dropped (below), the command stops cleanly
        return out
    finally:
        pool.shutdown(wait=True, cancel_futures=True)
        _JOBS = ()
