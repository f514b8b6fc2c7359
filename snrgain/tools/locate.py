"""Where is that noise coming from?  Fit local sources to noise readings.

Each reading is the noise power (dBm in the bandwidth) received on a known
antenna in a known orientation.  The model for reading i:

    P_i = k b G_chain [ B t_i + sum_s S_s G_i(d_s) / (4 pi) ],

with t_i the antenna's temperature for a unit diffuse background (man-made
noise at low angles from every bearing, noisemodels.sky), B its scale, and
for each source s a direction d_s (bearing, elevation) and strength S_s
[K sr].  Unknowns: B, and per source bearing, log strength and (optionally)
elevation.  They are fitted to the readings in dB by least squares with a
robust loss (scipy.optimize.least_squares, soft-L1, 1 dB scale) from several
starts (bearings every 30 deg); the bearing's standard uncertainty comes
from the Jacobian at the solution (J^T J inverted, scaled by the residual
variance).  A fit whose bearing is not constrained (uncertainty over 45 deg,
or a singular Jacobian) is reported as failed, not as an answer, with which
of the two it was.  A background the sources outweigh in every reading (under
each by 20 dB) is not determined by the readings: it is said so, and held out
of the uncertainties (its near-zero Jacobian column would make them
singular); a determined background far under P.372's quietest man-made level
is said to be implausible.

When every antenna's pattern is symmetric front to back (small loops, verticals),
a bearing and its opposite fit equally well: the result says so (180 deg
ambiguity).  Levels are reported as Fa on P.372's reference monopole.

Each reading carries an uncertainty (``uncertainty``, per reading or for the
file; default 2 dB, an S-meter read by eye, common practice): a reading the
fit misses by more than that is named as an outlier, and the fit is not
called converged without saying so.  Where the file says where the readings
were taken (``at = [east, north]`` on the site plan) and how far the source
is (``distance``, e.g. from a walk with a portable receiver), the source is
fitted and written to a scenario as a placed one (``position``, with its Fa
``measured_at`` the reading point): a short vertical dipole near the ground
whose field each antenna takes where it stands, as ``rank`` reads a placed
source (:mod:`snrgain.tools.locatenear`; its elevation held, not fitted);
otherwise as a point at its bearing and elevation (spread 0), heard through
the antennas' patterns.  Either way the copy describes the source as the
fit modelled it, and is read back as ``rank`` reads it to check that it gives
the fitted levels (:mod:`snrgain.tools.locatecheck`).  A distance
places one source: with several (``--sources``), ``distance`` is a list of
one per source, in the order the fit numbers them (a run without the copy
shows it; the fit's starts are fixed, so the order is the same each run),
and a list of another length is refused, not cut short or stretched.  A
source of the same name already in the scenario is replaced, not doubled.
"""

from __future__ import annotations

from dataclasses import field
from pathlib import Path

import numpy as np
from scipy.optimize import least_squares

from noisemodels import p372
from snrgain.constants import FREQ_RANGE_HZ
from snrgain.physics.receiver import power_dbm
from snrgain.records import record
from snrgain.tools.readings import read_toml

MAX_BEARING_SIGMA_DEG = 45.0
NO_BEARING_SIGMA_DEG = 180.0
"""A bearing's uncertainty beyond this is no bearing at all: every direction lies within it."""
SQUARE_TOLERANCE_DEG = 0.5
"""A rough side (--side, a replaced source's bearing) this close to square to a bearing (90 deg from it and from the
opposite one, as the bearings are printed, in whole degrees) tells neither side."""
BACKGROUND_MIN_SHARE = 0.01
"""Below this share of every fitted reading the diffuse background is not determined by the readings: its share is
the derivative of a reading's dB by the background's dB, and at 1 % (20 dB under every reading) taking it away
altogether moves no reading by more than 0.04 dB, a fiftieth of a reading's default uncertainty; the fit then drives
it anywhere below, and its column of the Jacobian, near zero, would make the uncertainties singular."""
IMPLAUSIBLE_BELOW_QUIET_RURAL_DB = 10.0
"""A determined background more than this under P.372's quiet-rural man-made median at the frequency (its quietest
category, a remote site, whose lower decile is taken as rural's, 4.6 dB under it) is quieter than any site: the
levels or the antennas' descriptions are likely wrong (galactic noise alone, where it comes through the
ionosphere, is about as strong as that median at the low bands: P.372 Section 6)."""
NEAR_ELEVATION_HELD = (
    "a source at a distance (the readings file's at and distance) is written as a placed one, whose field is worked "
    "from its place along the ground: its elevation is held (--elevation), not fitted; leave --fit-elevation out, or "
    "distance out to fit a far source's elevation"
)
FAR_FITS_BETTER_DB = 0.5
"""Where the readings, read as a far source, fit better than as the placed one by more than this rms [dB] (a
quarter of a reading's default uncertainty), the result says so and how to write it by its bearing."""
DEFAULT_READING_UNCERTAINTY_DB = 2.0
"""How far a reading may miss the fit before it is called an outlier, unless the file says [dB] (an S-meter read by
eye: common practice)."""

