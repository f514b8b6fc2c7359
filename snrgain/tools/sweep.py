"""Design sweeps: a scenario run over a grid of values of its keys, as a tidy table.

A varied key is written ``TABLE: KEY = VALUES`` (snrgain's own syntax):

- TABLE is a candidate's name, ``reference``, or a section of the scenario (``site``, ``band``, ``time``,
  ``receiver``, ``chain``); KEY is a key of that table (dotted for a key inside it, ``feedline.length``);
- VALUES is a range ``START to STOP by STEP`` (the same unit throughout, STOP included when the steps reach
  it: ``150 m to 350 m by 10 m``; its values kept to 12 decimal places, a finer step refused) or a list ``A, B, C``
  (``sandy soil, moist loam``; ``1, 7`` for months; a value that is itself a list in brackets, as the scenario
  writes it: ``[0, 40], [30, 40]`` for two positions, ``[12, 1], [6, 7]`` for two designs' months).  The output
  column holds a quantity's numbers with the unit in its name, for a range and for a list alike (``Beverage NE:
  height [m]``), and a list as the scenario writes it (``[12, 1]``).

    >>> v = parse_vary("Beverage NE: length = 150 m to 250 m by 50 m")
    >>> v.table, v.key, v.values, v.column
    ('Beverage NE', 'length', ['150 m', '200 m', '250 m'], 'Beverage NE: length [m]')
    >>> parse_vary("time: months = 1, 7").values
    [[1], [7]]
    >>> parse_vary("time: months = [12, 1], [6, 7]").values
    [[12, 1], [6, 7]]

Every combination of the varied values is one design.  When only candidates' own keys vary, the sky, the
reference and every other antenna are computed once and each design rebuilds only what changed; otherwise
each design is a full run.  The SNR figures are the nominal ones (median ground and noise levels) unless the
spreads are asked for, which makes every design a full run.  Rows stream to the output in chunks, so memory
stays flat however many designs there are; with Dask (:func:`run` ``dask=``) the chunks run on a cluster and
come back in order, so the table is the same as in one process.
"""

from __future__ import annotations

import copy
import itertools
import math
import re
from collections.abc import Callable, Iterator
from dataclasses import replace
from pathlib import Path

import numpy as np

from snrgain.errors import ScenarioError, SpecError
from snrgain.fields import nfc
from snrgain.records import record
from snrgain.scenario.feedline import FEED_LINE_KEY

SECTIONS = ("site", "band", "time", "receiver", "chain", "noise", "uncertainty", "compute")
"""Tables of the scenario that a sweep may vary besides the antennas."""
LIST_KEYS = {("time", "months"): "month", ("time", "utc_hours"): "hour"}
"""Keys whose value is a list (and what one item is): a bare number is a one-element list (one month per design), a
bracketed list one value as it stands (``[12, 1], [6, 7]``: two designs of two months each)."""
MAX_DESIGNS = 10_000_000
"""The most designs one sweep may hold."""
LONG_DESIGNS = 200_000
"""Above this many designs a sweep runs only when asked (--allow-long): minutes to hours."""
COLUMNS = [
    "design",
    "antenna",
    "target",
    "snr_gain_db",
    "rdf_db",
    "front_to_back_db",
    "gain_toward_target_dbi",
    "margin_db",
    "receiver_limited",
]
SPREAD_COLUMNS = ["snr_gain_median_db", "snr_gain_p10_db", "snr_gain_p90_db", "probability_beats_reference"]

_NUMBER = r"[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d{1,3})?"
_TERM = re.compile(rf"^\s*({_NUMBER})\s*([^\d\s].*?)?\s*$")


class VaryError(ValueError):
    """A --vary argument that cannot be used; the message names it."""

    def __init__(self, text: str, message: str):
        self.text = text
        super().__init__(f"--vary {text!r}: {message}")


@record
class Vary:
    """One varied key: where it is, and the values it takes (as a scenario file would hold them)."""

    text: str
    table: str
    key: str
    values: list
    column: str
    """The output column holding the design's value (the unit in brackets for a range, or a list of quantities)."""
    column_values: list
    """The values as written in the column: numbers in the range's unit or the list's (_list_column), else the items."""


def _term(text: str, what: str, arg: str) -> tuple[float, str]:
    m = _TERM.match(text)
    if m is None:
        raise VaryError(arg, f"cannot read the range's {what} {text.strip()!r}: write a number and a unit")
    value = float(m.group(1))
    if not math.isfinite(value):
        raise VaryError(arg, f"the range's {what} {text.strip()!r} is not a finite number")
    return value, (m.group(2) or "").strip()


def _scalar(item: str):
    """A list item as a scenario value: a number where it is one, else the text."""
    item = item.strip()
    try:
        return int(item)
    except ValueError:
        pass
    try:
        return float(item)
    except ValueError:
        return item


def _items(values: str, arg: str) -> list[str]:
    """A list's items, split at the commas outside brackets: ``[0, 0], [10, 0]`` is two positions."""
    items, depth, start = [], 0, 0
    for i, ch in enumerate(values):
        depth += {"[": 1, "]": -1}.get(ch, 0)
        if depth < 0:
            raise VaryError(arg, f"a ']' at character {i + 1} of the values closes no '['")
        if ch == "," and depth == 0:
            items.append(values[start:i].strip())
            start = i + 1
    if depth:
        raise VaryError(arg, "a '[' of the values is not closed; write a list value whole, e.g. [0, 0]")
    return [*items, values[start:].strip()]


