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


# A small loop with a 20 dB preamplifier at the antenna, 3 km from a 100 kW broadcaster (an invented site).
LOOP_SITE = """
[site]
name = "Sorrel Row (invented)"
latitude = 49.45
longitude = 8.30
ground = "moist loam"

[band]
frequency = "1.825 MHz"
bandwidth = "500 Hz"

[time]
months = [12]
utc_hours = [2]

[noise.man_made]
environment = "rural"

[noise.atmospheric]
model = "none"

[[target]]
name = "west"
bearing = "270 deg"
elevation = ["5 deg", "25 deg"]

[reference]
family = "vertical"
height = "10 m"

[[candidate]]
name = "shed loop"
family = "small-loop"
width = "1.5 m"
loop_height = "1.5 m"
height = "3 m"
bearing = 0
chain = { preamp = { gain = "20 dB", noise_figure = "3 dB", position = "antenna" } }

[uncertainty]
ground = false
noise_deciles = false

[[strong_signal]]
name = "Wren talk"
frequency = "1.017 MHz"
power = "100 kW"
distance = "3 km"
bearing = "250 deg"
"""


def _loop(r) -> tuple[dict, list]:
    row = next(x for x in r.strong_signals if x["antenna"] == "shed loop")
    return row, [n for n in r.notices if n.code.startswith("strong-signal") and n.antenna == "shed loop"]


def test_a_preamplifier_ahead_hands_the_receiver_the_station_louder_and_the_receiver_is_warned():
    # A reviewer's loop behind a 20 dB preamplifier at the antenna: -14 dBm into the preamplifier, +6 dBm into the
    # receiver against its +5 dBm compression point, yet only the preamplifier was checked and nothing was said.
    # The level at each stage is the terminals' level plus the gains before it (cascaded stages, Pozar ch. 10):
    # at the receiver, the preamplifier's 20 dB more.
    r = snrgain.evaluate(LOOP_SITE)
    row, notices = _loop(r)
    at = {x["stage"]: x["input_dbm"] for x in row["stages"]}
    assert list(at) == ["preamplifier", "receiver"]
    assert at["preamplifier"] == pytest.approx(row["terminal_dbm"], abs=1e-9) == row["stage_input_dbm"]
    assert at["receiver"] == pytest.approx(row["terminal_dbm"] + 20.0, abs=1e-9)
    # the regime this test is about: the preamplifier (+5 dBm assumed) within its limit, the receiver past its own
    assert at["preamplifier"] < 5.0 - 10.0 < at["receiver"]
    (over,) = [n for n in notices if n.code == "strong-signal-overload"]
    v = over.values
    assert v["stage"] == "receiver" and v["stage_input_dbm"] == pytest.approx(at["receiver"], abs=1e-9)
    assert v["over_db"] == pytest.approx(at["receiver"] - (5.0 - 10.0), abs=1e-9)
    assert [(x["stage"], x["over_db"] > 0) for x in v["stages"]] == [("preamplifier", False), ("receiver", True)]
    # one station: the filter takes the receiver's level to its safe level, a high-pass below 160 m
    assert v["filter_db"] == pytest.approx(v["over_db"], abs=1e-9)
    assert [f["kind"] for f in v["filters"]] == ["high-pass"]
    said = next(w for w in r.warnings if w.startswith("shed loop: nearby transmitters"))
    assert "into the receiver (loudest: Wren talk" in said
    assert "the preamplifier ahead of it takes" in said and "below its safe level" in said