EXAMPLE = """\
# Noise readings for snrgain locate: the same noise read on known antennas.
frequency = "1.83 MHz"
bandwidth = "500 Hz"
ground = "moist loam"
# at = [10, 20]              # where the readings were taken on the site plan [east, north], and how far
# distance = "50 m"          # the source is: with both, --write places it; one distance per source
                             # (--sources 2: distance = ["50 m", "120 m"], in the order the fit numbers them)

[antenna.loop]               # a small loop turned by hand between readings
family = "small-loop"
width = "1 m"
loop_height = "1 m"
height = "1.5 m"

[antenna.vertical]
family = "vertical"
height = "18 m"

[[reading]]                  # invented readings, made for this example
antenna = "loop"
bearing = 0                  # the loop's plane points this way for this reading
level = "-118.8 dBm"         # or S-units: "S7"
[[reading]]
antenna = "loop"
bearing = 30
level = "-115.4 dBm"
[[reading]]
antenna = "loop"
bearing = 60
level = "-111.9 dBm"
[[reading]]
antenna = "loop"
bearing = 90
level = "-112.8 dBm"
[[reading]]
antenna = "loop"
bearing = 120
level = "-115.7 dBm"
[[reading]]
antenna = "loop"
bearing = 150
level = "-122.9 dBm"
[[reading]]
antenna = "vertical"
level = "-82 dBm"
"""


@record
class NoiseReadings:
    """A readings file: frequency [Hz], bandwidth [Hz] and the readings."""

    freq_hz: float
    bandwidth_hz: float
    readings: list
    at_m: tuple[float, float] | None = None
    """Where the readings were taken on the site plan [m east, m north], if the file says."""
    distances_m: tuple[float, ...] | None = None
    """How far each source is from there [m], if the file says."""
    length_unit: str = "m"
    """The unit the file writes its distances in ("m" or "ft"): its messages and the output quote them in it."""
    ground: object = None
    """The file's ground (snrgain.physics.ground.Ground; None: a perfect ground): the soil under a placed source's
    field."""
    ground_name: str = "moist loam"
    """The file's ground as written (a name, or its constants), for the messages."""

    @property
    def near(self):
        """The sources as placed ones (:class:`snrgain.tools.locatenear.Near`) where the file gives the reading point
        and distances, else None."""
        from snrgain.tools.locatenear import Near

        if self.at_m is None or self.distances_m is None:
            return None
        return Near(tuple(self.at_m), tuple(self.distances_m), self.ground)


def load_readings(path: str | Path) -> NoiseReadings:
    """Read a noise readings file (format: :data:`EXAMPLE`); ReadingsError naming the file and every problem at
    once (items counted from 1)."""
    from typing import Any

    from pydantic import Field

    from snrgain.antennas import FAMILIES
    from snrgain.antennas.base import SpecError, build, item_label
    from snrgain.errors import ReadingsError
    from snrgain.fields import Bearing, GroundField, PlanPoint, PowerDbm, StrictModel, decibels, quantity
    from snrgain.scenario import inject_defaults
    from snrgain.tools.readings import validate
    from snrgain.units import length_unit_written, lengths_said_in

    class ReadingEntry(StrictModel):
        antenna: str
        bearing: Bearing | None = None
        level: PowerDbm
        uncertainty: decibels(0.01, 30.0) | None = None

    class ReadingsFile(StrictModel):
        frequency: quantity("frequency", ge=FREQ_RANGE_HZ[0], le=FREQ_RANGE_HZ[1])
        bandwidth: quantity("frequency", ge=10.0, le=100e3)
        ground: GroundField = "moist loam"
        uncertainty: decibels(0.01, 30.0) = DEFAULT_READING_UNCERTAINTY_DB
        at: PlanPoint | None = None
        distance: quantity("length", gt=0.0, le=50e3) | list[quantity("length", gt=0.0, le=50e3)] | None = None
        antenna: dict[str, dict[str, Any]] = Field(min_length=1, max_length=64)
        reading: list[ReadingEntry] = Field(min_length=1, max_length=1000)

    data = read_toml(path)
    folder = Path(path).resolve().parent
    problems, readings = [], []
    # Lengths are quoted in the unit the file writes them in: its place and distance, else its other lengths.
    unit = length_unit_written([data.get("at"), data.get("distance")]) or length_unit_written(data) or "m"
    try:
        with lengths_said_in(unit):
            rf = validate(ReadingsFile, data, path)
    except ReadingsError as exc:  # go on to the cross-checks: every problem at once
        problems, rf = list(exc.problems), None
    tables = data.get("antenna") if isinstance(data.get("antenna"), dict) else {}
    raw_readings = data.get("reading") if isinstance(data.get("reading"), list) else []
    for i, r in enumerate(raw_readings):
        name = r.get("antenna") if isinstance(r, dict) else None
        if isinstance(name, str) and name not in tables:
            problems.append(
                (
                    f"{item_label('reading', i, None)}.antenna",
                    f"{name!r} is not one of the [antenna.*] tables {sorted(tables)}",
                )
            )
    if rf is None:
        raise ReadingsError(str(path), problems)
    for i, r in enumerate(rf.reading):
        if r.antenna not in rf.antenna:
            continue
        # the file's ground under the families that stand on one (a pattern table keeps its own), a pattern
        # file found from the readings file's folder, as a scenario's antenna tables are read
        spec = inject_defaults(rf.antenna[r.antenna], site_ground=data.get("ground", "moist loam"), base_dir=folder)
        family = FAMILIES.get(spec.get("family")) if isinstance(spec.get("family"), str) else None
        if family is not None and family.build.composite:  # made of a scenario's antennas: a readings file has none
            takes = ", ".join(k for k, f in FAMILIES.items() if f.build.buildable and not f.build.composite)
            problems.append(
                (
                    f"antenna.{r.antenna}.family",
                    f"a {spec['family']} is made of other antennas of a scenario, which a readings file does not "
                    f"have; read on one antenna of its own, of the families {takes}",
                )
            )
            continue
        turns = family is not None and "bearing" in family.params.model_fields
        where = item_label("reading", i, None)
        if r.bearing is not None and family is not None and not turns:
            try:
                with lengths_said_in(length_unit_written(data) or "m"):
                    fixed = build(spec, f"antenna.{r.antenna}", freq_hz=rf.frequency)
            except SpecError as exc:  # its own problems too, in the same run
                problems.extend(exc.problems)
                fixed = None
            turnable = "rotate" in family.params.model_fields  # a table turned whole by a key of its own
            problems.append((f"{where}.bearing", _no_bearing(spec["family"], fixed, rf.frequency, turnable)))
            continue
        if r.bearing is None and turns and "bearing" not in spec:
            problems.append(
                (
                    f"{where}.bearing",
                    f"the {spec['family']} {r.antenna!r} hears by direction: give the bearing it pointed for this "
                    "reading (or one bearing in [antenna." + r.antenna + "])",
                )
            )
            continue
        if r.bearing is not None:
            spec["bearing"] = data["reading"][i]["bearing"]
        try:
            with lengths_said_in(length_unit_written(data) or "m"):
                ant = build(spec, f"antenna.{r.antenna}", freq_hz=rf.frequency)
        except SpecError as exc:
            problems.extend(exc.problems)
            continue
        label = r.antenna + (f" {data['reading'][i]['bearing']}" if r.bearing is not None else "")
        unc = r.uncertainty if r.uncertainty is not None else rf.uncertainty
        readings.append(Reading(ant, r.level, label, unc))
    if rf.distance is not None and rf.at is None:
        problems.append(("distance", "a distance places the source from where the readings were taken: give at too"))
    if problems:
        raise ReadingsError(str(path), sorted(set(problems), key=problems.index))
    distances = None if rf.distance is None else tuple(rf.distance if isinstance(rf.distance, list) else [rf.distance])
    from snrgain.fields import make_ground

    ground = data.get("ground", "moist loam")
    said = ground if isinstance(ground, str) else "the file's ground constants"
    return NoiseReadings(rf.frequency, rf.bandwidth, readings, rf.at, distances, unit, make_ground(rf.ground), said)


