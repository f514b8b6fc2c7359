"""NEC-2 references for near sources around long wires: Beverages and a low wire (writes nearwire.json; run by hand).

    python tests/nec/make_nearwire.py   # Debian's nec2c (/usr/bin/nec2c); under a minute

The method is make_nearcompact.py's (read its docstring): one transmitting run per wire, its feed a voltage source,
NE cards at every source point and an RP card toward the wire's forward direction (NEC phi = 0, toward the far
end) at 20 deg elevation, gives by reciprocity what a small dipole source at each point delivers relative to what
the wire's own forward plane wave delivers.  The feed current drops out of that ratio, and with it whatever sits in
series with the feed: the feed lead's wire-to-ground junction (make_deembedded.py) among them.  The far lead's
junction does not drop out: it adds to the termination and so shapes the current (the reflected wave).  Each deck
therefore takes it out at both ends as an impedance, not a resistance alone (make_deembedded.py now does the same)
(``junction``: the input impedance of a stub of the same lead on the Sommerfeld ground less the same stub's on a
perfect ground, which is the short monopole's own; series loads LD 4 subtract it; the model's connections are then
zero ohm).  The junction is reactive: -15 ohm with its 62 ohm for a 2 m lead over 5 mS/m, -146 with 244 over
1 mS/m, -175 with 615 and -1478 with 2421 for a 0.2 m lead.  Three more coarse runs per wire: the junction's
resistance alone taken out ("-resistive", make_deembedded.py's former way), NEC's junction kept ("-raw"), and the far
end's junction taken out alone ("-feedkept", a check of the argument above: the same ratios within 0.0035 dB).
Where the reactance is large against the termination (1 mS/m; the low wire) the resistive runs leave NEC's far
end reflecting up to 0.86 of the current against the 300 ohm's 0.24 (``line_fit``, test_near_wire.py).

The engine: Debian's nec2c, not the project's patched one (tests/nec/build_nec2c.sh), which is not built here.
Packaged nec2c goes wrong only where its Sommerfeld interpolation ends: NEC-2 reads the ground's field from its
interpolation grid where the distance R from a current element to the image of the field point is under about a
wavelength (from memory of NEC-2's code, a switch near k R = 2 pi), and beyond that from the asymptotic ground wave,
whose fbar() the packaged engine breaks (nec2c-fbar.patch). ``engine_check`` finds the jump at R = 160-161 m from
the reference vertical's top (0.98 wavelength). So every wire here is shorter than a wavelength (164 m at 1.83 MHz)
and a point is kept only where R from every end of the wire, its image taken, is under MAX_R_M (157.3 m): the whole
run then never leaves the interpolation grid and the packaged engine is the patched one there. ``engine_check``
shows it on the stored nearcompact.json (the patched engine's): its reference deck's fields at 50 and 100 m are
reproduced to print precision, its 200 m ones are 152 dB off. That limit is why the Beverages are 150 m (up to 100 m
abeam its middle, 5 m off its ends) and 90 m (100 m abeam, 60 m off its ends), and no point lies 200 m away. The
source's field the model uses was checked against the same engine where it matters most, along the low wire at 0.2 m
from a horizontal dipole 4 m up (E_x over E_z: the same as NEC's to four digits over both soils; a one-off check,
not stored).

Wires (1.83 MHz; AWG 14; eps_r 13, 5 mS/m and eps_r 5, 1 mS/m, GN 2):

- Beverages 150 m and 90 m long, 2 m up, down-leads to the ground at both ends (GE 1), 500 ohm at the far lead's
  bottom; the feed at the near lead's bottom; along +x from x = 0 (the wire's favoured direction, NEC phi = 0);
- a low wire, the BOG's NEC counterpart: 100 m, bare AWG 14, at LOW_HEIGHT_M (0.2 m), with leads to the ground
  of that height, 300 ohm at its far end.  NEC-2 cannot put a wire on the soil (from memory: NEC-2 takes wires
  above the interface only, wires in the soil came with its successors NEC-3 and NEC-4).  How low it still holds was
  measured here (``low_wire_study``, over 5 mS/m at 0.05-0.5 m, three segmentations down to 1 m along the wire):
  the horizontal wire alone (open ends, centre-fed, no ground junction) gives the same gain along it within 0.01 dB
  and feed impedance within 5 % at every height down to 0.05 m (61 radii): the Sommerfeld solution of the low
  horizontal wire holds to 0.05 m at least.  What limits it is its grounded ends: the lead-to-ground junction is
  250 - 69j ohm at 0.5 m and 2.4-9.7 kohm at 0.05 m (growing as the lead's segments shorten).  With it taken out
  the terminated wire's front-to-back stays within 1.7 dB across the three segmentations at 0.2, 0.3 and 0.5 m
  (its near field 15 m abeam over its forward far field within 0.25 dB), and moves by 5.2 dB at 0.1 m and 9.5 dB
  at 0.05 m (1.1 and 2.5 dB for the near-field ratio).  So 0.2 m is the lowest height NEC-2 gives such a wire
  here, and the stored low wire stands there (the BOG family's range reaches 0.3 m).  Its finer run (two 0.1 m
  segments per lead, a 1.2 kohm junction over 5 mS/m, 4.6 kohm over 1 mS/m) is de-embedded less well than the
  coarse one (its far end's current reflection 0.27 and 0.73 away from the 300 ohm's, the coarse one's 0.02
  and 0.08).

Each run's current along the wire is also fitted as two travelling waves (``line_fit``): the propagation constant
and the far end's current reflection NEC's solution implies, to compare with the model's line and termination
without the model.

Two segmentations per wire: coarse (40 segments per wavelength along the wire, one segment per Beverage lead) and
fine (80 per wavelength, two per lead; the low wire's leads likewise); their spread is NEC's own uncertainty. Source
points: abeam the middle ("abeam", NEC phi 90 deg from the middle), off the far end ("beyond") and behind the feed
("behind"), at 5-100 m from the wire (abeam: from the wire; off the ends: from that end) and 2, 4, 6, 10 m up; near
fields stored as complex E [east, north, up] in V/m for 1 V at the feed. NEC's x is east, y north.
"""

