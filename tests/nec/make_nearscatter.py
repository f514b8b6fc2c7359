"""NEC-2 references for near sources heard by antennas standing beside the transmitting vertical (writes
nearscatter.json; run by hand).

    python tests/nec/make_nearscatter.py   # Debian's nec2c (/usr/bin/nec2c); under a minute

The method is make_nearcompact.py's (its docstring): by reciprocity what a small dipole source of moment p at a
point delivers to an antenna follows from the field the antenna makes there when it transmits from its own port(s)
with its loads in place.  Here the antenna transmits with the site's transmitting vertical standing beside it as a
loaded wire, so the field at the source point holds the vertical's re-radiation as well, and the same run without
the vertical gives the antenna alone: the two isolate what the vertical changes in what the antenna hears of a
near source.

- the whip (one port): the open-circuit voltage a source induces is E_A(r_s) . p / I_A, I_A the feed current of the
  transmitting run (the feed's series junction drops out of that ratio); the base current is stored per run;
- the pair (two ports, each a voltage source behind its 5 kohm load): the sum over the ports of drive voltage times
  the current the source drives into that port's load is E_A(r_s) . p for the stored drive (1 V and 1 V at
  -150 deg), with the vertical present or not: the same phasing network before and after.

Each run also carries the far field toward the antenna's forward direction at 20 deg elevation (an RP card), for
the candidate-to-reference ratio the way tests/test_near_compact.py forms it, and the reference run is the
project's quarter-wave vertical (the same wire as the TX vertical) alone, fed at its base, with the points 50 m
from it that test takes the reference's reading from.

Geometry (1.83 MHz; Sommerfeld ground eps_r 13, 5 mS/m, GN 2; NEC's x east, y north, phi from +x
counterclockwise):

- TX vertical: 40.955 m (a quarter wave), radius 25 mm, base loaded by 50 ohm (resonant: a transmitter's feed)
  plus the project's 10 ohm of radial loss, NEC's wire-to-ground junction measured on a stub of its bottom segment
  (necdeck.junction_impedance) and taken out by the same LD 4 card (as make_scatter.py does with the resistance);
- whip: 6 m, radius 5 mm, at the origin, the TX vertical 25 m north of it (0, 25);
- pair: make_scatter.py's (two 6 m AWG 14 verticals at x = 0 and 15 m, base loads of 5 kohm less their junction,
  the one at x = 15 m driven at -150 deg, favouring phi = 0), the TX vertical 25 m from the pair's centre (7.5, 0)
  broadside (north: (7.5, 25)) or behind it (west: (-17.5, 0)).

The pair's rear nulls at low elevation (NEC, this deck without the vertical, both segmentations): phi = 156 deg and
its mirror 204 deg (at 5 deg elevation; 157 at 10, 160 at 15, 165 at 20; each over 50 dB below the forward lobe).
Source points, by place and distance from the antenna's centre, 2 and 4 m up:

- whip: toward the vertical (phi 90: 10 m, between them), beyond it (phi 90: 40, 50, 60 m, 15-35 m past it), to
  the side (phi 0: 10, 30, 60 m), away from it (phi 270: 10, 30, 60 m);
- pair: on each null bearing (phi 156 and 204: 10, 20, 30, 45, 60 m), in front (phi 0: 10, 30, 60 m), behind
  (phi 180: 10, 30, 60 m, the 30 m point left out with the vertical behind: 5 m from it) and beyond the vertical
  (its bearing from the centre: 40, 50, 60 m).

A direct check of the reciprocity step with the vertical present is stored too: the whip (coarse) with the loaded
TX vertical 25 m north and a real 1 m vertical source wire (centred 2 m up, 5 segments, fed in its middle) beyond
the vertical (50 m north of the whip) and to the side (10 m east): the ratio of the whip's short-circuit base
currents must be the ratio of the whip's transmitted E_z at the two points in the run with the vertical.

Two segmentations (coarse: TX 20 segments, whip and pair elements 6; fine: twice as many), both stored: their
spread is NEC's own uncertainty.  Spans stay under 100 m (0.6 wavelength), where Debian's nec2c is sound
(make_nearcompact.py: it gives the patched engine's fields to 100 m bit for bit).  The decks of the coarse runs go
to cases/nearscatter-*.nec.
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))

from tests.nec.make_nearcompact import far_field, near_fields  # noqa: E402
from tests.nec.necdeck import base_currents, junction_impedance, run_nec2c  # noqa: E402

ENGINE = "/usr/bin/nec2c"
FREQ_MHZ = 1.83
GROUND = (13.0, 0.005)
AWG14_M = 0.0008138
FORWARD_ELEVATION_DEG = 20.0
HEIGHTS_M = [2.0, 4.0]
TX = {
    "height_m": 299.792458 / FREQ_MHZ / 4,
    "radius_m": 0.025,
    "segments": [20, 40],
    "load_ohm": 50.0,
    "ground_loss_ohm": 10.0,
}
WHIP = {"height_m": 6.0, "radius_m": 0.005, "segments": [6, 12]}
PAIR = {"height_m": 6.0, "spacing_m": 15.0, "load_ohm": 5000.0, "phase_deg": -150.0, "segments": [6, 12]}
NULL_PHI_DEG = (156.0, 204.0)
# case: (antenna, centre [x, y], TX vertical [x, y], {place: (NEC phi from the centre, distances)})
CASES = {
    "whip-north": (
        "whip",
        (0.0, 0.0),
        (0.0, 25.0),
        {
            "toward": (90.0, [10.0]),
            "beyond": (90.0, [40.0, 50.0, 60.0]),
            "side": (0.0, [10.0, 30.0, 60.0]),
            "away": (270.0, [10.0, 30.0, 60.0]),
        },
    ),
    "pair-broadside": (
        "pair",
        (7.5, 0.0),
        (7.5, 25.0),
        {
            "null": (NULL_PHI_DEG[0], [10.0, 20.0, 30.0, 45.0, 60.0]),
            "null-mirror": (NULL_PHI_DEG[1], [10.0, 20.0, 30.0, 45.0, 60.0]),
            "front": (0.0, [10.0, 30.0, 60.0]),
            "back": (180.0, [10.0, 30.0, 60.0]),
            "beyond": (90.0, [40.0, 50.0, 60.0]),
        },
    ),
    "pair-behind": (
        "pair",
        (7.5, 0.0),
        (-17.5, 0.0),
        {
            "null": (NULL_PHI_DEG[0], [10.0, 20.0, 30.0, 45.0, 60.0]),
            "null-mirror": (NULL_PHI_DEG[1], [10.0, 20.0, 30.0, 45.0, 60.0]),
            "front": (0.0, [10.0, 30.0, 60.0]),
            "back": (180.0, [10.0]),
            "beyond": (180.0, [40.0, 50.0, 60.0]),
        },
    ),
}
REFERENCE_DISTANCE_M = 50.0
REFERENCE_PHI_DEG = 45.0


def points(case: str) -> list[dict]:
    """The source points of a case: place, NEC phi, distance from the antenna's centre, height, [x, y, z] [m]."""
    _, centre, _, places = CASES[case]
    out = []
    for place, (phi, distances) in places.items():
        for d in distances:
            for h in HEIGHTS_M:
                x = centre[0] + d * np.cos(np.radians(phi))
                y = centre[1] + d * np.sin(np.radians(phi))
                out.append(
                    {
                        "place": place,
                        "phi_deg": phi,
                        "distance_m": d,
                        "height_m": h,
                        "xyz_m": [round(x, 4), round(y, 4), h],
                    }
                )
    return out


