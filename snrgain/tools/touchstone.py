"""Analyser sweeps of a wire (Touchstone 1-port files) turned into its velocity factor and |Z0|.

A sweep is read with scikit-rf (any frequency unit, S/Z/Y/G/H parameters, RI/MA/DB, any reference impedance)
and turned into the impedance at the wire's feed, Z = Z_ref (1 + S) / (1 - S).  For the far end open or shorted,
the textbook line input impedance, Z0 coth(gamma L) (open) or Z0 tanh(gamma L) (shorted), has its extremes of
|Z| where beta L = m pi / 2:

- at odd m (open) or even m (shorted) |Z| is least, |Z0| tanh(alpha L); at the others it is greatest,
  |Z0| coth(alpha L); so the product of neighbouring extremes is |Z0|^2 (the geometric mean of each extreme's
  products with its two neighbours cancels the change of alpha L to first order);
- the spacing of neighbouring extremes, delta f, fixes m at each extreme (m = f / delta f, rounded to the right
  parity), and then the velocity factor at that extreme, VF = 4 L f / (m c): the phase velocity's, as the line
  model's velocity factor is (a wire over lossy ground is dispersive: the spacing alone would give the group
  velocity, a few per cent off);
- the ratio of neighbouring extremes gives alpha L = atanh(sqrt(|Z|min / |Z|max)).

For a terminated far end, the impedance's variation over the sweep (greatest over least |Z|) says how well the
termination matches: the trade trims the resistor for the least variation (common practice).

These are standard transmission-line results (e.g. S. Ramo, J. R. Whinnery, T. Van Duzer, "Fields and Waves in
Communication Electronics", 3rd ed., Wiley (1994), ch. 5; cited from memory).  A sweep taken through a feed line
measures the line too: its reference plane is not the wire's feed.  At a wire's own feed the extremes of |Z| fall
where the impedance is nearly resistive; through a length of mismatched line they do not, which is what the
warning reads (:data:`REACTANCE_SHARE_WARN`).
"""

from __future__ import annotations

import re
from dataclasses import field
from pathlib import Path

import numpy as np

from snrgain.physics.ground import C_M_PER_S
from snrgain.records import record

FAR_ENDS = ("open", "short", "terminated")
REACTANCE_SHARE_WARN = 0.2
"""Median |X|/|Z| at the extremes above which a sweep is taken to come through a feed line (a wire swept at its
feed reads about 0.03 in the tests; one metre of 50 ohm coax in between, 0.37)."""
MAX_SWEEP_BYTES = 20_000_000
"""The largest Touchstone file read [bytes]."""
SWEEP_MAX_FREQ_HZ = 300e6
"""The highest frequency a sweep's point is read at [Hz]: a decade above the tool's top (30 MHz).  Points above it in
a sweep that also has points below (an analyser's whole range saved) are left out; a sweep wholly above it is a unit's
slip (Hz read as MHz, the option line's unit missing), refused.  The lowest: more than 0 Hz."""
PASSIVE_S_MAX = 1.05
"""The largest reflection |S| a sweep's point may have [-]: a passive wire reflects at most 1 (its resistance is not
negative); the 0.05 allows an analyser's calibration error (a few hundredths on an open, common practice)."""
WIRE_Z0_RANGE_OHM = (30.0, 1000.0)
"""The |Z0| of a wire over ground [ohm]; a sweep's outside this is warned of.  A wire of diameter d at height h over
a perfect ground has 60 ln(4h/d) (the standard image result): 340 to 740 ohm for 0.3 to 30 m and 4 to 0.5 mm; over
a real ground the image lies deeper and |Z0| is higher.  The trade's Beverages read 400-600 ohm (common practice);
a BOG on wet soil or buried lower.  The project's line model gives 47-790 ohm over its families (Beverage up to
30 m, BOG on, above or in the soil), gauges 10-24 and grounds from sea water to very dry ground at 0.15-30 MHz
(computed for this bound with the closed form); the range is that with a margin."""
WIRE_Z0_MAX_OHM = 2000.0
"""A |Z0| over this [ohm] is refused: more than twice the most the line model gives any wire, the most a scenario's
measured ``z0`` takes, and so a suggested termination (|Z0| less the far rod) within the 5000 ohm a wire's
termination takes.  The usual cause is a Touchstone v1 file of Z in ohms: v1 holds Z normalised to the option line's
R (divided by it), so ohms read R times too large (Touchstone File Format Specification, IBIS Open Forum, version
2.0 (2009): v1 data normalised to R, v2's Z in ohms; cited from memory)."""
FORMAT_HINT = (
    "check the file's option line (# <unit> <parameter> <format> R <ohm>: R the reference resistance, e.g. R 50) "
    "and the form of its values: a Touchstone v1 file holds Z normalised to R (ohms divided by R), a [Version] 2.0 "
    "file holds Z in ohms; a file of ohms read as v1 gives R times too much, normalised values read as v2 R times "
    "too little"
)