def _bracketed(item: str, arg: str, example: str = '[12, -9.1] or ["12 m", "-30 ft"]'):
    """A bracketed list item (a position ``[12, -9.1]`` or ``["12 m", "-30 ft"]``) as TOML reads it."""
    import tomllib

    try:
        return tomllib.loads(f"v = {item}")["v"]
    except tomllib.TOMLDecodeError:
        raise VaryError(arg, f"cannot read {item!r} as a list: write it as in the scenario, e.g. {example}") from None


SI_SYMBOLS = {"length": "m", "frequency": "Hz", "conductivity": "S/m", "resistance": "ohm", "angle": "deg"}
SI_SYMBOLS |= {"time": "s", "power": "W"}
"""The unit a listed key's column is written in where its items mix units of one kind (snrgain.units' dimensions;
angles in degrees, as the scenario writes them)."""


DB_UNITS = frozenset({"dB", "dBm", "dBi", "dB/100m", "dB/100ft", "dB/m", "dB/ft"})
"""Units of decibels a listed value may carry besides snrgain.units' dimensions' (levels, gains, line loss)."""


def _a_unit(text: str | None) -> bool:
    """Whether a list item's word after its number is a unit (so ``5 Oaks Farm``, a name, stays text)."""
    from snrgain.units import UNITS

    key = re.sub(r"\s+", "", text or "")
    return bool(key) and (key in DB_UNITS or any(key in table for table in UNITS.values()))


def _list_column(vals: list) -> tuple[str, list]:
    """(unit, cells) of a listed key's column, as a range's is written, for a spreadsheet: where every item is a
    number with one unit, the numbers and that unit (``1 m, 2 m``: 1.0, 2.0 [m]); with units of one kind mixed, the
    numbers in its SI unit (degrees for angles: ``1 m, 6 ft``: 1.0, 1.8288 [m]); else (numbers alone, ``auto``, a
    ground's or family's name, a position) the items as they are."""
    from snrgain.units import QuantityError, parse_quantity

    if all(isinstance(v, (int, float)) for v in vals):
        return "", list(vals)
    terms = [_TERM.match(v) if isinstance(v, str) else None for v in vals]
    if all(t is not None and _a_unit(t.group(2)) for t in terms):
        units = {re.sub(r"\s+", "", t.group(2)) for t in terms}
        if len(units) == 1:
            return units.pop(), [float(t.group(1)) for t in terms]
        for dimension, unit in SI_SYMBOLS.items():
            try:
                si = [parse_quantity(v, dimension) for v in vals]
            except QuantityError:
                continue
            return unit, [math.degrees(x) for x in si] if dimension == "angle" else si
    return "", list(vals)


def parse_vary(text: str) -> Vary:
    """Read one ``TABLE: KEY = VALUES`` argument (module docstring); raises VaryError naming it."""
    if ":" not in text or "=" not in text:
        raise VaryError(text, "write TABLE: KEY = VALUES, e.g. 'Beverage NE: length = 150 m to 350 m by 10 m'")
    table, rest = text.split(":", 1)
    key, values = rest.split("=", 1)
    table, key, values = nfc(table.strip()), key.strip(), values.strip()  # a name as the scenario's are
    if not table or not key or not re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*(\.[A-Za-z_][A-Za-z0-9_]*)*", key):
        raise VaryError(text, f"the table and key must be named, the key as word or word.word; got {key!r}")
    listed = (table, key) in LIST_KEYS
    m = re.fullmatch(r"(.+?)\s+to\s+(.+?)\s+by\s+(.+)", values)
    if m is None and re.search(r"\bto\b", values):
        raise VaryError(text, "a range is START to STOP by STEP, e.g. '150 m to 350 m by 10 m'")
    if m:
        (a, ua), (b, ub), (step, us) = (_term(m.group(i), w, text) for i, w in ((1, "start"), (2, "stop"), (3, "step")))
        if not ua == ub == us:
            raise VaryError(
                text, f"give the start, stop and step in one unit; got {ua or 'none'}, {ub or 'none'}, {us or 'none'}"
            )
        if step == 0:
            raise VaryError(text, "the step must not be zero")
        if (b - a) * step < 0:
            raise VaryError(text, f"the range is empty: from {a:g} the step {step:g} never reaches {b:g}")
        n = int(math.floor((b - a) / step + 1e-9)) + 1
        if n > MAX_DESIGNS:
            raise VaryError(text, f"{n} values is too many (at most {MAX_DESIGNS})")
        nums = [round(a + i * step, 12) for i in range(n)]
        if len(set(nums)) < n:
            raise VaryError(
                text,
                f"the step {step:g}{' ' + us if us else ''} is finer than the values are kept at (12 decimal places, "
                f"and 15 significant digits of {max(abs(a), abs(b)):g}): {n} designs would repeat values; give a "
                "coarser step",
            )
        if listed and not ua and all(float(x).is_integer() for x in nums):
            nums = [int(x) for x in nums]  # months and hours as the scenario writes them (a month is whole)
        vals = [f"{np.format_float_positional(x, trim='-')} {ua}" if ua else x for x in nums]
        column = f"{table}: {key} [{ua}]" if ua else f"{table}: {key}"
        col_vals = nums
    else:
        items = _items(values, text)
        if not any(items):
            raise VaryError(text, "no values: give a range START to STOP by STEP or a list A, B, C")
        if not all(items):
            raise VaryError(text, f"item {items.index('') + 1} of the list is empty (two commas, or one at an end)")
        example = {"month": "[12, 1]", "hour": "[0, 2]"}.get(LIST_KEYS.get((table, key)))
        vals = [
            _bracketed(s, text, *([example] if example else [])) if s.startswith("[") else _scalar(s) for s in items
        ]
        if listed:
            vals = _as_lists(vals, items, LIST_KEYS[table, key], f"{table}.{key}", text)
        unit, col_vals = _list_column(vals)
        column = f"{table}: {key} [{unit}]" if unit else f"{table}: {key}"
    if listed:
        vals = [v if isinstance(v, list) else [v] for v in vals]
    return Vary(text, table, key, vals, column, col_vals)


