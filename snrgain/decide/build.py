"""The build sheet: the values a builder cuts, winds and solders, per candidate.

Resistors are rounded to the nearest value of the E12 series of preferred
numbers (IEC 60063), the series most shops stock; the table gives both the
computed and the standard value.  Phasing delays are given in nanoseconds and
as the length of coaxial cable that delays that much, length = delay x
velocity factor x c, with the velocity factor from snrgain's cable table for
the cable the antenna's feed line uses, else :data:`DEFAULT_PHASING_CABLE`.
Transformer turns ratios are the antenna side over the coax side.

A switched antenna (``directions``) has one sheet per state (its bearing, its delays) and one switching table for
the antenna (:func:`switching`): the relays that select each state, coded so that stepping to the next state in
the order written moves one relay (a reflected binary, Gray, code: ceil(log2 N) relays for N states), and for an
array the phasing lines each state switches in behind each element.
"""

from __future__ import annotations

import numpy as np

from snrgain.physics.chain import cable_by_name
from snrgain.physics.ground import C_M_PER_S
from snrgain.tools import wiredesign
from snrgain.units import FT_PER_M

E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)
"""The E12 series of preferred numbers (IEC 60063)."""
DEFAULT_PHASING_CABLE = "RG-6"
"""Cable assumed for phasing lines when the antenna's chain names none (75 ohm, foam: common for receiving
arrays, common practice)."""


def nearest_standard_ohm(ohm: float, series=E12) -> float:
    """The value of a preferred-number series nearest to ``ohm`` (on a logarithmic scale) [ohm].

    >>> nearest_standard_ohm(528.0), nearest_standard_ohm(183.0), nearest_standard_ohm(0.0)
    (560.0, 180.0, 0.0)
    """
    if not ohm > 0:
        return 0.0
    decade = 10.0 ** np.floor(np.log10(ohm))
    candidates = [v * decade * f for v in series for f in (0.1, 1.0, 10.0)]
    return float(round(min(candidates, key=lambda v: abs(np.log(v / ohm))), 6))


def coax_length_m(delay_s: float, velocity_factor: float) -> float:
    """Length of coax [m] that delays a signal by ``delay_s`` [s]: delay x velocity factor x c."""
    return float(delay_s * velocity_factor * C_M_PER_S)


def build_sheet(antenna, freq_hz: float, *, cable: str | None = None) -> dict:
    """What to build for ``antenna`` at ``freq_hz`` (SI units in the keys; family-specific entries)."""
    out: dict = {"family": antenna.family}
    d = antenna.describe()
    for key in (
        "length_m",
        "height_m",
        "bearing_deg",
        "width_m",
        "loop_height_m",
        "shape",
        "spacing_m",
        "depth_m",
        "ground_loss_ohm",
        "top_loading_m",
        "turns",
        "port",
        "position_m",
    ):
        if key in d:
            out[key] = d[key]
    if "length_m" in out:
        out["length_ft"] = out["length_m"] * FT_PER_M
    if getattr(antenna, "both_ways", False):  # a figure-eight: its bearing is its plane
        out["both_ways"] = True
    if hasattr(antenna, "termination_ohm"):
        term = antenna.termination_ohm(freq_hz)
        if term is not None:
            out["termination_ohm"] = float(term)
            out["termination_standard_ohm"] = nearest_standard_ohm(term)
            # The one answer (wiredesign.termination_answer, which `wire` prints too): the resistor of the
            # antenna's criterion with |Z0|, the dB between, how flat the optimum is and the cautions.
            answer = wiredesign.termination_answer(antenna, freq_hz, curve=True)
            if answer is not None:
                out["termination_answer"] = answer.to_dict()
                out["termination_given"] = (
                    getattr(antenna.params, "termination", "auto") != "auto" and antenna.sky_termination is None
                )
            if hasattr(antenna, "far_rod_ohm"):
                out["far_ground_ohm"] = float(antenna.far_rod_ohm)
    if hasattr(antenna, "feed_rod_ohm"):
        out["feed_ground_ohm"] = float(antenna.feed_rod_ohm)
    if hasattr(antenna, "line") and hasattr(antenna, "length_m"):
        ln = antenna.line(freq_hz)
        out["velocity_factor"] = ln.velocity_factor
        out["z0_magnitude_ohm"] = float(abs(ln.z0))
        # The wire's loss end to end: above 20 dB what the far end reflects returns 40 dB down, so the
        # termination hardly matters (the build sheet says so).
        out["end_to_end_loss_db"] = float(ln.attenuation_db_per_100m * antenna.length_m / 100.0)
    if hasattr(antenna, "turns_ratio") and hasattr(antenna, "feed_point_impedance"):
        tr = wiredesign.transformer(antenna, freq_hz)
        z = tr.feed_point_impedance_ohm
        out.update(
            feed_point_impedance_ohm=[float(z.real), float(z.imag)],
            coax_ohm=tr.coax_ohm,
            turns_ratio=tr.chosen_turns_ratio,
            mismatch_loss_db=tr.chosen_mismatch_loss_db,
            practical_turns_ratio=tr.practical_turns_ratio,
            practical_mismatch_loss_db=tr.practical_mismatch_loss_db,
        )
    for key in ("feed", "line_impedance_ohm", "feed_impedances_ohm", "current_magnitudes", "current_lags_deg"):
        if key in d:
            out[key] = d[key]
    if antenna.composite:
        out.update(antennas=d.get("antennas"), setting=d.get("setting"))
    elif hasattr(antenna, "effective_delays_s"):
        name = cable or DEFAULT_PHASING_CABLE
        vf = cable_by_name(name).velocity_factor
        delays = antenna.effective_delays_s(freq_hz)
        out.update(
            positions_m=d.get("positions_m"),
            amplitudes=d.get("amplitudes"),
            delays_ns=[float(t * 1e9) for t in delays],
            phasing_cable=name,
            phasing_cable_velocity_factor=vf,
            phasing_lengths_m=[coax_length_m(t, vf) for t in delays],
        )
        out["phasing_lengths_ft"] = [x * FT_PER_M for x in out["phasing_lengths_m"]]
        short = reversed_build(delays, freq_hz, vf)
        if short is not None:
            out["reversed_build"] = short
        given = getattr(antenna, "given_lines", None)
        if given and any(given) and not antenna.optimised and min(t for t, _, _ in antenna.weights) >= 0:
            # the user's own line where an element was given one alone: its length repeated, and the other elements'
            # delays as written (not shifted to start at 0, so the lines given stay the lines built)
            raw = np.array([t + p / (2 * np.pi * freq_hz) for t, p, _ in antenna.weights])
            out.update(
                delays_ns=[float(t * 1e9) for t in raw],
                phasing_lengths_m=[coax_length_m(t, vf) for t in raw],
                given_lines=[None if g is None else {"length_m": g[0], "velocity_factor": g[1]} for g in given],
            )
            out["phasing_lengths_ft"] = [x * FT_PER_M for x in out["phasing_lengths_m"]]
    from snrgain.scenario.switched import switched_state

    sw = switched_state(antenna)
    if sw is not None:
        out["switched"] = {"group": sw.group, "state": sw.state, "bearing_deg": sw.bearing_deg, "how": sw.how}
    return out


