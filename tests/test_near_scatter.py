"""Near sources heard by antennas standing beside the transmitting vertical, against NEC-2.

References: tests/nec/nearscatter.json, written by tests/nec/make_nearscatter.py with Debian's nec2c (NEC-2 over
Sommerfeld ground, eps_r 13, 5 mS/m, 1.83 MHz): a 6 m whip with the quarter-wave TX vertical (50 ohm at its base,
10 ohm of radial loss) 25 m north of it, and make_scatter.py's phased pair with the vertical 25 m broadside of or
behind its centre, each transmitting with and without the vertical, the near field stored at source points 10-60 m
from the antenna, 2 and 4 m up, on the pair's rear-null bearings and beyond the vertical among them (the module
docstring there gives the reciprocity step: the whip's open-circuit voltage E . p / I_feed, the pair's phased
output E . p per volt of drive).  The model: snrgain.model.scatter.beside (the vertical's re-radiation added to the
antenna's response) read by snrgain.model.placed (a near source through the antenna's own transmit currents, the
vertical's share through the vertical's, placed._scattered_share).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from snrgain.antennas import from_spec
from snrgain.model import placed
from snrgain.model.scatter import beside
from snrgain.physics.scatter import TxVertical
from snrgain.sky.noise import LocalSource

REF = json.loads((Path(__file__).parent / "nec" / "nearscatter.json").read_text())
F = REF["freq_mhz"] * 1e6
EL0 = np.radians(REF["forward_elevation_deg"])
LOAM = {
    "permittivity": REF["ground"]["permittivity"],
    "conductivity": f"{REF['ground']['conductivity_s_per_m'] * 1e3:g} mS/m",
}
AXIS_OFF_LINE_DEG = 30.0
"""A horizontal source's axis, off the line from the antenna's centre to it [deg] (as tests/test_near_compact.py)."""
CHANGE_TOLERANCE_DB = 1.0
"""The vertical's change of what the antenna hears, model against NEC (coarse), beyond NEC's segmentation spread."""
RATIO_TOLERANCE_DB = 2.5
"""The candidate-to-reference ratio, as tests/test_near_compact.py holds it, beyond NEC's segmentation spread."""
SEG = {"coarse": 0, "fine": 1}


def _models():
    w, p, t = REF["whip"], REF["pair"], REF["tx"]
    whip = from_spec(
        {
            "family": "vertical",
            "height": f"{w['height_m']} m",
            "diameter": f"{2 * w['radius_m']} m",
            "ground": LOAM,
            "position": [0, 0],
        }
    )
    pair = from_spec(
        {
            "family": "phased-verticals",
            "positions": [[0, 0], [p["spacing_m"], 0]],
            "height": f"{p['height_m']} m",
            "steering": "given",
            "phases": [0, -p["phase_deg"]],
            "phase_sense": "lag",
            "ground": LOAM,
            "ground_loss": "0 ohm",  # NEC's junction taken out of its loads (make_nearscatter.py)
        }
    )
    vertical = {"family": "vertical", "height": f"{t['height_m']} m", "diameter": f"{2 * t['radius_m']} m"}
    tx = from_spec({**vertical, "ground": LOAM, "ground_loss": f"{t['ground_loss_ohm']} ohm"})
    reference = from_spec({**vertical, "ground": LOAM, "position": [0, 0]})
    return {"whip": whip, "pair": pair}, tx, reference


ANTENNAS, TX_ANTENNA, REFERENCE = _models()
SOIL = REFERENCE.ground
CASES = {c["case"]: c for c in REF["cases"]}
_BESIDE: dict = {}


def _beside(case):
    if case not in _BESIDE:
        c = CASES[case]
        tx = TxVertical(TX_ANTENNA, tuple(c["tx_m"]), complex(REF["tx"]["load_ohm"]), REF["tx"]["radius_m"])
        _BESIDE[case] = beside(ANTENNAS[c["antenna"]], [tx])
    return _BESIDE[case]


def _moment_and_source(centre, point, kind):
    x, y, z = point["xyz_m"]
    axis = np.arctan2(x - centre[0], y - centre[1]) + np.radians(AXIS_OFF_LINE_DEG)
    moment = np.array([0.0, 0.0, 1.0]) if kind == "vertical" else np.array([np.sin(axis), np.cos(axis), 0.0])
    src = LocalSource(
        "s",
        0.0,
        position_m=(x, y),
        height_m=z,
        polarisation=kind,
        orientation_rad=float(np.mod(axis, np.pi)) if kind == "horizontal" else None,
    )
    return moment, src


def _field(run, i):
    return np.array([complex(*c) for c in run["e"][i]])


def _nec_change_db(case, i, kind, seg):
    """NEC's change [dB] of what a source at point ``i`` delivers, the vertical present over absent: the whip's
    open-circuit voltage E . p / I_feed, the pair's phased output E . p per volt of its fixed drive."""
    c = CASES[case]
    moment, _ = _moment_and_source(c["centre_m"], c["points"][i], kind)
    out = []
    for state in ("with", "without"):
        run = c[state][SEG[seg]]
        v = _field(run, i) @ moment
        if c["antenna"] == "whip":
            v /= complex(*run["feed_current_a"][0])
        out.append(abs(v))
    return 20 * np.log10(out[0] / out[1])


