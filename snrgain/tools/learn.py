"""The site learns from what was measured: the man-made level fitted to paired decodes and written into a copy.

The quantity the model is least sure of at a site is its man-made noise level: P.372's environment categories
(city, residential, rural, quiet rural) are medians over many sites, and one site differs from its category's
curve by several dB.  ``[noise.man_made] offset`` moves the site's level off the curve (its slope over frequency
and its spread over time stay P.372's).  Two ways to fit it:

- from paired decodes (``snrgain verify --write``, :func:`fit_offset`): the offset that minimises the weighted
  squared difference between the measured median A - B and the predicted one over the targets and UTC hours, each
  group weighted by the inverse square of its bootstrap interval's half-width (weighted least squares); the
  prediction runs through :func:`snrgain.model.pipeline.evaluate` on a copy of the scenario for each trial
  offset (a coarse grid, then :func:`scipy.optimize.minimize_scalar` within the best cell);
- from noise readings (``snrgain noise-readings``, :mod:`snrgain.tools.noisereadings`).

With ``grounds`` (``verify --fit-ground``) the site's ground class is chosen too: the offset is fitted for each
named class in turn and the class of least misfit kept (a small discrete search; the ground shapes the
antennas' patterns, efficiencies and so their difference, which the offset alone cannot mimic across targets).

The difference between two antennas depends on the man-made level only through the balance of noise
components (man-made against atmospheric, galactic, local sources and the chain's own noise); where man-made
noise is all there is, both antennas scale alike and the pairs cannot tell its level.  The fit says so (its
tolerance is then unbounded) and refuses to write a copy.

The tolerance: the fitted offset's standard error from the slope of each group's prediction with the offset
(Gauss-Newton: se = 1 / sqrt(sum (slope / sigma)^2), sigma the interval's half-width over 1.645), times 1.645 for
a 90 % interval (the normal approximation, e.g. P. R. Bevington and D. K. Robinson, "Data Reduction and Error
Analysis for the Physical Sciences", 3rd ed. (2003), ch. 8).
"""

from __future__ import annotations

import copy
import tomllib
from dataclasses import field
from pathlib import Path

import numpy as np

from snrgain.records import record

OFFSET_RANGE_DB = (-40.0, 40.0)
"""The offsets the schema allows [dB] (snrgain.scenario.noise.ManMade.offset)."""
Z90 = 1.645
"""Standard-normal deviate of a two-sided 90 % interval."""


class NothingToFit(ValueError):
    """Too few pairs in any target and hour to fit the man-made level to (the comparison itself stands)."""


MIN_SLOPE = 0.03
"""Below this many dB of predicted difference per dB of man-made offset, the pairs cannot tell the level."""


# ---- the scenario: its offset, copies with another, and the text written


def man_made_table(data: dict) -> dict:
    """The scenario's ``[noise.man_made]`` table (empty if absent); ValueError if man-made noise is off."""
    mm = data.get("noise", {}).get("man_made", {})
    if not isinstance(mm, dict):
        raise ValueError("noise.man_made must be a table")
    if mm.get("environment") == "none":
        raise ValueError(
            "noise.man_made: environment is 'none', so the scenario has no man-made level to fit; set the "
            "environment the site is nearest ('city', 'residential', 'rural' or 'quiet rural') first"
        )
    if "band" in data and isinstance(data["band"], list):
        raise ValueError("a scenario of several bands ([[band]]): fit one band's file at a time")
    return mm


