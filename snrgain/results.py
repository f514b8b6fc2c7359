"""Moved to :mod:`snrgain.model.results`; ``snrgain.results`` stays an alias of that module."""

import sys

from snrgain.model import results

sys.modules[__name__] = results
