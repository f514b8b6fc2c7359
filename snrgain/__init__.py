"""snrgain: signal-to-noise gain of low-band receiving antennas at your site.

>>> import snrgain
>>> results = snrgain.evaluate("scenarios/marrow-fen.toml")
>>> results.reference.name
'80 m quarter-wave vertical'
"""

from snrgain.evaluate import evaluate
from snrgain.noise import SkySeries
from snrgain.results import AntennaResult, Notice, Results
from snrgain.scenario import Scenario, ScenarioError, load

__version__ = "0.1.0"

__all__ = [
    "evaluate",
    "load",
    "Results",
    "AntennaResult",
    "Notice",
    "SkySeries",
    "Scenario",
    "ScenarioError",
    "__version__",
]
