"""[receiver] and [chain] (also an antenna's own ``chain`` table): the receiver, feed line and preamplifier, and
the chain they cascade into."""

from __future__ import annotations

from typing import Literal

from pydantic import model_validator

from snrgain.fields import PowerDbm, StrictModel, decibels, quantity
from snrgain.physics import chain as chainmod
from snrgain.physics import receiver as rx

from .strong import LimitDbm


class Receiver(StrictModel):
    noise_figure: decibels(0.0, 40.0) | None = None
    noise_floor: PowerDbm | None = None
    margin_target: decibels(-20.0, 60.0) = rx.DEFAULT_MARGIN_TARGET_DB
    p1db: LimitDbm | None = None
    iip3: LimitDbm | None = None
    iip2: LimitDbm | None = None

    @model_validator(mode="after")
    def _one(self):
        if self.noise_figure is not None and self.noise_floor is not None:
            raise ValueError("give noise_figure or noise_floor (measured in the band's bandwidth), not both")
        return self


class Feedline(StrictModel):
    cable: str | None = None
    length: quantity("length", ge=0.0, le=10e3) | None = None
    loss: decibels(0.0, 40.0) | None = None

    @model_validator(mode="after")
    def _one(self):
        if self.loss is not None:
            if self.cable is not None or self.length is not None:
                raise ValueError("give the feed line's total loss, or its cable and length, not both")
        else:
            if self.cable is None or self.length is None:
                raise ValueError("a feed line needs cable and length (or its total loss)")
            chainmod.cable_by_name(self.cable)
        return self


class Preamp(StrictModel):
    gain: decibels(0.0, 50.0)
    noise_figure: decibels(0.0, 20.0)
    position: Literal["antenna", "receiver"] = "receiver"
    p1db: LimitDbm | None = None
    iip3: LimitDbm | None = None
    iip2: LimitDbm | None = None


class ChainSection(StrictModel):
    transformer_loss: decibels(0.0, 10.0) = 0.0
    feedline: Feedline | None = None
    preamp: Preamp | None = None


def chain_from_section(c, *, freq_hz: float, receiver_noise_figure_db: float):
    """The chain of a validated [chain] section (the scenario's, or an antenna's own ``chain`` table), built from
    its values by :func:`snrgain.physics.chain.cascade`."""
    fl, amp = c.feedline, c.preamp
    return chainmod.cascade(
        freq_hz=freq_hz,
        receiver_noise_figure_db=receiver_noise_figure_db,
        transformer_loss_db=c.transformer_loss,
        feedline_loss_db=None if fl is None else fl.loss,
        cable=None if fl is None else fl.cable,
        feedline_length_m=None if fl is None else fl.length,
        preamp_gain_db=None if amp is None else amp.gain,
        preamp_noise_figure_db=None if amp is None else amp.noise_figure,
        preamp_at_antenna=amp is not None and amp.position == "antenna",
    )


def resolve_receiver(r: Receiver, bandwidth_hz: float) -> rx.Receiver:
    """The receiver of a validated [receiver] section: its noise figure given, read from a floor measured in the
    band's bandwidth, or the default."""
    if r.noise_floor is not None:
        nf = float(rx.noise_figure_from_floor_db(r.noise_floor, bandwidth_hz=bandwidth_hz))
    else:
        nf = r.noise_figure if r.noise_figure is not None else rx.DEFAULT_NOISE_FIGURE_DB
    return rx.Receiver(nf, r.margin_target)
