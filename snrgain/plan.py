"""Moved to :mod:`snrgain.decide.plan`; ``snrgain.plan`` stays an alias of that module."""

import sys

from snrgain.decide import plan

sys.modules[__name__] = plan
