"""Moved to :mod:`snrgain.tools.tomltext`; ``snrgain.tomltext`` stays an alias of that module."""

import sys

from snrgain.tools import tomltext

sys.modules[__name__] = tomltext
