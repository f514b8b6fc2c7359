"""Compact antennas read a near source through their own transmit currents (reciprocity).

References: tests/nec/nearcompact.json, written by tests/nec/make_nearcompact.py with nec2c 1.3 and the project's
fbar() fix (NEC-2 over Sommerfeld ground; the module docstring there says how each antenna's transmitted near
field gives, by reciprocity, what a small dipole source at each point delivers, relative to the antenna's own
forward plane wave).  The compared figure is the candidate-to-reference ratio P_A / P_ref the way
snrgain.model.placed shares a placed source between antennas, the reference the project's quarter-wave vertical
with its source 50 m away at the same height (and, for a horizontal source, the same axis relative to the line).
"""

import json
from pathlib import Path

import numpy as np
import pytest

from snrgain.antennas import from_spec
from snrgain.model import placed
from snrgain.sky.noise import LocalSource

REF = json.loads((Path(__file__).parent / "nec" / "nearcompact.json").read_text())
F = REF["freq_mhz"] * 1e6
EL0 = np.radians(REF["forward_elevation_deg"])
LOAM = {"permittivity": 13.0, "conductivity": "5 mS/m"}
REFERENCE_DISTANCE_M = 50.0
AXIS_OFF_LINE_DEG = 30.0
"""A horizontal source's axis, off the line from the antenna's centre to it [deg]."""
TOLERANCE_DB = 2.5
LOOPS = ("pennant", "delta", "diamond")
"""The terminated loop's other shapes (the flag is the rectangle)."""


def _ground(name):
    g = REF["grounds"][name]
    return {"permittivity": g["permittivity"], "conductivity": f"{g['conductivity_s_per_m'] * 1e3:g} mS/m"}


def _model(name, gname):
    g, a = _ground(gname), REF["antennas"]
    if name in ("reference", "whip"):
        v = a[name]
        return from_spec(
            {
                "family": "vertical",
                "height": f"{v['height_m']} m",
                "diameter": f"{2 * v['radius_m']} m",  # NEC's wire
                "ground": g,
                "position": [0, 0],
            }
        )
    if name in ("flag", *LOOPS):
        f = a[name]
        return from_spec(
            {
                "family": "terminated-loop",
                "shape": f.get("shape", "rectangle"),
                "width": f"{f['width_m']} m",
                "loop_height": f"{f['loop_height_m']} m",
                "height": f"{f['height_m']} m",
                "termination": f"{f['termination_ohm']} ohm",
                "bearing": 270,  # NEC's phi = 180 deg; the feed side at NEC's x = 0, the loop along +x
                "ground": g,
                "position": [0, 0],
            }
        )
    p = a["pair"]
    return from_spec(
        {
            "family": "phased-verticals",
            "positions": [[0, 0], [p["spacing_m"], 0]],
            "height": f"{p['height_m']} m",
            "steering": "given",
            "phases": [0, -p["phase_deg"]],
            "phase_sense": "lag",
            "ground": g,
        }
    )


_MODELS: dict = {}


def _antenna(name, gname):
    if (name, gname) not in _MODELS:
        _MODELS[name, gname] = _model(name, gname)
    return _MODELS[name, gname]


def _run(name, gname, seg):
    return next(r for r in REF["runs"] if (r["antenna"], r["ground"], r["segmentation"]) == (name, gname, seg))


def _soil(a):
    return a.ground if hasattr(a, "ground") else a.elements[0].ground


def _powers(name, gname, seg, point, kind):
    """(model, NEC) power of a small dipole source (``kind``) at a stored point, in units of realized gain: the
    model's placed.received_power; NEC's |E_A . p|^2 / |F_A(forward)|^2 times the model's forward gain."""
    a = _antenna(name, gname)
    lay = REF["layout"][name]
    cx, cy = lay["centre_m"]
    x, y, z = point["xyz_m"]
    axis = np.arctan2(x - cx, y - cy) + np.radians(AXIS_OFF_LINE_DEG)
    moment = np.array([0.0, 0.0, 1.0]) if kind == "vertical" else np.array([np.sin(axis), np.cos(axis), 0.0])
    e = np.array([complex(*c) for c in point["e"]])
    fwd = _run(name, gname, seg)["forward"]
    f2 = abs(complex(*fwd["e_theta"])) ** 2 + abs(complex(*fwd["e_phi"])) ** 2
    g0 = a.gain_linear(F, np.array([np.radians(90.0 - lay["forward_phi_deg"])]), np.array([EL0]))[0]
    p_nec = g0 * abs(e @ moment) ** 2 / f2
    src = LocalSource(
        "s",
        0.0,
        position_m=(x, y),
        height_m=z,
        polarisation=kind,
        orientation_rad=float(np.mod(axis, np.pi)) if kind == "horizontal" else None,
    )
    return placed.received_power(a, src, F, (0.0, 0.0), _soil(a)), p_nec


def _error_db(name, gname, seg, point, kind):
    """Model over NEC of P_A / P_ref [dB]."""
    pm, pn = _powers(name, gname, seg, point, kind)
    ref_pt = next(
        p
        for p in _run("reference", gname, seg)["points"]
        if p["distance_m"] == REFERENCE_DISTANCE_M and p["height_m"] == point["height_m"]
    )
    rm, rn = _powers("reference", gname, seg, ref_pt, kind)
    return 10 * np.log10((pm / rm) / (pn / rn))


