"""The phasing-tolerance notice (snrgain.decide.tolerance): an array whose RDF or rear null rests on phasing lines cut
closer than a cable's velocity factor is known is said to, with the figures it keeps in one build in ten."""

import numpy as np
import pytest

from snrgain.antennas import from_spec
from snrgain.decide import tolerance as tol
from snrgain.outputs.messages import notice_text
from snrgain.physics.ground import C_M_PER_S
from tests.conftest import REPO

F = 1.83e6


def _site_with(candidate: str, tmp_path):
    """The tests' Sedge Bank site (tests/data/sites/sedge-bank-160.toml) with one more candidate table, written to a
    file: its path."""
    path = tmp_path / "site.toml"
    path.write_text((REPO / "tests" / "data" / "sites" / "sedge-bank-160.toml").read_text() + candidate)
    return path


def _square(side_m: float, auto_for: str = "rdf", **extra):
    return from_spec(
        {
            "family": "phased-verticals",
            "positions": [[0, 0], [side_m, 0], [0, side_m], [side_m, side_m]],
            "height": "6 m",
            "ground": "moist loam",
            "bearing": 45,
            "auto_for": auto_for,
            **extra,
        }
    )


def test_independent_phase_errors_fill_a_null_as_gilbert_and_morgan_say():
    """Random phase errors of sigma rad on each element (independent, normal) leave the expected power toward a
    direction at |sum w a|^2 e^{-sigma^2} + (1 - e^{-sigma^2}) sum |w a|^2 (E. N. Gilbert and S. P. Morgan, Bell
    System Technical Journal 34, 1955; from memory, and the expectation E[e^{j d}] = e^{-sigma^2/2} of a normal d).
    Toward a deep rear null the first term is nearly gone and the second fills it: the model's array with its
    weights turned by the errors (Array.with_weights, as the notice turns them) must give both."""
    ant = _square(15.0, auto_for="front_to_back")
    w0 = ant.weights_at(F)
    b = float(ant.params.bearing)
    el = float(ant.params.auto_elevation)
    az, els = np.array([b + np.pi]), np.array([el])
    nominal = ant.gain_linear(F, az, els)[0]
    assert nominal < 1e-4 * ant.gain_linear(F, np.array([b]), els)[0]  # a null over 40 dB deep
    elem = ant.elements[0].gain_linear(F, az, els)[0]
    a = ant.element_amplitudes(F)  # the weights over the combiner's norm
    sigma = 0.05
    rng = np.random.default_rng(3)
    back = [
        ant.with_weights(F, w0 * np.exp(-1j * d), "test").gain_linear(F, az, els)[0]
        for d in rng.normal(0.0, sigma, size=(3000, 4))
    ]
    fill = (1 - np.exp(-(sigma**2))) * float(np.sum(np.abs(a) ** 2)) * elem
    assert fill > 10 * nominal  # the errors, not the null left, set the mean
    assert np.mean(back) == pytest.approx(nominal * np.exp(-(sigma**2)) + fill, rel=0.08)


def test_no_error_no_change_and_the_draws_are_the_same_every_run():
    ant = _square(20.0)
    rdf, fb = tol.figures(ant, F)
    assert tol.figures(ant, F, ant.weights_at(F)) == pytest.approx((rdf, fb), abs=1e-9)
    delays = ant.effective_delays_s(F)
    e1, e2 = tol.line_errors_s(delays), tol.line_errors_s(delays)
    assert e1.shape == (tol.DRAWS, 4) and np.array_equal(e1, e2)
    # the element with no line (delay 0) carries its own length error alone: 10 cm of cable at VF 0.85, about 0.4 ns
    zero = int(np.argmin(delays))
    own = tol.LENGTH_ERROR_M / (tol.CUT_VELOCITY_FACTOR * C_M_PER_S)
    assert np.std(tol.line_errors_s(delays, draws=20000)[:, zero]) == pytest.approx(own, rel=0.03)


