"""The transmitting vertical as a scatterer (snrgain.physics.scatter) against NEC-2 and the induced-EMF method.

References: tests/nec/scatter.json, written by tests/nec/make_scatter.py with nec2c (a quarter-wave vertical at
1.83 MHz, resonant = base loaded by 50 ohm, detuned = base open, 10-80 m broadside of and behind a flag and a pair
of short verticals, over a perfect and a lossy ground); the mutual impedance of two monopoles by the induced-EMF
method (snrgain.antennas.coupling, itself checked against Balanis's closed forms in tests/test_coupling.py).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

import snrgain
import snrgain.scenario
from snrgain.antennas.base import from_si, from_spec
from snrgain.antennas.coupling import monopole_impedance
from snrgain.physics import scatter
from snrgain.physics.scatter import TxVertical, with_vertical
from tests.nec.necdeck import metrics_toward
from tests.scenario_text import VERTICAL, scenario_text

REF = json.loads((Path(__file__).parent / "nec" / "scatter.json").read_text())
F_HZ = REF["freq_mhz"] * 1e6
_TH, _PH = (a.ravel() for a in np.meshgrid(np.arange(0, 91, 2.0), np.arange(0, 360, 2.0), indexing="ij"))
_AZ, _EL = np.radians(90.0 - _PH), np.radians(90.0 - _TH)  # NEC's phi from +x (east) counterclockwise


def _ground(name):
    return "perfect" if name == "perfect" else {"permittivity": 13.0, "conductivity": "5 mS/m"}


def _antennas(gname):
    g = _ground(gname)
    fl, pr = REF["flag"], REF["pair"]
    flag = from_spec(
        {
            "family": "terminated-loop",
            "width": f"{fl['width_m']} m",
            "loop_height": f"{fl['loop_height_m']} m",
            "height": f"{fl['height_m']} m",
            "termination": f"{fl['termination_ohm']} ohm",
            "bearing": 270,  # NEC's phi = 180 deg
            "ground": g,
            "position": [0, 0],
        }
    )
    pair = from_spec(
        {
            "family": "phased-verticals",
            "positions": [[0, 0], [pr["spacing_m"], 0]],
            "height": f"{pr['height_m']} m",
            "steering": "given",
            "phases": [0, -pr["phase_deg"]],
            "phase_sense": "lag",
            "ground": g,
            "ground_loss": "0 ohm",
        }
    )
    loss = "0 ohm" if gname == "perfect" else f"{REF['tx']['ground_loss_ohm']} ohm"
    tx = from_spec({"family": "vertical", "height": f"{REF['tx']['height_m']} m", "ground": g, "ground_loss": loss})
    return {"flag": flag, "pair": pair}, tx


_CACHE: dict = {}


def _model(case, load):
    if case["ground"] not in _CACHE:
        _CACHE[case["ground"]] = _antennas(case["ground"])
    ants, txa = _CACHE[case["ground"]]
    t = TxVertical(txa, tuple(case["tx_m"]), load, REF["tx"]["radius_m"])
    ev, eh = with_vertical(ants[case["antenna"]], t, F_HZ, _AZ, _EL, at_m=(0.0, 0.0))
    g = 10 * np.log10(np.maximum(np.abs(ev) ** 2 + np.abs(eh) ** 2, 1e-30))
    return metrics_toward(_TH, _PH, g, forward_phi_deg=180.0 if case["antenna"] == "flag" else 0.0)


def _changes(m, alone):
    return (
        m["rdf_db"] - alone["rdf_db"],
        m["forward_gain_dbi"] - alone["forward_gain_dbi"],
        m["front_to_back_db"],
    )


# The vertical 10 m behind the pair's centre stands 2.5 m from an element: beyond the compact model (the element's
# current is no longer sinusoidal there); every other case is held.
CASES = [
    c
    for c in REF["cases"]
    if c["antenna"] != "beverage" and not (c["antenna"] == "pair" and c["place"] == "behind" and c["distance_m"] < 15)
]


@pytest.mark.parametrize("case", CASES, ids=lambda c: f"{c['antenna']}-{c['ground']}-{c['place']}-{c['distance_m']:g}")
def test_resonant_vertical_changes_as_nec(case):
    """RDF change within 0.3 dB, forward-gain change within 1 dB, front-to-back within 3 dB of NEC-2's (or both
    beyond 25 dB), for the vertical resonant (50 ohm at its base)."""
    alone = _model(case, None)
    d_rdf, d_gain, fb = _changes(_model(case, 50.0), alone)
    nec = case["resonant"]
    n_rdf, n_gain, n_fb = _changes(nec, case["alone"])
    assert d_rdf == pytest.approx(n_rdf, abs=0.3)
    assert d_gain == pytest.approx(n_gain, abs=1.0)
    assert fb == pytest.approx(n_fb, abs=3.0) or min(fb, n_fb) > 25.0


TOPHAT = json.loads((Path(__file__).parent / "nec" / "scatter_tophat.json").read_text())


@pytest.mark.parametrize(
    "case", TOPHAT["cases"], ids=lambda c: f"{c['antenna']}-{c['ground']}-{c['place']}-{c['distance_m']:g}"
)
def test_a_top_loaded_resonant_vertical_changes_as_nec(case):
    """A 20.5 m vertical with a hat of four 9.4 m wires, resonant at 1.83 MHz in NEC-2 (tests/nec/scatter_tophat.json,
    make_scatter_tophat.py), given to the model as its electrical length (top_loading 19.1 m: the plain monopole
    20.5 + 19.1 m tall is resonant), 20 and 40 m from the flag and the pair: RDF change within 0.4 dB, forward-gain
    change within 1 dB, front-to-back within 3 dB of NEC-2's.  20 m behind the antennas the hat's wires reach within
    6 m (in plan) of the flag's far side: the model takes the hat as the length it adds, without a field of its own,
    and its front-to-back there is 6.5 dB off NEC's (the flag; 3.3 dB the pair over the lossy ground): held to 7 dB.
    (The induced EMF of the top-loaded current on the wire put the hat's charge at the wire's tip, a reactance of
    -14 kohm: the vertical changed nothing, a front-to-back of 26 dB against NEC's 14-23.)"""
    tx = TOPHAT["tx"]
    ants, _ = _antennas(case["ground"])
    loss = "0 ohm" if case["ground"] == "perfect" else f"{tx['ground_loss_ohm']} ohm"
    v = from_spec(
        {
            "family": "vertical",
            "height": f"{tx['height_m']} m",
            "top_loading": f"{tx['top_loading_m']} m",
            "ground": _ground(case["ground"]),
            "ground_loss": loss,
        }
    )

    def model(load):
        t = TxVertical(v, tuple(case["tx_m"]), load, tx["radius_m"])
        ev, eh = with_vertical(ants[case["antenna"]], t, F_HZ, _AZ, _EL, at_m=(0.0, 0.0))
        g = 10 * np.log10(np.maximum(np.abs(ev) ** 2 + np.abs(eh) ** 2, 1e-30))
        return metrics_toward(_TH, _PH, g, forward_phi_deg=180.0 if case["antenna"] == "flag" else 0.0)

    d_rdf, d_gain, fb = _changes(model(50.0), model(None))
    n_rdf, n_gain, n_fb = _changes(case["resonant"], case["alone"])
    assert d_rdf == pytest.approx(n_rdf, abs=0.4)
    assert d_gain == pytest.approx(n_gain, abs=1.0)
    near_hat = case["place"] == "behind" and case["distance_m"] == 20.0
    assert fb == pytest.approx(n_fb, abs=7.0 if near_hat else 3.0)


def test_a_top_loaded_verticals_reactance_is_its_electrical_lengths():
    """The self impedance with top loading t: the top-loaded current's resistance (NEC-2's top-hat vertical alone:
    20.0 ohm; the model 18.5) and the reactance of a plain monopole h + t tall (zero at the resonant length)."""
    tx = TOPHAT["tx"]
    v = from_si("vertical", height=tx["height_m"], top_loading=tx["top_loading_m"], ground="perfect", ground_loss=0.0)
    z = scatter.self_impedance(TxVertical(v, (0.0, 0.0), 50.0, tx["radius_m"]), F_HZ)
    assert z.real == pytest.approx(tx["impedance_alone_ohm"][0], abs=2.0)
    assert abs(z.imag) < 0.5
    plain = monopole_impedance(F_HZ, tx["height_m"] + tx["top_loading_m"], 0.0, tx["radius_m"])
    assert z.imag == pytest.approx(plain.imag, abs=1e-9)


def test_flag_20m_cost_and_detuned_recovery():
    """The issue's check: the flag 20 m from a resonant quarter-wave vertical shows NEC's SNR cost (RDF under a
    uniform sky) within 2 dB, and detuning recovers it in NEC and in the model alike."""
    for case in (c for c in REF["cases"] if c["antenna"] == "flag" and c["distance_m"] == 20.0):
        alone = _model(case, None)
        cost_model = alone["rdf_db"] - _model(case, 50.0)["rdf_db"]
        cost_nec = case["alone"]["rdf_db"] - case["resonant"]["rdf_db"]
        assert cost_model == pytest.approx(cost_nec, abs=2.0)
        # Detuned (open): NEC's residue of the open wire stays within 0.2 dB of the flag alone; the model's is 0.
        assert abs(case["alone"]["rdf_db"] - case["detuned"]["rdf_db"]) < 0.2
        assert abs(case["detuned"]["front_to_back_db"] - case["alone"]["front_to_back_db"]) < 3.0
        assert case["resonant"]["front_to_back_db"] < case["detuned"]["front_to_back_db"] - 5.0


def test_effective_height_gives_induced_emf_mutual_impedance():
    """Z_21 = -c_A e_A(grazing) E_z / 2 for two verticals equals the induced-EMF mutual impedance (Balanis, eq.
    (8-62), through coupling.monopole_impedance): the normalisation and sign of the scattered term."""
    lam = 299792458.0 / F_HZ
    tx = from_si("vertical", height=lam / 4, ground="perfect", ground_loss=0.0)
    t = TxVertical(tx, (0.0, 0.0))
    c = scatter.effective_height_scale(t, F_HZ)
    assert c * np.sqrt(tx.gain_linear(F_HZ, 0.0, 0.0)) == pytest.approx(lam / np.pi, rel=2e-3)  # |h| = lambda/pi
    for d in (60.0, 300.0):
        term, _ = scatter.coupling_terms(tx, t, F_HZ, (d, 0.0))
        z = monopole_impedance(F_HZ, lam / 4, 0.0, d)
        assert abs(-term * c - z) < 0.05 * abs(z)


def test_open_base_and_detuning_reactance():
    """An open base leaves the antenna's response as it is; a detuning reactance of a few kohm nearly so; the
    resonant load changes it."""
    ants, txa = _antennas("lossy")
    flag = ants["flag"]
    az, el = np.radians([270.0, 90.0]), np.radians([20.0, 20.0])
    bare = flag.complex_response(F_HZ, az, el)[0]
    t = TxVertical(txa, (4.25, 20.0), None)
    assert np.allclose(with_vertical(flag, t, F_HZ, az, el, at_m=(0, 0))[0], bare)
    detuned = with_vertical(flag, t.with_load(scatter.state_load("detuned", 3000.0)), F_HZ, az, el, at_m=(0, 0))[0]
    resonant = with_vertical(flag, t.with_load(scatter.state_load("resonant")), F_HZ, az, el, at_m=(0, 0))[0]
    change_detuned, change_resonant = np.abs(detuned - bare), np.abs(resonant - bare)
    assert np.all(change_detuned < 0.2 * change_resonant)
    assert change_resonant[0] > 0.05 * abs(bare[0])


def test_bad_state_and_tall_vertical():
    with pytest.raises(ValueError, match="tx_state"):
        scatter.state_load("off")
    tall = from_si("vertical", height=60.0, ground="perfect")
    with pytest.raises(ValueError, match="wavelengths"):
        scatter.check_height(TxVertical(tall, (0.0, 0.0)), 7.1e6)


SMALL_LOT = """
[site]
name = "small lot"
latitude = 44.2
longitude = -71.3
lot = [[-30, -30], [60, -30], [60, 40], [-30, 40]]
{extra}

[band]
frequency = "1.83 MHz"

[time]
months = [1]
utc_hours = [4]

[uncertainty]
ground = false
noise_deciles = false
local_sources = false

[[target]]
name = "Europe"
bearing = 90
elevation = [10, 25]

[reference]
family = "vertical"
height = "40 m"

[[candidate]]
name = "flag near"
family = "terminated-loop"
width = "8.5 m"
loop_height = "4.3 m"
height = "1.5 m"
bearing = 90
position = [-4.25, 20]

[[candidate]]
name = "flag far"
family = "terminated-loop"
width = "8.5 m"
loop_height = "4.3 m"
height = "1.5 m"
bearing = 90
position = [40, 0]

[[candidate]]
name = "pair"
family = "phased-verticals"
positions = [[30, 25], [45, 25]]
height = "6 m"
bearing = 90
"""


def _tx_codes(extra=""):
    import snrgain

    r = snrgain.evaluate(SMALL_LOT.format(extra=extra))
    return {(n.code, n.antenna): n for n in r.notices if "tx" in n.code}


def test_small_lot_is_not_flagged_by_distance_alone():
    """Every antenna stands well inside half a wavelength (82 m); only the one the resonant vertical costs more
    than 1 dB of RDF is warned about, with both states' numbers; detuned, none is."""
    codes = _tx_codes()
    assert not any(code == "near-tx-vertical" for code, _ in codes)
    assert set(codes) == {("tx-vertical-cost", "flag near")}
    v = codes[("tx-vertical-cost", "flag near")].values
    assert v["state"] == "resonant" and v["cost_db"] > 1.0 and abs(v["detuned_rdf_change_db"]) < 0.1
    assert v["resonant_front_to_back_db"] < v["front_to_back_alone_db"] - 6.0
    assert not _tx_codes('tx_state = "detuned"')
    assert not _tx_codes('tx_state = "detuned"\ntx_detune_reactance = "3000 ohm"')
    hard = _tx_codes('tx_clearance = "50 m"')
    assert {a for c, a in hard if c == "near-tx-vertical"} == {"flag near", "flag far", "pair"}


def test_the_warning_says_the_cautions():
    from snrgain.outputs.messages import notice_text

    n = _tx_codes()[("tx-vertical-cost", "flag near")]
    text = notice_text(n)
    assert "relay" in text and "rated for the transmitter's power" in text and "licensed practice" in text


LAYOUT_LOT = """
[site]
name = "small lot to place on"
latitude = 44.2
longitude = -71.3
lot = [[-15, -15], [45, -15], [45, 35], [-15, 35]]
{extra}

[band]
frequency = "1.83 MHz"

[time]
months = [1]
utc_hours = [4]

[uncertainty]
ground = false
noise_deciles = false
local_sources = false

[[target]]
name = "East"
bearing = 90
elevation = [10, 25]

[reference]
name = "TX vertical"
family = "vertical"
height = "40 m"
position = [0, 0]

[[candidate]]
name = "flag"
family = "terminated-loop"
width = "8.5 m"
loop_height = "4.3 m"
height = "1.5 m"
bearing = 90
place = {{}}
"""


def test_layout_places_by_the_computed_cost_not_a_radius():
    """Every place on this lot lies inside half a wavelength (82 m) of the vertical: with the clearance rule alone
    layout refused; now it places the flag, its score carrying the computed cost, and a given tx_clearance is
    still a hard rule."""
    import tomllib

    from snrgain.scenario import load
    from snrgain.tools.layout import Problem

    text = LAYOUT_LOT.format(extra="")
    pr = Problem(load(text), tomllib.loads(text))
    found = pr.feasible(0)
    costs = pr.tx_costs_db([pr.base[0].at((d.east_m, d.north_m)) for d in found])
    best = pr.search(keep=1)[0].designs[0]
    best_cost = float(pr.tx_costs_db([pr.base[0].at((best.east_m, best.north_m))])[0])
    assert costs.max() > 1.0 and best_cost < 1.0  # some places cost over 1 dB; the chosen one does not
    hard = LAYOUT_LOT.format(extra='tx_clearance = "30 m"')
    pr_hard = Problem(load(hard), tomllib.loads(hard))
    assert all(np.hypot(d.east_m, d.north_m) >= 30.0 - 1e-6 for d in pr_hard.feasible(0))


def test_the_layout_shown_is_what_the_ranking_gives_the_placed_flag():
    """The search scores by the RDF the vertical costs; the layout it shows gives each antenna its SNR gain as the
    ranking gives the file with the flag placed there (beside the vertical): one answer."""
    import tomllib

    import snrgain
    from snrgain.scenario import load
    from snrgain.tools.layout import Problem

    text = LAYOUT_LOT.format(extra="")
    pr = Problem(load(text), tomllib.loads(text))
    best = pr.search(keep=1)[0]
    d = best.designs[0]
    placed = text.replace("place = {}", f"position = [{d.east_m!r}, {d.north_m!r}]")
    ranked = snrgain.evaluate(placed).antenna("flag")
    assert best.snr_gain_db[0] == pytest.approx(float(ranked.snr_gain_nominal_db[0]), abs=1e-6)


def _beverage(gname="lossy"):
    b = REF["beverage"]
    return from_spec(
        {
            "family": "beverage",
            "length": f"{b['length_m']} m",
            "height": f"{b['height_m']} m",
            "termination": f"{b['termination_ohm']} ohm",
            "bearing": 90,  # along NEC's +x
            "ground": _ground(gname),
            "position": [0, 0],
            # NEC's decks: the junction resistances subtracted, a source with no load of its own at the feed
            "feed_ground": "0 ohm",
            "far_ground": "0 ohm",
            "turns_ratio": 0.1,
        }
    )


def test_the_vertical_as_a_column_of_dipoles_is_the_closed_form_over_a_perfect_ground():
    """field_vector_at (nearground's short dipoles up the vertical) against the closed forms of a sinusoidal
    filament and its image (Balanis 2005, eqs. (8-52), (8-53): field_at, radial_field_at) over a perfect ground."""
    lam = 299792458.0 / F_HZ
    v = from_si("vertical", height=lam / 4, ground="perfect", ground_loss=0.0)
    t = TxVertical(v, (3.0, -2.0))
    pts = np.array([[13.0, -2.0], [3.0, 18.0], [53.0, 28.0], [103.0, -2.0], [-200.0, 5.0]])
    z = np.array([2.0, 0.5, 6.0, 2.0, 10.0])
    e = scatter.field_vector_at(t, F_HZ, pts, z)
    ez, er = scatter.field_at(t, F_HZ, pts, z), scatter.radial_field_at(t, F_HZ, pts, z)
    d = pts - np.array(t.position_m)
    e_rho = (e[:, 0] * d[:, 0] + e[:, 1] * d[:, 1]) / np.hypot(d[:, 0], d[:, 1])
    assert np.allclose(e[:, 2], ez, rtol=1e-4, atol=1e-9)
    assert np.allclose(e_rho, er, rtol=1e-4, atol=1e-9)


def test_a_wire_driven_by_a_plane_wave_gives_its_own_pattern_currents():
    """The reciprocity integral a long wire hears the vertical through (placed._currents_on with a field) gives the
    line model's own feed current when handed a plane wave (snrgain.model.placed.plane_wave_field): sign and
    phase included, so the vertical's term adds to the wire's response as it should."""
    from snrgain.model.placed import plane_wave_field, wire_currents_in_field, wire_samples

    bev = _beverage()
    x = wire_samples(bev.length_m, F_HZ, 5.0)
    for az_deg, el_deg in ((90, 20), (270, 20), (45, 10), (180, 35)):
        az, el = np.radians(az_deg), np.radians(el_deg)

        def field(p, h, az=az, el=el):
            return plane_wave_field(F_HZ, np.column_stack([p, h]), az, el, bev.ground, "v")

        got = wire_currents_in_field(bev, F_HZ, np.zeros((1, 2)), x, field)[0]
        want = bev.currents(F_HZ, np.array([az]), np.array([el]))[0]["v"][0]
        assert abs(got - complex(np.ravel(want)[0])) < 1e-4 * abs(want)


BEVERAGE_CASES = [c for c in REF["cases"] if c["antenna"] == "beverage" and c["ground"] == "lossy"]


@pytest.mark.parametrize("case", BEVERAGE_CASES, ids=lambda c: f"{c['place']}-{c['distance_m']:g}")
def test_a_beverage_beside_the_resonant_vertical_changes_as_nec(case):
    """NEC-2 (tests/nec/scatter.json: a 100 m Beverage 2 m up over eps_r 13, 5 mS/m, the vertical 10-80 m broadside
    of its middle or 10-40 m behind its feed; NEC-2 holds a wire this low only roughly, DESIGN.md): the model's
    RDF change within 0.35 dB, forward-gain change within 0.6 dB, front-to-back within 1.5 dB, 3.5 dB 10 m behind
    the feed (measured, with the vertical's field the exact Sommerfeld integrals of noisemodels.halfspace: 0.32 dB
    broadside at 10 m, 0.30 and 3.2 dB behind at 10 m, 0.9 dB elsewhere; with the closed-form field before, whose
    radial field was 1-3 dB low here: 0.07, 0.36 and 0.9 dB).  Behind the feed the vertical acts as a reflector:
    front-to-back 19 dB at 10 m (22 in the model) against the wire's 10 dB alone."""
    bev = _beverage()
    lossy = _antennas("lossy")[1]
    t = TxVertical(lossy, tuple(case["tx_m"]), 50.0, REF["tx"]["radius_m"])

    def metrics(ev, eh):
        g = 10 * np.log10(np.maximum(np.abs(ev) ** 2 + np.abs(eh) ** 2, 1e-30))
        return metrics_toward(_TH, _PH, g, forward_phi_deg=0.0)

    alone = metrics(*bev.complex_response(F_HZ, _AZ, _EL))
    with_tx = metrics(*with_vertical(bev, t, F_HZ, _AZ, _EL, at_m=(0.0, 0.0)))
    d_rdf, d_gain, fb = _changes(with_tx, alone)
    n_rdf, n_gain, n_fb = _changes(case["resonant"], case["alone"])
    assert alone["rdf_db"] == pytest.approx(case["alone"]["rdf_db"], abs=0.3)
    assert d_rdf == pytest.approx(n_rdf, abs=0.35)
    assert d_gain == pytest.approx(n_gain, abs=0.6)
    assert fb == pytest.approx(n_fb, abs=3.5 if (case["place"], case["distance_m"]) == ("behind", 10.0) else 1.5)
    opened = metrics(*with_vertical(bev, t.with_load(None), F_HZ, _AZ, _EL, at_m=(0.0, 0.0)))
    assert opened["rdf_db"] == pytest.approx(alone["rdf_db"], abs=1e-9)  # NEC's open base: within 0.1 dB
    assert abs(case["detuned"]["rdf_db"] - case["alone"]["rdf_db"]) < 0.1


def test_a_grounded_tower_is_a_scatterer_too():
    """A grounded 18 m tower 15 m broadside of a flag on 80 m (0.22 wavelength: near its own resonance) costs the
    flag as a resonant vertical would; 200 m away it costs nothing; one too tall for the model is said."""
    import snrgain

    near = '\nstructures = [{ name = "tower", position = [-4.25, 15], height = "18 m" }]'
    text = SMALL_LOT.format(
        extra='tx_state = "detuned"\nground = { permittivity = 13, conductivity = "5 mS/m" }' + near
    ).replace('"1.83 MHz"', '"3.6 MHz"')
    text = text.replace('height = "40 m"', 'height = "20 m"')
    r = snrgain.evaluate(text)
    hit = [n for n in r.notices if n.code == "structure-cost"]
    assert [n.antenna for n in hit] == ["flag near"] and hit[0].values["cost_db"] > 1.0
    far = text.replace("[-4.25, 15]", "[-4.25, 215]")
    assert not [n for n in snrgain.evaluate(far).notices if n.code == "structure-cost"]
    tall = text.replace('height = "18 m" }', 'height = "40 m" }')
    said = [n.code for n in snrgain.evaluate(tall).notices if n.code.startswith("structure-")]  # the scatter's codes
    assert said == ["structure-not-computed"]  # (near-structure, the clearance from its foot, is snrgain.decide.lot's)


def test_a_detuning_reactance_needs_the_detuned_state():
    import snrgain
    from snrgain.errors import ScenarioError

    with pytest.raises(ScenarioError, match="tx_detune_reactance"):
        snrgain.evaluate(SMALL_LOT.format(extra='tx_detune_reactance = "2000 ohm"'))
    with pytest.raises(ScenarioError, match="tx_state"):
        snrgain.evaluate(SMALL_LOT.format(extra='tx_state = "off"'))


# -- the ranking hears the vertical (snrgain.model.scatter.with_structures) -------------------------------------


def _ranked(extra=""):
    import snrgain

    r = snrgain.evaluate(SMALL_LOT.format(extra=extra))
    return {a.name: a for a in r.antennas}


def test_the_ranking_hears_the_resonant_vertical_and_not_the_detuned_one():
    """The flag 20 m from the resonant vertical loses in the ranked RDF and SNR gain what the vertical's
    re-radiation takes (the same model NEC-2 bounds above); the open (detuned) vertical leaves the ranking as a
    scenario without it; the flag 40 m off the vertical moves less than the near one."""
    from snrgain.model.scatter import tx_cost
    from snrgain.scenario import load

    resonant, detuned = _ranked(), _ranked('tx_state = "detuned"')
    near_r, near_d = resonant["flag near"], detuned["flag near"]
    # the toward-target RDF moves, and by about the uniform-sky figure the notice gives (a different average)
    sc = load(SMALL_LOT.format(extra=""))
    cost = tx_cost(sc, next(a for a in sc.candidates if a.name == "flag near"))["cost_db"]
    assert cost > 1.0
    d_rdf = float(near_d.rdf_db[0] - near_r.rdf_db[0])
    assert d_rdf > 0.5 and d_rdf == pytest.approx(cost, abs=1.5)
    d_snr = float(np.median(near_d.snr_gain_db[0]) - np.median(near_r.snr_gain_db[0]))
    d_far = float(np.median(detuned["flag far"].snr_gain_db[0]) - np.median(resonant["flag far"].snr_gain_db[0]))
    assert d_snr > 0.3 and abs(d_far) < d_snr


def test_the_stage_is_the_scatter_model_and_leaves_the_scenario_alone():
    """Each computed candidate's ranked response is the bare antenna's with the vertical's term
    (physics.scatter.with_vertical) to 1e-12; the scenario's own antennas are untouched; an open base or a
    site without a vertical on the plan changes nothing; the moved antennas survive pickling (sweeps on Dask)."""
    import pickle

    from snrgain.model.scatter import bare, site_scatterers, with_structures
    from snrgain.scenario import load

    sc = load(SMALL_LOT.format(extra=""))
    before = list(sc.antennas)
    out = with_structures(sc)
    assert [a is b for a, b in zip(sc.antennas, before)] == [True] * len(before)
    moved = {a.name: a for a in out.antennas if bare(a) is not a}
    assert set(moved) == {"flag near", "flag far", "pair"}
    (tx,) = site_scatterers(sc)
    az, el = np.radians(np.arange(0.0, 360.0, 30.0)), np.radians(np.full(12, 15.0))
    for a in moved.values():
        at = a.params.position or (0.0, 0.0)
        want = with_vertical(bare(a), tx, sc.freq_hz, az, el, at_m=at)
        got = a.complex_response(sc.freq_hz, az, el)
        assert np.allclose(got[0], want[0], rtol=1e-12, atol=1e-15) and np.allclose(got[1], want[1])
        assert np.allclose(a.gain_linear(sc.freq_hz, az, el), np.abs(want[0]) ** 2 + np.abs(want[1]) ** 2)
        back = pickle.loads(pickle.dumps(a))
        assert np.allclose(back.complex_response(sc.freq_hz, az, el)[0], got[0])
        assert a.gain_key() is None  # its gains depend on where it stands
    assert with_structures(load(SMALL_LOT.format(extra='tx_state = "detuned"'))) is not None
    detuned = load(SMALL_LOT.format(extra='tx_state = "detuned"'))
    assert with_structures(detuned) is detuned
    no_lot = load(SMALL_LOT.format(extra="").replace("lot = [[-30, -30], [60, -30], [60, 40], [-30, 40]]", ""))
    assert with_structures(no_lot) is no_lot


def test_a_ground_variant_keeps_the_vertical_beside_the_antenna():
    """The spread over grounds moves each antenna to another soil (spread.on_ground): one beside the vertical
    stays beside it."""
    from snrgain.model.scatter import bare, with_structures
    from snrgain.model.spread import on_ground
    from snrgain.physics.ground import ground_by_name
    from snrgain.scenario import load

    sc = with_structures(load(SMALL_LOT.format(extra="")))
    other = ground_by_name("very dry ground")
    moved = on_ground(sc, sc.antennas, other)
    flag = next(a for a in moved if a.name == "flag near")
    was = next(a for a in sc.antennas if a.name == "flag near")
    assert bare(flag) is not flag and flag.scatterers == was.scatterers
    assert bare(flag).ground is not bare(was).ground


def test_the_vertical_next_door_stays_when_another_antenna_is_the_reference():
    """``--reference`` makes another antenna the reference; the transmitting vertical is still the file's and still
    re-radiates into every other antenna (the flag 20 m from it hears the same noise, and the same toward the
    target, either way); naming it in ``[site] transmitting`` gives the same; "none" leaves it out, as the open
    base does; a name that is no vertical of the scenario is refused naming the key."""
    import snrgain
    from snrgain.errors import ScenarioError
    from snrgain.scenario import load

    text = SMALL_LOT.format(extra="")
    file_run = {a.name: a for a in snrgain.evaluate(text).antennas}
    other = load(text, reference="flag far")
    assert other.reference.name == "flag far" and other.transmitting == "vertical"
    other_run = {a.name: a for a in snrgain.evaluate(other).antennas}
    for name in ("flag near", "pair"):
        np.testing.assert_allclose(other_run[name].noise_dbm, file_run[name].noise_dbm, atol=1e-6)
        np.testing.assert_allclose(other_run[name].rdf_db, file_run[name].rdf_db, atol=1e-6)
    named = snrgain.evaluate(text.replace('name = "small lot"', 'name = "small lot"\ntransmitting = "vertical"'))
    assert named.antenna("flag near").rdf_db[0] == pytest.approx(file_run["flag near"].rdf_db[0], abs=1e-9)
    none = snrgain.evaluate(SMALL_LOT.format(extra='transmitting = "none"'))
    detuned = snrgain.evaluate(SMALL_LOT.format(extra='tx_state = "detuned"'))
    assert none.antenna("flag near").rdf_db[0] == pytest.approx(detuned.antenna("flag near").rdf_db[0], abs=1e-9)
    with pytest.raises(ScenarioError, match="site.transmitting"):
        load(SMALL_LOT.format(extra='transmitting = "pair"'))


def test_every_computed_antenna_says_what_the_vertical_does_to_it():
    """The results carry, per antenna the vertical's coupling is computed for, its RDF change, front-to-back and
    forward-gain change in both states (JSON ``tx_vertical``), warned or not; the warned one's figures are the
    notice's."""
    import snrgain

    r = snrgain.evaluate(SMALL_LOT.format(extra=""))
    rows = {row["antenna"]: row for row in r.tx_vertical}
    assert set(rows) == {"flag near", "flag far", "pair"}
    for row in rows.values():
        assert row["scatterer"] == "vertical" and row["state"] == "resonant"
        assert row["cost_db"] == pytest.approx(-row["resonant"]["rdf_change_db"])
        assert row["detuned"]["rdf_change_db"] == pytest.approx(0.0, abs=1e-9)  # the open base
    notice = next(n for n in r.notices if n.code == "tx-vertical-cost")
    assert notice.antenna == "flag near" and rows["flag near"]["cost_db"] == pytest.approx(notice.values["cost_db"])
    assert rows["flag far"]["cost_db"] < rows["flag near"]["cost_db"]


def test_the_costs_of_many_places_at_once_equal_one_by_one():
    """layout's batch of a design's places (model.scatter.tx_costs_db) equals tx_cost place by place, for a flag,
    a Beverage (through its line model) and a pair, resonant and with a detuning reactance."""
    from snrgain.model.scatter import tx_cost, tx_costs_db, tx_vertical, wire_terms
    from snrgain.scenario import load

    text = SMALL_LOT.format(extra="")
    text += '\n[[candidate]]\nname = "bev"\nfamily = "beverage"\nlength = "150 m"\nheight = "2 m"\nbearing = 80\n'
    text += "position = [5, -20]\n"
    for extra in ("", 'tx_state = "detuned"\ntx_detune_reactance = "-300 ohm"'):
        sc = load(text.replace('name = "small lot"', f'name = "small lot"\n{extra}'))
        tx = tx_vertical(sc)
        by = {a.name: a for a in sc.candidates}
        places = [(-4.25, 20.0), (12.0, -9.0), (30.0, 5.0), (-8.0, -12.0)]
        for name in ("flag near", "bev", "pair"):
            ants = [by[name].at(p) for p in places] if name != "pair" else [by[name]]
            one = [tx_cost(sc, a, tx=tx) for a in ants]
            many = tx_costs_db(sc, ants, tx, wire_terms(sc, ants, tx))
            np.testing.assert_allclose(many, [c["cost_db"] for c in one], atol=1e-9)


def test_the_field_a_compact_part_takes_is_kept_and_equals_a_fresh_one():
    from snrgain.antennas.base import variant

    # scatter._field_on keeps the field at a part's points by the vertical and the part's geometry alone: another
    # resistor or another ground asks again and gets the same array; the values are those worked afresh.
    ants, txa = _antennas("lossy")
    t = TxVertical(txa, (15.0, 5.0), 50.0, REF["tx"]["radius_m"])
    flag = ants["flag"]
    other = variant(flag, termination=400.0, ground="perfect")
    for part in (flag, ants["pair"].elements[0]):
        pts = scatter.equivalent_points(part, np.array([0.0, 0.0]))
        got = scatter._field_on(part, t, F_HZ, pts)
        scatter._TABLES.clear()
        fresh = scatter._field_on(part, t, F_HZ, pts)
        assert got.tobytes() == fresh.tobytes() and not fresh.flags.writeable
        assert scatter._field_on(other if part is flag else part, t, F_HZ, pts) is fresh
    z = scatter._centre_height(flag)
    pts = scatter.equivalent_points(flag, np.array([0.0, 0.0]))
    lo, hi = float(flag.params.height), float(flag.params.height) + float(flag.params.loop_height)
    zq = lo + (hi - lo) * (0.5 + 0.5 * scatter.gauss_legendre(4)[0])
    want = np.mean([scatter.field_at(t, F_HZ, pts, np.full(len(pts), zz)) for zz in zq], axis=0)
    want = want + scatter.loop_correction(flag, t, F_HZ, pts, lo, hi)
    assert z == pytest.approx(0.5 * (lo + hi))
    np.testing.assert_array_equal(scatter._field_on(flag, t, F_HZ, pts), want)


def test_grazing_weights_kept_by_the_perfect_twin():
    # scatter._grazing_on: the twins of one antenna at several grounds are one perfect-ground twin, worked once and
    # equal to grazing_weights.
    from snrgain.antennas.base import variant

    flag = _antennas("lossy")[0]["flag"]
    pos = np.array([3.0, -2.0])
    pts = scatter.equivalent_points(flag, pos)
    scatter._TABLES.clear()
    twins = [scatter._perfect_twin(variant(flag, ground=g)) for g in ("moist loam", "sandy soil")]
    first = scatter._grazing_on(twins[0], F_HZ, pts, pos)
    assert first.tobytes() == scatter.grazing_weights(twins[0], F_HZ, pts, pos).tobytes()
    assert scatter._grazing_on(twins[1], F_HZ, pts, pos) is first and not first.flags.writeable


def test_a_wires_emfs_from_the_vertical_are_worked_once_for_every_resistor(monkeypatch):
    # wire_couplings keeps the EMFs along the wire and up its leads by what wire_emfs reads of the wire (length,
    # height, leads) and the vertical: another resistor takes them again; the couplings equal those worked afresh.
    from snrgain.antennas.base import variant
    from snrgain.physics import reciprocity

    bev = _beverage()
    t = TxVertical(_antennas("lossy")[1], (50.0, 20.0), 50.0, REF["tx"]["radius_m"])
    feeds = np.array([[0.0, 0.0], [5.0, -3.0]])
    wires = [variant(bev, termination=r) for r in (300.0, 500.0, 700.0)]
    fresh = []
    for w in wires:
        scatter._TABLES.clear()
        scatter._ALONG.clear()
        fresh.append(scatter.wire_couplings(w, t, F_HZ, feeds))
    scatter._TABLES.clear()
    scatter._ALONG.clear()
    calls = []
    real = reciprocity.wire_emfs
    monkeypatch.setattr(reciprocity, "wire_emfs", lambda *a, **k: calls.append(1) or real(*a, **k))
    for w, want in zip(wires, fresh):
        assert scatter.wire_couplings(w, t, F_HZ, feeds).tobytes() == want.tobytes()
    assert len(calls) == 1


def test_the_cost_of_many_places_on_a_lattice_equals_each_place_alone():
    # model.scatter._rdf_at: places on a lattice (the phase sums as one matrix product over the distinct east and
    # north offsets) against each place worked alone (its phases worked directly), on random cell sums.
    from snrgain.model.scatter import _cell_sums, _grid, _rdf_at

    rng = np.random.default_rng(7)
    az, el = _grid()
    az = np.concatenate([az, [0.7, 0.7 + np.pi]])
    el = np.concatenate([el, [0.35, 0.35]])
    ux, uy = np.cos(el) * np.sin(az), np.cos(el) * np.cos(az)
    ev0, eh0, field = (rng.normal(size=len(az)) + 1j * rng.normal(size=len(az)) for _ in range(3))
    sums = _cell_sums(ev0, eh0, 0.3 * field, el, ux, uy)
    e, n = np.meshgrid([-40.0, -12.5, 3.0, 77.0], [5.0, 18.0, 120.0], indexing="ij")
    d = np.column_stack([e.ravel(), n.ravel()])
    cs = rng.normal(size=len(d)) + 1j * rng.normal(size=len(d))
    k = 2 * np.pi * 1.83e6 / 299792458.0
    many = _rdf_at(sums, cs, d, k, ux, uy)
    alone = np.array([_rdf_at(sums, cs[p : p + 1], d[p : p + 1], k, ux, uy)[0] for p in range(len(d))])
    assert np.max(np.abs(many - alone)) < 1e-9


def test_a_loop_at_many_places_chooses_its_resistor_once(monkeypatch):
    """A terminated loop whose resistor "auto" chooses, heard by the vertical at many places (a layout's grid): its
    perfect-ground twin is made once and stood at each place, so the resistor is searched once, and each place's
    coupling is the same, to the bit, as with a twin made afresh there."""
    from snrgain.antennas import longwire, termloop
    from snrgain.memo import forget

    lam = 299792458.0 / F_HZ
    tx = TxVertical(from_si("vertical", height=lam / 4, ground="moist loam"), (0.0, 0.0), 50.0)
    flag = from_si(
        "terminated-loop", width=8.0, loop_height=4.0, height=1.5, ground="moist loam", termination="auto", bearing=0.5
    )
    places = [(30.0 + 7.0 * k, 20.0 - 3.0 * k) for k in range(6)]
    forget()
    searches = []
    best = longwire.best_resistor
    monkeypatch.setattr(termloop, "best_resistor", lambda *a, **k: searches.append(1) or best(*a, **k))
    shared = [scatter.coupling_terms(flag.at(p), tx, F_HZ, p)[0] for p in places]
    assert len(searches) == 1  # the twin's, over the perfect ground
    monkeypatch.setattr(scatter, "_TWINS", scatter.Memo(0))  # no twin kept: one made afresh at every place
    forget()
    alone = [scatter.coupling_terms(flag.at(p), tx, F_HZ, p)[0] for p in places]
    assert len(searches) == 1 + len(places)
    assert shared == alone


MISPHASED = """
[site]
name = "Hollin Row (invented)"
latitude = 42.0
longitude = -71.5
ground = "moist loam"

[band]
frequency = "1.83 MHz"

[time]
months = [1]
utc_hours = [2, 4]

[noise.man_made]
environment = "rural"

[[target]]
name = "Europe"
bearing = 45
elevation = [5, 25]

[reference]
name = "TX vertical"
family = "vertical"
height = "40 m"
position = [0, 0]

[[candidate]]
name = "pair"
family = "phased-verticals"
positions = [[25, 25], [42, 42]]
height = "7 m"
ground_loss = "30 ohm"
bearing = 45
steering = "given"
phases = [90, 0]
phase_sense = "lag"
"""
# the front (north-east) element leads: the pair beams south-west, its back toward its bearing


def test_a_misphased_arrays_vertical_cost_is_read_where_it_hears():
    """A pair whose given phases beam it away from its bearing: the vertical's cost is read toward its main lobe
    (as its phasing tolerance is), not toward its bearing, where it has its null (read there, the pair alone had an
    RDF of -1.5 dB and the vertical seemed to add 4.7 dB, so the resonant vertical 47 m off was not named)."""
    import snrgain

    r = snrgain.evaluate(MISPHASED)
    codes = {n.code for n in r.notices}
    assert "lobe-away-from-bearing" in codes
    row = next(t for t in r.to_dict()["tx_vertical"] if t["antenna"] == "pair")
    assert row["alone"]["rdf_db"] > 5.0 and row["alone"]["front_to_back_db"] > 5.0  # its front: where it hears
    assert row["cost_db"] > 1.0 and "tx-vertical-cost" in codes


@pytest.mark.parametrize("bearing", [0, 180])
def test_a_broadside_pairs_lobe_is_the_one_toward_its_bearing(bearing):
    """A pair half a wavelength apart east-west in phase has two lobes, north and south, 0.2 dB apart beside the
    vertical: its bearing says which one it is built for, so its figures and the vertical's cost are read there and
    no lobe-away warning is given (the stronger one, north, was taken: built for the south, it was told to check
    its phases)."""
    import snrgain
    from snrgain.antennas.array import main_lobe_rad

    text = MISPHASED.replace("[[25, 25], [42, 42]]", "[[60, 60], [142, 60]]").replace("[90, 0]", "[0, 0]")
    text = text.replace("bearing = 45\nsteering", f"bearing = {bearing}\nsteering")
    r = snrgain.evaluate(text)
    assert "lobe-away-from-bearing" not in {n.code for n in r.notices}
    pair = next(a for a in r.to_dict()["tx_vertical"] if a["antenna"] == "pair")
    assert pair["alone"]["rdf_db"] > 0.0
    az = np.radians(np.arange(0.0, 360.0, 1.0))
    two = np.maximum(np.cos(az) ** 2, 1e-3)  # lobes north and south, equal
    assert np.degrees(main_lobe_rad(az, two, np.radians(170.0))) == pytest.approx(180.0)
    assert np.degrees(main_lobe_rad(az, two, np.radians(10.0))) == pytest.approx(0.0)
    assert np.degrees(main_lobe_rad(az, two * (1 + 0.5 * np.cos(az)), np.radians(180.0))) == pytest.approx(0.0)


SQUARE = (
    '[[candidate]]\nname = "four-square {feed}"\nfamily = "phased-verticals"\n'
    'positions = [[6, 40], [24, 40], [6, 58], [24, 58]]\nheight = "7 m"\nground_loss = "30 ohm"\nbearing = 135\n'
)
LINES_FED = scenario_text(
    name="Larchmere Lane",
    ground='{ conductivity = "4 mS/m", permittivity = 13 }',
    site_extra='tx_state = "resonant"\n',
    frequency="3.525 MHz",
    environment="residential",
    targets=(("South America", 149, 5, 10),),
    reference=VERTICAL.format(height="15 m", east=49.6, north=14.4) + 'top_loading = "6 m"\nground_loss = "8 ohm"\n',
    candidates=SQUARE.format(feed="lines") + 'feed = "lines"\n',
)


def test_a_lines_fed_array_feels_the_vertical_as_its_currents_do():
    # The vertical re-radiates into what the array's elements hear; fed by lines, the elements' currents are the
    # coupling's transform of the combiner's weights (I = M V), and the re-radiation reaches the array through
    # those currents.  So a current-forced array given the very currents of the lines-fed one sees the vertical
    # alike: the same RDF change and front-to-back (it once read the weights as currents: -6.0 dB of RDF and a
    # front-to-back of 3.5 dB, against -0.4 dB and 24 dB for the same currents forced).
    sc = snrgain.scenario.load(LINES_FED)
    lines = next(a for a in sc.candidates if a.name == "four-square lines")
    i = lines.currents(sc.freq_hz)
    amps = np.abs(i) / np.abs(i).max()
    lags = np.mod(-np.degrees(np.angle(i)), 360.0)
    forced = SQUARE.format(feed="forced") + (
        f'feed = "current"\nsteering = "given"\namplitudes = {[float(a) for a in amps]}\n'
        f'phases = {[float(x) for x in lags]}\nphase_sense = "lag"\n'
    )
    r = snrgain.evaluate(LINES_FED + forced)
    rows = {t["antenna"]: t for t in r.tx_vertical}
    a, b = rows["four-square lines"], rows["four-square forced"]
    assert a["alone"]["rdf_db"] == pytest.approx(b["alone"]["rdf_db"], abs=0.01)  # one pattern, alone
    assert a["resonant"]["rdf_change_db"] == pytest.approx(b["resonant"]["rdf_change_db"], abs=0.02)
    assert a["resonant"]["front_to_back_db"] == pytest.approx(b["resonant"]["front_to_back_db"], abs=0.2)
    assert abs(a["resonant"]["rdf_change_db"]) < 1.0  # 0.58 wavelength from a resonant quarter wave


def test_the_verticals_distance_is_the_antennas_closest_approach():
    # A review placed a Beverage whose wire passes 10 m from the transmitting vertical and the rows said 91 m (its
    # feed point's distance): the distance is now the closest approach of the wire (or of an array's elements).
    from snrgain.antennas import from_spec
    from snrgain.model.scatter import closest_approach_m

    bev = from_spec(
        {
            "family": "beverage",
            "length": "200 m",
            "height": "2 m",
            "bearing": 90,
            "position": [0, 0],
            "ground": "moist loam",
        }
    )
    assert closest_approach_m(bev, (100.0, 10.0)) == pytest.approx(10.0)  # beside the middle of the wire
    assert closest_approach_m(bev, (-30.0, 40.0)) == pytest.approx(50.0)  # behind its feed point
    assert closest_approach_m(bev, (230.0, 40.0)) == pytest.approx(50.0)  # beyond its far end
    assert closest_approach_m(bev, (100.0, 10.0), at_m=(0.0, 50.0)) == pytest.approx(40.0)  # the wire put elsewhere
    pair = from_spec(
        {
            "family": "phased-verticals",
            "positions": [[0, 0], [0, 30]],
            "height": "6 m",
            "bearing": 0,
            "ground": "moist loam",
        }
    )
    assert closest_approach_m(pair, (0.0, 40.0)) == pytest.approx(10.0)  # its nearer element, not the centre's 25 m
    whip = from_spec({"family": "vertical", "height": "6 m", "position": [3, 4], "ground": "moist loam"})
    assert closest_approach_m(whip, (0.0, 0.0)) == pytest.approx(5.0)
    # through the ranking's rows: a Beverage passing the vertical 10 m off, and a flag whose loop runs from its feed
    # side (its position) away from its bearing, 20.45 m at its feed side
    import snrgain

    wire = '[[candidate]]\nname = "bev"\nfamily = "beverage"\nlength = "150 m"\nheight = "2 m"\nbearing = 90\n'
    text = SMALL_LOT.format(extra="") + wire + "position = [-60, 10]\n"
    text = text.replace(
        "lot = [[-30, -30], [60, -30], [60, 40], [-30, 40]]", "lot = [[-70, -30], [100, -30], [100, 40], [-70, 40]]"
    )
    rows = {row["antenna"]: row["distance_m"] for row in snrgain.evaluate(text).tx_vertical}
    assert rows["bev"] == pytest.approx(10.0) and rows["flag near"] == pytest.approx(float(np.hypot(4.25, 20.0)))