def _cases():
    """(antenna, ground, place, distance, height, kind): vertical sources 2 m up at every distance, 6 and 10 m up
    to 60 m, horizontal sources 4 m up (axis 30 deg off the line) at every distance."""
    out = []
    for name, gname in (
        ("whip", "loam"),
        ("whip", "dry"),
        ("flag", "loam"),
        ("pair", "loam"),
        ("reference", "loam"),
        ("reference", "dry"),
    ):
        for p in _run(name, gname, "coarse")["points"]:
            h, d = p["height_m"], p["distance_m"]
            if name == "reference" and d == REFERENCE_DISTANCE_M:
                continue  # the reference against itself
            if h == 2.0 or (h in (6.0, 10.0) and d <= 60.0):
                out.append((name, gname, p["place"], d, h, "vertical"))
            if h == 4.0:
                out.append((name, gname, p["place"], d, h, "horizontal"))
    return out


def _point(name, gname, seg, place, d, h):
    return next(
        p for p in _run(name, gname, seg)["points"] if (p["place"], p["distance_m"], p["height_m"]) == (place, d, h)
    )


# Cases the model misses by more than the tolerance, each with its measured error, its cause, and a bound that
# still catches a change for the worse (not the value itself: a better field model may only move them closer).
KNOWN_MISSES: dict = {
    # None left.  Former misses and their causes, found by putting NEC-2's own currents (its output's current
    # table, run with the stored decks) through the model's reciprocity integral with the same field:
    # - the quarter-wave reference 5 m from a source (against itself 50 m away): -2.5 dB (source 2 m up, loam),
    #   +3.05 and +5.9 dB (horizontal source 4 m up, loam and 1 mS/m) with the sinusoidal current.  Not the
    #   quadrature (82 or 328 points up the wire: the same within 0.01 dB) but the current: NEC's (160 segments)
    #   gave -0.05, -0.82, +0.11 dB through the same integral.  With the wire's solved current
    #   (snrgain.antennas.vertical.thin_wire_current, over the soil's image): -0.15, -0.26, -0.05 dB;
    # - the flag with a source 10 m up, 10 m behind its middle: -3.7 dB with the equivalent rectangle's currents
    #   (NEC's currents: +0.15 dB); with the line carried along the loop's own halves
    #   (snrgain.antennas.termloop.TerminatedLoop.transmit_segments): -1.14 dB, the rest of that offset the model
    #   pattern's rear null (read in the source's direction, snrgain.model.placed._through_currents), 1.1 dB deeper
    #   than these currents give (every rear case read -0.6 to -1.5 dB; front and side within 0.13 dB).  With the
    #   currents' electric part fitted to the pattern (the loop's charges' share, 0.976 of the line's): +0.09 dB.
}


@pytest.mark.parametrize("case", _cases(), ids=lambda c: f"{c[0]}-{c[1]}-{c[2]}-{c[3]:g}m-{c[4]:g}mup-{c[5][:4]}")
def test_near_source_ratio_against_nec(case):
    # Tolerance 2.5 dB (the brief's, up to 200 m) plus NEC's own spread between its two segmentations for the case
    # (the flag's rear null moves by up to 5.8 dB between them at 60 m; elsewhere under 0.6 dB).  Measured, model
    # over NEC (coarse), with the source's field the exact Sommerfeld integrals (noisemodels.halfspace), the
    # verticals' solved currents and the flag's line along its own halves: the whip within 0.10 dB over loam and
    # 1 mS/m (source 2-10 m up, horizontal too; 0.31 dB with the sinusoidal current); the flag within 0.16 dB in
    # front and to the side, -0.02 to +0.37 dB behind it at 10-30 m, -0.38 to -2.14 dB at 60-200 m (where NEC's
    # finer segmentation reads +0.56 to +3.7) with the currents' electric part fitted to the pattern (0.6-1.5 dB low
    # behind it at every distance without; -3.7 dB 10 m behind, 10 m up with the equivalent rectangle's currents);
    # the pair within 0.9 dB (15 m behind it with the source 6 m up -0.87 dB,
    # +1.9 with the sinusoidal current, -8.8 with the closed-form field); the reference itself (against its reading
    # 50 m away) within 0.3 dB at every distance (3.05 dB at 5 m with the sinusoidal current).  Through the pattern
    # at the antenna's point (the reading before) the same cases missed by up to 7 dB (whip), 31 dB (flag), 64 dB
    # (pair) and 45 dB (the reference at 5 m).
    name, gname, place, d, h, kind = case
    err = _error_db(name, gname, "coarse", _point(name, gname, "coarse", place, d, h), kind)
    err_fine = _error_db(name, gname, "fine", _point(name, gname, "fine", place, d, h), kind)
    spread = abs(err_fine - err)
    bound = KNOWN_MISSES.get(case, TOLERANCE_DB + spread)
    assert abs(err) <= bound, f"model over NEC {err:+.2f} dB (finer NEC segmentation {err_fine:+.2f} dB)"


