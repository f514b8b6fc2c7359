"""What :func:`snrgain.evaluate` returns: numbers only, with units in the field names.

:class:`Results` holds the resolved site, band and times, the noise sky
(:class:`snrgain.sky.noise.SkySeries`), one :class:`AntennaResult` for the
reference and for each candidate (ranked, best first), the pattern cuts the
figures draw, and :class:`Notice` records (a code and its values; the
sentences are written at the edge, :mod:`snrgain.outputs.messages`; the class lives in :mod:`snrgain.model.notices`).
:meth:`Results.to_dict` is the JSON output.
"""

from __future__ import annotations

from dataclasses import field
from typing import Any

import numpy as np

from snrgain.decide.plan import TIE_DB
from snrgain.model.notices import Notice  # re-exported: the documented path snrgain.model.results.Notice
from snrgain.records import record
from snrgain.sky.noise import SkySeries
from snrgain.units import signed_text

SCHEMA_VERSION = "3"

ADVISORY_CODES = frozenset(
    {
        "receiver-limited",
        "termination-fragile",
        "termination-off-target",
        "wire-too-long",
        "phasing-tolerance",
        "source-position",
        "feed-line-cost",
        "local-source-dominates",
        "far-ground-too-high",
        "strong-signal-overload",
        "strong-signal-product",
    }
)
"""Notice codes that weigh one candidate's own figures or build (a preamplifier it needs, its resistor, its length,
its phasing lines' precision, its feed line, what its noise rests on, the broadcast levels its chain would take): of
a candidate the station plan does not build they are set apart (:meth:`Results.notices_apart`).  Every other notice
(the site, the lot, an input that disagrees with itself, an array pointing away from its bearing, a safety caution)
is always said, and every notice on the reference."""


@record
class AntennaResult:
    """Numbers for one antenna.  Array axes: [target, month, hour] or [month, hour].

    Attributes
    ----------
    name, family, parameters : what the antenna is (parameters with SI units in keys)
    gain_dbi : weighted total gain toward each target [dBi], shape (targets,)
    mean_gain_dbi : gain averaged over the whole sphere, 0 below the horizon [dBi]
    rdf_db : receiving directivity factor per target, trade scale (snrgain.model.snr) [dB]
    front_to_back_db : per target, at the target's mean elevation [dB]
    snr_gain_db : SNR gain over the reference [dB], shape (targets, months, hours); NaN at the months and hours
        a target is not listened for
    snr_gain_nominal_db : per target, snr_gain_db averaged in dB over the target's months and hours [dB]
    snr_gain_median_db, snr_gain_p10_db, snr_gain_p90_db : per target, the median and 10 % and 90 % points of
        the SNR gain over the spreads counted (snrgain.model.spread) [dB]
    probability_beats : per target, the probability that the SNR gain reaches Results.beat_by_db [-]
    snr_gain_atmospheric_deciles_db : snr_gain_db with atmospheric noise at its P.372 upper and lower deciles
        [dB], shape (2, targets, months, hours); None without atmospheric noise
    noise_dbm : external noise delivered through the chain to the receiver input in the
        band's bandwidth [dBm], shape (months, hours)
    noise_by_component_dbm : the same per noise component [dBm]
    margin_db : noise_dbm minus the chain's noise floor at the receiver input [dB]
    receiver_snr_loss_db : SNR lost to the chain's noise, 10 log10((T_A + T_chain) / T_A) [dB]
    preamp_gain_needed_db : preamplifier gain that brings the margin to the target (the chain's own
        preamplifier, or a suggested one of 3 dB noise figure before the receiver); 0 if already met,
        NaN if no gain can [dB]
    preamp_position : where that preamplifier goes: "receiver" (before the receiver), "antenna" (after the
        transformer, where a lossy feed line follows), "as placed" (the chain's own), None if no gain helps
    receiver_limited : True if margin_db, to 0.1 dB (as printed), falls below the margin target at any hour
    preamp_best_effort : where no preamplifier gain brings the margin to the target at some hour, the one that comes
        closest (snrgain.physics.chain.best_effort_preamp): gain_db, position, snr_loss_db (per month and hour, the
        receiver's SNR loss with it); else None
    chain : noise_figure_db, gain_db, noise_floor_dbm (at the receiver input), stages
    """

    name: str
    family: str
    parameters: dict[str, Any]
    gain_dbi: np.ndarray
    mean_gain_dbi: float
    rdf_db: np.ndarray
    front_to_back_db: np.ndarray
    snr_gain_db: np.ndarray
    noise_dbm: np.ndarray
    noise_by_component_dbm: dict[str, np.ndarray]
    margin_db: np.ndarray
    receiver_snr_loss_db: np.ndarray
    preamp_gain_needed_db: np.ndarray
    preamp_position: str | None
    receiver_limited: bool
    snr_gain_nominal_db: np.ndarray
    snr_gain_median_db: np.ndarray
    snr_gain_p10_db: np.ndarray
    snr_gain_p90_db: np.ndarray
    probability_beats: np.ndarray
    chain: dict[str, Any] = field(default_factory=dict)
    snr_gain_atmospheric_deciles_db: np.ndarray | None = field(default=None, repr=False)
    build: dict[str, Any] = field(default_factory=dict)
    """What to build: termination, transformer, phasing lines (snrgain.decide.build)."""
    group: str | None = None
    """The switched antenna this is one state of (the name written on the candidate; ``directions``), else None."""
    state: str | None = None
    """The state's label within its group, e.g. "NE (45 deg)"; None for an antenna that is not switched."""
    parts: tuple[str, ...] = ()
    """The names of the scenario's antennas a phasing unit combines (built with it); () for any other antenna."""
    preamp_best_effort: dict[str, Any] | None = None

    def __repr__(self) -> str:
        per = ", ".join(f"{signed_text(m)}" for m in self.snr_gain_median_db)
        return f"AntennaResult({self.name!r}, {self.family}, median SNR gain per target [{per}] dB)"