def reversed_build(delays_s, freq_hz: float, velocity_factor: float) -> dict | None:
    """The same phasing built with phase-reversing transformers (each giving its element 180 deg) and short lines
    (snrgain.decide.tolerance.reversed_lines_s): ``reversed`` per element, ``delays_ns`` and ``phasing_lengths_m``
    of the lines; None where it does not shorten the longest line to tolerance.SHORTER of the plain build's (the
    phasing-tolerance warning's own test, :func:`snrgain.decide.tolerance.shortened_lines_s`)."""
    from snrgain.decide.tolerance import shortened_lines_s

    d = np.asarray(delays_s, dtype=float)
    lines = shortened_lines_s(d, freq_hz)
    if lines is None:
        return None
    half = 0.5 / freq_hz
    shift = np.mod(d[0] - lines[0], half)  # the common start the short lines are counted from
    turns = np.rint((d - lines - shift) / half).astype(int) % 2 == 1  # the half periods left of each: 180 deg
    if turns.sum() > turns.size / 2:  # reversing every element changes nothing: the fewer transformers
        turns = ~turns
    return {
        "reversed": [bool(t) for t in turns],
        "delays_ns": [float(t * 1e9) for t in lines],
        "phasing_lengths_m": [coax_length_m(t, velocity_factor) for t in lines],
    }


LINE_TOLERANCE_NS = 0.5
"""Delays closer than this share one phasing line on a switched array's sheet [ns] (0.5 ns is about 10 cm of foam
coax, below what a builder cuts to)."""

SWITCH_HOW = {
    "steered": "each state the array's delays toward its bearing",
    "turned": "each state the antenna set for its bearing (for the opposite bearing, feed and termination swap sides)",
    "ends": "the feed and the termination swap ends of the one wire (a relay at each end, a feed line to the far end)",
    "port": "the receiver switched between the forward and the reverse port of the one line",
}
"""How the states of a switched antenna differ, in words (snrgain.scenario.antennas.SwitchedState.how)."""


def gray_code(index: int, relays: int) -> list[int]:
    """The relays energised (1) for state ``index``: the reflected binary code of ``index``, first relay first.

    >>> [gray_code(i, 2) for i in range(4)]
    [[0, 0], [0, 1], [1, 1], [1, 0]]
    """
    g = index ^ (index >> 1)
    return [(g >> (relays - 1 - k)) & 1 for k in range(relays)]


def switching(states) -> dict:
    """The switching of one switched antenna, from its states' results (AntennaResult with ``build`` and ``state``,
    in the order written): the relays per state and, for an array, the phasing lines each element takes per state
    (lines of one length shared, :data:`LINE_TOLERANCE_NS`)."""
    n = len(states)
    relays = max(1, int(np.ceil(np.log2(n))))
    how = states[0].build.get("switched", {}).get("how", "turned")
    out: dict = {"states": [], "relays": relays, "how": how, "how_text": SWITCH_HOW.get(how, how)}
    delays = [s.build.get("delays_ns") for s in states]
    lines: list[float] = []
    if all(d is not None for d in delays):
        for d in delays:
            for t in d:
                if not any(abs(t - x) < LINE_TOLERANCE_NS for x in lines):
                    lines.append(float(t))
        lines.sort()
        vf = states[0].build["phasing_cable_velocity_factor"]
        out.update(
            phasing_cable=states[0].build["phasing_cable"],
            lines_ns=lines,
            lines_m=[coax_length_m(t * 1e-9, vf) for t in lines],
        )
    for k, s in enumerate(states):
        row = {
            "state": s.state,
            "antenna": s.name,
            "bearing_deg": s.build.get("switched", {}).get("bearing_deg", s.build.get("bearing_deg")),
            "relays_on": [i + 1 for i, on in enumerate(gray_code(k, relays)) if on],
        }
        if lines:
            row["element_lines"] = [
                1 + min(range(len(lines)), key=lambda j, t=t: abs(lines[j] - t)) for t in s.build["delays_ns"]
            ]
        if "port" in s.build:
            row["port"] = s.build["port"]
        if how == "ends" and "position_m" in s.build:
            row["feed_at_m"] = s.build["position_m"]
        out["states"].append(row)
    return out
