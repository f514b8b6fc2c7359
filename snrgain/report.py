"""Moved to :mod:`snrgain.outputs.report`; ``snrgain.report`` stays an alias of that module."""

import sys

from snrgain.outputs import report

sys.modules[__name__] = report
