"""NEC-2 references for a Beverage whose coax shield runs to the station (run by hand; needs nec2c).

    python tests/nec/make_feedline.py

The structure (x east, y north, z up; nec2c over a Sommerfeld ground, GN 2): a Beverage fed at the origin toward
bearing 45 deg, its feed down-lead in two wires (the bottom metre, ending on the ground, carries the feed rod's
resistance; the upper metre the receiver's load through the transformer, n^2 x 75 ohm), the wire at 2 m, the far
down-lead ending on the ground through the termination and the far rod.  The coax shield is a wire of the
cable's jacket radius from the top of the bottom metre (the transformer's shared ground) south at 1 m to the
station, where a down-lead of 1 m ends on the ground through the station ground's resistance; a choke is a load
in the shield's first segment.  A noise source is a short vertical dipole (0.5-1.5 m up, fed at its middle) 10 m
east of the shield's middle.  NEC's wire-to-ground junction (DESIGN.md) is measured on stubs of the same
segmentation (make_deembedded.stub_deck) and subtracted by load cards, so the grounds are the stated resistances.

Cases: the Beverage alone, with the unchoked shield, with the shield through a choke.  Each is run three times:
the source driven (the receiver load's current over the source's own current), and a plane wave from the
target (bearing 45 deg, 20 deg up) in each polarization (the signal: the powers of the two added).  The stored
``loss_db`` is the SNR the shield costs with the source as the only noise: the change of source power in the
load less the change of signal power.  Decks under cases/ (prefix feedline-<case>-), figures in feedline.json.

CASES: a 150 m shield on a 100 ohm feed rod, a 60 m one, a 20 ohm rod, a 100 m shield with the source near the
station; then NEC's own spread: the shield joining the feed lead 0.25 m up instead of 1 m (rising to its height
over a slanted metre; "-low"), and the feed lead's bottom metre in 2 or 4 segments ("-seg2", "-seg4").  Both make
the ground junction the deck takes out larger (234-496 ohm against 123), and NEC's loss grows with it.
The structure spans two wavelengths: the patched engine (build_nec2c.sh, or SNRGAIN_NEC2C) runs it.
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
from necdeck import patched_engine, run_nec2c  # noqa: E402

C_MHZ_M = 299.792458
CASE = {
    "freq_mhz": 1.83,
    "permittivity": 13.0,
    "conductivity_s_per_m": 0.005,
    "bev_length_m": 200.0,
    "bev_height_m": 2.0,
    "bev_bearing_deg": 45.0,
    "wire_radius_m": 0.001,
    "feed_rod_ohm": 100.0,
    "far_rod_ohm": 20.0,
    "termination_ohm": 500.0,
    "turns_ratio": 3.0,
    "coax_ohm": 75.0,
    "shield_length_m": 150.0,
    "shield_height_m": 1.0,
    "shield_radius_m": 0.00345,
    "station_ground_ohm": 25.0,
    "choke_ohm": 5000.0,
    "source_m": [10.0, -75.0],
    "source_height_m": 1.0,
    "target_bearing_deg": 45.0,
    "target_elevation_deg": 20.0,
}
CASES = [
    {**CASE, "name": "s150-rod100"},
    {**CASE, "name": "s60-rod100", "shield_length_m": 60.0, "source_m": [10.0, -30.0]},
    {**CASE, "name": "s150-rod20", "feed_rod_ohm": 20.0},
    {**CASE, "name": "s100-rod50-end", "shield_length_m": 100.0, "feed_rod_ohm": 50.0, "source_m": [-10.0, -80.0]},
    {**CASE, "name": "s150-rod20-low", "feed_rod_ohm": 20.0, "junction_m": 0.25},
    {**CASE, "name": "s150-rod100-low", "junction_m": 0.25},
    {**CASE, "name": "s150-rod20-seg2", "feed_rod_ohm": 20.0, "feed_lead_segments": 2},
    {**CASE, "name": "s150-rod20-seg4", "feed_rod_ohm": 20.0, "feed_lead_segments": 4},
    {**CASE, "name": "s150-rod100-seg2", "feed_lead_segments": 2},
    {**CASE, "name": "s60-rod100-seg2", "shield_length_m": 60.0, "source_m": [10.0, -30.0], "feed_lead_segments": 2},
    {
        **CASE,
        "name": "s100-rod50-end-seg2",
        "shield_length_m": 100.0,
        "feed_rod_ohm": 50.0,
        "source_m": [-10.0, -80.0],
        "feed_lead_segments": 2,
    },
]
"""The base case, then a shorter shield, the project's default feed rod (20 ohm), and a source near the station end."""
SEGMENTS_PER_WAVELENGTH = 40


