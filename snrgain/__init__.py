"""snrgain: signal-to-noise gain of low-band receiving antennas at your site.

    >>> import snrgain
    >>> results = snrgain.evaluate("scenarios/marrow-fen.toml")
    >>> results.reference.name
    '80 m quarter-wave vertical'

The names below are imported when first used, so that ``import snrgain`` (and the command line's ``--help``)
stays quick and loads neither the sky machinery nor matplotlib.
"""

from importlib import import_module

from snrgain.allocator import tune as _tune_allocator

__version__ = "0.1.0"

_tune_allocator()

_LAZY = {
    "evaluate": "snrgain.pipeline",
    "load": "snrgain.scenario",
    "Scenario": "snrgain.scenario",
    "ScenarioError": "snrgain.scenario",
    "Results": "snrgain.results",
    "AntennaResult": "snrgain.results",
    "Notice": "snrgain.notices",
    "SkySeries": "snrgain.noise",
}

__all__ = [*_LAZY, "__version__"]


def __getattr__(name):
    if name in _LAZY:
        value = getattr(import_module(_LAZY[name]), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'snrgain' has no attribute {name!r}")