class SweepError(ValueError):
    """A sweep that cannot be read or answers nothing."""


@record
class Sweep:
    freq_hz: np.ndarray
    z_ohm: np.ndarray
    label: str


def read_sweep(path: str | Path) -> Sweep:
    """The impedance over a 1-port Touchstone file's sweep; SweepError naming the file (and the line, where one is
    at fault) otherwise."""
    import warnings

    import skrf

    from snrgain.files import InputFileError, read_limited

    p = Path(path)
    try:
        raw = read_limited(p, limit_bytes=MAX_SWEEP_BYTES, what="sweep")
    except InputFileError as exc:
        raise SweepError(str(exc)) from None
    text = raw.decode("utf-8", errors="replace")
    _check_reference(p, text)
    if not _stripped_lines(text):  # the reader's own words for it were "Ran out of input"
        what = "empty" if not text.strip() else "only comments"
        raise SweepError(
            f"{p}: {what}, not a Touchstone sweep: a 1-port file (.s1p) holds its option line (such as '# MHz Z RI "
            "R 50') and one line per point, the frequency and one complex value"
        )
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # scikit-rf warns of frequencies out of order; they are sorted below
            net = skrf.Network(str(p))
            if net.nports == 1:
                f = np.asarray(net.f, dtype=float)
                z = np.asarray(net.z[:, 0, 0], dtype=complex)
                s = np.asarray(net.s[:, 0, 0], dtype=complex)
    except Exception as exc:  # noqa: BLE001 - scikit-rf raises many kinds for a file it cannot read
        raise SweepError(_line_at_fault(p, raw) or f"{p}: not a Touchstone file scikit-rf can read ({exc})") from None
    if net.nports != 1:
        raise SweepError(f"{p}: a 1-port sweep (.s1p) is needed; this file has {net.nports} ports")
    ok = np.isfinite(f) & np.isfinite(s) & np.isfinite(z)
    if not ok.all():
        raise SweepError(_line_at_fault(p, raw) or f"{p}: {int((~ok).sum())} points are not finite numbers")
    r_ohm = np.real(np.ravel(net.z0))
    data = _data_lines(text)
    above = f > SWEEP_MAX_FREQ_HZ
    if above.any() and not above.all() and np.all(f > 0):
        # an analyser's whole range (to 900 MHz and more) saved with the low bands: the points above are no wire's
        # business here and are left out; a sweep wholly above is a unit's slip, refused below
        keep = ~above
        data = [d for d, k in zip(data, keep) if k] if len(data) == len(f) else data
        f, s, z = f[keep], s[keep], z[keep]
        ok = ok[keep]
    _check_points(p, data, f, s, z, float(r_ohm[0]) if r_ohm.size else float("nan"))
    if ok.sum() < 5:
        raise SweepError(f"{p}: fewer than 5 points (a sweep across the wire's resonances needs more)")
    order = np.argsort(f, kind="stable")
    repeats = np.flatnonzero(np.diff(f[order]) <= 0)
    if repeats.size:
        at = f[order][repeats[0]]
        raise SweepError(f"{p}: the frequency {at / 1e6:g} MHz is given more than once; each point needs its own")
    return Sweep(f[order], z[order], str(p))