def _loop_cases():
    """(shape, ground, place, distance, height, kind) for the pennant, delta and diamond over both grounds: at
    10-15 m vertical sources 2, 6 and 10 m up and horizontal ones 2, 4, 6 and 10 m up (axis 30 deg off the line);
    at 30-100 m a vertical source 2 m up and a horizontal one 4 m up."""
    out = []
    for name in LOOPS:
        for gname in ("loam", "dry"):
            for p in _run(name, gname, "coarse")["points"]:
                place, d, h = p["place"], p["distance_m"], p["height_m"]
                close = d <= 15.0
                if (close and h in (2.0, 6.0, 10.0)) or (not close and h == 2.0):
                    out.append((name, gname, place, d, h, "vertical"))
                if close or h == 4.0:
                    out.append((name, gname, place, d, h, "horizontal"))
    return out


@pytest.mark.parametrize("case", _loop_cases(), ids=lambda c: f"{c[0]}-{c[1]}-{c[2]}-{c[3]:g}m-{c[4]:g}mup-{c[5][:4]}")
def test_loop_shapes_near_source_ratio_against_nec(case):
    # The terminated loop's other shapes (tests/nec/nearcompact.json: a pennant 10 x 5 m, 800 ohm; a delta
    # 9 x 5 m, 850 ohm; a diamond 10 x 6 m, 875 ohm; each 1.5 m up, favouring west), read through their currents
    # along their own halves with the electric part fitted to their pattern (termloop.TerminatedLoop.
    # transmit_segments).  Tolerance 2.5 dB plus NEC's spread between its 0.3 and 0.15 m segmentations (under
    # 0.82 dB at 10-15 m; behind the loops at 60-100 m, in the ground wave's rear null, up to 8.2 dB).  Measured,
    # model over NEC (coarse) [dB], per place and distance from the loop's middle, over loam; over 1 mS/m: sources
    # vertical 2, 6, 10 m up | horizontal 2, 4, 6, 10 m up:
    # pennant front   10 m: +0.18 +0.13 +0.15 | -0.16 +0.20 +0.12 +0.12;  +0.17 +0.13 +0.15 | -0.05 +0.21 +0.12 +0.11
    # pennant front 12.5 m: +0.15 +0.12 +0.11 | +0.18 +0.15 +0.13 +0.11;  +0.15 +0.12 +0.11 | +0.12 +0.15 +0.12 +0.10
    # pennant front   15 m: +0.13 +0.12 +0.09 | +0.10 +0.12 +0.11 +0.10;  +0.13 +0.11 +0.08 | +0.08 +0.11 +0.11 +0.10
    # pennant side    10 m: -0.07 -0.07 -0.08 | +0.02 +0.01 +0.01 +0.02;  -0.06 -0.07 -0.08 | +0.03 +0.02 +0.01 +0.01
    # pennant side  12.5 m: -0.07 -0.08 -0.14 | -0.02 -0.02 -0.01 -0.00;  -0.06 -0.07 -0.11 | -0.00 -0.01 -0.01 -0.00
    # pennant side    15 m: -0.07 -0.08 -0.12 | -0.05 -0.03 -0.03 -0.01;  -0.06 -0.07 -0.09 | -0.02 -0.02 -0.02 -0.02
    # pennant back    10 m: +0.13 +0.46 +0.44 | +0.21 -0.14 -0.12 +0.20;  +0.13 +0.42 +0.39 | +0.25 -0.11 -0.11 +0.20
    # pennant back  12.5 m: +0.24 +0.50 +1.03 | +0.16 +0.05 +0.06 +0.22;  +0.22 +0.45 +1.14 | +0.20 +0.08 +0.08 +0.23
    # pennant back    15 m: +0.32 +0.54 +1.14 | +0.24 +0.16 +0.17 +0.26;  +0.28 +0.48 +1.25 | +0.29 +0.19 +0.18 +0.26
    # delta   front   10 m: -0.73 +0.65 +0.32 | -1.15 -0.87 -0.52 -0.14;  -0.69 +0.65 +0.51 | -0.49 -0.73 -0.45 -0.12
    # delta   front 12.5 m: -0.53 +0.09 +0.46 | -0.59 -0.60 -0.46 -0.21;  -0.50 +0.12 +0.58 | +0.05 -0.41 -0.37 -0.18
    # delta   front   15 m: -0.38 -0.07 +0.28 | -0.33 -0.44 -0.38 -0.22;  -0.37 -0.04 +0.34 | +0.28 -0.21 -0.27 -0.19
    # delta   side    10 m: +0.03 +0.15 -0.01 | +0.10 +0.08 +0.09 +0.13;  +0.06 +0.16 +0.02 | +0.26 +0.17 +0.15 +0.17
    # delta   side  12.5 m: +0.03 +0.09 -0.03 | +0.10 +0.07 +0.07 +0.10;  +0.06 +0.11 +0.01 | +0.25 +0.17 +0.14 +0.15
    # delta   side    15 m: +0.03 +0.06 +0.02 | +0.09 +0.07 +0.07 +0.08;  +0.06 +0.09 +0.05 | +0.24 +0.17 +0.14 +0.14
    # delta   back    10 m: -0.61 +1.20 +0.11 | -1.02 -0.67 -0.32 +0.05;  -0.51 +1.53 -0.06 | -1.46 -0.80 -0.35 +0.06
    # delta   back  12.5 m: -0.43 +0.35 +0.52 | -0.48 -0.42 -0.27 -0.02;  -0.36 +0.55 +0.34 | -0.77 -0.54 -0.32 -0.02
    # delta   back    15 m: -0.31 +0.09 +0.70 | -0.25 -0.27 -0.20 -0.04;  -0.26 +0.24 +0.73 | -0.45 -0.37 -0.25 -0.05
    # diamond front   10 m: -0.03 -0.08 -0.01 | -0.02 -0.20 -0.32 -0.16;  -0.03 -0.09 -0.00 | -0.19 -0.20 -0.33 -0.17
    # diamond front 12.5 m: -0.03 -0.01 +0.08 | -0.14 -0.20 -0.22 -0.14;  -0.02 -0.02 +0.07 | -0.12 -0.21 -0.23 -0.16
    # diamond front   15 m: -0.01 +0.01 +0.07 | -0.18 -0.18 -0.17 -0.13;  -0.01 +0.01 +0.05 | -0.14 -0.19 -0.19 -0.15
    # diamond side    10 m: +0.04 +0.04 +0.02 | +0.05 +0.04 +0.04 +0.05;  +0.04 +0.04 +0.02 | +0.05 +0.04 +0.03 +0.04
    # diamond side  12.5 m: +0.03 +0.03 +0.01 | +0.02 +0.02 +0.02 +0.03;  +0.03 +0.03 +0.01 | +0.03 +0.02 +0.01 +0.02
    # diamond side    15 m: +0.02 +0.02 +0.01 | -0.00 +0.00 +0.01 +0.02;  +0.02 +0.02 +0.01 | +0.02 +0.00 +0.00 +0.00
    # diamond back    10 m: +0.03 +0.01 +0.16 | +1.17 -0.01 -0.13 +0.02;  +0.04 -0.02 +0.15 | +0.20 +0.01 -0.14 +0.00
    # diamond back  12.5 m: +0.06 +0.09 +0.47 | +0.11 +0.00 -0.03 +0.03;  +0.04 +0.06 +0.55 | +0.14 +0.01 -0.04 +0.01
    # diamond back    15 m: +0.08 +0.14 +0.49 | +0.07 +0.02 +0.01 +0.04;  +0.06 +0.10 +0.55 | +0.10 +0.03 +0.01 +0.03
    # At 30-100 m (vertical 2 m up, horizontal 4 m up) within 0.67 dB, but a vertical source behind the loop at
    # 60-100 m, in the rear null, reads -4.26 to +0.71 dB where NEC's finer segmentation gives -0.42 to +5.54 (the
    # diamond over loam 100 m behind: -4.26, finer +3.91; within the spread).  Before, through the equivalent
    # rectangle's currents, the same 10-15 m cases missed by up to 10.45 dB (pennant, horizontal 2 m up behind it;
    # front and rear 5-6 dB), 3.4 dB (delta), 8.9 dB (diamond, horizontal 2 m up behind it); along the halves
    # without the fitted electric part front and side were within 0.75 dB but every rear case read 4.6-8.3 dB low
    # (the currents' rear null 3.5-5.4 dB shallower than the pattern's, through which the reading is scaled).  No
    # known misses.
    name, gname, place, d, h, kind = case
    err = _error_db(name, gname, "coarse", _point(name, gname, "coarse", place, d, h), kind)
    err_fine = _error_db(name, gname, "fine", _point(name, gname, "fine", place, d, h), kind)
    bound = KNOWN_MISSES.get(case, TOLERANCE_DB + abs(err_fine - err))
    assert abs(err) <= bound, f"model over NEC {err:+.2f} dB (finer NEC segmentation {err_fine:+.2f} dB)"


