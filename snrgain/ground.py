"""Moved to :mod:`snrgain.physics.ground`; ``snrgain.ground`` stays an alias of that module."""

import sys

from snrgain.physics import ground

sys.modules[__name__] = ground