from __future__ import annotations

import json
import re
import sys
import tempfile
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))

from tests.nec.make_nearcompact import far_field, near_fields  # noqa: E402
from tests.nec.necdeck import junction_impedance, run_nec2c  # noqa: E402

FREQ_MHZ = 1.83
WAVELENGTH_M = 299.792458 / FREQ_MHZ
MAX_R_M = 0.96 * WAVELENGTH_M
"""The farthest a source point's image may be from any part of a wire: inside NEC-2's interpolation grid."""
GROUNDS = {"loam": (13.0, 0.005), "dry": (5.0, 0.001)}
AWG14_M = 0.0008138
FORWARD_ELEVATION_DEG = 20.0
HEIGHTS_M = [2.0, 4.0, 6.0, 10.0]
DISTANCES_M = [5.0, 10.0, 15.0, 30.0, 60.0, 100.0]
SEGMENTS_PER_WAVELENGTH = [40, 80]
LEAD_SEGMENTS = [1, 2]
WIRES = {
    "bev150": {"length_m": 150.0, "height_m": 2.0, "termination_ohm": 500.0},
    "bev90": {"length_m": 90.0, "height_m": 2.0, "termination_ohm": 500.0},
}
COMPACT_REFERENCE_HEIGHT_M = 299.792458 / FREQ_MHZ / 4
"""nearcompact.json's quarter-wave reference (the engine check's antenna)."""
LOW_HEIGHT_M = 0.2
LOW_WIRE = {"length_m": 100.0, "height_m": LOW_HEIGHT_M, "termination_ohm": 300.0}
LOW_HEIGHTS_M = [0.05, 0.1, 0.2, 0.3, 0.5]
STUDY_SEGMENTATIONS = [(40, 1), (80, 2), (160, 4)]
"""(segments per wavelength along the wire, per lead) of the low-wire study: down to 1 m along it."""


