"""Moved to :mod:`snrgain.tools.sweep`; ``snrgain.sweep`` stays an alias of that module."""

import sys

from snrgain.tools import sweep

sys.modules[__name__] = sweep
