"""Moved to :mod:`snrgain.decide.build`; ``snrgain.build`` stays an alias of that module."""

import sys

from snrgain.decide import build

sys.modules[__name__] = build
