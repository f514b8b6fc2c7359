"""Benchmark of placed sources and feed lines in ``rank`` (not a test): what 5 placed sources and 8 antennas with
their feed lines add to a run (target: under 0.2 s), on an invented lot.

    python benchmarks/feedline_bench.py [--repeat 3] [--compact] [--cold]

Three versions of one scenario are run in the process, each after a first run that warms the sky caches: no placed
source and no feed line; the 5 placed sources; the sources and a feed line on every candidate.  Every in-run memo
(snrgain.memo.Memo) is cleared before each timed run, so a run pays for its own fields and feed lines as a fresh
``rank`` would; with ``--cold`` the near field's tables of the Sommerfeld integrals (noisemodels.halfspace, one per
frequency, ground and kind of dipole, kept across runs in a process) are emptied too, as a fresh process starts.
Times are the process's CPU time (the machine may be shared; set OMP_NUM_THREADS=1 to keep numpy
to one thread).  ``--compact`` makes four of the eight candidates compact (a short vertical, a flag, a small loop, a
pair of phased verticals) instead of Beverages.  The best of ``--repeat`` runs is reported.
"""

from __future__ import annotations

import argparse
import os
import sys
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(REPO))
os.environ.setdefault("SNRGAIN_P372_DIR", str(REPO.parent / "shared" / "data" / "p372"))

HEAD = """
[site]
name = "Tansy Hollow (invented benchmark site)"
latitude = 44.2
longitude = -71.3
ground = "moist loam"
lot = [[-400, -400], [400, -400], [400, 400], [-400, 400]]

[band]
frequency = "1.83 MHz"

[time]
months = [12, 1]
utc_hours = [0, 2, 4, 6]

[[target]]
name = "Europe"
bearing = 45
elevation = [10, 25]

[[target]]
name = "Caribbean"
bearing = 150
elevation = [5, 20]

[reference]
family = "vertical"
height = "20 m"
position = [0, 0]
"""

SOURCES = [
    ("dimmer", (-30, 120), 3, "S6"),
    ("inverter", (60, -40), 5, "S7"),
    ("supply", (10, 70), 1, "S9"),
    ("street light", (-150, -120), 6, "S5"),
    ("charger", (120, 160), 2, "S6"),
]

BEVERAGES = [
    ("bev {i}", (x, y), b)
    for i, (x, y, b) in enumerate(
        [
            (0, 150, 45),
            (-200, -200, 30),
            (100, -250, 60),
            (-300, 50, 90),
            (200, 0, 120),
            (-100, 300, 140),
            (50, -350, 10),
            (-350, -300, 75),
        ]
    )
]


def _candidate(i: int, compact: bool) -> str:
    name, (x, y), bearing = BEVERAGES[i]
    name = name.format(i=i)
    if compact and i == 1:
        body = 'family = "vertical"\nheight = "6 m"\n'
    elif compact and i == 3:
        body = f'family = "terminated-loop"\nwidth = "9 m"\nloop_height = "4.5 m"\nbearing = {bearing}\n'
    elif compact and i == 5:
        body = f'family = "small-loop"\nwidth = "2 m"\nloop_height = "2 m"\nheight = "2 m"\nbearing = {bearing}\n'
    elif compact and i == 7:
        body = (
            f'family = "phased-verticals"\nheight = "6 m"\nbearing = {bearing}\n'
            f"positions = [[{x - 20}, {y}], [{x + 20}, {y}]]\n"
        )
    else:
        body = f'family = "beverage"\nlength = "200 m"\nheight = "2 m"\nbearing = {bearing}\n'
    return f'\n[[candidate]]\nname = "{name}"\n{body}position = [{x}, {y}]\n'


def scenario(*, sources: bool, feed_lines: bool, compact: bool) -> str:
    out = HEAD
    if sources:
        for name, (x, y), h, level in SOURCES:
            out += f'\n[[noise.local]]\nname = "{name}"\nposition = [{x}, {y}]\nheight = "{h} m"\nlevel = "{level}"\n'
    for i in range(len(BEVERAGES)):
        out += _candidate(i, compact)
        if feed_lines:
            out += 'feed_line = { to = [0, -5], height = "1 m" }\n'
    return out


def clear_memos(cold: bool = False) -> None:
    """Empty every store of results kept within a run (snrgain.memo.forget, and the near field's interpolation
    geometry, noisemodels.halfspace.forget_geometry): a timed run pays for its own fields and feed lines as a fresh
    ``rank`` would; the sky maps' disk cache stays warm.  ``cold``: the near field's tables too
    (:data:`TABLES`)."""
    from noisemodels.halfspace import forget_geometry
    from snrgain.memo import forget

    forget()
    forget_geometry()
    if cold:
        TABLES.clear()
        TABLES_BUILT.clear()


def _count_tables():
    """Count the near field's tables built (noisemodels.halfspace._Table) in :data:`TABLES_BUILT`."""
    from noisemodels import halfspace

    made = halfspace._Table.__init__

    def counted(self, freq_hz, n2, kind, *args):
        made(self, freq_hz, n2, kind, *args)
        TABLES_BUILT.append((float(freq_hz), complex(n2), kind, *args))

    halfspace._Table.__init__ = counted
    return halfspace._TABLES


TABLES_BUILT: list = []
TABLES = _count_tables()


def timed(text: str, repeat: int, cold: bool = False) -> tuple[float, int]:
    """(the best CPU time of ``repeat`` runs [s], the near field's tables the last run built)."""
    import snrgain

    snrgain.evaluate(text)  # the first run: sky caches
    best = float("inf")
    for _ in range(repeat):
        clear_memos(cold)
        TABLES_BUILT.clear()
        t = time.process_time()
        snrgain.evaluate(text)
        best = min(best, time.process_time() - t)
    return best, len(TABLES_BUILT)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--compact", action="store_true", help="four of the eight candidates compact")
    ap.add_argument("--cold", action="store_true", help="empty the near field's tables before each timed run too")
    args = ap.parse_args()
    runs = []
    for sources, feed_lines in ((False, False), (True, False), (True, True)):
        text = scenario(sources=sources, feed_lines=feed_lines, compact=args.compact)
        runs.append(timed(text, args.repeat, args.cold))
    (base, _), (src, n_src), (both, n_both) = runs
    tables = f"; near-field tables built per run: {n_src}, {n_both}" if args.cold else ""
    print(f"rank, no placed source, no feed line      {base:7.3f} s")
    print(f"rank, 5 placed sources                    {src:7.3f} s  (+{src - base:.3f} s)")
    print(
        f"rank, 5 sources and 8 feed lines          {both:7.3f} s  (+{both - base:.3f} s; "
        f"feed lines +{both - src:.3f} s{tables})"
    )
    print(f"target: sources and feed lines add under 0.2 s: {'met' if both - base < 0.2 else 'NOT met'}")


if __name__ == "__main__":
    main()
