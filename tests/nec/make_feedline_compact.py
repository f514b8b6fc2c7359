"""NEC-2 references for a short vertical whose coax shield runs to the station (run by hand; needs nec2c).

    python tests/nec/make_feedline_compact.py

The structure (x east, y north, z up; nec2c over a Sommerfeld ground, GN 2), as tests/nec/make_feedline.py builds
the Beverage's: a 6 m vertical at the origin in two wires, the bottom metre ending on the ground and carrying the
ground's resistance (the vertical's ``ground_loss``: its rod or radials), the upper 5 m the receiver's load in its
first segment; the coax shield a wire of RG-6's jacket radius from the top of the bottom metre (the shield on the
vertical's ground side) south at 1 m to the station, where a 1 m down-lead ends on the ground through the station
ground's resistance; a choke is a load in the shield's first segment.  A noise source is a short vertical dipole
(0.5-1.5 m up, fed at its middle) 10 m east of the shield's middle.  NEC's wire-to-ground junction (DESIGN.md) is
measured on stubs of the same segmentation (make_deembedded.stub_deck) and taken out by load cards.

Each case: the vertical alone, with the unchoked shield, with the shield through a choke; each run with the source
driven and with a plane wave from bearing 45 deg, 20 deg up, in each polarization.  ``loss_db``: the SNR the shield
costs with the source as the only noise (the source's power in the load less the signal's change), as
make_feedline.py stores it.  The receiver's load is resistive (``load_ohm``): the shield's share over the antenna's
own is I_A Z_ground / V_oc whatever the load, through Z_A (snrgain.model.feedline.antenna_end).  The structure spans
well under a wavelength (a 60-150 m shield at 1.83 MHz, 164 m), where Debian's nec2c is sound (DESIGN.md).
"-seg2": the bottom metre in two segments (NEC's own spread: its junction grows, 123 -> 234 ohm on 5 mS/m).
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from make_deembedded import junction_ohm, stub_deck  # noqa: E402
from make_feedline import drive, segment_currents, source_and_ground  # noqa: E402
from necdeck import run_nec2c  # noqa: E402

CASE = {
    "freq_mhz": 1.83,
    "permittivity": 13.0,
    "conductivity_s_per_m": 0.005,
    "height_m": 6.0,
    "wire_radius_m": 0.005,
    "ground_ohm": 40.0,
    "load_ohm": 200.0,
    "shield_length_m": 100.0,
    "shield_height_m": 1.0,
    "shield_radius_m": 0.00345,
    "station_ground_ohm": 25.0,
    "choke_ohm": 5000.0,
    "source_m": [10.0, -50.0],
    "source_height_m": 1.0,
    "target_bearing_deg": 45.0,
    "target_elevation_deg": 20.0,
}
CASES = [
    {**CASE, "name": "whip-s100-g40"},
    {**CASE, "name": "whip-s60-g100", "shield_length_m": 60.0, "ground_ohm": 100.0, "source_m": [10.0, -30.0]},
    {**CASE, "name": "whip-s150-g100-end", "shield_length_m": 150.0, "ground_ohm": 100.0, "source_m": [-10.0, -130.0]},
]
CASES += [{**c, "name": c["name"] + "-seg2", "bottom_segments": 2} for c in list(CASES)]
SEGMENTS_PER_WAVELENGTH = 40
C_MHZ_M = 299.792458


def deck(c: dict, *, shield: bool, choke: bool, excitation: str, r_j: float) -> str:
    """One deck: ``excitation`` "source", "v" or "h"; ``r_j`` NEC's ground junction at a 1 m lead's bottom (the same
    segmentation at the vertical's foot and the station's lead)."""
    seg = C_MHZ_M / c["freq_mhz"] / SEGMENTS_PER_WAVELENGTH
    h, hs, ls = c["height_m"], c["shield_height_m"], c["shield_length_m"]
    a, a_s = c["wire_radius_m"], c["shield_radius_m"]
    lines = [
        "CM short vertical with its coax shield to the station (snrgain feed-line validation case)",
        "CE",
        f"GW 1 {c.get('bottom_segments', 1)} 0 0 0 0 0 {hs:g} {a:g}",
        f"GW 2 10 0 0 {hs:g} 0 0 {h:g} {a:g}",
    ]
    if shield:
        lines += [
            f"GW 5 {int(np.ceil(ls / seg))} 0 0 {hs:g} 0 {-ls:g} {hs:g} {a_s:g}",
            f"GW 6 1 0 {-ls:g} {hs:g} 0 {-ls:g} 0 {a_s:g}",
        ]
    lines += [
        *source_and_ground(c, 0.001),
        f"LD 0 1 1 1 {c['ground_ohm'] - r_j['foot']:.3f} 0 0",
        f"LD 0 2 1 1 {c['load_ohm']:.3f} 0 0",
    ]
    if shield:
        lines.append(f"LD 0 6 1 1 {c['station_ground_ohm'] - r_j['station']:.3f} 0 0")
    if shield and choke:
        lines.append(f"LD 0 5 1 1 {c['choke_ohm']:.3f} 0 0")
    return "\n".join(lines + drive(c, excitation)) + "\n"


def run_case(c: dict, work: Path) -> dict:
    ground = {"permittivity": c["permittivity"], "conductivity_s_per_m": c["conductivity_s_per_m"]}
    f = c["freq_mhz"]

    def stub(segments, radius, tag):
        text = stub_deck(freq_mhz=f, height_m=c["shield_height_m"], segments=segments, radius_m=radius, **ground)
        return junction_ohm(run_nec2c(text, work, tag))

    r_j = {
        "foot": stub(c.get("bottom_segments", 1), c["wire_radius_m"], "jf"),
        "station": stub(1, c["shield_radius_m"], "js"),
    }
    out = {"case": c, "junction_ohm": {k: round(v, 3) for k, v in r_j.items()}, "runs": {}}
    for name, shield, choke in (("alone", False, False), ("shield", True, False), ("choked", True, True)):
        run = {}
        for ex in ("source", "v", "h"):
            text = deck(c, shield=shield, choke=choke, excitation=ex, r_j=r_j)
            tag = f"feedline-compact-{c['name']}-{name}-{ex}"
            (HERE / "cases" / f"{tag}.nec").write_text(text)
            cur = segment_currents(run_nec2c(text, work, tag))
            load = cur[(2, 1)]
            if ex == "source":
                load = load / cur[(7, 2)]
            run[ex] = [float(load.real), float(load.imag)]
            if shield and ex == "source":
                i_s = cur[(5, 1)] / cur[(7, 2)]
                run["shield_current_at_antenna"] = [float(i_s.real), float(i_s.imag)]
        out["runs"][name] = run
    p = {k: abs(complex(*v["source"])) ** 2 for k, v in out["runs"].items()}
    s = {k: abs(complex(*v["v"])) ** 2 + abs(complex(*v["h"])) ** 2 for k, v in out["runs"].items()}
    out["loss_db"] = {
        k: round(float(10 * np.log10(p[k] / p["alone"]) - 10 * np.log10(s[k] / s["alone"])), 3)
        for k in ("shield", "choked")
    }
    out["signal_change_db"] = {k: round(float(10 * np.log10(s[k] / s["alone"])), 3) for k in ("shield", "choked")}
    return out


def main():
    out = {"engine": "nec2c 1.3 (Debian)", "cases": []}
    with tempfile.TemporaryDirectory() as tmp:
        for c in CASES:
            res = run_case(c, Path(tmp))
            out["cases"].append(res)
            print(c["name"], {k: res[k] for k in ("junction_ohm", "loss_db", "signal_change_db")})
    (HERE / "feedline_compact.json").write_text(json.dumps(out, indent=1) + "\n")


if __name__ == "__main__":
    main()
