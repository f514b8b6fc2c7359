"""Long wires read a near source along their whole line (reciprocity on the line model), checked against NEC-2.

References: tests/nec/nearwire.json, written by tests/nec/make_nearwire.py with Debian's nec2c, every run inside
NEC-2's Sommerfeld interpolation grid (that module's docstring: why the packaged engine is right there, and the
check against the patched engine's stored nearcompact.json).  The method is test_near_compact.py's: each wire's
transmitted near field at a source point over its forward far field gives, by reciprocity, what a small dipole
source there delivers relative to the wire's own forward plane wave; times the model's forward gain it is the
model's placed-source power (snrgain.model.placed.received_power).  The compared figure is the candidate-to-
reference ratio P_A / P_ref, the reference the quarter-wave vertical of nearcompact.json with its source 50 m away
at the same height (and a horizontal source's axis 30 deg off the line from the wire's middle, as there).
"""

import json
from pathlib import Path

import numpy as np
import pytest

from snrgain.antennas import from_spec
from snrgain.model import placed
from snrgain.sky.noise import LocalSource

HERE = Path(__file__).parent
REF = json.loads((HERE / "nec" / "nearwire.json").read_text())
COMPACT = json.loads((HERE / "nec" / "nearcompact.json").read_text())
F = REF["freq_mhz"] * 1e6
EL0 = np.radians(REF["forward_elevation_deg"])
REFERENCE_DISTANCE_M = 50.0
AXIS_OFF_LINE_DEG = 30.0
TOLERANCE_DB = 2.5


def _ground(name):
    g = REF["grounds"][name]
    return {"permittivity": g["permittivity"], "conductivity": f"{g['conductivity_s_per_m'] * 1e3:g} mS/m"}


def _model(name, gname, family=None):
    """The model of a stored wire: the Beverage family (down-leads at both ends, as NEC's decks), or for the low
    wire with ``family="bog"`` the BOG family at its height (no leads; its insulation as thin as allowed, eps_r 1)."""
    w = REF["wires"][name]
    spec = {
        "length": f"{w['length_m']} m",
        "diameter": f"{2 * REF['radius_m']} m",
        "termination": f"{w['termination_ohm']} ohm",
        "feed_ground": 0,  # NEC's junction taken out: ideal connections
        "far_ground": 0,
        "bearing": 90,  # NEC's +x, the far end east of the feed
        "position": [0, 0],
        "ground": _ground(gname),
    }
    if family == "bog":
        spec |= {"family": "bog", "height": f"{w['height_m']} m", "insulation_thickness": "0.01 mm"}
        spec["insulation_permittivity"] = 1.0
    else:
        spec |= {"family": "beverage", "height": f"{w['height_m']} m"}
    return from_spec(spec)


_MODELS: dict = {}


def _antenna(name, gname, family=None):
    if (name, gname, family) not in _MODELS:
        _MODELS[name, gname, family] = _model(name, gname, family)
    return _MODELS[name, gname, family]


def _run(name, gname, seg):
    return next(r for r in REF["runs"] if (r["wire"], r["ground"], r["segmentation"]) == (name, gname, seg))


def _moment(kind, xyz, centre):
    axis = np.arctan2(xyz[0] - centre[0], xyz[1] - centre[1]) + np.radians(AXIS_OFF_LINE_DEG)
    moment = np.array([0.0, 0.0, 1.0]) if kind == "vertical" else np.array([np.sin(axis), np.cos(axis), 0.0])
    return moment, float(np.mod(axis, np.pi))


def _source(xyz, kind, axis):
    return LocalSource(
        "s",
        0.0,
        position_m=(xyz[0], xyz[1]),
        height_m=xyz[2],
        polarisation=kind,
        orientation_rad=axis if kind == "horizontal" else None,
    )


def _nec_power(run, point, moment, g0):
    e = np.array([complex(*c) for c in point["e"]])
    fwd = run["forward"]
    f2 = abs(complex(*fwd["e_theta"])) ** 2 + abs(complex(*fwd["e_phi"])) ** 2
    return g0 * abs(e @ moment) ** 2 / f2


def _wire_powers(name, gname, seg, point, kind, family=None):
    """(model, NEC) power of a small dipole source at a stored point around a wire, in units of realized gain."""
    a = _antenna(name, gname, family)
    centre = (REF["wires"][name]["length_m"] / 2, 0.0)
    moment, axis = _moment(kind, point["xyz_m"], centre)
    g0 = a.gain_linear(F, np.array([np.radians(90.0)]), np.array([EL0]))[0]
    p_nec = _nec_power(_run(name, gname, seg), point, moment, g0)
    return placed.received_power(a, _source(point["xyz_m"], kind, axis), F, (0.0, 0.0), a.ground), p_nec


_REFERENCES: dict = {}


