"""Moved to :mod:`snrgain.model.labelled`; ``snrgain.labelled`` stays an alias of that module."""

import sys

from snrgain.model import labelled

sys.modules[__name__] = labelled
