"""The chain between an antenna's terminals and its first amplifier at a strong station's frequency."""

import pytest

import snrgain
from snrgain.physics.chain import cable_by_name
from tests.conftest import REPO

SITE = (REPO / "tests" / "data" / "sites" / "quarry-lane-mw.toml").read_text()


def _with_line(line: str) -> str:
    assert "[chain.preamp]\n" in SITE
    return SITE.replace("[chain.preamp]\n", f'[chain]\nfeedline = {line}\n\n[chain.preamp]\nposition = "receiver"\n')


def test_a_cable_loses_at_the_stations_frequency_a_given_loss_as_given():
    # A preamplifier at the receiver end: the feed line comes first.  300 m of RG-6 loses less at 1.008 MHz than at
    # the 1.83 MHz listened to (loss ~ k1 sqrt(f) + k2 f); the station's level at the amplifier takes the loss at
    # its own frequency.  A line given by its total loss keeps that loss (nothing tells its frequency law).
    cable = cable_by_name("RG-6")
    r = snrgain.evaluate(_with_line('{ cable = "RG-6", length = "300 m" }'))
    for row in r.strong_signals:
        assert row["stage_input_dbm"] - row["terminal_dbm"] == pytest.approx(-cable.loss_db(1.008e6, 300.0), abs=1e-9)
    assert cable.loss_db(1.008e6, 300.0) < cable.loss_db(1.83e6, 300.0) - 0.3
    r = snrgain.evaluate(_with_line('{ loss = "3 dB" }'))
    for row in r.strong_signals:
        assert row["stage_input_dbm"] - row["terminal_dbm"] == pytest.approx(-3.0, abs=1e-9)


def test_each_row_says_whether_its_level_is_delivered_or_available():
    r = snrgain.evaluate(SITE)
    kinds = {row["antenna"]: row["terminal_power"] for row in r.strong_signals}
    assert kinds == {"vertical": "available", "Beverage north-east": "delivered", "short vertical": "available"}