def _no_bearing(family: str, antenna, freq_hz: float, turnable: bool) -> str:
    """Why a reading's bearing cannot turn an antenna of ``family`` (built as ``antenna``, None where it could not
    be): one that hears all round (its gain the same to 0.05 dB every 30 deg at 10 deg elevation) has nothing to
    turn; another (a pattern table) is read as it is written, turned whole by its own key where it has one
    (``turnable``: its ``rotate``)."""
    if antenna is not None:
        az = np.radians(np.arange(0.0, 360.0, 30.0))
        g = antenna.gain_linear(freq_hz, az, np.full(az.size, np.radians(10.0)))
        if np.all(g > 0) and 10 * np.log10(float(np.max(g) / np.min(g))) < 0.05:
            return f"a {family} antenna has no bearing: it hears all round"
    each = "an [antenna.*] table of its own" + (", with rotate = the angle it was turned by" if turnable else "")
    return (
        f"the {family} family's pattern cannot be turned by a reading's bearing: it is read as it is given; write "
        f"each direction it was read in as {each}, or leave the bearing out"
    )


def check_distances(data: NoiseReadings, n_sources: int, path) -> None:
    """ReadingsError naming the file's ``distance`` unless it gives one distance per source fitted (``n_sources``,
    --sources): a longer list's extras were ignored, and one distance was taken for every source."""
    from snrgain.errors import ReadingsError

    k = 0 if data.distances_m is None else len(data.distances_m)
    if k in (0, n_sources):
        return
    many = f"{n_sources} sources" if n_sources > 1 else "1 source"
    if k == 1:
        msg = (
            f"one distance for {many} (--sources {n_sources}): a distance places one source; give a list of "
            f"{n_sources}, one per source in the order the fit numbers them (a run without --write shows it), the "
            "same distance again where two lie equally far, or none, to write them by bearing"
        )
    else:
        msg = (
            f"{k} distances for {many} (--sources {n_sources}): give one per source fitted, in the order the fit "
            "numbers them" + (f", or fit {k} (--sources {k})" if k <= 3 else "")
        )
    raise ReadingsError(str(path), [("distance", msg)])


class LocateError(ValueError):
    """Readings that cannot constrain what is asked."""


@record
class Reading:
    antenna: object
    """An Antenna (snrgain.antennas) as oriented for this reading."""
    level_dbm: float
    label: str = ""
    uncertainty_db: float = DEFAULT_READING_UNCERTAINTY_DB
    """How far the fit may miss this reading before it is an outlier [dB]."""


@record(frozen=False)
class FittedSource:
    bearing_deg: float
    bearing_sigma_deg: float
    elevation_deg: float
    fa_db: float
    """Level on P.372's reference monopole [dB above kT0b]."""
    ambiguous_180: bool
    side_from: str = ""
    """Where the readings fit the opposite bearing as well (``ambiguous_180``), why this side was taken (the end of
    "this side is ..."); empty where they tell the side."""


