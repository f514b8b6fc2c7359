"""The receiving chain from the antenna terminals to the receiver.

Stages, in order: matching transformer (a loss), feed line (its matched loss
at the frequency), an optional preamplifier at the antenna end or at the
receiver end, the receiver (noise figure, or a measured noise floor).  Every
passive stage is at T0 = 290 K, so a loss factor L has noise factor L and
gain 1/L.  The cascade follows H. T. Friis, "Noise figures of radio
receivers", Proc. IRE 32(7), 419 (1944):

    F = F1 + (F2 - 1) / G1 + (F3 - 1) / (G1 G2) + ...,

and the chain adds T_chain = T0 (F - 1) referred to the antenna terminals.
The system noise factor of Recommendation ITU-R P.372, Section 2,
f = fa + (fc - 1) + lc (ft - 1) + lc lt (fr - 1), is the same sum written
from the antenna's side with external noise fa (see :func:`system_noise_factor`).

Cable losses: matched loss per 100 ft modelled as k1 sqrt(f_MHz) + k2 f_MHz
(conductor and dielectric terms), with k1, k2 set from typical attenuation
of the generic cable types at 1 and 10 MHz: values of the kind amateur
handbooks tabulate, recalled and not verified against any datasheet, so
snrgain's own assumption (give a measured or datasheet loss where it
matters).  Or from the cable's
geometry: :func:`coax_loss_from_geometry` (skin-effect conductor loss plus
dielectric loss, textbook forms).
"""

from __future__ import annotations

import numpy as np

from noisemodels.p372 import T0_K
from snrgain.physics.ground import C_M_PER_S, MU0_H_PER_M
from snrgain.records import record
from snrgain.units import FT_PER_M


@record
class Cable:
    """A coaxial cable type: impedance and loss coefficients (dB per 100 ft = k1 sqrt(f) + k2 f, f in MHz)."""

    name: str
    impedance_ohm: float
    k1: float
    k2: float
    velocity_factor: float

    def loss_db_per_100ft(self, freq_hz):
        f = np.asarray(freq_hz, dtype=float) / 1e6
        return self.k1 * np.sqrt(f) + self.k2 * f

    def loss_db(self, freq_hz, length_m):
        return self.loss_db_per_100ft(freq_hz) * length_m * FT_PER_M / 100.0


def _two_point(name, z, loss_1mhz, loss_10mhz, vf):
    # Solve k1 + k2 = L1 and k1 sqrt(10) + 10 k2 = L10 for the two coefficients.
    a = np.array([[1.0, 1.0], [np.sqrt(10.0), 10.0]])
    k1, k2 = np.linalg.solve(a, [loss_1mhz, loss_10mhz])
    return Cable(name, z, float(k1), float(k2), vf)


CABLES: dict[str, Cable] = {
    # generic type: impedance, typical matched loss dB/100 ft at 1 MHz and 10 MHz, velocity factor (recalled, not
    # verified against datasheets: snrgain's assumption)
    "RG-58": _two_point("RG-58", 50, 0.33, 1.2, 0.66),
    "RG-8X": _two_point("RG-8X", 50, 0.28, 1.0, 0.78),
    "RG-213": _two_point("RG-213", 50, 0.16, 0.6, 0.66),
    "RG-59": _two_point("RG-59", 75, 0.33, 1.1, 0.66),
    "RG-6": _two_point("RG-6", 75, 0.20, 0.6, 0.83),
    "RG-11": _two_point("RG-11", 75, 0.13, 0.4, 0.83),
}


def cable_by_name(name: str) -> Cable:
    try:
        return CABLES[name]
    except KeyError:
        valid = ", ".join(repr(k) for k in CABLES)
        raise ValueError(f"cable must be one of {valid}, or give the feed line's loss; got {name!r}") from None