@record
class TargetResult:
    """One target's answer: the candidates ranked by median SNR gain toward it, the best and its margin."""

    name: str
    ranking: list[str]
    """Candidate names, highest median SNR gain first."""
    best: str
    runner_up: str
    """The second candidate, or the reference when there is only one."""
    margin_db: float
    """The best's median SNR gain minus the runner-up's [dB]."""


@record
class PatternCuts:
    """Total gain [dBi] on an azimuth cut at each target's mean elevation and on an elevation cut toward each
    target's bearing: antenna name -> array (targets, cut points)."""

    azimuth_deg: np.ndarray
    elevation_deg: np.ndarray
    azimuth: dict[str, np.ndarray]
    elevation: dict[str, np.ndarray]


@record
class Named:
    """An antenna as the figures tell it apart: its name and family (its colour, line and marker follow from them and
    from its place in the scenario's order, snrgain.outputs.style)."""

    name: str
    family: str


@record(repr=False)
class Preview:
    """What the figures of a scenario show that is known before its results: the site, the targets, the antennas'
    names and families, and, as the stages make them, the noise sky (``noise``) and the pattern cuts (``cuts``);
    made by :func:`snrgain.decide.decisions.preview` with the same functions that fill a :class:`Results`.  The
    command line's figures' process draws the noise sky and the patterns from it while the scenario is still
    evaluated, and keeps them where the results turn out to show the same (snrgain.outputs.plots.drawn_alike).
    The fields the figures read are the :class:`Results`' own."""

    site: dict[str, Any]
    freq_hz: float
    months: list[int]
    utc_hours: list[float]
    targets: list[dict[str, Any]]
    local_sources: list[dict[str, Any]]
    reference: Named
    candidates: list[Named]
    noise: SkySeries | None = None
    cuts: PatternCuts | None = None

    @property
    def antennas(self) -> list[Named]:
        """The reference, then the candidates."""
        return [self.reference, *self.candidates]