@record(frozen=False)
class LocateResult:
    ok: bool
    message: str
    sources: list[FittedSource]
    background_fa_db: float
    residual_rms_db: float
    predicted_dbm: np.ndarray
    readings_dbm: np.ndarray
    labels: list[str] = field(default_factory=list)
    outliers: list[tuple[str, float, float]] = field(default_factory=list)
    """Readings the fit misses by more than their uncertainty: (label, miss [dB], uncertainty [dB])."""
    background_determined: bool = True
    """False when the background is under every reading by more than BACKGROUND_MIN_SHARE: its level is then not
    a result (``background_fa_db`` is only where the fit left it)."""
    notes: list[str] = field(default_factory=list)
    """What the result's reader should know besides the message (the background's level, say)."""
    source_dbm: np.ndarray | None = None
    """Each fitted source's own share of each reading [dBm] (sources, readings): what the copy is checked against
    (the fitted background is not written into it)."""
    background_dbm: np.ndarray | None = None
    """The fitted diffuse background's share of each reading [dBm]."""
    placed: bool = False
    """The sources were fitted as placed ones at the readings file's distances (``locate(near=...)``)."""
    outlier_readings: list[int] = field(default_factory=list)
    """The index (from 0, in the file's order) of each of :attr:`outliers`' readings: labels may repeat."""


def _symmetric_front_back(antenna, freq_hz) -> bool:
    az = np.radians(np.arange(0, 180, 15.0))
    el = np.radians(np.full_like(az, 10.0))
    a = antenna.gain_linear(freq_hz, az, el)
    b = antenna.gain_linear(freq_hz, az + np.pi, el)
    return bool(np.allclose(a, b, rtol=1e-6, atol=0))