def deck(c: dict, *, shield: bool, choke: bool, excitation: str, r_j1: float, r_j2: float, r_jf: float) -> str:
    """One deck: ``excitation`` "source", "v" or "h" (a plane wave from the target, E along theta or phi).  The
    shield joins the feed lead ``junction_m`` up (default the shield's height); below its height it rises to the
    run over a slanted metre (tag 8, the choke's place then).  ``r_jf``, ``r_j1``, ``r_j2``: NEC's ground junction
    at the feed lead's bottom, the station lead's (1 m) and the far lead's."""
    lam = C_MHZ_M / c["freq_mhz"]
    seg = lam / SEGMENTS_PER_WAVELENGTH
    b = np.radians(c["bev_bearing_deg"])
    h, hs, L, Ls = c["bev_height_m"], c["shield_height_m"], c["bev_length_m"], c["shield_length_m"]
    xe, ye = L * np.sin(b), L * np.cos(b)
    a, a_s = c["wire_radius_m"], c["shield_radius_m"]
    zj = c.get("junction_m", hs)
    lines = [
        "CM Beverage with its coax shield to the station (snrgain feed-line validation case)",
        "CE",
        f"GW 1 {c.get('feed_lead_segments', 1)} 0 0 0 0 0 {zj:g} {a:g}",
        f"GW 2 1 0 0 {zj:g} 0 0 {h:g} {a:g}",
        f"GW 3 {int(np.ceil(L / seg))} 0 0 {h:g} {xe:.4f} {ye:.4f} {h:g} {a:g}",
        f"GW 4 2 {xe:.4f} {ye:.4f} {h:g} {xe:.4f} {ye:.4f} 0 {a:g}",
    ]
    y0 = 0.0
    if shield and zj < hs:
        y0 = -1.0
        lines.append(f"GW 8 1 0 0 {zj:g} 0 {y0:g} {hs:g} {a_s:g}")
    if shield:
        lines += [
            f"GW 5 {int(np.ceil((Ls + y0) / seg))} 0 {y0:g} {hs:g} 0 {-Ls:g} {hs:g} {a_s:g}",
            f"GW 6 1 0 {-Ls:g} {hs:g} 0 {-Ls:g} 0 {a_s:g}",
        ]
    lines += [
        *source_and_ground(c, a),
        f"LD 0 1 1 1 {c['feed_rod_ohm'] - r_jf:.3f} 0 0",
        f"LD 0 2 1 1 {c['turns_ratio'] ** 2 * c['coax_ohm']:.3f} 0 0",
        f"LD 0 4 2 2 {c['termination_ohm'] + c['far_rod_ohm'] - r_j2:.3f} 0 0",
    ]
    lines += shield_loads(c, r_j1, 8 if y0 else 5, shield=shield, choke=choke)
    return "\n".join(lines + drive(c, excitation)) + "\n"


def source_and_ground(c: dict, radius_m: float) -> list[str]:
    """The noise source (tag 7: a 1 m vertical wire of 3 segments at ``source_m``, ``source_height_m``), the end of
    the geometry and the Sommerfeld ground: the lines every feed-line deck shares."""
    sx, sy = c["source_m"]
    z0 = c["source_height_m"]
    return [
        f"GW 7 3 {sx:g} {sy:g} {z0 - 0.5:g} {sx:g} {sy:g} {z0 + 0.5:g} {radius_m:g}",
        "GE 1",
        f"GN 2 0 0 0 {c['permittivity']:g} {c['conductivity_s_per_m']:g}",
    ]


def shield_loads(c: dict, r_station: float, choke_tag: int, *, shield: bool, choke: bool) -> list[str]:
    """The shield's loads every feed-line deck shares: the station ground on its lead (tag 6, less NEC's junction
    resistance ``r_station``) and the choke on ``choke_tag``; none without a shield."""
    out = []
    if shield:
        out.append(f"LD 0 6 1 1 {c['station_ground_ohm'] - r_station:.3f} 0 0")
    if shield and choke:
        out.append(f"LD 0 {choke_tag} 1 1 {c['choke_ohm']:.3f} 0 0")
    return out


def drive(c: dict, excitation: str) -> list[str]:
    """The frequency and the excitation to the end of a feed-line deck: "source" (the source wire's middle segment)
    or a plane wave from the target, E along theta ("v") or phi ("h")."""
    out = [f"FR 0 1 0 0 {c['freq_mhz']:g} 0"]
    if excitation == "source":
        out.append("EX 0 7 2 0 1 0")
    else:
        theta = 90.0 - c["target_elevation_deg"]
        phi = 90.0 - c["target_bearing_deg"]  # NEC's azimuth from +x (east), counter-clockwise
        eta = 0.0 if excitation == "v" else 90.0
        out.append(f"EX 1 1 1 0 {theta:g} {phi:g} {eta:g} 0 0 0")
    return out + ["XQ", "EN"]


