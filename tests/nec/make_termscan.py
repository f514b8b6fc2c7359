"""NEC-2 termination scans of Beverages, de-embedded (writes termscan.json; run by hand, needs nec2c).

    python tests/nec/make_termscan.py

For each wire (0.4 to 1 wavelength: Debian's nec2c goes wrong beyond about a wavelength, see build_nec2c.sh)
the far-end resistor is stepped over 100-1000 ohm; each run has NEC's wire-to-ground junction taken out
(make_deembedded.deembedded_run), so the model, given ideal ground connections, sees the same structure.  Stored
per resistor: forward gain, RDF and front-to-back at 20 deg elevation along the wire, and the feed impedance.
The question they answer: is a resistor well under |Z0| the one of highest RDF in NEC too, or only in the model?
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parents[1]))

from make_deembedded import deembedded_run  # noqa: E402
from necdeck import metrics, parse_output  # noqa: E402

RADIUS_M = 0.0008138  # AWG 14
RESISTORS_OHM = [100.0, 150.0, 200.0, 270.0, 350.0, 450.0, 560.0, 700.0, 850.0, 1000.0]
# name, MHz, length, height, eps_r, sigma: 0.4, 0.7 and 0.85 wavelength at 1.83 MHz, 0.6 and 1.0 at 3.6 MHz
CASES = [
    ("scan-f183-l65-h2-s5ms", 1.83, 65.0, 2.0, 13.0, 0.005),
    ("scan-f183-l115-h25-s5ms", 1.83, 115.0, 2.5, 13.0, 0.005),
    ("scan-f183-l140-h25-s30ms", 1.83, 140.0, 2.5, 20.0, 0.03),
    ("scan-f360-l50-h2-s1ms", 3.6, 50.0, 2.0, 5.0, 0.001),
    ("scan-f360-l80-h3-s5ms", 3.6, 80.0, 3.0, 13.0, 0.005),
]


def main():
    out = {"engine": "nec2c (NEC-2 in C, Debian package nec2c), junction de-embedded", "elevation_deg": 20.0}
    out["cases"] = []
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        for name, f, length, height, eps, sigma in CASES:
            runs = []
            for r in RESISTORS_OHM:
                case = {
                    "freq_mhz": f,
                    "length_m": length,
                    "height_m": height,
                    "radius_m": RADIUS_M,
                    "permittivity": eps,
                    "conductivity_s_per_m": sigma,
                    "termination_ohm": r,
                }
                deck, _, r_j, text = deembedded_run(case, work, name=name)
                if r == RESISTORS_OHM[0]:
                    (HERE / "cases" / f"{name}-deemb.nec").write_text(deck)
                res = parse_output(text)
                m = metrics(res["theta_deg"], res["phi_deg"], res["gain_dbi"])
                z = res["feed_impedance_ohm"]
                runs.append(
                    {
                        "termination_ohm": r,
                        "junction_ohm": round(r_j, 2),
                        **{k: round(float(v), 3) for k, v in m.items()},
                        "feed_impedance_ohm": [round(z.real, 2), round(z.imag, 2)],
                    }
                )
            rdf = np.array([x["rdf_db"] for x in runs])
            print(name, "best RDF at", RESISTORS_OHM[int(np.argmax(rdf))], flush=True)
            out["cases"].append(
                {
                    "name": name,
                    "freq_mhz": f,
                    "length_m": length,
                    "height_m": height,
                    "radius_m": RADIUS_M,
                    "permittivity": eps,
                    "conductivity_s_per_m": sigma,
                    "deck": f"cases/{name}-deemb.nec",
                    "deck_note": f"written at {RESISTORS_OHM[0]:g} ohm; the others change only the far LD card",
                    "runs": runs,
                }
            )
    (HERE / "termscan.json").write_text(json.dumps(out, indent=1) + "\n")


if __name__ == "__main__":
    main()
