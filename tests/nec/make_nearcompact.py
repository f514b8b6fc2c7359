"""NEC-2 references for near sources around compact antennas (writes nearcompact.json; run by hand).

    bash tests/nec/build_nec2c.sh        # once: the patched engine (the sources reach 200 m, beyond a wavelength)
    python tests/nec/make_nearcompact.py  # a few seconds
    python tests/nec/make_nearcompact.py pennant delta diamond  # those loops' runs alone (Debian's nec2c)

What a small dipole source at a point delivers to an antenna follows, by reciprocity, from the field the antenna
makes at that point when it transmits from its feed with its own loads in place: the open-circuit voltage is
E_A(r_s) . p / I_A (p the source's moment, I_A the feed current).  A plane wave from a direction d gives, by the
same theorem, a voltage proportional to the antenna's far field there, F_A(d) / I_A.  So one transmitting run
per antenna (its feed a voltage source, nec2c's NE cards at every source point, an RP card toward its forward
direction at 20 deg elevation) gives what a source at each point delivers relative to what the antenna's own
forward plane wave delivers, |E_A(r_s) . p|^2 / |F_A(d0)|^2, without NEC's wire-to-ground junction or the
antenna's efficiency, which scale both alike (one port: the feed current drops out).  The tests turn that into
the placed-source power the model computes (snrgain.model.placed), in units of the antenna's realized gain,
by the model's gain toward d0 (the families' forward gains are checked against NEC-2 in termloops.json and
coupled.json), and compare the candidate-to-reference ratio P_A / P_ref.  The moment |p| and the plane wave's
amplitude are the same for every antenna and drop out of that ratio.

A direct check of the reciprocity step is stored too: the 6 m whip with a real 1 m vertical source wire (centred
2 m up, 5 segments, fed in its middle) at 10 m and at 60 m, the short-circuit current at the whip's base, whose
ratio must equal the ratio of the whip's transmitted E_z at the two points.

Antennas (1.83 MHz; Sommerfeld ground eps_r 13, 5 mS/m, GN 2; the whip and the pennant, delta and diamond
also over eps_r 5, 1 mS/m):

- reference: the project's quarter-wave vertical, 40.96 m, radius 25 mm (make_scatter.py's TX vertical);
- whip: 6 m, radius 5 mm;
- flag: make_scatter.py's flag (8.5 m by 4.3 m, 1.5 m up, AWG 14, 900 ohm), in the x-z plane, fed at x = 0,
  favouring NEC's phi = 180 deg;
- pair: two 6 m verticals 15 m apart on the x axis, base loads of 5 kohm, the one at x = 15 m driven at
  -150 deg (make_scatter.py's pair), favouring phi = 0;
- pennant, delta, diamond: the terminated loop's other shapes (snrgain.antennas.termloop.loop_polygon's
  triangle, delta and diamond), built as make_termloops.py builds them (the halves less a 0.1 m gap at each end,
  one-segment bridges holding the feed and the resistor), sizes of the flag's order: a pennant 10 m by 5 m, a delta
  9 m by 5 m, a diamond 10 m by 6 m, each 1.5 m up, AWG 14, terminated near the resistor of their deepest rear null
  at 20 deg in termloops.json (800, 850, 875 ohm); in the x-z plane, fed at x = 0, favouring NEC's phi = 180 deg;
  over both grounds.  Their sources reach 100 m (LOOP_DISTANCES_M), run with Debian's nec2c (/usr/bin; the patched
  engine is not needed there: the packaged one gives the stored flag's and reference's fields to 100 m bit for bit,
  and departs only at 200 m, beyond a wavelength).  ``python tests/nec/make_nearcompact.py pennant delta diamond``
  works out those antennas' runs alone and puts them into the stored file in place of their old ones, the rest of it
  left as it is (byte for byte).

Each antenna is run at two segmentations (the second twice as fine; the flag and the other loops at 0.3 and 0.15 m
steps) and both are stored: their spread is NEC's own uncertainty.  Source points: at distances from the antenna's
centre (the whip's and reference's base, the loops' and pair's middle), toward the front, side and back (the whip at
NEC phi = 45 deg), at heights 2, 4, 6 and 10 m; nec2c's near fields (complex E, east, north, up, V/m for 1 V at the
feed) are stored per point.  NEC's x is east and y north (NEC's phi from +x counterclockwise: compass 90 - phi).
"""

from __future__ import annotations

import json
import re
import sys
import tempfile
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))

from snrgain.antennas.termloop import loop_polygon  # noqa: E402
from tests.nec.necdeck import base_currents, patched_engine, run_nec2c  # noqa: E402