def coax_loss_from_geometry(
    freq_hz,
    *,
    inner_diameter_m,
    dielectric_diameter_m,
    permittivity,
    loss_tangent=2e-4,
    conductivity_s_per_m=5.8e7,
    shield_factor=1.5,
):
    """Matched loss of a coaxial line from its geometry [dB/m], and its Z0 [ohm].

    Conductor loss alpha_c = R' / (2 Z0), R' = R_s (1/(pi d) + k_s/(pi D)), R_s = sqrt(pi f mu0 / sigma),
    the shield's braid raising its resistance by k_s; dielectric loss alpha_d = pi f sqrt(eps_r) tan(delta) / c;
    Z0 = (60 / sqrt(eps_r)) ln(D/d).  Textbook forms (e.g. Ramo, Whinnery and Van Duzer, Section 5.11).
    """
    f = np.asarray(freq_hz, dtype=float)
    d, big_d = inner_diameter_m, dielectric_diameter_m
    if not big_d > d > 0:
        raise ValueError("the dielectric diameter must exceed the inner conductor's")
    z0 = 60.0 / np.sqrt(permittivity) * np.log(big_d / d)
    rs = np.sqrt(np.pi * f * MU0_H_PER_M / conductivity_s_per_m)
    r = rs * (1 / (np.pi * d) + shield_factor / (np.pi * big_d))
    alpha = r / (2 * z0) + np.pi * f * np.sqrt(permittivity) * loss_tangent / C_M_PER_S
    return alpha * 20 / np.log(10), z0


@record
class Stage:
    """One stage of the chain: power gain (linear) and noise factor (linear)."""

    name: str
    gain: float
    noise_factor: float


def passive(name: str, loss_db: float) -> Stage:
    """A matched passive loss at T0: gain 1/L, noise factor L."""
    if loss_db < 0:
        raise ValueError(f"{name}: a loss must be >= 0 dB, got {loss_db!r}")
    lin = 10 ** (loss_db / 10)
    return Stage(name, 1 / lin, lin)


def amplifier(name: str, *, gain_db: float, noise_figure_db: float) -> Stage:
    return Stage(name, 10 ** (gain_db / 10), 10 ** (noise_figure_db / 10))


def friis(stages: list[Stage]) -> tuple[float, float]:
    """(total noise factor, total gain), both linear, of stages in order (Friis 1944)."""
    f_total, g_total = 1.0, 1.0
    for i, st in enumerate(stages):
        f_total = st.noise_factor if i == 0 else f_total + (st.noise_factor - 1) / g_total
        g_total *= st.gain
    return f_total, g_total


def system_noise_factor(fa, *, lc=1.0, lt=1.0, fr):
    """ITU-R P.372 Section 2: f = fa + (lc - 1) + lc (lt - 1) + lc lt (fr - 1), all linear.

    fa external noise factor, lc antenna circuit loss, lt transmission line loss, fr receiver noise factor,
    every loss at the reference temperature T0.
    """
    return fa + (lc - 1) + lc * (lt - 1) + lc * lt * (fr - 1)


@record
class Chain:
    """The stages and what follows from them, referred to the antenna terminals."""

    stages: tuple[Stage, ...]
    preamp_index: int | None = None
    cable: str | None = None
    """The feed line's cable type, where the chain names one (for phasing lines cut from the same cable)."""
    length_m: float | None = None
    """The feed line's length [m], where the chain gives its cable and length (not its loss alone)."""

    @property
    def noise_factor(self) -> float:
        return friis(list(self.stages))[0]

    @property
    def gain(self) -> float:
        return friis(list(self.stages))[1]

    @property
    def temperature_k(self) -> float:
        """Noise added by the chain referred to the antenna terminals, T0 (F - 1) [K]."""
        return T0_K * (self.noise_factor - 1)

    def with_preamp_gain(self, gain_db: float) -> Chain:
        if self.preamp_index is None:
            raise ValueError("the chain has no preamplifier")
        st = list(self.stages)
        p = st[self.preamp_index]
        st[self.preamp_index] = Stage(p.name, 10 ** (gain_db / 10), p.noise_factor)
        return Chain(tuple(st), self.preamp_index, self.cable, self.length_m)

    def preamp_gain_for_margin(self, antenna_temperature_k: float, margin_db: float) -> float | None:
        """The preamplifier gain [dB] that brings T_A / (T0 F) to ``margin_db``; None if unreachable.

        The margin is the external noise over the chain's floor, both at the antenna terminals.  If the
        chain already meets it, 0 dB.  F decreases with the preamp gain toward F_before + (F_p - 1)/G_before.
        """
        return _preamp_rule(self)(antenna_temperature_k, margin_db)