def locate(
    readings: list[Reading],
    *,
    freq_hz: float,
    bandwidth_hz: float,
    n_sources: int = 1,
    fit_elevation: bool = False,
    elevation_deg: float = 5.0,
    chain_gain_db: float = 0.0,
    nside: int = 16,
    seed: int = 0,
    near=None,
) -> LocateResult:
    """Fit ``n_sources`` compact sources plus a diffuse background to the readings.

    ``near`` (:class:`snrgain.tools.locatenear.Near`: the reading point, a distance per source, the soil): each
    source is then read as a placed one at its distance, each antenna hearing it at the reading point as ``rank``
    hears a placed source (:mod:`snrgain.tools.locatenear`); the bearings are searched as plane waves first and
    the best one (and each source's opposite bearing) taken from there.  Without it, each source is a point at its
    bearing and elevation heard through the antennas' patterns."""
    if n_sources < 1:
        raise LocateError("n_sources must be >= 1")
    if near is not None and fit_elevation:
        raise LocateError(NEAR_ELEVATION_HELD)
    if near is not None:
        from snrgain.tools.locatenear import unreadable

        deaf = unreadable([r.antenna for r in readings], [r.label for r in readings])
        if deaf:
            raise LocateError(
                f"{', '.join(deaf)}: a pattern of total gain only, and a source at a distance is heard through the "
                "vertical and horizontal gains (a placed source's field has a polarisation); give the pattern's "
                "gain_v_dbi and gain_h_dbi, or leave distance out to fit and write the source by its bearing"
            )
    n_unknown = 1 + n_sources * (3 if fit_elevation else 2)
    if len(readings) < n_unknown + 1:
        raise LocateError(
            f"too few readings: {len(readings)} for {n_unknown} unknowns (background level and "
            f"{'bearing, elevation and level' if fit_elevation else 'bearing and level'} per source); "
            f"take at least {n_unknown + 1}, e.g. a loop rotated in 30 deg steps"
        )
    from noisemodels import sky
    from noisemodels.sphere import upper_hemisphere

    levels = np.array([r.level_dbm for r in readings], dtype=float)
    if not np.all(np.isfinite(levels)):
        raise LocateError("every reading needs a finite level")
    grid = upper_hemisphere(nside)
    bg = sky.diffuse_component(
        "background",
        kind="man-made",
        level=p372.NoiseLevel(0.0, 0.0, 0.0),
        directions=grid,
        elevation="low",
        elevation_params={"scale_rad": np.radians(10.0)},
    )
    t_bg = np.array(
        [
            sky.weighted_temperature_k(
                r.antenna.gain_linear(freq_hz, grid.azimuth_rad, grid.elevation_rad), bg.weight_k_sr
            )
            for r in readings
        ]
    )  # for Fa 0 dB background
    ktb_g = 10 ** ((power_dbm(1.0, bandwidth_hz=bandwidth_hz) + chain_gain_db) / 10)  # mW per K

    def unpack(x):
        b = x[0]
        srcs = []
        for s in range(n_sources):
            j = 1 + s * (3 if fit_elevation else 2)
            el = x[j + 2] if fit_elevation else np.radians(elevation_deg)
            srcs.append((x[j], el, x[j + 1]))
        return b, srcs

    from snrgain.tools.locatenear import NEAR_POLARISATION, near_gains

    antennas = [r.antenna for r in readings]
    heard = {}  # (source, bearing, elevation) -> each antenna's gain toward it, read once (its level does not enter)
    placed = [False]  # whether the sources are read as placed ones yet (after the plane waves' search)

    def gains(s, az, el):
        key = (placed[0], s, float(az), float(el))
        if key not in heard:
            if not placed[0]:
                heard[key] = np.array([a.gain_linear(freq_hz, np.array([az]), np.array([el]))[0] for a in antennas])
            else:
                heard[key] = near_gains(antennas, near, s, az, el, freq_hz)
        return heard[key]

    def source_temps(x):
        """Each source's temperature in each antenna [K] (sources, readings)."""
        _, srcs = unpack(x)
        return np.array([10**log_s * gains(s, az, el) / (4 * np.pi) for s, (az, el, log_s) in enumerate(srcs)])

    def model_dbm(x):
        t = 10 ** (x[0] / 10) * t_bg + source_temps(x).sum(axis=0)
        return 10 * np.log10(np.maximum(t * ktb_g, 1e-300))

    def resid(x):
        return model_dbm(x) - levels

    # Initial strength: the brightest reading's power as if on a 0 dBi antenna.
    s0 = np.log10(10 ** (levels.max() / 10) / ktb_g * 4 * np.pi)
    b0 = float(levels.min() - 10 * np.log10(ktb_g * max(t_bg.max(), 1e-30)))
    best = None
    rng = np.random.default_rng(seed)
    starts = np.radians(np.arange(0, 360, 30.0))
    for az0 in starts:
        x0 = [b0 - 10]
        lo, hi = [-50.0], [250.0]
        for s in range(n_sources):
            x0 += [az0 + s * np.pi / max(n_sources, 1) + rng.normal(0, 0.05), s0]
            lo += [-4 * np.pi, s0 - 20]
            hi += [4 * np.pi, s0 + 20]
            if fit_elevation:
                x0.append(np.radians(elevation_deg))
                lo.append(0.0)
                hi.append(np.radians(85.0))
        r = least_squares(resid, x0, bounds=(lo, hi), loss="soft_l1", f_scale=1.0)
        if best is None or r.cost < best.cost:
            best = r
    if near is not None:  # the placed source from the plane waves' best bearings, and each source's opposite one
        far = best  # kept to say so where the readings fit a far source better
        heard.clear()
        placed[0] = True
        tries = [best.x]
        for s in range(n_sources):
            flipped = best.x.copy()
            j = 1 + s * (3 if fit_elevation else 2)
            flipped[j] = (flipped[j] + np.pi) % (2 * np.pi)
            tries.append(flipped)
        best = None
        for x0 in tries:
            r = least_squares(resid, x0, bounds=(lo, hi), loss="soft_l1", f_scale=1.0)
            if best is None or r.cost < best.cost:
                best = r
    x = best.x
    res = best.fun
    dof = max(len(levels) - len(x), 1)
    s2 = float(np.sum(res**2) / dof)
    rms = float(np.sqrt(np.mean(res**2)))
    symmetric = all(_symmetric_front_back(r.antenna, freq_hz) for r in readings)
    b, srcs = unpack(x)
    predicted = model_dbm(x)
    # The background's share of each fitted reading: d(reading dB)/d(background dB), its Jacobian column.
    share = 10 ** (b / 10) * t_bg * ktb_g / 10 ** (predicted / 10)
    bg_determined = bool(np.max(share) >= BACKGROUND_MIN_SHARE)
    # Not determined, the background is held where the fit left it (it adds nothing to any reading) and the
    # sources' uncertainties come from their own columns; its near-zero column would make J^T J singular.
    keep = slice(0, None) if bg_determined else slice(1, None)
    jac = best.jac[:, keep]
    try:
        cov = np.linalg.inv(jac.T @ jac) * max(s2, 1e-4)
        ok_cov = bool(np.all(np.isfinite(cov)))
    except np.linalg.LinAlgError:
        cov, ok_cov = None, False
    fitted = []
    for s, (az, el, log_s) in enumerate(srcs):
        j = 1 + s * (3 if fit_elevation else 2) - (0 if bg_determined else 1)
        sig = float(np.degrees(np.sqrt(abs(cov[j, j])))) if ok_cov else float("inf")
        # Level on the reference monopole for the fitted strength.
        t_ref = 10**log_s * float(sky.reference_monopole_gain(el)) / (4 * np.pi)
        fitted.append(
            FittedSource(
                float(np.degrees(az) % 360),
                sig,
                float(np.degrees(el)),
                float(p372.temperature_to_fa_db(t_ref)),
                symmetric,
                FIT_OWN_SIDE if symmetric else "",
            )
        )
    ok = bool(ok_cov and all(f.bearing_sigma_deg <= MAX_BEARING_SIGMA_DEG for f in fitted))
    missed = [k for k, (r, p, lv) in enumerate(zip(readings, predicted, levels)) if abs(p - lv) > r.uncertainty_db]
    outliers = [(readings[k].label, float(predicted[k] - levels[k]), float(readings[k].uncertainty_db)) for k in missed]
    labels = [r.label for r in readings]
    named = ", ".join(
        f"{lab}{f' (reading {k + 1})' if labels.count(lab) > 1 else ''} ({miss:+.1f} dB, allowed {u:g})"
        for k, (lab, miss, u) in zip(missed, outliers)
    )
    count = "1 reading misses" if len(outliers) == 1 else f"{len(outliers)} readings miss"
    if ok and outliers:
        msg = (
            f"fit found, but {count} it by more than the stated uncertainty: {named}; "
            "read again, or fit another source (--sources)"
        )
    elif ok:
        msg = "fit converged"
    else:
        if not ok_cov:
            why = "the fit's uncertainties cannot be worked out (singular: the readings do not tell the unknowns apart)"
        else:
            why = _wide_bearings(fitted) + f" (the readings scatter {rms:.1f} dB rms about the best fit)"
        msg = (
            f"the readings do not constrain a direction: {why}; take readings on a loop rotated in steps, or on "
            "directional antennas pointing different ways"
        )
        if outliers:
            msg += f"; {count} the best fit by more than the stated uncertainty: {named}"
    if symmetric:
        msg += "; every antenna is symmetric front to back, so each bearing could also be its opposite (180 deg)"
    background = float(b)  # the background's Fa on the reference monopole: scale of the Fa-0-dB component
    notes = []
    quiet = float(p372.man_made(freq_hz, environment="quiet rural").fa_db)
    if not bg_determined:
        notes.append(
            f"the diffuse background is not determined: the sources outweigh it in every reading (the fit left it "
            f"under each by more than {-10 * np.log10(BACKGROUND_MIN_SHARE):.0f} dB, where it changes none of them); "
            f"the readings only bound it from above"
        )
    elif background < quiet - IMPLAUSIBLE_BELOW_QUIET_RURAL_DB:
        notes.append(
            f"the diffuse background, Fa {background:.1f} dB, lies {quiet - background:.0f} dB under P.372's quietest "
            f"man-made level at {freq_hz / 1e6:g} MHz (quiet rural, Fa {quiet:.1f} dB): no site is that quiet; check "
            "the levels (dBm at the receiver's input in the stated bandwidth: the fit takes no line loss or "
            "attenuator ahead of it) and the antennas' sizes and heights (they set the modelled efficiency)"
        )
    if near is not None:
        far_rms = float(np.sqrt(np.mean(far.fun**2)))
        if far_rms < rms - FAR_FITS_BETTER_DB:
            far_bearings = ", ".join(f"{np.degrees(az) % 360:.0f}" for az, _, _ in unpack(far.x)[1])
            notes.append(
                f"read as a far source (a plane wave of both polarisations, heard through the antennas' patterns) "
                f"the readings fit better: {far_rms:.2f} dB rms at {far_bearings} deg, against {rms:.2f} dB for a "
                f"short {NEAR_POLARISATION} dipole at the file's distance, as rank reads a placed source (a small "
                "loop's nulls, say, are deeper under a vertically polarised field than under both polarisations); "
                "leave distance out of the readings file to fit and write it by its bearing"
            )
    return LocateResult(
        ok,
        msg,
        fitted,
        background,
        rms,
        predicted,
        levels,
        [r.label for r in readings],
        outliers,
        bg_determined,
        notes,
        10 * np.log10(np.maximum(source_temps(x) * ktb_g, 1e-300)),
        10 * np.log10(np.maximum(10 ** (b / 10) * t_bg * ktb_g, 1e-300)),
        near is not None,
        missed,
    )


