"""NEC-2 references for the long wires with NEC's wire-to-ground junction taken out (run by hand; needs nec2c).

    python tests/nec/make_deembedded.py     # Debian's nec2c (/usr/bin/nec2c); a few seconds

Where a wire meets a lossy Sommerfeld ground NEC-2 adds an impedance of its own that grows as the bottom segment
shortens (a point contact with a conducting half-space has no finite resistance; NEC's depends on its
segmentation).  For each stored long-wire case (reference.json) a stub measures it (necdeck.junction_impedance,
shared with make_nearwire.py): one vertical wire of the case's down-lead (same radius, height and segments) fed at
its bottom segment, its input impedance on the case's ground less its input impedance over a perfect ground (GN 1,
no junction), which takes out the short monopole's own capacitive reactance and radiation resistance and leaves the
junction's resistance and reactance.  The case's deck is then run again with that impedance subtracted at both
junctions by series loads: LD 4 cards (NEC-2 User's Guide, Burke and Poggio 1981, the LD card, from memory: LDTYP 4
is a series impedance R + jX given by its resistance and reactance at the frequency, LDTYP 0 a series R, L, C; the
decks run one frequency, so LD 4 states the load exactly), the far end's combined with its termination.  The model
is then given the true rod resistance, zero for NEC's ideal connections, instead of a fitted one.  Results go to
deembedded.json with the decks under cases/ (suffix -deemb).

The junction is reactive: 62 - 15j ohm for a 2 m lead over 5 mS/m at 1.83 MHz, 163 - 96j ohm for a 3 m lead and
228 - 272j ohm for a 1.2 m lead at 3.6 MHz over 1 mS/m.  Its resistance is within 1.6 ohm of the stub's input
resistance, which the former references took out alone by negative LD 0 resistances (``resistance_only`` keeps
their figures; the difference is the stub's own radiation resistance).  Over 5-30 mS/m the reactance is small
against the 500 ohm termination and the figures barely move (front-to-back within 1.2 dB, RDF 0.03 dB); over
1 mS/m the reactance the former references left at the far end detuned the termination NEC saw, and the
front-to-back moved by up to 10 dB, the feed impedance's reactance by up to 281 ohm.

The subtraction is not the whole story where the junction is large: ``segmentation_check`` runs seven cases
again at 40, 80, 120 and 200 segments per wavelength (the down-leads split finer, the junction growing with
them) and stores what NEC then gives.  Over 5 mS/m the figures stay put (front-to-back within 0.5 dB); over
1 mS/m, where the junction's resistance reaches 650-670 ohm at the finest, the front-to-back moves by 0.9-8 dB,
so there NEC's own answer is uncertain by that much.
"""

from __future__ import annotations

import json
import re
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from necdeck import (  # noqa: E402
    beverage_deck,
    input_impedance,
    junction_impedance,
    metrics,
    parse_output,
    run_nec2c,
    stub_deck,  # noqa: F401  (other scripts import it from here)
)

C_MHZ_M = 299.792458


def junction_ohm(text: str) -> float:
    """The stub's input resistance [ohm] from nec2c's output: NEC's wire-to-ground junction's resistance."""
    return input_impedance(text).real


def deembedded_deck(deck: str, termination_ohm: float, z_j: complex | float) -> tuple[str, int]:
    """``deck`` (necdeck.beverage_deck) with the junction ``z_j`` taken out at both ends by load cards, and the number
    of segments of its down-leads.  A complex ``z_j`` (the junction's impedance) goes out by LD 4 cards (a series
    R + jX at the deck's one frequency; the far end's combined with its termination), a real one (its resistance
    alone, the former way kept for make_long.py and make_termscan.py) by LD 0 cards (a series R)."""
    nl = int(re.search(r"^GW 1 (\d+)", deck, re.M).group(1))
    if isinstance(z_j, complex):
        r, x = z_j.real, z_j.imag
        loads = f"LD 4 3 {nl} {nl} {termination_ohm - r:.3f} {-x:.3f}\nLD 4 1 1 1 {-r:.3f} {-x:.3f}"
    else:
        loads = f"LD 0 3 {nl} {nl} {termination_ohm - z_j:.3f} 0 0\nLD 0 1 1 1 {-z_j:.3f} 0 0"
    out = deck.replace(f"LD 0 3 {nl} {nl} {termination_ohm:.3f} 0 0", loads)
    assert out != deck
    return out, nl


GEOMETRY = ("freq_mhz", "length_m", "height_m", "radius_m", "permittivity", "conductivity_s_per_m")