def _as_lists(vals: list, items: list[str], one: str, where: str, arg: str) -> list:
    """A list key's values: each bracketed list as it stands, a bare number as a list of one; a bare item that is
    not a number refused, with the two forms.  Bare numbers alone stay bare here, so that their column holds the
    numbers (parse_vary makes them lists); beside a bracketed list each is a list too, as its column shows it."""
    for v, item in zip(vals, items):
        if not isinstance(v, (list, int, float)) or isinstance(v, bool):
            raise VaryError(
                arg,
                f"{where} takes a list of {one}s, and {item!r} is neither one {one} nor a list in brackets: write "
                f"one {one} a design ({'1, 7' if one == 'month' else '0, 12'}) or each design's {one}s in brackets "
                f"({'[12, 1], [6, 7]' if one == 'month' else '[0, 2], [4, 6]'})",
            )
    if not any(isinstance(v, list) for v in vals):
        return vals
    return [v if isinstance(v, list) else [v] for v in vals]


def _table(data: dict, vary: Vary) -> dict:
    """The table of the raw scenario a varied key lives in (created for a section that is absent)."""
    if vary.table == "reference":
        ref = data.get("reference")
        if ref is None:
            raise VaryError(vary.text, "the scenario gives no [reference] table; write one to vary it")
        return ref
    if vary.table in SECTIONS:
        return data.setdefault(vary.table, {})
    for cand in data.get("candidate", []):
        if isinstance(cand, dict) and cand.get("name") == vary.table:
            return cand
    from snrgain.scenario import connected

    try:  # a switched antenna's state (by its name or its shorter one): its antenna's table holds every state
        group = connected(data, vary.table).group
    except ValueError:
        group = None
    if group is not None:
        raise VaryError(
            vary.text,
            f"{vary.table!r} is one state of the switched antenna {group!r}, whose table holds every state: a sweep "
            f"varies the table as written, every state alike (a row each); write '{group}: {vary.key} = ...'",
        )
    names = [c.get("name") for c in data.get("candidate", []) if isinstance(c, dict)]
    targets = [t.get("name") for t in data.get("target", []) if isinstance(t, dict)]
    if vary.table in targets:
        raise VaryError(
            vary.text,
            f"{vary.table!r} is a target: a sweep varies the antennas (a candidate's keys, the reference's) or a "
            f"section ({', '.join(SECTIONS)}); the targets stay as the file gives them",
        )
    import difflib

    near = difflib.get_close_matches(vary.table.lower(), [str(n).lower() for n in names], n=1, cutoff=0.4)
    hint = f" (did you mean {names[[str(n).lower() for n in names].index(near[0])]!r}?)" if near else ""
    raise VaryError(
        vary.text,
        f"no candidate named {vary.table!r}{hint}; the candidates are {names}, or vary "
        f"'reference' or a section ({', '.join(SECTIONS)})",
    )


def apply(data: dict, varies: list[Vary], values, band: str | None = None) -> dict:
    """A copy of the raw scenario with each varied key set to its value in this design.  In a scenario of several
    bands (``[[band]]``) a band's key is set in the band ``band`` names (``--band``; it keeps that name when the
    file names it by its frequency), else in every band."""
    from snrgain.scenario.bands import band_label

    out = copy.deepcopy(data)
    for vary, value in zip(varies, values):
        top = out.get("band") if vary.table == "band" else None
        if isinstance(top, list):
            tables = [t for t in top if isinstance(t, dict) and (band is None or band_label(t) == band)]
            for table in tables:
                table.setdefault("name", band_label(table))
        else:
            tables = [_table(out, vary)]
        *path, last = vary.key.split(".")
        for table in tables:
            for part in path:
                table = table.setdefault(part, {})
                if not isinstance(table, dict):
                    raise VaryError(vary.text, f"{part!r} is not a table in {vary.table!r}")
            table[last] = copy.deepcopy(value)
    return out


def design_count(varies: list[Vary]) -> int:
    n = 1
    for v in varies:
        n *= len(v.values)
    return n


def designs(varies: list[Vary]) -> Iterator[tuple]:
    """Every combination of the varied values, the last key varying fastest (lazily)."""
    return itertools.product(*(v.values for v in varies))


# -- evaluation --------------------------------------------------------------------------------------------------