FIT_OWN_SIDE = "the fit's own"


def sigma_said(sigma_deg: float) -> str:
    """A bearing's uncertainty as said: "66 deg", or beyond :data:`NO_BEARING_SIGMA_DEG` no bearing at all."""
    if sigma_deg > NO_BEARING_SIGMA_DEG:
        return f"past {NO_BEARING_SIGMA_DEG:g} deg: no bearing at all"
    return f"{sigma_deg:.0f} deg"


def _wide_bearings(fitted: list[FittedSource]) -> str:
    """Which bearings' uncertainties pass :data:`MAX_BEARING_SIGMA_DEG`, and by how much, in words (no semicolon:
    the command's last line quotes the message up to its first)."""
    if len(fitted) == 1:
        sig = fitted[0].bearing_sigma_deg
        if sig > NO_BEARING_SIGMA_DEG:
            return f"the bearing's uncertainty passes {NO_BEARING_SIGMA_DEG:g} deg: the readings give no bearing at all"
        return f"the bearing's uncertainty is {sig:.0f} deg, over {MAX_BEARING_SIGMA_DEG:g} deg"
    wide = [
        f"source {k + 1} ({sigma_said(f.bearing_sigma_deg)})"
        for k, f in enumerate(fitted)
        if f.bearing_sigma_deg > MAX_BEARING_SIGMA_DEG
    ]
    return f"the bearing's uncertainty is over {MAX_BEARING_SIGMA_DEG:g} deg for " + " and ".join(wide)


def source_names(res: LocateResult, name: str = "located source") -> list[str]:
    """The names the fitted sources are written under: ``name``, or ``name 1``, ``name 2``... for several."""
    return [name] if len(res.sources) == 1 else [f"{name} {i + 1}" for i in range(len(res.sources))]


@record
class Placement:
    """How a fitted source is written into a scenario copy."""

    name: str
    bearing_deg: float
    distance_m: float | None = None
    """How far from the reading point it is placed [m]: the readings file's distance of its number; None where the
    file gives none (or no reading point), and the source is written by its bearing."""
    position_m: tuple[float, float] | None = None
    """Where that puts it on the site plan [m east, m north]."""
    across_m: float | None = None
    """How far its bearing's uncertainty moves it across the bearing at that distance [m] (the arc)."""


def placements(res: LocateResult, *, at_m=None, distances_m=None, name: str = "located source") -> list[Placement]:
    """How each fitted source is written: placed at ``distances_m[i]`` from ``at_m`` on its bearing (the i-th
    distance for the i-th source: one per source, else LocateError), else by its bearing."""
    names = source_names(res, name)
    if at_m is None or distances_m is None:
        return [Placement(label, s.bearing_deg) for s, label in zip(res.sources, names)]
    if len(distances_m) != len(res.sources):
        raise LocateError(
            f"{len(distances_m)} distance(s) for {len(res.sources)} fitted source(s): a distance places one source; "
            "give one per source"
        )
    from snrgain.tools.locatenear import plan_point

    out = []
    for s, label, dist in zip(res.sources, names, distances_m):
        where = plan_point(at_m, float(dist), np.radians(s.bearing_deg))
        across = float(dist * np.radians(min(s.bearing_sigma_deg, NO_BEARING_SIGMA_DEG)))
        out.append(Placement(label, s.bearing_deg, float(dist), where, across))
    return out


