"""Noise readings in: the site's man-made level from what the receiver shows (``snrgain noise-readings``).

Two kinds of reading, each with its UTC time, the scenario's antenna it was taken on and its frequency:

- **rise over a matched load**: the receiver's output noise with the antenna, and with a matched load in the
  antenna's place at the antenna's terminals (same gain, same bandwidth; any one dB scale: dBm, dBFS, an audio
  meter).  The rise Y (linear) is the Y-factor of the noise-figure measurement (e.g. D. M. Pozar, "Microwave
  Engineering", 4th ed. (2012), sec. 10.2): Y = (T_A + T_e) / (T_L + T_e), with T_e = (F - 1) T0 the chain's
  noise temperature referred to the antenna terminals (its noise figure F from the scenario's chain, Friis's
  cascade) and T_L the load's temperature (290 K unless stated), so T_A = Y (T_L + T_e) - T_e;
- **S-meter**: a reading in S-units, turned into dBm at the receiver's input by the receiver's calibration table
  (S-unit -> dBm, measured with a signal generator; without one IARU Region 1 Technical Recommendation R.1:
  S9 = -73 dBm, 6 dB per S-unit), in the stated bandwidth b: P = k b G (T_A + T_e), G the chain's gain, so
  T_A = P / (k b G) - T_e.  The S-meter must read the noise's power (an average, not a peak hold; common practice
  is to read it in the narrowest filter, with the AGC on).

The antenna temperature T_A holds every noise component; the scenario, run through the pipeline at the
reading's month and UTC hour (:func:`snrgain.model.pipeline.evaluate` on a copy), gives each component's share
through that antenna's modelled gain (``noise_by_component_dbm``, the same integral over the sky and the chain
the ranking uses; Fa refers to P.372's short monopole over a perfect ground).  What the reading holds beyond the
components other than man-made noise is the man-made part; its ratio to the modelled man-made part is the
offset of the site's man-made level over the environment's curve:

    offset_i = current offset + 10 log10((T_A,i - T_other,i) / T_man-made,i)

and Fa (man-made) at the site = the environment's P.372 median at the frequency + offset_i (shown per reading).
A reading on an antenna where other noise dominates says little about man-made noise, and the inversion above
is steep there; so the fitted offset is the least-squares fit in the readings' own dB (where reading errors are
about constant): it minimises sum_i (10 log10(T_A,i + T_e,i) - 10 log10(T_other,i + T_mm,i 10^(delta/10) +
T_e,i))^2 over delta (a 1 dB grid, then :func:`scipy.optimize.minimize_scalar`), each reading counting by how
much of it is man-made.  Its uncertainty: the readings' scatter s about the fit (never less than one reading's
least uncertainty, READING_FLOOR_DB), and the offset's standard error
s / sqrt(sum_i share_i^2) (share_i: the man-made part of reading i, the derivative of its dB by the offset's),
times 1.645 for a 90 % interval (linearised least squares, e.g. P. R. Bevington and D. K. Robinson, "Data
Reduction and Error Analysis for the Physical Sciences", 3rd ed. (2003), ch. 8).

Cautions: the modelled antenna temperature leaves out the thermal noise of the antenna's own ground loss (its
(1 - efficiency) x 290 K), small against low-band sky noise but not for a very inefficient antenna on a quiet
site; a rise under 3 dB leaves the antenna's noise hardly above the receiver's and the reading's offset is
unsteady (the readings say so); local sources (``[[noise.local]]``) count among the other components, so read
them first (``snrgain locate``).
"""

from __future__ import annotations

import datetime as _dt
from dataclasses import field
from pathlib import Path

import numpy as np

from noisemodels.constants import BOLTZMANN_J_PER_K as BOLTZMANN
from noisemodels.p372 import T0_K
from snrgain.problems import toml_repr
from snrgain.records import record