FREQ_MHZ = 1.83
GROUNDS = {"loam": (13.0, 0.005), "dry": (5.0, 0.001)}
AWG14_M = 0.0008138
GAP_M = 0.1
HEIGHTS_M = [2.0, 4.0, 6.0, 10.0]
FORWARD_ELEVATION_DEG = 20.0
REFERENCE = {"height_m": 299.792458 / FREQ_MHZ / 4, "radius_m": 0.025, "segments": [20, 40]}
WHIP = {"height_m": 6.0, "radius_m": 0.005, "segments": [6, 12]}
FLAG = {"width_m": 8.5, "loop_height_m": 4.3, "height_m": 1.5, "termination_ohm": 900.0, "steps_m": [0.3, 0.15]}
PAIR = {"height_m": 6.0, "spacing_m": 15.0, "load_ohm": 5000.0, "phase_deg": -150.0, "segments": [6, 12]}
LOOPS = {
    "pennant": {"shape": "triangle", "width_m": 10.0, "loop_height_m": 5.0, "height_m": 1.5, "termination_ohm": 800.0},
    "delta": {"shape": "delta", "width_m": 9.0, "loop_height_m": 5.0, "height_m": 1.5, "termination_ohm": 850.0},
    "diamond": {"shape": "diamond", "width_m": 10.0, "loop_height_m": 6.0, "height_m": 1.5, "termination_ohm": 875.0},
}
for _loop in LOOPS.values():
    _loop["steps_m"] = [0.3, 0.15]
LOOP_DISTANCES_M = [10.0, 12.5, 15.0, 30.0, 60.0, 100.0]
PACKAGED_ENGINE = "/usr/bin/nec2c"
# name: (centre [x, y], forward NEC phi [deg], places {name: NEC phi of the source seen from the centre}, distances)
LAYOUT = {
    "reference": ((0.0, 0.0), 0.0, {"any": 45.0}, [5.0, 10.0, 15.0, 30.0, 50.0, 60.0, 100.0, 200.0]),
    "whip": ((0.0, 0.0), 0.0, {"any": 45.0}, [5.0, 10.0, 15.0, 30.0, 60.0, 100.0, 200.0]),
    "flag": (
        (FLAG["width_m"] / 2, 0.0),
        180.0,
        {"front": 180.0, "side": 90.0, "back": 0.0},
        [10.0, 15.0, 30.0, 60.0, 100.0, 200.0],
    ),
    "pair": (
        (PAIR["spacing_m"] / 2, 0.0),
        0.0,
        {"front": 0.0, "side": 90.0, "back": 180.0},
        [10.0, 15.0, 30.0, 60.0, 100.0, 200.0],
    ),
    **{
        name: ((a["width_m"] / 2, 0.0), 180.0, {"front": 180.0, "side": 90.0, "back": 0.0}, LOOP_DISTANCES_M)
        for name, a in LOOPS.items()
    },
}


def _trim(path, gap):
    pts = [np.asarray(p, dtype=float) for p in path]
    a = pts[0] + (pts[1] - pts[0]) * gap / np.linalg.norm(pts[1] - pts[0])
    b = pts[-1] + (pts[-2] - pts[-1]) * gap / np.linalg.norm(pts[-2] - pts[-1])
    return [a, *pts[1:-1], b]


def antenna_cards(name: str, fine: int) -> tuple[list[str], list[str], list[str], str]:
    """(GW cards, load cards, excitation cards, GE card) of an antenna at segmentation ``fine`` (0 or 1)."""
    if name in ("reference", "whip"):
        a = REFERENCE if name == "reference" else WHIP
        gw = [f"GW 1 {a['segments'][fine]} 0 0 0 0 0 {a['height_m']:.4f} {a['radius_m']:g}"]
        return gw, [], ["EX 0 1 1 0 1 0"], "GE 1"
    if name == "pair":
        p = PAIR
        n, h, s = p["segments"][fine], p["height_m"], p["spacing_m"]
        gw = [f"GW 1 {n} 0 0 0 0 0 {h:g} {AWG14_M:g}", f"GW 2 {n} {s:g} 0 0 {s:g} 0 {h:g} {AWG14_M:g}"]
        ld = [f"LD 0 {t} 1 1 {p['load_ohm']:g} 0 0" for t in (1, 2)]
        ph = np.radians(p["phase_deg"])
        ex = ["EX 0 1 1 0 1 0", f"EX 0 2 1 0 {np.cos(ph):.6f} {np.sin(ph):.6f}"]
        return gw, ld, ex, "GE 1"
    f = FLAG if name == "flag" else LOOPS[name]
    upper, lower = loop_polygon(f.get("shape", "rectangle"), f["width_m"], f["loop_height_m"], f["height_m"])
    up, lo = _trim(upper, GAP_M), _trim(lower, GAP_M)
    wires = []
    for path in (up, lo):
        for p, q in zip(path[:-1], path[1:]):
            wires.append((p, q, max(1, int(np.ceil(np.linalg.norm(q - p) / f["steps_m"][fine])))))
    wires.append((lo[0], up[0], 1))  # the feed bridge
    wires.append((up[-1], lo[-1], 1))  # the termination bridge
    gw = [
        f"GW {t} {n} {p[0]:.4f} 0 {p[1]:.4f} {q[0]:.4f} 0 {q[1]:.4f} {AWG14_M:g}"
        for t, (p, q, n) in enumerate(wires, start=1)
    ]
    feed, term = len(wires) - 1, len(wires)
    return gw, [f"LD 0 {term} 1 1 {f['termination_ohm']:.3f} 0 0"], [f"EX 0 {feed} 1 0 1 0"], "GE 0"


