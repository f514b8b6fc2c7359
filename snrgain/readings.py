"""Moved to :mod:`snrgain.tools.readings`; ``snrgain.readings`` stays an alias of that module."""

import sys

from snrgain.tools import readings

sys.modules[__name__] = readings