def test_a_superdirective_square_asks_for_precision_and_a_quarter_wave_one_does_not():
    """The smaller the square steered for RDF, the more of its RDF rests on exact lines (superdirective arrays are
    sensitive to errors: Gilbert and Morgan, above): a 0.06-wavelength square loses dB in one build in ten, a
    quarter-wave one tenths; delay-steered end-fire (the travel-time delays, not superdirective) hardly moves."""
    losses = []
    for side in (10.0, 20.0, 41.0):
        t = tol.tolerance(_square(side), F)
        assert t["rdf_drawn_db"][0] <= t["rdf_drawn_db"][1] <= t["rdf_drawn_db"][2] <= t["rdf_db"] + 0.05
        losses.append(t["rdf_db"] - t["rdf_drawn_db"][0])
    assert losses[0] > losses[1] > losses[2]
    assert losses[0] > 3.0 and losses[2] < 0.3
    assert tol.asks_for_precision(tol.tolerance(_square(10.0), F))
    assert not tol.asks_for_precision(tol.tolerance(_square(41.0), F))
    end_fire = tol.tolerance(_square(20.0, auto_for="end-fire"), F)
    assert end_fire["rdf_db"] - end_fire["rdf_drawn_db"][0] < 0.05 and not tol.asks_for_precision(end_fire)


def test_an_exact_null_reads_over_40_db_and_is_said_only_when_little_of_it_stays():
    t = tol.tolerance(_square(41.0, auto_for="front_to_back"), F)
    assert t["front_to_back_db"] == tol.FRONT_TO_BACK_CAP_DB
    assert t["front_to_back_drawn_db"][0] >= tol.FRONT_TO_BACK_KEPT_DB
    assert not tol.asks_for_precision(t)  # 40 dB and more becomes 15-40 dB: still a null
    small = tol.tolerance(_square(10.0, auto_for="front_to_back"), F)
    assert small["front_to_back_drawn_db"][0] < tol.FRONT_TO_BACK_KEPT_DB and tol.asks_for_precision(small)


def test_no_figures_for_antennas_without_phasing_lines():
    assert tol.tolerance(from_spec({"family": "vertical", "height": "6 m"}), F) is None
    assert tol.tolerance(from_spec({"family": "beverage", "length": "200 m", "height": "2.5 m"}), F) is None


def test_rank_says_it_for_a_small_square_on_a_site(tmp_path):
    """The notice through the pipeline and the command line: a 20 m four-square of short verticals steered for RDF
    at 160 m (a tenth of a wavelength and more, on a small lot) beside the site file's own antennas."""
    from click.testing import CliRunner

    import snrgain
    from snrgain.cli.main import cli
    from snrgain.scenario import load

    path = _site_with(
        '\n[[candidate]]\nname = "small square"\nfamily = "phased-verticals"\n'
        'positions = [["90 m", "40 m"], ["110 m", "40 m"], ["90 m", "60 m"], ["110 m", "60 m"]]\n'
        'height = "6 m"\nground_loss = "30 ohm"\nbearing = 290\n',
        tmp_path,
    )
    r = snrgain.evaluate(load(path))
    said = [n for n in r.notices if n.code == "phasing-tolerance"]
    assert [n.antenna for n in said] == ["small square"]  # not the quarter-wave-spaced pair of the same file
    v = said[0].values
    assert v["rdf_db"] - v["rdf_drawn_db"][0] >= tol.RDF_LOSS_DB
    text = notice_text(said[0])
    assert "small square: its phasing asks for precision" in text and "Trim each phasing line" in text
    assert f"{v['rdf_drawn_db'][0]:.1f} to {v['rdf_drawn_db'][2]:.1f} dB" in text
    res = CliRunner().invoke(cli, ["rank", str(path), "--all-warnings"])  # said even of a candidate not built
    assert res.exit_code == 0, res.output
    assert "small square: its phasing asks for precision" in res.output


def test_a_switched_square_is_named_once(tmp_path):
    """A four-square switched to four bearings is one antenna to build: one warning, by the state that loses most."""
    import snrgain
    from snrgain.scenario import load

    path = _site_with(
        '\n[[candidate]]\nname = "small square"\nfamily = "phased-verticals"\n'
        'positions = [["90 m", "40 m"], ["110 m", "40 m"], ["90 m", "60 m"], ["110 m", "60 m"]]\n'
        'height = "6 m"\nground_loss = "30 ohm"\ndirections = ["45 deg", "135 deg", "225 deg", "315 deg"]\n',
        tmp_path,
    )
    sc = load(path)
    r = snrgain.evaluate(sc)
    said = [n for n in r.notices if n.code == "phasing-tolerance"]
    assert len(said) == 1 and said[0].antenna == "small square"
    v = said[0].values
    assert v["states"] == 4 and v["shown_state"].endswith("deg)")
    assert notice_text(said[0]).startswith(f"small square (in 4 of its states; {v['shown_state']} shown): its phasing")
    states = {a.name: tol.tolerance(a, sc.freq_hz) for a in load(path).candidates if a.name.startswith("small")}
    assert len(states) == 4