def _reference_powers(gname, seg, height, kind):
    """(model, NEC) of the quarter-wave reference with the source 50 m away at ``height`` (nearcompact.json)."""
    key = (gname, seg, height, kind)
    if key not in _REFERENCES:
        run = next(
            r
            for r in COMPACT["runs"]
            if (r["antenna"], r["ground"], r["segmentation"]) == ("reference", gname, seg.split("-")[0])
        )
        pt = next(p for p in run["points"] if p["distance_m"] == REFERENCE_DISTANCE_M and p["height_m"] == height)
        v = COMPACT["antennas"]["reference"]
        a = from_spec(
            {
                "family": "vertical",
                "height": f"{v['height_m']} m",
                "diameter": f"{2 * v['radius_m']} m",
                "ground": _ground(gname),
                "position": [0, 0],
            }
        )
        moment, axis = _moment(kind, pt["xyz_m"], (0.0, 0.0))
        g0 = a.gain_linear(F, np.array([np.radians(90.0)]), np.array([EL0]))[0]
        p_nec = _nec_power(run, pt, moment, g0)
        _REFERENCES[key] = (placed.received_power(a, _source(pt["xyz_m"], kind, axis), F, (0.0, 0.0), a.ground), p_nec)
    return _REFERENCES[key]


def _point(name, gname, seg, place, d, h):
    return next(
        p for p in _run(name, gname, seg)["points"] if (p["place"], p["distance_m"], p["height_m"]) == (place, d, h)
    )


def error_db(name, gname, seg, place, d, h, kind, family=None):
    """Model over NEC of P_A / P_ref [dB] for one stored case."""
    pm, pn = _wire_powers(name, gname, seg, _point(name, gname, seg, place, d, h), kind, family)
    rm, rn = _reference_powers(gname, seg, h, kind)
    return float(10 * np.log10((pm / rm) / (pn / rn)))


def _cases(names=("bev150", "bev90", "low")):
    """(wire, ground, place, distance, height, kind): vertical sources 2, 6 and 10 m up, horizontal ones 4 m up, at
    every stored point (the points NEC-2's interpolation grid reaches)."""
    out = []
    for name in names:
        for gname in REF["grounds"]:
            for p in _run(name, gname, "coarse")["points"]:
                h = p["height_m"]
                kind = "horizontal" if h == 4.0 else "vertical"
                out.append((name, gname, p["place"], p["distance_m"], h, kind))
    return out


# Cases beyond the tolerance (2.5 dB plus NEC's spread between its two segmentations) would go here with their
# measured error, cause and a bound.  None are left with NEC's junction taken out as an impedance (make_nearwire's
# ``junction``).  With its resistance alone taken out (make_deembedded.py's way, the "-resistive" runs) 17 low-wire
# cases and one Beverage case missed, by up to 18.6 dB (the low wire over 1 mS/m, a horizontal source 10 m abeam):
# the junction's reactance (-15 ohm for a 2 m lead over 5 mS/m, -146 over 1 mS/m, -175 and -1478 ohm for the 0.2 m
# lead) left NEC's far end reflecting 0.11 (Beverage, 1 mS/m) and 0.86 (low wire, 1 mS/m) of the current where the
# model's resistor reflects 0.06 and 0.24 (test_nec_far_end_and_line_against_the_model).
KNOWN_MISSES: dict = {}


def _id(c):
    return f"{c[0]}-{c[1]}-{c[2]}-{c[3]:g}m-{c[4]:g}mup-{c[5][:4]}"


@pytest.mark.parametrize("case", _cases(), ids=_id)
def test_near_source_ratio_against_nec(case):
    # Tolerance 2.5 dB (the brief's, up to 200 m) plus NEC's spread between its two segmentations for the case.
    # Measured, model over NEC (coarse; NEC's spread in brackets), the Beverages (150 and 90 m, 2 m up):
    # - 5 mS/m: abeam 5-100 m (15 m included), vertical sources 2-10 m up within 0.16 dB (0.15), horizontal within
    #   0.57 (0.85); off the far end within 0.3 (0.15), 5 m off it within 1.8 (0.8, horizontal); behind the feed
    #   10-60 m within 1.8 (0.5); 5 m behind it -2.4 to +3.0 dB (1.6: the feed lead's near field, the source 6-10 m
    #   up);
    # - 1 mS/m: abeam vertical within 0.47 (0.35), horizontal -1.9 to +1.4 (1.1); off the far end within 1.3 (0.6);
    #   behind within 1.2 for vertical sources, up to +3.9 for horizontal ones 10-60 m behind (a rear null: NEC's
    #   segmentations 6.7 dB apart), 5 m behind within 2.2 (1.4).
    # The low wire (0.2 m; the Beverage family there, leads as NEC's deck): vertical sources within 0.3 dB over 5 mS/m,
    # 0.7 over 1 mS/m (abeam 0.1 and 0.2, the rest behind the feed); horizontal sources within 1.1 over 5 mS/m, 2.0 over
    # 1 mS/m (5 m abeam; there NEC's finer run, its junction 4.6 - 2.8j kohm and its far end still reflecting 0.5, is 14
    # dB away).
    name, gname, place, d, h, kind = case
    err = error_db(name, gname, "coarse", place, d, h, kind)
    err_fine = error_db(name, gname, "fine", place, d, h, kind)
    spread = abs(err_fine - err)
    bound = KNOWN_MISSES.get(case, TOLERANCE_DB + spread)
    assert abs(err) <= bound, f"model over NEC {err:+.2f} dB (finer NEC segmentation {err_fine:+.2f} dB)"


