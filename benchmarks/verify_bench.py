"""Benchmark of ``snrgain verify`` (not a test): 100,000 decode lines per antenna read, paired, placed and
summarised (target: under 5 s), then the prediction through the pipeline timed on its own.

    python benchmarks/verify_bench.py [--lines 100000]

The two logs are synthesised first (not timed) by :func:`snrgain.tools.verify.synthesise` on the Wren Corner demo
site, two targets, FT8 for four hours.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(REPO))

from snrgain.tools import verify as vf  # noqa: E402

SCENARIO = REPO / "scenarios" / "wren-corner.toml"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--lines", type=int, default=100_000, help="decode lines per antenna (about)")
    args = ap.parse_args()
    per_station = 0.5 * 4 * 240 * 0.9  # sends every other slot, four hours of 15 s slots, 10 % lost
    stations = max(1, round(args.lines / per_station / 2))
    t = time.perf_counter()
    a, b = vf.synthesise(
        site_lat=44.21,
        site_lon=-71.32,
        targets=[(45, 6.0), (300, -2.0)],
        hours=4,
        stations_per_target=stations,
        one_sided=max(1, stations // 8),
        seed=11,
    )
    made = time.perf_counter() - t
    with tempfile.TemporaryDirectory() as d:
        pa, pb = Path(d) / "a.txt", Path(d) / "b.txt"
        pa.write_text(a)
        pb.write_text(b)
        n_a, n_b = a.count("\n"), b.count("\n")
        print(f"synthesised {n_a:,} + {n_b:,} lines in {made:.1f} s (not timed)")
        from snrgain.scenario import load

        sc = load(SCENARIO)
        t = time.perf_counter()
        r = vf.verify(sc, a_name="Beverage Europe", b_name="TX vertical", log_a=pa, log_b=pb, predict_too=False)
        took = time.perf_counter() - t
        print(
            f"read, paired, placed and summarised: {took:.2f} s for {len(r.pairs):,} pairs in {len(r.groups)} groups "
            f"(target < 5 s: {'met' if took < 5 else 'MISSED'})"
        )
        t = time.perf_counter()
        vf.verify(SCENARIO, a_name="Beverage Europe", b_name="TX vertical", log_a=pa, log_b=pb)
        print(
            f"the same with the prediction through the pipeline ({len(r.hours) + 1} runs): "
            f"{time.perf_counter() - t:.2f} s"
        )


if __name__ == "__main__":
    main()
