"""NEC-2 references for a transmitting vertical next to receiving antennas (writes scatter.json).

A quarter-wave vertical (1.83 MHz: 40.96 m, radius 25 mm, 20 segments) stands at a distance from a receiving
antenna in three states: absent (the antenna alone), resonant (its base loaded by 50 ohm, as a transmitter's
feed presents) and detuned (its base open: a 1 Gohm load in the base segment).  The receiving antennas:

- a flag: the rectangle of make_termloops.py (8.5 m by 4.3 m, 1.5 m up, 900 ohm), in the x-z plane, fed at x = 0,
  favouring NEC's phi = 180 deg; the vertical broadside (on +y from the loop's centre) or behind it (on +x);
- a pair of short verticals (6 m, 15 m apart on the x axis, base loads of 5 kohm, the one at x = 15 m driven at
  -150 deg), favouring phi = 0; the vertical broadside of the pair's centre (+y) or behind it (-x);
- a Beverage: 100 m (0.61 wavelength: Debian's nec2c goes wrong once a structure spans about a wavelength,
  DESIGN.md, so the cases whose span with the vertical passes 0.9 wavelength are left out: 80 m behind)
  at 2 m along +x with one-segment down-leads, 450 ohm at the far end, favouring phi = 0; the vertical broadside
  of the wire's middle (+y) or behind its feed end (-x).  NEC-2 holds a wire 2 m up (0.011 wavelength) only
  roughly over the lossy ground (DESIGN.md: its Sommerfeld solution for wires below about 0.05 wavelength is
  doubtful in PyNEC; these runs are nec2c's): the Beverage's figures are a guide to the size of the effect, and
  the model does not compute long wires (they keep the half-wave rule).

Distances 10, 20, 40 and 80 m (from the antenna's centre; the Beverage's feed end when behind).  One port: the
receiving antenna's source gives its pattern (its receiving pattern by reciprocity, the vertical taking part
through its load).  Grounds: perfect
(GN 1) and Sommerfeld (GN 2, eps_r 13, 5 mS/m).  Over the lossy ground NEC's wire-to-ground junction adds a
resistance of its own (DESIGN.md); each vertical touching the ground has it measured on a stub of its bottom
segment (make_deembedded.stub_deck) and subtracted, and the TX vertical is given the project's 10 ohm of radial
loss instead (the vertical family's default ground_loss).  The short verticals keep their 5 kohm loads, where a
junction of tens of ohm barely matters, and get the same subtraction; so do the Beverage's two down-leads (its
feed and its termination).

Per case: forward gain, RDF and front-to-back at 20 deg elevation (necdeck.metrics_toward).
Run: python tests/nec/make_scatter.py  (a minute or two; needs nec2c on the PATH)
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))
sys.path.insert(0, str(HERE))

from make_deembedded import junction_ohm, stub_deck  # noqa: E402

from snrgain.antennas.termloop import loop_polygon  # noqa: E402
from tests.nec.necdeck import metrics_toward, parse_output, run_nec2c  # noqa: E402

FREQ_MHZ = 1.83
TX_HEIGHT_M = 299.792458 / FREQ_MHZ / 4
TX_RADIUS_M = 0.025
TX_SEGMENTS = 20
TX_LOSS_OHM = 10.0
LOAD_OHM = {"resonant": 50.0, "detuned": 1e9}
DISTANCES_M = [10.0, 20.0, 40.0, 80.0]
GROUNDS = {"perfect": None, "lossy": (13.0, 0.005)}
RADIUS_M = 0.0008138  # AWG 14
GAP_M = 0.1
STEP_M = 0.3
FLAG = {"width_m": 8.5, "loop_height_m": 4.3, "height_m": 1.5, "termination_ohm": 900.0}
BEVERAGE = {"length_m": 100.0, "height_m": 2.0, "termination_ohm": 450.0}
PAIR = {"height_m": 6.0, "spacing_m": 15.0, "load_ohm": 5000.0, "phase_deg": -150.0, "segments": 6}


def _trim(path, gap):
    pts = [np.asarray(p, dtype=float) for p in path]
    a = pts[0] + (pts[1] - pts[0]) * gap / np.linalg.norm(pts[1] - pts[0])
    b = pts[-1] + (pts[-2] - pts[-1]) * gap / np.linalg.norm(pts[-2] - pts[-1])
    return [a, *pts[1:-1], b]


def flag_cards():
    """GW cards of the flag, and the tags of its feed and termination bridges."""
    upper, lower = loop_polygon("rectangle", FLAG["width_m"], FLAG["loop_height_m"], FLAG["height_m"])
    up, lo = _trim(upper, GAP_M), _trim(lower, GAP_M)
    wires = []
    for path in (up, lo):
        for p, q in zip(path[:-1], path[1:]):
            wires.append((p, q, max(1, int(np.ceil(np.linalg.norm(q - p) / STEP_M)))))
    wires.append((lo[0], up[0], 1))
    wires.append((up[-1], lo[-1], 1))
    cards = [
        f"GW {t} {n} {p[0]:.4f} 0 {p[1]:.4f} {q[0]:.4f} 0 {q[1]:.4f} {RADIUS_M:g}"
        for t, (p, q, n) in enumerate(wires, start=1)
    ]
    return cards, len(wires) - 1, len(wires)


def deck(antenna, ground, tx, r_j_tx=0.0, r_j_pair=0.0, r_j_bev=0.0):
    """A deck of ``antenna`` ("flag" or "pair") with the TX vertical ``tx`` = (x, y, state) or None."""
    lines = ["CM TX vertical beside a receiving antenna (snrgain scatter validation case)", "CE"]
    loads, excite = [], []
    if antenna == "flag":
        cards, feed, term = flag_cards()
        lines += cards
        loads.append(f"LD 0 {term} 1 1 {FLAG['termination_ohm']:.3f} 0 0")
        excite.append(f"EX 0 {feed} 1 0 1 0")
        tag = term
    elif antenna == "beverage":
        b = BEVERAGE
        ns = int(np.ceil(b["length_m"] / (299.792458 / FREQ_MHZ / 40)))
        lines.append(f"GW 1 1 0 0 0 0 0 {b['height_m']:g} {RADIUS_M:g}")
        lines.append(f"GW 2 {ns} 0 0 {b['height_m']:g} {b['length_m']:g} 0 {b['height_m']:g} {RADIUS_M:g}")
        lines.append(f"GW 3 1 {b['length_m']:g} 0 {b['height_m']:g} {b['length_m']:g} 0 0 {RADIUS_M:g}")
        loads.append(f"LD 0 3 1 1 {b['termination_ohm'] - r_j_bev:.3f} 0 0")
        if r_j_bev:
            loads.append(f"LD 0 1 1 1 {-r_j_bev:.3f} 0 0")
        excite.append("EX 0 1 1 0 1 0")
        tag = 3
    else:
        h, s, n = PAIR["height_m"], PAIR["spacing_m"], PAIR["segments"]
        lines.append(f"GW 1 {n} 0 0 0 0 0 {h:g} {RADIUS_M:g}")
        lines.append(f"GW 2 {n} {s:g} 0 0 {s:g} 0 {h:g} {RADIUS_M:g}")
        for t in (1, 2):
            loads.append(f"LD 0 {t} 1 1 {PAIR['load_ohm'] - r_j_pair:.3f} 0 0")
        ph = np.radians(PAIR["phase_deg"])
        excite.append("EX 0 1 1 0 1 0")
        excite.append(f"EX 0 2 1 0 {np.cos(ph):.6f} {np.sin(ph):.6f}")
        tag = 2
    if tx is not None:
        x, y, state = tx
        tag += 1
        lines.append(f"GW {tag} {TX_SEGMENTS} {x:.3f} {y:.3f} 0 {x:.3f} {y:.3f} {TX_HEIGHT_M:.3f} {TX_RADIUS_M:g}")
        extra = 0.0 if ground is None else TX_LOSS_OHM - r_j_tx
        loads.append(f"LD 0 {tag} 1 1 {LOAD_OHM[state] + extra:.3f} 0 0")
    lines.append("GE 1")
    lines.append("GN 1" if ground is None else f"GN 2 0 0 0 {ground[0]:g} {ground[1]:g}")
    lines += loads
    lines.append(f"FR 0 1 0 0 {FREQ_MHZ:g} 0")
    lines += excite
    lines += ["RP 0 46 180 1000 0 0 2 2", "EN"]
    return "\n".join(lines) + "\n"


CENTRES = {
    "flag": (FLAG["width_m"] / 2, 0.0),
    "pair": (PAIR["spacing_m"] / 2, 0.0),
    "beverage": (BEVERAGE["length_m"] / 2, 0.0),
}
FORWARD_PHI = {"flag": 180.0, "pair": 0.0, "beverage": 0.0}
PLACES = {
    "flag": {"broadside": (0.0, 1.0), "behind": (1.0, 0.0)},
    "pair": {"broadside": (0.0, 1.0), "behind": (-1.0, 0.0)},
    "beverage": {"broadside": (0.0, 1.0), "behind": (-1.0, 0.0)},
}
# The Beverage's vertical stands its distance from the wire's middle (broadside) or from its feed end (behind).
OFFSETS = {"beverage": {"behind": (0.0, 0.0)}}


def _span(antenna, x, y) -> float:
    """The largest plan distance between the vertical at (x, y) and the antenna's ends [m]."""
    ends = {"flag": [(0, 0), (FLAG["width_m"], 0)], "pair": [(0, 0), (PAIR["spacing_m"], 0)]}
    ends["beverage"] = [(0, 0), (BEVERAGE["length_m"], 0)]
    return max(float(np.hypot(x - a, y - b)) for a, b in ends[antenna])


