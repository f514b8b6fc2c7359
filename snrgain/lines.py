"""Moved to :mod:`snrgain.physics.lines`; ``snrgain.lines`` stays an alias of that module."""

import sys

from snrgain.physics import lines

sys.modules[__name__] = lines
