"""Moved to :mod:`snrgain.model.snr`; ``snrgain.snr`` stays an alias of that module."""

import sys

from snrgain.model import snr

sys.modules[__name__] = snr
