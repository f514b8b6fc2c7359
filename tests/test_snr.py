"""Integrator invariants: directivity limits, normalisation, convergence, local sources."""

import numpy as np
import pytest

import snrgain
from noisemodels import p372, sky, sphere
from snrgain import snr
from snrgain.antennas import from_spec
from snrgain.targets import from_bearing

F = 1.83e6


def _uniform_sky(grid, fa=60.0):
    return sky.diffuse_component("uniform", kind="test", level=p372.NoiseLevel(fa, 0, 0), directions=grid)


@pytest.mark.parametrize(
    "spec",
    [
        {"family": "vertical", "height": "30 m", "ground": "moist loam", "ground_loss": "10 ohm"},
        {"family": "tabulated", "file": "scenarios/patterns/cardioid-pair.csv", "rotate": 45},
    ],
)
def test_uniform_sky_no_receiver_noise_gives_ratio_of_directivities(spec, monkeypatch):
    # DESIGN.md "SNR": with uniform sky noise and no chain noise the SNR gain is the ratio of RDFs.
    from tests.conftest import REPO

    monkeypatch.chdir(REPO)
    grid = sphere.upper_hemisphere(32)
    comp = _uniform_sky(grid)
    ref = from_spec({"family": "vertical", "height": "20 m", "ground": "moist loam"})
    cand = from_spec(spec)
    tgt = from_bearing(
        "t", bearing_rad=np.radians(45), elevation_lo_rad=np.radians(10), elevation_hi_rad=np.radians(20)
    )
    out = []
    for a in (cand, ref):
        cache = snr.GainCache(lambda az, el, a=a: a.gain_linear(F, az, el))
        s = snr.target_gain(cache.gain_fn, tgt)
        t = snr.antenna_temperature_k(cache, [comp]).sum()
        rdf = snr.rdf_db(s, snr.hemisphere_mean_gain(cache.on(grid), grid))
        out.append((s, t, rdf))
    (sa, ta, ra), (sr, tr, rr) = out
    assert snr.snr_gain_db(sa, ta, sr, tr) == pytest.approx(ra - rr, abs=1e-9)


def test_isotropic_rdf_zero_under_isotropic_noise():
    grid = sphere.upper_hemisphere(32)
    iso = from_spec({"family": "isotropic"})
    g = iso.gain_linear(F, grid.azimuth_rad, grid.elevation_rad)
    tgt = from_bearing("t", bearing_rad=1.0, elevation_lo_rad=0.2, elevation_hi_rad=0.5)
    rdf = snr.rdf_db(snr.target_gain(lambda az, el: iso.gain_linear(F, az, el), tgt), snr.hemisphere_mean_gain(g, grid))
    assert rdf == pytest.approx(0.0, abs=1e-9)
    # and its antenna temperature under a uniform sky of temperature T is T/2 (half the sphere is ground, G = 0)
    comp = _uniform_sky(grid)
    t_sky = comp.weight_k_sr.sum() / grid.solid_angle_sr.sum()  # uniform brightness [K]
    t_a = sky.weighted_temperature_k(g, comp.weight_k_sr)
    assert t_a == pytest.approx(0.5 * t_sky, rel=1e-9)


@pytest.mark.parametrize(
    "shape, params", [("uniform", {}), ("low", {"scale_rad": 0.17}), ("band", {"center_rad": 0.35, "width_rad": 0.17})]
)
def test_every_component_normalised_to_its_fa_on_reference_monopole(shape, params):
    grid = sphere.upper_hemisphere(32)
    comp = sky.diffuse_component(
        "c",
        kind="test",
        level=p372.NoiseLevel(47.0, 0, 0),
        directions=grid,
        elevation=shape,
        elevation_params=params,
        azimuth="sector",
        azimuth_params={"start_rad": 1.0, "stop_rad": 2.0, "contrast_db": 10.0},
    )
    assert p372.temperature_to_fa_db(sky.reference_temperature_k(comp)) == pytest.approx(47.0, abs=1e-9)
    local = sky.compact_component(
        "l", level=p372.NoiseLevel(55.0, 0, 0), azimuth_rad=4.0, elevation_rad=0.1, spread_rad=0.15
    )
    assert p372.temperature_to_fa_db(sky.reference_temperature_k(local)) == pytest.approx(55.0, abs=1e-9)


