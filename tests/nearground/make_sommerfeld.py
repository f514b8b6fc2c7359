"""Write reference.json: the exact field of a short dipole over lossy ground (noisemodels.sommerfeld) on the grid
tests/test_nearground.py checks the closed form on.  Run from the worktree root:

    PYTHONPATH=$PWD python tests/nearground/make_sommerfeld.py [freq_hz ...]

(one frequency per process; the results of each run are merged into the file).  Each point stores the complex
components z, rho (away from the source) and phi (across), phi measured from a horizontal dipole's axis."""

import json
import sys
from pathlib import Path

from noisemodels import sommerfeld

OUT = Path(__file__).with_name("reference.json")
GROUNDS = {"loam": (13.0, 0.005), "poor": (5.0, 0.001)}
PAIRS = [(h, z) for h in (0.0, 1.0, 3.0, 6.0, 10.0, 15.0) for z in (0.0, 1.0)] + [(3.0, 3.0), (6.0, 6.0), (15.0, 6.0)]
NEAR = (3.0, 5.0, 10.0, 15.0, 30.0, 100.0, 300.0, 1000.0)
FAR_PAIRS = [(0.0, 0.0), (1.0, 1.0), (6.0, 1.0), (15.0, 6.0)]
FAR = (3000.0, 10000.0, 30000.0)
PHI = 0.6  # rad from a horizontal dipole's axis


def grid():
    for h, z in PAIRS:
        for rho in NEAR:
            yield h, z, rho
    for h, z in FAR_PAIRS:
        for rho in FAR:
            yield h, z, rho


def main(freqs):
    rows = []
    for f in freqs:
        for gname, (eps, sig) in GROUNDS.items():
            for kind in ("vertical", "horizontal"):
                for h, z, rho in grid():
                    e = sommerfeld.field(f, eps, sig, kind=kind, source_height_m=h, rho_m=rho, height_m=z, phi_rad=PHI)
                    rows.append(
                        {
                            "freq_hz": f,
                            "ground": gname,
                            "kind": kind,
                            "h": h,
                            "z": z,
                            "rho": rho,
                            "phi": PHI,
                            **{f"e_{k}": [v.real, v.imag] for k, v in e.items()},
                        }
                    )
                print(f, gname, kind, flush=True)
    old = json.loads(OUT.read_text()) if OUT.exists() else {"points": []}
    keep = [r for r in old["points"] if r["freq_hz"] not in freqs]
    OUT.write_text(json.dumps({"grounds": GROUNDS, "points": keep + rows}, indent=0))


if __name__ == "__main__":
    main([float(a) for a in sys.argv[1:]] or [1.83e6, 3.6e6])