def _model_change_db(case, i, kind):
    c = CASES[case]
    _, src = _moment_and_source(c["centre_m"], c["points"][i], kind)
    with_tx = placed.received_power(_beside(case), src, F, (0.0, 0.0), SOIL)
    bare = placed.received_power(ANTENNAS[c["antenna"]], src, F, (0.0, 0.0), SOIL)
    return 10 * np.log10(with_tx / bare)


def _powers(antenna, run, centre, point, i, kind):
    """(model, NEC) power of a small dipole source at a stored point in units of realized gain, as
    tests/test_near_compact.py forms them: NEC's |E . p|^2 / |F(forward)|^2 times the model's forward gain."""
    moment, src = _moment_and_source(centre, point, kind)
    fwd = run["forward"]
    f2 = abs(complex(*fwd["e_theta"])) ** 2 + abs(complex(*fwd["e_phi"])) ** 2
    g0 = antenna.gain_linear(F, np.array([np.radians(90.0 - REF["forward_phi_deg"])]), np.array([EL0]))[0]
    p_nec = g0 * abs(_field(run, i) @ moment) ** 2 / f2
    return placed.received_power(antenna, src, F, (0.0, 0.0), SOIL), p_nec


def _ratio_error_db(case, i, kind, seg):
    """Model over NEC of P_A / P_ref [dB], the candidate standing beside the vertical, the reference (the
    quarter-wave vertical alone) reading a source 50 m away at the same height."""
    c = CASES[case]
    point = c["points"][i]
    pm, pn = _powers(_beside(case), c["with"][SEG[seg]], c["centre_m"], point, i, kind)
    r = REF["reference"]
    j = next(k for k, q in enumerate(r["points"]) if q["height_m"] == point["height_m"])
    rm, rn = _powers(REFERENCE, r["runs"][SEG[seg]], r["centre_m"], r["points"][j], j, kind)
    return 10 * np.log10((pm / rm) / (pn / rn))


def _cases():
    """(case, point index, kind): vertical sources 2 and 4 m up, horizontal ones 4 m up, at every stored point."""
    out = []
    for name, c in CASES.items():
        for i, p in enumerate(c["points"]):
            out.append((name, i, "vertical"))
            if p["height_m"] == 4.0:
                out.append((name, i, "horizontal"))
    return out


def _case_id(case):
    name, i, kind = case
    p = CASES[name]["points"][i]
    return f"{name}-{p['place']}-{p['distance_m']:g}m-{p['height_m']:g}mup-{kind[:4]}"


# Cases the model misses by more than the tolerance (all horizontal sources 4 m up), (case, place, distance, height,
# kind): a bound 0.3 dB over the measured miss (model over NEC, coarse), which still catches a change for the worse.
KNOWN_MISSES: dict = {
    # Beyond the vertical from the whip, 15 and 25 m past it: NEC's change -9.04 and -10.40 dB (finer segmentation
    # -8.60, -9.04), the model's -6.62 and -8.06: +2.42 and +2.34 dB.  There the whip's own reading of the source (a
    # vertical wire and a horizontal dipole) is weak and the vertical's share cancels most of it: a small error of
    # either term shows large in their difference.  (The vertical's diameter for its currents, 50 or 25 mm, moves
    # these by 0.1 dB.)
    ("whip-north", "beyond", 40.0, 4.0, "horizontal"): 2.7,
    ("whip-north", "beyond", 50.0, 4.0, "horizontal"): 2.7,
    # The pair with the vertical 25 m broadside: 25 m beyond the vertical +1.48 dB (NEC -7.00, finer -6.76).
    ("pair-broadside", "beyond", 50.0, 4.0, "horizontal"): 1.8,
    # The pair with the vertical 25 m behind it (17.5 m from its west element): on the null bearings at 45-60 m
    # +1.37, +1.64 (phi 156) and +1.54 dB (phi 204), beyond the vertical +1.94, +1.80, +1.82 dB (40, 50, 60 m): the
    # model's change too small (NEC -1.75 to -2.61 dB, the model -0.37 to -0.81), NEC's spread 0.08-0.16 dB.
    ("pair-behind", "null", 45.0, 4.0, "horizontal"): 1.7,
    ("pair-behind", "null", 60.0, 4.0, "horizontal"): 1.95,
    ("pair-behind", "null-mirror", 60.0, 4.0, "horizontal"): 1.85,
    ("pair-behind", "beyond", 40.0, 4.0, "horizontal"): 2.25,
    ("pair-behind", "beyond", 50.0, 4.0, "horizontal"): 2.1,
    ("pair-behind", "beyond", 60.0, 4.0, "horizontal"): 2.1,
}


def _key(case):
    name, i, kind = case
    p = CASES[name]["points"][i]
    return (name, p["place"], p["distance_m"], p["height_m"], kind)