def _line_at_fault(p: Path, raw: bytes) -> str | None:
    """'FILE line N: ...' for the first data line of a Touchstone 1-port file that is not three finite numbers
    (frequency and one complex value), else None.  Comments (``!``), the option line (``#``) and Touchstone 2's
    keyword lines (``[...]``) are passed over."""
    for number, data in _data_lines(raw.decode("utf-8", errors="replace")):
        words = data.split()
        try:
            values = [float(w) for w in words]
        except ValueError:
            bad = next(w for w in words if not _is_number(w))
            return f"{p} line {number}: {bad!r} is not a number"
        if len(values) != 3:
            return f"{p} line {number}: {len(values)} numbers; a 1-port point is 3 (frequency and one complex value)"
        if not np.all(np.isfinite(values)):
            return f"{p} line {number}: {data!r} holds a value that is not a finite number"
    return None


def _lines(text: str) -> list[str]:
    """The file's lines as a reader opening it as text splits them (at LF, CR LF or a lone CR)."""
    return re.split(r"\r\n|\r|\n", text)


def _stripped_lines(text: str) -> list[tuple[int, str]]:
    """(line number, text without its comment ``!``) of each line that holds anything else."""
    out = []
    for number, line in enumerate(_lines(text), start=1):
        data = line.split("!", 1)[0].strip()
        if data:
            out.append((number, data))
    return out


def _data_lines(text: str) -> list[tuple[int, str]]:
    """(line number, text without its comment) of each data line: comments (``!``), the option line (``#``) and
    Touchstone 2's keyword lines (``[...]``) passed over.  A 1-port point takes one line."""
    return [(number, data) for number, data in _stripped_lines(text) if not data.startswith(("#", "["))]


def _check_reference(p: Path, text: str) -> None:
    """SweepError naming the line unless every reference resistance the file gives (the option line's ``R``,
    Touchstone 2's ``[Reference]``) is a number more than 0 ohm (scikit-rf turned R 0 into NaN and R -50 into
    infinities, and reported neither)."""
    for number, data in _stripped_lines(text):
        words = data.split()
        if data.startswith("#"):
            upper = [w.upper() for w in data[1:].split()]
            if "R" not in upper:
                continue
            i = upper.index("R")
            values = data[1:].split()[i + 1 : i + 2] or ["(none)"]
        elif data.lower().startswith("[reference]"):
            values = words[1:]
        else:
            continue
        for v in values:
            try:
                ok = float(v) > 0 and np.isfinite(float(v))
            except ValueError:
                ok = False
            if not ok:
                raise SweepError(
                    f"{p} line {number}: reference resistance {v} ohm ({data!r}): the reference resistance must be "
                    "more than 0 ohm (the analyser's, usually R 50)"
                )


def _check_points(p: Path, data: list[tuple[int, str]], f, s, z, r_ohm: float) -> None:
    """SweepError naming the line, the value and the range allowed for the first point whose frequency is not in
    (0, :data:`SWEEP_MAX_FREQ_HZ`], whose reflection |S| is over :data:`PASSIVE_S_MAX` (not a passive load), or whose
    impedance is 0 ohm (not a wire at its feed)."""

    def where(i: int) -> str:
        if len(data) == len(f):
            return f"{p} line {data[i][0]} ({data[i][1]!r})"
        return f"{p} point {i + 1}"

    bad = np.flatnonzero(~((f > 0) & (f <= SWEEP_MAX_FREQ_HZ)))
    if bad.size:
        i = int(bad[0])
        raise SweepError(
            f"{where(i)}: frequency {f[i] / 1e6:g} MHz; a sweep's points lie above 0 Hz and at most "
            f"{SWEEP_MAX_FREQ_HZ / 1e6:g} MHz: check the frequency column and its unit on the option line (# MHz ...)"
        )
    mag = np.abs(s)
    bad = np.flatnonzero(mag > PASSIVE_S_MAX)
    if bad.size:
        i = int(bad[0])
        raise SweepError(
            f"{where(i)}: reflection |S| {mag[i]:.3g} ({20 * np.log10(mag[i]):+.1f} dB) against R {r_ohm:g} ohm, "
            f"impedance {z[i].real:.4g}{z[i].imag:+.4g}j ohm; a passive wire reflects at most |S| 1 (0 dB; up to "
            f"{PASSIVE_S_MAX:g} is taken for the analyser's calibration error), its resistance is not negative: check "
            "the option line's parameter and format (S or Z; RI, MA or DB) and R"
        )
    bad = np.flatnonzero(z == 0)
    if bad.size:
        raise SweepError(
            f"{where(int(bad[0]))}: impedance 0 ohm; a wire at its feed never reads a dead short: "
            "check the analyser's connection and the file's format"
        )


