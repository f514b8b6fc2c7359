"""snrgain: signal-to-noise gain of low-band receiving antennas at your site.

    >>> import snrgain
    >>> results = snrgain.evaluate("scenarios/alder-hollow.toml")   # doctest: +SKIP
    >>> results.candidates[0].name, results.candidates[0].summary_snr_gain_db  # doctest: +SKIP
"""

from snrgain.evaluate import AntennaResult, NoiseResult, Results, evaluate
from snrgain.scenario import Scenario, ScenarioError, load

__version__ = "0.1.0"

__all__ = ["evaluate", "load", "Results", "AntennaResult", "NoiseResult", "Scenario", "ScenarioError", "__version__"]
