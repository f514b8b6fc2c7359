"""Moved to :mod:`snrgain.physics.targets`; ``snrgain.targets`` stays an alias of that module."""

import sys

from snrgain.physics import targets

sys.modules[__name__] = targets