def side_note(s: FittedSource) -> str:
    """For a bearing the readings cannot tell from its opposite: the opposite one, and why this side was taken."""
    other = (s.bearing_deg + 180.0) % 360.0
    return f"the readings fit {other:.0f} deg as well: this side is {s.side_from or FIT_OWN_SIDE}"


def scenario_blocks(
    res: LocateResult,
    *,
    at_m=None,
    distances_m=None,
    name: str = "located source",
    length_unit: str = "m",
    unsaid=(),
) -> str:
    """The fitted sources as [[noise.local]] tables, each as the fit modelled it, so that ``rank`` of the copy
    gives the reading antennas the fitted levels: placed (position, Fa measured at ``at_m``, a short vertical
    dipole at :data:`snrgain.tools.locatenear.NEAR_HEIGHT_M`) where the reading point and a distance per source are
    known (:func:`placements`), else by bearing; either way a point (spread 0) at the elevation fitted or held.
    ``length_unit``: the unit the readings file wrote its distances in, for the comments; ``unsaid``: what the fit
    modelled that the copy cannot tell ``rank`` (:func:`snrgain.tools.locatecheck.unsaid`), a comment line each."""
    from snrgain.tools.locatenear import NEAR_HEIGHT_M, NEAR_POLARISATION
    from snrgain.tools.tomltext import toml_string
    from snrgain.units import length_said

    blocks = []
    where = placements(res, at_m=at_m, distances_m=distances_m, name=name)
    for i, (s, p) in enumerate(zip(res.sources, where)):
        note = f"; {side_note(s)}" if s.ambiguous_180 else ""
        head = f"\n[[noise.local]]   # fitted by snrgain locate, bearing +- {s.bearing_sigma_deg:.0f} deg{note}\n"
        if p.position_m is not None:
            e, n = p.position_m
            how = (
                f"a short {NEAR_POLARISATION} dipole {NEAR_HEIGHT_M:g} m above the soil whose field each antenna "
                "takes where it stands"
                if res.placed
                else "a far source at its bearing (the fit had no distance), placed here: rank's levels from it differ"
            )
            body = (
                f'position = ["{e:.1f} m", "{n:.1f} m"]   # {length_said(p.distance_m, length_unit)} from the '
                f"readings (the readings file's distance {i + 1}), +- {length_said(p.across_m, length_unit, 0)} across "
                f'its bearing\nheight = "{NEAR_HEIGHT_M:g} m"\npolarisation = "{NEAR_POLARISATION}"\n'
                f'elevation = {s.elevation_deg:.1f}\nspread = "0 deg"\nfa = {s.fa_db:.1f}\n'
                f'measured_at = ["{at_m[0]:.1f} m", "{at_m[1]:.1f} m"]\n'
            )
        else:
            how = "a point at its bearing and elevation, heard in both polarisations through each antenna's pattern"
            body = (
                f"bearing = {s.bearing_deg:.1f}\nelevation = {s.elevation_deg:.1f}\n"
                f'spread = "0 deg"\nfa = {s.fa_db:.1f}\n'
            )
        said = f"# as the fit modelled it: {how}\n" + "".join(f"# rank cannot be told: {u}\n" for u in unsaid)
        blocks.append(head + said + f"name = {toml_string(p.name)}\n" + body)
    return "".join(blocks)


def _off(a_deg: float, b_deg: float) -> float:
    """The angle between two bearings [deg], 0 to 180."""
    return abs((a_deg - b_deg + 180.0) % 360.0 - 180.0)


def _square(off_deg: float) -> bool:
    """A side ``off_deg`` from a bearing that tells neither it nor its opposite (:data:`SQUARE_TOLERANCE_DEG`)."""
    return abs(off_deg - 90.0) <= SQUARE_TOLERANCE_DEG


def sided(res: LocateResult, text: str, *, at_m=None, name: str = "located source") -> LocateResult:
    """``res`` with each source whose readings cannot tell its bearing from the opposite one (``ambiguous_180``) on
    the side of the [[noise.local]] of the same name it replaces in the scenario ``text`` (its bearing, or its
    position seen from the reading point ``at_m``), where that one says a side; the others as fitted.  Each
    ambiguous source's ``side_from`` says which it was."""
    import tomllib
    from dataclasses import replace

    from snrgain.fields import plan_point
    from snrgain.units import parse_quantity

    local = tomllib.loads(text).get("noise", {}).get("local", [])
    old = {t.get("name"): t for t in local if isinstance(t, dict)} if isinstance(local, list) else {}
    sources = []
    for s, label in zip(res.sources, source_names(res, name)):
        was = old.get(label)
        bearing = None
        try:
            if was is not None and "bearing" in was:
                bearing = np.degrees(parse_quantity(was["bearing"], "angle"))
            elif was is not None and "position" in was and at_m is not None:
                e, n = plan_point(was["position"])  # as the scenario reads it: bare numbers are metres
                bearing = np.degrees(np.arctan2(e - at_m[0], n - at_m[1]))
        except (TypeError, ValueError):
            bearing = None  # a table the scenario's check refuses anyway: no side to take from it
        if not s.ambiguous_180:
            sources.append(s)
            continue
        if was is None:
            why = f"{FIT_OWN_SIDE}: the scenario has no source of this name to take a side from"
        elif bearing is None:
            why = f"{FIT_OWN_SIDE}: the source of this name it replaces gives no bearing to take a side from"
        elif _square(_off(s.bearing_deg, bearing)):
            why = (
                f"{FIT_OWN_SIDE}: the source of this name it replaces, at {bearing % 360:.0f} deg, lies square to both"
            )
        else:
            if _off(s.bearing_deg, bearing) > 90.0:
                s = replace(s, bearing_deg=(s.bearing_deg + 180.0) % 360.0)
            why = f"that of the source of this name it replaces, at {bearing % 360:.0f} deg"
        sources.append(replace(s, side_from=why))
    return replace(res, sources=sources)