def reference_points() -> list[dict]:
    out = []
    for h in HEIGHTS_M:
        x = REFERENCE_DISTANCE_M * np.cos(np.radians(REFERENCE_PHI_DEG))
        y = REFERENCE_DISTANCE_M * np.sin(np.radians(REFERENCE_PHI_DEG))
        out.append(
            {"place": "any", "distance_m": REFERENCE_DISTANCE_M, "height_m": h, "xyz_m": [round(x, 4), round(y, 4), h]}
        )
    return out


def _junctions(fine: int, work: Path) -> dict:
    """NEC's wire-to-ground junction [ohm] under the TX vertical and the pair's elements at a segmentation."""
    out = {}
    for name, height, segs, radius in (
        ("tx", TX["height_m"], TX["segments"][fine], TX["radius_m"]),
        ("pair", PAIR["height_m"], PAIR["segments"][fine], AWG14_M),
    ):
        out[name] = junction_impedance(
            freq_mhz=FREQ_MHZ,
            height_m=height / segs,
            segments=1,
            radius_m=radius,
            permittivity=GROUND[0],
            conductivity_s_per_m=GROUND[1],
            workdir=work,
            engine=ENGINE,
        )
    return out


def deck(antenna: str, fine: int, tx_xy, pts: list[dict], zj: dict) -> str:
    """``antenna`` ("whip", "pair" or "reference") transmitting, with the loaded TX vertical at ``tx_xy`` (or none),
    NE cards at ``pts`` and an RP card toward phi = 0 at 20 deg elevation."""
    lines = [f"CM {antenna}: transmitting beside the TX vertical (snrgain near-source scatter validation case)", "CE"]
    loads, excite = [], []
    if antenna == "whip":
        lines.append(f"GW 1 {WHIP['segments'][fine]} 0 0 0 0 0 {WHIP['height_m']:g} {WHIP['radius_m']:g}")
        excite.append("EX 0 1 1 0 1 0")
        tag = 1
    elif antenna == "reference":
        lines.append(f"GW 1 {TX['segments'][fine]} 0 0 0 0 0 {TX['height_m']:.4f} {TX['radius_m']:g}")
        excite.append("EX 0 1 1 0 1 0")
        tag = 1
    else:
        n, h, s = PAIR["segments"][fine], PAIR["height_m"], PAIR["spacing_m"]
        lines.append(f"GW 1 {n} 0 0 0 0 0 {h:g} {AWG14_M:g}")
        lines.append(f"GW 2 {n} {s:g} 0 0 {s:g} 0 {h:g} {AWG14_M:g}")
        zp = zj["pair"]
        for t in (1, 2):
            loads.append(f"LD 4 {t} 1 1 {PAIR['load_ohm'] - zp.real:.3f} {-zp.imag:.3f}")
        ph = np.radians(PAIR["phase_deg"])
        excite += ["EX 0 1 1 0 1 0", f"EX 0 2 1 0 {np.cos(ph):.6f} {np.sin(ph):.6f}"]
        tag = 2
    if tx_xy is not None:
        x, y = tx_xy
        tag += 1
        lines.append(
            f"GW {tag} {TX['segments'][fine]} {x:.3f} {y:.3f} 0 {x:.3f} {y:.3f} {TX['height_m']:.4f} {TX['radius_m']:g}"
        )
        zt = zj["tx"]
        r = TX["load_ohm"] + TX["ground_loss_ohm"] - zt.real
        loads.append(f"LD 4 {tag} 1 1 {r:.3f} {-zt.imag:.3f}")
    lines += ["GE 1", f"GN 2 0 0 0 {GROUND[0]:g} {GROUND[1]:g}", *loads, f"FR 0 1 0 0 {FREQ_MHZ:g} 0", *excite]
    for p in pts:
        x, y, z = p["xyz_m"]
        lines.append(f"NE 0 1 1 1 {x:.4f} {y:.4f} {z:.4f} 0 0 0")
    lines += [f"RP 0 1 1 1000 {90.0 - FORWARD_ELEVATION_DEG:g} 0 0 0", "EN"]
    return "\n".join(lines) + "\n"


