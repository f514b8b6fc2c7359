"""Moved to :mod:`snrgain.physics.receiver`; ``snrgain.receiver`` stays an alias of that module."""

import sys

from snrgain.physics import receiver

sys.modules[__name__] = receiver
