"""An array steered for SNR hears a placed source from where its elements stand (snrgain.model.steering.
placed_forms), as the products take it, not as a spot on the sky at the source's bearing from the reference."""

import numpy as np
import pytest

from tests.conftest import REPO

SITE = """
[site]
name = "Shed Lane (invented)"
latitude = 42.0
longitude = -71.5
ground = "moist loam"
lot = [[-50, -50], [300, -50], [300, 300], [-50, 300]]

[band]
frequency = "1.83 MHz"

[time]
months = [1]
utc_hours = [2, 4]

[noise.man_made]
environment = "quiet rural"

[[noise.local]]
name = "shed supply"
position = [60, 40]
height = "2 m"
level = "S7"
uncertainty = "3 dB"

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
positions = [[80, 40], [94.5, 54.5]]
height = "7 m"
ground_loss = "30 ohm"
bearing = 45
auto_for = "AUTO"
"""
# the source 20 m west of the pair's first element; from the reference it lies at 56 deg, from the pair at ~255 deg


def _steered(auto_for: str, tmp_path):
    import snrgain
    from snrgain.scenario import load

    path = tmp_path / f"{auto_for}.toml"
    path.write_text(SITE.replace("AUTO", auto_for))
    return snrgain.evaluate(load(path))


FEED_LINE = 'feed_line = { to = [0, 0], height = "0.5 m", cable = "RG-6" }'
"""The pair's coax laid on stakes from its phasing unit to the station, no choke: its shield hears the supply too."""


@pytest.mark.parametrize("feed, line", [("buffered", ""), ("lines", ""), ("buffered", FEED_LINE)])
def test_the_forms_are_the_products_noise_for_any_weights(feed, line):
    """For any weights, the steering's noise form (the placed source's from where the elements stand, and the rest
    of the sky's) gives the temperature the products give the array with those weights, the array beside the
    resonant transmitting vertical as the ranking takes it (its re-radiation in both), fed through lines too, and
    with its feed line's pickup (the same for any weights)."""
    from snrgain.model import pipeline
    from snrgain.model.products import products
    from snrgain.model.scatter import bare, beside, with_structures
    from snrgain.model.steering import feed_line_temperature, placed_forms, sky_forms
    from snrgain.scenario import load

    more = f'\nfeed = "{feed}"' + (f"\n{line}" if line else "")
    text = SITE.replace("AUTO", "snr").replace('ground_loss = "30 ohm"', f'ground_loss = "30 ohm"{more}')
    sc = with_structures(pipeline.resolve_sources(load(text, base_dir=REPO)))
    grid = pipeline.sky_grid(sc)
    skies = pipeline.build_sky(sc, grid)
    ant = sc.candidates[0]
    assert bare(ant) is not ant  # beside the vertical
    placed = placed_forms(sc, skies, ant)["shed supply"]
    fl = feed_line_temperature(sc, grid, skies, ant, 1)
    assert (fl > 0) == bool(line)
    _, noise, _ = sky_forms(sc, skies, ant, 1, fl)
    chain = sc.chains[1].temperature_k
    row = list(skies.names).index("shed supply")
    rng = np.random.default_rng(5)
    for _ in range(3):
        w = rng.normal(size=2) + 1j * rng.normal(size=2)
        arr = beside(bare(ant).with_weights(sc.freq_hz, w, "test"), ant.scatterers)
        temps = products(sc, [sc.antennas[0], arr], grid, skies).temps
        u = np.conj(bare(arr).weights_at(sc.freq_hz))
        q = float(np.real(u.conj() @ bare(arr).norm_matrix(sc.freq_hz) @ u))
        t_placed = float(np.real(u.conj() @ placed @ u)) / q
        if not line:  # (with a feed line the products' row holds its share of the supply too)
            assert t_placed == pytest.approx(float(np.mean(temps.by_component[row, 1])), rel=1e-6)
        t_all = float(np.real(u.conj() @ noise @ u)) / q - chain
        assert t_all == pytest.approx(float(np.mean(temps.total[1])), rel=1e-6)


def test_snr_steering_beats_rdf_steering_under_a_near_source(tmp_path):
    """Weights set for the SNR under the site's noise, the source 20 m off heard where the pair stands, do at least
    as well as the RDF's under that noise (they were 8 dB worse with the source a spot at its bearing from the
    reference, and the main lobe swung to the back), and the lobe stays forward."""
    snr, rdf = _steered("snr", tmp_path), _steered("rdf", tmp_path)
    assert snr.antenna("pair").snr_gain_nominal_db[0] >= rdf.antenna("pair").snr_gain_nominal_db[0] - 0.1
    assert not [n for n in snr.notices if n.code == "lobe-away-from-bearing"]