SMALL_RISE_DB = 3.0
"""Below this rise over the load a reading mostly measures the receiver (common practice)."""
MAX_RISE_DB = 100.0
"""The largest rise over a matched load a reading may give [dB].  Both levels are read on one receiver at one gain
setting, the load's at the receiver's own noise floor: trade tests of receivers quote blocking dynamic ranges (from
the noise floor in a 500 Hz bandwidth to 1 dB of compression by one signal) of some 100 to 150 dB for the best, and
a noise that far over the floor in the reading's bandwidth fills the whole front end's passband alike (a signal does
not), so the receiver compresses well before.  Nor does the sky give more at the low bands: the rise is at most the
antenna's noise over the load's 290 K, and ITU-R P.372's noisiest atmospheric noise at 1.8 MHz (its upper decile,
the stormiest place and season) lies some 103 dB over kT0b."""
EDGE_DB = 0.5
"""A fit within this of an end of the schema's offset range is taken as stopped there by the range (the search's
last step is 0.01 dB, so a fit inside the range by more than half a grid cell found a minimum of its own)."""
READING_FLOOR_DB = 1.0
"""The least uncertainty of one noise reading [dB]: a receiver's level or S-meter reading over a minute of noise
(common practice); the fitted offset's tolerance is never narrower than this one's over the readings'
sensitivities."""
OFF_BAND_FRACTION = 0.05
"""A reading outside the scenario's amateur band and further than this from its frequency (as a ratio, either way)
speaks for another frequency: man-made noise's Fa falls some 28 dB a decade (ITU-R P.372 Table 1's slopes), so 5 %
moves it by about 0.6 dB, near one reading's least uncertainty (READING_FLOOR_DB); within the band, the level read
is the band's."""
MAX_TOLERANCE_DB = 10.0
"""A wider 90 % half-width than this and the fit is not a result: P.372's environment curves lie 4-14 dB apart at
the low bands (city, residential, rural, quiet rural; ITU-R P.372 Table 2), so +-10 dB spans two or more of them
and the readings would tell the site's level no better than choosing its environment does."""

EXAMPLE = """\
# Noise readings for snrgain noise-readings (for scenarios/wren-corner.toml, an invented site).  Times in UTC.
# A reading is either a rise over a matched load or an S-meter reading.

# An S-meter's calibration: S-unit -> dBm at the receiver's input, measured with a signal generator.
# Without a table for a receiver: IARU Region 1 R.1, S9 = -73 dBm, 6 dB per S-unit.
[[receiver]]
name = "bench receiver"
s_meter = [["S1", -117], ["S3", -107], ["S5", -97], ["S7", -86], ["S9", -73], ["S9+20", -52]]

# The receiver's output noise with the antenna, then with a 50 ohm load in the antenna's place at its
# terminals (same gain, same filter; any one dB scale: dBm, dBFS, an audio meter's dB).
[[reading]]
time = 2026-12-02T23:10:00Z
antenna = "TX vertical"
frequency = "1.83 MHz"
bandwidth = "500 Hz"
antenna_db = -73.0
load_db = -120.0
# load_temperature = "290 K"   # the load's temperature, if far from 290 K

[[reading]]
time = 2026-12-03T01:40:00Z
antenna = "Beverage Europe"
frequency = "1.83 MHz"
bandwidth = "500 Hz"
antenna_db = -95.5
load_db = -120.0

[[reading]]
time = 2026-12-03T04:20:00Z
antenna = "Beverage Europe"
frequency = "1.83 MHz"
bandwidth = "500 Hz"
antenna_db = -98.5
load_db = -120.0

[[reading]]
time = 2026-12-04T00:30:00Z
antenna = "Beverage Europe"
frequency = "1.83 MHz"
bandwidth = "500 Hz"
antenna_db = -97.5
load_db = -120.0

[[reading]]
time = 2026-12-04T02:50:00Z
antenna = "TX vertical"
frequency = "1.83 MHz"
bandwidth = "500 Hz"
s_meter = "S7"
receiver = "bench receiver"
"""

_READING_KEYS = {
    "time",
    "antenna",
    "frequency",
    "bandwidth",
    "antenna_db",
    "load_db",
    "load_temperature",
    "s_meter",
    "receiver",
}


@record
class Reading:
    index: int
    time: _dt.datetime
    antenna: str
    freq_hz: float
    bandwidth_hz: float | None
    rise_db: float | None = None
    load_k: float = T0_K
    power_dbm: float | None = None
    """An S-meter reading as dBm at the receiver's input, through its receiver's table."""
    s_meter: str | None = None


def _problem(where: str, msg: str):
    from snrgain.errors import ReadingsError

    return ReadingsError("noise readings", [(where, msg)])


def s_meter_dbm(text: str, table: list[tuple[float, float]] | None, where: str) -> float:
    """An S-meter reading ("S5", "S9+10") as dBm at the receiver's input: through the receiver's table (nominal
    R.1 dBm -> measured dBm, interpolated linearly), or R.1 itself without a table."""
    from snrgain.units import QuantityError, parse_power_dbm

    if not isinstance(text, str) or not text.strip().upper().startswith("S"):
        raise _problem(where, f"an S-meter reading such as 'S5' or 'S9+10'; got {toml_repr(text)}")
    try:
        nominal = parse_power_dbm(text)
    except QuantityError as exc:
        raise _problem(where, str(exc)) from None
    if not table:
        return nominal
    xs = np.array([x for x, _ in table])
    ys = np.array([y for _, y in table])
    if not (xs[0] - 1e-9 <= nominal <= xs[-1] + 1e-9):
        raise _problem(
            where,
            f"{text} lies outside the receiver's calibration table (S-units from the table's first to its last "
            "entry); extend the table rather than trust an extrapolation",
        )
    return float(np.interp(nominal, xs, ys))