@record(repr=False)
class Results:
    """Everything ``evaluate`` computed.  ``candidates`` are in the scenario's order; ``target_results`` rank them
    per target; ``plan`` says which to build."""

    source: str
    site: dict[str, Any]
    freq_hz: float
    bandwidth_hz: float
    months: list[int]
    utc_hours: list[float]
    targets: list[dict[str, Any]]
    noise: SkySeries
    reference: AntennaResult
    candidates: list[AntennaResult]
    receiver: dict[str, Any]
    nside: int
    target_results: list[TargetResult] = field(default_factory=list)
    plan: Any = None
    """The station plan (snrgain.decide.plan.Plan)."""
    uncertainty: dict[str, Any] = field(default_factory=dict)
    """Which spreads were counted and how (JSON-ready)."""
    beat_by_db: float = 3.0
    notices: list[Notice] = field(default_factory=list)
    cuts: PatternCuts | None = None
    lot_m: list[tuple[float, float]] | None = None
    local_sources: list[dict[str, Any]] = field(default_factory=list)
    site_plan: dict[str, Any] | None = field(default=None, repr=False)
    """The site to scale (snrgain.outputs.siteplan.plan_of), in metres; what figures and the report draw."""
    tx_vertical: list[dict[str, Any]] = field(default_factory=list)
    """Per antenna, what the transmitting vertical (both states) and each structure do to it where it stands: RDF
    change, front-to-back and forward-gain change (snrgain.model.scatter.tx_effects); its ranked figures already
    hold the state run."""
    strong_signals: list[dict[str, Any]] = field(default_factory=list)
    """Per antenna and nearby transmitter ([[strong_signal]]): its field, the level at the antenna's terminals, at
    the first active stage (``stage``, ``stage_input_dbm``) and at each active stage (``stages``: stage, input_dbm;
    the preamplifier where there is one, then the receiver) (snrgain.model.strong)."""

    @property
    def antennas(self) -> list[AntennaResult]:
        """The reference, then the candidates in rank order."""
        return [self.reference, *self.candidates]

    @property
    def warnings(self) -> list[str]:
        """The notices as sentences."""
        from snrgain.outputs.messages import notice_text

        return [notice_text(n, unit=self.site.get("length_unit", "m")) for n in self.notices]

    def warnings_apart(self) -> tuple[list[str], dict[str, int]]:
        """(said, apart): :attr:`warnings` but those on candidates the station plan does not build
        (:meth:`notices_apart`), which are counted by antenna instead (its name: how many)."""
        from snrgain.outputs.messages import notice_texts

        said, apart = self.notices_apart(self.built_names())
        return notice_texts(said, unit=self.site.get("length_unit", "m")), apart_counts(self, apart)

    def built_names(self, plan_antennas=None) -> frozenset[str] | None:
        """The names of what the station plan builds (``plan_antennas``: another plan's antennas, a plan across
        bands'; default this run's own plan): its antennas, every state of a switched one (and its own name) and a
        phasing unit's parts; None without a plan."""
        if plan_antennas is None:
            if self.plan is None:
                return None
            plan_antennas = self.plan.antennas
        names = set(plan_antennas)
        built = set(names)
        for c in self.candidates:
            if c.name in names or (c.group is not None and c.group in names):
                built.add(c.name)
                built.update(c.parts)
        return frozenset(built)

    def notices_apart(self, built: frozenset[str] | None) -> tuple[list[Notice], list[Notice]]:
        """(said, apart): the notices, with those weighing the figures or the build of a candidate the plan does not
        build (``built``: :meth:`built_names`; codes :data:`ADVISORY_CODES`) apart; none apart where ``built`` is
        None.  Nothing is dropped: the run's table says the first and counts the second (--all-warnings says them)."""
        if built is None:
            return list(self.notices), []
        said, apart = [], []
        for n in self.notices:
            unbuilt = n.antenna is not None and n.antenna != self.reference.name and n.antenna not in built
            (apart if unbuilt and n.code in ADVISORY_CODES else said).append(n)
        return said, apart

    def shown_name(self, name: str) -> str:
        """How a notice's antenna is counted when set apart: a switched antenna's state by its antenna's name."""
        for c in self.candidates:
            if c.name == name and c.group is not None:
                return c.group
        return name

    def antenna(self, name: str) -> AntennaResult:
        """The antenna (reference or candidate) of that name."""
        for a in self.antennas:
            if a.name == name:
                return a
        raise KeyError(f"no antenna named {name!r}; the antennas are {[a.name for a in self.antennas]}")

    def __repr__(self) -> str:
        best = "; ".join(
            f"{t.name}: {t.best!r} {signed_text(self.antenna(t.best).snr_gain_median_db[i])} dB"
            for i, t in enumerate(self.target_results)
        )
        head = (
            f"Results({self.site.get('name')!r}, {self.freq_hz / 1e6:g} MHz, {len(self.candidates)} candidates; {best}"
        )
        if self.plan is not None:
            head += f"; plan: {len(self.plan.antennas)} antenna(s), {signed_text(self.plan.gain_db)} dB"
        return head + (f"; {len(self.notices)} notice(s))" if self.notices else ")")

    def to_xarray(self):
        """The results as one labelled :class:`xarray.Dataset`, units in every variable's ``attrs["units"]``.

        Dimensions: ``antenna`` (the reference, then the candidates in the scenario's order; coordinates
        ``family``, ``is_reference``), ``target`` (coordinates ``weight``, ``bearing_deg``, ``elevation_min_deg``,
        ``elevation_max_deg``, ``best``, ``runner_up``), ``month`` (1-12), ``utc_hour`` [h], ``quantile`` (0.1,
        0.5, 0.9), ``component`` (the noise components; coordinate ``component_kind``) and
        ``atmospheric_decile`` ("upper", "lower").  Variables, with their units:

        - per antenna, target, month, hour: ``snr_gain_db`` [dB] (NaN where the target is not listened for);
          ``snr_gain_atmospheric_deciles_db`` [dB] (also per atmospheric_decile; NaN without atmospheric noise);
        - per antenna and target: ``snr_gain_quantile_db`` [dB] (per quantile: the 10 %, median and 90 %
          points), ``snr_gain_nominal_db`` [dB], ``probability_beats_reference`` [-], ``rank_for_target`` [-]
          (0: the reference), ``rdf_db`` [dB], ``front_to_back_db`` [dB], ``gain_toward_target_dbi`` [dBi];
        - per antenna: ``mean_gain_dbi`` [dBi], ``receiver_limited`` [-], ``chain_noise_figure_db`` [dB],
          ``chain_gain_db`` [dB], ``chain_noise_floor_dbm`` [dBm];
        - per antenna, month, hour: ``noise_dbm`` [dBm], ``noise_by_component_dbm`` [dBm] (also per component),
          ``margin_db`` [dB], ``receiver_snr_loss_db`` [dB], ``preamp_gain_needed_db`` [dB];
        - per target: ``best_margin_db`` [dB];
        - the sky on P.372's reference monopole: ``fa_db``, ``upper_decile_db``, ``lower_decile_db`` per
          component, month, hour [dB, Fa above kT0b]; ``total_fa_db``, ``total_upper_decile_db``,
          ``total_lower_decile_db``, ``median_power_sum_fa_db`` [dB] and ``median_power_sum_temperature_k`` [K]
          per month and hour; ``daytime`` [-].

        Dataset attributes: ``site``, ``latitude_deg``, ``longitude_deg``, ``frequency_hz``, ``bandwidth_hz``,
        ``reference``, ``beat_by_db``, ``margin_target_db``, ``nside``, ``scenario``.  Select by label, e.g.
        ``ds.snr_gain_db.sel(antenna="four-square west", target="East Asia")``.  Needs xarray (a dependency).

        Made once per Results (the results are frozen): each call returns a deep copy of it, so a caller may
        change what it gets.
        """
        held = self.__dict__.get("_dataset")
        if held is None:
            from snrgain.model.labelled import to_xarray

            held = to_xarray(self)
            self.__dict__["_dataset"] = held  # a cache, not a field: frozen dataclasses allow it via __dict__
        return held.copy(deep=True)

    def to_dataframe(self, *, listened_only: bool = True):
        """The results as a tidy :class:`pandas.DataFrame`: one row per target, antenna, month and UTC hour.

        Rows: the targets in the scenario's order, each target's antennas by rank (the reference first, rank 0),
        then month and hour; only the months and hours the target is listened at unless ``listened_only`` is
        False.  Columns (units in the names): ``target``, ``rank_for_target`` [-], ``antenna``, ``family``,
        ``month``, ``utc_hour`` [h], ``snr_gain_db`` [dB], ``gain_toward_target_dbi`` [dBi], ``rdf_db`` [dB],
        ``front_to_back_db`` [dB], ``noise_dbm`` [dBm], ``margin_db`` [dB], ``receiver_snr_loss_db`` [dB],
        ``preamp_gain_needed_db`` [dB], ``snr_gain_nominal_db``, ``snr_gain_p10_db``, ``snr_gain_median_db``,
        ``snr_gain_p90_db`` [dB] (per antenna and target, repeated over its hours) and
        ``probability_beats_reference`` [-].  Built from :meth:`to_xarray`; the CSV output is this table.
        """
        from snrgain.model.labelled import to_dataframe

        return to_dataframe(self, listened_only=listened_only)

    def to_dict(self) -> dict[str, Any]:
        """A JSON-ready dict (numbers as floats and lists; units in the keys; schema in README, "Output")."""
        noise = self.noise
        return jsonable(
            {
                "schema_version": SCHEMA_VERSION,
                "scenario": self.source,
                "site": self.site,
                "frequency_hz": self.freq_hz,
                "bandwidth_hz": self.bandwidth_hz,
                "months": self.months,
                "utc_hours": self.utc_hours,
                "targets": [t | self._target_answer(i) for i, t in enumerate(self.targets)],
                "plan": None if self.plan is None else self._plan_dict(),
                "uncertainty": self.uncertainty,
                "noise": {
                    "axes": ["month", "utc_hour"],
                    "components": noise.components,
                    "total_fa_db": noise.total_fa_db,
                    "total_upper_decile_db": noise.total_du_db,
                    "total_lower_decile_db": noise.total_dl_db,
                    "median_power_sum_fa_db": noise.median_power_sum_fa_db,
                    "daytime": noise.daytime,
                },
                "receiver": self.receiver,
                "nside": self.nside,
                "reference": _antenna_dict(self.reference),
                "candidates": [_antenna_dict(c) for c in self.candidates],
                "build": {c.name: c.build for c in self.candidates},
                "switched": self._switched_dict(),
                "local_sources": self.local_sources,
                "tx_vertical": self.tx_vertical,
                "strong_signals": self.strong_signals,
                "warnings": self.warnings,
            }
        )

    def _target_answer(self, i: int) -> dict[str, Any]:
        tr = self.target_results[i]
        rows = []
        for name in tr.ranking:
            a = self.antenna(name)
            rows.append(
                {
                    "name": name,
                    "snr_gain_db": {
                        "median": a.snr_gain_median_db[i],
                        "p10": a.snr_gain_p10_db[i],
                        "p90": a.snr_gain_p90_db[i],
                        "nominal": a.snr_gain_nominal_db[i],
                    },
                    "probability_beats_reference": a.probability_beats[i],
                    "rdf_db": a.rdf_db[i],
                    "front_to_back_db": a.front_to_back_db[i],
                    "gain_toward_target_dbi": a.gain_dbi[i],
                }
            )
        return {"ranking": rows, "best": {"name": tr.best, "runner_up": tr.runner_up, "margin_db": tr.margin_db}}

    def _switched_dict(self) -> dict[str, Any]:
        """Each switched antenna (group) once: its states in order and how they are switched
        (snrgain.decide.build.switching)."""
        from snrgain.decide.build import switching

        return {group: switching(states) for group, states in self.groups().items()}

    def groups(self) -> dict[str, list[AntennaResult]]:
        """The candidates that are states of a switched antenna, by group (in the order written)."""
        out: dict[str, list[AntennaResult]] = {}
        for c in self.candidates:
            if c.group is not None:
                out.setdefault(c.group, []).append(c)
        return out

    def _plan_dict(self) -> dict[str, Any]:
        return plan_to_dict(self.plan, "by_target", lambda t: {"target": self.targets[t]["name"]})