def segment_currents(text: str) -> dict[tuple[int, int], complex]:
    """(tag, segment within the tag) -> current [A] from nec2c's CURRENTS AND LOCATION table."""
    i = text.index("CURRENTS AND LOCATION")
    out: dict[tuple[int, int], complex] = {}
    count: dict[int, int] = {}
    for line in text[i:].splitlines()[4:]:
        parts = line.split()
        if len(parts) < 10:
            if out:
                break
            continue
        try:
            tag = int(parts[1])
            cur = complex(float(parts[6]), float(parts[7]))
        except ValueError:
            if out:
                break
            continue
        count[tag] = count.get(tag, 0) + 1
        out[(tag, count[tag])] = cur
    return out


def run_case(c: dict, work: Path, engine: str) -> dict:
    """One case's stubs and nine runs (and the Beverage alone from behind); its figures."""
    ground = {"permittivity": c["permittivity"], "conductivity_s_per_m": c["conductivity_s_per_m"]}
    f = c["freq_mhz"]
    r_j1 = junction_ohm(
        run_nec2c(
            stub_deck(freq_mhz=f, height_m=1.0, segments=1, radius_m=c["wire_radius_m"], **ground), work, "j1", engine
        )
    )
    r_j2 = junction_ohm(
        run_nec2c(
            stub_deck(freq_mhz=f, height_m=c["bev_height_m"], segments=2, radius_m=c["wire_radius_m"], **ground),
            work,
            "j2",
            engine,
        )
    )
    zj = c.get("junction_m", c["shield_height_m"])
    r_jf = r_j1
    nf = c.get("feed_lead_segments", 1)
    if zj != 1.0 or nf != 1:
        r_jf = junction_ohm(
            run_nec2c(
                stub_deck(freq_mhz=f, height_m=zj, segments=nf, radius_m=c["wire_radius_m"], **ground),
                work,
                "jf",
                engine,
            )
        )
    out = {
        "case": c,
        "junction_ohm": {"one_metre_segment": round(r_j1, 3), "far_lead": round(r_j2, 3), "feed_lead": round(r_jf, 3)},
        "runs": {},
    }
    for name, shield, choke in (("alone", False, False), ("shield", True, False), ("choked", True, True)):
        run = {}
        for ex in ("source", "v", "h"):
            text_deck = deck(c, shield=shield, choke=choke, excitation=ex, r_j1=r_j1, r_j2=r_j2, r_jf=r_jf)
            tag = f"feedline-{c['name']}-{name}-{ex}"
            (HERE / "cases" / f"{tag}.nec").write_text(text_deck)
            cur = segment_currents(run_nec2c(text_deck, work, tag, engine))
            load = cur[(2, 1)]
            if ex == "source":
                load = load / cur[(7, 2)]
            run[ex] = [float(load.real), float(load.imag)]
            if shield and ex == "source":  # the shield's current leaving the junction, over the source's
                i_s = cur[(8, 1) if (8, 1) in cur else (5, 1)] / cur[(7, 2)]
                run["shield_current_at_antenna"] = [float(i_s.real), float(i_s.imag)]
        out["runs"][name] = run
    back = dict(c, target_bearing_deg=c["target_bearing_deg"] + 180.0)
    back_deck = deck(back, shield=False, choke=False, excitation="v", r_j1=r_j1, r_j2=r_j2, r_jf=r_jf)
    (HERE / "cases" / f"feedline-{c['name']}-alone-back-v.nec").write_text(back_deck)
    i_back = segment_currents(run_nec2c(back_deck, work, "back", engine))[(2, 1)]
    p = {k: abs(complex(*v["source"])) ** 2 for k, v in out["runs"].items()}
    s = {k: abs(complex(*v["v"])) ** 2 + abs(complex(*v["h"])) ** 2 for k, v in out["runs"].items()}
    out["loss_db"] = {
        k: round(float(10 * np.log10(p[k] / p["alone"]) - 10 * np.log10(s[k] / s["alone"])), 3)
        for k in ("shield", "choked")
    }
    out["signal_change_db"] = {k: round(float(10 * np.log10(s[k] / s["alone"])), 3) for k in ("shield", "choked")}
    out["front_to_back_v_db"] = round(
        float(10 * np.log10(abs(complex(*out["runs"]["alone"]["v"])) ** 2 / abs(i_back) ** 2)), 3
    )
    return out


def main():
    engine = patched_engine()  # the structure spans two wavelengths: the packaged engine's fbar() goes wrong there
    out = {"engine": "nec2c 1.3 with the fbar() fix (build_nec2c.sh)", "cases": []}
    with tempfile.TemporaryDirectory() as tmp:
        for c in CASES:
            res = run_case(c, Path(tmp), engine)
            out["cases"].append(res)
            print(c["name"], {k: res[k] for k in ("junction_ohm", "loss_db", "signal_change_db", "front_to_back_v_db")})
    (HERE / "feedline.json").write_text(json.dumps(out, indent=1) + "\n")


if __name__ == "__main__":
    main()
