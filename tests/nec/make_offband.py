"""NEC-2 references for the antennas' response to a ground wave below their band (writes offband.json).

What the strong-signal stage (snrgain.physics.strong) needs: the power a nearby medium-wave station's ground wave
puts into each antenna's receiver load at 0.5-1.7 MHz.  NEC-2 is driven by a vertically polarised plane wave (EX 1,
unit amplitude, eta = 0) arriving from just above the horizon; over a ground, NEC-2 adds the wave reflected by the
Fresnel coefficient (its plane-wave excitation over a ground), so the vertical field at the surface is
cos(e) (1 + R_v(e)) -- small near grazing but finite.  The power into the load over |E_surface|^2 / (2 eta0) is
the aperture the ground wave sees (peak phasors throughout: NEC's currents, P = |I|^2 R / 2).  R_v here is the
textbook Fresnel coefficient (e.g. J. D. Kraus, "Antennas", 2nd ed., Section 16-3), written out below so the
reference does not lean on the project's code.

Antennas, all over moist loam (eps_r 13, 5 mS/m), AWG 14 wire:

- a Beverage 150 m long, 2.5 m up, along +x from its feed at x = 0 (favouring NEC's phi = 0): one-segment
  down-leads at both ends, 30 segments along the wire at every frequency (so the junction's segmentation stays
  the same), the receiver load n^2 x 50 ohm = 450 ohm (turns ratio 3) plus a 20 ohm feed rod at the feed, a 450
  ohm termination plus a 20 ohm far rod at the far end.  NEC's wire-to-ground junction (DESIGN.md) is measured on
  a one-segment stub of the down-lead (make_deembedded.stub_deck) at each frequency and subtracted at both ends;
  the power is 0.5 |I_feed|^2 x 450.  150 m is 0.85 wavelength at 1.7 MHz, below the span at which Debian's nec2c
  goes wrong (DESIGN.md);
- a flag 8.5 m by 4.3 m, 1.5 m up, in the x-z plane (make_scatter.flag_cards: the model's own outline), 900 ohm
  termination, its feed bridge loaded by n^2 x 50 = 800 ohm (turns ratio 4); favours phi = 180; no ground contact;
- a short vertical 6 m tall (20 segments: with 6, NEC-2 reads its effective height 8 % high over a perfect
  ground, 3.31 m against 3.05 m), standing on the ground: its open-circuit voltage from two runs (the
  input impedance Z_in with a source, then the current I into a 50 ohm base load under the plane wave:
  V_oc = I (Z_in + 50), Thevenin), both with NEC's junction in them, which cancels.  The model's vertical gives
  the power available to a matched load behind its own source resistance (radiation resistance plus its
  ground_loss), so the test compares the open-circuit voltage: the model's is sqrt(8 R P) for its R.

Frequencies 0.55, 0.9, 1.3 and 1.7 MHz; elevations 0.5 and 2 deg (the ratio must have settled); the favoured
direction and the opposite one for the directional antennas.

One more case stands for the strong-signal test site (tests/data/sites/quarry-lane-mw.toml): its 250 m Beverage,
2.5 m up, with a 500 ohm termination and a 2.5:1 transformer into 75 ohm (6.25 x 75 = 469 ohm), 20 ohm rods, at the
medium-wave station's 1.008 MHz (0.84 wavelength), the wave arriving 15 deg off the wire's bearing (the station at
60 deg, the wire at 45 deg).

Run: python tests/nec/make_offband.py  (a minute; needs nec2c on the PATH)
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))
sys.path.insert(0, str(HERE))

from make_deembedded import junction_ohm, stub_deck  # noqa: E402
from make_scatter import flag_cards  # noqa: E402
from necdeck import base_currents, run_nec2c  # noqa: E402

C_MHZ_M = 299.792458
ETA0 = 376.730313
EPS0 = 8.8541878128e-12
GROUND = {"name": "moist loam", "permittivity": 13.0, "conductivity_s_per_m": 0.005}
FREQS_MHZ = [0.55, 0.9, 1.3, 1.7]
ELEVATIONS_DEG = [0.5, 2.0]
RADIUS_M = 0.0008138  # AWG 14
COAX_OHM = 50.0
BEVERAGE = {
    "length_m": 150.0,
    "height_m": 2.5,
    "segments": 30,
    "termination_ohm": 450.0,
    "turns_ratio": 3.0,
    "feed_rod_ohm": 20.0,
    "far_rod_ohm": 20.0,
    "forward_phi_deg": 0.0,
}
FLAG = {
    "width_m": 8.5,
    "loop_height_m": 4.3,
    "height_m": 1.5,
    "termination_ohm": 900.0,
    "turns_ratio": 4.0,
    "forward_phi_deg": 180.0,
}
VERTICAL = {"height_m": 6.0, "segments": 20, "load_ohm": 50.0}
QUARRY = {
    "length_m": 250.0,
    "height_m": 2.5,
    "segments": 50,
    "termination_ohm": 500.0,
    "turns_ratio": 2.5,
    "coax_ohm": 75.0,
    "feed_rod_ohm": 20.0,
    "far_rod_ohm": 20.0,
    "freq_mhz": 1.008,
    "off_axis_deg": 15.0,
}


def fresnel_v(freq_mhz: float, elevation_deg: float) -> complex:
    """Fresnel reflection coefficient for vertical polarisation over the ground (Kraus, Section 16-3)."""
    n2 = GROUND["permittivity"] - 1j * GROUND["conductivity_s_per_m"] / (2 * np.pi * freq_mhz * 1e6 * EPS0)
    s, c = np.sin(np.radians(elevation_deg)), np.cos(np.radians(elevation_deg))
    root = np.sqrt(n2 - c**2)
    return complex((n2 * s - root) / (n2 * s + root))


def surface_field(freq_mhz: float, elevation_deg: float) -> float:
    """|vertical field at the surface| for a unit incident wave: cos(e) |1 + R_v|."""
    return float(np.cos(np.radians(elevation_deg)) * abs(1 + fresnel_v(freq_mhz, elevation_deg)))


def _gn() -> str:
    return f"GN 2 0 0 0 {GROUND['permittivity']:g} {GROUND['conductivity_s_per_m']:g}"


def _plane_wave(elevation_deg: float, phi_deg: float) -> str:
    """EX 1: a linearly polarised plane wave arriving from (theta, phi), E along theta-hat (eta = 0)."""
    return f"EX 1 1 1 0 {90.0 - elevation_deg:.4f} {phi_deg:.4f} 0 0 0 0"


def beverage_deck(freq_mhz, r_j, excitation, b=BEVERAGE) -> str:
    h, length, ns = b["height_m"], b["length_m"], b["segments"]
    feed_load = b["turns_ratio"] ** 2 * b.get("coax_ohm", COAX_OHM) + b["feed_rod_ohm"] - r_j
    far_load = b["termination_ohm"] + b["far_rod_ohm"] - r_j
    return (
        "\n".join(
            [
                "CM Beverage under a low plane wave (snrgain off-band validation case)",
                "CE",
                f"GW 1 1 0 0 0 0 0 {h:g} {RADIUS_M:g}",
                f"GW 2 {ns} 0 0 {h:g} {length:g} 0 {h:g} {RADIUS_M:g}",
                f"GW 3 1 {length:g} 0 {h:g} {length:g} 0 0 {RADIUS_M:g}",
                "GE 1",
                _gn(),
                f"LD 0 1 1 1 {feed_load:.3f} 0 0",
                f"LD 0 3 1 1 {far_load:.3f} 0 0",
                f"FR 0 1 0 0 {freq_mhz:g} 0",
                excitation,
                "XQ",
                "EN",
            ]
        )
        + "\n"
    )


def flag_deck(freq_mhz, excitation) -> str:
    cards, feed, term = flag_cards()
    load = FLAG["turns_ratio"] ** 2 * COAX_OHM
    return (
        "\n".join(
            [
                "CM flag under a low plane wave (snrgain off-band validation case)",
                "CE",
                *cards,
                "GE 0",
                _gn(),
                f"LD 0 {feed} 1 1 {load:.3f} 0 0",
                f"LD 0 {term} 1 1 {FLAG['termination_ohm']:.3f} 0 0",
                f"FR 0 1 0 0 {freq_mhz:g} 0",
                excitation,
                "XQ",
                "EN",
            ]
        )
        + "\n"
    ), feed


def vertical_deck(freq_mhz, excitation, load_ohm) -> str:
    v = VERTICAL
    lines = [
        "CM short vertical under a low plane wave (snrgain off-band validation case)",
        "CE",
        f"GW 1 {v['segments']} 0 0 0 0 0 {v['height_m']:g} {RADIUS_M:g}",
        "GE 1",
        _gn(),
    ]
    if load_ohm:
        lines.append(f"LD 0 1 1 1 {load_ohm:g} 0 0")
    lines += [f"FR 0 1 0 0 {freq_mhz:g} 0", excitation, "XQ", "EN"]
    return "\n".join(lines) + "\n"


def input_impedance(text: str) -> complex:
    import re

    m = re.search(
        r"ANTENNA INPUT PARAMETERS.*?\n.*?\n.*?\n\s*\d+\s+\d+\s+\S+\s+\S+\s+\S+\s+\S+\s+(\S+)\s+(\S+)", text, re.S
    )
    return complex(float(m.group(1)), float(m.group(2)))


def main():
    ref = {
        "engine": "nec2c (NEC-2 in C, Debian package nec2c)",
        "ground": GROUND,
        "radius_m": RADIUS_M,
        "coax_ohm": COAX_OHM,
        "beverage": BEVERAGE,
        "flag": FLAG,
        "vertical": VERTICAL,
        "quarry_note": "the strong-signal test site's Beverage at its station's frequency (module docstring)",
        "note": "aperture_m2 = power into the receiver load / (|E_surface|^2 / (2 eta0)); E_surface = cos e |1 + R_v|",
        "cases": [],
    }
    (HERE / "cases").mkdir(exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        for f in FREQS_MHZ:
            stub = stub_deck(
                freq_mhz=f,
                height_m=BEVERAGE["height_m"],
                segments=1,
                radius_m=RADIUS_M,
                permittivity=GROUND["permittivity"],
                conductivity_s_per_m=GROUND["conductivity_s_per_m"],
            )
            r_j = junction_ohm(run_nec2c(stub, work, "stub"))
            z_vert = input_impedance(run_nec2c(vertical_deck(f, "EX 0 1 1 0 1 0", 0.0), work, "zin"))
            for el in ELEVATIONS_DEG:
                es = surface_field(f, el)
                density = es**2 / (2 * ETA0)
                for way, offset in (("forward", 0.0), ("back", 180.0)):
                    phi = (BEVERAGE["forward_phi_deg"] + offset) % 360
                    deck = beverage_deck(f, r_j, _plane_wave(el, phi))
                    i = base_currents(run_nec2c(deck, work, "bev"), 1)[0]
                    p = 0.5 * abs(i) ** 2 * BEVERAGE["turns_ratio"] ** 2 * COAX_OHM
                    name = f"offband-beverage-f{f:g}-e{el:g}-{way}".replace(".", "p")
                    (HERE / "cases" / f"{name}.nec").write_text(deck)
                    ref["cases"].append(
                        {
                            "antenna": "beverage",
                            "freq_mhz": f,
                            "elevation_deg": el,
                            "direction": way,
                            "junction_ohm": round(r_j, 3),
                            "surface_field": es,
                            "aperture_m2": p / density,
                        }
                    )
                    phi = (FLAG["forward_phi_deg"] + offset) % 360
                    deck, feed = flag_deck(f, _plane_wave(el, phi))
                    i = base_currents(run_nec2c(deck, work, "flag"), feed)[feed - 1]
                    p = 0.5 * abs(i) ** 2 * FLAG["turns_ratio"] ** 2 * COAX_OHM
                    name = f"offband-flag-f{f:g}-e{el:g}-{way}".replace(".", "p")
                    (HERE / "cases" / f"{name}.nec").write_text(deck)
                    ref["cases"].append(
                        {
                            "antenna": "flag",
                            "freq_mhz": f,
                            "elevation_deg": el,
                            "direction": way,
                            "surface_field": es,
                            "aperture_m2": p / density,
                        }
                    )
                deck = vertical_deck(f, _plane_wave(el, 0.0), VERTICAL["load_ohm"])
                i = base_currents(run_nec2c(deck, work, "vert"), 1)[0]
                v_oc = abs(i * (z_vert + VERTICAL["load_ohm"]))
                name = f"offband-vertical-f{f:g}-e{el:g}".replace(".", "p")
                (HERE / "cases" / f"{name}.nec").write_text(deck)
                ref["cases"].append(
                    {
                        "antenna": "vertical",
                        "freq_mhz": f,
                        "elevation_deg": el,
                        "input_impedance_ohm": [z_vert.real, z_vert.imag],
                        "surface_field": es,
                        "open_circuit_v_per_v_per_m": v_oc / es,
                    }
                )
            print(f"{f} MHz done", flush=True)
        q = QUARRY
        stub = stub_deck(
            freq_mhz=q["freq_mhz"],
            height_m=q["height_m"],
            segments=1,
            radius_m=RADIUS_M,
            permittivity=GROUND["permittivity"],
            conductivity_s_per_m=GROUND["conductivity_s_per_m"],
        )
        r_j = junction_ohm(run_nec2c(stub, work, "stub"))
        el = ELEVATIONS_DEG[0]
        deck = beverage_deck(q["freq_mhz"], r_j, _plane_wave(el, -q["off_axis_deg"] % 360), q)
        i = base_currents(run_nec2c(deck, work, "quarry"), 1)[0]
        p = 0.5 * abs(i) ** 2 * q["turns_ratio"] ** 2 * q["coax_ohm"]
        es = surface_field(q["freq_mhz"], el)
        (HERE / "cases" / "offband-quarry-beverage.nec").write_text(deck)
        ref["quarry"] = {
            **q,
            "elevation_deg": el,
            "junction_ohm": round(r_j, 3),
            "surface_field": es,
            "aperture_m2": p / (es**2 / (2 * ETA0)),
        }
    (HERE / "offband.json").write_text(json.dumps(ref, indent=1) + "\n")


if __name__ == "__main__":
    main()