def beyond_p372_note(environment: str, freq_hz: float, offset_db: float) -> str | None:
    """A note when a fitted man-made offset over the environment's P.372 median lies beyond that environment's own
    decile deviations (ITU-R P.372, Table 2: above its upper decile, or below its lower), saying too where the level
    stands against the city curve (the loudest P.372 lists) or the quiet-rural one (the quietest): another
    environment, a local source near the antennas, or readings taken on another antenna than the scenario names
    explain such a fit better than the site's man-made level.  None otherwise."""
    from noisemodels import p372

    own = p372.man_made(freq_hz, environment=environment)
    fa = float(own.fa_db) + offset_db
    at = f"Fa {fa:.1f} dB at {freq_hz / 1e6:g} MHz"
    if offset_db > own.du_db:
        city = float(p372.man_made(freq_hz, environment="city").fa_db)
        where = (
            f", {fa - city:.1f} dB above P.372's city median ({city:.1f} dB), louder than any environment it lists"
            if fa > city
            else ""
        )
        return (
            f"the fitted man-made level, {at}, lies {offset_db:.1f} dB above the {environment} median, beyond its "
            f"upper decile ({own.du_db:.1f} dB){where}: a noisier environment, a source near the antennas (placed in "
            "[[noise.local]]) or readings taken on another antenna than the scenario names explain it better; "
            "check before writing it"
        )
    if offset_db < -own.dl_db:
        quiet = float(p372.man_made(freq_hz, environment="quiet rural").fa_db)
        where = f", {quiet - fa:.1f} dB below P.372's quiet-rural median ({quiet:.1f} dB)" if fa < quiet else ""
        return (
            f"the fitted man-made level, {at}, lies {-offset_db:.1f} dB below the {environment} median, beyond its "
            f"lower decile ({own.dl_db:.1f} dB){where}: a quieter environment, or the chain's gains and the "
            "readings' antennas, explain it better; check before writing it"
        )
    return None


def current_offset(data: dict) -> float:
    """The scenario's man-made offset [dB] as the schema reads it (0 when not set)."""
    from snrgain.scenario.noise import ManMade

    mm = man_made_table(data)
    return float(ManMade.model_validate(mm).offset)


def with_offset(data: dict, offset_db: float) -> dict:
    """A deep copy of the scenario's tables with ``[noise.man_made] offset`` set [dB]."""
    if not (OFFSET_RANGE_DB[0] <= offset_db <= OFFSET_RANGE_DB[1]):
        raise ValueError(
            f"the fitted man-made offset {offset_db:+.1f} dB lies outside {OFFSET_RANGE_DB[0]:g} to "
            f"{OFFSET_RANGE_DB[1]:+g} dB: choose another environment (noise.man_made.environment) and fit again"
        )
    d = copy.deepcopy(data)
    man_made_table(d)
    d.setdefault("noise", {}).setdefault("man_made", {})["offset"] = float(offset_db)
    return d


def write_offset(text: str, offset_db: float, note: str) -> str:
    """The scenario's text with ``offset`` set in its ``[noise.man_made]`` table (added at the end if absent), the
    rest as written; ``note`` goes in a comment beside the value."""
    from snrgain.tools.tomltext import table_blocks

    lines = text.splitlines(keepends=True)
    if lines and not lines[-1].endswith("\n"):
        lines[-1] += "\n"
    value = f'offset = "{offset_db:+.1f} dB"  # {note}\n'
    blocks = table_blocks(lines, "[noise.man_made]")
    if blocks:
        a, b, _ = blocks[0]
        body = [ln for ln in lines[a + 1 : b] if _key(ln) != "offset"]
        out = "".join(lines[: a + 1] + [value] + body + lines[b:])
    else:
        if "man_made" in tomllib.loads(text).get("noise", {}):
            raise ValueError(
                "the scenario sets noise.man_made inline or by dotted keys; write it as a [noise.man_made] table so "
                "the fitted offset can be added"
            )
        out = "".join(lines) + f"\n[noise.man_made]\n{value}"
    parsed = tomllib.loads(out)  # still a valid file, with the value in place
    if "offset" not in parsed.get("noise", {}).get("man_made", {}):
        raise ValueError("the fitted offset could not be placed in [noise.man_made]")
    return out


def _key(line: str) -> str | None:
    if "=" not in line or line.lstrip().startswith("#"):
        return None
    return line.split("=", 1)[0].strip()