def _kelvin(value) -> float | None:
    """A load's temperature [K]: a number or 'N K', from 1 to 400 K (a load at room temperature, or cooled)."""
    if isinstance(value, bool):
        return None
    try:
        x = float(value) if isinstance(value, (int, float)) else float(str(value).strip().removesuffix("K").strip())
    except ValueError:
        return None
    return x if 1.0 <= x <= 400.0 else None


def _rise_db(r: dict, where: str, problems: list) -> float | None:
    """A reading's rise over the load [dB] from its antenna_db and load_db, or None with the problems added (each
    key's value and what it takes; a rise of none, or past :data:`MAX_RISE_DB`, with both values)."""
    values = {}
    for key, other, what in (("antenna_db", "load_db", "the antenna"), ("load_db", "antenna_db", "the matched load")):
        v = r.get(key)
        try:  # a number, or text of one, as before
            x = float(v) if isinstance(v, (int, float, str)) and not isinstance(v, bool) else float("nan")
        except ValueError:
            x = float("nan")
        if key not in r:
            problems.append((f"{where}.{key}", "missing: a rise over a load gives antenna_db and load_db both"))
        elif not np.isfinite(x):
            problems.append(
                (
                    f"{where}.{key}",
                    f"the receiver's output noise with {what}: a finite number of dB, in the same dB scale as {other}; "
                    f"got {toml_repr(v)}",
                )
            )
        else:
            values[key] = x
    if len(values) < 2:
        return None
    rise = values["antenna_db"] - values["load_db"]
    given = f"antenna_db = {toml_repr(r['antenna_db'])} and load_db = {toml_repr(r['load_db'])}"
    if rise <= 0:
        problems.append(
            (where, f"{given}: the antenna reads {rise:+.1f} dB against the load: no rise (check the connections)")
        )
    elif rise > MAX_RISE_DB:
        problems.append(
            (
                where,
                f"{given}: a rise of {rise:g} dB over the load; a rise lies above 0 and at most {MAX_RISE_DB:g} dB "
                "(both levels read on one receiver at one gain setting, in one dB scale: check the scale and values)",
            )
        )
    return rise if 0 < rise <= MAX_RISE_DB else None