def _around_preamp(chain: Chain) -> tuple[float, float, float]:
    """(G_b, F_a, F_lim) of a chain with a preamplifier, by Friis's formula: the gain of the stages before it, the
    noise factor of those after it, and the noise factor the chain tends to as the preamplifier's gain grows,
    F_b + (F_p - 1) / G_b (F_p alone with nothing before it)."""
    before = list(chain.stages[: chain.preamp_index])
    after = list(chain.stages[chain.preamp_index + 1 :])
    f_b, g_b = friis(before) if before else (1.0, 1.0)
    f_a = friis(after)[0] if after else 1.0
    f_p = chain.stages[chain.preamp_index].noise_factor
    return g_b, f_a, (f_b if before else f_p) + ((f_p - 1) / g_b if before else 0.0)


def _preamp_rule(chain: Chain):
    """rule(T_A, margin_db) -> :meth:`Chain.preamp_gain_for_margin`: what depends on the chain alone (its noise
    factor at 0 dB of preamplifier gain, the floor the gain tends to, the stages' gains and factors around the
    preamplifier) worked once, for a noise budget's every month and hour; the same steps in the same order."""
    if chain.preamp_index is None:
        raise ValueError("the chain has no preamplifier")
    f_zero = chain.with_preamp_gain(0.0).noise_factor
    g_b, f_a, floor = _around_preamp(chain)

    def rule(antenna_temperature_k: float, margin_db: float) -> float | None:
        need_f = antenna_temperature_k / (T0_K * 10 ** (margin_db / 10))
        if f_zero <= need_f:
            return 0.0
        denom = g_b * (need_f - floor)
        if denom <= 0:
            return None
        g_p = (f_a - 1) / denom
        return float(max(10 * np.log10(g_p), 0.0)) if g_p > 0 else 0.0

    return rule


BEST_EFFORT_SHORT_DB = 0.5
"""Where no preamplifier gain brings the margin to the target, the gain suggested brings the chain's noise factor
within this of what the preamplifier tends to at unlimited gain [dB]: more gain buys at most this much."""


BEST_EFFORT_GAINS_DB = 0.1
"""A best-effort preamplifier is offered only where it lowers the worst hour's SNR loss by more than this [dB]."""


@record
class BestEffortPreamp:
    """The preamplifier to fit where none reaches the margin target: its gain [dB], where it goes ("receiver",
    "antenna", "as placed"), and the receiver's SNR loss with it [dB] (per month and hour, as the budget's)."""

    gain_db: float
    position: str
    snr_loss_db: np.ndarray