def moves(
    data: dict, base_dir, label: str, before_db: float, after_db: float, *, ground: str | None = None, p372_dir=None
) -> list[dict]:
    """How the new offset (and ground class, if given) moves each candidate's predicted SNR gain toward each
    target: the scenario as written (its own months and hours) run through the pipeline before and after (target
    medians, the one statistic)."""
    from snrgain.model.pipeline import evaluate
    from snrgain.scenario import load

    steps = [with_offset(data, before_db), with_offset(data, after_db)]
    if ground is not None:
        steps.append(with_ground(steps[1], ground))
    runs = [evaluate(load(d, base_dir=base_dir, label=label, p372_dir=p372_dir)) for d in steps]
    out = []
    for k, x0 in enumerate(runs[0].candidates):
        xs = [r.candidates[k] for r in runs]
        for t, tg in enumerate(runs[0].targets):
            m = [float(x.snr_gain_median_db[t]) for x in xs]
            row = {
                "antenna": x0.name,
                "target": tg["name"],
                "before_db": m[0],
                "after_db": m[-1],
                "moved_db": m[-1] - m[0],
            }
            if ground is not None:
                row["moved_by_offset_db"] = m[1] - m[0]
                row["moved_by_ground_db"] = m[2] - m[1]
            out.append(row)
    return out


def write_ground(text: str, ground: str, note: str) -> str:
    """The scenario's text with ``[site] ground`` set to a named class, the rest as written."""
    from snrgain.tools.tomltext import table_blocks, toml_string

    lines = text.splitlines(keepends=True)
    blocks = table_blocks(lines, "[site]")
    if not blocks:
        raise ValueError("the scenario has no [site] table to write the ground into")
    a, b, _ = blocks[0]
    body = [ln for ln in lines[a + 1 : b] if _key(ln) != "ground"]
    out = "".join(lines[: a + 1] + [f"ground = {toml_string(ground)}  # {note}\n"] + body + lines[b:])
    if tomllib.loads(out).get("site", {}).get("ground") != ground:
        raise ValueError("the fitted ground could not be placed in [site]")
    return out


def move_lines(rows: list[dict], reference: str = "the reference") -> list[str]:
    out = [f"predicted SNR gain over {reference}, before -> after:"]
    # each column as wide as its longest name (they were cut at 26 and 16: "Beverage JA/VK SSE (150 de")
    wa = max((len(r["antenna"]) for r in rows), default=0)
    wt = max((len(r["target"]) for r in rows), default=0)
    for r in rows:
        split = ""
        if "moved_by_ground_db" in r:
            split = f"; offset {r['moved_by_offset_db']:+.1f}, ground {r['moved_by_ground_db']:+.1f}"
        out.append(
            f"  {r['antenna']:<{wa}} {r['target']:<{wt}} {r['before_db']:+6.1f} -> {r['after_db']:+6.1f} dB "
            f"({r['moved_db']:+.1f}{split})"
        )
    return out


# ---- the fit from paired decodes


@record
class OffsetFit:
    """The man-made offset fitted to paired decodes."""

    before_db: float
    offset_db: float
    tolerance_db: float
    """Half-width of the fitted offset's 90 % interval [dB]; inf when the pairs cannot tell the level."""
    rms_before_db: float
    rms_after_db: float
    """The rms misfit with what was kept: the fitted offset (and ground), or the site's own where the level is not
    determined [dB]."""
    groups: list[dict]
    """Per (target, hour): n, measured median, its sigma, predicted before and after (after: with what was kept,
    so the same as before where the level is not determined), slope [dB/dB]."""
    runs: int
    notes: list[str] = field(default_factory=list)
    ground_before: str | None = None
    ground: str | None = None
    """The ground class fitted (None: the ground was not fitted)."""
    not_determined_because: tuple[str, ...] = ()
    """Why the pairs do not determine the level, each in a few words (empty when they do)."""
    edge_db: float | None = None
    """The edge of the offset search the pairs' best lies at [dB] (None: within the search)."""

    @property
    def identifiable(self) -> bool:
        return bool(np.isfinite(self.tolerance_db))

    def as_dict(self) -> dict:
        ok = self.identifiable
        return {
            "quantity": "noise.man_made.offset",
            "before_db": self.before_db,
            "determined": ok,
            "not_determined_because": list(self.not_determined_because),
            "fitted_db": self.offset_db if ok else None,
            "pairs_best_db": self.offset_db,
            "pairs_best_at_search_edge": self.edge_db is not None,
            "tolerance_90_db": self.tolerance_db if ok else None,
            "rms_misfit_before_db": self.rms_before_db,
            "rms_misfit_after_db": self.rms_after_db,
            "groups": self.groups,
            "pipeline_runs": self.runs,
            "ground_before": self.ground_before,
            "ground_fitted": self.ground,
            "notes": self.notes,
        }


