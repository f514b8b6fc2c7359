"""The antennas' response to a medium-wave ground wave, below their band, against NEC-2 (tests/nec/offband.json).

The reference (tests/nec/make_offband.py, nec2c, decks in tests/nec/cases/offband-*.nec): a vertically polarised
plane wave at 0.5 and 2 deg over moist loam drives a 150 m Beverage 2.5 m up (450 ohm termination, 9:1 into
50 ohm, 20 ohm rods), a flag 8.5 x 4.3 m 1.5 m up (900 ohm, 16:1 into 50 ohm) and a 6 m vertical; NEC's power into
the receiver load over the surface field's |E|^2 / (2 eta0) is the aperture a ground wave sees, which
snrgain.physics.strong.ground_wave_aperture_m2 computes from each family's own model.
"""

import json
import shutil
import sys
import tempfile
from pathlib import Path

import numpy as np
import pytest

from snrgain.antennas.base import from_spec
from snrgain.model.strong import as_built
from snrgain.physics import strong as st
from snrgain.physics.ground import ETA0_OHM, ground_by_name
from tests.conftest import REPO

NEC = REPO / "tests" / "nec"
REF = json.loads((NEC / "offband.json").read_text())
GROUND = ground_by_name("moist loam")


def _model(name):
    b, f = REF["beverage"], REF["flag"]
    if name == "beverage":
        spec = {
            "family": "beverage",
            "length": f"{b['length_m']} m",
            "height": f"{b['height_m']} m",
            "termination": f"{b['termination_ohm']} ohm",
            "turns_ratio": b["turns_ratio"],
            "feed_ground": f"{b['feed_rod_ohm']} ohm",
            "far_ground": f"{b['far_rod_ohm']} ohm",
        }
    elif name == "flag":
        spec = {
            "family": "terminated-loop",
            "shape": "rectangle",
            "width": f"{f['width_m']} m",
            "loop_height": f"{f['loop_height_m']} m",
            "height": f"{f['height_m']} m",
            "termination": f"{f['termination_ohm']} ohm",
            "turns_ratio": f["turns_ratio"],
        }
    else:
        spec = {"family": "vertical", "height": f"{REF['vertical']['height_m']} m"}
    if name != "vertical":
        spec.update(coax=int(REF["coax_ohm"]), bearing="0 deg")
    return from_spec({**spec, "ground": "moist loam"})


def _cases(antenna, elevation=0.5):
    return [c for c in REF["cases"] if c["antenna"] == antenna and c["elevation_deg"] == elevation]


def test_the_reference_ground_is_the_models():
    assert REF["ground"]["permittivity"] == GROUND.permittivity
    assert REF["ground"]["conductivity_s_per_m"] == GROUND.conductivity_s_per_m


def test_nec_response_has_settled_at_grazing():
    # Over |cos e (1 + R_v)|^2 NEC's response no longer depends on the elevation (0.5 and 2 deg): the plane wave
    # near grazing stands for the ground wave in NEC as in the model.
    for a in REF["cases"]:
        if a["elevation_deg"] != 0.5:
            continue
        b = next(
            c
            for c in REF["cases"]
            if c["elevation_deg"] == 2.0
            and c["antenna"] == a["antenna"]
            and c["freq_mhz"] == a["freq_mhz"]
            and c.get("direction") == a.get("direction")
        )
        key = "open_circuit_v_per_v_per_m" if a["antenna"] == "vertical" else "aperture_m2"
        assert 10 * np.log10(b[key] / a[key]) == pytest.approx(0.0, abs=0.1)


@pytest.mark.parametrize("antenna", ["beverage", "flag"])
def test_power_into_the_receiver_load_matches_nec(antenna):
    # Forward within 0.5 dB; toward the back (the flag's rear null is 20-22 dB down) within 2 dB.  Seen when
    # written: Beverage -0.04..+0.25 dB, flag forward +0.06..+0.11 dB, flag back -0.65..-1.19 dB.
    model = _model(antenna)
    seen = []
    for c in _cases(antenna):
        bearing = 0.0 if c["direction"] == "forward" else np.pi
        ours = st.ground_wave_aperture_m2(model, c["freq_mhz"] * 1e6, bearing, GROUND)
        diff = 10 * np.log10(ours / c["aperture_m2"])
        seen.append(diff)
        assert abs(diff) < (0.5 if c["direction"] == "forward" else 2.0), (c, diff)
    assert len(seen) == 8


