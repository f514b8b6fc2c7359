"""Check a prediction against what the station hears: paired decodes on two antennas, against the model.

The steps (``snrgain verify``):

1. read two decode logs, one per antenna, or one listener's spot list (:mod:`snrgain.tools.logs`), and pair the
   decodes (:func:`snrgain.tools.logs.pair_decodes`, :func:`snrgain.tools.logs.pair_spots`);
2. keep the scenario's band; place each sender by a places file (call -> latitude, longitude or locator) or
   else by the Maidenhead locator its messages give (:mod:`snrgain.tools.locator`); its bearing and distance from
   the site on the WGS-84 ellipsoid (:func:`snrgain.physics.targets.geodesic`, the targets' own geodesic); the
   target whose bearing is nearest, within half the sector width, or else a 45 deg compass sector;
3. per target (and per sector) and UTC hour: the median of the paired SNR differences A - B, a bootstrap 90 %
   interval (B. Efron and R. J. Tibshirani, "An Introduction to the Bootstrap", Chapman & Hall (1993), ch. 13,
   the percentile interval) and N;
4. the prediction for the same two antennas, band, months, hours and targets, from the scenario through
   :func:`snrgain.model.pipeline.evaluate` (a copy of the scenario with the logs' months and hours), with its
   10-90 % band; a verdict per target and hour, and warnings.

The median of decoder SNRs: decoders report whole dB, so differences are whole dB and a plain median moves in
1 dB steps; whole-dB data are read as grouped data, each value standing for the 1 dB class around it, and the
median interpolated within its class (the textbook median of grouped data, e.g. G. U. Yule and M. G. Kendall,
"An Introduction to the Theory of Statistics" (1950), ch. 7; from memory).  The bootstrap resamples the pairs
by multinomial counts over their distinct values, exactly the ordinary bootstrap and fast for whole-dB data.
Its generator is seeded from the pairs themselves (with ``seed``), so one set of pairs always gets one interval:
the all-hours row and an hour's row that hold the same pairs cannot get two verdicts.  A verdict compares the
interval with the predicted band as both are shown, at 0.1 dB (:data:`SHOWN_DECIMALS`): it never says "measured
better" beside two printed numbers that are equal.
"""

from __future__ import annotations

import csv
import hashlib
import io
from dataclasses import field
from pathlib import Path

import numpy as np
import pandas as pd

from snrgain.records import record
from snrgain.tools import logs
from snrgain.tools.locator import from_latlon, to_latlon

VERDICTS = ("agrees", "measured better", "measured worse", "too few pairs")
SECTOR_DEG = 45.0
"""Compass sectors for stations outside every target [deg]."""
SMALL_N = 50
"""Below this many pairs a group is flagged as small (its interval is wide and itself uncertain)."""
SHOWN_DECIMALS = 1
"""Decimals of a dB the report shows; the verdict compares the interval and the band at this resolution."""
VERDICT_RULE = (
    f"the measured 90 % interval and the predicted 10-90 % band, each bound rounded to {10.0**-SHOWN_DECIMALS:g} dB: "
    "the interval wholly above the band is 'measured better', wholly below 'measured worse', else 'agrees'"
)


# ---- statistics