def load_readings(path) -> list[Reading]:
    """Read a noise-readings file (:data:`EXAMPLE`); ReadingsError naming each problem's reading and key."""
    from snrgain.errors import ReadingsError
    from snrgain.tools.readings import read_toml
    from snrgain.units import QuantityError, parse_power_dbm, parse_quantity

    data = read_toml(path, allowed={"receiver", "reading"})
    problems: list[tuple[str, str]] = []
    tables: dict[str, list[tuple[float, float]]] = {}
    for key in ("receiver", "reading"):
        if not isinstance(data.get(key, []), list):
            raise ReadingsError(str(path), [(key, f"a list of tables: [[{key}]] (see --example)")])
    named: dict[str, int] = {}  # each receiver's name: its table's number
    for i, rx in enumerate(data.get("receiver", []), 1):
        where = f"receiver[{i}]"
        if not isinstance(rx, dict) or not isinstance(rx.get("name"), str):
            problems.append((where, "a receiver needs a name"))
            continue
        if rx["name"] in named:
            first = named[rx["name"]]
            problems.append((f"{where}.name", f"{rx['name']!r} is already used by receiver[{first}]; name each once"))
            continue
        named[rx["name"]] = i
        pts = []
        if not isinstance(rx.get("s_meter", []), list):
            problems.append((f"{where}.s_meter", "a list of [S-reading, dBm] pairs"))
            continue
        for j, pair in enumerate(rx.get("s_meter", []), 1):
            try:
                s, dbm = pair
                pts.append((parse_power_dbm(s), float(dbm)))
                if not s.strip().upper().startswith("S") or not np.isfinite(pts[-1][1]):
                    raise ValueError
            except (ValueError, TypeError, QuantityError):
                problems.append(
                    (f"{where}.s_meter[{j}]", f"a pair [S-reading, dBm] such as ['S9', -73]; got {toml_repr(pair)}")
                )
        pts.sort()
        if len(pts) == 1 or any(b[1] <= a[1] or b[0] <= a[0] for a, b in zip(pts, pts[1:])):
            problems.append((f"{where}.s_meter", "at least two entries, the dBm rising with the S-reading"))
        tables[rx["name"]] = pts
    readings = []
    for i, r in enumerate(data.get("reading", []), 1):
        where = f"reading[{i}]"
        if not isinstance(r, dict):
            problems.append((where, "a table"))
            continue
        for k in sorted(set(r) - _READING_KEYS):
            problems.append((f"{where}.{k}", f"unknown key; allowed: {', '.join(sorted(_READING_KEYS))}"))
        t = r.get("time")
        if isinstance(t, _dt.datetime):
            t = t.replace(tzinfo=_dt.UTC) if t.tzinfo is None else t.astimezone(_dt.UTC)
        else:
            problems.append(
                (f"{where}.time", f"a TOML date-time in UTC such as 2026-12-02T23:10:00Z; got {toml_repr(t)}")
            )
        ant = r.get("antenna")
        if not isinstance(ant, str) or not ant:
            problems.append((f"{where}.antenna", "the name of the scenario's antenna the reading was taken on"))
        vals = {}
        for key, dim, need in (("frequency", "frequency", True), ("bandwidth", "frequency", False)):
            if key in r:
                try:
                    vals[key] = parse_quantity(r[key], dim)
                    if not vals[key] > 0:
                        raise QuantityError(f"must be above 0 Hz; got {toml_repr(r[key])}")
                except QuantityError as exc:
                    problems.append((f"{where}.{key}", str(exc)))
            elif need:
                problems.append((f"{where}.{key}", "missing (e.g. '1.83 MHz')"))
        rise = load_k = dbm = None
        has_rise = "antenna_db" in r or "load_db" in r
        if has_rise == ("s_meter" in r):
            problems.append((where, "give either antenna_db and load_db (a rise over a matched load) or s_meter"))
        elif has_rise:
            rise = _rise_db(r, where, problems)
            load_k = _kelvin(r.get("load_temperature", T0_K))
            if load_k is None:
                problems.append(
                    (
                        f"{where}.load_temperature",
                        f"a temperature from 1 to 400 K such as '290 K'; got {toml_repr(r['load_temperature'])}",
                    )
                )
        else:
            rx = r.get("receiver")
            if rx is not None and not isinstance(rx, str):
                problems.append(
                    (f"{where}.receiver", f"the name of a [[receiver]] table, as text; got {toml_repr(rx)}")
                )
            elif rx is not None and rx not in tables:
                problems.append((f"{where}.receiver", f"no [[receiver]] named {rx!r}"))
            elif "bandwidth" not in r:
                problems.append((f"{where}.bandwidth", "an S-meter reading needs the bandwidth it was read in"))
            else:
                try:
                    dbm = s_meter_dbm(r["s_meter"], tables.get(rx), f"{where}.s_meter")
                except ReadingsError as exc:
                    problems.extend(exc.problems)
        if not any(p[0].startswith(where) for p in problems):
            readings.append(
                Reading(
                    i,
                    t,
                    ant,
                    vals["frequency"],
                    vals.get("bandwidth"),
                    rise,
                    load_k if load_k is not None else T0_K,
                    dbm,
                    r.get("s_meter"),
                )
            )
    if not problems and not readings:
        problems.append(("reading", "no [[reading]] in the file (see --example)"))
    if problems:
        raise ReadingsError(str(path), problems)
    return readings


# ---- through the pipeline


@record
class NoiseFit:
    before_db: float
    offset_db: float
    spread_db: float
    """The readings' scatter about the fit, in the readings' own dB (0 with one reading)."""
    tolerance_db: float
    """Half-width of the fitted offset's 90 % interval [dB] (the scatter over the readings' sensitivities)."""
    environment: str
    freq_hz: float
    rows: list[dict]
    notes: list[str] = field(default_factory=list)
    level_notes: list[str] = field(default_factory=list)
    """Notes on the fitted level itself (where it lies against P.372's environments): said only where the readings
    determine it (:attr:`shown_notes`); an undetermined fit has no level to remark on."""

    @property
    def shown_notes(self) -> list[str]:
        """The notes said: the readings' own, and the level's where the readings determine it."""
        return self.notes + (self.level_notes if self.determined else [])

    @property
    def not_determined_because(self) -> list[str]:
        """Why the readings do not fix the level (empty when they do): no reading holds man-made noise beyond the
        rest, the fit stopped at an end of the schema's range, or its 90 % interval is wider than
        :data:`MAX_TOLERANCE_DB` (a single reading's rests on :data:`READING_FLOOR_DB`; a note says so)."""
        from snrgain.tools.learn import OFFSET_RANGE_DB

        out = []
        some = any(r["offset_db"] is not None for r in self.rows)
        if not some:
            out.append(
                "no reading is above what the other noise components and the chain give without man-made noise, so "
                "the readings only bound the man-made level from above (check the scenario's atmospheric, galactic "
                "and local noise, its chain, and the readings)"
            )
        if self.offset_db <= OFFSET_RANGE_DB[0] + EDGE_DB:
            out.append(
                f"the fit ran to the lowest offset the schema allows ({OFFSET_RANGE_DB[0]:+g} dB): the readings ask "
                "for less man-made noise than any offset gives"
                + (" (choose a quieter environment and fit again)" if some else "")
            )
        elif self.offset_db >= OFFSET_RANGE_DB[1] - EDGE_DB:
            out.append(
                f"the fit ran to the highest offset the schema allows ({OFFSET_RANGE_DB[1]:+g} dB): choose a noisier "
                "environment and fit again"
            )
        if np.isfinite(self.tolerance_db) and self.tolerance_db >= MAX_TOLERANCE_DB:
            out.append(f"its 90 % interval is wider than +-{MAX_TOLERANCE_DB:g} dB")
        elif np.isinf(self.tolerance_db):
            out.append("its 90 % interval is unbounded")
        return out

    @property
    def determined(self) -> bool:
        """Whether the readings fix the level well enough to report and write it (:attr:`not_determined_because`)."""
        return not self.not_determined_because

    @property
    def fa_db(self) -> float:
        """The site's man-made Fa at the scenario's frequency [dB above kT0b]."""
        return _env_fa(self.environment, self.freq_hz) + self.offset_db

    def as_dict(self) -> dict:
        """The fit for JSON; when the readings do not determine it, ``determined`` is false, the reasons are listed
        and the fitted numbers are null (none of them is a result then)."""
        ok = self.determined
        tol = self.tolerance_db if np.isfinite(self.tolerance_db) else None
        return {
            "quantity": "noise.man_made.offset",
            "environment": self.environment,
            "frequency_hz": self.freq_hz,
            "before_db": self.before_db,
            "determined": ok,
            "not_determined_because": self.not_determined_because,
            "fitted_db": self.offset_db if ok else None,
            "readings_scatter_db": self.spread_db if ok else None,
            "tolerance_90_db": tol if ok else None,
            "man_made_fa_db": self.fa_db if ok else None,
            "readings": self.rows,
            "notes": self.shown_notes,
        }