def test_packaged_engine_is_the_patched_one_inside_its_interpolation_grid():
    # make_nearwire.py ran Debian's nec2c on nearcompact.json's reference deck (written and run with the patched
    # engine): the same fields to print precision at 50 and 100 m (every image under a wavelength away), garbage at
    # 200 m (the asymptotic ground wave, the fbar() fault).  Measured: 0.000, 0.000 and +152.9 dB.
    chk = {p["distance_m"]: p["ratio_db"] for p in REF["engine_check"]["points"]}
    assert abs(chk[50.0]) < 0.01 and abs(chk[100.0]) < 0.01
    assert abs(chk[200.0]) > 20.0
    # Where it leaves the grid: the reference's R E_z at 140-156 m, 2 and 30 m up, flat (within 0.02 dB) while the
    # image distance from its top is under 160 m, then off by 2-70 dB from 160.8 m on (the switch near 0.98
    # wavelength, R reaching past it along the top segment); the stored points stay under MAX_R_M = 157.3 m.
    edge = REF["engine_check"]["edge"]
    for z in (2.0, 30.0):
        row = [e for e in edge if e["height_m"] == z]
        first = row[0]["r_ez_db"]
        for e in row:
            if e["image_distance_m"] < REF["max_image_distance_m"]:
                assert e["r_ez_db"] == pytest.approx(first, abs=0.05)
            elif e["image_distance_m"] > 160.8:
                assert abs(e["r_ez_db"] - first) > 2.0
    for run in REF["runs"]:  # every stored point inside the grid
        w = REF["wires"][run["wire"]]
        for p in run["points"]:
            x, y, z = p["xyz_m"]
            far = max(
                np.sqrt((x - cx) ** 2 + y**2 + (z + cz) ** 2) for cx in (0, w["length_m"]) for cz in (0, w["height_m"])
            )
            assert far < REF["max_image_distance_m"] < 299.792458 / REF["freq_mhz"]


@pytest.mark.parametrize("name", ["bev150", "bev90", "low"])
@pytest.mark.parametrize("gname", ["loam", "dry"])
def test_nec_far_end_and_line_against_the_model(name, gname):
    # NEC's current along the wire fitted as two travelling waves (make_nearwire.line_fit, residual under 1 %): its
    # propagation constant against the model's line (velocity factor within 1 %, measured 0.3 %; attenuation within
    # 25 %, measured 7-19 %, the model's the larger), and its far end's complex current reflection against the
    # model's resistor on its line, -(R - Z0) / (R + Z0).  Measured, |NEC's - the model's| (coarse, fine;
    # "-resistive" the coarse run with the junction's resistance alone taken out): Beverages over 5 mS/m 0.024,
    # 0.026 (0.010), over 1 mS/m 0.062, 0.12 (0.135); the low wire over 5 mS/m 0.021, 0.27 (0.265), over 1 mS/m
    # 0.077, 0.73 (1.07).  The low wire's finer runs (junctions of 1.2 and 4.6 kohm at 0.1 m segments) are not
    # de-embedded as well as the coarse ones: their spread, which the near-source test adds to its tolerance,
    # is the junction's more than the wire's.
    a = _antenna(name, gname)
    line = a.line(F)
    r = a.params.termination
    model = -(r - line.z0) / (r + line.z0)
    for seg in ("coarse", "fine"):
        fit = _run(name, gname, seg)["line_fit"]
        assert fit["residual"] < 0.01
        assert fit["velocity_factor"] == pytest.approx(line.velocity_factor, rel=0.01)
        assert fit["gamma_per_m"][0] == pytest.approx(line.gamma.real, rel=0.25)
    off = {
        seg: abs(complex(*_run(name, gname, seg)["line_fit"]["far_current_reflection"]) - model)
        for seg in ("coarse", "fine", "coarse-resistive")
    }
    assert off["coarse"] < 0.08
    if name == "low":
        assert off["fine"] > off["coarse"]
    else:
        assert off["fine"] < 0.13
    if gname == "dry" or name == "low":  # where the junction's reactance is large against the termination
        assert off["coarse-resistive"] > 2 * off["coarse"]