@record(frozen=False)
class Study:
    """A sweep's scenario and options, everything a worker needs to run designs (picklable)."""

    data: dict
    label: str
    base_dir: str | None
    varies: list[Vary]
    p372_dir: str | None = None
    nside: int | None = None
    spread: bool = False
    reference: str | None = None
    """Rank against this antenna of the scenario instead of its [reference] (``--reference``)."""
    band: str | None = None
    """The band of a scenario of several (``--band``)."""
    bands: tuple[str, ...] = ()
    """Every band of a scenario of several, when no ``--band`` picks one: each design runs in each band, and the rows
    gain a ``band`` column (after ``design``)."""

    def in_band(self, band: str) -> Study:
        """This study in one of its bands (the same object for the same band, so the shared stages are made once)."""
        key = (id(self), band)
        hit = _BAND_STUDIES.get(key)
        if hit is None or hit[0] is not self:  # the entry holds its study, so its id is not another's
            if len(_BAND_STUDIES) > 64:
                _BAND_STUDIES.clear()
            hit = _BAND_STUDIES[key] = (self, replace(self, band=band, bands=()))
        return hit[1]

    @property
    def fast(self) -> bool:
        """Only candidates' own keys vary (not their chains or feed lines, not the antenna ranked against), and no
        spread is asked: the shared part is computed once."""
        return not self.spread and all(
            v.table not in SECTIONS
            and v.table != "reference"
            and v.table != self.reference
            and not v.key.startswith("chain")
            and v.key.split(".")[0] != FEED_LINE_KEY
            for v in self.varies
        )

    def load(self, data: dict):
        from snrgain.scenario import load

        base = Path(self.base_dir) if self.base_dir else None
        sc = load(
            data,
            nside=self.nside,
            p372_dir=self.p372_dir,
            base_dir=base,
            label=self.label,
            reference=self.reference,
            band=self.band,
        )
        if not self.spread:
            sc = replace(
                sc,
                uncertainty=replace(sc.uncertainty, ground=False, noise_deciles=False, local_sources=False),
            )
        return sc


_BAND_STUDIES: dict[tuple[int, str], tuple[Study, Study]] = {}


def validate(study: Study) -> None:
    """Check every varied key before any work: its table exists, and the first and last value of each (every
    value of a list) give a valid scenario (in every band).  Raises VaryError naming the argument."""
    for vary in study.varies:
        if study.bands and vary.table == "band" and vary.key in ("frequency", "name"):
            raise VaryError(
                vary.text,
                f"the scenario has {len(study.bands)} bands ({', '.join(study.bands)}): one {vary.key} would be set "
                "in every band, each still named as in the file; pick the band to vary with --band",
            )
        own = _bands_with_own(study, vary)
        if own:
            raise VaryError(
                vary.text,
                f"time.{vary.key} does not reach {', '.join(map(repr, own))}, which has its own {vary.key} "
                f"([[band]] {vary.key}): its rows would not change; vary 'band: {vary.key} = ...' with --band "
                f"{own[0]!r}, or pick another band with --band",
            )
    for band in study.bands:
        validate(study.in_band(band))
    if study.bands:
        return
    base_values = [v.values[0] for v in study.varies]
    _first_design(study, base_values)
    for i, vary in enumerate(study.varies):
        ends = vary.values if len(vary.values) <= 16 else [vary.values[0], vary.values[-1]]
        for value in ends:
            values = list(base_values)
            values[i] = value
            try:
                study.load(apply(study.data, study.varies, values, study.band))
            except VaryError:
                raise
            except (ScenarioError, SpecError, ValueError) as exc:
                _invalid(study, vary, value, exc)


def _bands_with_own(study: Study, vary: Vary) -> list[str]:
    """The bands run (``--band``'s, else every band) whose own table sets the ``[time]`` key ``vary`` varies (months,
    utc_hours): there the band's own wins, and the design's value would not reach them."""
    from snrgain.scenario.bands import band_label

    if vary.table != "time" or vary.key not in ("months", "utc_hours"):
        return []
    tables = study.data.get("band")
    if not isinstance(tables, list):
        return []
    run = set(study.bands) if study.bands else {study.band}
    return [band_label(t) for t in tables if isinstance(t, dict) and vary.key in t and band_label(t) in run]


def _invalid(study: Study, vary: Vary, value, exc: Exception):
    """Raise the VaryError of a design that ``vary`` at ``value`` made invalid (the scenario's own error when the
    file as written fails the same way)."""
    if isinstance(exc, ScenarioError):
        _unvaried_fails(study, exc)
        problems = "; ".join(f"{p}: {m}" if p else m for p, m in exc.problems)
        raise VaryError(vary.text, f"with {_shown(value)} the scenario is invalid: {problems}") from None
    raise VaryError(vary.text, f"with {_shown(value)}: {exc}") from None


def _first_design(study: Study, values: list) -> None:
    """The design of every --vary's first value, checked first: when it fails and leaving one --vary out mends it,
    that --vary is named (with two, ``A: length`` and ``A: colour``, the unknown colour was laid on the length)."""
    try:
        study.load(apply(study.data, study.varies, values, study.band))
        return
    except VaryError:
        raise
    except (ScenarioError, SpecError, ValueError) as exc:
        failed = exc
    if len(study.varies) < 2:
        _invalid(study, study.varies[0], values[0], failed)
    for i, vary in enumerate(study.varies):
        rest, rest_values = study.varies[:i] + study.varies[i + 1 :], values[:i] + values[i + 1 :]
        try:
            study.load(apply(study.data, rest, rest_values, study.band))
        except (ScenarioError, SpecError, ValueError):
            continue
        _invalid(study, vary, values[i], failed)


