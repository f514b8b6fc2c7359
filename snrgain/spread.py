"""Moved to :mod:`snrgain.model.spread`; ``snrgain.spread`` stays an alias of that module."""

import sys

from snrgain.model import spread

sys.modules[__name__] = spread
