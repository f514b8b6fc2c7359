"""ITU-R P.372 atmospheric noise from the numerical maps of ITU-R Study Group 3.

The coefficient files ``COEFF01W.txt`` ... ``COEFF12W.txt`` are published by
ITU-R Study Group 3 with its software for Recommendation ITU-R P.372; they are
not part of snrgain.  This module finds the four sections that serve
atmospheric noise by their headers (``fakp(29,16,6)``, ``fakabp(2,6)``,
``dud(5,12,5)``, ``fam(14,12)``) and evaluates the method of the numerical
mapping (Zacharisen and Jones, OT/ITS Research Report 2, 1970; Lucas and
Harper, NBS Technical Note 318, 1965), as written out step by step in the
data folder's README:

1. longitude series  Z_j = sum_k fakp[b,k,j] sin((k+1) lon/2) + fakp[b,15,j];
2. latitude series   Fam1 = sum_j Z_j sin((j+1)(lat + pi/2)) + fakabp[b,0] + fakabp[b,1] (lat + pi/2),
   the median at 1 MHz;
3. frequency:        FaA = CZ PZ(u) + PX(u), CZ = Fam1 (2 - PZ(-0.75)) - PX(-0.75),
   u = (8 * 2**log10(f_MHz) - 11) / 4, PZ and PX degree-6 polynomials from fam[t];
4. deciles:          D_u, D_l = degree-4 polynomials in log10(f_MHz) (f capped at 20 MHz)
   from dud[0, t] and dud[1, t];

with t = b north of the equator and b + 6 south of it.  Time blocks b = 0..5
are local time 00-04, ..., 20-24.  Between blocks the value at each block
centre (02, 06, ..., 22 h local mean time) is interpolated linearly in power
(the deciles linearly in dB), wrapping at midnight.
"""

from __future__ import annotations

import math
import os
import re
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import numpy as np

ENV_VAR = "SNRGAIN_P372_DIR"
SECTIONS = {"fakp": (29, 16, 6), "fakabp": (2, 6), "dud": (5, 12, 5), "fam": (14, 12)}
FREQ_RANGE_HZ = (10e3, 30e6)
"""Frequencies accepted [Hz]; the deciles' curves are held at their 20 MHz values above 20 MHz."""

HOW_TO_GET = (
    "The ITU-R P.372 coefficient files COEFF01W.txt ... COEFF12W.txt are published by ITU-R Study "
    "Group 3 with its software for Recommendation ITU-R P.372 (ITU-R SG3 software and data pages). "
    f"Put them in a folder and name it with the --p372-dir option, the scenario key noise.atmospheric.data_dir "
    f"or the environment variable {ENV_VAR}; or give the level by hand: "
    '[noise.atmospheric] model = "given", fa = "45 dB".'
)


MAX_COEFFICIENT = 1e6
"""Larger magnitudes than any coefficient of the published files: a sign of a damaged file."""


class P372DataError(ValueError):
    """The P.372 coefficient data are missing or unreadable."""


@dataclass(frozen=True)
class AtmosphericCoefficients:
    """The four noise sections of one month's file, indexed as numpy arrays.

    fakp[b, k, j], fakabp[b, i], dud[s, t, n], fam[t, n] (Fortran order reversed).
    """

    month: int
    path: Path
    fakp: np.ndarray
    fakabp: np.ndarray
    dud: np.ndarray
    fam: np.ndarray


_HEADER = re.compile(r"^\s*([A-Za-z][A-Za-z0-9_]*)\s*\(\s*(\d+(?:\s*,\s*\d+)*)\s*\)\s*$")
_HEADER_IN_TEXT = re.compile(  # the same header found in the whole text, within one line
    r"^[ \t]*([A-Za-z][A-Za-z0-9_]*)[ \t]*\([ \t]*(\d+(?:[ \t]*,[ \t]*\d+)*)[ \t]*\)[ \t]*$", re.M
)