def _junction(ground, height, segments, radius, work):
    if ground is None:
        return 0.0
    stub = stub_deck(
        freq_mhz=FREQ_MHZ,
        height_m=height / segments,
        segments=1,
        radius_m=radius,
        permittivity=ground[0],
        conductivity_s_per_m=ground[1],
    )
    return junction_ohm(run_nec2c(stub, work, "stub"))


def main():
    ref = {
        "engine": "nec2c (NEC-2 in C, Debian package nec2c)",
        "freq_mhz": FREQ_MHZ,
        "elevation_deg": 20.0,
        "tx": {
            "height_m": TX_HEIGHT_M,
            "radius_m": TX_RADIUS_M,
            "segments": TX_SEGMENTS,
            "ground_loss_ohm": TX_LOSS_OHM,
        },
        "load_ohm": LOAD_OHM,
        "flag": FLAG,
        "pair": PAIR,
        "beverage": BEVERAGE,
        "radius_m": RADIUS_M,
        "cases": [],
    }
    (HERE / "cases").mkdir(exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        for gname, ground in GROUNDS.items():
            r_tx = _junction(ground, TX_HEIGHT_M, TX_SEGMENTS, TX_RADIUS_M, work)
            r_pair = _junction(ground, PAIR["height_m"], PAIR["segments"], RADIUS_M, work)
            r_bev = _junction(ground, BEVERAGE["height_m"], 1, RADIUS_M, work)
            for antenna in ("flag", "pair", "beverage"):

                def run(tx, name, antenna=antenna, ground=ground, r_tx=r_tx, r_pair=r_pair, r_bev=r_bev):
                    d = deck(antenna, ground, tx, r_tx, r_pair, r_bev)
                    out = parse_output(run_nec2c(d, work, "scatter"))
                    m = metrics_toward(
                        out["theta_deg"], out["phi_deg"], out["gain_dbi"], forward_phi_deg=FORWARD_PHI[antenna]
                    )
                    if name:
                        (HERE / "cases" / f"{name}.nec").write_text(d)
                    return {k: round(float(v), 3) for k, v in m.items()}

                alone = run(None, f"scatter-{antenna}-{gname}-alone")
                for place, (ux, uy) in PLACES[antenna].items():
                    cx, cy = OFFSETS.get(antenna, {}).get(place, CENTRES[antenna])
                    for dist in DISTANCES_M:
                        if _span(antenna, cx + ux * dist, cy + uy * dist) > 0.9 * 299.792458 / FREQ_MHZ:
                            continue
                        entry = {
                            "antenna": antenna,
                            "ground": gname,
                            "place": place,
                            "distance_m": dist,
                            "tx_m": [round(cx + ux * dist, 3), round(cy + uy * dist, 3)],
                            "junction_ohm": {
                                "tx": round(r_tx, 2),
                                "pair": round(r_pair, 2),
                                "beverage": round(r_bev, 2),
                            },
                            "alone": alone,
                        }
                        for state in LOAD_OHM:
                            tx = (cx + ux * dist, cy + uy * dist, state)
                            name = f"scatter-{antenna}-{gname}-{place}-{dist:g}m-{state}" if dist == 20 else None
                            entry[state] = run(tx, name)
                        ref["cases"].append(entry)
                        print(antenna, gname, place, dist, entry["resonant"], entry["detuned"], flush=True)
    (HERE / "scatter.json").write_text(json.dumps(ref, indent=1) + "\n")


if __name__ == "__main__":
    main()