def best_effort_preamp(chain: Chain, antenna_temperature_k) -> BestEffortPreamp | None:
    """The preamplifier that comes within BEST_EFFORT_SHORT_DB of the lowest noise factor a preamplifier can give the
    chain (its own, or a suggested one of SUGGESTED_PREAMP_NOISE_FIGURE_DB before the receiver, or at the antenna where
    that tends to a noise factor more than BEST_EFFORT_SHORT_DB lower: a lossy feed line ahead): by Friis's formula
    (H. T. Friis, Proc. IRE 32, 1944) the noise factor with gain G is F_b + (F_p - 1) / G_b + (F_a - 1) / (G_b G),
    within a factor 10^(0.05) of its limit where (F_a - 1) / (G_b G) = F_lim (10^(0.05) - 1).  What it recovers is the
    SNR loss with it against the chain's own (``receiver_snr_loss_db`` of the noise budget).  The chain's own
    preamplifier is never turned down (its gain or the one found, whichever is higher); None where the preamplifier
    does not lower the worst hour's loss by BEST_EFFORT_GAINS_DB (a receiver quieter than the suggested
    preamplifier, an own preamplifier already at its best)."""
    options = [("as placed", chain)] if chain.preamp_index is not None else []
    options = options or [(pos, with_suggested_preamp(chain, pos)) for pos in ("receiver", "antenna")]
    best = None
    for position, c in options:
        g_b, f_a, limit = _around_preamp(c)
        g = (f_a - 1) / (g_b * limit * (10 ** (BEST_EFFORT_SHORT_DB / 10) - 1))
        gain_db = float(max(10 * np.log10(g), 0.0)) if g > 0 else 0.0
        if position == "as placed":  # never less than it has
            gain_db = max(gain_db, float(10 * np.log10(c.stages[c.preamp_index].gain)))
        if best is None or limit * 10 ** (BEST_EFFORT_SHORT_DB / 10) < best[0]:  # at the antenna: 0.5 dB better
            best = (limit, position, gain_db, c.with_preamp_gain(gain_db))
    _, position, gain_db, fitted = best
    t_a = np.asarray(antenna_temperature_k, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        loss = 10.0 * np.log10((t_a + fitted.temperature_k) / t_a)
        now = 10.0 * np.log10((t_a + chain.temperature_k) / t_a)
    if not float(np.nanmax(loss)) < float(np.nanmax(now)) - BEST_EFFORT_GAINS_DB:
        return None
    return BestEffortPreamp(gain_db, position, loss)


SUGGESTED_PREAMP_NOISE_FIGURE_DB = 3.0
"""Noise figure of the preamplifier assumed when the chain has none and one is suggested (common practice
for low-band receiving preamplifiers)."""


def preamp_advice(chain: Chain, antenna_temperature_k: float, margin_db: float) -> tuple[float, str | None]:
    """(gain [dB], position) of a preamplifier that brings the margin to ``margin_db``.

    The chain's own preamplifier if it has one; else a suggested one before the receiver, or, where no gain
    there can do it (a lossy feed line ahead), right after the transformer.  (NaN, None) if none can.
    """
    return _preamp_advisor(chain)(antenna_temperature_k, margin_db)


def _preamp_advisor(chain: Chain):
    """advice(T_A, margin_db) -> :func:`preamp_advice`, the chains it tries made once (a noise budget asks for every
    month and hour)."""
    if chain.preamp_index is not None:
        own = _preamp_rule(chain)

        def as_placed(antenna_temperature_k: float, margin_db: float) -> tuple[float, str | None]:
            g = own(antenna_temperature_k, margin_db)
            return (np.nan, None) if g is None else (g, "as placed")

        return as_placed
    rules = [(position, _preamp_rule(with_suggested_preamp(chain, position))) for position in ("receiver", "antenna")]

    def suggested(antenna_temperature_k: float, margin_db: float) -> tuple[float, str | None]:
        for position, rule in rules:
            g = rule(antenna_temperature_k, margin_db)
            if g is not None:
                return g, position
        return np.nan, None

    return suggested


def cascade(
    *,
    freq_hz: float,
    receiver_noise_figure_db: float,
    transformer_loss_db: float = 0.0,
    feedline_loss_db: float | None = None,
    cable: str | None = None,
    feedline_length_m: float | None = None,
    preamp_gain_db: float | None = None,
    preamp_noise_figure_db: float | None = None,
    preamp_at_antenna: bool = False,
) -> Chain:
    """A receiving chain from its parts (SI and dB): the transformer's loss, a feed line (its loss, or a cable
    type and length), an optional preamplifier (right after the transformer, or before the receiver) and the
    receiver.  The input schema builds this at the edge (snrgain.scenario); the physics needs no schema."""
    stages = [passive("transformer", transformer_loss_db)]
    if feedline_loss_db is None and cable is not None and feedline_length_m is not None:
        feedline_loss_db = float(cable_by_name(cable).loss_db(freq_hz, feedline_length_m))
    if feedline_loss_db is not None:
        stages.append(passive("feed line", feedline_loss_db))
    preamp_index = None
    if preamp_gain_db is not None:
        amp = amplifier("preamplifier", gain_db=preamp_gain_db, noise_figure_db=preamp_noise_figure_db)
        preamp_index = 1 if preamp_at_antenna else len(stages)
        stages.insert(preamp_index, amp)
    stages.append(amplifier("receiver", gain_db=0.0, noise_figure_db=receiver_noise_figure_db))
    return Chain(tuple(stages), preamp_index, cable, feedline_length_m if cable is not None else None)


def with_suggested_preamp(chain: Chain, position: str = "receiver") -> Chain:
    """The chain with a preamplifier (suggested noise figure, 0 dB gain to start) before the receiver
    (``position="receiver"``) or right after the transformer (``"antenna"``); a chain with its own is unchanged."""
    if chain.preamp_index is not None:
        return chain
    st = list(chain.stages)
    idx = len(st) - 1 if position == "receiver" else 1
    st.insert(idx, amplifier("suggested preamplifier", gain_db=0.0, noise_figure_db=SUGGESTED_PREAMP_NOISE_FIGURE_DB))
    return Chain(tuple(st), idx, chain.cable, chain.length_m)


@record
class NoiseBudget:
    """One antenna's noise through its chain, per month and hour (arrays (months, hours)).

    noise_dbm : external noise delivered to the receiver input in the bandwidth [dBm]
    floor_dbm : the chain's own noise floor at the receiver input, k T0 b F G [dBm]
    margin_db : noise_dbm minus floor_dbm [dB]
    receiver_snr_loss_db : SNR lost to the chain's noise, 10 log10((T_A + T_chain) / T_A) [dB]
    preamp_gain_needed_db : preamplifier gain that brings the margin to the target (the chain's own preamplifier's
        gain, else 0 if met: a margin met as said to 0.1 dB, :func:`short_of_target`, is met), NaN if none can [dB]
    preamp_position : "receiver", "antenna", "as placed" (see :func:`preamp_advice`), or None
    best_effort : where no gain reaches the target at some hour, the preamplifier that comes closest
        (:func:`best_effort_preamp`); else None
    """

    noise_dbm: np.ndarray
    floor_dbm: float
    margin_db: np.ndarray
    receiver_snr_loss_db: np.ndarray
    preamp_gain_needed_db: np.ndarray
    preamp_position: str | None
    best_effort: BestEffortPreamp | None = None


def short_of_target(margin_db, target_db: float) -> np.ndarray:
    """Where a margin falls short of the target as it is said: to 0.1 dB, as the tables, the warnings and the figures
    print it (a margin of 9.97 dB is "10.0" and meets a 10 dB target; 9.94 dB is "9.9" and does not).  One test for
    the receiver-limited verdict, the '!' mark and the gain advised, so none says "short" of a margin printed at it."""
    m = np.asarray(margin_db, dtype=float)
    said = np.array([float(f"{x:.1f}") for x in m.ravel()]).reshape(m.shape)
    return said < target_db


def noise_budget(chain: Chain, antenna_temperature_k, *, bandwidth_hz: float, margin_target_db: float) -> NoiseBudget:
    """The external noise against the chain's floor, and the preamplifier that would meet the margin target."""
    from snrgain.physics.receiver import noise_floor_dbm, power_dbm

    t_a = np.asarray(antenna_temperature_k, dtype=float)
    gain_db = 10.0 * np.log10(chain.gain)
    floor = float(noise_floor_dbm(10.0 * np.log10(chain.noise_factor), bandwidth_hz=bandwidth_hz)) + gain_db
    with np.errstate(divide="ignore"):
        noise = power_dbm(t_a, bandwidth_hz=bandwidth_hz) + gain_db
        loss = 10.0 * np.log10((t_a + chain.temperature_k) / t_a)
    advise = _preamp_advisor(chain)
    advice = [advise(float(t), margin_target_db) for t in t_a.ravel()]
    needed = np.array([a[0] for a in advice], dtype=float).reshape(t_a.shape)
    # a margin short of the target yet said at it (to 0.1 dB) is met: the gain the chain has now (none suggested)
    said_met = (noise - floor < margin_target_db) & ~short_of_target(noise - floor, margin_target_db)
    now = 0.0 if chain.preamp_index is None else float(10.0 * np.log10(chain.stages[chain.preamp_index].gain))
    needed = np.where(said_met, now, needed)
    where = sorted({a[1] for a in advice if a[1]})
    best = best_effort_preamp(chain, t_a) if np.any(np.isnan(needed)) else None
    return NoiseBudget(noise, floor, noise - floor, loss, needed, where[-1] if where else None, best)


def describe(chain: Chain, *, bandwidth_hz: float) -> dict:
    """The chain for output: noise figure, gain, floor at the receiver input, stages (dB, SI in the keys)."""
    from snrgain.physics.receiver import noise_floor_dbm

    nf_db = float(10 * np.log10(chain.noise_factor))
    gain_db = float(10 * np.log10(chain.gain))
    return {
        "noise_figure_db": nf_db,
        "gain_db": gain_db,
        "noise_floor_dbm": float(noise_floor_dbm(nf_db, bandwidth_hz=bandwidth_hz)) + gain_db,
        "stages": [
            {
                "name": st.name,
                "gain_db": float(10 * np.log10(st.gain)),
                "noise_figure_db": float(10 * np.log10(st.noise_factor)),
            }
            for st in chain.stages
        ],
    }
