"""NEC-2 decks for terminated long wires, and reading nec2c's output.

Used by make_reference.py (which writes the decks and reference results kept
beside them) and by the tests that re-run the engine where it is installed.
The geometry: a feed down-lead from the ground to the wire's height at x = 0,
the wire along +x to x = L, a far down-lead back to the ground, both leads
connected to the ground (GE 1); the termination is a series resistor in the
bottom segment of the far lead; the feed (a voltage source) in the bottom
segment of the feed lead.  NEC's azimuth phi = 0 is the wire's favoured
direction (toward the far end).
"""

from __future__ import annotations

import os
import re
import subprocess
from pathlib import Path

import numpy as np

C_MHZ_M = 299.792458


def beverage_deck(
    *,
    freq_mhz,
    length_m,
    height_m,
    radius_m,
    permittivity,
    conductivity_s_per_m,
    termination_ohm,
    ground="sommerfeld",
    segments_per_wavelength=40,
) -> str:
    """A NEC-2 deck for a terminated wire with down-leads; ground 'sommerfeld' (GN 2) or 'perfect' (GN 1)."""
    lam = C_MHZ_M / freq_mhz
    ns = int(np.ceil(length_m / (lam / segments_per_wavelength)))
    nl = max(1, int(round(height_m / (length_m / ns))))
    gn = f"GN 2 0 0 0 {permittivity:g} {conductivity_s_per_m:g}" if ground == "sommerfeld" else "GN 1"
    lines = [
        "CM terminated long wire with down-leads (snrgain validation case)",
        "CE",
        f"GW 1 {nl} 0 0 0 0 0 {height_m:g} {radius_m:g}",
        f"GW 2 {ns} 0 0 {height_m:g} {length_m:g} 0 {height_m:g} {radius_m:g}",
        f"GW 3 {nl} {length_m:g} 0 {height_m:g} {length_m:g} 0 0 {radius_m:g}",
        "GE 1",
        gn,
        f"LD 0 3 {nl} {nl} {termination_ohm:.3f} 0 0",
        f"FR 0 1 0 0 {freq_mhz:g} 0",
        "EX 0 1 1 0 1 0",
        "RP 0 46 180 1000 0 0 2 2",
        "EN",
    ]
    return "\n".join(lines) + "\n"


PATCHED_ENGINE = Path(__file__).resolve().parent / "engine" / "nec2c-fbar"


def patched_engine() -> str:
    """The path of nec2c built with the project's fix to fbar() (build_nec2c.sh), for structures longer than a
    wavelength; SNRGAIN_NEC2C overrides it.  Raises with what to run where there is none."""
    path = os.environ.get("SNRGAIN_NEC2C") or str(PATCHED_ENGINE)
    if not Path(path).is_file():
        raise SystemExit(f"no patched nec2c at {path}: run tests/nec/build_nec2c.sh (or set SNRGAIN_NEC2C)")
    return path


def run_nec2c(deck_text: str, workdir: Path, name: str, engine: str = "nec2c") -> str:
    """Run nec2c (``engine``: Debian's by default, or :func:`patched_engine`) on a deck in ``workdir``; returns
    the output text."""
    deck = workdir / f"{name}.nec"
    out = workdir / f"{name}.out"
    deck.write_text(deck_text)
    subprocess.run([engine, "-i", str(deck), "-o", str(out)], check=True, capture_output=True)
    return out.read_text()


def stub_deck(*, freq_mhz, height_m, segments, radius_m, permittivity, conductivity_s_per_m) -> str:
    """One vertical wire standing on the Sommerfeld ground (GE 1, GN 2), fed at its bottom segment: the stub that
    measures NEC's wire-to-ground junction at a down-lead of that height, radius and segmentation."""
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


def input_impedance(text: str) -> complex:
    """The first feed's input impedance [ohm] from nec2c's ANTENNA INPUT PARAMETERS table."""
    m = re.search(
        r"ANTENNA INPUT PARAMETERS.*?\n.*?\n.*?\n\s*\d+\s+\d+\s+\S+\s+\S+\s+\S+\s+\S+\s+(\S+)\s+(\S+)", text, re.S
    )
    return complex(float(m.group(1)), float(m.group(2)))