def test_the_reciprocity_step_in_nec_itself():
    # The NEC references come from each antenna's transmitted near field (reciprocity); a real 1 m source wire
    # beside the whip checks the step: its base current with the wire at 10 m over that at 60 m against the whip's
    # transmitted E_z at the two points.  Measured: 25.30 and 25.38 (0.03 dB), phases -0.48 deg both.
    chk = REF["reciprocity_check"]["base_current_by_distance_m"]
    i10, i60 = complex(*chk["10"]), complex(*chk["60"])
    pts = _run("whip", "loam", "coarse")["points"]
    ez = {p["distance_m"]: complex(*p["e"][2]) for p in pts if p["height_m"] == 2.0}
    assert 20 * np.log10(abs(i10 / i60) / abs(ez[10.0] / ez[60.0])) == pytest.approx(0.0, abs=0.1)


def _exact_field_vector(src, points_m, height_m, freq_hz, ground, *, kind):
    """placed.field_vector through the exact Sommerfeld integrals (noisemodels.sommerfeld): a vertical source."""
    from noisemodels import sommerfeld

    assert kind == "vertical"
    p = np.atleast_2d(np.asarray(points_m, dtype=float))
    z = np.broadcast_to(np.asarray(height_m, dtype=float), (len(p),))
    out = np.zeros((len(p), 3), dtype=complex)
    for i, ((x, y), zi) in enumerate(zip(p, z)):
        dx, dy = x - src.position_m[0], y - src.position_m[1]
        rho = float(np.hypot(dx, dy))
        e = sommerfeld.field(
            freq_hz,
            ground.permittivity,
            ground.conductivity_s_per_m,
            kind="vertical",
            source_height_m=src.height_m,
            rho_m=rho,
            height_m=float(zi),
        )
        out[i] = (e["rho"] * dx / rho, e["rho"] * dy / rho, e["z"])
    return out


