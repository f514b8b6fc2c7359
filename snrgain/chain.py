"""Moved to :mod:`snrgain.physics.chain`; ``snrgain.chain`` stays an alias of that module."""

import sys

from snrgain.physics import chain

sys.modules[__name__] = chain