def _run(antenna, fine, tx_xy, pts, zj, work, name) -> dict:
    d = deck(antenna, fine, tx_xy, pts, zj)
    if fine == 0:
        (HERE / "cases" / f"{name}.nec").write_text(d)
    text = run_nec2c(d, work, "ns", ENGINE)
    fields = near_fields(text)
    assert len(fields) == len(pts)
    ports = 2 if antenna == "pair" else 1
    return {
        "segmentation": ["coarse", "fine"][fine],
        "deck": f"cases/{name}.nec" if fine == 0 else "the same, segments doubled",
        "feed_current_a": [[float(i.real), float(i.imag)] for i in base_currents(text, ports)],
        "forward": far_field(text),
        "e": fields,
    }


SOURCE_WIRE_POINTS_M = {"beyond-50": (0.0, 50.0), "side-10": (10.0, 0.0)}


def source_wire_deck(xy, zj: dict) -> str:
    """The whip (coarse) and the loaded TX vertical of case whip-north, with a 1 m vertical source wire centred 2 m up
    at ``xy`` fed in its middle segment; the whip's base shorted (no source there)."""
    text = deck("whip", 0, CASES["whip-north"][2], [], zj)
    lines = [ln for ln in text.splitlines() if not ln.startswith(("EX", "RP", "EN"))]
    at = next(i for i, ln in enumerate(lines) if ln.startswith("GE"))
    x, y = xy
    lines.insert(at, f"GW 9 5 {x:g} {y:g} 1.5 {x:g} {y:g} 2.5 0.001")
    lines += ["EX 0 9 3 0 1 0", "XQ", "EN"]
    return "\n".join(lines) + "\n"