def test_pairs_former_miss_reads_the_same_with_the_reference_integrals(monkeypatch):
    # The pair 15 m behind, source 6 m up (a near null) missed by -8.8 dB with the closed-form field; the run-time
    # field is now the Sommerfeld integrals (noisemodels.halfspace, numpy): within the tolerance of NEC, and the
    # same within 0.1 dB as with the scipy reference integrals (noisemodels.sommerfeld) through the same currents.
    # Measured: -0.89 both (the pair alone, before the reference's ratio; +1.93 both with the sinusoidal
    # current).
    pt = _point("pair", "loam", "coarse", "back", 15.0, 6.0)
    pm, pn = _powers("pair", "loam", "coarse", pt, "vertical")
    run_time = 10 * np.log10(pm / pn)
    assert abs(run_time) < TOLERANCE_DB
    monkeypatch.setattr(placed, "field_vector", _exact_field_vector)
    pm, pn = _powers("pair", "loam", "coarse", pt, "vertical")
    assert 10 * np.log10(pm / pn) == pytest.approx(run_time, abs=0.1)


def test_references_close_reading_is_the_reference_integrals(monkeypatch):
    # The reference 5 m from a source 2 m up: -5.0 dB with the closed-form field, -2.5 dB with the run-time integrals
    # and the sinusoidal current, -0.15 dB with the wire's solved current; the same within 0.1 dB as with the scipy
    # reference integrals (measured: -0.15 both).
    near = _point("reference", "loam", "coarse", "any", 5.0, 2.0)
    far = _point("reference", "loam", "coarse", "any", REFERENCE_DISTANCE_M, 2.0)

    def ratio():
        (pm, pn), (rm, rn) = (_powers("reference", "loam", "coarse", p, "vertical") for p in (near, far))
        return 10 * np.log10((pm / rm) / (pn / rn))

    run_time = ratio()
    assert abs(run_time) < 0.5
    monkeypatch.setattr(placed, "field_vector", _exact_field_vector)
    assert ratio() == pytest.approx(run_time, abs=0.1)


# -- invariants --------------------------------------------------------------------------------------------------

FAMILIES = {
    "whip": {"family": "vertical", "height": "6 m", "ground": "moist loam"},
    "top-loaded": {"family": "vertical", "height": "18 m", "top_loading": "6 m", "ground": "moist loam"},
    "small-loop": {
        "family": "small-loop",
        "width": "2 m",
        "loop_height": "1.5 m",
        "height": "3 m",
        "bearing": 30,
        "ground": "moist loam",
    },
    "flag": {
        "family": "terminated-loop",
        "width": "8.5 m",
        "loop_height": "4.3 m",
        "height": "1.5 m",
        "termination": "900 ohm",
        "bearing": 20,
        "ground": "moist loam",
    },
    "delta": {
        "family": "terminated-loop",
        "shape": "delta",
        "width": "9 m",
        "loop_height": "5 m",
        "height": "1 m",
        "bearing": 200,
        "ground": "moist loam",
    },
    "pennant": {
        "family": "terminated-loop",
        "shape": "triangle",
        "width": "10 m",
        "loop_height": "5 m",
        "height": "1.5 m",
        "termination": "800 ohm",
        "bearing": 110,
        "ground": "moist loam",
    },
    "diamond": {
        "family": "terminated-loop",
        "shape": "diamond",
        "width": "10 m",
        "loop_height": "6 m",
        "height": "1.5 m",
        "bearing": 315,
        "ground": {"permittivity": 5, "conductivity": "1 mS/m"},
    },
    "pair-lines": {
        "family": "phased-verticals",
        "positions": [[0, 0], [20, 5]],
        "height": "10 m",
        "steering": "given",
        "phases": [0, 140],
        "phase_sense": "lag",
        "feed": "lines",
        "ground": "moist loam",
    },
    "four-square": {
        "family": "phased-verticals",
        "positions": [[0, 0], [20, 0], [0, 20], [20, 20]],
        "height": "8 m",
        "bearing": 45,
        "ground": "moist loam",
    },
    "flag-array": {
        "family": "array",
        "ground": "moist loam",
        "bearing": 0,
        "elements": [
            {"family": "terminated-loop", "width": "6 m", "loop_height": "3 m", "height": "1 m", "position": [0, 0]},
            {"family": "terminated-loop", "width": "6 m", "loop_height": "3 m", "height": "1 m", "position": [0, 30]},
        ],
    },
}