def _is_number(word: str) -> bool:
    try:
        float(word)
    except ValueError:
        return False
    return True


def _extremes(f: np.ndarray, mag: np.ndarray):
    """Local minima and maxima of |Z| (parabolic refinement in log|Z| on three points): (freq, |Z|, is_max)."""
    y = np.log(mag)
    d = np.diff(y)
    turn = np.flatnonzero(np.sign(d[:-1]) != np.sign(d[1:])) + 1
    out = []
    for i in turn:
        y0, y1, y2 = y[i - 1], y[i], y[i + 1]
        den = y0 - 2 * y1 + y2
        if den == 0:
            continue
        shift = 0.5 * (y0 - y2) / den
        step = 0.5 * (f[i + 1] - f[i - 1])
        out.append((f[i] + shift * step, float(np.exp(y1 - 0.25 * (y0 - y2) * shift)), bool(den < 0)))
    return out


@record(frozen=False)
class SweepResult:
    label: str
    far_end: str
    extremes: list[dict] = field(default_factory=list)
    """Per extreme: freq_hz, z_magnitude_ohm, kind (least/greatest), m, velocity_factor."""
    z0_magnitude_ohm: float | None = None
    attenuation_db_per_100m: float | None = None
    variation: float | None = None
    """For a terminated far end: greatest over least |Z| over the sweep [-]."""
    reactance_share: float | None = None
    """Median |X|/|Z| at the extremes [-]: near 0 for a wire swept at its feed; large through a feed line."""
    warnings: list[str] = field(default_factory=list)

    @property
    def velocity_factor(self) -> float | None:
        v = [e["velocity_factor"] for e in self.extremes]
        return float(np.median(v)) if v else None

    def as_dict(self) -> dict:
        return {
            "file": self.label,
            "far_end": self.far_end,
            "extremes": self.extremes,
            "velocity_factor": self.velocity_factor,
            "z0_magnitude_ohm": self.z0_magnitude_ohm,
            "attenuation_db_per_100m": self.attenuation_db_per_100m,
            "variation": self.variation,
            "reactance_share_at_extremes": self.reactance_share,
            "warnings": self.warnings,
        }


