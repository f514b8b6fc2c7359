"""Moved to :mod:`snrgain.outputs.plots`; ``snrgain.plots`` stays an alias of that module."""

import sys

from snrgain.outputs import plots

sys.modules[__name__] = plots
