"""A scenario at the documented limits (README, "Scenario files"): 64 candidates, 64 targets, 64 local sources, all
12 months x 24 hours, nside 128.  Writes it and, with --run, times `snrgain rank` on it (wall time and peak memory,
from the kernel's accounting of the child process).

    python benchmarks/limits.py limits.toml            # write the scenario
    python benchmarks/limits.py limits.toml --run      # and time rank on it
"""

from __future__ import annotations

import argparse
import resource
import subprocess
import sys
import time
from pathlib import Path

FAMILIES = [
    'family = "beverage"\nlength = "{L} m"\nheight = "2.5 m"\nbearing = {B}\nposition = ["{E} m", "{N} m"]',
    'family = "bog"\nlength = "{S} m"\nbearing = {B}\nposition = ["{E} m", "{N} m"]',
    'family = "vertical"\nheight = "{H} m"\nposition = ["{E} m", "{N} m"]',
    'family = "terminated-loop"\nshape = "rectangle"\nwidth = "8 m"\nloop_height = "4 m"\nheight = "4 m"\n'
    'bearing = {B}\nposition = ["{E} m", "{N} m"]',
]


def scenario(n: int = 64, nside: int = 128) -> str:
    out = [
        '[site]\nname = "Limit Test Farm"\nlatitude = 45.0\nlongitude = -93.0\nground = "moist loam"\n',
        '[band]\nfrequency = "1.83 MHz"\nbandwidth = "500 Hz"\n',
        "[time]\nmonths = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12]\nutc_hours = ["
        + ", ".join(map(str, range(24)))
        + "]\n",
        f"[compute]\nnside = {nside}\n",
        '[noise.man_made]\nenvironment = "residential"\n',
        '[noise.atmospheric]\nmodel = "given"\nfa = "50 dB"\nupper_decile = "8 dB"\nlower_decile = "6 dB"\n',
    ]
    for i in range(n):
        if i % 2:
            where = f'position = ["{300 + 3 * i} m", "{-200 + 5 * i} m"]\nheight = "3 m"'
        else:
            where = f"bearing = {(i * 37) % 360}\nelevation = 5"
        out.append(
            f'[[noise.local]]\nname = "source {i + 1}"\n{where}\nfa = "{60 + i % 20} dB"\nuncertainty = "4 dB"\n'
        )
    for i in range(n):
        out.append(f'[[target]]\nname = "target {i + 1}"\nbearing = {(i * 5.6) % 360:.1f}\nelevation = [5, 25]\n')
    out.append('[reference]\nname = "TX vertical"\nfamily = "vertical"\nheight = "40 m"\nposition = [0, 0]\n')
    for i in range(n):
        body = FAMILIES[i % len(FAMILIES)].format(
            L=150 + i, S=60 + i, H=6 + i % 10, B=(i * 11) % 360, E=20 + 4 * i, N=30 + 3 * i
        )
        out.append(f'[[candidate]]\nname = "candidate {i + 1}"\n{body}\n')
    return "\n".join(out)


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("path", type=Path)
    ap.add_argument("--run", action="store_true", help="time `snrgain rank` on it")
    ap.add_argument("--nside", type=int, default=128)
    args = ap.parse_args()
    args.path.write_text(scenario(nside=args.nside), encoding="utf-8")
    print(f"wrote {args.path}")
    if args.run:
        t0 = time.perf_counter()
        res = subprocess.run([sys.executable, "-m", "snrgain.cli.main", "rank", str(args.path)], capture_output=True)
        wall = time.perf_counter() - t0
        peak = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
        print(f"rank: exit {res.returncode}, {wall:.1f} s, peak memory {peak:.0f} MiB")
        print(res.stderr.decode()[-2000:])
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
