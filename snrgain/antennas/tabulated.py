"""A pattern read from a table (CSV), from any source: a solver, a measurement.

File layout (snrgain's own):

    # comment lines start with '#'
    azimuth_deg,elevation_deg,gain_dbi
    0,0,-12.5
    0,5,-8.1
    ...

Columns, in any order, named in a header line: ``azimuth_deg`` (compass
bearing), ``elevation_deg``, and either ``gain_dbi`` (total gain) or both
``gain_v_dbi`` and ``gain_h_dbi`` (partial gains; the total is their sum), or
all three.  The rows must form a complete grid: every azimuth of the table at
every elevation, azimuths covering 0 to below 360 deg in any steps,
elevations covering 0 to 90 deg.  Gains are interpolated linearly in dB,
periodically in azimuth; values below -100 dBi are held at -100 dBi.  The
optional ``rotate`` turns the whole table clockwise by that angle.
"""

from __future__ import annotations

import csv
from pathlib import Path
from typing import Literal

import numpy as np

from snrgain.antennas.base import Antenna, AntennaParams, above_horizon, register
from snrgain.fields import quantity

FLOOR_DBI = -100.0
KNOWN_COLUMNS = ("azimuth_deg", "elevation_deg", "gain_dbi", "gain_v_dbi", "gain_h_dbi")
GAIN_RANGE_DBI = (-200.0, 40.0)
"""A pattern's gains [dBi]: no receiving antenna of these bands has 40 dBi, and -200 dBi is a null to any sum (a gain
of 1e308 dBi passed and failed later as 'array of sample points is empty'; -1e308 ranked silently)."""


MAX_PATTERN_BYTES = 20_000_000
"""The largest pattern file read [bytes] (a 0.5 deg grid of the whole sphere with both polarizations is ~10 MB)."""


class TabulatedParams(AntennaParams):
    family: Literal["tabulated"]
    file: str
    rotate: quantity("angle", ge=-2 * np.pi, le=2 * np.pi) = 0.0
    frequency: quantity("frequency", gt=0.0) | None = None


def read_pattern_csv(path: str | Path) -> dict[str, np.ndarray]:
    """Read a pattern table; returns columns as float arrays.

    Raises ValueError naming the file, line and problem.
    """
    from snrgain.files import read_limited

    path = Path(path)
    raw = read_limited(path, limit_bytes=MAX_PATTERN_BYTES, what="pattern file")  # InputFileError (ValueError)
    try:
        text = raw.decode("utf-8-sig")  # a leading byte-order mark, as some editors save, dropped
    except UnicodeDecodeError as exc:
        raise ValueError(f"{path}: byte {exc.start + 1} is not UTF-8 text; save the pattern file as UTF-8") from None
    lines = [(i + 1, ln) for i, ln in enumerate(text.splitlines()) if ln.strip() and not ln.lstrip().startswith("#")]
    if not lines:
        raise ValueError(f"{path}: no header line and no data")
    header_no, header = lines[0]
    names = [h.strip() for h in next(csv.reader([header]))]
    unknown = [n for n in names if n not in KNOWN_COLUMNS]
    if unknown:
        raise ValueError(f"{path}, line {header_no}: unknown column(s) {unknown}; allowed: {', '.join(KNOWN_COLUMNS)}")
    for need in ("azimuth_deg", "elevation_deg"):
        if need not in names:
            raise ValueError(f"{path}, line {header_no}: column {need!r} is missing")
    twice = sorted({n for n in names if names.count(n) > 1})
    if twice:
        raise ValueError(f"{path}, line {header_no}: column(s) {twice} named twice; give each column once")
    partial = [n for n in ("gain_v_dbi", "gain_h_dbi") if n in names]
    if "gain_dbi" in names and len(partial) == 1:  # one of the two would be ignored: the total, or the partial
        raise ValueError(
            f"{path}, line {header_no}: columns 'gain_dbi' and {partial[0]!r} together; give the total gain "
            "('gain_dbi') or both partial gains ('gain_v_dbi' and 'gain_h_dbi'), not the total with one partial"
        )
    if "gain_dbi" not in names and len(partial) < 2:
        raise ValueError(f"{path}, line {header_no}: give 'gain_dbi' or both 'gain_v_dbi' and 'gain_h_dbi'")
    rows = []
    for line_no, ln in lines[1:]:
        cells = [c.strip() for c in next(csv.reader([ln]))]
        if len(cells) != len(names):
            raise ValueError(f"{path}, line {line_no}: {len(cells)} values, expected {len(names)}")
        try:
            row = [float(c) for c in cells]
            if not all(np.isfinite(x) for x in row):
                raise ValueError
            rows.append(row)
        except ValueError:
            raise ValueError(f"{path}, line {line_no}: not a finite number in {ln.strip()!r}") from None
    if not rows:
        raise ValueError(f"{path}: header but no data rows")
    data = np.array(rows)
    return {n: data[:, i] for i, n in enumerate(names)}