def _hourly_difference(res, a: str, b: str) -> dict:
    """{(target, hour): A - B} from one pipeline run: the nominal SNR gains per UTC hour (mean over the months in
    dB), the gains of A and B over the reference subtracted."""
    ref = res.reference.name
    by = {x.name: x for x in [res.reference, *res.candidates]}
    ga = by[ref if a == "reference" else a].snr_gain_db
    gb = by[ref if b == "reference" else b].snr_gain_db
    out = {}
    with np.errstate(all="ignore"):
        d = np.nanmean(ga - gb, axis=1)  # (targets, hours)
    for t, tg in enumerate(res.targets):
        for j, h in enumerate(res.utc_hours):
            out[(tg["name"], int(np.floor(h)))] = float(d[t, j])
    return out


LAND_GROUNDS = (
    "wet ground",
    "moist clay",
    "moist loam",
    "medium dry ground",
    "sandy soil",
    "built-up land",
    "very dry ground",
    "salt marsh",
)
"""The named ground classes a site on land may be (snrgain.physics.ground.GROUND_TYPES less the waters)."""


GROUND_CHI2 = 6.0
"""How much less chi-square another ground class must leave than the site's own (each at its best offset) before the
fit writes it: the likelihood-ratio test of S. S. Wilks, "The large-sample distribution of the likelihood ratio for
testing composite hypotheses", Ann. Math. Statist. 9 (1938), at 90 % for one degree of freedom, with the chance
shared among the seven other classes it is chosen from (Bonferroni: chi-square's 1 - 0.1 / 7 point, 5.99; an
approximation for a choice among a few classes)."""


def ground_kept(site: str | None, best: str, costs: dict[str, float]) -> str | None:
    """Where the class of least misfit fits the pairs hardly better than the site's own ground (less than
    GROUND_CHI2 of chi-square between them), a note that the site's ground is kept; None where the best class is
    the site's, fits clearly better, or the site's own was not among those tried."""
    if site is None or site == best or site not in costs:
        return None
    gain = costs[site] - costs[best]
    if gain >= GROUND_CHI2:
        return None
    return (
        f"{best} fits the pairs only a little better than the site's {site} (chi-square {gain:.1f} less, under "
        f"{GROUND_CHI2:g}, the 90 % point with one degree of freedom shared among the classes tried): the pairs do "
        f"not tell the ground classes apart, so the site's {site} is kept"
    )


def nominal_only(data: dict) -> dict:
    """The scenario's tables without the spreads: a fit reads the nominal SNR gains per hour, which the spreads do
    not change (the same to the last bit, measured), at a third of the run's time."""
    import copy

    d = copy.deepcopy(data)
    d["uncertainty"] = {
        **d.get("uncertainty", {}),
        "ground": False,
        "noise_deciles": False,
        "local_sources": False,
        "hours": False,
    }
    return d


def with_ground(data: dict, ground: str) -> dict:
    """A deep copy of the scenario's tables with ``[site] ground`` set to a named class."""
    d = copy.deepcopy(data)
    d.setdefault("site", {})["ground"] = ground
    return d


def _site_ground(data: dict) -> str | None:
    g = data.get("site", {}).get("ground", "moist loam")
    return g if isinstance(g, str) else None