def test_galactic_screened_below_critical_and_open_above():
    grid = sphere.upper_hemisphere(32)
    shut = sky.galactic_component(1.83e6, directions=grid, critical_freq_hz=3e6, layer_height_m=300e3)
    assert np.isneginf(shut.level.fa_db)
    # Critical frequency far below: nearly the whole sky passes, close to P.372's galactic Fa.
    wide = sky.galactic_component(7.1e6, directions=grid, critical_freq_hz=0.5e6, layer_height_m=300e3)
    assert float(wide.level.fa_db) == pytest.approx(float(p372.galactic(7.1e6).fa_db), abs=0.1)
    part = sky.galactic_component(7.1e6, directions=grid, critical_freq_hz=4e6, layer_height_m=300e3)
    assert float(part.level.fa_db) < float(wide.level.fa_db)


def test_penetration_elevation_secant_law_flat_limit():
    # Thin layer, low height: cos(el) ~ sqrt(1 - (fc/f)^2), i.e. el = arcsin(fc/f) (flat-earth secant law).
    el = sky.penetration_elevation_rad(10e6, critical_freq_hz=5e6, layer_height_m=1.0)
    assert np.degrees(el) == pytest.approx(30.0, abs=1e-3)


def test_reference_has_zero_snr_gain_and_candidates_ranked(demo_path):
    r = snrgain.evaluate(demo_path)
    np.testing.assert_allclose(r.reference.snr_gain_db, 0.0, atol=1e-12)
    for i, tr in enumerate(r.target_results):  # per target, ranked by median SNR gain
        medians = [r.antenna(n).snr_gain_median_db[i] for n in tr.ranking]
        assert medians == sorted(medians, reverse=True) and tr.best == tr.ranking[0]


def test_local_level_measured_on_reference_is_honoured(demo_path):
    # The demo's neighbour reads S7 (= -85 dBm, IARU R.1) on the reference antenna.
    r = snrgain.evaluate(demo_path)
    got = r.reference.noise_by_component_dbm["neighbour's power supply"]
    np.testing.assert_allclose(got, -85.0, atol=1e-9)


def test_nside_32_and_64_agree(demo_path):
    # DESIGN.md: results must converge; 0.2 dB between nside 32 and 64.
    a = snrgain.evaluate(demo_path, nside=32)
    b = snrgain.evaluate(demo_path, nside=64)
    for ca in a.candidates:
        cb = next(c for c in b.candidates if c.name == ca.name)
        np.testing.assert_allclose(ca.snr_gain_db, cb.snr_gain_db, atol=0.2)
        np.testing.assert_allclose(ca.rdf_db, cb.rdf_db, atol=0.2)


def _scenario_with_local(minimal_text, bearing):
    text = minimal_text.replace(
        '[[candidate]]\nname = "iso"\nfamily = "isotropic"',
        (
            '[[candidate]]\nname = "cardioid"\nfamily = "tabulated"\n'
            'file = "scenarios/patterns/cardioid-pair.csv"\nrotate = 45\n'
        ),
    )
    if bearing is not None:
        text += f'\n[[noise.local]]\nname = "n"\nbearing = {bearing}\nelevation = 5\nspread = 3\nlevel = "S9"\n'
    return text


def test_strong_source_in_null_raises_snr_gain(minimal_text, monkeypatch):
    from tests.conftest import REPO

    monkeypatch.chdir(REPO)
    quiet = snrgain.evaluate(_scenario_with_local(minimal_text, None))
    noisy = snrgain.evaluate(_scenario_with_local(minimal_text, 225))  # the cardioid's null (rotate 45 + 180)
    assert noisy.candidates[0].snr_gain_nominal_db[0] > quiet.candidates[0].snr_gain_nominal_db[0] + 10.0
    # The same source in the cardioid's main lobe helps far less.
    front = snrgain.evaluate(_scenario_with_local(minimal_text, 45))
    assert front.candidates[0].snr_gain_nominal_db[0] < noisy.candidates[0].snr_gain_nominal_db[0] - 10.0


def test_receiver_noise_lowers_snr_gain_of_weak_antenna(minimal_text):
    base = minimal_text.replace(
        '[[candidate]]\nname = "iso"\nfamily = "isotropic"',
        '[[candidate]]\nname = "weak"\nfamily = "vertical"\nheight = "1 m"\nground_loss = "500 ohm"\n',
    )
    quiet_rx = snrgain.evaluate(base + '\n[receiver]\nnoise_figure = "0 dB"\n')
    noisy_rx = snrgain.evaluate(base + '\n[receiver]\nnoise_figure = "30 dB"\n')
    assert noisy_rx.candidates[0].snr_gain_nominal_db[0] < quiet_rx.candidates[0].snr_gain_nominal_db[0] - 1.0
    assert noisy_rx.candidates[0].receiver_limited
    assert any("weak" in w for w in noisy_rx.warnings)