def test_short_vertical_open_circuit_voltage_matches_nec():
    # The vertical family gives the power available to a matched load behind R_rad + ground_loss, so its
    # open-circuit voltage is sqrt(4 (R_rad + R_loss) P) per V/m rms; NEC's V_oc from its Thevenin pair.  Both near
    # h / 2 = 3 m (a short monopole's effective height, e.g. Kraus, "Antennas", ch. 2).  Seen: -0.1 dB.
    v = _model("vertical")
    for c in _cases("vertical"):
        f = c["freq_mhz"] * 1e6
        area = st.ground_wave_aperture_m2(v, f, 0.0, GROUND)
        r = v.radiation_resistance_ohm(f) + v.ground_loss_ohm
        ours = np.sqrt(4 * r * area / ETA0_OHM)
        assert 20 * np.log10(ours / c["open_circuit_v_per_v_per_m"]) == pytest.approx(0.0, abs=0.5)
        assert c["open_circuit_v_per_v_per_m"] == pytest.approx(3.0, rel=0.05)


def test_auto_settings_are_those_of_the_band_listened_to():
    # A Beverage left at "auto" is built for 1.83 MHz: at the station's 0.55 MHz it keeps that resistor and that
    # transformer (re-chosen there they would be a 30 ohm resistor and a 4.8:1 ratio).
    a = from_spec({"family": "beverage", "length": "150 m", "height": "2.5 m", "ground": "moist loam"})
    built = as_built(a, 1.83e6)
    assert built.params.termination == pytest.approx(a.termination_ohm(1.83e6))
    assert built.turns_ratio(0.55e6) == pytest.approx(a.turns_ratio(1.83e6))
    assert built.termination_ohm(0.55e6) == pytest.approx(a.termination_ohm(1.83e6))
    assert a.termination_ohm(0.55e6) != pytest.approx(a.termination_ohm(1.83e6), rel=0.1)
    # a vertical has nothing to fix
    v = from_spec({"family": "vertical", "height": "6 m"})
    assert as_built(v, 1.83e6) is v


@pytest.mark.skipif(shutil.which("nec2c") is None, reason="nec2c not installed")
def test_stored_decks_still_give_the_stored_answers():
    # Re-run one stored deck per antenna family: the JSON is what the decks give.
    sys.path.insert(0, str(NEC))
    from necdeck import base_currents, run_nec2c

    with tempfile.TemporaryDirectory() as tmp:
        c = next(x for x in _cases("beverage") if x["freq_mhz"] == 0.9 and x["direction"] == "forward")
        text = (NEC / "cases" / "offband-beverage-f0p9-e0p5-forward.nec").read_text()
        i = base_currents(run_nec2c(text, Path(tmp), "bev"), 1)[0]
        b = REF["beverage"]
        p = 0.5 * abs(i) ** 2 * b["turns_ratio"] ** 2 * REF["coax_ohm"]
        assert p / (c["surface_field"] ** 2 / (2 * 376.730313)) == pytest.approx(c["aperture_m2"], rel=1e-4)


def test_the_test_sites_beverage_level_is_the_field_times_necs_aperture():
    # The check: the Beverage 500 m from the 10 kW station (tests/data/sites/quarry-lane-mw.toml), with its
    # resistor and transformer written out as in the NEC case, gets the level a hand calculation gives from the
    # ground-wave field and NEC-2's aperture for that wire at 1.008 MHz, 15 deg off its bearing: within 3 dB (the
    # issue's tolerance; seen when written: 0.1 dB).
    import snrgain

    q = REF["quarry"]
    site = (REPO / "tests" / "data" / "sites" / "quarry-lane-mw.toml").read_text()
    old = 'height = "2.5 m"\nbearing = "45 deg"\n'
    assert old in site
    text = site.replace(
        old,
        old + f'termination = "{q["termination_ohm"]} ohm"\nturns_ratio = {q["turns_ratio"]}\ncoax = 75\n'
        f'feed_ground = "{q["feed_rod_ohm"]} ohm"\nfar_ground = "{q["far_rod_ohm"]} ohm"\n',
    )
    r = snrgain.evaluate(text)
    row = next(x for x in r.strong_signals if x["antenna"] == "Beverage north-east")
    assert row["frequency_hz"] == pytest.approx(q["freq_mhz"] * 1e6)
    hand = st.dbm(row["field_v_per_m"] ** 2 / ETA0_OHM * q["aperture_m2"])
    assert row["terminal_dbm"] == pytest.approx(hand, abs=3.0)
    assert row["terminal_dbm"] == pytest.approx(hand, abs=0.5), "as close as when it was written"