def _unvaried_fails(study: Study, exc: ScenarioError) -> None:
    """Raise the scenario's own error when the file as written (with the command's options) fails with every problem
    a design failed with: those are not the varied value's doing, and are said as rank says them."""
    try:
        study.load(study.data)
    except ScenarioError as own:
        if set(exc.problems) <= set(own.problems):
            raise own from None
    except (SpecError, ValueError):
        pass


def _shown(value) -> str:
    return repr(value[0] if isinstance(value, list) and len(value) == 1 else value)


class _Shared:
    """The stages a sweep's designs share, made once from the first design: the sky (its local sources resolved),
    the reference's products; a design then goes through the same stages (snrgain.model.pipeline) for the antennas it
    changes.  What an antenna declares decides how much is shared: a candidate set under the sky is set under
    this sky (pipeline.steer); a phasing unit, or an antenna a phasing unit holds, takes the whole scenario."""

    def __init__(self, study: Study):
        from snrgain.model import pipeline

        self.study = study
        sc = pipeline.resolve_sources(study.load(study.data))
        self.grid = pipeline.sky_grid(sc)
        self.skies = pipeline.build_sky(sc, self.grid)
        self.sc = sc
        self.ref = pipeline.products(sc, [sc.reference], self.grid, self.skies)
        self.raw_ground = study.data.get("site", {}).get("ground", "moist loam")
        self.names = [c.name for c in sc.candidates]
        self.tables = [c.get("name") if isinstance(c, dict) else None for c in study.data.get("candidate", [])]
        held = {id(e) for a in sc.candidates if a.composite for e in a.elements}
        self.alone = {a.name for a in sc.candidates if not a.composite and id(a) not in held}
        """Candidates that stand alone: a design that changes one of them rebuilds it alone."""

    def candidate(self, data: dict, name: str):
        """The AntennaResult of one candidate of a design (nominal: no spreads)."""
        from snrgain.model import pipeline
        from snrgain.scenario import antenna_from_table

        sc = self.sc
        k = self.names.index(name)
        spec = dict(data["candidate"][self.tables.index(name)])  # by place: a design may rename it
        # the candidate's own chain is the scenario's; its place is layout's; its feed line the one load resolved
        for key in ("chain", "place", FEED_LINE_KEY, "bands"):  # its bands: the band's scenario holds it already
            spec.pop(key, None)
        base = Path(self.study.base_dir) if self.study.base_dir else None
        ant = antenna_from_table(
            spec, f"candidate {name!r}", site_ground=self.raw_ground, base_dir=base, freq_hz=sc.freq_hz
        )
        sub = pipeline.with_candidates(sc, [ant], 1 + k)
        # Its feed line is scored as rank scores it: the line load resolved for the candidate (its own keys varied make
        # every design a full run, Study.fast), under the design's name, its run starting where the design stands
        # (snrgain.model.feedline).
        line = sc.feed_lines.get(name)
        sub = replace(sub, feed_lines={} if line is None else {ant.name: line})
        # where it lies, among the scenario's other antennas as they stand (a wire it crosses is said, as rank says it)
        around = replace(sub, candidates=(*sc.candidates[:k], ant, *sc.candidates[k + 1 :]))
        placed = placement_warnings(around, {ant.name})
        sub = pipeline.steer(pipeline.with_structures(sub), self.grid, self.skies)
        p = pipeline.products(sub, sub.antennas, self.grid, self.skies, known=self.ref)
        return pipeline.antenna_results(sub, p, self.skies)[1], placed.get(ant.name, "")


_SHARED: dict[int, tuple[Study, _Shared]] = {}


MAX_SHARED = 16
"""The most studies whose shared stages a process keeps (one per band of a sweep over several bands)."""


def _shared(study: Study) -> _Shared:
    key = id(study)
    hit = _SHARED.get(key)
    if hit is None or hit[0] is not study:  # the entry holds its study, so its id is not another's
        if len(_SHARED) >= MAX_SHARED:
            _SHARED.clear()
        hit = _SHARED[key] = (study, _Shared(study))
    return hit[1]


def run_designs(study: Study, chunk: list[tuple[int, tuple]]) -> list[dict]:
    """Rows (one per design, varied antenna and target; per band too for a study of several bands) for a chunk of
    (design number, values)."""
    if study.bands:
        rows = []
        for item in chunk:  # design by design, each in every band: the rows' order does not depend on the chunks
            for band in study.bands:
                for row in run_designs(study.in_band(band), [item]):
                    rows.append({"design": row.pop("design"), "band": band, **row})
        return rows
    from snrgain.model import pipeline

    rows = []
    shared = _shared(study) if study.fast else None
    varied = {v.table for v in study.varies}
    for number, values in chunk:
        data = apply(study.data, study.varies, values, study.band)
        if shared is not None and varied <= shared.alone:
            targets = [t.name for t in shared.sc.targets]
            for name in sorted(varied, key=shared.names.index):
                a, placed = shared.candidate(data, name)
                rows += _rows(number, study.varies, values, a, targets, False, placed)
            continue
        sc = study.load(data)
        if study.spread:
            r = pipeline.evaluate(sc)
            targets, chosen = [t["name"] for t in r.targets], list(r.candidates)
        else:
            _, _, _, per = pipeline.nominal(sc)
            targets, chosen = [t.name for t in sc.targets], per[1:]
        names = {c.name for c in chosen if c.name in varied or c.group in varied}  # a switched one: its states
        if not names and not _varies_on_band(sc, data, varied):
            continue  # what the design varies is not on this band (a candidate's bands, a band's own reference)
        shown = [c for c in chosen if c.name in names] or chosen
        placed = placement_warnings(sc, {c.name for c in shown})
        for a in shown:
            rows += _rows(number, study.varies, values, a, targets, study.spread, placed.get(a.name, ""))
    return rows


