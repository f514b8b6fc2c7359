"""Moved to :mod:`snrgain.sky.noise`; ``snrgain.noise`` stays an alias of that module."""

import sys

from snrgain.sky import noise

sys.modules[__name__] = noise