def fit_offset(
    result, scenario_path, *, p372_dir=None, min_pairs: int = 20, grounds: tuple[str, ...] | None = None
) -> OffsetFit:
    """The man-made offset that best fits a :class:`snrgain.tools.verify.VerifyResult`'s per target and hour
    medians (see the module's note); with ``grounds``, also the site's ground class among them whose best offset
    fits best (each class's offset fitted in turn; the class of least misfit chosen)."""
    from snrgain.scenario import read_source

    data, label, base_dir = read_source(Path(scenario_path))
    before = current_offset(data)
    targets = {t["name"] for t in data.get("target", []) if isinstance(t, dict)}
    groups = [
        g
        for g in result.groups
        if g.hour is not None and g.target in targets and g.n >= min_pairs and np.isfinite(g.median_db)
    ]
    if not groups:
        most = max((g.n for g in result.groups if g.hour is not None and g.target in targets), default=0)
        raise NothingToFit(
            f"no target and hour has {min_pairs} pairs or more (the most: {most}): nothing to fit the man-made level "
            "to, hour by hour (listen longer, or lower --min-pairs)"
        )
    meas = np.array([g.median_db for g in groups])
    width = np.array([(g.high_db - g.low_db) if np.isfinite(g.high_db - g.low_db) else np.nan for g in groups])
    sigma = np.maximum(np.nan_to_num(width / (2.0 * Z90), nan=1.0), 0.1)
    ground0 = _site_ground(data)
    notes = []
    if grounds:
        if ground0 is None:
            raise ValueError("--fit-ground: the site's ground is given by its constants, not a class name")
        tried = {}
        for gname in grounds:
            tried[gname] = _fit_one(with_ground(data, gname), label, base_dir, result, groups, meas, sigma, p372_dir)
        best_ground = min(tried, key=lambda k: tried[k]["cost"])
        kept = ground_kept(ground0, best_ground, {k: v["cost"] for k, v in tried.items()})
        if kept:
            notes.append(kept)
            best_ground = ground0
        one = tried[best_ground]
        rms = {k: float(np.sqrt(np.mean((v["after"] - meas) ** 2))) for k, v in tried.items()}
        notes.append(
            "ground classes tried (rms misfit at each one's best offset): "
            + ", ".join(f"{k} {v:.2f} dB" for k, v in sorted(rms.items(), key=lambda kv: kv[1]))
        )
        runs = sum(v["runs"] for v in tried.values())
        base_data = with_ground(data, ground0)
    else:
        best_ground, rms = None, {}
        one = _fit_one(data, label, base_dir, result, groups, meas, sigma, p372_dir)
        runs = one["runs"]
        base_data = data
    p0 = one["predict_other"](base_data, before) if grounds else one["predicted"](before)
    best, slope = one["best"], one["slope"]
    info = float(np.sum((slope / sigma) ** 2))
    why = []  # why the level is not determined, in a few words each (the notes say it at length)
    if np.max(np.abs(slope)) < MIN_SLOPE or info <= 0:
        tol = float("inf")
        why.append("the predicted difference hardly changes with it")
        notes.insert(
            0,
            "the predicted difference hardly changes with the man-made level here (both antennas hear it alike): "
            "the pairs cannot tell the site's level; read the noise instead (snrgain noise-readings)",
        )
    else:
        tol = Z90 / np.sqrt(info)
    p1 = one["after"]
    unexplained = misfit_note(p1, meas, sigma, fitted=2 if grounds else 1)
    if unexplained and np.isfinite(tol):
        tol = float("inf")  # no level is fitted where the level does not explain the pairs: nothing to write
        why.append("no level explains them")
        notes.insert(0, unexplained)
    edge_first, edge_ground = at_edge(best, one["edges"]), best_ground
    if edge_first is not None:
        tol = float("inf")  # an edge of the search is no level: nothing to write
        notes.append(
            f"the best offset{' over ' + best_ground if grounds else ''} lies at the edge of the search "
            f"({one['edges'][0]:+g} to {one['edges'][1]:+g} dB): the "
            "pairs point outside what an offset can explain; check the antennas' names and the scenario's other noise"
        )
    if grounds and not np.isfinite(tol) and best_ground != ground0 and ground0 in tried:
        notes.append(
            f"the site's {ground0} is kept ({best_ground} fitted best): where the level is not determined the pairs "
            "choose no ground class either"
        )
        best_ground, one = ground0, tried[ground0]
        best, slope, p1 = one["best"], one["slope"], one["after"]
    edge = at_edge(best, one["edges"])
    if edge is not None:
        why.append(f"their best lies at the search's edge, {edge:+g} dB")
    elif edge_first is not None:  # the class of least misfit ran to the edge; the site's own, kept, did not
        why.append(f"their best over {edge_ground} lies at the search's edge, {edge_first:+g} dB")
    if not np.isfinite(tol):
        p1 = p0  # what is kept is the site's own offset and ground: "after" is its prediction, the best is no level
    from snrgain.scenario.noise import ManMade
    from snrgain.units import parse_quantity

    try:
        freq = float(parse_quantity(data["band"]["frequency"], "frequency"))
    except (KeyError, TypeError, ValueError):
        freq = None  # a scenario of several bands: the level is not said at one frequency
    if freq is not None and np.isfinite(tol):  # an undetermined level is not said against P.372's curves
        beyond = beyond_p372_note(ManMade.model_validate(man_made_table(data)).environment, freq, best)
        if beyond:
            notes.append(beyond)
    rows = [
        {
            "target": g.target,
            "utc_hour": g.hour,
            "n_pairs": g.n,
            "measured_median_db": float(m),
            "sigma_db": float(s),
            "predicted_before_db": float(a),
            "predicted_after_db": float(b),
            "slope_db_per_db": float(sl),
        }
        for g, m, s, a, b, sl in zip(groups, meas, sigma, p0, p1, slope)
    ]
    return OffsetFit(
        before,
        best,
        float(tol),
        float(np.sqrt(np.mean((p0 - meas) ** 2))),
        float(np.sqrt(np.mean((p1 - meas) ** 2))),
        rows,
        runs,
        notes,
        ground_before=ground0,
        ground=best_ground,
        not_determined_because=tuple(dict.fromkeys(why)) if not np.isfinite(tol) else (),
        edge_db=edge,
    )