def _varies_on_band(sc, data: dict, varied: set[str]) -> bool:
    """Whether a design's varied tables stand in this band's scenario ``sc``: a candidate varied that is not built
    for the band (its ``bands``) does not, nor the file's reference on a band with a reference of its own; a section
    (site, band, time, ...) always does."""
    from snrgain.scenario.switched import switched_state

    tables = {c.get("name") for c in data.get("candidate", []) if isinstance(c, dict)}
    ref = data.get("reference") if isinstance(data.get("reference"), dict) else {}
    here = {a.name for a in sc.candidates} | {s.group for s in map(switched_state, sc.candidates) if s is not None}
    for table in varied:
        if table in tables and table not in here:
            return False
        if table == "reference" and sc.reference.name != ref.get("name", sc.reference.name):
            return False
    return True


PLACEMENT_CODES = (
    "off-lot",
    "in-keep-out",
    "wires-cross",
    "near-tx-vertical",
    "near-structure",
    "feed-line-near-tx-vertical",
)
"""The site's warnings a sweep's row carries (snrgain.decide.lot: ``check`` of the design says them in full)."""


def placement_warnings(sc, names: set[str]) -> dict[str, str]:
    """For each of the antennas ``names`` of a design, the codes of the site's warnings about where it lies (off the
    lot, in a keep-out, crossing a wire, near the TX vertical or a structure, its feed line near the vertical), joined
    by "; ": a design that wins the sweep but does not fit the lot is seen in its row."""
    site = sc.site
    if site.lot_m is None and not getattr(site, "keep_out", ()) and sc.reference is None:
        return {}
    from snrgain.decide.lot import site_notices

    out: dict[str, list[str]] = {}
    for n in site_notices(sc, only=names):
        # a crossing is said of the first of the two wires in the file: here of each of the two the design holds
        for name in {n.antenna, n.values.get("other")} & set(names):
            if n.code in PLACEMENT_CODES and n.code not in out.get(name, []):
                out.setdefault(name, []).append(n.code)
    return {k: "; ".join(v) for k, v in out.items()}


def _rows(number, varies, values, a, targets, spread, placed: str = "") -> list[dict]:
    out = []
    fixed = {"design": number}
    for vary, value in zip(varies, values):
        fixed[vary.column] = vary.column_values[vary.values.index(value)]
    margin = float(np.min(a.margin_db))
    for i, target in enumerate(targets):
        row = dict(fixed)
        row.update(
            antenna=a.name,
            target=target,
            snr_gain_db=float(a.snr_gain_nominal_db[i]),
            rdf_db=float(a.rdf_db[i]),
            front_to_back_db=float(a.front_to_back_db[i]),
            gain_toward_target_dbi=float(a.gain_dbi[i]),
            margin_db=margin,
            receiver_limited=bool(a.receiver_limited),
            placement_warnings=placed,
        )
        if spread:
            row.update(
                snr_gain_median_db=float(a.snr_gain_median_db[i]),
                snr_gain_p10_db=float(a.snr_gain_p10_db[i]),
                snr_gain_p90_db=float(a.snr_gain_p90_db[i]),
                probability_beats_reference=float(a.probability_beats[i]),
            )
        out.append(row)
    return out


# -- output ------------------------------------------------------------------------------------------------------


class _TableWriter:
    """Rows appended in chunks to CSV or Parquet (pyarrow), with the column order fixed by the first chunk."""

    def __init__(self, path: Path, fmt: str):
        self.path, self.fmt = path, fmt
        self.columns = None
        self._csv = self._pq = self._fh = None

    def write(self, rows: list[dict]):
        if not rows:
            return
        if self.columns is None:
            self.columns = list(rows[0])
            if self.fmt == "csv":
                from snrgain.outputs.csvcells import csv_writer

                self._fh = open(self.path, "w", newline="", encoding="utf-8")  # noqa: SIM115 - closed in close()
                self._csv = csv_writer(self._fh)  # names that begin like a formula are written as text
                self._csv.writerow(self.columns)
        if self.fmt == "csv":
            for r in rows:
                self._csv.writerow([csv_cell(r[c]) for c in self.columns])
        else:
            import pyarrow as pa
            import pyarrow.parquet as pq

            table = pa.Table.from_pylist(rows).select(self.columns)
            if self._pq is None:
                self._pq = pq.ParquetWriter(str(self.path), table.schema)
            self._pq.write_table(table)

    def close(self):
        if self._fh is not None:
            self._fh.close()
        if self._pq is not None:
            self._pq.close()


def csv_cell(v):
    """A CSV cell: a float as Python writes it (empty if not finite), a list as the scenario and --vary write it
    (``[12, 1]``, ``["10 m", "75 m"]``), anything else as it is."""
    if isinstance(v, float):
        return "" if not math.isfinite(v) else repr(v)
    if isinstance(v, (list, tuple)):
        import json

        return json.dumps(list(v), ensure_ascii=False)
    return v


