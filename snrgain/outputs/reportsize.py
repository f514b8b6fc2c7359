"""How big the HTML report will be, counted from its figures before any work: ``report`` refuses one past its limits
unless asked (``--allow-long``), as ``rank`` refuses an evaluation past its own (snrgain.model.pipeline.check_size).

The report draws two figures per target (its azimuth and elevation patterns, each showing every antenna and marking
every target) and a few over all of them (the noise sky, the SNR gain over the hours, the ranking, the site plan):
:func:`figure_counts`, the same list :func:`snrgain.outputs.report.figure_makers` makes (tested).  Each figure's
drawing time and SVG size grow with the antennas and targets it shows; :data:`FIGURE_SVG_COST` holds the terms
fitted to figures drawn one by one on this project's 2-core test machine (scenarios of 2-64 targets and 6-65
antennas), the ranking chart's hatch patterns counted on their own (:func:`ranking_patterns_kilobytes`).  Pages of
0.4-87 MB came within 10 % of the estimate (alder-hollow's within 15 %), times within 35 %: the report of 64 targets
and 64 candidates took 62-88 s there (170 s on a busier machine) and wrote 86.8 MB with 1.3 GB of peak memory (the
estimate: 78 s, 84.9 MB, 1.4 GB).  The seconds are one core's drawing, the figures being drawn side by side beside
the evaluation; the memory is about 100 MB and 15 times the page's bytes (the figures' bytes held while the page
is joined).
"""

from __future__ import annotations

from snrgain.records import record

FIGURE_SVG_COST = {
    "azimuth": ((0.036, 0.0047, 0.0065, 0.0), (0.0, 9.9, 1.44, 0.0)),
    "elevation": ((0.044, 0.0040, 0.0, 0.0), (10.7, 4.56, 0.0, 0.0)),
    "sky": ((0.14, 0.0, 0.0051, 0.0), (113.0, 0.0, 4.8, 0.0)),
    "hours": ((0.007, 0.001, 0.024, 0.0006), (0.0, 0.47, 9.0, 0.86)),
    "ranking": ((0.069, 0.004, 0.0071, 0.0011), (40.0, 0.0, 0.0, 1.3)),
    "plan": ((0.05, 0.002, 0.0, 0.0), (15.0, 1.5, 0.0, 0.0)),
    "page": ((0.0, 0.0, 0.0, 0.0), (20.0, 0.0, 0.0, 0.3)),
}
"""Each figure's (seconds, kilobytes) as c0 + c_a A + c_t T + c_at A T for A antennas (the reference and the
candidates) and T targets, by the short names of snrgain.outputs.plots.FIGURES (module docstring); ``page``: the
page's text and tables; the ranking chart's hatch patterns besides (:func:`ranking_patterns_kilobytes`)."""
HATCH_PATTERN_KB = {"..": 67.0, "oo": 138.0}
"""An SVG hatch pattern's kilobytes by hatch, for the dotted ones (the others about half a kilobyte): matplotlib writes
one tile per hatch, fill and edge, so the ranking chart holds one per target hatch and candidate colour in each of its
two panels (measured: the 64 x 64 report's chart holds 264 patterns, 6.9 of its 12.4 MB)."""
MAX_SECONDS = 60.0
"""Estimated drawing time [s] above which ``report`` refuses unless asked (snrgain's own choice: a minute; measured,
the report of 16 targets and 64 antennas took 12 s, of 32 targets and 33 antennas 15-27 s)."""
MAX_BYTES = 30e6
"""Estimated size of the page [B] above which ``report`` refuses unless asked (snrgain's own choice: one page read
and printed in a browser, its memory near half a GB while it is made)."""
NOTE_SECONDS = 10.0
"""From this estimated drawing time [s] on, ``report`` says on stderr what it will draw (a pipe sees it too)."""
MEMORY_BASE_BYTES = 100e6
MEMORY_PER_PAGE_BYTE = 15.0
"""Peak memory [B] about MEMORY_BASE_BYTES and this many times the page's bytes (module docstring)."""


@record
class ReportSize:
    """A report's estimated cost: its figures by kind, the drawing time [s], the page's and the peak memory's bytes."""

    targets: int
    antennas: int
    counts: dict
    seconds: float
    page_bytes: float

    @property
    def figures(self) -> int:
        return sum(self.counts.values())

    @property
    def memory_bytes(self) -> float:
        return MEMORY_BASE_BYTES + MEMORY_PER_PAGE_BYTE * self.page_bytes

    @property
    def fits(self) -> bool:
        return self.seconds <= MAX_SECONDS and self.page_bytes <= MAX_BYTES


