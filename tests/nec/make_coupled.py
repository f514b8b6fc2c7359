"""Write the NEC-2 references for coupled vertical arrays (run by hand; needs nec2c).

    python tests/nec/make_coupled.py

Cases at 1.83 MHz: quarter-wave verticals of 25 mm tubing, a quarter wave
apart (pairs) or on a quarter-wave square (four-squares), over a perfect
ground (GN 1) and over average ground (eps_r 13, 5 mS/m, Sommerfeld, GN 2).

Current forcing ("current" cases): NEC-2 drives voltages, so the deck's
voltages are found from the structure's own impedance matrix: one run per
element with only that element driven (1 V; the others' base segments are
plain wire, a short) gives a column of the admittance matrix Y from the base
currents; V = Y^-1 I for the wanted currents I.  The run with those voltages
is stored, and its base currents are checked against I (to 0.1 %).

Line feeds ("lines" cases): each element's source stands behind a 75 ohm
series resistance, which is what a matched source seen through a lossless
75 ohm line of any length is (its Thevenin equivalent); the line's delay is
the source's phase.

Over average ground NEC-2 adds its own resistance where a wire meets lossy
ground (it grows as the bottom segment shortens; see DESIGN.md).  A run of
one element alone gives it: the single element's feed resistance over the
Sommerfeld ground minus its radiation resistance over a perfect ground (the
same deck with GN 1).  It is stored as ``contact_ohm`` and the model takes it
as the elements' ground loss.

nec2c refuses nothing but misreads a zero-volt source (it drives it as the
other sources, measured here), so no deck carries one.
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from necdeck import C_MHZ_M, base_currents, metrics_toward, parse_output, run_nec2c, vertical_array_deck  # noqa: E402

F_MHZ = 1.83
LAM = C_MHZ_M / F_MHZ
Q = LAM / 4
RADIUS_M = 0.0125
SEGMENTS = 11
AVERAGE = (13.0, 0.005)
LINE_OHM = 75.0

# name, positions [x, y], forward NEC phi [deg], wanted currents (or line voltages), feed.  The front element lags.
LAYOUTS = {
    "pair": ([[0.0, 0.0], [Q, 0.0]], 0.0, [1.0, np.exp(-1j * np.pi / 2)]),
    "foursquare": (
        [[0.0, 0.0], [Q, 0.0], [0.0, Q], [Q, Q]],
        45.0,
        [1.0, np.exp(-1j * np.pi / 2), np.exp(-1j * np.pi / 2), np.exp(-1j * np.pi)],
    ),
}
CASES = [
    ("pair", "current", None),
    ("pair", "current", AVERAGE),
    ("pair", "lines", None),
    ("pair", "lines", AVERAGE),
    ("foursquare", "current", None),
    ("foursquare", "current", AVERAGE),
]


def _deck(positions, voltages, ground, series=0.0):
    return vertical_array_deck(
        freq_mhz=F_MHZ,
        positions_m=positions,
        height_m=Q,
        radius_m=RADIUS_M,
        voltages=voltages,
        ground=ground,
        series_ohm=series,
        segments=SEGMENTS,
    )


def admittance(positions, ground, work) -> np.ndarray:
    n = len(positions)
    y = np.empty((n, n), dtype=complex)
    for j in range(n):
        # A lone source on element j: the deck drives wire j only (the others have no EX card).
        deck = _deck(positions, [1.0], ground).replace("EX 0 1 1 0", f"EX 0 {j + 1} 1 0")
        y[:, j] = base_currents(run_nec2c(deck, work, f"y{j}"), n)
    return y


def contact_ohm(ground, work) -> float:
    z = [1.0 / base_currents(run_nec2c(_deck([[0.0, 0.0]], [1.0], g), work, "one"), 1)[0] for g in (ground, None)]
    return float(z[0].real - z[1].real)


def main():
    out = {
        "engine": "nec2c (NEC-2 in C, Debian package nec2c)",
        "freq_mhz": F_MHZ,
        "height_m": Q,
        "radius_m": RADIUS_M,
        "elevation_deg": 20.0,
        "cases": [],
    }
    (HERE / "cases").mkdir(exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        for layout, feed, ground in CASES:
            positions, forward, drive = LAYOUTS[layout]
            drive = np.array(drive)
            name = f"{layout}-{feed}-{'perfect' if ground is None else 'average'}"
            if feed == "current":
                volts = np.linalg.solve(admittance(positions, ground, work), drive)
                deck = _deck(positions, volts, ground)
            else:
                volts = drive
                deck = _deck(positions, volts, ground, series=LINE_OHM)
            text = run_nec2c(deck, work, name)
            (HERE / "cases" / f"{name}.nec").write_text(deck)
            currents = base_currents(text, len(positions))
            if feed == "current":
                assert np.allclose(currents, drive, rtol=1e-3, atol=1e-6), (name, currents, drive)
            res = parse_output(text)
            m = metrics_toward(res["theta_deg"], res["phi_deg"], res["gain_dbi"], forward_phi_deg=forward)
            v_at_base = volts - (LINE_OHM * currents if feed == "lines" else 0.0)
            z = v_at_base / currents
            rel = currents / currents[0]
            out["cases"].append(
                {
                    "name": name,
                    "layout": layout,
                    "feed": feed,
                    "positions_m": positions,
                    "forward_phi_deg": forward,
                    "ground": None
                    if ground is None
                    else {"permittivity": ground[0], "conductivity_s_per_m": ground[1]},
                    "contact_ohm": 0.0 if ground is None else round(contact_ohm(ground, work), 2),
                    "line_ohm": LINE_OHM if feed == "lines" else None,
                    "drive": [[round(float(d.real), 6), round(float(d.imag), 6)] for d in drive],
                    "deck": f"cases/{name}.nec",
                    **{k: round(float(v), 3) for k, v in m.items()},
                    "feed_impedances_ohm": [[round(float(x.real), 2), round(float(x.imag), 2)] for x in z],
                    "current_magnitudes": [round(float(x), 4) for x in np.abs(rel)],
                    "current_lags_deg": [round(float(x), 2) for x in np.mod(-np.degrees(np.angle(rel)), 360)],
                }
            )
            print(out["cases"][-1])
    (HERE / "coupled.json").write_text(json.dumps(out, indent=1) + "\n")


if __name__ == "__main__":
    main()