@pytest.mark.parametrize("name", sorted(FAMILIES))
def test_currents_give_each_familys_response(name):
    # A unit plane wave (incident plus Fresnel-reflected, placed.plane_wave_field) along the currents gives the
    # family's complex response, both polarizations, every direction: the currents are the model's own.  Arrays
    # are placed at their elements' centroid, so their phase is referred there (the response's to the origin).
    # Tolerance: 1e-9 relative; the small loop 1e-3 (the pattern takes H at the loop's centre, the currents the
    # flux through the whole loop; measured 2.5e-4); verticals without top loading 1e-3 (the pattern is the
    # sinusoid's, the currents the wire's solved ones: measured 2.3e-4 whip, 5.1e-4 pair-lines, 3.5e-4
    # four-square; the top-loaded one keeps the sinusoid, 1e-9); a terminated loop's currents run along its own
    # halves, not the equivalent rectangle its pattern is made of, their electric part fitted to the pattern
    # (termloop.TerminatedLoop.transmit_segments): against the pattern's best at that elevation 0.03 (measured 0.0078
    # flag, 0.0038 flag-array, 0.013 delta, 0.013 diamond; 0.021 and 0.018 for the flags before the fit), the
    # pennant's magnitude too (0.011), its whole complex value 0.11 (measured 0.097): its pattern's phase is the
    # equivalent rectangle's, whose area lies round the width's middle, its currents' the pennant's own, whose area
    # lies toward the feed side (up to 5.6 deg apart in front, at 90 deg here; a placed source is read through the
    # pattern's phase, placed._through_currents, so a phasing unit keeps one convention).
    a = from_spec(FAMILIES[name])
    pts, dirs, cur = a.transmit_segments(F)
    centre = np.asarray(a.positions, dtype=float).mean(axis=0) if hasattr(a, "positions") else np.zeros(2)
    k = 2 * np.pi * F / 299792458.0
    ground = _soil(a)
    along_halves = name in ("flag", "flag-array", "delta", "pennant", "diamond")
    worst = worst_magnitude = 0.0
    for el in np.radians([2.0, 20.0, 45.0, 80.0]):
        around = np.radians(np.arange(0.0, 360.0, 5.0))
        best = float(np.max(np.abs(a.complex_response(F, around, np.full(around.shape, el))[0])))
        for az in np.radians([0.0, 37.0, 90.0, 150.0, 200.0, 301.0]):
            rv, rh = a.complex_response(F, np.array([az]), np.array([el]))
            shift = np.exp(1j * k * np.cos(el) * (centre[0] * np.sin(az) + centre[1] * np.cos(az)))
            norm = best if along_halves else max(abs(rv[0]), abs(rh[0]))
            for pol, r in (("v", rv[0]), ("h", rh[0])):
                v = np.einsum("ni,ni,n->", placed.plane_wave_field(F, pts, az, el, ground, pol), dirs, cur) * shift
                worst = max(worst, abs(v - r) / norm)
                worst_magnitude = max(worst_magnitude, abs(abs(v) - abs(r)) / norm)
    small = ("small-loop", "whip", "pair-lines", "four-square")
    if name == "pennant":
        assert worst_magnitude < 0.03
        assert worst < 0.11
    else:
        assert worst < (0.03 if along_halves else 1e-3 if name in small else 1e-9)


def test_loops_plane_wave_voltages_are_placed_plane_wave_fields():
    # The loop's fit of its currents' electric part (termloop._plane_wave_voltages, every direction at once) reads
    # the same field as placed.plane_wave_field does one direction at a time (to rounding; measured 1.4e-15).
    from snrgain.antennas.termloop import _plane_wave_voltages

    a = from_spec(FAMILIES["pennant"])
    pts, dirs, cur = a.transmit_segments(F)
    az, el = np.radians([10.0, 200.0, 95.0]), np.radians([5.0, 30.0, 60.0])
    v, h = _plane_wave_voltages(F, pts, dirs, np.vstack([cur, 2j * cur]), az, el, a.ground)
    for i in range(3):
        for pol, got in (("v", v), ("h", h)):
            want = np.einsum("ni,ni,n->", placed.plane_wave_field(F, pts, az[i], el[i], a.ground, pol), dirs, cur)
            assert got[0, i] == pytest.approx(want, rel=1e-12, abs=1e-12 * abs(v[0]).max())
            assert got[1, i] == pytest.approx(2j * want, rel=1e-12, abs=1e-12 * abs(v[0]).max())


def test_plane_wave_fields_are_plane_wave_field_of_each_polarisation():
    # both polarisations from one pair of phases (what _through_currents takes): each the one-polarisation field,
    # to the bit
    a = from_spec(FAMILIES["pennant"])
    pts = a.transmit_segments(F)[0]
    for az, el in ((0.3, 0.1), (4.0, 1.2)):
        both = placed.plane_wave_fields(F, pts, az, el, a.ground)
        for pol, got in zip(("v", "h"), both):
            np.testing.assert_array_equal(got, placed.plane_wave_field(F, pts, az, el, a.ground, pol))


