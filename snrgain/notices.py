"""Moved to :mod:`snrgain.model.notices`; ``snrgain.notices`` stays an alias of that module."""

import sys

from snrgain.model import notices

sys.modules[__name__] = notices
