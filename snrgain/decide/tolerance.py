"""How much a phased array's figures rest on phasing lines cut exactly: the ``phasing-tolerance`` notice.

Arrays steered for the most RDF from a small footprint (the default four-square of verticals a fifth of a wavelength
apart) are superdirective: their rear null and part of their RDF come from nearly cancelling the elements' signals,
and small errors in the delays undo it.  The sensitivity of such arrays to random errors is textbook (E. N. Gilbert
and S. P. Morgan, "Optimum design of directive antenna arrays subject to random variations", Bell System Technical
Journal 34, 1955, cited from memory); here it is measured on the array itself, as built:

- the figures are read toward the array's bearing at its aiming elevation where auto steering aimed it there, else
  (given weights, or weights set for SNR toward a target) toward its main lobe at that elevation;
- each phasing line is cut by a velocity factor VELOCITY_FACTOR_ERROR off (1 sigma; one error for all of them: the
  lines come from one reel; the spread between cables sold as one type is a few percent, common practice), and
  each line's own length is off by LENGTH_ERROR_M of cable (cutting and connectors; 1 sigma); a phase given in
  degrees is taken as a line's delay too (a phase-reversing transformer instead has no such error: the figures
  then err on the cautious side);
- the array's delays (:meth:`snrgain.antennas.array.Array.effective_delays_s`) move by those errors in DRAWS random
  draws (normal, a fixed seed: the same numbers every run), and its RDF and front-to-back toward its bearing at its
  aiming elevation are worked for each (the RDF over the HEALPix hemisphere of NSIDE);
- the notice is given where one build in ten (the draws' 10 % point) loses RDF_LOSS_DB or more of RDF, or loses
  FRONT_TO_BACK_LOSS_DB or more of front-to-back and keeps less than FRONT_TO_BACK_KEPT_DB (snrgain's thresholds: a
  rear null steered to be exact always loses depth, but one that keeps 15 dB still does its work);
- where phase-reversing transformers giving some elements their 180 deg shorten the longest line to under three
  quarters of it, the same is worked for that build (the trade's way with a four-square, common practice): the
  warning says what it keeps.  Front-to-back is
  read up to FRONT_TO_BACK_CAP_DB: an exact null says "over 40 dB", a depth no real array holds across its elements'
  differences.

The fix the notice names is the trade's: trim each line to its electrical length measured at the operating frequency
rather than cut it by the printed velocity factor (common practice).
"""

from __future__ import annotations

import numpy as np

from noisemodels.sphere import upper_hemisphere
from snrgain.model.results import Notice
from snrgain.model.snr import sphere_mean_gain
from snrgain.physics.ground import C_M_PER_S

VELOCITY_FACTOR_ERROR = 0.03
"""Relative error of the velocity factor the lines are cut by, one for all lines (1 sigma) [-]."""
LENGTH_ERROR_M = 0.1
"""Each line's own error in length, as cable (1 sigma) [m]."""
CUT_VELOCITY_FACTOR = 0.85
"""Velocity factor turning LENGTH_ERROR_M into time (foam coax, the usual phasing cable; common practice) [-]."""
DRAWS = 64
NSIDE = 16
RDF_LOSS_DB = 1.0
FRONT_TO_BACK_LOSS_DB = 6.0
FRONT_TO_BACK_KEPT_DB = 15.0
FRONT_TO_BACK_CAP_DB = 40.0
QUANTILES = (0.1, 0.5, 0.9)
SHORTER = 0.5
"""Phase-reversing transformers are offered, by the phasing-tolerance warning and on the build sheet alike
(:func:`shortened_lines_s`), where they bring the longest line to at most this share of its length (a four-square's
180 and 270 deg elements: common practice)."""


def line_errors_s(delays_s: np.ndarray, draws: int = DRAWS, seed: int = 0) -> np.ndarray:
    """Errors of each line's delay [s], shape (draws, elements): the velocity factor's, common to all lines and
    proportional to each delay, plus each line's own length error (module docstring)."""
    rng = np.random.default_rng(seed)
    scale = rng.normal(0.0, VELOCITY_FACTOR_ERROR, size=(draws, 1))
    own = rng.normal(0.0, LENGTH_ERROR_M / (CUT_VELOCITY_FACTOR * C_M_PER_S), size=(draws, len(delays_s)))
    return scale * np.asarray(delays_s)[None, :] + own


def front_of(antenna, freq_hz: float) -> tuple[float, float]:
    """(bearing, elevation) [rad] an array's figures are read toward (snrgain.antennas.array.Array.front)."""
    return antenna.front(freq_hz)