@pytest.mark.parametrize("name", sorted(FAMILIES))
def test_far_source_gives_the_patterns_ratio(name):
    # 30 km away a vertical source (a vertically polarised ground wave) read through the currents gives the family's
    # vertical partial gain over the reference's (a quarter-wave vertical, read the same way) at the source's
    # elevation: within 0.3 dB (the brief's invariant) where the pattern is within 20 dB of its best at that
    # elevation, within 1 dB in nulls 20-40 dB down (there the ground wave's slowness along an array, 1 against the
    # 5-deg plane wave's cos 5 deg, moves the null: measured 0.87 dB at worst, a line-fed pair 35 dB down); deeper
    # nulls are not compared.  Measured elsewhere: within 0.18 dB (flag), 0.15 (delta, four-square), 0.20 (pennant;
    # 0.10 above 20 dB down), 0.07 (diamond), 0.05 (small loop), 0.02 (verticals).
    a = from_spec({**FAMILIES[name], **({} if "positions" in FAMILIES[name] else {"position": [0, 0]})})
    ref = from_spec({"family": "vertical", "height": "41 m", "ground": "moist loam", "position": [0, 0]})
    a_at = np.asarray(a.positions, dtype=float).mean(axis=0) if hasattr(a, "positions") else np.zeros(2)
    az = np.radians(np.arange(0.0, 360.0, 20.0))
    src = LocalSource("s", 0.0, height_m=2.0)
    el = np.full(az.shape, src.elevation_rad)
    g_a, g_ref = a.partial_gains(F, az, el)[0], ref.partial_gains(F, az, el)[0]
    depth = 10 * np.log10(
        g_a / a.partial_gains(F, np.radians(np.arange(0.0, 360.0, 2.0)), np.full(180, el[0]))[0].max()
    )
    for k in np.flatnonzero(depth > -40.0):
        s = LocalSource(
            "s", 0.0, position_m=tuple(a_at + 30e3 * np.array([np.sin(az[k]), np.cos(az[k])])), height_m=2.0
        )
        got = placed.received_power(a, s, F, (0.0, 0.0), ref.ground) / placed.received_power(
            ref, s, F, (0.0, 0.0), ref.ground
        )
        err = 10 * np.log10(got / (g_a[k] / g_ref[k]))
        assert abs(err) <= (0.3 if depth[k] > -20.0 else 1.0), (np.degrees(az[k]), depth[k], err)


def test_antenna_without_a_position_keeps_the_pattern_reading():
    # Unplaced antennas stand at the reference's place and are read as before (their pattern toward the source
    # times the field at that point), so nothing changes for them.
    whip = from_spec(FAMILIES["whip"])
    src = LocalSource("s", 0.0, position_m=(12.0, 5.0), height_m=6.0)
    ev, _ = placed.source_field(src, np.zeros((1, 2)), F, whip.ground)
    rv, _ = whip.complex_response(F, placed.bearing_to(src, np.zeros((1, 2))), np.array([src.elevation_rad]))
    assert placed.received_power(whip, src, F, (0.0, 0.0), whip.ground) == pytest.approx(abs(rv[0] * ev[0]) ** 2)
    placed_whip = whip.at((0.0, 0.0))
    assert placed.received_power(placed_whip, src, F, (0.0, 0.0), whip.ground) != pytest.approx(
        abs(rv[0] * ev[0]) ** 2, rel=0.01
    )


def test_phasing_unit_adds_its_parts_read_through_their_currents():
    # A combination of a placed whip and a placed flag: passing one part alone it hears exactly what that part
    # hears; with both, what it hears is the weighted sum of the parts' voltages (each read through its currents).
    from snrgain.antennas.combination import Combination

    whip = from_spec({**FAMILIES["whip"], "position": [0, 0]})
    flag = from_spec({**FAMILIES["flag"], "position": [15, 0]})
    unit = from_spec({"family": "combination", "antennas": ["a", "b"]})
    assert isinstance(unit, Combination)
    unit.attach([whip, flag])
    src = LocalSource("s", 0.0, position_m=(8.0, 12.0), height_m=4.0)
    g = whip.ground
    for which, part in ((0, whip), (1, flag)):
        alone = unit.alone(F, which, "test")
        assert placed.received_power(alone, src, F, (0.0, 0.0), g) == pytest.approx(
            placed.received_power(part, src, F, (0.0, 0.0), g), rel=1e-9
        )
    a_w = placed.received_amplitudes(whip, src, F, (0.0, 0.0), g)[0]
    a_f = placed.received_amplitudes(flag, src, F, (0.0, 0.0), g)[0]
    set_ = unit.with_weights(F, np.array([1.0, 0.7 * np.exp(-2j)]), "test")
    w = set_.weights_at(F)
    expect = abs(w[0] * a_w + w[1] * a_f) ** 2 / float(np.real(w.conj() @ w))
    assert placed.received_power(set_, src, F, (0.0, 0.0), g) == pytest.approx(expect, rel=1e-9)


SCEN = """
[site]
name = "test lot"
latitude = 44.2
longitude = -71.3
ground = "moist loam"

[band]
frequency = "1.83 MHz"

[time]
months = [1]
utc_hours = [4]

[uncertainty]
ground = false
noise_deciles = false
local_sources = false

[[noise.local]]
name = "supply"
position = [{east}, 0]
height = "3 m"
level = "S7"

[[target]]
name = "Europe"
bearing = 270
elevation = [10, 25]

[reference]
family = "vertical"
height = "40 m"
position = [0, 60]

[[candidate]]
name = "flag"
family = "terminated-loop"
width = "8.5 m"
loop_height = "4.3 m"
height = "1.5 m"
termination = "900 ohm"
bearing = 270
position = [0, 0]
"""


def test_a_source_on_a_loops_far_side_is_refused_naming_the_field():
    # The plan check keeps a placed source 1 m from each antenna; a loop is read on every part of it now, so its
    # whole width counts, not its feed point alone (the flag runs east 8.5 m from its feed).
    import snrgain
    from snrgain.errors import ScenarioError

    with pytest.raises(
        ScenarioError, match=r'noise.local 1 \("supply"\).position: the source stands 0.00 m from candidate 1'
    ):
        snrgain.evaluate(SCEN.format(east='"8 m"'))
    r = snrgain.evaluate(SCEN.format(east='"12 m"'))
    assert np.isfinite(r.candidates[0].snr_gain_nominal_db[0])


