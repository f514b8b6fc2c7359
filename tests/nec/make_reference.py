"""Write the NEC-2 reference results for the long-wire tests (run by hand; needs nec2c).

    python tests/nec/make_reference.py

For each case it writes the deck to tests/nec/cases/<name>.nec and stores
what nec2c (Debian's package of NEC-2 in C) computed in
tests/nec/reference.json: forward gain, front-to-back and RDF at 20 deg
elevation and the feed impedance.  The inputs (every deck) sit beside the
outputs.  The terminations are those snrgain's 'auto' gives (|Z0| of the line
model), so both models see the same resistor.

Why these lengths: nec2c's Sommerfeld solution breaks down (garbage feed
impedances, patterns of -1000 dBi) once the structure spans a wavelength or
more, at every frequency tried (1.83, 3.6 and 7.1 MHz; measured while
building these cases), so the lossy-ground cases stay at 0.8-0.95
wavelength.  The cause is a known defect of the packaged nec2c 1.3: in
somnec.c the attenuation function fbar() falls through from its series
branch into its asymptotic one (a missing return), which spoils the
Norton ground-wave fields NEC-2 uses for segments more than about a
wavelength apart.  These references run the packaged engine that CI
installs; the longer Beverages come from make_long.py on nec2c built with
the project's one-line fix (build_nec2c.sh, nec2c-fbar.patch), which gives
these decks the same results to the 0.01 dB it prints.  Longer wires are
also checked over perfect ground, where nec2c and
PyNEC agree to 0.01 dB and the tests run PyNEC live.  PyNEC's own Sommerfeld
solution disagrees with nec2c (a 10.6 m dipole 0.43 m above eps_r 10,
2 mS/m ground at 14 MHz: PyNEC 2.3.4 gives 428-308j ohm, nec2c 100.0+65.9j),
so nec2c is the lossy-ground reference.
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parents[1]))

from necdeck import (  # noqa: E402
    beverage_deck,
    loop_deck,
    metrics,
    metrics_toward,
    parse_output,
    run_nec2c,
    vertical_pair_deck,
)

RADIUS_M = 0.0008138  # AWG 14

# name, MHz, length m, height m, eps_r, sigma S/m
CASES = [
    ("f183-l131-h2-s5ms", 1.83, 131.0, 2.0, 13.0, 0.005),
    ("f183-l150-h3-s1ms", 1.83, 150.0, 3.0, 5.0, 0.001),
    ("f360-l75-h25-s10ms", 3.6, 75.0, 2.5, 14.0, 0.01),
    ("f710-l38-h1-s5ms", 7.1, 38.0, 1.0, 13.0, 0.005),
    ("f183-l155-h15-s30ms", 1.83, 155.0, 1.5, 20.0, 0.03),
    ("f360-l70-h12-s1ms", 3.6, 70.0, 1.2, 5.0, 0.001),
    ("f710-l36-h2-s30ms", 7.1, 36.0, 2.0, 20.0, 0.03),
]
SWEEP = ("f183-l150-h3-s1ms", [200.0, 300.0, 400.0, 500.0, 700.0, 900.0])

# Terminated rectangular loops: name, MHz, width, loop height, bottom height, termination, eps_r, sigma.
# NEC's phi = 180 deg is the loop's favoured direction (from the termination toward the feed).
LOOP_CASES = [
    ("loop-f183-w85-r300", 1.83, 8.5, 4.3, 1.5, 300.0, 13.0, 0.005),
    ("loop-f183-w85-r500", 1.83, 8.5, 4.3, 1.5, 500.0, 13.0, 0.005),
    ("loop-f183-w85-r1000", 1.83, 8.5, 4.3, 1.5, 1000.0, 13.0, 0.005),
    ("loop-f183-w85-r2000", 1.83, 8.5, 4.3, 1.5, 2000.0, 13.0, 0.005),
    ("loop-f360-w5-r900", 3.6, 5.0, 3.0, 1.5, 900.0, 13.0, 0.005),
    ("loop-f183-w10-r1100-s1ms", 1.83, 10.0, 5.0, 2.0, 1100.0, 5.0, 0.001),
]
# Two verticals a quarter wave apart, the one at +x lagging 90 deg (end-fire toward +x, NEC phi = 0), each
# fed through a 2 kohm base load: name, MHz, height, spacing, eps_r, sigma.
PAIR_CASES = [
    ("pair-f183-h6", 1.83, 6.0, 40.96, 13.0, 0.005),
    ("pair-f360-h4-s1ms", 3.6, 4.0, 20.82, 5.0, 0.001),
]
PAIR_LOAD_OHM = 2000.0
PAIR_RADIUS_M = 0.01


def auto_termination(f_mhz, length, height, eps, sigma):
    from snrgain.antennas import from_spec

    ant = from_spec(
        {
            "family": "beverage",
            "length": f"{length} m",
            "height": f"{height} m",
            "diameter": f"{2 * RADIUS_M} m",
            "feed_ground": 0,
            "far_ground": 0,
            "ground": {"conductivity": f"{sigma} S/m", "permittivity": eps},
        }
    )
    return ant.termination_ohm(f_mhz * 1e6)


def one(name, f, length, height, eps, sigma, r_term, work):
    deck = beverage_deck(
        freq_mhz=f,
        length_m=length,
        height_m=height,
        radius_m=RADIUS_M,
        permittivity=eps,
        conductivity_s_per_m=sigma,
        termination_ohm=r_term,
    )
    (HERE / "cases").mkdir(exist_ok=True)
    (HERE / "cases" / f"{name}.nec").write_text(deck)
    out = parse_output(run_nec2c(deck, work, name))
    m = metrics(out["theta_deg"], out["phi_deg"], out["gain_dbi"])
    z = out["feed_impedance_ohm"]
    return {
        "name": name,
        "freq_mhz": f,
        "length_m": length,
        "height_m": height,
        "permittivity": eps,
        "conductivity_s_per_m": sigma,
        "radius_m": RADIUS_M,
        "termination_ohm": round(r_term, 3),
        "deck": f"cases/{name}.nec",
        **{k: round(float(v), 3) for k, v in m.items()},
        "feed_impedance_ohm": [round(z.real, 2), round(z.imag, 2)],
    }


def _run(name, deck, work, forward_phi, extra):
    (HERE / "cases").mkdir(exist_ok=True)
    (HERE / "cases" / f"{name}.nec").write_text(deck)
    out = parse_output(run_nec2c(deck, work, name))
    m = metrics_toward(out["theta_deg"], out["phi_deg"], out["gain_dbi"], forward_phi_deg=forward_phi)
    z = out["feed_impedance_ohm"]
    return {
        "name": name,
        **extra,
        "deck": f"cases/{name}.nec",
        **{k: round(float(v), 3) for k, v in m.items()},
        "feed_impedance_ohm": [round(z.real, 2), round(z.imag, 2)],
    }


def main():
    ref = {
        "engine": "nec2c (NEC-2 in C, Debian package nec2c)",
        "elevation_deg": 20.0,
        "cases": [],
        "sweep": [],
        "loops": [],
        "pairs": [],
    }
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        for name, f, length, height, eps, sigma in CASES:
            ref["cases"].append(
                one(name, f, length, height, eps, sigma, auto_termination(f, length, height, eps, sigma), work)
            )
        name, values = SWEEP
        _, f, length, height, eps, sigma = next(c for c in CASES if c[0] == name)
        for r in values:
            ref["sweep"].append(one(f"{name}-r{int(r)}", f, length, height, eps, sigma, r, work))
        for name, f, w, h, bottom, r_term, eps, sigma in LOOP_CASES:
            deck = loop_deck(
                freq_mhz=f,
                width_m=w,
                bottom_m=bottom,
                top_m=bottom + h,
                radius_m=RADIUS_M,
                permittivity=eps,
                conductivity_s_per_m=sigma,
                termination_ohm=r_term,
            )
            ref["loops"].append(
                _run(
                    name,
                    deck,
                    work,
                    180.0,
                    {
                        "freq_mhz": f,
                        "width_m": w,
                        "loop_height_m": h,
                        "height_m": bottom,
                        "termination_ohm": r_term,
                        "permittivity": eps,
                        "conductivity_s_per_m": sigma,
                        "radius_m": RADIUS_M,
                    },
                )
            )
        for name, f, h, spacing, eps, sigma in PAIR_CASES:
            deck = vertical_pair_deck(
                freq_mhz=f,
                height_m=h,
                spacing_m=spacing,
                radius_m=PAIR_RADIUS_M,
                permittivity=eps,
                conductivity_s_per_m=sigma,
                load_ohm=PAIR_LOAD_OHM,
                phase_deg=-90.0,
            )
            ref["pairs"].append(
                _run(
                    name,
                    deck,
                    work,
                    0.0,
                    {
                        "freq_mhz": f,
                        "height_m": h,
                        "spacing_m": spacing,
                        "permittivity": eps,
                        "conductivity_s_per_m": sigma,
                        "load_ohm": PAIR_LOAD_OHM,
                    },
                )
            )
    (HERE / "reference.json").write_text(json.dumps(ref, indent=1) + "\n")
    print(
        f"wrote {len(ref['cases'])} wire cases, {len(ref['sweep'])} sweep points, {len(ref['loops'])} loops and "
        f"{len(ref['pairs'])} vertical pairs to {HERE / 'reference.json'}"
    )


if __name__ == "__main__":
    main()
