"""NEC-2 references for a top-loaded transmitting vertical next to receiving antennas (writes scatter_tophat.json).

The vertical of make_scatter.py cut to half its height (20.5 m at 1.83 MHz, radius 25 mm, 10 segments) with a hat
of four horizontal wires at its top (radius 5 mm, 6 segments each, at right angles), their length tuned by
bisection until the vertical alone, its base on the perfect ground, shows no reactance at 1.83 MHz: a resonant
top-loaded vertical, the kind a 160 m station builds when a quarter wave is too tall.  snrgain describes it by the
electrical length its hat adds (``top_loading``): the length t that makes a plain monopole 20.5 + t m tall
resonant (its induced-EMF reactance zero), found the same way and written beside the hat.

It stands 20 and 40 m broadside of and behind the flag and the pair of short verticals of make_scatter.py (their
decks are that script's), resonant (its base loaded by 50 ohm), over the perfect ground and over eps_r 13, 5 mS/m
(NEC's wire-to-ground junction measured on a stub and taken out, the radial loss given as 10 ohm, as there).  The
hat is tuned over the perfect ground only: over the lossy ground the same vertical is used.

Per case: forward gain, RDF and front-to-back at 20 deg elevation (necdeck.metrics_toward).
Run: python tests/nec/make_scatter_tophat.py  (half a minute; needs nec2c on the PATH)
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))
sys.path.insert(0, str(HERE))

from make_scatter import (  # noqa: E402
    CENTRES,
    FLAG,
    FORWARD_PHI,
    FREQ_MHZ,
    GROUNDS,
    PAIR,
    PLACES,
    RADIUS_M,
    TX_LOSS_OHM,
    TX_RADIUS_M,
    _junction,
    deck,
)

from snrgain.antennas.coupling import monopole_impedance  # noqa: E402
from tests.nec.necdeck import metrics_toward, parse_output, run_nec2c  # noqa: E402

HEIGHT_M = 20.5
SEGMENTS = 10
HAT_RADIUS_M = 0.005
HAT_SEGMENTS = 6
DISTANCES_M = [20.0, 40.0]


def tx_cards(x, y, hat_m, first_tag):
    """GW cards of the vertical at (x, y) and its four hat wires, from tag ``first_tag`` (the vertical's)."""
    cards = [f"GW {first_tag} {SEGMENTS} {x:.3f} {y:.3f} 0 {x:.3f} {y:.3f} {HEIGHT_M:.3f} {TX_RADIUS_M:g}"]
    for i, (ux, uy) in enumerate(((1, 0), (0, 1), (-1, 0), (0, -1)), start=1):
        cards.append(
            f"GW {first_tag + i} {HAT_SEGMENTS} {x:.3f} {y:.3f} {HEIGHT_M:.3f} "
            f"{x + ux * hat_m:.4f} {y + uy * hat_m:.4f} {HEIGHT_M:.3f} {HAT_RADIUS_M:g}"
        )
    return cards


def with_tx(text: str, x: float, y: float, hat_m: float, load_ohm: float) -> str:
    """``text`` (a deck of make_scatter.deck without its vertical) with the top-loaded vertical added, its base
    segment loaded by ``load_ohm``."""
    lines = text.splitlines()
    tags = [int(s.split()[1]) for s in lines if s.startswith("GW ")]
    tag = max(tags) + 1
    ge = lines.index("GE 1")
    lines[ge:ge] = tx_cards(x, y, hat_m, tag)
    fr = next(i for i, s in enumerate(lines) if s.startswith("FR "))
    lines.insert(fr, f"LD 0 {tag} 1 1 {load_ohm:.3f} 0 0")
    return "\n".join(lines) + "\n"


def alone_deck(hat_m: float) -> str:
    """The vertical alone over the perfect ground, driven at its base."""
    cards = tx_cards(0.0, 0.0, hat_m, 1)
    return "\n".join(
        ["CM top-loaded vertical alone", "CE", *cards, "GE 1", "GN 1", f"FR 0 1 0 0 {FREQ_MHZ:g} 0", "EX 0 1 1 0 1 0"]
        + ["RP 0 1 1 1000 0 0 1 1", "EN"]
    )


def _bisect(f, lo, hi, tol=1e-4):
    flo = f(lo)
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        fm = f(mid)
        if (fm > 0) == (flo > 0):
            lo, flo = mid, fm
        else:
            hi = mid
        if hi - lo < tol:
            break
    return 0.5 * (lo + hi)


def main():
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)

        def z_alone_of(hat_m):
            return parse_output(run_nec2c(alone_deck(hat_m), work, "alone"))["feed_impedance_ohm"]

        hat = _bisect(lambda hat_m: z_alone_of(hat_m).imag, 1.0, 30.0)
        z_alone = z_alone_of(hat)
        f_hz = FREQ_MHZ * 1e6
        top = _bisect(lambda t: monopole_impedance(f_hz, HEIGHT_M + t, 0.0, TX_RADIUS_M).imag, 0.0, 30.0)
        ref = {
            "engine": "nec2c (NEC-2 in C, Debian package nec2c)",
            "freq_mhz": FREQ_MHZ,
            "elevation_deg": 20.0,
            "tx": {
                "height_m": HEIGHT_M,
                "radius_m": TX_RADIUS_M,
                "segments": SEGMENTS,
                "hat_wires": 4,
                "hat_length_m": round(hat, 4),
                "hat_radius_m": HAT_RADIUS_M,
                "impedance_alone_ohm": [round(z_alone.real, 3), round(z_alone.imag, 3)],
                "top_loading_m": round(top, 4),
                "ground_loss_ohm": TX_LOSS_OHM,
            },
            "load_ohm": 50.0,
            "flag": FLAG,
            "pair": PAIR,
            "radius_m": RADIUS_M,
            "cases": [],
        }
        print("hat", hat, "Z alone", z_alone, "top loading", top, flush=True)
        for gname, ground in GROUNDS.items():
            r_tx = _junction(ground, HEIGHT_M, SEGMENTS, TX_RADIUS_M, work)
            r_pair = _junction(ground, PAIR["height_m"], PAIR["segments"], RADIUS_M, work)
            for antenna in ("flag", "pair"):
                base = deck(antenna, ground, None, 0.0, r_pair)

                def run(text, antenna=antenna):
                    out = parse_output(run_nec2c(text, work, "case"))
                    m = metrics_toward(
                        out["theta_deg"], out["phi_deg"], out["gain_dbi"], forward_phi_deg=FORWARD_PHI[antenna]
                    )
                    return {k: round(float(v), 3) for k, v in m.items()}

                alone = run(base)
                for place, (ux, uy) in PLACES[antenna].items():
                    cx, cy = CENTRES[antenna]
                    for dist in DISTANCES_M:
                        x, y = cx + ux * dist, cy + uy * dist
                        if antenna == "pair" and place == "behind" and dist < 15:
                            continue
                        load = 50.0 + (0.0 if ground is None else TX_LOSS_OHM - r_tx)
                        entry = {
                            "antenna": antenna,
                            "ground": gname,
                            "place": place,
                            "distance_m": dist,
                            "tx_m": [round(x, 3), round(y, 3)],
                            "junction_ohm": {"tx": round(r_tx, 2), "pair": round(r_pair, 2)},
                            "alone": alone,
                            "resonant": run(with_tx(base, x, y, hat, load)),
                        }
                        ref["cases"].append(entry)
                        print(antenna, gname, place, dist, entry["resonant"], flush=True)
    (HERE / "scatter_tophat.json").write_text(json.dumps(ref, indent=1) + "\n")


if __name__ == "__main__":
    main()
