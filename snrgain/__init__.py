"""snrgain: signal-to-noise gain of low-band receiving antennas at your site.

    >>> import snrgain
    >>> results = snrgain.evaluate("scenarios/marrow-fen.toml")
    >>> results.reference.name
    '80 m quarter-wave vertical'

The names below are imported when first used, so that ``import snrgain`` (and the command line's ``--help``)
stays quick and loads neither the sky machinery nor matplotlib.  Importing snrgain changes no process-wide
setting: the memory-allocator tuning of :mod:`snrgain.allocator` is done by the command line only (a program
that wants it calls ``snrgain.allocator.tune()`` itself).
"""

from importlib import import_module

__version__ = "0.1.0"

_LAZY = {
    "evaluate": "snrgain.model.pipeline",
    "evaluate_bands": "snrgain.model.pipeline",
    "BandResults": "snrgain.model.bands",
    "load": "snrgain.scenario",
    "Scenario": "snrgain.scenario",
    "ScenarioError": "snrgain.scenario",
    "Results": "snrgain.model.results",
    "AntennaResult": "snrgain.model.results",
    "Notice": "snrgain.model.notices",
    "SkySeries": "snrgain.sky.noise",
}

__all__ = [*_LAZY, "__version__"]


def __getattr__(name):
    if name in _LAZY:
        value = getattr(import_module(_LAZY[name]), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'snrgain' has no attribute {name!r}")