def points(name: str) -> list[dict]:
    """The source points around an antenna: place, distance from its centre, height, and [x, y, z] [m]."""
    centre, _, places, distances = LAYOUT[name]
    out = []
    for place, phi in places.items():
        for d in distances:
            for h in HEIGHTS_M:
                x = centre[0] + d * np.cos(np.radians(phi))
                y = centre[1] + d * np.sin(np.radians(phi))
                out.append({"place": place, "distance_m": d, "height_m": h, "xyz_m": [round(x, 4), round(y, 4), h]})
    return out


def deck(name: str, fine: int, ground, pts: list[dict]) -> str:
    gw, ld, ex, ge = antenna_cards(name, fine)
    lines = [f"CM {name}: transmitting, near fields at source points (snrgain near-source validation case)", "CE"]
    lines += gw + [ge, f"GN 2 0 0 0 {ground[0]:g} {ground[1]:g}"] + ld
    lines += [f"FR 0 1 0 0 {FREQ_MHZ:g} 0"] + ex
    for p in pts:
        x, y, z = p["xyz_m"]
        lines.append(f"NE 0 1 1 1 {x:.4f} {y:.4f} {z:.4f} 0 0 0")
    phi = LAYOUT[name][1]
    lines += [f"RP 0 1 1 1000 {90.0 - FORWARD_ELEVATION_DEG:g} {phi:g} 0 0", "EN"]
    return "\n".join(lines) + "\n"


_FLOAT = r"([-+]?\d+\.\d+(?:E[-+]\d+)?)"


def near_fields(text: str) -> list[list[list[float]]]:
    """Each NE block's field as [[re, im] of E_x, E_y, E_z] in the order of the cards."""
    out = []
    for block in text.split("NEAR ELECTRIC FIELDS")[1:]:
        row = re.search(r"\n\s*" + r"\s+".join([_FLOAT] * 9), block)
        v = [float(x) for x in row.groups()]
        comps = [
            v[3] * np.exp(1j * np.radians(v[4])),
            v[5] * np.exp(1j * np.radians(v[6])),
            v[7] * np.exp(1j * np.radians(v[8])),
        ]
        out.append([[float(c.real), float(c.imag)] for c in comps])
    return out


def far_field(text: str) -> dict:
    """The RP line: NEC's total gain [dBi] and E(theta), E(phi) (r E, volts) as [re, im]."""
    block = text.split("RADIATION PATTERNS")[1]
    for line in block.splitlines():
        parts = line.split()
        if len(parts) == 12 and parts[7] in ("LINEAR", "RIGHT", "LEFT"):
            v = [float(x) for i, x in enumerate(parts) if i != 7]
            et = v[7] * np.exp(1j * np.radians(v[8]))
            ep = v[9] * np.exp(1j * np.radians(v[10]))
            return {
                "gain_dbi": v[4],
                "e_theta": [float(et.real), float(et.imag)],
                "e_phi": [float(ep.real), float(ep.imag)],
            }
    raise ValueError("no radiation pattern line in nec2c's output")


