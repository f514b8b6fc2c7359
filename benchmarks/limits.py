"""A scenario at the documented limits (README, "Scenario format"): 64 candidates, 64 targets, 64 local sources, all
12 months x 24 hours, nside 128.  Writes it and, with --run, times `snrgain rank` on it (wall time and peak memory,
from the kernel's accounting of the child process).

    python benchmarks/limits.py limits.toml            # write the scenario
    python benchmarks/limits.py limits.toml --run      # and time rank on it
    python benchmarks/limits.py FOLDER --memory        # the memory estimate against peak memory, side by side

--memory writes into FOLDER a year of half-hours (12 x 48 cells) with a Beverage and a whip at several draws and
sky resolutions (and 16 antennas more), and prints snrgain.model.spread.size's memory estimate beside the peak memory
of `snrgain rank` on each: the estimate must stay above every peak (it refuses what will not fit in 4 GB).
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


MEMORY_CASES = [(5000, 64, 0), (10000, 64, 0), (20000, 32, 0), (5000, 128, 0), (5000, 64, 16), (5000, 128, 16)]
"""(draws, nside, antennas added) of the --memory runs."""


def memory_scenario(draws: int, nside: int, more: int) -> str:
    hours = ", ".join(f"{h / 2:g}" for h in range(48))
    out = [
        '[site]\nname = "Memory Test Lot"\nlatitude = 44.0\nlongitude = -71.0\nground = "moist loam"\n',
        '[band]\nfrequency = "1.83 MHz"\nbandwidth = "500 Hz"\n',
        f"[time]\nmonths = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12]\nutc_hours = [{hours}]\n",
        '[[target]]\nname = "Europe"\nbearing = 45\nelevation = [10, 25]\n',
        '[reference]\nname = "TX vertical"\nfamily = "vertical"\nheight = "40 m"\nposition = [0, 0]\n',
        '[[candidate]]\nname = "Bev"\nfamily = "beverage"\nlength = "200 m"\nheight = "2 m"\nbearing = 45\n'
        'position = ["60 m", "90 m"]\n',
        '[[candidate]]\nname = "whip"\nfamily = "vertical"\nheight = "6 m"\nposition = [100, 100]\n',
    ]
    out += [
        f'[[candidate]]\nname = "w{i}"\nfamily = "vertical"\nheight = "6 m"\nposition = [{10 * i}, 150]\n'
        for i in range(1, more + 1)
    ]
    out.append(f"[uncertainty]\nsamples = {draws}\n\n[compute]\nnside = {nside}\n")
    return "\n".join(out)


def memory_check(folder: Path) -> None:
    """The memory estimate against `snrgain rank`'s peak memory (each run a child of its own, its peak from the
    kernel's accounting: a wrapper process per run so each peak is its own)."""
    from snrgain.model.spread import size
    from snrgain.scenario import load

    folder.mkdir(parents=True, exist_ok=True)
    print(f"{'draws':>6} {'nside':>5} {'antennas':>8} {'estimate [MB]':>14} {'peak [MB]':>10} {'ratio':>6}")
    for draws, nside, more in MEMORY_CASES:
        path = folder / f"memory-{draws}-{nside}-{more}.toml"
        path.write_text(memory_scenario(draws, nside, more), encoding="utf-8")
        est = size(load(path)).memory_bytes / 1e6
        probe = (
            "import resource, subprocess, sys; subprocess.run([sys.executable, '-m', 'snrgain.cli.main', 'rank', "
            f"{str(path)!r}, '--allow-long', '-o', {str(path.with_suffix('.json'))!r}, '--overwrite'], "
            "capture_output=True, check=True); print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)"
        )
        peak = int(subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=True).stdout)
        peak_mb = peak * 1024 / 1e6
        print(f"{draws:>6} {nside:>5} {more + 3:>8} {est:>14.0f} {peak_mb:>10.0f} {est / peak_mb:>6.2f}")


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("path", type=Path)
    ap.add_argument("--run", action="store_true", help="time `snrgain rank` on it")
    ap.add_argument("--nside", type=int, default=128)
    ap.add_argument("--memory", action="store_true", help="the memory estimate against peak memory (PATH: a folder)")
    args = ap.parse_args()
    if args.memory:
        memory_check(args.path)
        return 0
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