def main():
    (HERE / "cases").mkdir(exist_ok=True)
    out = {
        "engine": "nec2c 1.3 (Debian package, /usr/bin/nec2c)",
        "freq_mhz": FREQ_MHZ,
        "ground": {"permittivity": GROUND[0], "conductivity_s_per_m": GROUND[1]},
        "forward_phi_deg": 0.0,
        "forward_elevation_deg": FORWARD_ELEVATION_DEG,
        "tx": TX,
        "whip": WHIP,
        "pair": PAIR,
        "null_phi_deg": list(NULL_PHI_DEG),
        "junction_ohm": {},
        "cases": [],
    }
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        zjs = [_junctions(fine, work) for fine in (0, 1)]
        for fine, zj in enumerate(zjs):
            out["junction_ohm"][["coarse", "fine"][fine]] = {
                k: [round(v.real, 3), round(v.imag, 3)] for k, v in zj.items()
            }
        for case, (antenna, centre, tx_xy, _) in CASES.items():
            pts = points(case)
            entry = {"case": case, "antenna": antenna, "centre_m": list(centre), "tx_m": list(tx_xy), "points": pts}
            for state, where in (("with", tx_xy), ("without", None)):
                entry[state] = [
                    _run(antenna, fine, where, pts, zjs[fine], work, f"nearscatter-{case}-{state}") for fine in (0, 1)
                ]
            out["cases"].append(entry)
            print(case, len(pts), flush=True)
        check = {}
        for name, xy in SOURCE_WIRE_POINTS_M.items():
            text = run_nec2c(source_wire_deck(xy, zjs[0]), work, "wire", ENGINE)
            i = base_currents(text, 1)[0]
            check[name] = {"source_m": [*xy, 2.0], "whip_base_current_a": [float(i.real), float(i.imag)]}
        out["reciprocity_check"] = {
            "what": "case whip-north (coarse, with the vertical): the whip's base current (A) with a 1 m vertical "
            "source wire centred 2 m up at each point, 1 V",
            "points": check,
        }
        pts = reference_points()
        out["reference"] = {
            "centre_m": [0.0, 0.0],
            "points": pts,
            "runs": [_run("reference", fine, None, pts, zjs[fine], work, "nearscatter-reference") for fine in (0, 1)],
        }
    (HERE / "nearscatter.json").write_text(json.dumps(out, indent=0) + "\n")


if __name__ == "__main__":
    main()
