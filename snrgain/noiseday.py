"""Moved to :mod:`snrgain.sky.noiseday`; ``snrgain.noiseday`` stays an alias of that module."""

import sys

from snrgain.sky import noiseday

sys.modules[__name__] = noiseday
