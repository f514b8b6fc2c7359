"""Moved to :mod:`snrgain.tools.locate`; ``snrgain.locate`` stays an alias of that module."""

import sys

from snrgain.tools import locate

sys.modules[__name__] = locate