def test_given_delays_are_turned_too_and_read_toward_the_main_lobe():
    """An array with the same delays written out (steering "given", no bearing: it points where its delays point)
    draws the same figures as the auto-steered one, read toward its main lobe; a copy holding other weights uses
    them (Array.weights_at: held weights win whatever the steering)."""
    auto = _square(10.0)
    delays = auto.effective_delays_s(F)
    given = from_spec(
        {
            "family": "phased-verticals",
            "positions": [[0, 0], [10, 0], [0, 10], [10, 10]],
            "height": "6 m",
            "ground": "moist loam",
            "steering": "given",
            "delays": [f"{t * 1e9:.6f} ns" for t in delays],
        }
    )
    assert np.degrees(tol.front_of(given, F)[0]) == pytest.approx(45.0, abs=1.0)
    a, g = tol.tolerance(auto, F), tol.tolerance(given, F)
    assert g["rdf_db"] == pytest.approx(a["rdf_db"], abs=0.05)
    assert g["rdf_drawn_db"] == pytest.approx(a["rdf_drawn_db"], abs=0.1)
    assert tol.asks_for_precision(g)
    w = given.weights_at(F) * np.exp(-1j * np.array([0.0, 0.3, 0.0, 0.0]))
    az, el = np.radians([225.0]), np.radians([20.0])
    assert given.with_weights(F, w, "test").gain_linear(F, az, el)[0] != given.gain_linear(F, az, el)[0]


def test_an_array_beside_the_vertical_keeps_its_scatterers_under_turned_weights(tmp_path):
    """An array 20-40 m from the transmitting vertical: its figures with its own weights handed back as 'turned'
    are its figures (the vertical's re-radiation worked again for the weights, not left at the old ones)."""
    from snrgain.model import pipeline
    from snrgain.scenario import load

    path = _site_with(
        '\n[[candidate]]\nname = "near square"\nfamily = "phased-verticals"\n'
        'positions = [["20 m", "20 m"], ["40 m", "20 m"], ["20 m", "40 m"], ["40 m", "40 m"]]\n'
        'height = "6 m"\nground_loss = "30 ohm"\nbearing = 45\n',
        tmp_path,
    )
    seen = {}
    real = pipeline.decide

    def spy(sc, skies, antennas, cuts):
        seen["sc"] = sc
        return real(sc, skies, antennas, cuts)

    pipeline.decide = spy
    try:
        pipeline.evaluate(load(path))
    finally:
        pipeline.decide = real
    ant = next(a for a in seen["sc"].candidates if a.name == "near square")
    assert getattr(ant, "scatterers", None), "the square should stand beside the vertical"
    own = tol.figures(ant, F)
    assert tol.figures(ant, F, ant.weights_at(F)) == pytest.approx(own, abs=1e-6)
    # every draw at once (the response linear in the weights, the vertical's re-radiation too) as one by one
    front = tol.front_of(ant, F)
    rng = np.random.default_rng(2)
    weights = ant.weights_at(F)[None, :] * np.exp(1j * rng.normal(0.0, 0.3, size=(5, 4)))
    rdf, fb = tol._figures_of_weights(ant, F, weights, front)
    one_by_one = np.array([tol.figures(ant, F, w, front) for w in weights])
    np.testing.assert_allclose(rdf, one_by_one[:, 0], atol=1e-9)
    np.testing.assert_allclose(fb, one_by_one[:, 1], atol=1e-9)
    plain = _square(20.0)
    rdf, fb = tol._figures_of_weights(plain, F, weights, tol.front_of(plain, F))
    np.testing.assert_allclose(rdf, [tol.figures(plain, F, w)[0] for w in weights], atol=1e-9)