def wire_cards(w: dict, ground, spl: int, nl: int, z_j: complex | None, *, feed_end: bool = True) -> list[str]:
    """GW/GE/GN/LD cards of a terminated wire with leads; ``z_j`` the junction's impedance taken out at both ends
    by series loads (LD 4: resistance and reactance at the frequency; None: NEC's junction kept), at the far end
    alone with ``feed_end`` False."""
    length, h = w["length_m"], w["height_m"]
    ns = int(np.ceil(length / (WAVELENGTH_M / spl)))
    cards = [
        f"GW 1 {nl} 0 0 0 0 0 {h:g} {AWG14_M:g}",
        f"GW 2 {ns} 0 0 {h:g} {length:g} 0 {h:g} {AWG14_M:g}",
        f"GW 3 {nl} {length:g} 0 {h:g} {length:g} 0 0 {AWG14_M:g}",
        "GE 1",
        f"GN 2 0 0 0 {ground[0]:g} {ground[1]:g}",
    ]
    zj = 0j if z_j is None else complex(z_j)
    cards.append(f"LD 4 3 {nl} {nl} {w['termination_ohm'] - zj.real:.3f} {-zj.imag:.3f}")
    if zj and feed_end:
        cards.append(f"LD 4 1 1 1 {-zj.real:.3f} {-zj.imag:.3f}")
    return cards


def deck(name: str, w: dict, ground, spl: int, nl: int, z_j: complex | None, pts: list[dict], **kw) -> str:
    lines = [f"CM {name}: transmitting, near fields at source points (snrgain near-source validation case)", "CE"]
    lines += wire_cards(w, ground, spl, nl, z_j, **kw)
    lines += [f"FR 0 1 0 0 {FREQ_MHZ:g} 0", "EX 0 1 1 0 1 0"]
    for p in pts:
        x, y, z = p["xyz_m"]
        lines.append(f"NE 0 1 1 1 {x:.4f} {y:.4f} {z:.4f} 0 0 0")
    lines += [f"RP 0 1 1 1000 {90.0 - FORWARD_ELEVATION_DEG:g} 0 0 0", "EN"]
    return "\n".join(lines) + "\n"


def farthest_image_m(w: dict, xyz) -> float:
    """The largest distance from a wire's corners to the image of a point [m] (the wire is straight between them)."""
    x, y, z = xyz
    length, h = w["length_m"], w["height_m"]
    return max(float(np.sqrt((x - cx) ** 2 + y**2 + (z + cz) ** 2)) for cx in (0.0, length) for cz in (0.0, h))


def points(w: dict) -> list[dict]:
    """The source points kept around a wire: place, distance, height, [x, y, z] [m] (inside NEC's grid)."""
    length = w["length_m"]
    out = []
    for place in ("abeam", "beyond", "behind"):
        for d in DISTANCES_M:
            for h in HEIGHTS_M:
                x, y = {"abeam": (length / 2, d), "beyond": (length + d, 0.0), "behind": (-d, 0.0)}[place]
                if farthest_image_m(w, (x, y, h)) < MAX_R_M:
                    out.append({"place": place, "distance_m": d, "height_m": h, "xyz_m": [x, y, h]})
    return out


def junction(w: dict, ground, nl: int, work: Path) -> complex:
    """NEC's wire-to-ground junction at a lead of the wire's height and ``nl`` segments [ohm]: the input impedance of
    that lead alone standing on the Sommerfeld ground less the same stub's over a perfect ground (GN 1, no junction),
    which takes out the short monopole's own reactance and leaves the junction's resistance and reactance
    (necdeck.junction_impedance, which make_deembedded.py uses too)."""
    return junction_impedance(
        freq_mhz=FREQ_MHZ,
        height_m=w["height_m"],
        segments=nl,
        radius_m=AWG14_M,
        permittivity=ground[0],
        conductivity_s_per_m=ground[1],
        workdir=work,
    )


def feed_impedance(text: str) -> list[float]:
    m = re.search(
        r"ANTENNA INPUT PARAMETERS.*?\n.*?\n.*?\n\s*\d+\s+\d+\s+\S+\s+\S+\s+\S+\s+\S+\s+(\S+)\s+(\S+)", text, re.S
    )
    return [float(m.group(1)), float(m.group(2))]


