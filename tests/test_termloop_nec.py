"""Terminated loops (flag, pennant, delta, diamond) against the project's own NEC-2 references.

Reference: tests/nec/termloops.json, written by tests/nec/make_termloops.py (nec2c, decks in tests/nec/cases).
Targets (issue 22): forward gain within 0.5 dB, RDF within 0.3 dB, front-to-back within 2 dB (or both beyond
25 dB), the resistor of the deepest rear null within 10 % of NEC's.  Measured (model - NEC, the stored 0.3 m
segments): forward gain -0.09 to -0.33 dB for every flag and pennant and the 1.83 MHz delta and diamond, -0.46 to
-0.60 dB for the 3.6 MHz delta and the 7.1 MHz diamond; RDF within 0.20 dB; front-to-back within 1.3 dB; the best
front-to-back resistor within 4 %; the feed impedance within 5 %.

NEC-2's own gain is not converged at 0.3 m segments: tests/nec/termloop_convergence.json (make_termloop_
convergence.py) runs the same decks at 0.3, 0.15 and 0.1 m, and NEC's forward gain falls by 0.03-0.41 dB, the
steps shrinking (3.6 MHz delta at 600 ohm: -31.76, -31.92, -31.99 dBi).  Against the 0.1 m runs the model's
forward gain is within 0.45 dB for every loop and resistor (the two larger loops -0.16 to -0.45 dB), which is the
gain test below; the spread between NEC's own runs is stated beside it.
"""

import json

import numpy as np
import pytest

from noisemodels.sphere import upper_hemisphere
from snrgain.antennas import from_spec
from snrgain.model import snr
from tests.conftest import REPO

REF = json.loads((REPO / "tests" / "nec" / "termloops.json").read_text())
GRID = upper_hemisphere(32)
EL20 = np.radians(20.0)


def _loop(case, termination, auto_for="rdf"):
    g = case["ground"]
    return from_spec(
        {
            "family": "terminated-loop",
            "shape": case["shape"],
            "width": f"{case['width_m']} m",
            "loop_height": f"{case['loop_height_m']} m",
            "height": f"{case['height_m']} m",
            "termination": termination,
            "bearing": 180,
            "auto_for": auto_for,
            "diameter": f"{2 * REF['radius_m']} m",
            "ground": "perfect"
            if g is None
            else {"conductivity": f"{g['conductivity_s_per_m']} S/m", "permittivity": g["permittivity"]},
        }
    )


def _figures(ant, f):
    g = ant.gain_linear(f, GRID.azimuth_rad, GRID.elevation_rad)
    fw = ant.gain_linear(f, np.array([np.pi]), np.array([EL20]))[0]
    bk = ant.gain_linear(f, np.array([0.0]), np.array([EL20]))[0]
    return {
        "forward_gain_dbi": 10 * np.log10(fw / ant.mismatch(f)),  # available gain, as NEC's with a source
        "front_to_back_db": 10 * np.log10(fw / bk),
        "rdf_db": 10 * np.log10(fw / snr.hemisphere_mean_gain(g, GRID)),
    }


CONVERGED = {
    c["name"]: c for c in json.loads((REPO / "tests" / "nec" / "termloop_convergence.json").read_text())["cases"]
}
RUNS = [(c, r) for c in REF["cases"] for r in c["runs"]]


def _finest(case, run) -> dict:
    """NEC-2's figures for this case and resistor at its finest segmentation (termloop_convergence.json)."""
    cr = next(x for x in CONVERGED[case["name"]]["runs"] if x["termination_ohm"] == run["termination_ohm"])
    return cr["by_step"][-1]


@pytest.mark.parametrize("case,run", RUNS, ids=[f"{c['name']}-r{int(r['termination_ohm'])}" for c, r in RUNS])
def test_loop_figures_against_nec2(case, run):
    f = case["freq_mhz"] * 1e6
    got = _figures(_loop(case, run["termination_ohm"]), f)
    fine = _finest(case, run)
    spread = abs(fine["forward_gain_dbi"] - run["forward_gain_dbi"])  # NEC's own: 0.03-0.41 dB, 0.3 -> 0.1 m
    assert spread < 0.45
    assert got["forward_gain_dbi"] == pytest.approx(fine["forward_gain_dbi"], abs=0.5)
    assert got["rdf_db"] == pytest.approx(run["rdf_db"], abs=0.3)
    if got["front_to_back_db"] < 25 or run["front_to_back_db"] < 25:
        assert got["front_to_back_db"] == pytest.approx(run["front_to_back_db"], abs=2.0)
    z = complex(*run["feed_impedance_ohm"])
    assert abs(_loop(case, run["termination_ohm"]).feed_point_impedance(f) - z) < 0.06 * abs(z)


@pytest.mark.parametrize("case", REF["cases"], ids=[c["name"] for c in REF["cases"]])
def test_best_front_to_back_resistor_against_nec2(case):
    f = case["freq_mhz"] * 1e6
    auto = _loop(case, "auto", "front_to_back")
    assert auto.termination_ohm(f) == pytest.approx(case["best_front_to_back_ohm"], rel=0.10)
