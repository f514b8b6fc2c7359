"""Moved to :mod:`snrgain.model.placed`; ``snrgain.placed`` stays an alias of that module."""

import sys

from snrgain.model import placed

sys.modules[__name__] = placed