def on_side(res: LocateResult, side_deg: float) -> LocateResult:
    """``res`` with each source whose readings cannot tell its bearing from the opposite one (``ambiguous_180``) on
    the side of ``side_deg`` (a rough bearing the user knows it lies toward): the one of the two within 90 deg of it.
    A converged fit's other sources get a note that the fit tells their side itself and ``side_deg`` was not used
    for them; a ``side_deg`` square to both bearings of an ambiguous one (90 deg from each) is refused (LocateError:
    it tells neither side)."""
    from dataclasses import replace

    sources, notes = [], list(res.notes)
    for i, s in enumerate(res.sources):
        off = _off(s.bearing_deg, side_deg)
        if not s.ambiguous_180:
            if res.ok:
                notes.append(
                    f"source {i + 1}: the fit tells its side itself (bearing {s.bearing_deg:.0f} deg: its readings "
                    f"tell front from back), so --side {side_deg:g} was not used for it"
                    + (
                        f"; it lies {off:.0f} deg from --side: check the side and the readings' bearings"
                        if off > 90
                        else ""
                    )
                )
        elif _square(off):
            if res.ok:  # a failed fit's bearings are no result: nothing to choose between
                raise LocateError(
                    f"{side_deg:g} deg lies 90 deg from both bearings that fit source {i + 1} ({s.bearing_deg:.0f} and "
                    f"{(s.bearing_deg + 180.0) % 360.0:.0f} deg), so it tells neither side; give a bearing nearer the "
                    "side the source lies on"
                )
        else:
            if off > 90.0:
                s = replace(s, bearing_deg=(s.bearing_deg + 180.0) % 360.0)
            s = replace(s, side_from=f"the one within 90 deg of --side {side_deg:g}")
        sources.append(s)
    return replace(res, sources=sources, notes=notes)


def with_sources(
    text: str,
    res: LocateResult,
    *,
    at_m=None,
    distances_m=None,
    name: str = "located source",
    side_deg=None,
    length_unit: str = "m",
    unsaid=(),
) -> str:
    """Scenario TOML text with the fitted sources written in (:func:`scenario_blocks`; ``unsaid``: what the copy
    cannot tell ``rank``, said in each one's comment): a [[noise.local]] of the same name is replaced (its
    table removed), the others kept; refuses a failed fit.  An ambiguous bearing (180 deg) is written on the side
    of ``side_deg`` where given (:func:`on_side`), else on the side of the source it replaces (:func:`sided`)."""
    import tomllib

    from snrgain.tools.tomltext import remove_tables

    if not res.ok:
        raise LocateError("the fit failed, so no sources were written: " + res.message)
    res = on_side(res, side_deg) if side_deg is not None else sided(res, text, at_m=at_m, name=name)
    kept = remove_tables(text, "[[noise.local]]", set(source_names(res, name)))
    blocks = scenario_blocks(res, at_m=at_m, distances_m=distances_m, name=name, length_unit=length_unit, unsaid=unsaid)
    out = kept.rstrip("\n") + "\n" + blocks
    tomllib.loads(out)  # still one valid file
    return out


def _sources_share_dbm(res: LocateResult, n: int) -> list:
    """The fitted sources' share of each reading [dBm] (None each where the result does not hold it)."""
    if res.source_dbm is None or not len(res.source_dbm):
        return [None] * n
    return list(10 * np.log10(np.sum(10 ** (np.asarray(res.source_dbm) / 10), axis=0)))


def as_dict(res: LocateResult, *, freq_hz: float, bandwidth_hz: float) -> dict:
    """JSON-ready result (units in the keys)."""
    return {
        "ok": res.ok,
        "message": res.message,
        "frequency_hz": freq_hz,
        "bandwidth_hz": bandwidth_hz,
        "background_determined": res.background_determined,
        "background_fa_db": res.background_fa_db if res.background_determined else None,
        "notes": res.notes,
        "residual_rms_db": res.residual_rms_db,
        "sources": [vars(s) for s in res.sources],
        "outliers": [
            {"reading": k + 1, "label": lab, "miss_db": m, "uncertainty_db": u}
            for k, (lab, m, u) in zip(res.outlier_readings, res.outliers)
        ],
        "placed": res.placed,
        "readings": [
            {"label": lab, "level_dbm": lv, "fitted_dbm": p, "sources_dbm": src}
            for lab, lv, p, src in zip(
                res.labels,
                res.readings_dbm,
                res.predicted_dbm,
                _sources_share_dbm(res, len(res.labels)),
            )
        ],
    }