def resolve_data_dir(data_dir: str | Path | None = None) -> Path:
    """The folder holding the coefficient files: ``data_dir`` if given, else $SNRGAIN_P372_DIR."""
    if data_dir is None:
        env = os.environ.get(ENV_VAR)
        if not env:
            raise P372DataError(f"P.372 atmospheric-noise data folder not set. {HOW_TO_GET}")
        data_dir = env
    path = Path(data_dir).expanduser()
    if not path.is_dir():
        raise P372DataError(f"P.372 data folder {path} does not exist or is not a folder. {HOW_TO_GET}")
    return path


def month_file(data_dir: Path, month: int) -> Path:
    if not (isinstance(month, (int, np.integer)) and 1 <= int(month) <= 12):
        raise ValueError(f"month must be an integer 1..12, got {month!r}")
    return Path(data_dir) / f"COEFF{int(month):02d}W.txt"


def read_coefficients(path: str | Path, month: int) -> AtmosphericCoefficients:
    """Read the four noise sections of one month's coefficient file.

    Raises P372DataError naming the file, and the section or line at fault.  Each noise section's numbers are read
    in one numpy conversion; a file that does not read cleanly that way is read again line by line
    (:func:`_read_by_line`), which names the line at fault.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="latin-1")
    except OSError as exc:
        raise P372DataError(
            f"{path}: cannot read P.372 coefficient file ({exc.strerror or exc}). {HOW_TO_GET}"
        ) from None
    text = text.replace("\x1a", "")
    heads = list(_HEADER_IN_TEXT.finditer(text))
    arrays = {}
    for i, m in enumerate(heads):
        name = m.group(1)
        if name not in SECTIONS:
            continue
        dims = tuple(int(x) for x in m.group(2).split(","))
        end = heads[i + 1].start() if i + 1 < len(heads) else len(text)
        try:
            numbers = np.array(text[m.end() : end].split(), dtype=float)
        except ValueError:
            break  # a word that is not a number: the line-by-line reading names it
        if (
            name in arrays
            or dims != SECTIONS[name]
            or numbers.size != int(np.prod(dims))
            or not np.all(np.abs(numbers) < MAX_COEFFICIENT)
        ):
            break
        arrays[name] = numbers.reshape(dims[::-1])
    if arrays.keys() != SECTIONS.keys():
        return _read_by_line(path, text, month)
    return _varied(path, month, arrays)


def _varied(path: Path, month: int, arrays: dict) -> AtmosphericCoefficients:
    """The coefficients, or P372DataError for a section that holds one value throughout (a block zeroed or filled
    by a damaged copy: P.372's sections vary, and such a file read as Fa 0 dB without a word)."""
    for name in SECTIONS:
        a = arrays[name]
        if a.size > 1 and float(np.ptp(a)) == 0.0:
            raise P372DataError(
                f"{path}: section {name}{SECTIONS[name]} holds one value throughout ({float(a.flat[0]):g}), which no "
                "P.372 coefficient file does; the file is damaged: copy it again from its source"
            )
    return AtmosphericCoefficients(month, path, arrays["fakp"], arrays["fakabp"], arrays["dud"], arrays["fam"])


def _read_by_line(path: Path, text: str, month: int) -> AtmosphericCoefficients:
    """The file read line by line, for its error message: raises P372DataError naming the section or line at
    fault (or returns the coefficients, should the file read cleanly after all)."""
    values: dict[str, list[float]] = {}
    dims: dict[str, tuple[int, ...]] = {}
    current = None
    for line_no, line in enumerate(text.splitlines(), start=1):
        m = _HEADER.match(line)
        if m:
            name = m.group(1)
            current = name if name in SECTIONS else None
            if current is not None:
                dims[name] = tuple(int(x) for x in m.group(2).split(","))
                values[name] = []
            continue
        if current is None or not line.strip():
            continue
        try:
            row = [float(x) for x in line.split()]
        except ValueError:
            raise P372DataError(
                f"{path}, line {line_no}: section {current}: not a number in {line.strip()!r}"
            ) from None
        if not all(math.isfinite(x) and abs(x) < MAX_COEFFICIENT for x in row):
            raise P372DataError(
                f"{path}, line {line_no}: section {current}: a value out of range in {line.strip()!r} "
                f"(coefficients lie within +-{MAX_COEFFICIENT:g}); the file is damaged"
            )
        values[current].extend(row)
    arrays = {}
    for name, expect in SECTIONS.items():
        if name not in values:
            raise P372DataError(f"{path}: section {name}{expect} not found; is this a P.372 coefficient file?")
        if dims[name] != expect:
            raise P372DataError(f"{path}: section {name} has dimensions {dims[name]}, expected {expect}")
        n = int(np.prod(expect))
        if len(values[name]) != n:
            raise P372DataError(f"{path}: section {name}{expect} holds {len(values[name])} values, expected {n}")
        arrays[name] = np.array(values[name]).reshape(expect[::-1])
    return _varied(path, month, arrays)


@lru_cache(maxsize=24)
def _cached(path_str: str, month: int, mtime: float) -> AtmosphericCoefficients:
    return read_coefficients(path_str, month)


def load_month(month: int, data_dir: str | Path | None = None) -> AtmosphericCoefficients:
    """The coefficients of a month (cached per file)."""
    path = month_file(resolve_data_dir(data_dir), month)
    try:
        mtime = path.stat().st_mtime
    except OSError:
        raise P372DataError(f"{path}: P.372 coefficient file for month {month} not found. {HOW_TO_GET}") from None
    return _cached(str(path), int(month), mtime)


@lru_cache(maxsize=64)
def _resolved(path_text: str) -> str:
    return str(Path(path_text).resolve())


def month_source(month: int, data_dir: str | Path | None = None) -> tuple[str, int, int]:
    """(path with links resolved, size, modification time [ns]) of a month's coefficient file: what the persistent
    cache's keys hold of it.  Raises OSError (no such file), ValueError (no such month) or P372DataError (no
    folder).  The resolved path is kept per path in this process (a sky resolves one file per month and hour, each
    a walk over the path's folders); the size and time are read every call."""
    path = _resolved(str(month_file(resolve_data_dir(data_dir), month)))
    st = os.stat(path)
    return path, int(st.st_size), int(st.st_mtime_ns)


CHECKED_VERSION = 1
"""Part of the persistent cache's key of :func:`check_month`'s record of a file read cleanly."""


def check_month(month: int, data_dir: str | Path | None = None) -> None:
    """Raise as :func:`load_month` does when a month's file is missing or does not read; a file an earlier run has
    read cleanly (the same path, size and modification time, and this module's code) is not read again: that it
    did is kept in the persistent cache (:func:`noisemodels.skycache.remembered`, kind "p372file")."""
    from noisemodels import skycache

    path = month_file(resolve_data_dir(data_dir), month)
    try:
        st = path.resolve().stat()
    except OSError:
        load_month(month, data_dir)  # raises naming the file
        return

    def read():
        load_month(month, data_dir)  # raises naming the file and the section or line at fault
        return np.ones(1)

    key = {
        "version": CHECKED_VERSION,
        "code": skycache.code_digest(__file__),
        "month": int(month),
        "p372": [str(path.resolve()), int(st.st_size), int(st.st_mtime_ns)],
    }
    skycache.remembered("p372file", key, read)


def _horner(coeffs, u):
    """Evaluate polynomials, highest power first; coeffs (..., n) broadcast with u."""
    out = np.zeros(np.broadcast_shapes(np.shape(u), np.shape(coeffs)[:-1]))
    for i in range(np.shape(coeffs)[-1]):
        out = out * u + coeffs[..., i]
    return out


def _sine_harmonics(x: np.ndarray, count: int) -> np.ndarray:
    """sin(k x) for k = 1..count, (places, count), by the recurrence sin((k+1)x) = 2 cos x sin kx - sin((k-1)x)
    from one sine and cosine per place (rounding grows with k, to some 1e-14 at k = 29: the maps' sums move by
    less than 1e-11 dB)."""
    out = np.empty((x.size, count))
    two_cos = 2.0 * np.cos(x)
    out[:, 0] = np.sin(x)
    if count > 1:
        out[:, 1] = two_cos * out[:, 0]
    for k in range(2, count):
        out[:, k] = two_cos * out[:, k - 1] - out[:, k - 2]
    return out


MATMUL_PLACES = 256
"""From this many places :func:`fam_1mhz` sums over k by a matrix product (BLAS), below by einsum."""


def fam_1mhz(c: AtmosphericCoefficients, lat_rad, lon_rad, block) -> np.ndarray:
    """Median atmospheric noise at 1 MHz, Fam1 [dB above kT0b], steps 1-2 (vectorised).

    ``block`` broadcasts with the site arrays (integers 0..5).  The 44 sines of a place do not depend on the
    block, so they are computed once per place however many blocks are asked for; the sums over k and j are
    einsum contractions (no multithreaded BLAS call, whose start-up dominates products this small).
    """
    lat, q = np.broadcast_arrays(
        np.asarray(lat_rad, dtype=float), np.mod(np.asarray(lon_rad, dtype=float), 2 * np.pi) / 2.0
    )
    b = np.asarray(block, dtype=int)
    shape = np.broadcast_shapes(lat.shape, b.shape)
    p = (lat + np.pi / 2).ravel()
    sin_k = _sine_harmonics(q.ravel(), 15)  # (places, 15)
    sin_j = _sine_harmonics(p, 29)  # (places, 29)
    place = np.broadcast_to(np.arange(lat.size).reshape(lat.shape), shape)
    b = np.broadcast_to(b, shape)
    out = np.empty(shape)
    # np.unique with counts: its plain form imports numpy.ma (~15 ms of a command's start) to look for a mask
    for blk in np.unique(np.asarray(block, dtype=int), return_counts=True)[0]:  # the distinct blocks as given
        sel = b == blk
        idx = place[sel]
        # the places this block is asked at, each once: all of them (no gathers) when it covers every place
        need = np.unique(idx, return_counts=True)[0] if idx.size < lat.size else np.arange(lat.size)
        whole = need.size == lat.size
        sk, sj, pp = (sin_k, sin_j, p) if whole else (sin_k[need], sin_j[need], p[need])
        fk = c.fakp[blk, :15, :]
        z = (sk @ fk if sk.shape[0] >= MATMUL_PLACES else np.einsum("nk,kj->nj", sk, fk)) + c.fakp[blk, 15, :]
        value = np.einsum("nj,nj->n", z, sj) + c.fakabp[blk, 0] + c.fakabp[blk, 1] * pp
        out[sel] = value[idx] if whole else value[np.searchsorted(need, idx)]
    return out


_SMALL_CALLS: dict[tuple, tuple] = {}
SMALL_CALL = 64
"""Up to this many places x blocks a call of :func:`block_values` is kept by its arguments' values (a site's own
level, asked again for every hour of the month), and a copy of the kept values returned."""


def block_values(c: AtmosphericCoefficients, lat_rad, lon_rad, freq_mhz, block):
    """(FaA, D_u, D_l) [dB] for a time block, steps 1-4 (vectorised)."""
    args = [np.asarray(a, dtype=float) for a in (lat_rad, lon_rad, freq_mhz)] + [np.asarray(block)]
    if max(a.size for a in args) > SMALL_CALL:
        return _block_values(c, lat_rad, lon_rad, freq_mhz, block)
    key = (id(c), *((a.shape, a.dtype.str, a.tobytes()) for a in args))
    held = _SMALL_CALLS.get(key)
    if held is None or held[0] is not c:
        if len(_SMALL_CALLS) >= 512:
            _SMALL_CALLS.clear()
        held = _SMALL_CALLS[key] = (c, _block_values(c, lat_rad, lon_rad, freq_mhz, block))
    return tuple(np.array(v, copy=True) for v in held[1])


def _block_values(c: AtmosphericCoefficients, lat_rad, lon_rad, freq_mhz, block):
    lat = np.asarray(lat_rad, dtype=float)
    f = np.asarray(freq_mhz, dtype=float)
    b = np.asarray(block, dtype=int)
    fam1 = fam_1mhz(c, lat, lon_rad, b)
    if f.size and (f.size == 1 or np.all(f == f.flat[0])):
        # One frequency: every polynomial of step 3-4 depends on the table row t alone (block and hemisphere, 12
        # rows), so each is evaluated once per row and gathered, the same sums as per place
        f0 = float(f.flat[0])
        lat, b, fam1 = np.broadcast_arrays(lat, b, fam1)
        t = np.where(lat >= 0, b, b + 6)
        u = (8.0 * 2.0 ** np.log10(f0) - 11.0) / 4.0
        x = np.log10(min(f0, 20.0))
        pz0, px0 = _horner(c.fam[:, 0:7], -0.75), _horner(c.fam[:, 7:14], -0.75)
        pzu, pxu = _horner(c.fam[:, 0:7], u), _horner(c.fam[:, 7:14], u)
        fa = (fam1 * (2.0 - pz0[t]) - px0[t]) * pzu[t] + pxu[t]
        out = (fa, _horner(c.dud[0], x)[t], _horner(c.dud[1], x)[t])
        shape = np.broadcast_shapes(t.shape, f.shape)
        return out if shape == t.shape else tuple(np.broadcast_to(v, shape).copy() for v in out)
    lat, f, b, fam1 = np.broadcast_arrays(lat, f, b, fam1)
    t = np.where(lat >= 0, b, b + 6)
    pz_c = c.fam[t, 0:7]
    px_c = c.fam[t, 7:14]
    u0 = -0.75
    cz = fam1 * (2.0 - _horner(pz_c, u0)) - _horner(px_c, u0)
    u = (8.0 * 2.0 ** np.log10(f) - 11.0) / 4.0
    fa = cz * _horner(pz_c, u) + _horner(px_c, u)
    x = np.log10(np.minimum(f, 20.0))
    du = _horner(c.dud[0, t, :], x)
    dl = _horner(c.dud[1, t, :], x)
    return fa, du, dl


def local_mean_time_h(utc_hour, lon_deg):
    """Local mean time [h] = UTC + east longitude / 15 deg, in [0, 24)."""
    return np.mod(np.asarray(utc_hour, dtype=float) + np.asarray(lon_deg, dtype=float) / 15.0, 24.0)


def interpolate_blocks(lmt_h, values_by_block):
    """Blend block values (axis 0 = block 0..5) at local mean times, linear in power for Fa.

    ``values_by_block`` is a tuple (fa, du, dl) of arrays with a leading axis of 6.
    """
    fa, du, dl = values_by_block
    lo, hi, w = _block_pair(lmt_h)

    def pick(arr, idx):
        return np.take_along_axis(arr, idx[None, ...], axis=0)[0]

    p = (1 - w) * 10 ** (pick(fa, lo) / 10) + w * 10 ** (pick(fa, hi) / 10)
    return 10 * np.log10(p), (1 - w) * pick(du, lo) + w * pick(du, hi), (1 - w) * pick(dl, lo) + w * pick(dl, hi)


def _block_pair(lmt_h):
    """The blocks whose centres bracket each local mean time and the weight of the later one."""
    s = (np.asarray(lmt_h, dtype=float) - 2.0) / 4.0  # 0 at block 0's centre
    lo = np.floor(s).astype(int) % 6
    return lo, (lo + 1) % 6, s - np.floor(s)


def blend_block_powers(lmt_h, powers_by_block):
    """:func:`interpolate_blocks`' median as a power ratio, 10^(FaA/10), from the blocks' powers (axis 0 = block
    0..5, the places' shape after, as ``lmt_h``'s): the same blend without the logarithm and its inverse (a caller
    that wants the power of every place at many hours, the storm model's sources)."""
    lo, hi, w = _block_pair(lmt_h)
    taken = np.take_along_axis(powers_by_block, np.stack([lo, hi]), axis=0)
    return (1 - w) * taken[0] + w * taken[1]
