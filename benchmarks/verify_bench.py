"""Benchmark of ``snrgain verify`` (not a test): 100,000 decode lines per antenna read, paired, placed and
summarised (target: under 5 s), then the prediction through the pipeline timed on its own.

    python benchmarks/verify_bench.py [--lines 100000] [--coverage 250]

``--coverage N`` also measures how often the reported 90 % interval holds the true difference over N seeded
round trips of two targets each (the test suite runs 30; a 90 % interval should cover about 90 %).

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
    ap.add_argument("--coverage", type=int, default=0, help="seeded round trips for the interval's coverage")
    args = ap.parse_args()
    if args.coverage:
        coverage(args.coverage)
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


def coverage(trials: int) -> None:
    """The share of reported 90 % intervals holding the true difference (the test suite's round trip, more seeds)."""
    import numpy as np

    from snrgain.scenario import load

    sc = load(SCENARIO)
    hits = total = 0
    with tempfile.TemporaryDirectory() as d:
        pa, pb = Path(d) / "a.txt", Path(d) / "b.txt"
        for seed in range(trials):
            rng = np.random.default_rng(1000 + seed)
            truth = {"Europe": float(rng.uniform(-2, 10)), "Pacific": float(rng.uniform(-6, 4))}
            a, b = vf.synthesise(
                site_lat=44.21,
                site_lon=-71.32,
                targets=[(45, truth["Europe"]), (300, truth["Pacific"])],
                hours=1,
                stations_per_target=3,
                seed=seed,
            )
            pa.write_text(a)
            pb.write_text(b)
            r = vf.verify(sc, a_name="A", b_name="B", log_a=pa, log_b=pb, predict_too=False, n_boot=1000, seed=seed)
            for g in r.groups:
                if g.hour is None and g.target in truth:
                    total += 1
                    hits += g.low_db <= truth[g.target] <= g.high_db
    print(f"coverage of the 90 % interval: {hits}/{total} = {hits / total:.3f} over {trials} seeded round trips")


if __name__ == "__main__":
    main()