def deembedded_run(
    case: dict,
    work: Path,
    *,
    name: str,
    segments_per_wavelength: int = 40,
    engine: str = "nec2c",
    junction: str = "resistance",
):
    """Run one terminated wire (``case``: GEOMETRY and termination_ohm) with NEC's junction taken out: its deck,
    the stub that measures the junction, the subtraction.  ``junction`` "impedance" takes out the stub's impedance
    less its own over a perfect ground (necdeck.junction_impedance; this script's references), "resistance" the
    stub's input resistance alone (the former way; make_long.py and make_termscan.py still use it, so that their
    stored references stay reproducible).  Returns (the de-embedded deck, lead segments, the junction [ohm]: complex
    or real, nec2c's output of the de-embedded deck)."""
    if junction not in ("impedance", "resistance"):
        raise ValueError(f"junction must be 'impedance' or 'resistance', not {junction!r}")
    geometry = {k: case[k] for k in GEOMETRY}
    deck = beverage_deck(
        **geometry, termination_ohm=case["termination_ohm"], segments_per_wavelength=segments_per_wavelength
    )
    nl = int(re.search(r"^GW 1 (\d+)", deck, re.M).group(1))
    stub = {
        "freq_mhz": case["freq_mhz"],
        "height_m": case["height_m"],
        "segments": nl,
        "radius_m": case["radius_m"],
        "permittivity": case["permittivity"],
        "conductivity_s_per_m": case["conductivity_s_per_m"],
    }
    if junction == "impedance":
        z_j = junction_impedance(**stub, workdir=work, engine=engine)
    else:
        z_j = junction_ohm(run_nec2c(stub_deck(**stub), work, "stub", engine))
    deck_d, _ = deembedded_deck(deck, case["termination_ohm"], z_j)
    return deck_d, nl, z_j, run_nec2c(deck_d, work, name, engine)


def _ohm(z: complex) -> list[float]:
    return [round(z.real, 2), round(z.imag, 2)]


def main():
    ref = json.loads((HERE / "reference.json").read_text())
    out = {
        "engine": "nec2c (NEC-2 in C, Debian package nec2c)",
        "elevation_deg": 20.0,
        "junction": "impedance [R, X] of the stub on the soil less on a perfect ground, taken out by LD 4 at both ends;"
        " resistance_only: the figures with its stub's input resistance alone taken out (LD 0), the former references",
        "cases": [],
    }
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        for case in ref["cases"] + ref["sweep"]:
            name = f"{case['name']}-deemb"
            deck_d, nl, z_j, text = deembedded_run(case, work, name=name, junction="impedance")
            (HERE / "cases" / f"{name}.nec").write_text(deck_d)
            res = parse_output(text)
            met = metrics(res["theta_deg"], res["phi_deg"], res["gain_dbi"])
            z = res["feed_impedance_ohm"]
            _, _, r_j, text_r = deembedded_run(case, work, name="resistive", junction="resistance")
            res_r = parse_output(text_r)
            met_r = metrics(res_r["theta_deg"], res_r["phi_deg"], res_r["gain_dbi"])
            out["cases"].append(
                {
                    **{k: case[k] for k in (*GEOMETRY, "termination_ohm")},
                    "name": name,
                    "deck": f"cases/{name}.nec",
                    "junction_ohm": _ohm(z_j),
                    "lead_segments": nl,
                    **{k: round(float(v), 3) for k, v in met.items()},
                    "feed_impedance_ohm": _ohm(z),
                    "resistance_only": {
                        "junction_ohm": round(r_j, 2),
                        **{k: round(float(v), 3) for k, v in met_r.items()},
                    },
                }
            )
            print(out["cases"][-1])
        out["segmentation_check"] = [segmentation_check(case, work) for case in _check_cases(ref)]
    (HERE / "deembedded.json").write_text(json.dumps(out, indent=1) + "\n")


# The named outliers of tests/test_longwire.py and a well-behaved case for contrast (the first four since the
# resistive references; the last three the 1 mS/m outliers the impedance brought).
CHECK = [
    "f183-l131-h2-s5ms",
    "f360-l70-h12-s1ms",
    "f710-l36-h2-s30ms",
    "f183-l150-h3-s1ms-r300",
    "f183-l150-h3-s1ms",
    "f183-l150-h3-s1ms-r400",
    "f183-l150-h3-s1ms-r500",
]
CHECK_SEGMENTS_PER_WAVELENGTH = [40, 80, 120, 200]


def _check_cases(ref):
    by_name = {c["name"]: c for c in ref["cases"] + ref["sweep"]}
    return [by_name[n] for n in CHECK]


def segmentation_check(case, work: Path) -> dict:
    runs = []
    for spl in CHECK_SEGMENTS_PER_WAVELENGTH:
        _, nl, z_j, text = deembedded_run(case, work, name="check", segments_per_wavelength=spl, junction="impedance")
        res = parse_output(text)
        met = metrics(res["theta_deg"], res["phi_deg"], res["gain_dbi"])
        runs.append(
            {
                "segments_per_wavelength": spl,
                "lead_segments": nl,
                "junction_ohm": _ohm(z_j),
                **{k: round(float(v), 3) for k, v in met.items()},
            }
        )
    return {"name": f"{case['name']}-deemb", "runs": runs}


if __name__ == "__main__":
    main()
