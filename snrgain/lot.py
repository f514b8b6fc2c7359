"""Moved to :mod:`snrgain.decide.lot`; ``snrgain.lot`` stays an alias of that module."""

import sys

from snrgain.decide import lot

sys.modules[__name__] = lot