def test_a_reversing_transformer_shortens_the_lines_and_keeps_a_20_m_square():
    """Elements lagging by half a period or more take their 180 deg from a phase-reversing transformer, their lines
    half a period shorter (common practice): the velocity factor's error, proportional to a line's length, then
    hardly moves a 20 m square at 160 m, which asks for precision with its lines as the build sheet gives them."""
    half = 0.5 / F
    # a four-square's 0, 90, 90 and 180 deg: the longest line 90 deg (one pair reversed), the lines' differences
    # kept modulo 180 deg; 195, 0, 0, 164 deg: both reversed, every line moved by 16 deg, the longest 31 deg
    lines = tol.reversed_lines_s(np.array([0.0, 0.5, 0.5, 1.0]) * half, F)
    assert np.max(lines) == pytest.approx(0.5 * half)
    shift = np.mod(lines - np.array([0.0, 0.5, 0.5, 1.0]) * half, half)
    assert np.allclose(np.minimum(shift, half - shift), np.minimum(shift, half - shift)[0], atol=1e-15)
    deg = half / 180.0
    np.testing.assert_allclose(
        tol.reversed_lines_s(np.array([195.0, 0.0, 0.0, 164.0]) * deg, F), np.array([31.0, 16.0, 16.0, 0.0]) * deg
    )
    t = tol.tolerance(_square(20.0), F)
    assert tol.asks_for_precision(t)
    rev = t["reversed"]
    assert rev is not None and rev["longest_delay_ns"] < 0.5e9 / F
    assert not tol.asks_for_precision(t, rev)
    assert t["rdf_db"] - rev["rdf_drawn_db"][0] < t["rdf_db"] - t["rdf_drawn_db"][0]
    quarter = tol.tolerance(_square(41.0, auto_for="end-fire"), F)  # its delays: reversing saves little
    assert quarter["reversed"] is None


def test_a_switched_array_shows_a_state_the_plan_builds(tmp_path):
    import snrgain
    from snrgain.scenario import load

    path = _site_with(
        '\n[[candidate]]\nname = "small square"\nfamily = "phased-verticals"\n'
        'positions = [["90 m", "40 m"], ["110 m", "40 m"], ["90 m", "60 m"], ["110 m", "60 m"]]\n'
        'height = "6 m"\nground_loss = "30 ohm"\ndirections = ["45 deg", "135 deg", "225 deg", "315 deg"]\n',
        tmp_path,
    )
    r = snrgain.evaluate(load(path))
    said = next(n for n in r.notices if n.code == "phasing-tolerance")
    used = r.plan.states.get("small square", [])
    assert used and f"small square {said.values['shown_state']}" in used


def test_the_warning_and_the_build_sheet_offer_transformers_alike():
    """Where the phasing-tolerance warning works the build with phase-reversing transformers, the build sheet spells
    it out, and where the sheet does not, the warning does not offer it (one test, tolerance.shortened_lines_s):
    four verticals in a line lagging 0, 60, 120 and 190 deg shorten their longest line only to 120 of 190 deg (0.63
    of it: neither; the warning offered it before), a four-square's 0, 90, 90 and 180 deg to half of it (both)."""
    from snrgain.decide.build import build_sheet

    def line(phases, positions):
        return from_spec(
            {
                "family": "phased-verticals",
                "positions": positions,
                "height": "6 m",
                "ground": "moist loam",
                "steering": "given",
                "phases": phases,
                "phase_sense": "lag",
            }
        )

    four = line([0, 60, 120, 190], [[0, 0], [0, 20], [0, 40], [0, 60]])
    square = line([0, 90, 90, 180], [[0, 0], [20, 0], [0, 20], [20, 20]])
    for ant, offered in ((four, False), (square, True)):
        delays = ant.effective_delays_s(F)
        short = tol.shortened_lines_s(delays, F)
        assert (short is not None) is offered
        assert (tol.tolerance(ant, F)["reversed"] is not None) is offered
        assert ("reversed_build" in build_sheet(ant, F)) is offered
    assert np.max(tol.reversed_lines_s(four.effective_delays_s(F), F)) / np.max(four.effective_delays_s(F)) == (
        pytest.approx(120 / 190)
    )