def apart_counts(results: Results, apart: list[Notice], counts: dict[str, int] | None = None) -> dict[str, int]:
    """The notices set apart (:meth:`Results.notices_apart`) counted by antenna (:meth:`Results.shown_name`), added to
    ``counts`` where given; in the order first met."""
    counts = {} if counts is None else counts
    for n in apart:
        name = results.shown_name(n.antenna)
        counts[name] = counts.get(name, 0) + 1
    return counts


def plan_to_dict(p, rows_key: str, where) -> dict[str, Any]:
    """A station plan as JSON: ``rows_key`` lists, for each of the plan's columns (``where(column)`` names it: its
    target, or its band and target), the antennas that serve it and when; one writer for one band and for several."""
    return {
        "antennas": p.antennas,
        "added_db": p.added_db,
        "gain_db": p.gain_db,
        "method": p.method,
        "max_antennas": p.max_antennas,
        rows_key: [
            {
                **where(c),
                "served_by": [
                    {
                        "antenna": s.antenna,
                        "group": getattr(s, "group", None),
                        "months": s.months,
                        "utc_hours": s.utc_hours,
                        "snr_gain_db": s.snr_gain_db,
                    }
                    for s in rows
                ],
            }
            for c, rows in sorted(p.by_target.items())
        ],
        "not_best": [{**where(c), **why} for c, why in sorted(p.not_best.items())],
        "states": getattr(p, "states", {}),
        "alternatives": [list(pair) for pair in getattr(p, "alternatives", ())],
        "unfit": [{"antenna": name, **why} for name, why in getattr(p, "unfit", {}).items()],
    }