# -- the vertical's solved current ----------------------------------------------------------------------------------


@pytest.mark.parametrize("height_m, radius_m", [(40.96, 0.025), (6.0, 0.005), (20.0, 0.002)])
def test_solved_current_conserves_power_over_perfect_ground(height_m, radius_m):
    # Poynting's theorem (J. D. Kraus, "Antennas", 2nd ed., Sec. 2-11, the radiation resistance from the far field):
    # over a perfect ground the power the base gives, Re(V I*) / 2 with 1 V, is what the solved current radiates
    # into the upper half-space, a check of the solution independent of how it was made.  Measured: within 2.1e-5
    # (quarter-wave), 1.4e-5 (6 m), 1.8e-5 (20 m).
    from snrgain.antennas.vertical import thin_wire_current
    from snrgain.physics.ground import ETA0_OHM
    from snrgain.physics.quadrature import gauss_legendre

    z, i = thin_wire_current(F, height_m, radius_m, 1.0)
    k = 2 * np.pi * F / 299792458.0
    x, w = gauss_legendre(96)
    psi = 0.25 * np.pi * (x + 1.0)
    dz = height_m / len(z)
    form = 2 * np.cos(k * np.outer(np.sin(psi), z)) @ (i * dz)  # the current and its image
    u = ETA0_OHM * k**2 / (32 * np.pi**2) * np.cos(psi) ** 2 * np.abs(form) ** 2
    p_rad = 2 * np.pi * float(np.sum(u * np.cos(psi) * 0.25 * np.pi * w))
    assert p_rad == pytest.approx(0.5 * i[0].real, rel=2e-4)


def test_solved_current_over_soil_and_its_image():
    # Over perfect ground the image weight is 1; over moist loam at 1.83 MHz (eps_c = 13 - 49.1j) 0.989 - 0.038j;
    # the soil's image changes the current near the base (where a close source reads it), and a thinner wire's
    # current differs from a thicker one's: both are inputs of the solution, not ignored.
    from snrgain.antennas.vertical import image_coefficient, thin_wire_current

    loam = _soil(_antenna("reference", "loam"))
    assert image_coefficient(None, F) == 1.0
    eps = 13.0 - 1j * 0.005 / (2 * np.pi * F * 8.8541878128e-12)
    assert image_coefficient(loam, F) == pytest.approx((eps - 1) / (eps + 1), rel=1e-9)
    h = REF["antennas"]["reference"]["height_m"]
    _, perfect = thin_wire_current(F, h, 0.025, 1.0)
    _, soil = thin_wire_current(F, h, 0.025, image_coefficient(loam, F))
    _, thin = thin_wire_current(F, h, 0.002, 1.0)
    assert abs(soil[0] / perfect[0] - 1) > 0.01
    assert abs(thin[0] / perfect[0] - 1) > 0.01


def test_vertical_diameter_is_checked():
    from snrgain.errors import SpecError

    with pytest.raises(SpecError, match="diameter: must be between"):
        from_spec({"family": "vertical", "height": "6 m", "diameter": "0 m"})


def test_a_fat_vertical_keeps_the_sinusoid():
    # Under 80 radii tall the pulses would be shorter than four radii (the thin-wire solution wanders): such a
    # wire keeps the sinusoidal current, exactly the pattern's; a thin one of the same height does not.
    fat = from_spec({"family": "vertical", "height": "6 m", "diameter": "0.2 m", "ground": "moist loam"})
    thin = from_spec({"family": "vertical", "height": "6 m", "diameter": "5 mm", "ground": "moist loam"})
    k = 2 * np.pi * F / 299792458.0
    for a, same in ((fat, True), (thin, False)):
        pts, _, cur = a.transmit_segments(F)
        shape = cur / cur[0]
        sinusoid = np.sin(k * (6.0 - pts[:, 2])) / np.sin(k * (6.0 - pts[0, 2]))
        x, w = np.polynomial.legendre.leggauss(len(cur))
        ratio = shape / (sinusoid * w / w[0])
        assert np.allclose(ratio, 1.0, atol=1e-12) == same


@pytest.mark.parametrize("behind_m", [60.0, 30.0, 15.0])
def test_a_loop_beside_the_tx_vertical_keeps_its_own_currents(behind_m):
    # A loop's currents (the electric part fitted to its pattern) are the loop's own: standing beside the TX
    # vertical, whose re-radiation its response then holds, it reads a near source through the same currents
    # (fitted to the scatterer's field they were up to 5.9 dB off 15 m behind the flag with the vertical 30 m
    # behind it, and wrappers with the vertical 15 and 30 m away shared one fit).
    from snrgain.model.scatter import beside
    from snrgain.physics.scatter import RESONANT_LOAD_OHM, TxVertical

    flag = from_spec({**FAMILIES["flag"], "position": [0, 0]})
    tx = TxVertical(from_spec({"family": "vertical", "height": "38 m", "ground": "moist loam"}), (0.0, -behind_m))
    near = beside(flag, [tx.with_load(complex(RESONANT_LOAD_OHM))])
    for own, theirs in zip(flag.transmit_segments(F), near.transmit_segments(F)):
        np.testing.assert_array_equal(theirs, own)