def figure_counts(targets: int, plan: bool) -> dict[str, int]:
    """How many figures of each kind the report draws for ``targets`` targets, with a site plan or not."""
    counts = {"azimuth": targets, "elevation": targets, "sky": 1, "hours": 1, "ranking": 1}
    return (counts | {"plan": 1}) if plan else counts


def ranking_patterns_kilobytes(targets: int, antennas: int) -> float:
    """The ranking chart's hatch patterns [kB]: one per hatch of its targets and colour of its candidates in each of
    its two panels and one per target's legend swatch (snrgain.outputs.style: the candidates' colours repeat after
    ANTENNA_COLORS, the targets' hatches after TARGET_HATCHES)."""
    from snrgain.outputs.style import ANTENNA_COLORS, TARGET_HATCHES

    colours = min(max(antennas - 1, 0), len(ANTENNA_COLORS))
    hatches = set(TARGET_HATCHES[: min(targets, len(TARGET_HATCHES))])
    return (2 * colours + 1) * sum(HATCH_PATTERN_KB.get(h, 0.5) for h in hatches)


def report_size(targets: int, antennas: int, plan: bool) -> ReportSize:
    """The estimate for ``targets`` targets and ``antennas`` antennas (the reference and the candidates)."""
    counts = figure_counts(targets, plan)
    seconds, kilobytes = _costs(counts | {"page": 1}, targets, antennas)
    kilobytes += ranking_patterns_kilobytes(targets, antennas)
    return ReportSize(targets, antennas, counts, seconds, kilobytes * 1e3)


def drawing_seconds(counts: dict[str, int], targets: int, antennas: int) -> float:
    """One core's estimated drawing time [s] of ``counts`` figures by kind (the ``figures`` command's own choice of
    them) for ``targets`` targets and ``antennas`` antennas."""
    return _costs(counts, targets, antennas)[0]


def _costs(counts: dict[str, int], targets: int, antennas: int) -> tuple[float, float]:
    """(seconds, kilobytes) of ``counts`` figures by kind (:data:`FIGURE_SVG_COST`)."""
    out = [0.0, 0.0]
    for kind, n in counts.items():
        for i, c in enumerate(FIGURE_SVG_COST[kind]):
            out[i] += n * (c[0] + c[1] * antennas + c[2] * targets + c[3] * antennas * targets)
    return out[0], out[1]


def check_report_size(sc, plan: bool, *, allow_long: bool = False) -> ReportSize:
    """The report's estimate for the scenario ``sc``; raises TooLargeError naming what sizes it and what would fit
    when it passes the limits and ``allow_long`` is not given."""
    from snrgain.errors import TooLargeError

    s = report_size(len(sc.targets), 1 + len(sc.candidates), plan)
    if allow_long or s.fits:
        return s
    few_targets = max((t for t in range(1, s.targets) if report_size(t, s.antennas, plan).fits), default=0)
    few_antennas = max((a for a in range(2, s.antennas) if report_size(s.targets, a, plan).fits), default=0)
    fit = []
    if few_targets:
        fit.append(f"with these {s.antennas} antennas a report fits {few_targets} targets")
    if few_antennas:
        fit.append(
            f"with these {s.targets} targets it fits {few_antennas} antennas (the reference and {few_antennas - 1} "
            "antennas as ranked, a switched antenna's every state counted)"
        )
    over = [
        f"{what} over the report's limit of {limit}"
        for what, limit, past in (
            (f"about {s.seconds:.0f} s of drawing,", f"{MAX_SECONDS:.0f} s", s.seconds > MAX_SECONDS),
            (f"{s.page_bytes / 1e6:.0f} MB of page,", f"{MAX_BYTES / 1e6:.0f} MB", s.page_bytes > MAX_BYTES),
        )
        if past
    ]
    raise TooLargeError(
        f"this report would draw {s.figures} figures ({size_words(s)}): {' and '.join(over)} "
        f"({s.memory_bytes / 2**30:.1f} GB of memory while it is made); "
        + (f"{'; or '.join(fit)}; " if fit else "")
        + "rank gives every table without the figures; or allow it (--allow-long)",
        field="target",
    )


def size_words(s: ReportSize) -> str:
    """What the figures are: 'an azimuth and an elevation pattern for each of the 64 targets, each showing the 65
    antennas, and 3 over them all'."""
    rest = s.figures - s.counts["azimuth"] - s.counts["elevation"]
    return (
        f"an azimuth and an elevation pattern for each of the {s.targets} targets, each showing the {s.antennas} "
        f"antennas, and {rest} over them all"
    )