def _antenna_dict(a: AntennaResult) -> dict[str, Any]:
    return {
        "name": a.name,
        "group": a.group,
        "state": a.state,
        "family": a.family,
        "parameters": a.parameters,
        "snr_gain_db": {"axes": ["target", "month", "utc_hour"], "values": a.snr_gain_db},
        "snr_gain_median_db": a.snr_gain_median_db,
        "snr_gain_p10_db": a.snr_gain_p10_db,
        "snr_gain_p90_db": a.snr_gain_p90_db,
        "snr_gain_nominal_db": a.snr_gain_nominal_db,
        "probability_beats_reference": a.probability_beats,
        "gain_toward_target_dbi": a.gain_dbi,
        "mean_gain_dbi": a.mean_gain_dbi,
        "rdf_db": a.rdf_db,
        "front_to_back_db": a.front_to_back_db,
        "noise_dbm": {"axes": ["month", "utc_hour"], "values": a.noise_dbm},
        "noise_by_component_dbm": a.noise_by_component_dbm,
        "margin_db": {"axes": ["month", "utc_hour"], "values": a.margin_db},
        "receiver_snr_loss_db": {"axes": ["month", "utc_hour"], "values": a.receiver_snr_loss_db},
        "preamp_gain_needed_db": {"axes": ["month", "utc_hour"], "values": a.preamp_gain_needed_db},
        "preamp_position": a.preamp_position,
        "preamp_best_effort": None
        if a.preamp_best_effort is None
        else {
            "gain_db": a.preamp_best_effort["gain_db"],
            "position": a.preamp_best_effort["position"],
            "snr_loss_db": {"axes": ["month", "utc_hour"], "values": a.preamp_best_effort["snr_loss_db"]},
        },
        "receiver_limited": a.receiver_limited,
        "chain": a.chain,
    }