def junction_impedance(
    *, freq_mhz, height_m, segments, radius_m, permittivity, conductivity_s_per_m, workdir: Path, engine="nec2c"
) -> complex:
    """NEC's wire-to-ground junction [ohm] at a down-lead of that height, radius and segmentation, as an impedance:
    the input impedance of :func:`stub_deck` on the Sommerfeld ground less the same stub's on a perfect ground
    (GN 1, which has no junction).  The subtraction takes out the short monopole's own impedance (its large
    capacitive reactance and its radiation resistance) and leaves the junction's resistance and reactance, to be
    taken out of a deck by series loads (LD 4).  The reactance is not small: -15 ohm beside 62 ohm for a 2 m lead
    over 5 mS/m at 1.83 MHz, -146 beside 244 ohm over 1 mS/m (make_nearwire.py)."""
    stub = stub_deck(
        freq_mhz=freq_mhz,
        height_m=height_m,
        segments=segments,
        radius_m=radius_m,
        permittivity=permittivity,
        conductivity_s_per_m=conductivity_s_per_m,
    )
    out = []
    for gn in (f"GN 2 0 0 0 {permittivity:g} {conductivity_s_per_m:g}", "GN 1"):
        deck = re.sub(r"^GN .*$", gn, stub, flags=re.M)
        out.append(input_impedance(run_nec2c(deck, workdir, "stub", engine)))
    return out[0] - out[1]


def parse_output(text: str) -> dict:
    """Total power gain pattern [dBi] on the (theta, phi) grid and the feed impedance [ohm]."""
    i = text.index("RADIATION PATTERNS")
    rows = []
    for line in text[i:].splitlines():
        parts = line.split()
        if len(parts) >= 8:
            try:
                theta, phi, _, _, total = map(float, parts[:5])
            except ValueError:
                continue
            rows.append((theta, phi, total))
    a = np.array(rows)
    m = re.search(
        r"ANTENNA INPUT PARAMETERS.*?\n.*?\n.*?\n\s*\d+\s+\d+\s+\S+\s+\S+\s+\S+\s+\S+\s+(\S+)\s+(\S+)", text, re.S
    )
    return {
        "theta_deg": a[:, 0],
        "phi_deg": a[:, 1],
        "gain_dbi": a[:, 2],
        "feed_impedance_ohm": complex(float(m.group(1)), float(m.group(2))),
    }


def metrics(theta_deg, phi_deg, gain_dbi, *, elevation_deg=20.0) -> dict:
    """Forward gain, front-to-back and RDF at an elevation, forward at NEC azimuth 0 (see metrics_toward)."""
    return metrics_toward(theta_deg, phi_deg, gain_dbi, forward_phi_deg=0.0, elevation_deg=elevation_deg)


def loop_deck(
    *,
    freq_mhz,
    width_m,
    bottom_m,
    top_m,
    radius_m,
    permittivity,
    conductivity_s_per_m,
    termination_ohm,
    segments_per_side=9,
) -> str:
    """A rectangular loop in the x-z plane, fed in the middle of its side at x = 0, terminated mid-side at x = w."""
    n = segments_per_side if segments_per_side % 2 else segments_per_side + 1
    mid = n // 2 + 1
    w, z1, z2 = width_m, bottom_m, top_m
    lines = [
        "CM terminated loop (snrgain validation case)",
        "CE",
        f"GW 1 {n} 0 0 {z1:g} 0 0 {z2:g} {radius_m:g}",
        f"GW 2 {n} 0 0 {z2:g} {w:g} 0 {z2:g} {radius_m:g}",
        f"GW 3 {n} {w:g} 0 {z2:g} {w:g} 0 {z1:g} {radius_m:g}",
        f"GW 4 {n} {w:g} 0 {z1:g} 0 0 {z1:g} {radius_m:g}",
        "GE 0",
        f"GN 2 0 0 0 {permittivity:g} {conductivity_s_per_m:g}",
        f"LD 0 3 {mid} {mid} {termination_ohm:.3f} 0 0",
        f"FR 0 1 0 0 {freq_mhz:g} 0",
        f"EX 0 1 {mid} 0 1 0",
        "RP 0 46 180 1000 0 0 2 2",
        "EN",
    ]
    return "\n".join(lines) + "\n"