def test_low_wire_limit():
    # make_nearwire.low_wire_study over 5 mS/m at 0.05-0.5 m, three segmentations (40, 80, 160 per wavelength; 1, 2, 4
    # segments per lead).  The horizontal wire alone (open ends, centre-fed, no ground junction): gain along it within
    # 0.01 dB and feed impedance within 5 % (measured 4.5 % at 0.05 m) between segmentations at every height down to
    # 0.05 m (61 wire radii): NEC-2's Sommerfeld thin-wire solution of the low horizontal wire has settled there.  With
    # leads to the ground at its ends (a BOG's rods; the junction, 250 - 69j ohm at 0.5 m to 9.7 - 2.8j kohm at 0.05
    # m, taken out): at 0.2 m and above the front-to-back within 1.7 dB across the three (measured 1.7, 1.1, 1.5 dB at
    # 0.2, 0.3, 0.5 m) and the near field 15 m abeam over the forward far field within 0.25 dB; at 0.1 m they move
    # by 5.2 and 1.1 dB, at 0.05 m by 9.5 and 2.5 dB.  So 0.2 m is the lowest height at which NEC-2 gives a
    # terminated low wire with grounded ends here (AWG 14, 100 m, 5 mS/m, 1.83 MHz), and the height of the stored
    # low wire.
    study = REF["low_wire_study"]
    open_wire = study["open_wire"]
    assert min(r["height_m"] for r in open_wire) <= 0.05
    for h in sorted({r["height_m"] for r in open_wire}):
        runs = [r for r in open_wire if r["height_m"] == h]
        gains = [r["gain_along_dbi"] for r in runs]
        z = [abs(complex(*r["feed_impedance_ohm"])) for r in runs]
        assert max(gains) - min(gains) < 0.05
        assert max(z) / min(z) < 1.06
        leaded = [r for r in study["runs"] if r["height_m"] == h]
        fb = [r["front_to_back_db"] for r in leaded]
        near = [r["near_ez_over_forward_db"] for r in leaded]
        if h >= REF["wires"]["low"]["height_m"]:
            assert max(fb) - min(fb) < 2.0 and max(near) - min(near) < 0.3, h
        else:
            assert max(fb) - min(fb) > 4.0 and max(near) - min(near) > 1.0, h


def test_bog_family_reads_the_low_wire_broadside_as_the_beverage_family():
    # The BOG family (no down-leads; its insulation 0.01 mm, eps_r 1: a bare wire) at NEC's low wire's 0.2 m has the
    # same line as the Beverage family there (gamma and Z0 equal to 1e-3) and reads vertical sources abeam the same
    # within 0.6 dB (measured 0.54 dB at 100 m, 0.06 dB at 5-15 m).  Off the ends it departs from NEC's wire, which has
    # 0.2 m leads to its ground connections as the Beverage family has: against NEC, horizontal sources behind the
    # feed and beyond the far end read +6.8 to +12.9 dB over 5 mS/m (up to +5.1 over 1 mS/m), vertical ones 5 m
    # beyond the far end -4.4 to +4.7 dB; the Beverage family there within 2 dB.  Close to a wire that low its
    # ends' vertical parts, even 0.2 m of them, hear a source off its ends as much as the wire does (the vertical
    # field near the soil is the larger one): a BOG's end connections count for sources off its ends (to the 30 m
    # studied here; the BOG family has none, its ends go straight into the soil).
    for gname in ("loam", "dry"):
        bev, bog = _antenna("low", gname), _antenna("low", gname, "bog")
        assert bog.line(F).gamma == pytest.approx(bev.line(F).gamma, rel=1e-3)
        assert bog.line(F).z0 == pytest.approx(bev.line(F).z0, rel=1e-3)
        for d in (5.0, 15.0, 100.0):
            a = error_db("low", gname, "coarse", "abeam", d, 2.0, "vertical")
            b = error_db("low", gname, "coarse", "abeam", d, 2.0, "vertical", "bog")
            assert abs(a - b) < 0.6


def test_feed_ends_junction_drops_out_of_the_ratio():
    # The feed lead's junction sits in series with the feed, so it scales the feed current and nothing else: runs
    # with it kept (the far end's taken out alone, "-feedkept") give every case's ratio as the runs with both taken
    # out, within NEC's print precision (measured 0.0035 dB at worst).  The far end's does not drop out (the
    # "-raw" runs move the ratio by up to 6.1 dB on the Beverages, 16.6 dB on the low wire).
    worst = 0.0
    for name, gname, place, d, h, kind in _cases():
        both = error_db(name, gname, "coarse", place, d, h, kind)
        feed_kept = error_db(name, gname, "coarse-feedkept", place, d, h, kind)
        worst = max(worst, abs(both - feed_kept))
    assert worst < 0.02