UNIT = """
[[noise.local]]
name = "pump house"
position = [40, 95]
height = "2 m"
level = "S7"

[[candidate]]
name = "main"
family = "beverage"
length = "200 m"
height = "2.5 m"
bearing = 45
position = [60, 60]

[[candidate]]
name = "sense"
family = "vertical"
height = "6 m"
ground_loss = "30 ohm"
position = [50, 80]

[[candidate]]
name = "unit"
family = "combination"
antennas = ["main", "sense"]
bearing = 45
"""
# a Beverage with a pump house 40 m off its side, which a short sense vertical 20 m from the pump house hears
# 29 dB louder: what a phasing unit is built for


def _unit_site():
    head, _, _ = SITE.partition("[[noise.local]]")
    ref = SITE[SITE.index("[[target]]") : SITE.index("[[candidate]]")]
    return head + ref + UNIT


def test_a_phasing_units_forms_are_the_products_noise_for_any_setting():
    """A phasing unit's noise form (the placed source as each of its two antennas hears it where it stands, and the
    rest of the sky) gives, for any setting, the temperature the products give the unit set so."""
    from snrgain.model import pipeline
    from snrgain.model.products import products
    from snrgain.model.scatter import with_structures
    from snrgain.model.steering import placed_forms, sky_forms
    from snrgain.scenario import load

    sc = with_structures(pipeline.resolve_sources(load(_unit_site(), base_dir=REPO)))
    grid = pipeline.sky_grid(sc)
    skies = pipeline.build_sky(sc, grid)
    k = [a.name for a in sc.antennas].index("unit")
    unit = sc.antennas[k]
    placed = placed_forms(sc, skies, unit)["pump house"]
    _, noise, _ = sky_forms(sc, skies, unit, k)
    chain = sc.chains[k].temperature_k
    row = list(skies.names).index("pump house")
    rng = np.random.default_rng(7)
    for _ in range(3):
        w = rng.normal(size=2) + 1j * rng.normal(size=2)
        set_so = unit.with_weights(sc.freq_hz, w, "test")
        temps = products(sc, [sc.antennas[0], set_so], grid, skies).temps
        u = np.conj(set_so.weights_at(sc.freq_hz))
        q = float(np.real(u.conj() @ set_so.norm_matrix(sc.freq_hz) @ u))
        assert float(np.real(u.conj() @ placed @ u)) / q == pytest.approx(
            float(np.mean(temps.by_component[row, 1])), rel=1e-6
        )
        t_all = float(np.real(u.conj() @ noise @ u)) / q - chain
        assert t_all == pytest.approx(float(np.mean(temps.total[1])), rel=1e-6)


def test_a_phasing_unit_nulls_a_near_source_its_sense_antenna_hears():
    """The unit's automatic setting, the pump house heard where each antenna stands, nulls it: the unit beats its
    Beverage alone by more than 6 dB (it took the Beverage alone, 0 dB ahead, while the source was a spot at its
    bearing from the reference: no setting of that form nulls it where the antennas hear it)."""
    import snrgain

    res = snrgain.evaluate(_unit_site())
    unit, main = res.antenna("unit"), res.antenna("main")
    assert unit.snr_gain_nominal_db[0] > main.snr_gain_nominal_db[0] + 6.0


def test_snr_steering_counts_the_feed_lines_share(monkeypatch):
    """The supply 6 m from the pair's coax and 42 m from the pair: the shield delivers it whatever the phasing, so the
    steering, counting that (feed_line_temperature), spends less of the pair's pattern on nulling it and ranks
    better than the same steering blind to the coax (0.9 against 0.2 dB when written)."""
    import snrgain
    from snrgain.model import steering

    text = (
        SITE.replace("AUTO", "snr")
        .replace('ground_loss = "30 ohm"', f'ground_loss = "30 ohm"\n{FEED_LINE}')
        .replace("position = [60, 40]", "position = [40, 28]")
    )
    counted = snrgain.evaluate(text).antenna("pair").snr_gain_nominal_db[0]
    monkeypatch.setattr(steering, "feed_line_temperature", lambda *args: 0.0)
    blind = snrgain.evaluate(text).antenna("pair").snr_gain_nominal_db[0]
    assert counted > blind + 0.5