@pytest.mark.parametrize("case", _cases(), ids=_case_id)
def test_verticals_change_of_a_near_source_against_nec(case):
    # Tolerance 1.0 dB beyond NEC's own spread between its two segmentations for the case (the vertical's 20 and 40
    # segments, the antennas' 6 and 12: up to 0.75 dB beyond the vertical, 1.36 dB for a horizontal source there,
    # where NEC's junction under the vertical, taken out by a load, doubles with the finer segmentation; under 0.4 dB
    # elsewhere).  Measured, model over NEC (coarse) [dB], vertical sources 2 and 4 m up: the whip within 0.32 (beyond
    # the vertical -0.32 to -0.07); the pair with the vertical broadside within 0.38 (its rear-null bearings within
    # 0.32, beyond the vertical -0.38 to -0.08); the pair with the vertical behind it within 1.46 (beyond the vertical
    # +0.99 to +1.46, NEC's spread 0.29-0.75; on its null bearings +0.46 to +1.11 at 30-60 m, spread 0.09-0.73: the
    # model's change too small there).  Horizontal sources 4 m up: within 0.70 dB (whip) and 0.97 (pair) but the known
    # misses above.  With the former reading (the whole response beside the vertical scaled by the antenna's
    # near-over-far reading, placed.py before _scattered_share) the same cases missed by up to 75.8 dB (the pair's
    # null bearings with the vertical broadside: the model +75.1 dB where NEC gives -0.6 to +2.6), 73.4 dB (the
    # vertical behind the pair), 12.4 dB (behind the pair), 11.6 dB (beyond the vertical), 7.6 dB (the whip: a
    # constant -2.8 dB change toward the vertical and beyond it, where NEC's is -0.1 and -4 to -10 dB).
    name, i, kind = case
    got = _model_change_db(name, i, kind)
    nec = _nec_change_db(name, i, kind, "coarse")
    spread = abs(_nec_change_db(name, i, kind, "fine") - nec)
    bound = max(KNOWN_MISSES.get(_key(case), 0.0), CHANGE_TOLERANCE_DB + spread)
    assert abs(got - nec) <= bound, f"model {got:+.2f} dB, NEC {nec:+.2f} dB (finer segmentation: spread {spread:.2f})"


@pytest.mark.parametrize("case", _cases(), ids=_case_id)
def test_candidate_beside_the_vertical_to_reference_ratio_against_nec(case):
    # As tests/test_near_compact.py: P_A / P_ref within 2.5 dB plus NEC's spread between its segmentations, the
    # candidate standing beside the vertical (its forward gain the model's beside it).  Measured, model over NEC
    # (coarse): within -1.03 dB (10 m behind the pair, 4 m up: -0.89 dB without the vertical too, the pair's own
    # reading, test_near_compact; NEC's finer segmentation +1.72) to +2.17 dB (the whip, a horizontal source 15 m
    # beyond the vertical: the known miss of the change above); vertical sources within 1.29 dB.  The former
    # reading: up to +75.7 dB.
    name, i, kind = case
    err = _ratio_error_db(name, i, kind, "coarse")
    spread = abs(_ratio_error_db(name, i, kind, "fine") - err)
    assert abs(err) <= RATIO_TOLERANCE_DB + spread, f"model over NEC {err:+.2f} dB (spread {spread:.2f})"


def test_the_null_points_lie_on_the_pairs_far_field_null():
    # The stored rear-null bearings (NEC phi 156 and 204 deg, found on NEC's pattern at 5 deg elevation) are where
    # the model's pair, bare, has its far field over 40 dB below its forward lobe at low elevation (measured at 5 deg
    # elevation: 91.6 dB down, the model's deepest at that elevation on a 1 deg grid also at 156 deg; 56 dB at 2 deg,
    # 45 dB at 10 deg): the points that made the former reading blow up.  (NEC's own pattern of the pair at 5 deg
    # elevation: its deepest also at phi 156, 56 dB below the forward lobe at that elevation on a 1 deg grid.)
    pair = ANTENNAS["pair"]
    el = np.radians(np.array([5.0, 5.0, 5.0]))
    az = np.radians(90.0 - np.array([0.0, *REF["null_phi_deg"]]))
    g = pair.gain_linear(F, az, el)
    assert 10 * np.log10(g[0] / g[1:]).min() > 40.0


def test_reciprocity_with_the_vertical_present():
    # A real 1 m source wire 2 m up, beyond the vertical and beside the whip, drives the whip's base (shorted) in the
    # ratio of the whip's transmitted E_z at the two points with the loaded vertical there (measured 1.0031, phase
    # -0.015 deg): the reading through transmit fields holds with the scatterer in place.
    c = CASES["whip-north"]
    chk = REF["reciprocity_check"]["points"]

    def ez(xy):
        i = next(k for k, p in enumerate(c["points"]) if p["xyz_m"] == [*xy, 2.0])
        return _field(c["with"][0], i)[2]

    ratio_currents = complex(*chk["beyond-50"]["whip_base_current_a"]) / complex(*chk["side-10"]["whip_base_current_a"])
    ratio_fields = ez(chk["beyond-50"]["source_m"][:2]) / ez(chk["side-10"]["source_m"][:2])
    assert abs(ratio_currents / ratio_fields - 1) < 0.01
