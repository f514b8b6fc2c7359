"""Work shared with forked processes: how many to use, how each one starts, and one piece of work run beside this
process.

Used by the figures (snrgain.outputs.drawing: its workers and its drawing process) and by ``layout``
(snrgain.tools.layout: about half the grid's groups, and the refinement of the candidates after the first or the
layouts' exact scores, in a forked process).  Where fork is not available (Windows, macOS' default), with one core,
or with ``SNRGAIN_WORKERS=1``, the callers do the work in this process; the results are the same either way.
"""

from __future__ import annotations

import os
from contextlib import contextmanager

ENV_WORKERS = "SNRGAIN_WORKERS"
"""Environment variable: the most worker processes to use (1: everything in this process)."""


def workers(count: int) -> int:
    """How many processes to share ``count`` jobs among: the cores this process may use, at most the jobs and
    $SNRGAIN_WORKERS; 1 where fork is not available."""
    import multiprocessing

    try:
        cores = len(os.sched_getaffinity(0))
    except AttributeError:  # not on Linux
        cores = os.cpu_count() or 1
    limit = os.environ.get(ENV_WORKERS, "").strip()
    if limit:
        try:
            asked = int(limit)
        except ValueError:
            asked = 0
        if asked < 1:  # 0 and -1 were taken as 1, "abc" refused: one rule for both
            raise ValueError(f"{ENV_WORKERS}={limit!r}: give a whole number of processes, 1 or more")
        cores = min(cores, asked)
    if "fork" not in multiprocessing.get_all_start_methods():
        return 1
    return max(1, min(cores, count))


def worker_start(parent: int) -> None:
    """In each worker: die with the command (Linux PR_SET_PDEATHSIG), so a killed command leaves no worker behind
    holding its output pipes; leave Ctrl-C and SIGTERM to the command, which stops the work cleanly."""
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


def spare_core() -> bool:
    """Whether a forked process would run beside this one: two cores or more for it (fork available,
    :func:`workers`, $SNRGAIN_WORKERS), and a core free now (:func:`runnable_now`: no more threads ready to run, this
    one among them, than the cores less one) or a load average (the last minute's, this process in it) at least half
    a core short of the cores.  On a machine already busy a second process only adds its start to the work; the
    load average alone lags a minute behind (a machine just left idle by other work looks busy).  The results are
    the same either way."""
    if workers(2) < 2:
        return False
    try:
        cores = len(os.sched_getaffinity(0))
        load = os.getloadavg()[0]
    except (AttributeError, OSError):  # not known here
        return True
    now = runnable_now()
    return (now is not None and now <= cores - 1) or load <= cores - 0.5


def runnable_now() -> int | None:
    """How many threads on the machine are running or ready to run at this instant, this one among them (Linux's
    /proc/loadavg, its fourth field); None where it is not known."""
    try:
        with open("/proc/loadavg", encoding="ascii") as f:
            return int(f.read().split()[3].split("/")[0])
    except (OSError, IndexError, ValueError):
        return None


@contextmanager
def elsewhere(work):
    """Runs ``work()`` in a forked process while the ``with`` block runs here; yields ``get()``, which waits for its
    result (None if it failed or ended without one).  Leaving the block ends the process; Ctrl-C and SIGTERM are
    left to the command (:func:`worker_start`, as the figures' workers)."""
    import multiprocessing
    import sys

    ctx = multiprocessing.get_context("fork")
    recv, send = ctx.Pipe(duplex=False)
    for stream in (sys.stdout, sys.stderr):  # nothing buffered to be written twice
        stream.flush()
    proc = ctx.Process(target=_elsewhere_run, args=(os.getpid(), work, send), daemon=True)
    proc.start()
    send.close()

    def get():
        try:
            return recv.recv()
        except EOFError:
            return None

    try:
        yield get
    finally:
        recv.close()
        if proc.is_alive():
            proc.kill()
        proc.join()


def _elsewhere_run(parent: int, work, send) -> None:
    worker_start(parent)
    try:
        send.send(work())
    except Exception:
        send.send(None)
    finally:
        send.close()
