"""The receiver's own noise, referred to the antenna terminals.

A receiver of noise figure F adds T_rx = T0 (F - 1) [K] (the definition of
noise figure, T0 = 290 K; e.g. H. T. Friis, "Noise figures of radio
receivers", Proc. IRE 32(7), 419 (1944)).  Its noise floor, what it shows
with a matched load at T0 on its input, is k T0 b F [W] in bandwidth b.  A
measured floor in the band's bandwidth gives F back.  The chain (feed
line, transformer, preamplifier) is cascaded in snrgain.physics.chain.
"""

from __future__ import annotations

import numpy as np

from noisemodels.p372 import BOLTZMANN_J_PER_K, T0_K
from snrgain.records import record

DEFAULT_NOISE_FIGURE_DB = 15.0
"""Receiver noise figure when none is given [dB]: typical of HF receivers on 160 m with the preamplifier off
(common practice)."""
DEFAULT_MARGIN_TARGET_DB = 10.0
"""External noise wanted above the receiver chain's floor [dB]: at 10 dB the chain costs under 0.5 dB of SNR
(common practice)."""


@record
class Receiver:
    """The receiver: its noise figure and the margin of external noise over the chain's floor that is wanted."""

    noise_figure_db: float
    margin_target_db: float = DEFAULT_MARGIN_TARGET_DB


def noise_floor_dbm(noise_figure_db, *, bandwidth_hz):
    """Receiver noise floor k T0 b F [dBm] in bandwidth [Hz]."""
    return 10.0 * np.log10(BOLTZMANN_J_PER_K * T0_K * bandwidth_hz / 1e-3) + np.asarray(noise_figure_db, dtype=float)


def noise_figure_from_floor_db(floor_dbm, *, bandwidth_hz):
    """Noise figure [dB] of a receiver whose floor in bandwidth [Hz] is ``floor_dbm``."""
    nf = np.asarray(floor_dbm, dtype=float) - 10.0 * np.log10(BOLTZMANN_J_PER_K * T0_K * bandwidth_hz / 1e-3)
    if np.any(nf < 0):
        raise ValueError(
            f"noise_floor {float(np.min(floor_dbm)):g} dBm lies below kT0b in {bandwidth_hz:g} Hz "
            "(a noise figure below 0 dB); check the value and the bandwidth"
        )
    return nf


def power_dbm(temperature_k, *, bandwidth_hz):
    """Available noise power [dBm] of a temperature [K] in a bandwidth [Hz]."""
    with np.errstate(divide="ignore"):
        return 10.0 * np.log10(BOLTZMANN_J_PER_K * np.asarray(temperature_k, dtype=float) * bandwidth_hz / 1e-3)
