"""One look per antenna and one per target, fixed for a scenario and shared by every figure, the layout plot and the
report, so that figures read side by side agree.

- Antennas: the reference in black; the candidates, in the scenario's order, take the colours of Paul Tol's
  "muted" qualitative scheme (P. Tol, *Colour Schemes*, SRON technical note SRON/EPS/TN/09-002, issue 3.2, 2021),
  chosen to stay distinct for colour-blind readers; its nine colours are taken in an order that alternates dark
  and light, so neighbours in the scenario also differ in grey.  Past nine candidates the colours repeat.
- Families: each antenna family has one line style and one marker, in the order the families first appear in the
  scenario (the reference's first), so a grey-scale print still tells a wire from a vertical or an array.  No
  family is named here: the styles follow the scenario, not a list of families.
- Targets: never an antenna colour.  Each target is drawn in black and white with its own hatch pattern (areas,
  bars) and its own hollow marker, from sets disjoint from the families' markers.
- Placed noise sources: a black cross ("X") with a white edge, everywhere.
- Structures that re-radiate (``[site] structures``: a tower, a mast): a hollow lattice mast in dark grey, drawn
  only on the site plan, with its name beside it (never filled, never an antenna colour or a family marker).

Looks are keyed by name; :func:`antenna_looks` takes the names and families in the scenario's order (the
reference first), as :meth:`snrgain.model.results.Results.to_xarray` lists them.
"""

from __future__ import annotations

import numpy as np

from snrgain.records import record

REFERENCE_COLOR = "#000000"
TOL_MUTED = (
    "#332288",  # indigo
    "#DDCC77",  # sand
    "#44AA99",  # teal
    "#CC6677",  # rose
    "#117733",  # green
    "#88CCEE",  # cyan
    "#882255",  # wine
    "#999933",  # olive
    "#AA4499",  # purple
)
"""Tol's muted qualitative colours (Tol 2021), dark and light alternating."""

TOL_BRIGHT = ("#4477AA", "#EE6677", "#228833", "#CCBB44", "#66CCEE", "#AA3377", "#BBBBBB")
"""Tol's bright qualitative colours (Tol 2021): the antennas' colours after the muted ones."""

ANTENNA_COLORS = TOL_MUTED + TOL_BRIGHT
"""The candidates' colours in the scenario's order (the reference's is REFERENCE_COLOR): 16 before one repeats; a
repeat is drawn thinner (:func:`antenna_looks`), so two antennas of one family never look alike below 32."""

FAMILY_LINESTYLES = (
    "-",
    (0, (6, 2)),
    (0, (6, 2, 1.5, 2)),
    (0, (1.5, 1.5)),
    (0, (10, 2, 2, 2, 2, 2)),
    (0, (3, 1, 1, 1, 1, 1)),
    (0, (12, 3)),
    (0, (4, 1.5, 4, 1.5, 1, 1.5)),
)
FAMILY_MARKERS = ("o", "s", "^", "D", "v", "P", "p", "8")
TARGET_HATCHES = ("//", "\\\\", "xx", "..", "++", "oo", "--", "||")
TARGET_MARKERS = ("*", "d", "H", ">", "<", "1", "2", "3")
SOURCE_MARKER = {"marker": "X", "color": "black", "markeredgecolor": "white", "markeredgewidth": 1.0, "ms": 11}
STRUCTURE_COLOR = "0.25"
"""The structures' grey (darker than the keep-outs' fill, so a mast on a keep-out still shows)."""


