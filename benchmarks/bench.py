"""Benchmarks: wall times side by side in one run (not a test).

    python benchmarks/bench.py

Reports
- the whole main job on the Alder Hollow demo (5 candidates) with one month
  of 8 hours at nside 32, after imports (target: well under 2 s);
- one full-sphere pattern (nside 32, upper hemisphere) per antenna family;
- the same at nside 64, for the ratio.
"""

from __future__ import annotations

import time
import tomllib
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parents[1]


def best_of(fn, n=5):
    times = []
    for _ in range(n):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times), float(np.median(times))


def main():
    t0 = time.perf_counter()
    import snrgain
    from noisemodels.sphere import upper_hemisphere
    from snrgain.antennas import from_spec

    t_import = time.perf_counter() - t0

    demo = REPO / "scenarios" / "alder-hollow.toml"
    data = tomllib.loads(demo.read_text())
    data["time"]["months"] = [1]
    assert len(data["candidate"]) == 5 and len(data["time"]["utc_hours"]) == 8
    for c in data["candidate"]:
        if "file" in c:
            c["file"] = str(REPO / "scenarios" / c["file"])

    print(f"imports: {t_import * 1e3:.0f} ms")
    first = time.perf_counter()
    snrgain.evaluate(data)
    print(f"main job, first run (cold caches): {(time.perf_counter() - first) * 1e3:.0f} ms")
    best, med = best_of(lambda: snrgain.evaluate(data))
    print(f"main job, 5 candidates x 8 hours, nside 32: best {best * 1e3:.0f} ms, median {med * 1e3:.0f} ms")

    specs = {
        "isotropic": {"family": "isotropic"},
        "vertical": {"family": "vertical", "height": "18 m"},
        "tabulated": {"family": "tabulated", "file": str(REPO / "scenarios/patterns/cardioid-pair.csv")},
    }
    print(f"\n{'family':<12}{'nside 32 [ms]':>15}{'nside 64 [ms]':>15}{'ratio':>8}")
    for name, spec in specs.items():
        ant = from_spec(spec)
        row = []
        for nside in (32, 64):
            g = upper_hemisphere(nside)
            best, _ = best_of(lambda: ant.gain_linear(1.83e6, g.azimuth_rad, g.elevation_rad), n=20)
            row.append(best)
        print(f"{name:<12}{row[0] * 1e3:>15.2f}{row[1] * 1e3:>15.2f}{row[1] / row[0]:>8.1f}")

    p372_dir = REPO.parent / "shared" / "data" / "p372"
    if (p372_dir / "COEFF07W.txt").exists():
        from noisemodels import p372, storms

        lat, lon = np.meshgrid(np.arange(-90, 90.1, 1.0), np.arange(-180, 180, 1.0), indexing="ij")
        p372.atmospheric(0.0, 0.0, month=7, freq_hz=1.83e6, time_block=0, data_dir=p372_dir)  # read the file once
        best, _ = best_of(lambda: p372.atmospheric(lat, lon, month=7, freq_hz=1.83e6, time_block=5, data_dir=p372_dir))
        print(f"\nP.372 atmospheric Fa on a 1 deg global grid ({lat.size} sites), one block and frequency: "
              f"{best * 1e3:.0f} ms (target well under 1 s)")
        best, _ = best_of(lambda: p372.atmospheric(lat, lon, month=7, freq_hz=1.83e6, utc_hour=4.0, data_dir=p372_dir))
        print(f"the same for a UTC hour (six blocks, interpolated): {best * 1e3:.0f} ms")
        grid = upper_hemisphere(32)
        lv = p372.NoiseLevel(60.0, 0.0, 0.0)
        best, _ = best_of(lambda: storms.storm_component(41.6, -72.35, month=7, utc_hour=4, freq_hz=1.83e6, level=lv,
                                                          directions=grid, data_dir=p372_dir), n=3)
        print(f"storm-direction sky map for one hour (nside 32): {best * 1e3:.0f} ms")
    else:
        print("\n(P.372 data not found beside the project; atmospheric benchmarks skipped)")


if __name__ == "__main__":
    main()