def jsonable(x):
    """``x`` with numpy arrays and scalars turned into lists, floats, ints and bools; non-finite floats as None.

    >>> jsonable({"a": np.array([1.0, np.inf]), "b": np.int64(2)})
    {'a': [1.0, None], 'b': 2}
    """
    if isinstance(x, dict):
        return {str(k): jsonable(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [jsonable(v) for v in x]
    if isinstance(x, np.ndarray):
        return jsonable(x.tolist())
    if isinstance(x, (np.bool_, bool)):
        return bool(x)
    if isinstance(x, np.integer):
        return int(x)
    if isinstance(x, (float, np.floating)):
        v = float(x)
        return v if np.isfinite(v) else None
    return x


def _rank_key(median_db) -> tuple[int, float]:
    """Sort key of a median SNR gain, higher first, ties to TIE_DB kept in order; NaN last."""
    x = float(median_db)
    if np.isnan(x):
        return (1, 0.0)
    return (0, -x if np.isinf(x) else -float(round(x / TIE_DB)))


def rank_for_target(
    candidates: list[AntennaResult], target_index: int, target_name: str, reference: AntennaResult
) -> TargetResult:
    """The candidates ranked by median SNR gain toward one target; the best one to build (a yardstick such as the
    isotropic antenna is ranked, not chosen: the station plan's rule) and its margin over the runner-up (the
    next antenna one could build instead: another state of the same switched antenna is not one).  Medians equal
    to TIE_DB keep the scenario's order, as the station plan takes them (snrgain.decide.plan: a tie goes to the
    earlier antenna), so rounding in the last digit never makes two answers."""
    order = sorted(candidates, key=lambda a: _rank_key(a.snr_gain_median_db[target_index]))
    can_build = [a for a in order if buildable(a)] or order  # a yardstick (isotropic) is ranked, never the best
    best = can_build[0]
    others = [a for a in can_build[1:] if a.group is None or a.group != best.group]
    runner = others[0] if others else reference
    margin = float(best.snr_gain_median_db[target_index] - runner.snr_gain_median_db[target_index])
    return TargetResult(target_name, [a.name for a in order], best.name, runner.name, margin)


def buildable(a: AntennaResult) -> bool:
    """Whether an antenna is one to build (the station plan's rule, snrgain.decide.plan: not a yardstick)."""
    from snrgain.antennas import FAMILIES

    family = FAMILIES.get(getattr(a, "family", None))
    return family is None or family.build.buildable


__all__ = [
    "Results",
    "AntennaResult",
    "TargetResult",
    "Notice",
    "PatternCuts",
    "SCHEMA_VERSION",
    "jsonable",
    "rank_for_target",
]
