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

A flag (``"antenna": "flag"``): a terminated rectangle 9 m by 4.5 m, its bottom 1 m up, in the x-z plane from the
feed (x = 0) east, AWG 14, its two halves parting 0.1 m either side of the middle of each short side (the outline
of snrgain.antennas.termloop.loop_polygon, as tests/nec/make_nearcompact.py builds it): the receiver's load (the
flag's transformer load, ``load_ohm``) across the feed's bridge, the 900 ohm termination across the far one.  The
shield leaves the lower half's terminal at the feed, drops to 1 m slanting south at 45 deg (clear of the lower
half's side under the feed) and runs on south to the station as the whip's does (the station as far south);
nothing of the flag touches the ground (the shield's only way to the earth is the flag's capacitance and the
station's ground).  A choke is a load in the drop's first segment.  "-fine": the flag and the drop at 0.15
m steps instead of 0.3 m, the run at 0.5 m instead of 1 m (NEC's own spread).
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
from make_feedline import drive, segment_currents, shield_loads, source_and_ground  # noqa: E402
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
FLAG_CASE = {
    **CASE,
    "antenna": "flag",
    "width_m": 9.0,
    "loop_height_m": 4.5,
    "height_m": 1.0,
    "wire_radius_m": 0.0008138,
    "termination_ohm": 900.0,
    "gap_m": 0.1,
    "steps_m": [0.3, 1.0],
    "target_bearing_deg": 270.0,
}
FLAG_CASE.pop("ground_ohm")
FLAG_CASES = [
    {**FLAG_CASE, "name": "flag-s100"},
    {**FLAG_CASE, "name": "flag-s60", "shield_length_m": 60.0, "source_m": [10.0, -30.0]},
    {**FLAG_CASE, "name": "flag-s150-end", "shield_length_m": 150.0, "source_m": [-10.0, -130.0]},
]
FLAG_CASES += [{**c, "name": c["name"] + "-fine", "steps_m": [0.15, 0.5]} for c in list(FLAG_CASES)]
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
    lines += shield_loads(c, r_j["station"], 5, shield=shield, choke=choke)
    return "\n".join(lines + drive(c, excitation)) + "\n"


def flag_outline(c: dict):
    """The flag's two halves (upper, lower) as 3D corner lists in the x-z plane, parted by ``gap_m`` at the feed and
    at the termination (snrgain.antennas.termloop.loop_polygon's rectangle)."""
    w, z1 = c["width_m"], c["height_m"]
    z2, zm, g = z1 + c["loop_height_m"], z1 + c["loop_height_m"] / 2, c["gap_m"]
    upper = [(0.0, zm + g), (0.0, z2), (w, z2), (w, zm + g)]
    lower = [(0.0, zm - g), (0.0, z1), (w, z1), (w, zm - g)]
    return [np.array([x, 0.0, z]) for x, z in upper], [np.array([x, 0.0, z]) for x, z in lower]


def flag_deck(c: dict, *, shield: bool, choke: bool, excitation: str, r_j: float) -> str:
    """One deck of the flag (tags 10-17: the upper half's three sides, the lower's, the feed's bridge, the
    termination's); the shield: tag 4 the drop from the lower half's terminal to the run's height, tag 5 the run
    south, tag 6 the station's lead to the ground; the source tag 7 (make_feedline.source_and_ground)."""
    step, run_step = c["steps_m"]
    a, a_s, hs, ls = c["wire_radius_m"], c["shield_radius_m"], c["shield_height_m"], c["shield_length_m"]
    upper, lower = flag_outline(c)
    lines = ["CM flag with its coax shield to the station (snrgain feed-line validation case)", "CE"]
    tag = 10
    for path in (upper, lower):
        for p, q in zip(path[:-1], path[1:]):
            n = max(1, int(np.ceil(np.linalg.norm(q - p) / step)))
            lines.append(f"GW {tag} {n} {p[0]:.4f} 0 {p[2]:.4f} {q[0]:.4f} 0 {q[2]:.4f} {a:g}")
            tag += 1
    feed, term = tag, tag + 1
    lines.append(f"GW {feed} 1 0 0 {lower[0][2]:.4f} 0 0 {upper[0][2]:.4f} {a:g}")
    lines.append(f"GW {term} 1 {upper[-1][0]:.4f} 0 {upper[-1][2]:.4f} {lower[-1][0]:.4f} 0 {lower[-1][2]:.4f} {a:g}")
    if shield:
        top = lower[0][2]
        off = top - hs  # the drop slants south at 45 deg, clear of the lower half's side below the feed
        lines += [
            f"GW 4 {max(1, int(np.ceil(off * np.sqrt(2) / step)))} 0 0 {top:.4f} 0 {-off:.4f} {hs:g} {a_s:g}",
            f"GW 5 {int(np.ceil((ls - off) / run_step))} 0 {-off:.4f} {hs:g} 0 {-ls:g} {hs:g} {a_s:g}",
            f"GW 6 1 0 {-ls:g} {hs:g} 0 {-ls:g} 0 {a_s:g}",
        ]
    lines += [
        *source_and_ground(c, 0.001),
        f"LD 0 {feed} 1 1 {c['load_ohm']:.3f} 0 0",
        f"LD 0 {term} 1 1 {c['termination_ohm']:.3f} 0 0",
    ]
    lines += shield_loads(c, r_j["station"], 4, shield=shield, choke=choke)
    return "\n".join(lines + drive(c, excitation)) + "\n"


def run_case(c: dict, work: Path) -> dict:
    ground = {"permittivity": c["permittivity"], "conductivity_s_per_m": c["conductivity_s_per_m"]}
    f = c["freq_mhz"]

    def stub(segments, radius, tag):
        text = stub_deck(freq_mhz=f, height_m=c["shield_height_m"], segments=segments, radius_m=radius, **ground)
        return junction_ohm(run_nec2c(text, work, tag))

    flag = c.get("antenna") == "flag"
    r_j = {"station": stub(1, c["shield_radius_m"], "js")}
    if not flag:
        r_j = {"foot": stub(c.get("bottom_segments", 1), c["wire_radius_m"], "jf"), **r_j}
    feed = (16, 1) if flag else (2, 1)
    out = {"case": c, "junction_ohm": {k: round(v, 3) for k, v in r_j.items()}, "runs": {}}
    for name, shield, choke in (("alone", False, False), ("shield", True, False), ("choked", True, True)):
        run = {}
        for ex in ("source", "v", "h"):
            text = (flag_deck if flag else deck)(c, shield=shield, choke=choke, excitation=ex, r_j=r_j)
            tag = f"feedline-compact-{c['name']}-{name}-{ex}"
            (HERE / "cases" / f"{tag}.nec").write_text(text)
            cur = segment_currents(run_nec2c(text, work, tag))
            load = cur[feed]
            if ex == "source":
                load = load / cur[(7, 2)]
            run[ex] = [float(load.real), float(load.imag)]
            if shield and ex == "source":
                i_s = cur[(4, 1) if flag else (5, 1)] / cur[(7, 2)]
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


def flag_spec(c: dict) -> dict:
    """A flag case's antenna as snrgain's terminated loop takes it (the tests build the model from it too)."""
    return {
        "family": "terminated-loop",
        "width": f"{c['width_m']} m",
        "loop_height": f"{c['loop_height_m']} m",
        "height": f"{c['height_m']} m",
        "termination": f"{c['termination_ohm']} ohm",
        "diameter": f"{2 * c['wire_radius_m']} m",
        "ground": {"conductivity": f"{c['conductivity_s_per_m']} S/m", "permittivity": c["permittivity"]},
    }


def flag_load_ohm(c: dict) -> float:
    """The flag's receiver load as snrgain's terminated loop takes it (its transformer's, at the case's frequency)."""
    from snrgain.antennas import from_spec

    return round(float(from_spec(flag_spec(c)).receiver_load_ohm(c["freq_mhz"] * 1e6)), 3)


def main():
    sys.path.insert(0, str(HERE.parents[1]))
    out = {"engine": "nec2c 1.3 (Debian)", "cases": []}
    with tempfile.TemporaryDirectory() as tmp:
        for c in CASES + [{**f, "load_ohm": flag_load_ohm(f)} for f in FLAG_CASES]:
            res = run_case(c, Path(tmp))
            out["cases"].append(res)
            print(c["name"], {k: res[k] for k in ("junction_ohm", "loss_db", "signal_change_db")})
    (HERE / "feedline_compact.json").write_text(json.dumps(out, indent=1) + "\n")


if __name__ == "__main__":
    main()