def test_the_feed_lines_share_leaves_the_scenarios_array_as_it_was():
    """feed_line_temperature works the products on a copy: the scenario's own array keeps no weights from it."""
    from snrgain.model import pipeline
    from snrgain.model.scatter import bare, with_structures
    from snrgain.model.steering import feed_line_temperature
    from snrgain.scenario import load

    text = SITE.replace("AUTO", "snr").replace('ground_loss = "30 ohm"', f'ground_loss = "30 ohm"\n{FEED_LINE}')
    sc = with_structures(pipeline.resolve_sources(load(text, base_dir=REPO)))
    grid = pipeline.sky_grid(sc)
    skies = pipeline.build_sky(sc, grid)
    own = bare(sc.candidates[0])
    assert not own._steered
    assert feed_line_temperature(sc, grid, skies, sc.candidates[0], 1) > 0
    assert not own._steered


def test_a_sources_stated_uncertainty_is_its_noise_deciles():
    """The shed supply's 3 dB (its 10-90 % half-width) is its upper and lower decile in the noise table, as the
    spreads take it, and counts in the P.372 Section 8 total (it showed 0.0 and 0.0)."""
    import snrgain

    r = snrgain.evaluate(SITE.replace("AUTO", "snr"))
    c = r.noise.components["shed supply"]
    assert np.allclose(c["du_db"], 3.0) and np.allclose(c["dl_db"], 3.0)
    assert np.all(r.noise.total_du_db > 0.0)


def test_a_lobe_turned_away_by_the_snr_steering_is_not_blamed_on_phases_never_given(tmp_path):
    """A reviewer's array steered for SNR turned its main lobe to 225 deg to null a placed inverter, and the warning
    told the user to check the sign of phases never given.  With the supply 50 m in front of the pair (north-east),
    the SNR steering nulls it and the lobe swings back: the warning says the steering did it, that the build sheet's
    bearing is not its beam, and what to do; steered for RDF the lobe stays forward; a given phasing that beams the
    array back keeps its old warning (a sign to check)."""
    from snrgain.antennas import from_spec
    from snrgain.decide.decisions import lobe_away
    from snrgain.model.notices import Notice
    from snrgain.outputs.messages import notice_text

    in_front = SITE.replace("position = [60, 40]", "position = [130, 90]")
    (snr,) = [n for n in _steered_text(in_front, "snr", tmp_path).notices if n.code == "lobe-away-from-bearing"]
    assert snr.values["steering"] == "auto" and snr.values["auto_for"] == "snr"
    assert snr.values["sources"] == ["shed supply"] and abs(snr.values["lobe_deg"] - 225) < 20
    text = notice_text(snr)
    assert "check the sign" not in text
    assert (
        "its steering for SNR under the site's noise (auto_for = 'snr') turned it there to null what it hears" in text
    )
    assert "'shed supply'" in text and "the build sheet's 'toward 45 deg' is its bearing, not its beam" in text
    assert "write auto_for = 'rdf'; or accept the null" in text
    assert not [n for n in _steered_text(in_front, "rdf", tmp_path).notices if n.code == "lobe-away-from-bearing"]
    q = 299792458.0 / 1.83e6 / 4
    given = {
        "family": "phased-verticals",
        "positions": [[0, 0], [0, q]],
        "height": "5 m",
        "bearing": 0,
        "steering": "given",
        "phases": [0, 90],
        "phase_sense": "lead",
        "ground": "moist loam",
    }
    away = lobe_away(from_spec(given), 1.83e6)
    assert away["steering"] == "given" and "auto_for" not in away
    assert "check the sign of its phases" in notice_text(Notice("lobe-away-from-bearing", "pair", away))
    rdf = {**away, "steering": "auto", "auto_for": "rdf"}  # steered automatically for RDF: no phases to blame either
    said = notice_text(Notice("lobe-away-from-bearing", "pair", rdf))
    assert "(auto_for = 'rdf': no phases of yours to check)" in said and "check the sign" not in said


def _steered_text(text: str, auto_for: str, tmp_path):
    import snrgain
    from snrgain.scenario import load

    path = tmp_path / f"{auto_for}-text.toml"
    path.write_text(text.replace("AUTO", auto_for))
    return snrgain.evaluate(load(path))