def figures(antenna, freq_hz: float, weights=None, front=None) -> tuple[float, float]:
    """(RDF [dB], front-to-back [dB]) of a phased array toward ``front`` ((bearing, elevation) [rad]; default
    :func:`front_of`), with ``weights`` in place of its own (None: its own).  An array beside the transmitting
    vertical or a structure has its weights turned on the array itself and the scatterers' re-radiation worked
    again for them (snrgain.model.scatter.beside)."""
    from snrgain.model.scatter import bare, beside

    ant = antenna
    if weights is not None:
        turned = bare(antenna).with_weights(freq_hz, weights, "phasing tolerance")
        ant = turned if bare(antenna) is antenna else beside(turned, antenna.scatterers)
    grid = upper_hemisphere(NSIDE)
    b, el = front_of(antenna, freq_hz) if front is None else front
    az = np.concatenate([grid.azimuth_rad, [b, b + np.pi]])
    els = np.concatenate([grid.elevation_rad, [el, el]])
    g = ant.gain_linear(freq_hz, az, els)
    front, back = g[-2], g[-1]
    mean = sphere_mean_gain(g[:-2], grid)
    with np.errstate(divide="ignore"):
        return float(10 * np.log10(front / mean)), float(10 * np.log10(front / back))


def _quantiles(values) -> np.ndarray:
    """np.quantile(values, QUANTILES)'s numbers (linear between order statistics) without its import of numpy.ma (a
    warm rank keeps clear of it: tests/test_light_start.py)."""
    v = np.sort(np.asarray(values, dtype=float))
    return np.interp(np.asarray(QUANTILES) * (v.size - 1), np.arange(v.size), v)


def reversed_lines_s(delays_s, freq_hz: float) -> np.ndarray:
    """The lines' delays [s] where phase-reversing transformers give any element its 180 deg: each delay taken
    modulo half a period, and the common start moved to the widest gap between them, so the longest line is as
    short as it can be (the trade's way with a four-square's 180 and 270 deg elements, common practice): what is
    left of each delay then lies under half a period."""
    half = 0.5 / freq_hz
    r = np.mod(np.asarray(delays_s, dtype=float), half)
    s = np.sort(r)
    gaps = np.diff(np.concatenate([s, [s[0] + half]]))
    start = s[(int(np.argmax(gaps)) + 1) % s.size]
    out = np.mod(r - start, half)
    return np.where(out > half - 1e-15, 0.0, out)  # rounding at the wrap


def shortened_lines_s(delays_s, freq_hz: float) -> np.ndarray | None:
    """:func:`reversed_lines_s` where they bring the longest line to at most SHORTER of the plain build's; None
    where they do not (or there is nothing to shorten): the one test of whether transformers are offered."""
    d = np.asarray(delays_s, dtype=float)
    if d.size < 2 or not d.max() > 0:
        return None
    lines = reversed_lines_s(d, freq_hz)
    return lines if lines.max() <= SHORTER * d.max() * (1 + 1e-12) else None


def _drawn(antenna, freq_hz: float, delays_s, front) -> tuple[np.ndarray, np.ndarray]:
    """The 10, 50 and 90 % points of RDF and of front-to-back (capped) over the draws of errors of lines of
    ``delays_s``, every draw at once (:func:`_figures_of_weights`)."""
    w0 = antenna.weights_at(freq_hz)
    omega = 2 * np.pi * freq_hz
    weights = w0[None, :] * np.exp(-1j * omega * line_errors_s(delays_s))  # (draws, elements)
    rdf, fb = _figures_of_weights(antenna, freq_hz, weights, front)
    return _quantiles(rdf), _quantiles(np.minimum(fb, FRONT_TO_BACK_CAP_DB))


def _figures_of_weights(antenna, freq_hz: float, weights: np.ndarray, front) -> tuple[np.ndarray, np.ndarray]:
    """(RDF [dB], front-to-back [dB]) for each row of ``weights`` (draws, elements), as :func:`figures` gives them
    one by one.  The array's response is linear in its weights over sqrt(w^H Q w), the transmitting vertical's
    re-radiation included (it re-radiates what the array's elements hear): each element's own response, the
    array's with that element's unit weight (times sqrt(Q_ii)), serves every draw
    (snrgain.model.steering.element_responses_standing, as the steering reads them)."""
    from snrgain.model.scatter import bare
    from snrgain.model.steering import element_responses_standing

    grid = upper_hemisphere(NSIDE)
    b, el = front
    az = np.concatenate([grid.azimuth_rad, [b, b + np.pi]])
    els = np.concatenate([grid.elevation_rad, [el, el]])
    q = bare(antenna).norm_matrix(freq_hz)
    rv, rh = element_responses_standing(antenna, freq_hz, az, els)  # (elements, directions)
    norm = np.real(np.einsum("di,ij,dj->d", weights.conj(), q, weights))
    ev, eh = np.einsum("di,in->dn", weights, rv), np.einsum("di,in->dn", weights, rh)
    g = (ev.real**2 + ev.imag**2 + eh.real**2 + eh.imag**2) / norm[:, None]
    mean = g[:, :-2] @ grid.solid_angle_sr / (4 * np.pi)
    with np.errstate(divide="ignore"):
        return 10 * np.log10(g[:, -2] / mean), 10 * np.log10(g[:, -2] / g[:, -1])