def test_nothing_overloaded_anywhere_in_the_chain_is_not_warned():
    # the receiver's own limits, given in [receiver], are what it is held to behind the preamplifier
    quiet_receiver = LOOP_SITE + '\n[receiver]\np1db = "+30 dBm"\n'
    r = snrgain.evaluate(quiet_receiver)
    row, notices = _loop(r)
    at = {x["stage"]: x["input_dbm"] for x in row["stages"]}
    assert at["receiver"] < 30.0 - 10.0 and at["preamplifier"] < 5.0 - 10.0
    assert not [n for n in notices if n.code == "strong-signal-overload"]
    # a station far off: nothing at any stage, neither compression nor products
    far = LOOP_SITE.replace('distance = "3 km"', 'distance = "150 km"').replace('"100 kW"', '"1 kW"')
    far += '\n[[strong_signal]]\nname = "Finch music"\nfrequency = "810 kHz"\npower = "1 kW"\ndistance = "120 km"\n'
    far += 'bearing = "40 deg"\n'
    row, notices = _loop(snrgain.evaluate(far))
    assert max(x["input_dbm"] for x in row["stages"]) < -40.0
    assert notices == []


def test_a_product_made_in_the_receiver_from_the_preamplified_stations_is_checked_against_the_noise_there():
    # 1.017 + 0.808 MHz = 1.825 MHz: a second-order product in the band.  Made in the receiver from the stations
    # 20 dB louder, P_IM2 = P1 + P2 - IIP2 at its input (the intercept's definition, Hayward, Campbell and Larkin,
    # "Experimental Methods in RF Design", ch. 2) rises 40 dB against the preamplifier's own product for 20 dB more
    # noise: the receiver's stands 20 dB higher above the noise (both IIP2 at the +60 dBm default).
    text = LOOP_SITE + (
        '\n[[strong_signal]]\nname = "Finch music"\nfrequency = "808 kHz"\npower = "20 kW"\ndistance = "12 km"\n'
        'bearing = "40 deg"\n'
    )
    r = snrgain.evaluate(text)
    loop_rows = [x for x in r.strong_signals if x["antenna"] == "shed loop"]
    at = {x["station"]: {s["stage"]: s["input_dbm"] for s in x["stages"]} for x in loop_rows}
    _, notices = _loop(r)
    (p,) = [n.values for n in notices if n.code == "strong-signal-product"]
    assert p["order"] == 2 and p["freq_hz"] == pytest.approx(1.825e6)
    by_stage = {x["stage"]: x for x in p["stages"]}
    for stage in ("preamplifier", "receiver"):
        hand = at["Wren talk"][stage] + at["Finch music"][stage] - 60.0
        assert by_stage[stage]["level_dbm"] == pytest.approx(hand, abs=1e-9)
    assert by_stage["receiver"]["noise_dbm"] == pytest.approx(by_stage["preamplifier"]["noise_dbm"] + 20.0, abs=1e-9)
    assert by_stage["receiver"]["over_db"] == pytest.approx(by_stage["preamplifier"]["over_db"] + 20.0, abs=1e-9)
    assert p["stage"] == "receiver" and p["over_db"] == by_stage["receiver"]["over_db"] > 0
    assert p["filter_db"] == pytest.approx(p["over_db"] / 2)


def test_a_feed_line_between_the_preamplifier_and_the_receiver_lowers_the_receivers_level_by_its_loss():
    # preamplifier at the antenna, then 100 m of RG-6 to the receiver: the receiver sees the terminals' level plus
    # 20 dB less the cable's loss at the station's frequency; the preamplifier the terminals' level
    text = LOOP_SITE.replace(
        'chain = { preamp = { gain = "20 dB", noise_figure = "3 dB", position = "antenna" } }',
        'chain = { preamp = { gain = "20 dB", noise_figure = "3 dB", position = "antenna" }, '
        'feedline = { cable = "RG-6", length = "100 m" } }',
    )
    row, _ = _loop(snrgain.evaluate(text))
    at = {x["stage"]: x["input_dbm"] for x in row["stages"]}
    loss = cable_by_name("RG-6").loss_db(1.017e6, 100.0)
    assert at["preamplifier"] == pytest.approx(row["terminal_dbm"], abs=1e-9)
    assert at["receiver"] == pytest.approx(row["terminal_dbm"] + 20.0 - loss, abs=1e-9)
