"""NEC-2 references for terminated loops of every shape: flag, pennant, delta, diamond (writes termloops.json).

Each case is a loop in the x-z plane, its outline the model's own (snrgain.antennas.termloop.loop_polygon):
the upper and lower halves from the feed side (x = 0) to the terminated side (x = width), each less a
0.1 m gap at both ends, closed by a one-segment bridge holding the source at the feed and another holding the
resistor (LD 0) at the termination.  Ground: Sommerfeld (GN 2) or perfect (GN 1); engine nec2c (Debian; the
loops are far under a wavelength, where its fbar() defect does not reach).  The favoured direction is NEC's
phi = 180 deg (from the termination toward the feed).  Per case: the feed impedance, forward gain, RDF and
front-to-back at 20 deg elevation at a few resistors, and the resistor of the deepest rear null at 20 deg
(a 1 % grid over 300-3000 ohm, refined by a parabola in dB).  One port: the pattern a voltage source at the
feed gives is the receiving pattern into any feed load (reciprocity); the gain is the available gain.

Run: python tests/nec/make_termloops.py  (about a minute; needs nec2c on the PATH)
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))

from snrgain.antennas.termloop import loop_polygon  # noqa: E402
from tests.nec.necdeck import metrics_toward, parse_output, run_nec2c  # noqa: E402

RADIUS_M = 0.0008138  # AWG 14
GAP_M = 0.1
STEP_M = 0.3
RESISTORS_OHM = [300.0, 600.0, 1200.0, 2500.0]
# name, shape, MHz, width, loop height, lowest point, ground (eps_r, sigma) or None for perfect
CASES = [
    ("flag-f183-w85-h15", "rectangle", 1.83, 8.5, 4.3, 1.5, (13.0, 0.005)),
    ("flag-f183-w6-h3-perfect", "rectangle", 1.83, 6.0, 3.0, 3.0, None),
    ("flag-f360-w5-h2-s1ms", "rectangle", 3.6, 5.0, 3.0, 2.0, (5.0, 0.001)),
    ("flag-f710-w4-h2", "rectangle", 7.1, 4.0, 2.5, 2.0, (13.0, 0.005)),
    ("pennant-f183-w10-h2", "triangle", 1.83, 10.0, 5.0, 2.0, (13.0, 0.005)),
    ("pennant-f360-w6-h15-s30ms", "triangle", 3.6, 6.0, 4.0, 1.5, (20.0, 0.03)),
    ("delta-f183-w9-h1", "delta", 1.83, 9.0, 5.0, 1.0, (13.0, 0.005)),
    ("delta-f360-w6-h2-s1ms", "delta", 3.6, 6.0, 4.0, 2.0, (5.0, 0.001)),
    ("diamond-f183-w10-h2", "diamond", 1.83, 10.0, 6.0, 2.0, (13.0, 0.005)),
    ("diamond-f710-w5-h3", "diamond", 7.1, 5.0, 3.0, 3.0, (20.0, 0.03)),
]


def _trim(path, gap):
    """A polyline less ``gap`` at both ends."""
    pts = [np.asarray(p, dtype=float) for p in path]
    a = pts[0] + (pts[1] - pts[0]) * gap / np.linalg.norm(pts[1] - pts[0])
    b = pts[-1] + (pts[-2] - pts[-1]) * gap / np.linalg.norm(pts[-2] - pts[-1])
    return [a, *pts[1:-1], b]


def polygon_deck(*, shape, freq_mhz, width_m, loop_height_m, bottom_m, ground, termination_ohm) -> str:
    upper, lower = loop_polygon(shape, width_m, loop_height_m, bottom_m)
    up, lo = _trim(upper, GAP_M), _trim(lower, GAP_M)
    wires = []
    for path in (up, lo):
        for p, q in zip(path[:-1], path[1:]):
            wires.append((p, q, max(1, int(np.ceil(np.linalg.norm(q - p) / STEP_M)))))
    feed_tag, term_tag = len(wires) + 1, len(wires) + 2
    wires.append((lo[0], up[0], 1))
    wires.append((up[-1], lo[-1], 1))
    lines = ["CM terminated loop, outline of snrgain.antennas.termloop.loop_polygon", "CE"]
    for tag, (p, q, n) in enumerate(wires, start=1):
        lines.append(f"GW {tag} {n} {p[0]:.4f} 0 {p[1]:.4f} {q[0]:.4f} 0 {q[1]:.4f} {RADIUS_M:g}")
    lines.append("GE 1" if ground is None else "GE 0")
    lines.append("GN 1" if ground is None else f"GN 2 0 0 0 {ground[0]:g} {ground[1]:g}")
    lines += [
        f"LD 0 {term_tag} 1 1 {termination_ohm:.3f} 0 0",
        f"FR 0 1 0 0 {freq_mhz:g} 0",
        f"EX 0 {feed_tag} 1 0 1 0",
        "RP 0 46 180 1000 0 0 2 2",
        "EN",
    ]
    return "\n".join(lines) + "\n"


def _run(case, r, work):
    name, shape, f, w, h, bottom, ground = case
    deck = polygon_deck(
        shape=shape, freq_mhz=f, width_m=w, loop_height_m=h, bottom_m=bottom, ground=ground, termination_ohm=r
    )
    out = parse_output(run_nec2c(deck, work, "loop"))
    m = metrics_toward(out["theta_deg"], out["phi_deg"], out["gain_dbi"], forward_phi_deg=180.0)
    return deck, m, out["feed_impedance_ohm"]


def best_null(case, work) -> float:
    """The resistor of the highest front-to-back at 20 deg [ohm]: a 1 % grid, then a parabola through the top
    three points (in log R)."""
    grid = np.geomspace(300.0, 3000.0, 233)
    fb = np.array([_run(case, r, work)[1]["front_to_back_db"] for r in grid])
    i = int(np.clip(np.argmax(fb), 1, len(grid) - 2))
    x, y = np.log(grid[i - 1 : i + 2]), fb[i - 1 : i + 2]
    c2, c1, _ = np.polyfit(x, y, 2)
    return float(np.exp(-c1 / (2 * c2))) if c2 < 0 else float(grid[i])


def main():
    ref = {"engine": "nec2c (NEC-2 in C, Debian package nec2c)", "elevation_deg": 20.0, "radius_m": RADIUS_M}
    ref["cases"] = []
    (HERE / "cases").mkdir(exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        for case in CASES:
            name, shape, f, w, h, bottom, ground = case
            runs = []
            for r in RESISTORS_OHM:
                deck, m, z = _run(case, r, work)
                if r == RESISTORS_OHM[0]:
                    (HERE / "cases" / f"{name}.nec").write_text(deck)
                runs.append(
                    {
                        "termination_ohm": r,
                        **{k: round(float(v), 3) for k, v in m.items()},
                        "feed_impedance_ohm": [round(z.real, 2), round(z.imag, 2)],
                    }
                )
            entry = {
                "name": name,
                "shape": shape,
                "freq_mhz": f,
                "width_m": w,
                "loop_height_m": h,
                "height_m": bottom,
                "ground": None if ground is None else {"permittivity": ground[0], "conductivity_s_per_m": ground[1]},
                "deck": f"cases/{name}.nec",
                "deck_note": f"written at {RESISTORS_OHM[0]:g} ohm; the other runs change only the LD card",
                "runs": runs,
                "best_front_to_back_ohm": round(best_null(case, work), 1),
            }
            ref["cases"].append(entry)
            print(name, entry["best_front_to_back_ohm"], flush=True)
    (HERE / "termloops.json").write_text(json.dumps(ref, indent=1) + "\n")


if __name__ == "__main__":
    main()
