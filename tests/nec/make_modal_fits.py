"""Propagation constants of wires over lossy ground fitted to nec2c's currents (run by hand; needs nec2c).

    python tests/nec/make_modal_fits.py

For two stored long-wire decks (tests/nec/cases) nec2c's current along the
horizontal wire, between 10 % and 90 % of its length, is fitted by least
squares to I(x) = A exp(-gamma x) + B exp(+gamma x) (a forward and a
reflected wave); the fitted gamma, as velocity factor and attenuation, is
written to tests/nec/modal_fits.json.  The decks are below a wavelength,
where nec2c's Sommerfeld solution holds (make_reference.py).
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

import numpy as np
from scipy.optimize import least_squares

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from necdeck import run_nec2c  # noqa: E402

CASES = ["f183-l150-h3-s1ms", "f183-l131-h2-s5ms"]


def wire_currents(text: str, tag: int = 2) -> tuple[np.ndarray, np.ndarray]:
    """(x [wavelengths], current [A]) along wire ``tag`` from nec2c's CURRENTS AND LOCATION table."""
    i = text.index("CURRENTS AND LOCATION")
    xs, cs = [], []
    for line in text[i:].splitlines()[5:]:
        p = line.split()
        if len(p) < 10:
            if xs:
                break
            continue
        try:
            if int(p[1]) != tag:
                continue
            xs.append(float(p[2]))
            cs.append(complex(float(p[6]), float(p[7])))
        except ValueError:
            break
    return np.array(xs), np.array(cs)


def fit_gamma(x_m: np.ndarray, current: np.ndarray, k0: float) -> tuple[complex, float]:
    """gamma [1/m] of I = A e^{-gamma x} + B e^{gamma x} fitted to the current, and the fit's rms (relative)."""

    def res(p):
        g, a, b = complex(p[0], p[1]), complex(p[2], p[3]), complex(p[4], p[5])
        r = (a * np.exp(-g * x_m) + b * np.exp(g * x_m) - current) / np.abs(current).max()
        return np.concatenate([r.real, r.imag])

    s = least_squares(res, [1e-3, 1.05 * k0, current[0].real, current[0].imag, 0.0, 0.0], x_scale="jac")
    return complex(s.x[0], s.x[1]), float(np.sqrt(np.mean(s.fun**2)))


def main():
    ref = {c["name"]: c for c in json.loads((HERE / "reference.json").read_text())["cases"]}
    out = {"engine": "nec2c (NEC-2 in C, Debian package nec2c)", "fit": "10-90 % of the wire", "cases": []}
    with tempfile.TemporaryDirectory() as tmp:
        for name in CASES:
            case = ref[name]
            text = run_nec2c((HERE / "cases" / f"{name}.nec").read_text(), Path(tmp), name)
            lam = 299.792458 / case["freq_mhz"]
            x, c = wire_currents(text)
            x = x * lam
            keep = (x > 0.1 * case["length_m"]) & (x < 0.9 * case["length_m"])
            k0 = 2 * np.pi / lam
            g, rms = fit_gamma(x[keep], c[keep], k0)
            out["cases"].append(
                {
                    "name": name,
                    "deck": f"cases/{name}.nec",
                    "velocity_factor": round(k0 / g.imag, 5),
                    "attenuation_db_per_100m": round(g.real * 20 / np.log(10) * 100, 4),
                    "fit_rms": rms,
                }
            )
            print(out["cases"][-1])
    (HERE / "modal_fits.json").write_text(json.dumps(out, indent=1) + "\n")


if __name__ == "__main__":
    main()