def source_wire_deck(distance_m: float, ground) -> str:
    """The whip (its coarse segmentation) with a 1 m vertical source wire centred 2 m up at (distance, 0), fed in
    its middle segment; the whip's base shorted (no source there)."""
    gw, _, _, _ = antenna_cards("whip", 0)
    lines = ["CM whip and a real source wire (snrgain reciprocity check)", "CE", *gw]
    lines.append(f"GW 2 5 {distance_m:g} 0 1.5 {distance_m:g} 0 2.5 0.001")
    lines += ["GE 1", f"GN 2 0 0 0 {ground[0]:g} {ground[1]:g}", f"FR 0 1 0 0 {FREQ_MHZ:g} 0", "EX 0 2 3 0 1 0"]
    lines += ["XQ", "EN"]
    return "\n".join(lines) + "\n"


def antenna_runs(name: str, gname: str, work: Path, engine: str) -> list[dict]:
    """The coarse and fine runs of an antenna over a ground, as stored (the coarse deck written to cases/)."""
    pts = points(name)
    runs = []
    for fine in (0, 1):
        text = run_nec2c(deck(name, fine, GROUNDS[gname], pts), work, "near", engine)
        if fine == 0:
            (HERE / "cases" / f"near-{name}-{gname}.nec").write_text(deck(name, 0, GROUNDS[gname], pts))
        fields = near_fields(text)
        assert len(fields) == len(pts)
        run = {
            "antenna": name,
            "ground": gname,
            "segmentation": ["coarse", "fine"][fine],
            "deck": f"cases/near-{name}-{gname}.nec" if fine == 0 else "the same, segments doubled",
            "forward": far_field(text),
            "points": [{**p, "e": e} for p, e in zip(pts, fields)],
        }
        if name in LOOPS:
            run["engine"] = f"{engine} (Debian's nec2c 1.3, unpatched: the points reach {max(LOOP_DISTANCES_M):g} m)"
        runs.append(run)
        print(name, gname, fine, len(pts), flush=True)
    return runs


def _layout_entry(name: str) -> dict:
    c, f, p, _ = LAYOUT[name]
    return {"centre_m": list(c), "forward_phi_deg": f, "places_phi_deg": p}


def main(only: list[str]):
    """Every run (``only`` empty), or only the named loops' runs put into the stored file in place of their old
    ones (the rest of the file as it was)."""
    (HERE / "cases").mkdir(exist_ok=True)
    loop_runs = [(n, g) for n in LOOPS for g in ("loam", "dry")]
    if only:
        unknown = sorted(set(only) - set(LOOPS))
        if unknown:
            raise SystemExit(f"only the loops can be worked alone ({', '.join(LOOPS)}); got {', '.join(unknown)}")
        out = json.loads((HERE / "nearcompact.json").read_text())
        out["runs"] = [r for r in out["runs"] if r["antenna"] not in only]
        for name in only:
            out["antennas"][name] = LOOPS[name]
            out["layout"][name] = _layout_entry(name)
        with tempfile.TemporaryDirectory() as tmp:
            for name, gname in loop_runs:
                if name in only:
                    out["runs"] += antenna_runs(name, gname, Path(tmp), PACKAGED_ENGINE)
        (HERE / "nearcompact.json").write_text(json.dumps(out, indent=0) + "\n")
        return
    engine = patched_engine()
    out = {
        "engine": "nec2c 1.3 with the fbar() fix (tests/nec/build_nec2c.sh)",
        "freq_mhz": FREQ_MHZ,
        "forward_elevation_deg": FORWARD_ELEVATION_DEG,
        "grounds": {k: {"permittivity": e, "conductivity_s_per_m": s} for k, (e, s) in GROUNDS.items()},
        "antennas": {"reference": REFERENCE, "whip": WHIP, "flag": FLAG, "pair": PAIR, **LOOPS},
        "layout": {k: _layout_entry(k) for k in LAYOUT},
        "runs": [],
    }
    runs = [(n, "loam") for n in LAYOUT if n not in LOOPS] + [("reference", "dry"), ("whip", "dry")]
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        for name, gname in runs:
            out["runs"] += antenna_runs(name, gname, work, engine)
        for name, gname in loop_runs:
            out["runs"] += antenna_runs(name, gname, work, PACKAGED_ENGINE)
        check = {}
        for d in (10.0, 60.0):
            text = run_nec2c(source_wire_deck(d, GROUNDS["loam"]), work, "wire", engine)
            i = base_currents(text, 1)[0]
            check[f"{d:g}"] = [float(i.real), float(i.imag)]
        out["reciprocity_check"] = {
            "what": "the whip's base current (A) with a 1 m vertical source wire centred 2 m up at (d, 0), 1 V",
            "base_current_by_distance_m": check,
        }
    (HERE / "nearcompact.json").write_text(json.dumps(out, indent=0) + "\n")


if __name__ == "__main__":
    main(sys.argv[1:])
