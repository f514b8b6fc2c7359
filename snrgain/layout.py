"""Moved to :mod:`snrgain.tools.layout`; ``snrgain.layout`` stays an alias of that module."""

import sys

from snrgain.tools import layout

sys.modules[__name__] = layout
