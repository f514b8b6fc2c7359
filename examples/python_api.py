"""snrgain from Python: run a scenario, read its numbers, build an antenna from SI values, sweep it, draw.

    python examples/python_api.py OUT_DIR

Writes OUT_DIR/azimuth.png and OUT_DIR/length-sweep.png and prints what it finds.  Everything here is the
public API: snrgain.evaluate, snrgain.antennas.from_si / variant, snrgain.outputs.plots (figures draw on matplotlib
Figure objects or on axes you pass, and never change your backend).
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
from matplotlib.figure import Figure

import snrgain
from snrgain.antennas import from_si, variant
from snrgain.outputs import plots

SCENARIO = Path(__file__).resolve().parents[1] / "scenarios" / "marrow-fen.toml"
FREQ_HZ = 1.83e6


def main(out_dir: Path) -> None:
    # 1. The main job: a scenario file in, numbers out (SI units and dB, units in the field names).
    # The ranking's statistic is snr_gain_median_db (per target: the median over the target's own months and hours
    # and the spreads, as rank prints it).  snr_gain_db holds every month and hour, NaN where a target is not
    # listened for, so a plain mean over it is NaN: use np.nanmedian if you want one of your own.
    results = snrgain.evaluate(SCENARIO)
    print(results)
    for cand in results.candidates:
        per_target = ", ".join(
            f"{t['name']} {g:+.1f} dB" for t, g in zip(results.targets, cand.snr_gain_median_db, strict=True)
        )
        print(f"  {cand.name:<32} SNR gain over {results.reference.name} (median): {per_target}")

    # 2. An antenna from SI keyword arguments (metres, radians, ohms): the same validation as a scenario table.
    bev = from_si("beverage", length=250.0, height=2.5, bearing=np.radians(320.0), ground="moist loam")
    az = np.arange(0.0, 360.0, 45.0)
    gains = bev.gain_dbi(FREQ_HZ, az, 15.0)
    print(
        "Beverage toward 320 deg, gain at 15 deg elevation:",
        ", ".join(f"{a:.0f} deg {g:+.1f} dBi" for a, g in zip(az, gains)),
    )

    # 3. A small design sweep: front-to-back against length, each design re-validated from SI values.
    lengths = np.arange(100.0, 401.0, 25.0)
    fb = [
        float(
            variant(bev, length=x).gain_dbi(FREQ_HZ, 320.0, 15.0)
            - variant(bev, length=x).gain_dbi(FREQ_HZ, 140.0, 15.0)
        )
        for x in lengths
    ]
    best = lengths[int(np.argmax(fb))]
    print(f"front-to-back at 15 deg is highest, {max(fb):.1f} dB, at {best:.0f} m of the lengths tried")

    # 4. Figures: one from the results, one of your own drawn on axes you own.
    out_dir.mkdir(parents=True, exist_ok=True)
    plots.save(plots.azimuth_pattern(results), out_dir / "azimuth.png", overwrite=True)
    fig = Figure(figsize=(6, 4))
    ax = fig.add_subplot()
    ax.plot(lengths, fb, marker="o")
    ax.set_xlabel("length (m)")
    ax.set_ylabel("front-to-back at 15 deg (dB)")
    ax.set_title("Beverage at 2.5 m over moist loam (5 mS/m), 1.83 MHz")
    ax.grid(alpha=0.3)
    plots.save(fig, out_dir / "length-sweep.png", overwrite=True)
    print(f"wrote {out_dir / 'azimuth.png'} and {out_dir / 'length-sweep.png'}")


if __name__ == "__main__":
    if len(sys.argv) != 2:
        sys.exit("usage: python examples/python_api.py OUT_DIR")
    main(Path(sys.argv[1]))