def at_edge(best: float, edges: tuple[float, float]) -> float | None:
    """The edge of the offset search [dB] that ``best`` lies at (within 0.1 dB), or None."""
    if best <= edges[0] + 0.1:
        return float(edges[0])
    if best >= edges[1] - 0.1:
        return float(edges[1])
    return None


MISFIT_P = 0.001
"""A fit whose groups still differ from its prediction beyond their own spread at this chance (chi-square) does not
explain them: no level is written."""


def misfit_note(predicted, measured, sigma, fitted: int) -> str | None:
    """Where the fitted prediction leaves the groups further off than their own intervals allow (the chi-square of
    the weighted residuals over its degrees of freedom, groups less the ``fitted`` parameters, at a chance below
    MISFIT_P; e.g. Bevington and Robinson (2003), ch. 11): a note saying the site's level does not explain the pairs;
    None for a fit that does (or too few groups to tell)."""
    from scipy.stats import chi2

    r = (np.asarray(predicted) - np.asarray(measured)) / np.asarray(sigma)
    dof = r.size - fitted
    if dof < 1:
        return None
    stat = float(np.sum(r * r))
    if chi2.sf(stat, dof) >= MISFIT_P:
        return None
    rms = float(np.sqrt(np.mean((np.asarray(predicted) - np.asarray(measured)) ** 2)))
    return (
        f"the site's man-made level does not explain the pairs: after the fit they still differ from the prediction "
        f"by {rms:.1f} dB rms, beyond their own intervals (chi-square {stat:.0f} on {dof} degrees of freedom); a "
        "difference toward one target or at some hours and not others points at an antenna (its termination, feed "
        "or pattern) rather than at the site's noise: check the antennas before fitting the site"
    )


