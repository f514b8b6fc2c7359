"""NEC-2 references for the long wires with NEC's wire-to-ground junction taken out (run by hand; needs nec2c).

    python tests/nec/make_deembedded.py

Where a wire meets a lossy Sommerfeld ground NEC-2 adds a resistance of its own that grows as the bottom segment
shortens (a point contact with a conducting half-space has no finite resistance; NEC's depends on its
segmentation).  For each stored long-wire case (reference.json) a stub deck measures it: one vertical wire of the
case's down-lead (same radius, height and segments) standing on the same ground, fed at its bottom segment; its
input resistance, less the stub's radiation resistance (below 0.1 ohm at these heights, neglected), is the
junction's.  The case's deck is then run again with that resistance subtracted at both junctions by load cards
(negative series resistances; the far end's combined with its termination), so the model can be given the true
rod resistance, zero for NEC's ideal connections, instead of a fitted one.  Results go to deembedded.json with
the decks under cases/ (suffix -deemb).

The subtraction is not the whole story where the junction is large: ``segmentation_check`` runs four cases
again at 40, 80, 120 and 200 segments per wavelength (the down-leads split finer, the junction growing with
them) and stores what NEC then gives.  Over 5 mS/m the figures stay put; over 1 mS/m, where the junction is
160-670 ohm, the front-to-back moves by several dB, so there NEC's own answer is uncertain by that much.
"""

from __future__ import annotations

import json
import re
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from necdeck import beverage_deck, metrics, parse_output, run_nec2c  # noqa: E402

C_MHZ_M = 299.792458


def stub_deck(*, freq_mhz, height_m, segments, radius_m, permittivity, conductivity_s_per_m) -> str:
    return (
        "\n".join(
            [
                "CM junction stub (snrgain de-embedding)",
                "CE",
                f"GW 1 {segments} 0 0 0 0 0 {height_m:g} {radius_m:g}",
                "GE 1",
                f"GN 2 0 0 0 {permittivity:g} {conductivity_s_per_m:g}",
                f"FR 0 1 0 0 {freq_mhz:g} 0",
                "EX 0 1 1 0 1 0",
                "XQ",
                "EN",
            ]
        )
        + "\n"
    )


def junction_ohm(text: str) -> float:
    """The stub's input resistance [ohm] from nec2c's output: NEC's wire-to-ground junction."""
    m = re.search(
        r"ANTENNA INPUT PARAMETERS.*?\n.*?\n.*?\n\s*\d+\s+\d+\s+\S+\s+\S+\s+\S+\s+\S+\s+(\S+)\s+(\S+)",
        text,
        re.S,
    )
    return float(m.group(1))


def deembedded_deck(deck: str, termination_ohm: float, r_j: float) -> tuple[str, int]:
    """``deck`` (necdeck.beverage_deck) with the junction resistance ``r_j`` taken out at both ends by load cards,
    and the number of segments of its down-leads."""
    nl = int(re.search(r"^GW 1 (\d+)", deck, re.M).group(1))
    out = deck.replace(
        f"LD 0 3 {nl} {nl} {termination_ohm:.3f} 0 0",
        f"LD 0 3 {nl} {nl} {termination_ohm - r_j:.3f} 0 0\nLD 0 1 1 1 {-r_j:.3f} 0 0",
    )
    assert out != deck
    return out, nl


GEOMETRY = ("freq_mhz", "length_m", "height_m", "radius_m", "permittivity", "conductivity_s_per_m")


def deembedded_run(case: dict, work: Path, *, name: str, segments_per_wavelength: int = 40, engine: str = "nec2c"):
    """Run one terminated wire (``case``: GEOMETRY and termination_ohm) with NEC's junction taken out: its deck,
    the stub that measures the junction, the subtraction.  Returns (the de-embedded deck, lead segments, junction
    resistance [ohm], nec2c's output of the de-embedded deck)."""
    geometry = {k: case[k] for k in GEOMETRY}
    deck = beverage_deck(
        **geometry, termination_ohm=case["termination_ohm"], segments_per_wavelength=segments_per_wavelength
    )
    nl = int(re.search(r"^GW 1 (\d+)", deck, re.M).group(1))
    stub = stub_deck(
        freq_mhz=case["freq_mhz"],
        height_m=case["height_m"],
        segments=nl,
        radius_m=case["radius_m"],
        permittivity=case["permittivity"],
        conductivity_s_per_m=case["conductivity_s_per_m"],
    )
    r_j = junction_ohm(run_nec2c(stub, work, "stub", engine))
    deck_d, _ = deembedded_deck(deck, case["termination_ohm"], r_j)
    return deck_d, nl, r_j, run_nec2c(deck_d, work, name, engine)


def main():
    ref = json.loads((HERE / "reference.json").read_text())
    out = {"engine": "nec2c (NEC-2 in C, Debian package nec2c)", "elevation_deg": 20.0, "cases": []}
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        for case in ref["cases"] + ref["sweep"]:
            name = f"{case['name']}-deemb"
            deck_d, nl, r_j, text = deembedded_run(case, work, name=name)
            (HERE / "cases" / f"{name}.nec").write_text(deck_d)
            res = parse_output(text)
            met = metrics(res["theta_deg"], res["phi_deg"], res["gain_dbi"])
            z = res["feed_impedance_ohm"]
            out["cases"].append(
                {
                    **{k: case[k] for k in (*GEOMETRY, "termination_ohm")},
                    "name": name,
                    "deck": f"cases/{name}.nec",
                    "junction_ohm": round(r_j, 2),
                    "lead_segments": nl,
                    **{k: round(float(v), 3) for k, v in met.items()},
                    "feed_impedance_ohm": [round(z.real, 2), round(z.imag, 2)],
                }
            )
            print(out["cases"][-1])
        out["segmentation_check"] = [segmentation_check(case, work) for case in _check_cases(ref)]
    (HERE / "deembedded.json").write_text(json.dumps(out, indent=1) + "\n")


# The named outliers of tests/test_longwire.py and a well-behaved case for contrast.
CHECK = ["f183-l131-h2-s5ms", "f360-l70-h12-s1ms", "f710-l36-h2-s30ms", "f183-l150-h3-s1ms-r300"]
CHECK_SEGMENTS_PER_WAVELENGTH = [40, 80, 120, 200]


def _check_cases(ref):
    by_name = {c["name"]: c for c in ref["cases"] + ref["sweep"]}
    return [by_name[n] for n in CHECK]


def segmentation_check(case, work: Path) -> dict:
    runs = []
    for spl in CHECK_SEGMENTS_PER_WAVELENGTH:
        _, nl, r_j, text = deembedded_run(case, work, name="check", segments_per_wavelength=spl)
        res = parse_output(text)
        met = metrics(res["theta_deg"], res["phi_deg"], res["gain_dbi"])
        runs.append(
            {
                "segments_per_wavelength": spl,
                "lead_segments": nl,
                "junction_ohm": round(r_j, 2),
                **{k: round(float(v), 3) for k, v in met.items()},
            }
        )
    return {"name": f"{case['name']}-deemb", "runs": runs}


if __name__ == "__main__":
    main()
