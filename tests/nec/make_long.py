"""NEC-2 references for Beverages of practical length and for the wire mode on long wires (run by hand).

    bash tests/nec/build_nec2c.sh      # once: nec2c 1.3 with the fix to fbar() (nec2c-fbar.patch)
    python tests/nec/make_long.py

Debian's nec2c goes wrong once a structure over a Sommerfeld ground spans about a wavelength (make_reference.py
says how); the references of make_reference.py and make_deembedded.py stay below that.  This script runs the
patched engine instead and writes tests/nec/long.json, with every deck under cases/ (prefix long-):

- ``engine_check``: the stored short de-embedded decks through both engines (the fix changes nothing there) and
  one long deck through both (the packaged engine's answer is far off).
- ``beverages``: terminated wires of 1.2 to 2.4 wavelengths, the sizes builders put up, with NEC's
  wire-to-ground junction taken out as in make_deembedded.py (a stub of the same segmentation, subtracted by load
  cards); the terminations are snrgain's 'auto'.  Forward gain, front-to-back and RDF at 20 deg elevation.
- ``center_fed``: a horizontal wire twelve wavelengths long, no down-leads, open ends, driven by 1 V at its
  middle segment: NEC's current from 0.1 to 3 wavelengths out (sampled), and the propagation constant of a
  forward and a reflected wave fitted to it over 0.5-3 wavelengths (make_modal_fits.fit_gamma).  The open ends
  lie six wavelengths out, so what comes back from them is small.  tests/test_modal.py sets these beside the
  current snrgain.physics.modal.gap_current computes for an infinite wire (the mode and the rest of the spectrum).
  NEC's wires are lossless, so those tests solve without the copper's internal impedance.
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
from make_modal_fits import fit_gamma, wire_currents  # noqa: E402
from make_reference import RADIUS_M, auto_termination  # noqa: E402
from necdeck import metrics, parse_output, patched_engine, run_nec2c  # noqa: E402

C_MHZ_M = 299.792458

# MHz, length m, height m, eps_r, sigma S/m
BEVERAGES = [
    (1.83, 250.0, 2.5, 13.0, 0.005),
    (1.83, 300.0, 3.0, 5.0, 0.001),
    (1.83, 250.0, 2.0, 20.0, 0.03),
    (1.83, 400.0, 2.0, 13.0, 0.005),
    (3.6, 200.0, 2.0, 13.0, 0.005),
    (3.6, 150.0, 3.0, 5.0, 0.001),
    (7.1, 100.0, 2.0, 13.0, 0.005),
    (7.1, 80.0, 1.5, 5.0, 0.001),
]
# MHz, height m, eps_r, sigma S/m; twelve wavelengths long, fed at the middle
CENTER_FED = [
    (1.83, 2.0, 13.0, 0.005),
    (1.83, 3.0, 5.0, 0.001),
    (3.6, 2.0, 5.0, 0.001),
    (7.1, 2.0, 15.0, 0.01),
]
FIT_WAVELENGTHS = (0.5, 3.0)
SAMPLE_WAVELENGTHS = np.arange(0.1, 3.0001, 0.05)


def _name(prefix, f, length, h, sigma):
    return f"long-{prefix}-f{f * 100:.0f}-l{length:.0f}-h{h:g}-s{sigma * 1000:g}ms".replace(".", "p")


def _figures(text):
    res = parse_output(text)
    met = metrics(res["theta_deg"], res["phi_deg"], res["gain_dbi"])
    z = res["feed_impedance_ohm"]
    return {k: round(float(v), 3) for k, v in met.items()}, [round(z.real, 2), round(z.imag, 2)]


def engine_check(work: Path, engine: str) -> dict:
    short = json.loads((HERE / "deembedded.json").read_text())["cases"]
    worst = 0.0
    for case in short:
        deck = (HERE / case["deck"]).read_text()
        a, _ = _figures(run_nec2c(deck, work, "a"))
        b, _ = _figures(run_nec2c(deck, work, "b", engine))
        worst = max(worst, *(abs(a[k] - b[k]) for k in a))
    f, length, h, eps, sigma = BEVERAGES[0]
    deck = (HERE / "cases" / f"{_name('bev', f, length, h, sigma)}.nec").read_text()
    packaged = parse_output(run_nec2c(deck, work, "a"))["feed_impedance_ohm"]
    patched = parse_output(run_nec2c(deck, work, "b", engine))["feed_impedance_ohm"]
    return {
        "short_decks": len(short),
        "short_decks_largest_difference_db": worst,
        "long_deck": f"cases/{_name('bev', f, length, h, sigma)}.nec",
        "long_deck_feed_impedance_packaged_ohm": [round(packaged.real, 2), round(packaged.imag, 2)],
        "long_deck_feed_impedance_patched_ohm": [round(patched.real, 2), round(patched.imag, 2)],
    }


def beverage(work: Path, engine: str, f, length, h, eps, sigma) -> dict:
    term = auto_termination(f, length, h, eps, sigma)
    case = {
        "freq_mhz": f,
        "length_m": length,
        "height_m": h,
        "radius_m": RADIUS_M,
        "permittivity": eps,
        "conductivity_s_per_m": sigma,
        "termination_ohm": term,
    }
    name = _name("bev", f, length, h, sigma)
    deck_d, nl, r_j, text = deembedded_run(case, work, name=name, engine=engine)
    (HERE / "cases" / f"{name}.nec").write_text(deck_d)
    met, z = _figures(text)
    return {
        "name": name,
        "deck": f"cases/{name}.nec",
        **case,
        "termination_ohm": round(term, 3),
        "junction_ohm": round(r_j, 2),
        "lead_segments": nl,
        **met,
        "feed_impedance_ohm": z,
    }


def center_fed(work: Path, engine: str, f, h, eps, sigma) -> dict:
    lam = C_MHZ_M / f
    length = 12 * lam
    ns = int(np.ceil(length / (lam / 40))) | 1  # odd: a middle segment
    name = _name("center", f, length, h, sigma)
    deck = (
        "\n".join(
            [
                "CM horizontal wire fed at its middle (snrgain: current along a long wire over lossy ground)",
                "CE",
                f"GW 1 {ns} {-length / 2:.3f} 0 {h:g} {length / 2:.3f} 0 {h:g} {RADIUS_M:g}",
                "GE 0",
                f"GN 2 0 0 0 {eps:g} {sigma:g}",
                f"FR 0 1 0 0 {f:g} 0",
                f"EX 0 1 {ns // 2 + 1} 0 1 0",
                "XQ",
                "EN",
            ]
        )
        + "\n"
    )
    (HERE / "cases" / f"{name}.nec").write_text(deck)
    x, c = wire_currents(run_nec2c(deck, work, name, engine), tag=1)
    x = x * lam
    k0 = 2 * np.pi / lam
    keep = (x > FIT_WAVELENGTHS[0] * lam) & (x < FIT_WAVELENGTHS[1] * lam)
    g, rms = fit_gamma(x[keep], c[keep], k0)
    at = SAMPLE_WAVELENGTHS * lam
    i_re, i_im = np.interp(at, x, c.real), np.interp(at, x, c.imag)
    return {
        "name": name,
        "deck": f"cases/{name}.nec",
        "freq_mhz": f,
        "length_m": round(length, 3),
        "height_m": h,
        "radius_m": RADIUS_M,
        "permittivity": eps,
        "conductivity_s_per_m": sigma,
        "fit_wavelengths": list(FIT_WAVELENGTHS),
        "velocity_factor": round(k0 / g.imag, 5),
        "attenuation_db_per_100m": round(float(g.real) * 20 / np.log(10) * 100, 4),
        "fit_rms": float(f"{rms:.3g}"),
        "x_m": [round(float(v), 3) for v in at],
        "current_a": [[float(f"{a:.6g}"), float(f"{b:.6g}")] for a, b in zip(i_re, i_im)],
    }


def main():
    engine = patched_engine()
    out = {
        "engine": "nec2c 1.3 (Debian's source) with tests/nec/nec2c-fbar.patch, built by tests/nec/build_nec2c.sh",
        "elevation_deg": 20.0,
    }
    (HERE / "cases").mkdir(exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        out["beverages"] = [beverage(work, engine, *c) for c in BEVERAGES]
        out["center_fed"] = [center_fed(work, engine, *c) for c in CENTER_FED]
        out["engine_check"] = engine_check(work, engine)
    for row in out["beverages"] + out["center_fed"] + [out["engine_check"]]:
        print({k: v for k, v in row.items() if k not in ("x_m", "current_a")})
    (HERE / "long.json").write_text(json.dumps(out, indent=1) + "\n")


if __name__ == "__main__":
    main()