def _medians_from_counts(vals: np.ndarray, counts: np.ndarray, n: int, grouped: bool) -> np.ndarray:
    """Medians of samples given as counts over sorted distinct values; counts shape (..., k)."""
    cum = np.cumsum(counts, axis=-1)
    if grouped:  # interpolated within the 1 dB class around each whole-dB value
        j = np.argmax(cum >= n / 2.0, axis=-1)
        c_j = np.take_along_axis(counts, j[..., None], -1)[..., 0]
        below = np.take_along_axis(cum, j[..., None], -1)[..., 0] - c_j
        return vals[j] - 0.5 + (n / 2.0 - below) / np.maximum(c_j, 1)
    lo = np.argmax(cum > (n - 1) // 2, axis=-1)
    hi = np.argmax(cum > n // 2, axis=-1)
    return 0.5 * (vals[lo] + vals[hi])


def median_interval(values, *, rng: np.random.Generator, n_boot: int = 2000, level: float = 0.90):
    """(median, low, high): the median and its bootstrap percentile interval at ``level``.

    Whole-number data are treated as grouped in 1 dB classes (the module's note).  n_boot resamples are drawn as
    multinomial counts over the distinct values (the same distribution as resampling the pairs).

    >>> m, lo, hi = median_interval([1, 2, 2, 3, 3, 3, 4, 4, 5], rng=np.random.default_rng(1))
    >>> round(m, 3), lo <= m <= hi
    (3.0, True)
    """
    v = np.asarray(values, dtype=float)
    v = v[np.isfinite(v)]
    n = v.size
    if n == 0:
        return np.nan, np.nan, np.nan
    vals, counts = np.unique(v, return_counts=True)
    grouped = bool(np.all(vals == np.round(vals)))
    med = float(_medians_from_counts(vals, counts, n, grouped))
    if n == 1:
        return med, np.nan, np.nan
    p = counts / n
    chunk = max(1, min(n_boot, 4_000_000 // vals.size))
    meds = []
    for start in range(0, n_boot, chunk):
        boot = rng.multinomial(n, p, size=min(chunk, n_boot - start))
        meds.append(_medians_from_counts(vals, boot, n, grouped))
    meds = np.concatenate(meds)
    a = (1.0 - level) / 2.0
    lo, hi = np.quantile(meds, [a, 1.0 - a])
    return med, float(lo), float(hi)


def pairs_generator(values, seed: int = 1) -> np.random.Generator:
    """The bootstrap's generator for one set of pairs: seeded from ``seed`` and the pairs' values (in any order).

    >>> a = pairs_generator([2.0, -1.0, 3.0]).integers(1 << 30)
    >>> b = pairs_generator([3.0, 2.0, -1.0]).integers(1 << 30)
    >>> bool(a == b)
    True
    """
    v = np.sort(np.asarray(values, dtype=np.float64).ravel()) + 0.0  # + 0.0: -0.0 and 0.0 alike
    digest = hashlib.sha256(np.ascontiguousarray(v).tobytes()).digest()
    words = np.frombuffer(digest, dtype="<u4").tolist()
    return np.random.default_rng(np.random.SeedSequence([int(seed), *words]))


# ---- results


@record
class Group:
    """One target (or sector) at one UTC hour (hour None: all hours pooled)."""

    target: str
    hour: int | None
    n: int
    median_db: float
    low_db: float
    high_db: float
    spread_db: float
    """Half the interquartile range of the pairs' differences [dB]: how far single pairs scatter."""
    predicted_db: float | None = None
    predicted_p10_db: float | None = None
    predicted_p90_db: float | None = None
    verdict: str | None = None
    warnings: tuple[str, ...] = ()

    def as_dict(self) -> dict:
        return {
            "target": self.target,
            "utc_hour": self.hour,
            "n_pairs": self.n,
            "measured_median_db": self.median_db,
            "measured_interval_90_db": [self.low_db, self.high_db],
            "pair_spread_db": self.spread_db,
            "predicted_median_db": self.predicted_db,
            "predicted_band_10_90_db": [self.predicted_p10_db, self.predicted_p90_db],
            "verdict": self.verdict,
            "warnings": list(self.warnings),
        }


@record
class VerifyResult:
    a: str
    b: str
    band: str
    months: list[int]
    hours: list[int]
    rule: str
    pairs: pd.DataFrame
    """The placed pairs: time, message, call, bearing_deg, distance_km, target, hour, diff_db ..."""
    groups: list[Group]
    """Per target: all hours pooled first, then each hour; then the sectors outside every target."""
    problems: logs.Problems
    notes: list[str] = field(default_factory=list)
    site: str = ""
    looks: dict | None = field(default=None, repr=False)
    """The antennas' looks (snrgain.outputs.style), for the figure."""

    def as_dict(self) -> dict:
        return {
            "antenna_a": self.a,
            "antenna_b": self.b,
            "difference": "SNR on A minus SNR on B [dB]",
            "site": self.site,
            "band": self.band,
            "months": self.months,
            "utc_hours": self.hours,
            "pairing_rule": self.rule,
            "pairs": len(self.pairs),
            "groups": [g.as_dict() for g in self.groups],
            "verdict_rule": VERDICT_RULE,
            "verdicts": [
                verdict_sentence(self, g) for g in self.groups if g.hour is None and g.predicted_db is not None
            ],
            "lines_not_used": self.problems.as_dict(),
            "notes": self.notes,
        }


# ---- places


def read_places(path, problems: logs.Problems) -> dict[str, tuple[float, float]]:
    """A CSV of call -> place: columns ``call`` and either ``latitude``, ``longitude`` [deg] or ``locator``."""
    text = logs.read_text(path, "places file")
    label = "places"
    reader = csv.reader(io.StringIO(text))
    header = None
    out = {}
    for row in reader:
        n = reader.line_num
        if not row or row[0].lstrip().startswith("#"):
            continue
        if header is None:
            header = [h.strip().lower() for h in row]
            twice = sorted({h for h in header if header.count(h) > 1})
            if twice:
                raise ValueError(f"{path}: the header names {', '.join(repr(h) for h in twice)} more than once")
            if "call" not in header or not ({"latitude", "longitude"} <= set(header) or "locator" in header):
                raise ValueError(f"{path}: the header must name call and latitude, longitude (or locator)")
            continue
        rec = dict(zip(header, (c.strip() for c in row)))
        call = rec.get("call", "").upper()
        try:
            if rec.get("latitude") and rec.get("longitude"):
                lat, lon = float(rec["latitude"]), float(rec["longitude"])
                if not (-90 <= lat <= 90 and -180 <= lon <= 180):
                    raise ValueError
            else:
                lat, lon = to_latlon(rec.get("locator", ""))
        except ValueError:
            problems.add("place not a latitude, longitude in degrees or a locator", label, [n])
            continue
        if not call:
            problems.add("place without a call", label, [n])
            continue
        out[call] = (lat, lon)
    return out


def station_locators(frames: list[tuple[pd.DataFrame, str]], problems: logs.Problems) -> dict[str, str]:
    """Each sender's locator, the one its messages give most often; invalid locators counted by line."""
    found = []
    for df, label in frames:
        if df.empty:
            continue
        senders = logs.per_distinct(df["message"].to_numpy(object), logs.sender_of)
        bad = np.array([x.bad_locator is not None for x in senders], dtype=bool)
        problems.add(
            "locator not valid (letters A-R, digits, letters A-X): the line's locator ignored", label, df["line"][bad]
        )
        calls = [x.call for x in senders]
        locs = [x.locator for x in senders]
        found.append(pd.DataFrame({"call": calls, "locator": locs}).dropna())
    if not found:
        return {}
    allf = pd.concat(found)
    if allf.empty:
        return {}
    best = (
        allf.groupby(["call", "locator"])
        .size()
        .reset_index(name="n")
        .sort_values(["n", "locator"], ascending=[False, True], kind="stable")
    )
    return dict(best.drop_duplicates("call")[["call", "locator"]].itertuples(index=False, name=None))


def place_pairs(
    pairs: pd.DataFrame, site_lat: float, site_lon: float, locators: dict, places: dict, problems: logs.Problems
) -> pd.DataFrame:
    """The pairs with the sender's call, place, bearing [deg] and distance [km]; the unplaceable counted."""
    from snrgain.physics.targets import geodesic

    call = pd.Series(
        [x.call for x in logs.per_distinct(pairs["message"].to_numpy(object), logs.sender_of)],
        index=pairs.index,
        dtype=object,
    )
    no_call = call.isna()
    problems.add("unplaceable: the message names no sending station", "A", pairs["line_a"][no_call])
    known = {c: places[c] for c in places}
    for c, loc in locators.items():
        if c not in known:
            known[c] = to_latlon(loc)
    unplaced = ~no_call & ~call.isin(list(known))
    problems.add(
        "unplaceable: the sender gives no locator in either log and is not in the places file",
        "A",
        pairs["line_a"][unplaced],
    )
    keep = ~no_call & ~unplaced
    out = pairs[keep].copy()
    out["call"] = call[keep].to_numpy(object)
    geo = {}
    for c in pd.unique(out["call"]):
        lat, lon = known[c]
        try:
            geo[c] = (lat, lon, *geodesic(site_lat, site_lon, lat, lon))
        except Exception:  # noqa: BLE001 - a place pyproj cannot reach (antipodal) is only unplaceable
            geo[c] = (lat, lon, np.nan, np.nan)
    g = np.array([geo[c] for c in out["call"]], dtype=float).reshape(-1, 4)
    out["lat_deg"], out["lon_deg"] = g[:, 0], g[:, 1]
    out["bearing_deg"] = np.degrees(g[:, 2])
    out["distance_km"] = g[:, 3] / 1e3
    near = ~(out["distance_km"] >= 1.0)
    problems.add("unplaceable: the sender's place is within 1 km of the site", "A", out["line_a"][near])
    return out[~near].reset_index(drop=True)


def assign_targets(pairs: pd.DataFrame, targets: list[tuple[str, float]], width_deg: float) -> pd.Series:
    """Each pair's target: the nearest target bearing within width/2, else a compass sector named 'sector N'."""
    b = pairs["bearing_deg"].to_numpy(float)
    best = np.full(b.size, -1)
    best_d = np.full(b.size, np.inf)
    for i, (_, tb) in enumerate(targets):
        d = np.abs((b - tb + 180.0) % 360.0 - 180.0)
        take = (d <= width_deg / 2.0) & (d < best_d)
        best[take], best_d[take] = i, d[take]
    names = np.array([t for t, _ in targets] + [""], dtype=object)[best]
    centre = (np.round(b / SECTOR_DEG) * SECTOR_DEG) % 360.0
    sector = np.array([f"sector {c:03.0f} deg" for c in centre], dtype=object) if b.size else np.array([], object)
    return pd.Series(np.where(best >= 0, names, sector), index=pairs.index, dtype=object)


# ---- the prediction, through the pipeline


def scenario_copy(data: dict, a: str, b: str, months: list[int], hours: list[float]) -> dict:
    """The scenario's tables with the logs' months and hours, every target listened then, and only the antennas
    the comparison needs (A, B, and the parts of a combination among them; a state of a switched antenna keeps its
    antenna's table)."""
    import copy

    d = copy.deepcopy(data)
    d["time"] = {"months": sorted(months), "utc_hours": sorted(hours)}
    for t in [*d.get("target", []), d.get("band") if isinstance(d.get("band"), dict) else {}]:
        t.pop("months", None)
        t.pop("utc_hours", None)
    ca, cb = antennas_compared(data, a, b)
    names = {ca.table, cb.table}
    cands = d.get("candidate", [])
    for _ in range(3):  # combinations of combinations, a few levels
        for c in cands:
            if c.get("name") in names:
                names |= set(c.get("antennas", []))
    d["candidate"] = [c for c in cands if c.get("name") in names]
    return d


def antennas_compared(data: dict, a: str, b: str):
    """The antennas --a and --b name in the scenario's tables (snrgain.scenario.connected: a switched antenna's
    state by its whole name or its shorter one), as (Connected, Connected); ValueError naming the option where one
    names no antenna, a switched antenna without its state, or both name one antenna."""
    from snrgain.scenario import connected

    out = []
    for option, name in (("--a", a), ("--b", b)):
        try:
            out.append(connected(data, name))
        except ValueError as exc:
            raise ValueError(f"{option}: {exc}") from None
    ca, cb = out
    ref_name = data.get("reference", {}).get("name", "reference")
    if {ca.table, cb.table} == {ref_name} and ca.group is None:  # "reference" is the reference's other name
        raise ValueError(f"--a {a!r} and --b {b!r} both name the reference ({ref_name!r}): compare two antennas")
    if ca.name == cb.name:  # a state by its whole name and by its shorter one
        raise ValueError(f"--a {a!r} and --b {b!r} both name {ca.name!r}: compare two antennas")
    return ca, cb


_scenario_copy = scenario_copy  # the name the verify tests use


def _difference(res, a: str, b: str, t: int) -> tuple[float, float, float, bool]:
    """(median, p10, p90) of A - B toward target t from one Results, and whether the band is the pipeline's own.

    When B (or A) is the reference, the band is the pipeline's spread of the other's SNR gain over it.  Otherwise
    the medians subtract, and the band's half-widths are the two antennas' own (below and above their medians)
    added in quadrature, as if independent: wider than the difference's true spread, since both share the sky."""
    by = {x.name: x for x in res.antennas}
    ref = res.reference.name
    a = ref if a == "reference" else a
    b = ref if b == "reference" else b
    if b == ref:
        x = by[a]
        return float(x.snr_gain_median_db[t]), float(x.snr_gain_p10_db[t]), float(x.snr_gain_p90_db[t]), True
    if a == ref:
        x = by[b]
        return -float(x.snr_gain_median_db[t]), -float(x.snr_gain_p90_db[t]), -float(x.snr_gain_p10_db[t]), True
    xa, xb = by[a], by[b]
    med = float(xa.snr_gain_median_db[t] - xb.snr_gain_median_db[t])
    lo_a, hi_a = xa.snr_gain_median_db[t] - xa.snr_gain_p10_db[t], xa.snr_gain_p90_db[t] - xa.snr_gain_median_db[t]
    lo_b, hi_b = xb.snr_gain_median_db[t] - xb.snr_gain_p10_db[t], xb.snr_gain_p90_db[t] - xb.snr_gain_median_db[t]
    return med, med - float(np.hypot(lo_a, hi_b)), med + float(np.hypot(hi_a, lo_b)), False


def predict(sc_path, a: str, b: str, months: list[int], hours: list[int], *, p372_dir=None):
    """Predicted A - B per target: pooled over ``hours`` (key None) and at each hour (its middle, h + 0.5).

    Returns (target names, {(target, hour or None): (median, p10, p90)}, looks, notes)."""
    from snrgain.model.pipeline import evaluate
    from snrgain.outputs.style import looks_of
    from snrgain.scenario import load, read_source

    data, label, base_dir = read_source(Path(sc_path))
    out = {}
    own = True
    res = None
    for key, hrs in [(None, [h + 0.5 for h in hours])] + [(h, [h + 0.5]) for h in hours]:
        d = scenario_copy(data, a, b, months, hrs)
        sc = load(d, base_dir=base_dir, label=label, p372_dir=p372_dir)
        res = evaluate(sc)
        for t, tg in enumerate(res.targets):
            med, p10, p90, o = _difference(res, a, b, t)
            own &= o
            out[(tg["name"], key)] = (med, p10, p90)
    notes = []
    if not own:
        notes.append(
            "neither antenna is the scenario's reference: the pipeline's spreads are of each antenna over the "
            "reference, so the predicted band combines the two as if they were independent; they share the sky, so "
            "the band is wider than the difference's own (a verdict other than 'agrees' still stands)"
        )
    return [t["name"] for t in res.targets], out, looks_of(res), notes


# ---- verdicts


def _shown(x: float) -> float:
    """A dB value as the report prints it (``format`` and ``round`` both round the exact binary value)."""
    return round(float(x), SHOWN_DECIMALS)


def verdict(g: Group, min_pairs: int) -> tuple[str | None, tuple[str, ...]]:
    """The verdict on the interval and the band as shown (:data:`SHOWN_DECIMALS`), and the group's warnings."""
    warn = []
    if g.n < min_pairs:
        v = "too few pairs"
        pairs = "pair" if g.n == 1 else "pairs"
        warn.append("no pairs: no verdict" if g.n == 0 else f"only {g.n} {pairs} (fewer than {min_pairs}): no verdict")
    elif g.predicted_db is None:
        v = None
    elif _shown(g.high_db) < _shown(g.predicted_p10_db):
        v = "measured worse"
    elif _shown(g.low_db) > _shown(g.predicted_p90_db):
        v = "measured better"
    else:
        v = "agrees"
    if min_pairs <= g.n < SMALL_N:
        warn.append(f"small N ({g.n} pairs): the interval is itself uncertain")
    if g.n >= 2 and np.isfinite(g.spread_db) and g.spread_db > abs(g.median_db):
        warn.append(
            f"single pairs scatter by +-{g.spread_db:.1f} dB (half the interquartile range), more than the "
            f"{g.median_db:+.1f} dB difference: read the median, not single decodes"
        )
    return v, tuple(warn)


def _group(name, hour, diffs, seed, n_boot, pred, min_pairs) -> Group:
    med, lo, hi = median_interval(diffs, rng=pairs_generator(diffs, seed), n_boot=n_boot)
    q1, q3 = np.quantile(diffs, [0.25, 0.75]) if len(diffs) else (np.nan, np.nan)
    p = pred.get((name, hour)) if pred else None
    g = Group(
        name,
        hour,
        int(len(diffs)),
        med,
        lo,
        hi,
        float((q3 - q1) / 2.0),
        *(p if p is not None else (None, None, None)),
    )
    v, w = verdict(g, min_pairs)
    return Group(**{**g.__dict__, "verdict": v, "warnings": w})


def summarise(
    placed: pd.DataFrame,
    target_names: list[str],
    pred: dict | None,
    *,
    min_pairs: int = 20,
    n_boot: int = 2000,
    seed: int = 1,
) -> list[Group]:
    """Per target (all hours pooled, then each hour), then per sector outside every target (no prediction).

    Each group's bootstrap draws from its own generator, seeded from ``seed`` and its pairs (:func:`pairs_generator`).
    """
    groups = []
    by_target = {k: v for k, v in placed.groupby("target", sort=False)}
    names = list(target_names) + sorted(k for k in by_target if k not in target_names)
    hours_all = sorted(placed["hour"].unique()) if len(placed) else []
    for name in names:
        sub = by_target.get(name)
        diffs = sub["diff_db"].to_numpy(float) if sub is not None else np.array([])
        groups.append(_group(name, None, diffs, seed, n_boot, pred, min_pairs))
        if name not in target_names:  # a compass sector: pooled only, no prediction to set beside its hours
            continue
        by_hour = dict(tuple(sub.groupby("hour"))) if sub is not None else {}
        for h in hours_all:
            if h not in by_hour:  # no decode toward this target at that hour: nothing to set beside the prediction
                continue
            groups.append(_group(name, int(h), by_hour[h]["diff_db"].to_numpy(float), seed, n_boot, pred, min_pairs))
    return groups


# ---- the whole job


def verify(
    scenario,
    *,
    a_name: str,
    b_name: str,
    log_a=None,
    log_b=None,
    spots=None,
    places=None,
    max_hz: float = 5.0,
    slot_s: float | None = None,
    a_slots: str = "even",
    listener: str | None = None,
    sector_width_deg: float = 30.0,
    min_pairs: int = 20,
    n_boot: int = 2000,
    seed: int = 1,
    p372_dir=None,
    predict_too: bool = True,
) -> VerifyResult:
    """Read, pair, place, summarise and compare with the prediction (see the module's steps).

    ``scenario``: its path (or, with ``predict_too=False``, a loaded Scenario).  ``a_name`` and ``b_name``: the
    antennas the logs were heard on (a switched antenna's state: snrgain.scenario.connected)."""
    from snrgain.scenario import Scenario, load, read_source

    if isinstance(scenario, Scenario):
        if predict_too:
            raise ValueError("a loaded Scenario cannot be copied for the prediction; give its path")
        sc = scenario
    else:
        sc = load(scenario, p372_dir=p372_dir)
        if predict_too:  # the names pick the antennas predicted (without a prediction they only label the logs)
            data, _, _ = read_source(Path(scenario))
            a_name, b_name = (c.name for c in antennas_compared(data, a_name, b_name))  # a state: as rank names it
    problems = logs.Problems()
    if spots is not None:
        try:
            sp = logs.parse_spots_csv(logs.read_text(spots, "spot list"), "spots", problems)
        except logs.InputFileError:
            raise
        except ValueError as exc:
            raise ValueError(f"{spots}: {str(exc).removeprefix('spots: ')}") from None
        frames = []
        sp = _keep_band(sp, sc.freq_hz, "spots", problems)
        pairs = logs.pair_spots(sp, problems, a_slots=a_slots, listener=listener)
        frames = [(pairs.table.assign(line=pairs.table["line_a"]), "spots")]
    else:
        if log_a is None or log_b is None:
            raise ValueError("give both logs (A and B), or a spot list")
        da = _keep_band(logs.read_decodes(log_a, "A", problems), sc.freq_hz, "A", problems)
        db = _keep_band(logs.read_decodes(log_b, "B", problems), sc.freq_hz, "B", problems)
        pairs = logs.pair_decodes(da, db, problems, max_hz=max_hz, slot_s=slot_s)
        frames = [(da, "A"), (db, "B")]
    place_table = read_places(places, problems) if places is not None else {}
    locs = station_locators(frames, problems)
    placed = place_pairs(pairs.table, sc.site.latitude_deg, sc.site.longitude_deg, locs, place_table, problems)
    targets = [(t.name, float(np.degrees(t.bearing_rad))) for t in sc.targets]
    placed["target"] = assign_targets(placed, targets, sector_width_deg)
    t = pd.DatetimeIndex(placed["time"])
    placed["hour"] = t.hour.to_numpy() if len(placed) else np.array([], dtype=int)
    placed["month"] = t.month.to_numpy() if len(placed) else np.array([], dtype=int)
    in_target = placed["target"].isin([n for n, _ in targets])
    months = sorted(int(m) for m in placed.loc[in_target, "month"].unique())
    hours = sorted(int(h) for h in placed.loc[in_target, "hour"].unique())
    pred, notes, looks = None, [], None
    if predict_too and months:
        _, pred, looks, notes = predict(scenario, a_name, b_name, months, hours, p372_dir=p372_dir)
    elif not months:
        notes.append("no pair falls in a scenario target: nothing to compare with the prediction")
    groups = summarise(placed, [n for n, _ in targets], pred, min_pairs=min_pairs, n_boot=n_boot, seed=seed)
    return VerifyResult(
        a_name,
        b_name,
        logs.band_of_hz(sc.freq_hz),
        months,
        hours,
        pairs.rule,
        placed,
        groups,
        problems,
        notes,
        sc.site.name,
        looks,
    )


def _keep_band(df: pd.DataFrame, freq_hz: float, label: str, problems: logs.Problems) -> pd.DataFrame:
    band = logs.band_of_hz(freq_hz)
    other = df["band"] != band
    for name in pd.unique(df["band"][other]):
        problems.add(f"band {name}, not the scenario's {band}", label, df["line"][other & (df["band"] == name)])
    return df[~other].reset_index(drop=True)


# ---- text and figure


def _num(x, fmt="+.1f"):
    return "-" if x is None or not np.isfinite(x) else format(x, fmt)


def verdict_sentence(r: VerifyResult, g: Group) -> str:
    """One target's verdict in words, with the numbers it rests on."""
    if g.verdict == "too few pairs":
        return f"{g.target}: too few pairs ({g.n}) for a verdict; listen longer or widen --sector-width"
    meas = f"{g.median_db:+.1f} dB ({g.low_db:+.1f} to {g.high_db:+.1f}, {g.n} pairs)"
    pred = f"{g.predicted_db:+.1f} dB ({g.predicted_p10_db:+.1f} to {g.predicted_p90_db:+.1f})"
    words = {
        "agrees": "the measurement agrees with the prediction",
        "measured better": f"{r.a} does better against {r.b} than predicted",
        "measured worse": f"{r.a} does worse against {r.b} than predicted",
    }[g.verdict]
    return f"{g.target}: {words}: measured {meas}, predicted {pred}"


def report_lines(r: VerifyResult) -> list[str]:
    from snrgain.outputs.output import hours_text  # the hours as the report and the figures give them

    out = [
        f"{r.site}: {r.a} minus {r.b}, {r.band}, months {', '.join(map(str, r.months))}; {hours_text(r.hours)}",
        f"pairing: {r.rule}",
        f"{len(r.pairs):,} pairs placed",
        "",
        f"{'target':<22} {'UTC':>4} {'N':>6} {'measured':>9} {'90 % interval':>15} {'predicted':>9} "
        f"{'10-90 % band':>15}  verdict",
    ]
    for g in r.groups:
        hour = "all" if g.hour is None else f"{g.hour:02d}"
        meas = f"{_num(g.low_db)} {_num(g.high_db)}"
        band = "" if g.predicted_db is None else f"{_num(g.predicted_p10_db)} {_num(g.predicted_p90_db)}"
        out.append(
            f"{g.target[:22]:<22} {hour:>4} {g.n:>6} {_num(g.median_db):>9} {meas:>15} "
            f"{_num(g.predicted_db):>9} {band:>15}  {g.verdict or ''}"
        )
    said = [verdict_sentence(r, g) for g in r.groups if g.hour is None and g.predicted_db is not None]
    if said:
        out += ["", "verdicts:", *(f"  {x}" for x in said)]
    warn = [
        f"  {g.target} ({'all hours' if g.hour is None else f'{g.hour:02d} UTC'}): {w}"
        for g in r.groups
        for w in g.warnings
    ]
    if warn:
        out += ["", "warnings:", *warn]
    if r.notes:
        out += ["", "notes:", *(f"  {n}" for n in r.notes)]
    if r.problems.count():
        out += ["", f"lines not used ({r.problems.count():,}):", *r.problems.summary()]
    return out


def figure(r: VerifyResult, looks=None):
    """Per target a panel: the predicted 10-90 % band (hatched, the target's look) and the measured median with its
    90 % interval (antenna A's colour) against the UTC hour in listening order."""
    from matplotlib.figure import Figure

    from snrgain.outputs.style import target_looks, unwrapped

    names = list(dict.fromkeys(g.target for g in r.groups if g.predicted_db is not None or g.hour is None))
    names = [n for n in names if not n.startswith("sector")] or names
    fig = Figure(figsize=(8.0, 2.6 * max(1, len(names)) + 0.6))
    axes = fig.subplots(max(1, len(names)), 1, squeeze=False)[:, 0]
    color = looks[r.a].color if looks and r.a in looks else "#332288"
    for ax, name, tl in zip(axes, names, target_looks(len(names))):
        gs = [g for g in r.groups if g.target == name and g.hour is not None]
        order, x = unwrapped([g.hour for g in gs], 24)
        at = dict(zip(order, x))
        for g in gs:
            xx = at[g.hour]
            if g.predicted_db is not None:
                ax.bar(
                    xx,
                    g.predicted_p90_db - g.predicted_p10_db,
                    bottom=g.predicted_p10_db,
                    width=0.7,
                    color="white",
                    edgecolor="0.35",
                    hatch=tl.hatch,
                    lw=0.8,
                    label="predicted 10-90 %" if g is gs[0] else None,
                )
                ax.plot([xx - 0.35, xx + 0.35], [g.predicted_db] * 2, color="0.2", lw=1.2)
            if g.n and np.isfinite(g.median_db):
                lo = g.median_db - g.low_db if np.isfinite(g.low_db) else 0.0
                hi = g.high_db - g.median_db if np.isfinite(g.high_db) else 0.0
                ax.errorbar(
                    xx,
                    g.median_db,
                    yerr=[[lo], [hi]],
                    fmt=tl.marker,
                    color=color,
                    mfc="white",
                    ms=8,
                    capsize=3,
                    lw=1.6,
                    label="measured median, 90 % interval" if g is gs[0] else None,
                )
                ax.annotate(
                    f"{g.n}" if g.verdict != "too few pairs" else f"{g.n} (too few)",
                    (xx, g.high_db if np.isfinite(g.high_db) else g.median_db),
                    textcoords="offset points",
                    xytext=(0, 4),
                    ha="center",
                    fontsize=7,
                    bbox={"fc": "white", "ec": "none", "pad": 0.6},
                )
        ax.set_xticks(x, [f"{h:02d}" for h in order])
        if len(x):
            ax.set_xlim(x.min() - 0.8, x.max() + 0.8)
        ax.axhline(0.0, color="0.6", lw=0.6)
        ax.set_ylabel("A - B [dB]")
        ax.set_title(f"{name}: {r.a} minus {r.b}", fontsize=10)
        ax.grid(True, axis="y", alpha=0.3)
    axes[-1].set_xlabel("UTC hour (N above each interval)")
    axes[0].legend(fontsize=8, loc="best")
    fig.tight_layout()
    return fig


# ---- example data (invented: call signs with the unallocated prefix Q, invented sites)


def synthesise(
    *,
    site_lat: float,
    site_lon: float,
    targets: list[tuple[float, float]],
    start: str = "2026-12-02 00:00:00",
    hours: int = 4,
    stations_per_target: int = 12,
    decode_sigma_db: float = 1.5,
    fading_sigma_db: float = 4.0,
    dropout: float = 0.1,
    one_sided: int = 4,
    threshold_db: float = -24.0,
    freq_mhz: float = 1.840,
    mode: str = "FT8",
    seed: int = 0,
) -> tuple[str, str]:
    """Two decode logs (common ALL-decodes text format) of the same stations heard on antennas A and B.

    ``targets``: (bearing [deg], true A - B difference [dB]) per group of stations, placed 2,000-9,000 km away
    within 4 deg of the bearing.  Each slot a station sends with probability 0.5; its level fades (common to both
    antennas, ``fading_sigma_db``); each antenna adds its own decoder scatter (``decode_sigma_db``) and rounds to
    whole dB; a decode below ``threshold_db`` is lost, and each decode is lost at random with ``dropout``;
    ``one_sided`` stations per target are heard on one antenna only.  Call signs use the unallocated prefix Q.
    """
    from pyproj import Geod

    rng = np.random.default_rng(seed)
    geod = Geod(ellps="WGS84")
    period = logs.SLOT_SECONDS[mode]
    n_slots = int(hours * 3600 / period)
    t0 = pd.Timestamp(start, tz="UTC")
    letters = np.array(list("ABCDEFGHIJKLMNOPRSTUVWXYZ"))
    lines_a, lines_b = [], []
    k = 0
    for ti, (bearing, diff) in enumerate(targets):
        n_st = stations_per_target + one_sided
        az = bearing + rng.uniform(-4.0, 4.0, n_st)
        dist = rng.uniform(2.0e6, 9.0e6, n_st)
        lon, lat, _ = geod.fwd(np.full(n_st, site_lon), np.full(n_st, site_lat), az, dist)
        base = rng.uniform(-14.0, 4.0, n_st)
        for s in range(n_st):
            call = f"Q{(k % 9) + 1}{''.join(rng.choice(letters, 3))}"
            k += 1
            loc = from_latlon(float(lat[s]), float(lon[s]), chars=4)
            side = None if s < stations_per_target else ("A" if s % 2 else "B")
            audio = float(rng.uniform(300.0, 2700.0))
            sent = np.flatnonzero(rng.random(n_slots) < 0.5)
            level = base[s] + rng.normal(0.0, fading_sigma_db, sent.size)
            snr_a = np.round(level + diff + rng.normal(0.0, decode_sigma_db, sent.size))
            snr_b = np.round(level + rng.normal(0.0, decode_sigma_db, sent.size))
            for j, slot in enumerate(sent):
                when = (t0 + pd.Timedelta(seconds=float(slot * period))).strftime("%y%m%d_%H%M%S")
                msg = f"CQ {call} {loc}" if j % 3 == 0 else f"Q0ZZZ {call} {'R' if j % 2 else ''}{int(snr_b[j]):+03d}"
                dt = rng.normal(0.2, 0.1)
                for lines, snr, who in ((lines_a, snr_a[j], "A"), (lines_b, snr_b[j], "B")):
                    if side is not None and side != who:
                        continue
                    if snr < threshold_db or rng.random() < dropout:
                        continue
                    df = audio + rng.integers(-1, 2)
                    lines.append(
                        (slot, ti, f"{when} {freq_mhz:9.3f} Rx {mode:<6}{int(snr):4d} {dt:4.1f} {df:4.0f} {msg}")
                    )
    out = []
    for lines in (lines_a, lines_b):
        lines.sort(key=lambda x: (x[0], x[1]))
        out.append("\n".join(x[2] for x in lines) + "\n")
    return out[0], out[1]


EXAMPLES = {
    "log": """\
# The common ALL-decodes text format, one decode a line (invented stations; the prefix Q is allocated to no one):
# UTC date_time   dial MHz  Rx/Tx  mode  SNR  DT  audio Hz  message
261202_000000     1.840 Rx FT8    -12  0.2 1234 CQ Q1ABC FN42
261202_000000     1.840 Rx FT8     -3  0.1  877 Q0ZZZ Q2DEF -07
261202_000015     1.840 Tx FT8      0  0.0 1500 Q2DEF Q0ZZZ R-09
2026-12-02 00:00:30  1.840 Rx FT8  -18  0.3 1234 Q0ZZZ Q1ABC -15
# the dial frequency may be a band name; the Rx/Tx word may be absent:
261202_000045     160m FT8        -20  0.2 1233 CQ DX Q3GHI JO20
""",
    "csv": """\
time_utc,band,mode,snr_db,dt_s,audio_hz,message
2026-12-02T00:00:00Z,160m,FT8,-12,0.2,1234,CQ Q1ABC FN42
2026-12-02T00:00:15Z,160m,FT8,-15,0.2,1234,Q0ZZZ Q1ABC -15
2026-12-02T00:00:15Z,1.840,FT8,-4,0.1,877,Q0ZZZ Q2DEF R-07
""",
    "spots": """\
# One listener's spots; the listener switches antennas every slot (even 2-minute slots on A, odd on B,
# unless an 'antenna' column says a or b).
time_utc,band,mode,snr_db,tx_call,tx_locator,rx_call
2026-12-02 00:00:00,1.8366,WSPR,-21,Q1ABC,FN42,Q9XYZ
2026-12-02 00:02:00,1.8366,WSPR,-25,Q1ABC,FN42,Q9XYZ
2026-12-02 00:04:00,1.8366,WSPR,-19,Q1ABC,FN42,Q9XYZ
2026-12-02 00:06:00,1.8366,WSPR,-24,Q1ABC,FN42,Q9XYZ
""",
    "places": """\
# call -> place: latitude and longitude [deg], or a locator
call,latitude,longitude,locator
Q1ABC,42.36,-71.06,
Q2DEF,,,JO20
""",
}
"""Example files, printed by ``snrgain verify --example KIND``."""
