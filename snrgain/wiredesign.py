"""Moved to :mod:`snrgain.tools.wiredesign`; ``snrgain.wiredesign`` stays an alias of that module."""

import sys

from snrgain.tools import wiredesign

sys.modules[__name__] = wiredesign
