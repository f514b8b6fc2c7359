"""Moved to :mod:`snrgain.tools.calibrate`; ``snrgain.calibrate`` stays an alias of that module."""

import sys

from snrgain.tools import calibrate

sys.modules[__name__] = calibrate