def _fit_one(data, label, base_dir, result, groups, meas, sigma, p372_dir) -> dict:
    """The best offset for one scenario's tables: a 5 dB grid, then a bounded scalar search in the best cell."""
    from scipy.optimize import minimize_scalar

    from snrgain.model.pipeline import evaluate
    from snrgain.scenario import load
    from snrgain.tools.verify import scenario_copy

    hours = sorted({g.hour for g in groups})
    cache: dict[tuple, np.ndarray] = {}

    def predict_other(d0: dict, off: float) -> np.ndarray:
        key = (id(d0), round(float(off), 3))
        if key not in cache:
            d = scenario_copy(with_offset(d0, key[1]), result.a, result.b, result.months, [h + 0.5 for h in hours])
            res = evaluate(load(nominal_only(d), base_dir=base_dir, label=label, p372_dir=p372_dir))
            diff = _hourly_difference(res, result.a, result.b)
            cache[key] = np.array([diff[(g.target, g.hour)] for g in groups])
        return cache[key]

    def predicted(off: float) -> np.ndarray:
        return predict_other(data, off)

    def cost(off: float) -> float:
        r = (predicted(off) - meas) / sigma
        return float(np.sum(r * r))

    lo, hi = OFFSET_RANGE_DB[0] + 10.0, OFFSET_RANGE_DB[1] - 10.0
    grid = np.arange(lo, hi + 1e-9, 5.0)
    costs = [cost(x) for x in grid]
    k = int(np.argmin(costs))
    sol = minimize_scalar(
        cost,
        bounds=(grid[max(k - 1, 0)], grid[min(k + 1, grid.size - 1)]),
        method="bounded",
        options={"xatol": 0.05},
    )
    best = float(sol.x)
    slope = (predicted(best + 0.5) - predicted(best - 0.5)) / 1.0
    return {
        "best": best,
        "cost": cost(best),
        "slope": slope,
        "after": predicted(best),
        "predicted": predicted,
        "predict_other": predict_other,
        "runs": len(cache),
        "edges": (float(grid[0]), float(grid[-1])),
    }


def fit_lines(f: OffsetFit) -> list[str]:
    """The fit as the terminal shows it; where the level is not determined, every line shows what was kept (the
    site's offset and ground) and the pairs' best is said only in words."""
    if f.identifiable:
        said = (
            f"offset {f.before_db:+.1f} dB -> {f.offset_db:+.1f} dB, +-{f.tolerance_db:.1f} dB (90 %); rms misfit "
            f"{f.rms_before_db:.1f} -> {f.rms_after_db:.1f} dB"
        )
    else:
        best = (
            f"the pairs' best lies at the search's edge, {f.edge_db:+g} dB"
            if f.edge_db is not None
            else f"the pairs' best, {f.offset_db:+.1f} dB, is not the site's level: the notes say why"
        )
        said = f"offset {f.before_db:+.1f} dB kept: not determined ({best}); rms misfit {f.rms_before_db:.1f} dB"
    out = [
        "",
        "the site learns (noise.man_made.offset, fitted to the pairs per target and hour):",
        f"  {said} over {len(f.groups)} group(s){'' if f.identifiable else ' at the kept offset'}, "
        f"{f.runs} pipeline runs",
    ]
    if f.ground is not None and f.ground == f.ground_before:
        out.append(f"  ground {f.ground} kept (the notes say why)")
    elif f.ground is not None:
        out.append(f"  ground {f.ground_before} -> {f.ground} (the class whose best offset fits best)")
    wt = max((len(g["target"]) for g in f.groups), default=0)
    for g in f.groups:
        moved = f" -> {g['predicted_after_db']:+5.1f}" if f.identifiable else ""
        out.append(
            f"  {g['target']:<{wt}} {g['utc_hour']:02d} UTC  measured {g['measured_median_db']:+5.1f}  predicted "
            f"{g['predicted_before_db']:+5.1f}{moved} dB"
        )
    out += [f"  note: {n}" for n in f.notes]
    return out