def _grid(path, cols):
    az = cols["azimuth_deg"]
    el = cols["elevation_deg"]
    if np.any((az < 0) | (az >= 360)):
        raise ValueError(f"{path}: azimuth_deg must lie in [0, 360)")
    if np.any((el < -90) | (el > 90)):
        raise ValueError(f"{path}: elevation_deg must lie in [-90, 90]")
    az_u = np.unique(az)
    el_u = np.unique(el)
    if az_u.size * el_u.size != az.size:
        raise ValueError(
            f"{path}: rows do not form a complete grid ({az_u.size} azimuths x {el_u.size} elevations "
            f"needs {az_u.size * el_u.size} rows, found {az.size})"
        )
    for name in ("gain_dbi", "gain_v_dbi", "gain_h_dbi"):
        g = cols.get(name)
        if g is not None and np.any((g < GAIN_RANGE_DBI[0]) | (g > GAIN_RANGE_DBI[1])):
            bad = float(g[(g < GAIN_RANGE_DBI[0]) | (g > GAIN_RANGE_DBI[1])][0])
            raise ValueError(
                f"{path}: {name} must lie in [{GAIN_RANGE_DBI[0]:g}, {GAIN_RANGE_DBI[1]:g}] dBi (a deep null as "
                f"{GAIN_RANGE_DBI[0]:g}); found {bad:g}"
            )
    if el_u[0] > 0 or el_u[-1] < 90:
        raise ValueError(f"{path}: elevations must cover 0 to 90 deg; found {el_u[0]:g} to {el_u[-1]:g}")
    if az_u.size < 2:
        raise ValueError(f"{path}: at least two azimuths are needed")
    ia = np.searchsorted(az_u, az)
    ie = np.searchsorted(el_u, el)
    if np.unique(ia * el_u.size + ie).size != az.size:
        raise ValueError(f"{path}: some (azimuth, elevation) pairs appear twice")
    return az_u, el_u, ia, ie


@register("tabulated", TabulatedParams, "pattern read from a CSV table of azimuth, elevation and gain")
class Tabulated(Antenna):
    fixed_ground = True

    def __init__(self, params: TabulatedParams):
        super().__init__(params)
        self.path = Path(params.file)
        cols = read_pattern_csv(self.path)
        az_u, el_u, ia, ie = _grid(self.path, cols)
        self.has_polarization = "gain_v_dbi" in cols and "gain_h_dbi" in cols
        self.polarised = self.has_polarization  # a placed source is refused with a table of total gain only
        self._grids = {}
        fields = ["gain_v_dbi", "gain_h_dbi"] if self.has_polarization else ["gain_dbi"]
        self._axes = (el_u, np.append(az_u, az_u[0] + 360.0))
        for f in fields:
            grid = np.full((el_u.size, az_u.size), np.nan)
            grid[ie, ia] = np.maximum(np.nan_to_num(cols[f], nan=FLOOR_DBI, neginf=FLOOR_DBI), FLOOR_DBI)
            self._grids[f] = np.concatenate([grid, grid[:, :1]], axis=1)
        self._interp = {}
        self._az0 = az_u[0]

    def _interpolator(self, field):
        """The table's interpolator, built on first use (scipy.interpolate is slow to import; checking a
        scenario reads the table but evaluates no pattern)."""
        if field not in self._interp:
            from scipy.interpolate import RegularGridInterpolator

            self._interp[field] = RegularGridInterpolator(
                self._axes, self._grids[field], bounds_error=False, fill_value=None
            )
        return self._interp[field]

    def _lookup(self, field, azimuth_rad, elevation_rad):
        az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
        az_deg = np.mod(np.degrees(az - self.params.rotate) - self._az0, 360.0) + self._az0
        el_deg = np.clip(np.degrees(el), 0.0, 90.0)
        pts = np.stack([el_deg.ravel(), az_deg.ravel()], axis=-1)
        g = 10.0 ** (self._interpolator(field)(pts).reshape(az.shape) / 10.0)
        return np.where(above_horizon(el), g, 0.0)

    def check_frequency(self, freq_hz):
        f = self.params.frequency
        if f is not None and abs(freq_hz - f) > 0.05 * f:
            raise ValueError(
                f"frequency: the pattern table is for {f / 1e6:g} MHz, the scenario asks {freq_hz / 1e6:g} MHz "
                "(more than 5 % apart)"
            )

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        if not self.has_polarization:
            raise ValueError(f"{self.path}: the table gives total gain only (no gain_v_dbi/gain_h_dbi columns)")
        return (
            self._lookup("gain_v_dbi", azimuth_rad, elevation_rad),
            self._lookup("gain_h_dbi", azimuth_rad, elevation_rad),
        )

    def gain_linear(self, freq_hz, azimuth_rad, elevation_rad):
        if self.has_polarization:
            gv, gh = self.partial_gains(freq_hz, azimuth_rad, elevation_rad)
            return gv + gh
        return self._lookup("gain_dbi", azimuth_rad, elevation_rad)

    def describe(self):
        return {**super().describe(), "file": str(self.path), "rotate_deg": float(np.degrees(self.params.rotate))}