def output_format(path) -> str:
    suffix = Path(path).suffix.lower()
    if suffix == ".csv":
        return "csv"
    if suffix in (".parquet", ".pq"):
        try:
            import pyarrow  # noqa: F401
        except ImportError:
            raise ValueError("Parquet output needs pyarrow: pip install 'snrgain[scale]'") from None
        return "parquet"
    raise ValueError(f"{path}: write the sweep as .csv or .parquet")


# -- the run -----------------------------------------------------------------------------------------------------

TARGET_CHUNK_S = 0.1
"""A chunk of designs holds about this much work [s] (enough to keep a cluster's overhead small)."""
PROBE_DESIGNS = 5
PROBE_S = 0.05
"""The work per design is timed on the designs after the first, up to PROBE_DESIGNS of them or PROBE_S [s] of CPU."""


def run(
    study: Study,
    output,
    *,
    overwrite: bool = False,
    dask: str | None = None,
    progress: Callable[[int], None] | None = None,
    chunk_designs: int | None = None,
    validated: bool = False,
) -> int:
    """Run every design and write the table to ``output`` (.csv or .parquet) whole or not at all.

    ``dask``: "local" for a LocalCluster on this machine, or a scheduler's address.  ``progress(n)`` is called
    with the number of designs done after each chunk.  ``validated``: :func:`validate` was called on ``study``
    already (the command line checks every --vary before it prints anything).  Returns the number of designs.
    """
    fmt = output_format(output)
    if not validated:
        validate(study)
    total = design_count(study.varies)
    numbered = enumerate(designs(study.varies))
    # A cluster's workers start (and import what a design needs, :func:`dask_setup`) while this process works out
    # the first designs below; a scheduler that cannot be reached is said before any of them.
    client = connect(dask) if dask is not None else None
    try:
        return _run(study, output, fmt, total, numbered, client, overwrite, progress, chunk_designs)
    finally:
        if client is not None:
            close(client)


def _run(study, output, fmt, total, numbered, client, overwrite, progress, chunk_designs) -> int:
    import time

    from snrgain.files import write_atomic

    # The first design also builds what every design shares (the sky, the reference): its time would make
    # every chunk a single design.  The chunks are sized from the designs after it, timed one by one.
    head_rows = run_designs(study, list(itertools.islice(numbered, 1)))
    n_head = 1
    size = chunk_designs
    if size is None:
        # CPU time of this thread: on shared cores (a cluster's workers starting beside it) the wall time of a
        # design counts the waits for a core, and would make the chunks too small
        n_probe, t0 = 0, time.thread_time()
        while n_probe < PROBE_DESIGNS and time.thread_time() - t0 < PROBE_S:
            block = list(itertools.islice(numbered, 1))
            if not block:
                break
            head_rows += run_designs(study, block)
            n_probe += 1
        per_design = max((time.thread_time() - t0) / n_probe, 1e-5) if n_probe else 1e-4
        n_head += n_probe
        size = max(1, int(TARGET_CHUNK_S / per_design))
        if client is not None:  # fewer, larger tasks, yet several per worker so that none waits for the last
            workers = max(1, len(client.scheduler_info().get("workers", {})) or LOCAL_WORKERS)
            share = math.ceil((total - n_head) / (CHUNKS_PER_WORKER * workers))
            size = max(size, min(int(TARGET_DASK_CHUNK_S / per_design), share))

    def chunks():
        while True:
            block = list(itertools.islice(numbered, size))
            if not block:
                return
            yield block

    def body(tmp: Path):
        writer = _TableWriter(tmp, fmt)
        try:
            writer.write(head_rows)
            done = n_head
            if progress:
                progress(done)
            results = _in_process(study, chunks()) if client is None else _on_dask(study, chunks(), client)
            for n, rows in results:
                writer.write(rows)
                done += n
                if progress:
                    progress(done)
        finally:
            writer.close()

    write_atomic(output, body, overwrite=overwrite)
    return total


def _in_process(study, chunks):
    for block in chunks:
        yield len(block), run_designs(study, block)


def _reachable(address: str, timeout_s: float) -> None:
    """OSError when a tcp:// scheduler address refuses a connection or does not answer within ``timeout_s``;
    other forms (tls://, a bare host) are left to the client."""
    import socket
    from urllib.parse import urlsplit

    parts = urlsplit(address)
    if parts.scheme != "tcp" or parts.hostname is None or parts.port is None:
        return
    with socket.create_connection((parts.hostname, parts.port), timeout=timeout_s) as sock:
        # a Dask scheduler opens its handshake as soon as it accepts (measured on distributed's LocalCluster: its
        # first bytes at once); a listener that stays silent would keep the client waiting without end
        sock.settimeout(timeout_s)
        try:
            first = sock.recv(1)
        except TimeoutError:
            raise TimeoutError(f"it accepted the connection but sent nothing within {timeout_s:g} s") from None
        if not first:
            raise ConnectionError("it closed the connection without a word")


LOCAL_WORKERS = 2
"""Workers of ``--dask local``: one single-threaded worker per core of a 2-core machine."""
TARGET_DASK_CHUNK_S = 0.5
"""On a cluster a chunk holds about this much work [s]: each task costs the scheduler, the worker and this process
a few milliseconds, so fewer, larger ones pay ..."""
CHUNKS_PER_WORKER = 8
"""... but each worker gets at least this many, so that the last one finishing alone costs little."""
WORKERS_TIMEOUT_S = 60.0
"""How long a sweep waits for its first worker (all of ``--dask local``'s)."""