def wire_currents(text: str, tag: int = 2) -> tuple[np.ndarray, np.ndarray]:
    """(x [m], complex current [A]) of the segments of wire ``tag`` from nec2c's current table (x in wavelengths)."""
    i = text.index("CURRENTS AND LOCATION")
    xs, cs = [], []
    for line in text[i:].splitlines()[5:]:
        parts = line.split()
        if len(parts) < 10:
            if xs:
                break
            continue
        try:
            if int(parts[1]) == tag:
                xs.append(float(parts[2]) * WAVELENGTH_M)
                cs.append(complex(float(parts[6]), float(parts[7])))
        except ValueError:
            break
    return np.array(xs), np.array(cs)


def line_fit(x: np.ndarray, current: np.ndarray, length_m: float) -> dict:
    """The wire's current as two travelling waves, A exp(-gamma x) + B exp(+gamma x), fitted by least squares over
    gamma (the along-wire propagation constant): gamma [1/m], the far end's current reflection B exp(gamma L) /
    (A exp(-gamma L)) and the fit's relative residual.  What NEC's current says of the line and of the far load,
    independent of the model."""
    from scipy.optimize import least_squares

    k = 2 * np.pi / WAVELENGTH_M

    def parts(v):
        g = v[0] + 1j * v[1]
        m = np.column_stack([np.exp(-g * x), np.exp(g * x)])
        c = np.linalg.lstsq(m, current, rcond=None)[0]
        return g, c, m @ c - current

    def resid(v):
        r = parts(v)[2]
        return np.concatenate([r.real, r.imag])

    best = min(
        (least_squares(resid, [0.002, k / vf], x_scale=[0.001, 0.01]) for vf in (0.6, 0.75, 0.9)),
        key=lambda r: r.cost,
    )
    g, c, r = parts(best.x)
    rho = c[1] * np.exp(g * length_m) / (c[0] * np.exp(-g * length_m))
    return {
        "gamma_per_m": [float(g.real), float(g.imag)],
        "velocity_factor": float(k / g.imag),
        "far_current_reflection": [float(rho.real), float(rho.imag)],
        "residual": float(np.linalg.norm(r) / np.linalg.norm(current)),
    }


VARIANTS = {"": "complex", "-resistive": "resistive", "-raw": None, "-feedkept": "far end only"}
"""Run name suffix: how NEC's junction is taken out (its impedance, its resistance alone, not at all, or its
impedance at the far end alone: the feed end's junction, in series with the feed, must drop out of the ratio)."""


def one_run(name, w, gname, seg, work, *, variant="", pts=None) -> dict:
    ground = GROUNDS[gname]
    spl, nl = SEGMENTS_PER_WAVELENGTH[seg], LEAD_SEGMENTS[seg]
    pts = points(w) if pts is None else pts
    z_j = junction(w, ground, nl, work)
    how = VARIANTS[variant]
    taken = None if how is None else (complex(z_j.real, 0.0) if how == "resistive" else z_j)
    text_deck = deck(name, w, ground, spl, nl, taken, pts, feed_end=how != "far end only")
    text = run_nec2c(text_deck, work, "near")
    fields = near_fields(text)
    assert len(fields) == len(pts)
    label = ["coarse", "fine"][seg] + variant
    deck_name = f"cases/nearwire-{name}-{gname}-{label}.nec"
    (HERE / deck_name).write_text(text_deck)
    return {
        "wire": name,
        "ground": gname,
        "segmentation": label,
        "deck": deck_name,
        "segments_per_wavelength": spl,
        "lead_segments": nl,
        "junction_ohm": [round(z_j.real, 2), round(z_j.imag, 2)],
        "junction_taken_out": how,
        "feed_impedance_ohm": feed_impedance(text),
        "line_fit": line_fit(*wire_currents(text), w["length_m"]),
        "forward": far_field(text),
        "points": [{**p, "e": [[float(f"{v:.6g}") for v in c] for c in e]} for p, e in zip(pts, fields)],
    }