def _env_fa(environment: str, freq_hz: float) -> float:
    from noisemodels import p372

    return float(p372.man_made(freq_hz, environment=environment).fa_db)


def _copy(data: dict, tables: set[str], months: list[int], hours: list[float]) -> dict:
    """The scenario's tables at the readings' months and hours with only the candidates ``tables`` names (by the
    names on their tables: a switched antenna's for its states) and the parts of a combination among them."""
    import copy

    d = copy.deepcopy(data)
    d["time"] = {"months": sorted(months), "utc_hours": sorted(hours)}
    for t in [*d.get("target", []), d.get("band") if isinstance(d.get("band"), dict) else {}]:
        t.pop("months", None)
        t.pop("utc_hours", None)
    cands = d.get("candidate", [])
    want = set(tables)
    for _ in range(3):
        for c in cands:
            if c.get("name") in want:
                want |= set(c.get("antennas", []))
    d["candidate"] = [c for c in cands if c.get("name") in want] or cands[:1]  # a scenario needs a candidate
    return d


def named(readings: list[Reading], data: dict, label: str = "noise readings") -> tuple[list[Reading], set[str]]:
    """The readings with each antenna by the name the results give it (a switched antenna's state by its whole name:
    snrgain.scenario.connected), and the names of the tables they need.  Raises ReadingsError (``label``: the
    readings' file) naming every reading whose antenna is not one the scenario has, or is a switched antenna without
    its state."""
    from dataclasses import replace

    from snrgain.errors import ReadingsError
    from snrgain.scenario import connected

    out, tables, problems = [], set(), []
    for r in readings:
        try:
            c = connected(data, r.antenna)
        except ValueError as exc:
            problems.append((f"reading[{r.index}].antenna", str(exc)))
            continue
        out.append(replace(r, antenna=c.name))
        tables.add(c.table)
    if problems:
        raise ReadingsError(label, problems)
    return out, tables


def temperatures(readings: list[Reading], scenario_path, *, offset_db: float | None = None, p372_dir=None):
    """Per reading, from the pipeline: (T other components, T man-made, T_e chain, chain gain [linear]) [K] at its
    antenna, month and UTC hour (the hour's middle), with the man-made level at ``offset_db`` (default: the
    scenario's own)."""
    from snrgain.model.pipeline import evaluate
    from snrgain.scenario import load, read_source
    from snrgain.tools.learn import current_offset, with_offset

    data, label, base_dir = read_source(Path(scenario_path))
    before = current_offset(data)
    off = before if offset_db is None else offset_db
    months = sorted({r.time.month for r in readings})
    hours = sorted({r.time.hour for r in readings})
    readings, tables = named(readings, data)
    d = _copy(with_offset(data, off), tables, months, [h + 0.5 for h in hours])
    res = evaluate(load(d, base_dir=base_dir, label=label, p372_dir=p372_dir))
    ref = res.reference.name
    by = {x.name: x for x in [res.reference, *res.candidates]}
    b = res.bandwidth_hz
    out = []
    for r in readings:
        x = by[ref if r.antenna == "reference" else r.antenna]
        mi, hi = months.index(r.time.month), hours.index(r.time.hour)
        g_db = x.chain["gain_db"]
        t_of = {
            n: 10 ** ((v[mi, hi] - g_db) / 10.0) * 1e-3 / (BOLTZMANN * b) for n, v in x.noise_by_component_dbm.items()
        }
        mm = sum(v for n, v in t_of.items() if n.startswith("man-made"))
        other = sum(v for n, v in t_of.items() if not n.startswith("man-made"))
        t_e = T0_K * (10 ** (x.chain["noise_figure_db"] / 10.0) - 1.0)
        out.append((other, mm, t_e, 10 ** (g_db / 10.0)))
    return before, off, res.freq_hz, out