def connect(address: str, *, timeout_s: float = 8.0):
    """A Dask client: a LocalCluster of two single-threaded workers for "local" (returned at once: its workers start
    in the background, each importing what a design needs, :func:`dask_setup`), else the scheduler at ``address``;
    ValueError naming --dask when it cannot be reached within ``timeout_s``."""
    try:
        from distributed import Client, LocalCluster
    except ImportError:
        raise ValueError("--dask needs Dask's distributed scheduler: pip install 'snrgain[scale]'") from None
    if address == "local":
        import dask

        # the scheduler (in this process) balances nothing between two workers fed in order: its work stealing,
        # run ten times a second, off
        with dask.config.set({"distributed.scheduler.work-stealing": False}):
            cluster = LocalCluster(
                n_workers=0,
                threads_per_worker=1,
                processes=True,
                dashboard_address=None,
                preload=[__name__],
                # the workers' statistical profiler samples every thread's stack 100 times a second: off (set in
                # each worker; dotted, so that key alone)
                config={"distributed.worker.profile.enabled": False},
            )
        cluster.scale(LOCAL_WORKERS)  # does not wait for them
        return Client(cluster)
    import dask

    try:
        _reachable(address, timeout_s)  # a refused port says so at once (the client would retry to its timeout)
    except (OSError, TimeoutError) as exc:
        raise ValueError(
            f"--dask {address!r}: cannot reach the scheduler ({exc.__class__.__name__}: {exc}); "
            "start one with 'dask scheduler' and workers with 'dask worker ADDRESS'"
        ) from None
    # something listens there: it must answer as a scheduler within the timeout (a server of another kind either
    # never answers Dask's handshake or answers with bytes read as a message's length: exabytes to allocate)
    try:
        with dask.config.set({"distributed.comm.timeouts.connect": f"{timeout_s}s"}):  # the handshake's too
            return Client(address, timeout=f"{timeout_s}s")
    except Exception as exc:  # noqa: BLE001 - whatever the other end did, the answer is the same
        raise ValueError(
            f"--dask {address!r}: something listens there but does not answer as a Dask scheduler within "
            f"{timeout_s:g} s ({exc.__class__.__name__}); give the address 'dask scheduler' prints"
        ) from None


def close(client) -> None:
    """Close a client, and the LocalCluster it started."""
    cluster = getattr(client, "cluster", None)
    client.close()
    if cluster is not None:
        cluster.close()


def dask_setup(worker=None) -> None:
    """Run by each worker of ``--dask local`` as it starts (Dask's ``preload``): its process keeps freed memory for the
    next array as the command line's does (snrgain.allocator; without it a worker's patterns ran 1.7 times slower
    than in-process), runs the cyclic collector as seldom as the command line's process does (snrgain.cli: without it
    the workers' designs ran slower than the command's own), and imports the modules a design needs, so that the
    first chunk does not wait for them.  A Ctrl-C at the terminal reaches every process of the command: a local worker
    leaves it to the command, which stops the cluster (each worker printed its tracebacks), and does not log the
    tasks that stop cancelled, nor a heartbeat that finds the scheduler already closed."""
    import logging
    import signal
    import threading

    from snrgain.allocator import collect_less, tune

    tune()
    collect_less()
    if threading.current_thread() is threading.main_thread():
        signal.signal(signal.SIGINT, signal.SIG_IGN)
    logging.getLogger("distributed.worker.state_machine").setLevel(logging.ERROR)
    # the command stops the cluster: a worker's heartbeat caught between the scheduler closing and its own stop logs
    # a traceback ("Failed to communicate with scheduler during heartbeat"); a local worker's end, not an error
    logging.getLogger("distributed.worker").addFilter(
        lambda record: not str(record.msg).startswith("Failed to communicate with scheduler")
    )
    import snrgain.decide.lot  # noqa: F401
    import snrgain.model.pipeline  # noqa: F401
    import snrgain.physics.modal  # noqa: F401
    import snrgain.scenario  # noqa: F401


def _run_on_worker(study: Study, chunk: list[tuple[int, tuple]]) -> list[dict]:
    """:func:`run_designs` on a Dask worker (one of a scheduler given by its address too: :func:`dask_setup`'s
    allocator and collector settings made once)."""
    from snrgain.allocator import collect_less, tune

    tune()
    collect_less()
    return run_designs(study, chunk)


def _on_dask(study, chunks, client):
    """Chunks on a Dask cluster, a few in flight per worker, results taken back in order."""
    local = getattr(client, "cluster", None) is not None
    try:
        client.wait_for_workers(LOCAL_WORKERS if local else 1, timeout=WORKERS_TIMEOUT_S)
    except TimeoutError:
        where = "the local cluster's workers did not start" if local else "the scheduler has no worker"
        raise ValueError(f"--dask: {where} within {WORKERS_TIMEOUT_S:.0f} s") from None
    study_future = client.scatter(study, broadcast=True)
    pending = []
    for block in chunks:
        window = max(2, 2 * len(client.scheduler_info().get("workers", {})))
        pending.append((len(block), client.submit(_run_on_worker, study_future, block, pure=False)))
        while len(pending) >= window:
            n, fut = pending.pop(0)
            yield n, fut.result()
    for n, fut in pending:
        yield n, fut.result()
