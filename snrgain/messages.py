"""Moved to :mod:`snrgain.outputs.messages`; ``snrgain.messages`` stays an alias of that module."""

import sys

from snrgain.outputs import messages

sys.modules[__name__] = messages