def _sigma_s(longest_s: float) -> float:
    return float(np.hypot(VELOCITY_FACTOR_ERROR * longest_s, LENGTH_ERROR_M / (CUT_VELOCITY_FACTOR * C_M_PER_S)))


def tolerance(antenna, freq_hz: float) -> dict | None:
    """The array's RDF and front-to-back as steered and their 10, 50 and 90 % points over the draws of
    :func:`line_errors_s` on its lines as the build sheet gives them (the longest line's delay and its 1-sigma
    error too), and where phase-reversing transformers bring the longest line to SHORTER of its length, the same
    with them (``reversed``: :func:`shortened_lines_s`); None for an antenna without phasing lines (not an array of
    at least two elements fed through delays)."""
    if getattr(antenna, "composite", False) or not hasattr(antenna, "effective_delays_s"):
        return None
    if len(getattr(antenna, "elements", ())) < 2:
        return None
    delays = antenna.effective_delays_s(freq_hz)
    front = front_of(antenna, freq_hz)
    rdf0, fb0 = figures(antenna, freq_hz, front=front)
    rdf_q, fb_q = _drawn(antenna, freq_hz, delays, front)
    out = {
        "bearing_deg": float(np.degrees(front[0])) % 360.0,
        "elevation_deg": float(np.degrees(front[1])),
        "freq_hz": float(freq_hz),
        "rdf_db": rdf0,
        "front_to_back_db": min(fb0, FRONT_TO_BACK_CAP_DB),
        "rdf_drawn_db": [float(x) for x in rdf_q],
        "front_to_back_drawn_db": [float(x) for x in fb_q],
        "longest_delay_ns": float(np.max(delays)) * 1e9,
        "longest_error_ns": _sigma_s(float(np.max(delays))) * 1e9,
        "velocity_factor_error": VELOCITY_FACTOR_ERROR,
        "length_error_m": LENGTH_ERROR_M,
        "draws": DRAWS,
        "reversed": None,
    }
    short = shortened_lines_s(delays, freq_hz)
    if short is not None:
        rdf_r, fb_r = _drawn(antenna, freq_hz, short, front)
        out["reversed"] = {
            "longest_delay_ns": float(np.max(short)) * 1e9,
            "rdf_drawn_db": [float(x) for x in rdf_r],
            "front_to_back_drawn_db": [float(x) for x in fb_r],
        }
    return out


def asks_for_precision(t: dict, drawn: dict | None = None) -> bool:
    """Whether one build in ten (the draws' 10 % point) loses RDF_LOSS_DB of RDF, or loses FRONT_TO_BACK_LOSS_DB of
    front-to-back and keeps less than FRONT_TO_BACK_KEPT_DB: of the lines as the build sheet gives them, or of the
    draws ``drawn`` (``t["reversed"]``) against the same figures as steered."""
    d = t if drawn is None else drawn
    rdf_loss = t["rdf_db"] - d["rdf_drawn_db"][0]
    fb_kept = d["front_to_back_drawn_db"][0]
    return rdf_loss >= RDF_LOSS_DB or (
        t["front_to_back_db"] - fb_kept >= FRONT_TO_BACK_LOSS_DB and fb_kept < FRONT_TO_BACK_KEPT_DB
    )


def severity(values: dict) -> tuple:
    """How hard a ``phasing-tolerance`` notice's array asks (the RDF one build in ten loses, then its front-to-back):
    of a switched array's states the one shown (snrgain.decide.decisions.by_switched_antenna)."""
    return (
        round(values["rdf_db"] - values["rdf_drawn_db"][0], 2),
        values["front_to_back_db"] - values["front_to_back_drawn_db"][0],
    )


def phasing_tolerance_notices(sc) -> list[Notice]:
    """``phasing-tolerance`` (the values of :func:`tolerance`) for each candidate array whose figures rest on its
    phasing lines cut closer than a cable's velocity factor is known (:func:`asks_for_precision`), each state of a
    switched one (said once by snrgain.decide.decisions.by_switched_antenna, by :func:`severity` among the states
    the plan builds).  ``reversed_keeps`` says whether the build with phase-reversing transformers keeps its figures
    (it does not ask for precision)."""
    out: list[Notice] = []
    for ant in sc.candidates:
        t = tolerance(ant, sc.freq_hz)
        if t is None or not asks_for_precision(t):
            continue
        t["reversed_keeps"] = t["reversed"] is not None and not asks_for_precision(t, t["reversed"])
        out.append(Notice("phasing-tolerance", ant.name, t))
    return out


__all__ = [
    "FRONT_TO_BACK_CAP_DB",
    "asks_for_precision",
    "figures",
    "front_of",
    "line_errors_s",
    "phasing_tolerance_notices",
    "reversed_lines_s",
    "severity",
    "tolerance",
]