def analyse(sweep: Sweep, *, length_m: float, far_end: str) -> SweepResult:
    """Velocity factor at each extreme, |Z0| and attenuation from an open or shorted sweep; the variation of a
    terminated one (module docstring)."""
    if far_end not in FAR_ENDS:
        raise SweepError(f"far_end must be one of {', '.join(FAR_ENDS)}; got {far_end!r}")
    if not length_m > 0:
        raise SweepError(f"length must be > 0 m; got {length_m!r}")
    res = SweepResult(sweep.label, far_end)
    mag = np.abs(sweep.z_ohm)
    if far_end == "terminated":
        res.variation = float(mag.max() / mag.min())
        return res
    ext = _extremes(sweep.freq_hz, mag)
    if len(ext) < 2:
        res.warnings.append(
            "fewer than two extremes of |Z| in the sweep: sweep wider (over at least a half wave of the wire) or finer"
        )
        return res
    fe = np.array([e[0] for e in ext])
    spacing = float(np.median(np.diff(fe)))
    least_parity = 1 if far_end == "open" else 0  # open: least |Z| at odd m; shorted: at even m
    for (f, z, is_max), _ in zip(ext, fe):
        parity = (1 - least_parity) if is_max else least_parity
        m = int(2 * np.round((f / spacing - parity) / 2) + parity)
        if m < 1:
            continue
        res.extremes.append(
            {
                "freq_hz": float(f),
                "z_magnitude_ohm": z,
                "kind": "greatest" if is_max else "least",
                "m": m,
                "velocity_factor": 4.0 * length_m * f / (m * C_M_PER_S),
            }
        )
    zs = np.array([e[1] for e in ext])
    kinds = np.array([e[2] for e in ext])
    prods, ratios = [], []
    for i in range(len(ext)):
        nb = [j for j in (i - 1, i + 1) if 0 <= j < len(ext) and kinds[j] != kinds[i]]
        if len(nb) == 2:
            prods.append(np.sqrt(zs[i] * np.sqrt(zs[nb[0]] * zs[nb[1]])))
        elif len(nb) == 1 and len(ext) == 2:
            prods.append(np.sqrt(zs[i] * zs[nb[0]]))
        if nb and kinds[i]:
            lo = np.sqrt(np.prod([zs[j] for j in nb])) if len(nb) == 2 else zs[nb[0]]
            ratios.append((np.arctanh(np.sqrt(min(lo / zs[i], 0.999999))), ext[i][0]))
    if prods:
        res.z0_magnitude_ohm = float(np.median(prods))
    if res.z0_magnitude_ohm is not None:
        problem = wire_z0_problem(res.z0_magnitude_ohm)
        if problem is not None and problem[0] == "refuse":
            raise SweepError(
                f"{sweep.label}: the sweep's extremes give {problem[1]}: the file's format or units are likely "
                f"wrong: {FORMAT_HINT}"
            )
        if problem is not None:
            res.warnings.append(
                f"the sweep's extremes give {problem[1]}: the file's format or units may be wrong: {FORMAT_HINT}"
            )
    if ratios:
        al = float(np.median([r[0] for r in ratios]))
        res.attenuation_db_per_100m = 100.0 * al / length_m * 20.0 / np.log(10.0)
    at = np.array([e["freq_hz"] for e in res.extremes])
    if at.size:
        zr = np.interp(at, sweep.freq_hz, sweep.z_ohm.real)
        zi = np.interp(at, sweep.freq_hz, sweep.z_ohm.imag)
        res.reactance_share = float(np.median(np.abs(zi) / np.hypot(zr, zi)))
        if res.reactance_share > REACTANCE_SHARE_WARN:
            res.warnings.append(
                f"at the extremes of |Z| the impedance is far from resistive (median |X|/|Z| "
                f"{res.reactance_share:.2f}; a wire swept at its own feed reads near 0): the sweep looks taken through "
                "a feed line, so its reference plane is not the wire's feed and the velocity factor and |Z0| are not "
                "the wire's; sweep at the feed point, or calibrate the analyser at the line's far end"
            )
    vfs = np.array([e["velocity_factor"] for e in res.extremes])
    if vfs.size and (vfs.max() > 1.0 or vfs.min() < 0.3):
        res.warnings.append(
            f"velocity factors from {vfs.min():.2f} to {vfs.max():.2f}: a wire's lie between about 0.5 and 1; was the "
            "sweep taken through a feed line (its reference plane is then not the wire's feed), or is the length "
            "wrong?"
        )
    return res


def wire_z0_problem(z0_ohm: float) -> tuple[str, str] | None:
    """("refuse", why) for a |Z0| no wire over ground has (over :data:`WIRE_Z0_MAX_OHM`), ("warn", why) for one
    outside :data:`WIRE_Z0_RANGE_OHM`, else None."""
    lo, hi = WIRE_Z0_RANGE_OHM
    span = f"{lo:g}-{hi:g} ohm"
    if not z0_ohm <= WIRE_Z0_MAX_OHM:
        return (
            "refuse",
            f"|Z0| {z0_ohm:.0f} ohm, more than any wire over ground has ({span}; over {WIRE_Z0_MAX_OHM:g} is refused)",
        )
    if z0_ohm > hi:
        return "warn", f"|Z0| {z0_ohm:.0f} ohm, more than a wire over ground has ({span})"
    if z0_ohm < lo:
        return (
            "warn",
            f"|Z0| {z0_ohm:.0f} ohm, less than a wire over ground has ({span}, one on wet soil or buried too)",
        )
    return None


def write_s1p(path: str | Path, freq_hz, z_ohm, *, z_ref: float = 50.0) -> None:
    """A Touchstone 1-port file (Hz, S, RI, reference ``z_ref``) of the impedances given; for examples and tests."""
    s = (np.asarray(z_ohm) - z_ref) / (np.asarray(z_ohm) + z_ref)
    lines = ["! 1-port sweep synthesised by snrgain", f"# Hz S RI R {z_ref:g}"]
    lines += [f"{f:.6f} {v.real:.9f} {v.imag:.9f}" for f, v in zip(freq_hz, s)]
    Path(path).write_text("\n".join(lines) + "\n")