def engine_check(work: Path) -> dict:
    """The stored nearcompact.json reference run (patched engine, coarse, loam) against Debian's nec2c on the same
    deck: the fields at 50 m (every image under a wavelength away) and at 200 m (beyond)."""
    ref = json.loads((HERE / "nearcompact.json").read_text())
    run = next(
        r for r in ref["runs"] if (r["antenna"], r["ground"], r["segmentation"]) == ("reference", "loam", "coarse")
    )
    text = run_nec2c((HERE / run["deck"]).read_text(), work, "ref")
    fields = near_fields(text)
    out = []
    for p, e in zip(run["points"], fields):
        if p["height_m"] == 2.0 and p["distance_m"] in (50.0, 100.0, 200.0):
            stored = complex(*p["e"][2])
            here = complex(*e[2])
            out.append(
                {
                    "distance_m": p["distance_m"],
                    "height_m": 2.0,
                    "ez_patched": [stored.real, stored.imag],
                    "ez_packaged": [here.real, here.imag],
                    "ratio_db": float(20 * np.log10(abs(here) / abs(stored))),
                }
            )
    # Where the packaged engine leaves the grid: R E_z of the reference (41 m tall) at 140-156 m, 2 and 30 m up,
    # against the largest image distance from its wire (from its top, R = hypot(rho, z + 41 m)).
    deck = (HERE / run["deck"]).read_text().splitlines()
    top = COMPACT_REFERENCE_HEIGHT_M
    rho = [140.0, 144.0, 146.0, 148.0, 150.0, 152.0, 154.0, 155.0, 156.0]
    edge = []
    for z in (2.0, 30.0):
        cards = [c for c in deck if not c.startswith(("NE", "RP", "EN"))]
        cards += [f"NE 0 1 1 1 {r:g} 0 {z:g} 0 0 0" for r in rho] + ["EN"]
        fields = near_fields(run_nec2c("\n".join(cards) + "\n", work, "edge"))
        edge += [
            {
                "rho_m": r,
                "height_m": z,
                "image_distance_m": float(np.hypot(r, z + top)),
                "r_ez_db": float(20 * np.log10(r * abs(complex(*e[2])))),
            }
            for r, e in zip(rho, fields)
        ]
    return {
        "deck": run["deck"],
        "what": "E_z [V/m] of the quarter-wave reference, 1 V at its base",
        "points": out,
        "edge": edge,
    }


def low_wire_study(work: Path) -> dict:
    """How low NEC-2's Sommerfeld thin-wire solution of a horizontal wire is trusted: LOW_WIRE at each of
    LOW_HEIGHTS_M over loam, coarse and fine, junction taken out, the forward gain (RP at 20 deg), the
    front-to-back at 20 deg and the near field's ratio at one point 15 m abeam, 2 m up, to the forward far field.
    A height is trusted where the two segmentations agree and the next height up moves the figures smoothly."""
    out = []
    for h in LOW_HEIGHTS_M:
        w = {**LOW_WIRE, "height_m": h}
        for seg, (spl, nl) in enumerate(STUDY_SEGMENTATIONS):
            ground = GROUNDS["loam"]
            z_j = junction(w, ground, nl, work)
            cards = wire_cards(w, ground, spl, nl, z_j)
            pt = [50.0, 15.0, 2.0]
            lines = ["CM low wire height study", "CE", *cards, f"FR 0 1 0 0 {FREQ_MHZ:g} 0", "EX 0 1 1 0 1 0"]
            lines += [f"NE 0 1 1 1 {pt[0]:g} {pt[1]:g} {pt[2]:g} 0 0 0"]
            lines += [f"RP 0 1 2 1000 {90.0 - FORWARD_ELEVATION_DEG:g} 0 0 180", "EN"]
            text = run_nec2c("\n".join(lines) + "\n", work, "low")
            gains = _rp_gains(text)
            fwd = far_field(text)
            e = np.array([complex(*c) for c in near_fields(text)[0]])
            f2 = abs(complex(*fwd["e_theta"])) ** 2 + abs(complex(*fwd["e_phi"])) ** 2
            out.append(
                {
                    "height_m": h,
                    "segmentation": ["coarse", "fine", "finest"][seg],
                    "segments_per_wavelength": spl,
                    "lead_segments": nl,
                    "junction_ohm": [round(z_j.real, 2), round(z_j.imag, 2)],
                    "feed_impedance_ohm": feed_impedance(text),
                    "forward_gain_dbi": gains[0],
                    "front_to_back_db": gains[0] - gains[1],
                    "near_ez_over_forward_db": float(10 * np.log10(abs(e[2]) ** 2 / f2)),
                }
            )
            print("low", h, seg, out[-1], flush=True)
    return {"wire": LOW_WIRE, "near_point_m": [50.0, 15.0, 2.0], "runs": out}


