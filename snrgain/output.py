"""Moved to :mod:`snrgain.outputs.output`; ``snrgain.output`` stays an alias of that module."""

import sys

from snrgain.outputs import output

sys.modules[__name__] = output
