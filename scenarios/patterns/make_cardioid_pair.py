"""Write cardioid-pair.csv: an idealised demo pattern for the tabulated family.

Two short verticals a quarter wave apart, fed 90 deg apart in phase, over a
perfect ground plane: the textbook cardioid array factor
|1 + exp(j (pi/2) (cos(el) cos(az) - 1))| (e.g. J. D. Kraus, "Antennas",
2nd ed., Section 4-3) times the short monopole's cos^2(el).  The gain is
scaled to an invented efficiency of -12 dB, as a stand-in for the losses of a
small receiving pair; this is demo data, not a measurement.  The pattern
favours azimuth 0; a scenario turns it with ``rotate``.

Run:  python scenarios/patterns/make_cardioid_pair.py
"""

from pathlib import Path

import numpy as np

EFFICIENCY_DB = -12.0

az = np.arange(0, 360, 5.0)
el = np.arange(0, 90.1, 5.0)
A, E = np.meshgrid(np.radians(az), np.radians(el), indexing="ij")
af = np.abs(1 + np.exp(1j * (np.pi / 2) * (np.cos(E) * np.cos(A) - 1))) ** 2
u = np.cos(E) ** 2 * af
# Directivity over the upper hemisphere by quadrature on a fine grid.
fa, fe = np.meshgrid(np.radians(np.arange(0, 360, 0.5)), np.radians(np.arange(0.25, 90, 0.5)), indexing="ij")
uf = np.cos(fe) ** 2 * np.abs(1 + np.exp(1j * (np.pi / 2) * (np.cos(fe) * np.cos(fa) - 1))) ** 2
p = np.sum(uf * np.cos(fe)) * np.radians(0.5) ** 2
g = 4 * np.pi * u / p * 10 ** (EFFICIENCY_DB / 10)
with np.errstate(divide="ignore"):
    gdb = np.maximum(10 * np.log10(g), -100.0)
lines = [
    "# Idealised cardioid of two short phased verticals over perfect ground (demo data);",
    "# written by make_cardioid_pair.py beside this file. Favours azimuth 0.",
    "azimuth_deg,elevation_deg,gain_dbi",
]
for i, a in enumerate(az):
    for j, e in enumerate(el):
        lines.append(f"{a:g},{e:g},{gdb[i, j]:.2f}")
Path(__file__).with_name("cardioid-pair.csv").write_text("\n".join(lines) + "\n")