def antenna_temperature(r: Reading, t_e: float, gain: float) -> float:
    """The antenna temperature [K] a reading implies (the module's Y-factor and S-meter relations)."""
    if r.rise_db is not None:
        y = 10 ** (r.rise_db / 10.0)
        return y * (r.load_k + t_e) - t_e
    p_w = 10 ** (r.power_dbm / 10.0) * 1e-3
    return p_w / (BOLTZMANN * r.bandwidth_hz * gain) - t_e


def on_band(freq_hz: float, band_hz: float) -> bool:
    """Whether a level read at ``freq_hz`` speaks for a scenario band at ``band_hz`` [Hz]: within its amateur band,
    or within :data:`OFF_BAND_FRACTION` of its frequency."""
    from snrgain.tools import logs

    if logs.band_of_hz(freq_hz) == logs.band_of_hz(band_hz) and logs.band_of_hz(band_hz) in logs.BANDS_MHZ:
        return True
    return abs(np.log(freq_hz / band_hz)) <= np.log1p(OFF_BAND_FRACTION)


def repeated(readings: list[Reading]) -> list[str]:
    """A note for each reading given more than once alike (time, antenna, frequency, bandwidth and values): each
    counts in the fit, as written, and the note says so.  Not refused: a reading taken again within the minute can
    read the same, and the file's author knows which; left unsaid, a copy pasted twice weighs twice unseen."""
    seen: dict[tuple, list[int]] = {}
    for r in readings:
        key = (r.time, r.antenna, r.freq_hz, r.bandwidth_hz, r.rise_db, r.load_k, r.power_dbm, r.s_meter)
        seen.setdefault(key, []).append(r.index)
    return [
        f"readings {', '.join(map(str, same[:-1]))} and {same[-1]} are the same reading (time, antenna, frequency and "
        f"values alike): each counts in the fit, so it weighs {_times(len(same))}; remove the copies if read once"
        for same in seen.values()
        if len(same) > 1
    ]


def _times(n: int) -> str:
    return "twice" if n == 2 else f"{n} times"


