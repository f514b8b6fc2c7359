"""Moved to :mod:`snrgain.physics.modal`; ``snrgain.modal`` stays an alias of that module."""

import sys

from snrgain.physics import modal

sys.modules[__name__] = modal