def open_wire_study(work: Path) -> list[dict]:
    """The horizontal wire alone, without leads or ground junctions: LOW_WIRE's length, open ends, fed at its middle
    segment, at each of LOW_HEIGHTS_M over loam and STUDY_SEGMENTATIONS: its feed impedance and its gain along the
    wire at 20 deg (NEC-2's Sommerfeld thin-wire solution of a low horizontal wire, nothing else)."""
    out = []
    ground = GROUNDS["loam"]
    for h in LOW_HEIGHTS_M:
        for seg, (spl, _) in enumerate(STUDY_SEGMENTATIONS):
            ns = int(np.ceil(LOW_WIRE["length_m"] / (WAVELENGTH_M / spl))) | 1  # odd: a middle segment
            lines = ["CM open low wire height study", "CE", f"GW 1 {ns} 0 0 {h:g} {LOW_WIRE['length_m']:g} 0 {h:g}"]
            lines[-1] += f" {AWG14_M:g}"
            lines += ["GE 0", f"GN 2 0 0 0 {ground[0]:g} {ground[1]:g}", f"FR 0 1 0 0 {FREQ_MHZ:g} 0"]
            lines += [f"EX 0 1 {ns // 2 + 1} 0 1 0", f"RP 0 1 1 1000 {90.0 - FORWARD_ELEVATION_DEG:g} 0 0 0", "EN"]
            text = run_nec2c("\n".join(lines) + "\n", work, "open")
            out.append(
                {
                    "height_m": h,
                    "segmentation": ["coarse", "fine", "finest"][seg],
                    "segments": ns,
                    "feed_impedance_ohm": feed_impedance(text),
                    "gain_along_dbi": _rp_gains(text)[0],
                }
            )
            print("open", out[-1], flush=True)
    return out


def _rp_gains(text: str) -> list[float]:
    block = text.split("RADIATION PATTERNS")[1]
    gains = []
    for line in block.splitlines():
        parts = line.split()
        if len(parts) == 12 and parts[7] in ("LINEAR", "RIGHT", "LEFT"):
            gains.append(float(parts[4]))
    return gains


def main():
    out = {
        "engine": "nec2c 1.3 as packaged by Debian (/usr/bin/nec2c); every run inside its Sommerfeld interpolation",
        "freq_mhz": FREQ_MHZ,
        "forward_elevation_deg": FORWARD_ELEVATION_DEG,
        "max_image_distance_m": MAX_R_M,
        "grounds": {k: {"permittivity": e, "conductivity_s_per_m": s} for k, (e, s) in GROUNDS.items()},
        "radius_m": AWG14_M,
        "wires": {**WIRES, "low": LOW_WIRE},
        "runs": [],
    }
    (HERE / "cases").mkdir(exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        out["engine_check"] = engine_check(work)
        print(out["engine_check"], flush=True)
        for name, w in [*WIRES.items(), ("low", LOW_WIRE)]:
            for gname in GROUNDS:
                for seg in (0, 1):
                    out["runs"].append(one_run(name, w, gname, seg, work))
                    print(name, gname, seg, out["runs"][-1]["junction_ohm"], len(out["runs"][-1]["points"]), flush=True)
                for variant in ("-resistive", "-raw", "-feedkept"):
                    out["runs"].append(one_run(name, w, gname, 0, work, variant=variant))
        out["low_wire_study"] = low_wire_study(work)
        out["low_wire_study"]["open_wire"] = open_wire_study(work)
    (HERE / "nearwire.json").write_text(json.dumps(out, indent=0) + "\n")


if __name__ == "__main__":
    main()