def fit(readings: list[Reading], scenario_path, *, p372_dir=None, label: str = "noise readings") -> NoiseFit:
    """The man-made offset the readings give (the module's note), with their spread; ``label``: the readings' file,
    named in errors."""
    from scipy.optimize import minimize_scalar

    from snrgain.scenario import load, read_source
    from snrgain.tools import logs
    from snrgain.tools.learn import OFFSET_RANGE_DB, Z90

    data, scenario_label, base_dir = read_source(Path(scenario_path))
    # the scenario's own problems first: a switched antenna whose directions are refused has no states to name
    load(data, base_dir=base_dir, label=scenario_label, p372_dir=p372_dir)
    readings, _ = named(readings, data, label)  # a state as rank names it, however the reading wrote it
    env = data.get("noise", {}).get("man_made", {}).get("environment", "residential")
    before, _, freq, temps = temperatures(readings, scenario_path, p372_dir=p372_dir)
    band = logs.band_of_hz(freq)
    rows, notes, used = [], [], []
    for r, (other, mm, t_e, g) in zip(readings, temps):
        t_a = antenna_temperature(r, t_e, g)
        row = {
            "reading": r.index,
            "time_utc": r.time.strftime("%Y-%m-%d %H:%M"),
            "antenna": r.antenna,
            "kind": "rise over load" if r.rise_db is not None else f"S-meter {r.s_meter}",
            "antenna_temperature_k": t_a,
            "other_components_k": other,
            "man_made_modelled_k": mm,
            "chain_temperature_k": t_e,
            "offset_db": None,
            "man_made_fa_db": None,
            "note": "",
        }
        if not on_band(r.freq_hz, freq):
            row["note"] = (
                f"not used: {r.freq_hz / 1e6:g} MHz is outside the scenario's band ({band}) and more than "
                f"{OFF_BAND_FRACTION * 100:g} % from "
                f"its {freq / 1e6:g} MHz"
            )
            rows.append(row)
            continue
        used.append((len(rows), t_a, other, mm, t_e))
        if t_a <= other:
            row["note"] = "no more than the other components and the chain give: an upper bound on man-made noise"
        else:
            o = before + 10.0 * np.log10((t_a - other) / mm)
            row["offset_db"] = float(o)
            row["man_made_fa_db"] = _env_fa(env, freq) + float(o)
        if r.rise_db is not None and r.rise_db < SMALL_RISE_DB:
            row["note"] = f"rise only {r.rise_db:.1f} dB over the load: mostly the receiver's own noise"
        rows.append(row)
    if not used:
        raise ValueError("no reading lies in the scenario's band (see each reading's note)")
    notes += repeated(readings)
    _, t_a, other, mm, t_e = (np.array(x) for x in zip(*used))
    measured = 10.0 * np.log10(np.maximum(t_a + t_e, 1e-30))

    def resid(delta):  # reading [dB] minus what the scenario with the offset moved by delta predicts
        return measured - 10.0 * np.log10(other + mm * 10 ** (delta / 10.0) + t_e)

    def cost(delta):
        return float(np.sum(resid(delta) ** 2))

    lo, hi = OFFSET_RANGE_DB[0] - before, OFFSET_RANGE_DB[1] - before
    grid = np.arange(lo, hi + 1e-9, 1.0)
    k = int(np.argmin([cost(x) for x in grid]))
    sol = minimize_scalar(
        cost, bounds=(grid[max(k - 1, 0)], grid[min(k + 1, grid.size - 1)]), method="bounded", options={"xatol": 0.01}
    )
    delta = float(sol.x)
    share = mm * 10 ** (delta / 10.0) / (other + mm * 10 ** (delta / 10.0) + t_e)  # d(reading dB)/d(offset dB)
    for (i, *_), sh, rr in zip(used, share, resid(delta)):
        rows[i]["man_made_share"] = float(sh)
        rows[i]["residual_db"] = float(rr)
    n = len(used)
    scatter = float(np.sqrt(np.sum(resid(delta) ** 2) / (n - 1))) if n > 1 else 0.0
    info = float(np.sum(share**2))
    # the readings' own scatter, never less than one reading's least uncertainty: one reading, or a few that happen
    # to agree, whose man-made share is a few per cent fixed nothing (a tester's 0.3 % share fitted -20.6 dB, called
    # determined, and a 0.2 dB change of the reading undid it)
    se = max(scatter, READING_FLOOR_DB) / np.sqrt(info) if info > 0 else float("nan")
    if n < 3:
        notes.append(f"only {n} usable reading(s): take readings over several evenings to know the spread")
    if np.max(share) < 0.2:
        instead = quieter_reading(other, t_e, bool(data.get("noise", {}).get("local")))
        notes.append(
            "man-made noise is under a fifth of every reading: the other components and the chain dominate, so the "
            f"man-made level is poorly determined; {instead}"
        )
    from snrgain.tools.learn import beyond_p372_note

    beyond = beyond_p372_note(env, float(freq), before + delta)
    level = [beyond] if beyond else []
    return NoiseFit(before, before + delta, scatter, float(se * Z90), env, float(freq), rows, notes, level)


def quieter_reading(other: np.ndarray, t_e: np.ndarray, has_local: bool) -> str:
    """What to read instead when man-made noise is a small share of every reading: the chain's own noise where it is
    most of them; else the other components (the local sources the scenario has, and the sky's atmospheric and
    galactic noise, not told apart here)."""
    if np.median(t_e) > np.median(other):
        return (
            "the receiver chain's own noise is most of the readings: read through a preamplifier, or on an antenna "
            "that delivers more of the sky's noise"
        )
    if has_local:  # the local sources or the sky: the readings' other share is not told apart here
        return (
            "read on an antenna that hears the local sources less, or when the atmospheric and galactic noise are "
            "lower (daytime, or a quieter season)"
        )
    return (
        "the atmospheric and galactic noise are most of the readings: read when they are lower (daytime, or a "
        "quieter season), when man-made noise is a larger share"
    )


