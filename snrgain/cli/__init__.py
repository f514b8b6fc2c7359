"""The ``snrgain`` command line: one module per subcommand.

The command works on small matrices (a loop's charge solution, a few hundred unknowns; array steering forms),
where a multithreaded BLAS costs more in thread hand-offs than it gains, most of all on a busy machine (measured
on a 2-core machine under load: a warm ``rank`` 2.8 s of CPU with OpenBLAS's threads, 1.5 s with one).  So the
command line, whose process it is, asks numpy's BLAS for one thread before numpy is loaded, unless the user has
chosen (``OPENBLAS_NUM_THREADS``, ``MKL_NUM_THREADS`` in the environment win).  ``import snrgain`` alone does not.

Likewise the cyclic garbage collector: its default first threshold (700 new container objects) makes it run over a
hundred times while the command imports its libraries (pydantic's schemas alone make tens of thousands of
objects), each pass walking more of them, and a few dozen times in a ``rank``: about 50 ms of a warm ``rank`` of
the realistic benchmark site, for almost no garbage (numerical work makes arrays, which it does not track).  The
command line raises that threshold to :data:`GC_FIRST_THRESHOLD`; the collector still runs, less often.

And pydantic's plugins: the first validator pydantic builds looks for plugins among every installed package's
entry points (``importlib.metadata``), 10-20 ms of a ``check`` on a machine with a few hundred packages.  The
command uses none, so :func:`snrgain.cli.main.main` sets ``PYDANTIC_DISABLE_PLUGINS`` for its process unless the
user has set it (importing this package does not).
"""

import os
import sys

from snrgain.allocator import GC_FIRST_THRESHOLD, collect_less  # os and sys only: numpy is not loaded by it

if "numpy" not in sys.modules:  # too late once numpy is loaded (a program that imported it first keeps its own)
    for _name in ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
        os.environ.setdefault(_name, "1")

collect_less()

__all__ = ["GC_FIRST_THRESHOLD"]