def vertical_pair_deck(
    *, freq_mhz, height_m, spacing_m, radius_m, permittivity, conductivity_s_per_m, load_ohm, phase_deg, segments=6
) -> str:
    """Two verticals on the x axis (x = 0 and x = spacing), each fed at its base through a series load.

    The element at x = spacing is driven with phase ``phase_deg`` relative to the one at x = 0; the loads
    (large against the elements' own impedances) make the currents follow the drive, as in a receive array.
    """
    ph = np.radians(phase_deg)
    lines = [
        "CM two phased verticals (snrgain validation case)",
        "CE",
        f"GW 1 {segments} 0 0 0 0 0 {height_m:g} {radius_m:g}",
        f"GW 2 {segments} {spacing_m:g} 0 0 {spacing_m:g} 0 {height_m:g} {radius_m:g}",
        "GE 1",
        f"GN 2 0 0 0 {permittivity:g} {conductivity_s_per_m:g}",
        f"LD 0 1 1 1 {load_ohm:g} 0 0",
        f"LD 0 2 1 1 {load_ohm:g} 0 0",
        f"FR 0 1 0 0 {freq_mhz:g} 0",
        "EX 0 1 1 0 1 0",
        f"EX 0 2 1 0 {np.cos(ph):.6f} {np.sin(ph):.6f}",
        "RP 0 46 180 1000 0 0 2 2",
        "EN",
    ]
    return "\n".join(lines) + "\n"


def metrics_toward(theta_deg, phi_deg, gain_dbi, *, forward_phi_deg, elevation_deg=20.0) -> dict:
    """As :func:`metrics`, with the forward direction at NEC azimuth ``forward_phi_deg``."""
    g = np.maximum(np.asarray(gain_dbi), -300.0)
    lin = 10 ** (g / 10)
    w = np.sin(np.radians(theta_deg))
    w = np.where(np.isclose(theta_deg, 90.0), 0.5 * w, w)
    mean = float(np.sum(lin * w) / np.sum(w))
    th = 90.0 - elevation_deg
    back_phi = (forward_phi_deg + 180.0) % 360.0
    fwd = float(g[np.isclose(theta_deg, th) & np.isclose(phi_deg, forward_phi_deg)][0])
    back = float(g[np.isclose(theta_deg, th) & np.isclose(phi_deg, back_phi)][0])
    return {"forward_gain_dbi": fwd, "front_to_back_db": fwd - back, "rdf_db": fwd - 10 * np.log10(mean)}


def vertical_array_deck(
    *, freq_mhz, positions_m, height_m, radius_m, voltages, ground=None, series_ohm=0.0, segments=11
) -> str:
    """Verticals from the ground up at ``positions_m`` ([x, y] each), each driven at its base segment by a voltage
    source (complex ``voltages``) behind a series resistance ``series_ohm``; ``ground`` None for perfect ground
    (GN 1) or (eps_r, sigma) for the Sommerfeld solution (GN 2)."""
    lines = ["CM verticals with base sources (snrgain coupling validation case)", "CE"]
    for i, (x, y) in enumerate(positions_m, start=1):
        lines.append(f"GW {i} {segments} {x:.4f} {y:.4f} 0 {x:.4f} {y:.4f} {height_m:g} {radius_m:g}")
    lines.append("GE 1")
    lines.append("GN 1" if ground is None else f"GN 2 0 0 0 {ground[0]:g} {ground[1]:g}")
    if series_ohm:
        for i in range(1, len(positions_m) + 1):
            lines.append(f"LD 0 {i} 1 1 {series_ohm:g} 0 0")
    lines.append(f"FR 0 1 0 0 {freq_mhz:g} 0")
    for i, v in enumerate(voltages, start=1):
        v = complex(v)
        lines.append(f"EX 0 {i} 1 0 {v.real:.8f} {v.imag:.8f}")
    lines += ["RP 0 46 360 1000 0 0 2 1", "EN"]
    return "\n".join(lines) + "\n"


def base_currents(text: str, tags: int) -> np.ndarray:
    """The current [A] in the first segment of wires 1..``tags`` (the bases), from CURRENTS AND LOCATION."""
    i = text.index("CURRENTS AND LOCATION")
    out = {}
    for line in text[i:].splitlines()[5:]:
        parts = line.split()
        if len(parts) < 10:
            if out:
                break
            continue
        try:
            tag = int(parts[1])
            re_, im_ = float(parts[6]), float(parts[7])
        except ValueError:
            break
        out.setdefault(tag, complex(re_, im_))
    return np.array([out[t] for t in range(1, tags + 1)])