def fit_lines(f: NoiseFit) -> list[str]:
    """The fit as the terminal shows it: a row per reading (its antenna temperature, the man-made offset it implies
    and the man-made noise's Fa [dB above kT0b] with that offset), then the fit."""
    wa = max([len("antenna"), *(len(r["antenna"]) for r in f.rows)])  # names whole, as long as the longest
    head = f"{'#':>3} {'UTC':<16} {'antenna':<{wa}} {'reading':<16} {'T_A [K]':>10} {'offset':>7}"
    out = [f"{head} {'man-made Fa':>11}  note"]
    for r in f.rows:
        off = "-" if r["offset_db"] is None else f"{r['offset_db']:+.1f}"
        fa = "-" if r["man_made_fa_db"] is None else f"{r['man_made_fa_db']:.1f}"
        out.append(
            f"{r['reading']:>3} {r['time_utc']:<16} {r['antenna']:<{wa}} {r['kind'][:16]:<16} "
            f"{r['antenna_temperature_k']:>10.3g} {off:>7} {fa:>11}  {r['note']}"
        )
    if not f.determined:
        return out + [
            "",
            f"man-made ({f.environment}) at {f.freq_hz / 1e6:g} MHz: not determined by these readings; the scenario "
            f"keeps its offset {f.before_db:+.1f} dB",
            *(f"  because {n}" for n in f.not_determined_because),
            *(f"note: {n}" for n in f.shown_notes),
        ]
    tol = "" if not np.isfinite(f.tolerance_db) else f" +-{f.tolerance_db:.1f} dB (90 %)"
    out += [
        "",
        f"man-made ({f.environment}) at {f.freq_hz / 1e6:g} MHz: Fa {f.fa_db:.1f} dB above kT0b; offset "
        f"{f.before_db:+.1f} -> {f.offset_db:+.1f} dB{tol}; the readings scatter {f.spread_db:.1f} dB about the fit",
        *(f"note: {n}" for n in f.shown_notes),
    ]
    return out


def synthesise(
    scenario_path,
    *,
    offset_db: float,
    plan: list[tuple[str, str, str]],
    bandwidth_hz: float = 2400.0,
    noise_db: float = 1.5,
    seed: int = 0,
    p372_dir=None,
) -> str:
    """A readings file (TOML text) synthesised from a known man-made offset, through the same modelled gain and
    chain (the round-trip test's data): ``plan`` lists (UTC time "YYYY-MM-DDTHH:MM:SSZ", antenna, kind "rise" or
    "s_meter").  Each reading gets Gaussian reading noise of ``noise_db`` [dB]; rises are written to 0.1 dB, and
    S-meter readings through a receiver "ideal" whose table is R.1's (whole S-units below S9, so readings there
    are quantised to 6 dB, as real ones are; whole dB above S9)."""
    from snrgain.scenario import read_source

    data, _, _ = read_source(Path(scenario_path))
    from snrgain.units import parse_quantity

    freq = parse_quantity(data["band"]["frequency"], "frequency")
    rng = np.random.default_rng(seed)
    readings = [
        Reading(
            i + 1,
            _dt.datetime.fromisoformat(t.replace("Z", "+00:00")),
            a,
            freq,
            bandwidth_hz,
            1.0 if k == "rise" else None,
        )
        for i, (t, a, k) in enumerate(plan)
    ]
    _, _, _, temps = temperatures(readings, scenario_path, offset_db=offset_db, p372_dir=p372_dir)
    # an S-meter table of 1 dB steps, so that a reading keeps its dB (a real meter's table is coarser)
    steps = [(f"S9+{k}" if k > 0 else "S9", -73 + k) for k in range(0, 61)]
    low = [(f"S{s}", -73 - 6 * (9 - s)) for s in range(1, 9)]
    lines = ["# synthesised noise readings (snrgain.tools.noisereadings.synthesise)", ""]
    lines += [
        "[[receiver]]",
        'name = "ideal"',
        "s_meter = [" + ", ".join(f'["{s}", {d}]' for s, d in low + steps) + "]",
    ]
    for (t, a, k), (other, mm, t_e, g) in zip(plan, temps):
        t_a = other + mm
        lines += ["", "[[reading]]", f"time = {t}", f"antenna = {_tq(a)}", f'frequency = "{freq / 1e6:g} MHz"']
        lines.append(f'bandwidth = "{bandwidth_hz:g} Hz"')
        if k == "rise":
            y_db = 10 * np.log10((t_a + t_e) / (T0_K + t_e)) + rng.normal(0.0, noise_db)
            load = -120.0 + rng.normal(0.0, 0.3)
            lines += [f"antenna_db = {np.round(load + y_db, 1):.1f}", f"load_db = {load:.1f}"]
        else:
            p = 10 * np.log10(BOLTZMANN * bandwidth_hz * g * (t_a + t_e) / 1e-3) + rng.normal(0.0, noise_db)
            if p < -73.0 - 48.0 or p > -13.0:
                raise ValueError(f"a synthesised S-meter reading of {p:.0f} dBm lies outside S1 to S9+60")
            # the nominal reading whose table value is nearest p: S-units below S9 (6 dB steps), dB above it
            nominal = -73.0 + np.round(p + 73.0) if p >= -73.0 else -73.0 - 6 * np.round((-73.0 - p) / 6.0)
            s = f"S9+{int(nominal + 73)}" if nominal > -73 else f"S{int(9 - round((-73 - nominal) / 6))}"
            lines += [f's_meter = "{s}"', 'receiver = "ideal"']
    return "\n".join(lines) + "\n"


def _tq(s: str) -> str:
    from snrgain.tools.tomltext import toml_string

    return toml_string(s)
