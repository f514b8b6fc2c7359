"""Moved to :mod:`snrgain.model.pipeline`; ``snrgain.pipeline`` stays an alias of that module."""

import sys

from snrgain.model import pipeline

sys.modules[__name__] = pipeline