def structure_marker() -> dict:
    """Keyword arguments for ``Axes.plot`` that draw a structure's mark: a hollow lattice mast (two legs meeting at
    the top, two cross-pieces and their braces), in :data:`STRUCTURE_COLOR`.  Made when drawn (matplotlib's Path)."""
    from matplotlib.path import Path

    legs = [(-0.45, -1.0), (0.0, 1.0), (0.45, -1.0)]
    bars = [((-0.3, -0.33), (0.3, -0.33)), ((-0.15, 0.33), (0.15, 0.33))]
    braces = [((-0.45, -1.0), (0.3, -0.33)), ((0.45, -1.0), (-0.3, -0.33))]
    braces += [((-0.3, -0.33), (0.15, 0.33)), ((0.3, -0.33), (-0.15, 0.33))]
    verts = legs + [p for seg in bars + braces for p in seg]
    codes = [Path.MOVETO, Path.LINETO, Path.LINETO] + [Path.MOVETO, Path.LINETO] * (len(bars) + len(braces))
    return {
        "marker": Path(verts, codes),
        "color": STRUCTURE_COLOR,
        "markerfacecolor": "none",
        "markeredgecolor": STRUCTURE_COLOR,
        "markeredgewidth": 1.5,
        "ms": 18,
    }


@record
class Look:
    """How one antenna is drawn: colour, line style and marker (its family's), line width."""

    color: str
    linestyle: object
    marker: str
    linewidth: float

    def line(self) -> dict:
        """Keyword arguments for ``Axes.plot``."""
        return {"color": self.color, "ls": self.linestyle, "lw": self.linewidth}


@record
class TargetLook:
    """How one target is drawn: a hatch pattern and a hollow marker, in black and white."""

    hatch: str
    marker: str


def antenna_looks(names, families) -> dict[str, Look]:
    """Each antenna's look, by name; ``names`` and ``families`` in the scenario's order, the reference first."""
    names = [str(n) for n in names]
    families = [str(f) for f in families]
    order = list(dict.fromkeys(families))
    out = {}
    for k, (name, fam) in enumerate(zip(names, families)):
        j = order.index(fam)
        color = REFERENCE_COLOR if k == 0 else ANTENNA_COLORS[(k - 1) % len(ANTENNA_COLORS)]
        again = k > 0 and ((k - 1) // len(ANTENNA_COLORS)) % 2 == 1  # the colours' second round: thinner
        out[name] = Look(
            color,
            FAMILY_LINESTYLES[j % len(FAMILY_LINESTYLES)],
            FAMILY_MARKERS[j % len(FAMILY_MARKERS)],
            2.2 if k == 0 else 1.0 if again else 1.8,
        )
    return out


def looks_of(results) -> dict[str, Look]:
    """The looks of a Results object (or a Preview of one) or of its labelled Dataset (antennas in the scenario's
    order)."""
    if hasattr(results, "candidates"):
        ants = [results.reference, *results.candidates]
        return antenna_looks([a.name for a in ants], [a.family for a in ants])
    return antenna_looks(results["antenna"].values, results["family"].values)


def target_looks(n: int) -> list[TargetLook]:
    """The n targets' looks, in the scenario's order."""
    return [
        TargetLook(TARGET_HATCHES[i % len(TARGET_HATCHES)], TARGET_MARKERS[i % len(TARGET_MARKERS)]) for i in range(n)
    ]


def listening_order(values, period: float) -> list:
    """The values (hours of a day, months of a year) in the order a listener meets them: ascending from the value
    after the largest gap around the circle, so a night across midnight reads 22, 23, 0 ... 6 and a winter
    11, 12, 1, 2.

    >>> listening_order([0, 2, 4, 6, 22], 24)
    [22, 0, 2, 4, 6]
    >>> listening_order([1, 2, 11, 12], 12)
    [11, 12, 1, 2]
    """
    vals = sorted(set(values))
    if len(vals) < 2:
        return list(vals)
    arr = np.asarray(vals, dtype=float)
    gaps = np.diff(np.append(arr, arr[0] + period))  # gap after each value, the last one around the circle
    start = (int(np.argmax(gaps)) + 1) % len(vals)
    return vals[start:] + vals[:start]


def unwrapped(values, period: float) -> tuple[list, np.ndarray]:
    """The values in listening order and their positions on an axis that runs on past the period (22, 24, 26 for
    22, 0, 2), so a window across midnight is one continuous span."""
    order = listening_order(values, period)
    if not order:
        return order, np.array([])
    x = np.asarray(order, dtype=float)
    x = x[0] + np.mod(x - x[0], period)
    return order, x
