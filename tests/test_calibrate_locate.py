"""Calibration from analyser readings, noise-source location, and the small loop they use."""

import json
import tomllib

import numpy as np
import pytest
from click.testing import CliRunner

from noisemodels import p372, sky
from noisemodels.sphere import upper_hemisphere
from snrgain.antennas import from_spec
from snrgain.cli.main import cli
from snrgain.physics.ground import C_M_PER_S
from snrgain.physics.receiver import power_dbm
from snrgain.tools import calibrate as cal
from snrgain.tools.locate import EXAMPLE, LocateError, Reading, locate
from tests.conftest import REPO, SCENARIOS

EXAMPLE_80M = EXAMPLE.replace('frequency = "1.83 MHz"', 'frequency = "3.55 MHz"')
"""locate's example readings taken on the test scenarios' band (locate copies readings only into their own band)."""

F = 1.83e6


def _readings_of(line, length):
    """Textbook: Zoc = Z0 coth(gamma L), Zsc = Z0 tanh(gamma L)."""
    t = np.tanh(line.gamma * length)
    return line.z0 / t, line.z0 * t


@pytest.mark.parametrize("family, length, vf_hint", [("bog", 76.2, 0.6), ("beverage", 250.0, 0.9)])
def test_open_short_inversion_recovers_the_line(family, length, vf_hint):
    # Transmission-line identities Z0 = sqrt(Zoc Zsc), tanh(gamma L) = sqrt(Zsc/Zoc); the 250 m wire is
    # longer than a quarter wave, so the branch comes from the expected velocity factor and the length.
    spec = {"family": family, "length": f"{length} m", "ground": "moist loam"}
    if family == "beverage":
        spec["height"] = "2.5 m"
    ant = from_spec(spec)
    ln = ant.line(F)
    zoc, zsc = _readings_of(ln, length)
    got = cal.line_from_open_short([cal.OpenShort(F, zoc, zsc)], length_m=length, expected_velocity_factor=vf_hint)[0]
    assert got.velocity_factor == pytest.approx(ln.velocity_factor, rel=1e-9)
    assert got.attenuation_db_per_100m == pytest.approx(ln.attenuation_db_per_100m, rel=1e-9)
    assert got.z0 == pytest.approx(ln.z0, rel=1e-9)


@pytest.mark.parametrize("height, resting, vf_hint", [("5 cm", False, 0.7), ("on soil", True, 0.4)])
def test_bog_height_recovered_from_its_own_readings(height, resting, vf_hint):
    # Round trip: open/short readings made from the model's own line at 1.83 and 3.6 MHz for a BOG at a known
    # height over moist loam; fitting the height with the soil held gives it back (and says so when it rests on
    # the soil), with a misfit of zero.
    spec = {"family": "bog", "length": "60 m", "ground": "moist loam", "height": height}
    truth = from_spec(spec)
    pairs = [cal.OpenShort(f, *_readings_of(truth.line(f), 60.0)) for f in (1.83e6, 3.6e6)]
    laid = from_spec({**spec, "height": "2 cm"})  # what the builder wrote down
    res = cal.calibrate(cal.WireReadings(laid, pairs), expected_velocity_factor=vf_hint)
    h = res.height_fit
    assert h.at_lowest is resting and h.residual_rms < 0.05
    if not resting:
        assert h.height_m == pytest.approx(0.05, rel=0.02) and h.low_m < 0.05 < h.high_m
    assert "fitted_height" in res.as_dict()


@pytest.mark.parametrize(
    "family, height, truth_ground", [("beverage", "2.5 m", "sandy soil"), ("bog", "5 cm", "moist clay")]
)
def test_the_phase_branch_defaults_to_the_wire_models_own_velocity_factor(family, height, truth_ground):
    # A 300 m wire is two to three quarter waves at 1.83 MHz: open/short readings fix its phase only up to n pi, and
    # one fixed expected velocity factor (0.8) put a Beverage 2.5 m up at 0.76 instead of 0.95.  By default the
    # branch is now taken near the wire model's own velocity factor over the ground the builder wrote (here not the
    # soil the readings were made over), or near a quarter-wave resonance's when the readings hold one.
    spec = {"family": family, "length": "300 m", "height": height, "ground": truth_ground}
    truth = from_spec(spec)
    pairs = [cal.OpenShort(f, *_readings_of(truth.line(f), 300.0)) for f in (1.83e6, 3.6e6)]
    laid = from_spec({**spec, "ground": "moist loam"})
    res = cal.calibrate(cal.WireReadings(laid, pairs))
    assert [c.velocity_factor for c in res.constants] == pytest.approx(
        [truth.line(f).velocity_factor for f in (1.83e6, 3.6e6)], rel=1e-9
    )
    assert "wire model" in res.branch[1]
    resonance = 0.25 * truth.line(0.2e6).velocity_factor * C_M_PER_S / 300.0  # its first quarter-wave resonance
    res = cal.calibrate(cal.WireReadings(laid, pairs, [resonance]))
    assert res.constants[0].velocity_factor == pytest.approx(truth.line(1.83e6).velocity_factor, rel=1e-9)
    assert "resonance" in res.branch[1]


def test_the_textbook_termination_is_the_bands_own_z0():
    # Readings at 1.83 and 3.6 MHz: the termination suggested is |Z0| less the far rod at the reading nearest the band
    # listened on (the scenario's, passed as freq_hz), not at the first reading (a review found 599 ohm, the 1.6
    # MHz |Z0|, suggested for a 1.83 MHz band whose |Z0| is 511 ohm); without a band the first, and it says where.
    spec = {"family": "beverage", "length": "200 m", "height": "2.5 m", "ground": "moist loam"}
    truth = from_spec(spec)
    pairs = [cal.OpenShort(f, *_readings_of(truth.line(f), 200.0)) for f in (1.83e6, 3.6e6)]
    for band, want in ((3.5e6, 3.6e6), (1.9e6, 1.83e6), (None, 1.83e6)):
        res = cal.calibrate(cal.WireReadings(truth, pairs), freq_hz=band)
        assert res.suggested_at_hz == want
        assert res.suggested_termination_ohm == pytest.approx(abs(truth.line(want).z0) - truth.far_rod_ohm, rel=1e-6)
        assert res.as_dict()["suggested_at_hz"] == want
    assert abs(truth.line(3.6e6).z0) != pytest.approx(abs(truth.line(1.83e6).z0), rel=1e-3)  # the choice matters


def test_branch_unwrapped_over_frequency():
    ant = from_spec({"family": "beverage", "length": "300 m", "height": "2.5 m", "ground": "moist loam"})
    freqs = [1.0e6, 1.4e6, 1.83e6, 2.5e6, 3.6e6]
    reads = []
    for f in freqs:
        zoc, zsc = _readings_of(ant.line(f), 300.0)
        reads.append(cal.OpenShort(f, zoc, zsc))
    got = cal.line_from_open_short(reads, length_m=300.0, expected_velocity_factor=0.9)
    for f, g in zip(freqs, got):
        assert g.velocity_factor == pytest.approx(ant.line(f).velocity_factor, rel=1e-6)


def test_quarter_wave_resonance_rule():
    # Common practice: VF = 4 L f / c for the first quarter-wave resonance of an open wire.
    assert cal.vf_from_quarter_wave(50.0, 1.2e6) == pytest.approx(4 * 50 * 1.2e6 / C_M_PER_S)
    with pytest.raises(cal.ReadingError, match="> 1"):
        cal.vf_from_quarter_wave(100.0, 1.2e6)


def test_fitted_ground_reproduces_the_velocity_factor():
    ant = from_spec({"family": "bog", "length": "80 m", "ground": {"conductivity": "12 mS/m", "permittivity": 20}})
    meas = []
    for f in (1.83e6, 3.6e6):
        ln = ant.line(f)
        meas.append(
            {"freq_hz": f, "velocity_factor": ln.velocity_factor, "attenuation_db_per_100m": ln.attenuation_db_per_100m}
        )

    fit = cal.fit_ground(ant.computed_line, meas)
    assert fit.conductivity_s_per_m == pytest.approx(0.012, rel=0.05)
    assert ant.computed_line(1.83e6, fit.ground).velocity_factor == pytest.approx(meas[0]["velocity_factor"], abs=1e-4)
    assert fit.conductivity_factor > 1.0


@pytest.mark.parametrize(
    "zoc, zsc, length, match",
    [
        (complex(-50, 10), complex(100, 50), 76.0, "negative"),
        (complex(100, -200), complex(150, 200), -5.0, "length"),
        (complex(100, -200), 0j, 76.0, "zero"),
    ],
)
def test_bad_readings(zoc, zsc, length, match):
    with pytest.raises(cal.ReadingError, match=match):
        cal.line_from_open_short([cal.OpenShort(F, zoc, zsc)], length_m=length)


def test_too_few_readings_for_ground_fit():
    with pytest.raises(cal.ReadingError, match="too few readings"):
        cal.fit_ground(lambda f, g: None, [{"freq_hz": F, "velocity_factor": 0.7}])


def test_calibrate_command(tmp_path):
    ant = from_spec({"family": "bog", "length": "250 ft", "gauge": 16, "ground": "moist loam"})
    zoc, zsc = _readings_of(ant.line(F), ant.length_m)
    rf = tmp_path / "r.toml"
    rf.write_text(
        f'[wire]\nfamily = "bog"\nlength = "250 ft"\ngauge = 16\n[[open_short]]\nfrequency = "1.83 MHz"\n'
        f'open = [{zoc.real}, {zoc.imag}]\nshort = "{zsc.real}{zsc.imag:+}j"\n'
    )
    out = tmp_path / "fitted.toml"
    runner = CliRunner()
    res = runner.invoke(
        cli,
        [
            "calibrate",
            str(rf),
            "--format",
            "json",
            "--scenario",
            str(SCENARIOS / "marrow-fen.toml"),
            "--write",
            str(out),
        ],
    )
    assert res.exit_code == 0, res.output
    data = json.loads(res.stdout)
    assert data["fitted_ground"]["conductivity_s_per_m"] == pytest.approx(0.005, rel=0.05)
    assert 250 < data["suggested_termination_ohm"] < 450
    assert 'ground = { conductivity = "5 mS/m"' in out.read_text()
    res = runner.invoke(
        cli, ["calibrate", str(rf), "--scenario", str(SCENARIOS / "marrow-fen.toml"), "--write", str(out)]
    )
    assert res.exit_code == 2 and "--overwrite" in res.stderr
    # a file of several bands takes the fitted ground too (a review: it was refused for want of a [band] frequency)
    several = REPO / "tests" / "data" / "sites" / "three-bands.toml"
    res = runner.invoke(cli, ["calibrate", str(rf), "--scenario", str(several), "--write", str(tmp_path / "b.toml")])
    assert res.exit_code == 0, res.output
    assert "(|Z0| at 1.83 MHz less the far rod" in res.stdout and (tmp_path / "b.toml").exists()
    bad = tmp_path / "bad.toml"
    bad.write_text(
        '[wire]\nfamily = "bog"\nlength = "250 ft"\n[[open_short]]\nfrequency = "1.83 MHz"\n'
        'open = "abc"\nshort = [1, 2]\n'
    )
    res = runner.invoke(cli, ["calibrate", str(bad)])
    assert res.exit_code == 2 and "open_short 1.open" in res.stderr


# -- the small loop -----------------------------------------------------------------


def test_small_loop_free_space_like_directivity_and_nulls():
    # Kraus: a small loop's directivity is 1.5; over a perfect ground the field doubles at the horizon (x4).
    lossless_pec = from_spec(
        {
            "family": "small-loop",
            "width": "1 m",
            "loop_height": "1 m",
            "height": "1.5 m",
            "ground": "perfect",
            "bearing": 0,
        }
    )
    r_rad, r_loss = lossless_pec.input_resistance_ohm(F)
    g0 = lossless_pec.gain_linear(F, np.array([0.0]), np.array([0.0]))[0]
    # (0.1 %: the textbook 320 pi^4 takes eta0 = 120 pi, the code's field uses the CODATA eta0.)
    assert g0 == pytest.approx(6.0 * r_rad / (r_rad + r_loss), rel=1e-3)
    # Figure-eight with nulls broadside to the loop's plane (vertical polarization).
    gv, _ = lossless_pec.partial_gains(F, np.radians([0.0, 90.0, 180.0, 270.0]), np.radians([10.0] * 4))
    assert gv[1] < 1e-12 * gv[0] and gv[3] < 1e-12 * gv[0]
    assert gv[0] == pytest.approx(gv[2])
    assert r_rad == pytest.approx(320 * np.pi**4 * (1.0 / (C_M_PER_S / F) ** 2) ** 2)


# -- noise location -------------------------------------------------------------------

LOOP = {"family": "small-loop", "width": "1 m", "loop_height": "1 m", "height": "1.5 m", "ground": "moist loam"}


def _synth(antennas, *, bearing, fa_src=75.0, fa_bg=55.0, noise_db=0.5, seed=0):
    grid = upper_hemisphere(16)
    bg = sky.diffuse_component(
        "bg",
        kind="m",
        level=p372.NoiseLevel(fa_bg, 0, 0),
        directions=grid,
        elevation="low",
        elevation_params={"scale_rad": np.radians(10)},
    )
    src = sky.compact_component(
        "s",
        level=p372.NoiseLevel(fa_src, 0, 0),
        azimuth_rad=np.radians(bearing),
        elevation_rad=np.radians(5),
        spread_rad=0.0,
    )
    rng = np.random.default_rng(seed)
    out = []
    for a in antennas:
        t = sky.weighted_temperature_k(
            a.gain_linear(F, grid.azimuth_rad, grid.elevation_rad), bg.weight_k_sr
        ) + sky.weighted_temperature_k(
            a.gain_linear(F, src.directions.azimuth_rad, src.directions.elevation_rad), src.weight_k_sr
        )
        out.append(Reading(a, float(power_dbm(t, bandwidth_hz=500.0)) + rng.normal(0, noise_db)))
    return out


@pytest.mark.parametrize("bearing", [40.0, 250.0, 300.0])
def test_loop_readings_recover_bearing_within_5_deg_modulo_180(bearing):
    # Readings synthesised from a known source with 0.5 dB measurement noise; stated bearing error: 5 deg.
    loops = [from_spec({**LOOP, "bearing": b}) for b in range(0, 180, 20)]
    res = locate(_synth(loops, bearing=bearing), freq_hz=F, bandwidth_hz=500.0)
    assert res.ok
    s = res.sources[0]
    diff = (s.bearing_deg - bearing) % 180
    assert min(diff, 180 - diff) < 5.0
    assert s.ambiguous_180
    assert s.fa_db == pytest.approx(75.0, abs=1.5)


def test_directional_antennas_resolve_the_ambiguity():
    bevs = [
        from_spec({"family": "beverage", "length": "200 m", "height": "2.5 m", "ground": "moist loam", "bearing": b})
        for b in range(0, 360, 45)
    ]
    res = locate(_synth(bevs, bearing=250.0, seed=2), freq_hz=F, bandwidth_hz=500.0)
    assert res.ok and not res.sources[0].ambiguous_180
    assert abs((res.sources[0].bearing_deg - 250.0 + 180) % 360 - 180) < 8.0


def test_fit_reports_failure_when_direction_unconstrained():
    # Omnidirectional readings only (verticals of different heights): no bearing information.
    verts = [from_spec({"family": "vertical", "height": f"{h} m", "ground": "moist loam"}) for h in (6, 10, 15, 20)]
    res = locate(_synth(verts, bearing=100.0), freq_hz=F, bandwidth_hz=500.0)
    assert not res.ok
    assert "do not constrain" in res.message


def test_too_few_readings_for_the_unknowns():
    loops = [from_spec({**LOOP, "bearing": b}) for b in (0, 90)]
    with pytest.raises(LocateError, match="too few readings"):
        locate(_synth(loops, bearing=10.0), freq_hz=F, bandwidth_hz=500.0)


def test_locate_command_writes_plot_and_scenario(tmp_path):
    runner = CliRunner()
    rf = tmp_path / "r.toml"
    rf.write_text(EXAMPLE_80M)
    png = tmp_path / "dir.png"
    out = tmp_path / "with-source.toml"
    res = runner.invoke(
        cli,
        [
            "locate",
            str(rf),
            "--plot",
            str(png),
            "--scenario",
            str(SCENARIOS / "marrow-fen.toml"),
            "--write",
            str(out),
            "--format",
            "json",
        ],
    )
    assert res.exit_code == 0, res.output
    data = json.loads(res.stdout)
    assert data["ok"] and data["sources"][0]["ambiguous_180"]
    assert png.stat().st_size > 5000 and png.read_bytes()[:4] == b"\x89PNG"
    text = out.read_text()
    assert "[[noise.local]]" in text
    import tomllib

    assert tomllib.loads(text)["noise"]["local"][-1]["fa"] == pytest.approx(data["sources"][0]["fa_db"], abs=0.05)


def test_an_outlier_is_named_not_called_converged():
    # One reading knocked 6 dB off a clean set: the fit still finds the bearing, and says which reading misses it.
    loops = [from_spec({**LOOP, "bearing": b}) for b in range(0, 180, 20)]
    clean = _synth(loops, bearing=60.0, noise_db=0.2)
    res = locate(clean, freq_hz=F, bandwidth_hz=500.0)
    assert res.ok and res.message.startswith("fit converged") and not res.outliers
    bad = list(clean)
    bad[3] = Reading(bad[3].antenna, bad[3].level_dbm + 6.0, "loop 60", 2.0)
    res = locate(bad, freq_hz=F, bandwidth_hz=500.0)
    assert "converged" not in res.message and "loop 60" in res.message
    assert [o[0] for o in res.outliers] == ["loop 60"] and res.outlier_readings == [3]
    # readings that share a label: the one missed is named by its place in the file, and only it is marked
    same = [Reading(r.antenna, r.level_dbm, "loop", r.uncertainty_db) for r in bad]
    res = locate(same, freq_hz=F, bandwidth_hz=500.0)
    assert res.outlier_readings == [3] and "loop (reading 4) (" in res.message


def test_the_command_marks_the_reading_missed_not_every_reading_of_its_antenna(tmp_path):
    # the example's readings and a second reading on its vertical, 8 dB off: both lines of "vertical" were marked
    from click.testing import CliRunner

    from snrgain.cli.main import cli

    runner = CliRunner()
    extra = '\n[[reading]]\nantenna = "vertical"\nlevel = "-90 dBm"\n'
    text = runner.invoke(cli, ["locate", "--example"]).stdout + extra
    (tmp_path / "r.toml").write_text(text, encoding="utf-8")
    res = runner.invoke(cli, ["locate", str(tmp_path / "r.toml")])
    rows = [ln for ln in res.stdout.splitlines() if ln.strip().startswith("vertical")]
    assert len(rows) == 2 and "missed by" not in rows[0] and "missed by" in rows[1], res.output


def _loop_file(levels, vertical):
    """A locate readings file at 3.55 MHz: a 1 m loop turned 0-150 deg in 30 deg steps, and a 20 m vertical."""
    head = (
        'frequency = "3.55 MHz"\nbandwidth = "500 Hz"\nground = "moist loam"\n\n[antenna.loop]\n'
        'family = "small-loop"\nwidth = "1 m"\nloop_height = "1 m"\nheight = "1.5 m"\n\n'
        '[antenna.vertical]\nfamily = "vertical"\nheight = "20 m"\n'
    )
    loop = "".join(
        f'\n[[reading]]\nantenna = "loop"\nbearing = {b}\nlevel = "{lv} dBm"\n'
        for b, lv in zip(range(0, 180, 30), levels)
    )
    return head + loop + f'\n[[reading]]\nantenna = "vertical"\nlevel = "{vertical} dBm"\n'


# Loop readings that peak near 100 deg and a vertical read 8-9 dB under what they imply: the source outweighs any
# background in every reading, so the fit leaves the background anywhere far below (invented readings).
PEAKED = _loop_file([-111.5, -109.0, -103.5, -100.6, -100.4, -103.8], -86)


def test_an_undetermined_background_is_said_and_leaves_the_bearing_found(tmp_path):
    # The background's near-zero Jacobian column made the uncertainties singular: the fit was called failed ("do
    # not constrain a direction", bearing +- inf) though the loop readings peak clearly; and the vertical's miss was
    # not named.  Now the background is said to be not determined and held out of the uncertainties.
    rf = tmp_path / "r.toml"
    rf.write_text(PEAKED)
    res = CliRunner().invoke(cli, ["locate", str(rf), "--format", "json"])
    assert res.exit_code == 0, res.output
    data = json.loads(res.stdout)
    assert data["ok"] and data["background_determined"] is False and data["background_fa_db"] is None
    s = data["sources"][0]
    assert abs((s["bearing_deg"] - 100.0 + 90) % 180 - 90) < 10 and s["bearing_sigma_deg"] < 20
    assert [o["label"] for o in data["outliers"]] == ["vertical"] and "vertical (+8." in data["message"]
    assert any("background is not determined" in n for n in data["notes"])
    table = CliRunner().invoke(cli, ["locate", str(rf)]).stdout
    assert "diffuse background: not determined" in table and "inf" not in table
    (row,) = [ln for ln in table.splitlines() if ln.strip().startswith("vertical")]
    assert "missed by +8." in row


def test_a_background_quieter_than_any_site_is_said():
    loops = [from_spec({**LOOP, "bearing": b}) for b in range(0, 180, 20)]
    res = locate(_synth(loops, bearing=60.0, fa_src=30.0, fa_bg=15.0), freq_hz=F, bandwidth_hz=500.0)
    assert res.ok and res.background_determined and res.background_fa_db == pytest.approx(15.0, abs=1.5)
    assert any("quiet rural" in n and "no site is that quiet" in n for n in res.notes)
    res = locate(_synth(loops, bearing=60.0), freq_hz=F, bandwidth_hz=500.0)  # Fa 55 dB: a plausible site
    assert res.ok and res.background_determined and not res.notes


def test_a_failed_fit_writes_nothing_and_exits_1_either_way(tmp_path):
    # Loop readings that zig-zag with the loop's turning: the bearing's uncertainty passes 45 deg.  The fit fails the
    # same way with or without --write (exit 1), names its cause and its misses, and leaves no plot or copy.
    rf = tmp_path / "r.toml"
    rf.write_text(_loop_file([-104.0, -109.0, -103.0, -108.0, -103.0, -108.5], -78))
    png, copy = tmp_path / "dir.png", tmp_path / "copy.toml"
    base = REPO / "tests" / "data" / "layout-vertical-and-bog.toml"
    runs = [
        ["locate", str(rf), "--plot", str(png)],
        ["locate", str(rf), "--plot", str(png), "--scenario", str(base), "--write", str(copy)],
        ["locate", str(rf), "--format", "json"],
    ]
    for args in runs:
        res = CliRunner().invoke(cli, args)
        assert res.exit_code == 1, res.output
        assert "bearing's uncertainty is" in res.stderr and "no file written" in res.stderr
        assert not png.exists() and not copy.exists()
    data = json.loads(res.stdout)
    assert not data["ok"] and "readings scatter" in data["message"] and data["outliers"]
    assert all(o["label"] in data["message"] for o in data["outliers"])


def test_locate_writes_a_placed_source_and_replaces_one_of_the_same_name(tmp_path):
    runner = CliRunner()
    rf = tmp_path / "r.toml"
    rf.write_text(EXAMPLE.replace('ground = "moist loam"', 'ground = "moist loam"\nat = [10, 20]\ndistance = "50 m"'))
    first, second = tmp_path / "one.toml", tmp_path / "two.toml"
    base = _on_160m(tmp_path)  # no files beside it: the copy runs anywhere
    res = runner.invoke(cli, ["locate", str(rf), "--scenario", str(base), "--write", str(first)])
    assert res.exit_code == 0, res.output
    assert "fit converged" in res.stdout
    data = tomllib.loads(first.read_text())
    (src,) = [s for s in data["noise"]["local"] if s["name"] == "located source"]
    assert src["measured_at"] == ["10.0 m", "20.0 m"] and "bearing" not in src
    e, n = (float(v.split()[0]) for v in src["position"])
    assert np.hypot(e - 10, n - 20) == pytest.approx(50.0, abs=0.1)
    # Again on the copy: the source is replaced, not doubled; the copy still runs.
    res = runner.invoke(cli, ["locate", str(rf), "--scenario", str(first), "--write", str(second)])
    assert res.exit_code == 0, res.output
    data = tomllib.loads(second.read_text())
    assert [s["name"] for s in data["noise"]["local"]].count("located source") == 1
    assert runner.invoke(cli, ["rank", str(second)]).exit_code == 0


def test_an_ambiguous_bearing_is_written_on_the_side_of_the_source_it_replaces():
    # A loop alone cannot tell a bearing from the opposite one: the copy took the fit's side even where the source of
    # the same name it replaced stood on the other (a tester's neighbour's garage to the west went in 60 m east, off
    # the lot).  It now takes the replaced source's side; an unambiguous fit, or no source to replace, is as fitted.
    from dataclasses import replace

    from snrgain.tools import locate as loc

    base = loc.LocateResult(True, "fit converged", [], 50.0, 0.5, np.zeros(0), np.zeros(0))
    res = replace(base, sources=[loc.FittedSource(100.0, 5.0, 10.0, 80.0, True)])
    text = '[[noise.local]]\nname = "garage"\n'

    def bearing(extra, result=res, at=None, name="garage"):
        return loc.sided(result, text + extra, at_m=at, name=name).sources[0].bearing_deg

    assert bearing('bearing = "280 deg"') == pytest.approx(280.0)
    assert bearing("bearing = 130") == pytest.approx(100.0)
    assert bearing('position = ["-40 m", "0 m"]', at=np.array([0.0, 10.0])) == pytest.approx(280.0)
    assert bearing("position = [-40, 0]", at=np.array([0.0, 10.0])) == pytest.approx(280.0)  # bare numbers: metres
    assert bearing('position = ["-40 m", "0 m"]') == pytest.approx(100.0)  # no reading point: no side
    assert bearing("bearing = 280", name="another") == pytest.approx(100.0)
    sure = replace(base, sources=[loc.FittedSource(100.0, 5.0, 10.0, 80.0, False)])
    assert bearing("bearing = 280", result=sure) == pytest.approx(100.0)


def test_a_distance_needs_the_reading_point(tmp_path):
    runner = CliRunner()
    ex = runner.invoke(cli, ["locate", "--example"]).stdout
    rf = tmp_path / "r.toml"
    rf.write_text(ex.replace('ground = "moist loam"', 'ground = "moist loam"\ndistance = "50 m"'))
    res = runner.invoke(cli, ["locate", str(rf)])
    assert res.exit_code == 2 and "give at too" in res.stderr


def test_calibrate_writes_the_measured_line_into_one_antenna(tmp_path):
    # Only the named wire changes: the site's ground and the other antennas stay as written.
    runner = CliRunner()
    rf = tmp_path / "r.toml"
    rf.write_text(runner.invoke(cli, ["calibrate", "--example"]).stdout)
    base = REPO / "tests" / "data" / "layout-vertical-and-bog.toml"
    out = tmp_path / "o.toml"
    res = runner.invoke(cli, ["calibrate", str(rf), "--scenario", str(base), "--write", str(out), "--into", "BOG west"])
    assert res.exit_code == 0, res.output
    assert "scenario listens at 3.55 MHz" in res.stderr  # the example's readings are at 1.83 MHz
    before, after = tomllib.loads(base.read_text()), tomllib.loads(out.read_text())
    assert after["site"] == before["site"]
    bog = next(c for c in after["candidate"] if c["name"] == "BOG west")
    assert 0.5 < bog["velocity_factor"] < 1 and bog["z0"] > 0 and bog["attenuation"].endswith("dB/100m")
    assert next(c for c in after["candidate"] if c["name"] == "short vertical") == next(
        c for c in before["candidate"] if c["name"] == "short vertical"
    )
    assert runner.invoke(cli, ["rank", str(out)]).exit_code == 0
    for into, message in (("short vertical", "not a long wire"), ("nowhere", "no candidate named")):
        bad = runner.invoke(
            cli, ["calibrate", str(rf), "--scenario", str(base), "--write", str(tmp_path / "x.toml"), "--into", into]
        )
        assert bad.exit_code == 2 and message in bad.stderr
    assert runner.invoke(cli, ["calibrate", str(rf), "--into", "BOG west"]).exit_code == 2


def _open_short_text(vf, att_db_per_100m, z0, length_m, freqs_hz):
    """[[open_short]] entries for a line of the given velocity factor, attenuations [dB/100 m] and Z0 (the textbook
    Zoc = Z0 coth(gamma L), Zsc = Z0 tanh(gamma L))."""
    out = ""
    for f, att in zip(freqs_hz, att_db_per_100m):
        gamma = att / 100.0 / (20 * np.log10(np.e)) + 1j * 2 * np.pi * f / (C_M_PER_S * vf)
        t = np.tanh(gamma * length_m)
        zo, zs = z0 / t, z0 * t
        out += (
            f'\n[[open_short]]\nfrequency = "{f / 1e6:g} MHz"\nopen = [{zo.real:.2f}, {zo.imag:.2f}]\n'
            f"short = [{zs.real:.2f}, {zs.imag:.2f}]\n"
        )
    return out


FAST_BOG = '[wire]\nfamily = "bog"\nlength = "70 m"\ngauge = 14\n' + _open_short_text(
    0.6, (5.0, 7.2), 300.0, 70.0, (0.95e6, 1.83e6)
)
"""Readings of a BOG whose line is faster than the wire as described gives over any soil (invented)."""


def test_calibrate_says_a_fit_at_a_bound_is_no_ground_and_where_the_held_ground_came_from(tmp_path):
    # The permittivity ran to 1 (air's) and was offered as a ground to paste, with +- and no word; the height fit
    # said "over moist loam as given" though the file gives no ground; with --scenario it still held moist loam.
    rf = tmp_path / "r.toml"
    rf.write_text(FAST_BOG)
    runner = CliRunner()
    res = runner.invoke(cli, ["calibrate", str(rf), "--expected-vf", "0.6", "--format", "json"])
    assert res.exit_code == 0, res.output
    g = json.loads(res.stdout)["fitted_ground"]
    assert g["at_bound"] == ["permittivity low"] and g["scenario_value"] is None and g["permittivity_sigma"] is None
    assert "lowest value the fit allows (1, air's)" in g["not_usable_because"]
    table = runner.invoke(cli, ["calibrate", str(rf), "--expected-vf", "0.6"]).stdout
    assert "[site] ground =" not in table and "warning: the permittivity ran to the lowest" in table
    assert "over moist loam (the default: the readings' [wire] gives no ground)" in table and "as given" not in table
    base = REPO / "tests" / "data" / "layout-vertical-and-bog.toml"  # [site] ground = "moist clay"
    out = tmp_path / "o.toml"
    args = ["calibrate", str(rf), "--expected-vf", "0.6", "--scenario", str(base), "--write", str(out)]
    res = runner.invoke(cli, args)
    assert res.exit_code == 2 and "not a ground to use" in res.stderr and not out.exists()
    res = runner.invoke(cli, [*args, "--into", "BOG west"])  # the measured line is still good to write
    assert res.exit_code == 0, res.output
    assert "over moist clay (the scenario's [site] ground)" in res.stdout and out.exists()
    # a ground the readings' [wire] gives is the one held, scenario or not
    rf.write_text(FAST_BOG.replace("gauge = 14", 'gauge = 14\nground = "sandy soil"'))
    res = runner.invoke(cli, [*args, "--into", "BOG west", "--overwrite"])
    assert "over sandy soil (as given in the readings' [wire])" in res.stdout


def test_a_fit_inside_its_range_is_a_ground_to_write():
    spec = {"family": "bog", "length": "60 m", "ground": "moist loam"}
    truth = from_spec(spec)
    pairs = [cal.OpenShort(f, *_readings_of(truth.line(f), 60.0)) for f in (1.83e6, 3.6e6)]
    res = cal.calibrate(cal.WireReadings(truth, pairs), expected_velocity_factor=0.5)
    assert res.fit.usable and res.fit.at_bound == () and res.as_dict()["fitted_ground"]["scenario_value"]


def test_a_locate_readings_bearing_is_where_its_antenna_turns(tmp_path):
    # A loop reading without a bearing was taken as pointing north (it then "missed by 6.5 dB" and widened the
    # bearing's uncertainty from 2 to 12 deg); a bearing on the vertical's reading was said to be an unknown key of
    # [antenna.vertical].  Both are said at the reading.
    from snrgain.errors import ReadingsError
    from snrgain.tools import locate as loc

    text = _loop_file([-111.5, -109.0, -103.5, -100.6, -100.4, -103.8], -86)
    path = tmp_path / "r.toml"
    path.write_text(text.replace("bearing = 60\n", "", 1))
    with pytest.raises(ReadingsError) as err:
        loc.load_readings(path)
    assert err.value.problems == [
        (
            "reading 3.bearing",
            "the small-loop 'loop' hears by direction: give the bearing it pointed for this reading "
            "(or one bearing in [antenna.loop])",
        )
    ]
    path.write_text(text.replace('antenna = "vertical"\n', 'antenna = "vertical"\nbearing = 90\n'))
    with pytest.raises(ReadingsError) as err:
        loc.load_readings(path)
    assert err.value.problems == [("reading 7.bearing", "a vertical antenna has no bearing: it hears all round")]


def test_a_ground_fit_the_readings_do_not_fix_is_not_written():
    # Inside its ranges a fit may still fix nothing: from a pair of Touchstone sweeps a tester's conductivity came out
    # "x/÷ 4.5e37" and --write put it into [site]; a file whose readings no soil meets (residual rms 3.4 in their
    # uncertainties) passed as well.  Neither is a ground to use; one within bounds is.
    good = cal.GroundFit(0.005, 1.5, 13.0, 2.0, 0.8, False)
    assert good.usable and good.unusable_text() == ""
    loose = cal.GroundFit(4.4e-5, 4.46e37, 7.8, 4.5, 1.55, False)
    assert not loose.usable and "do not determine the conductivity (x/÷ 4.46e+37" in loose.unusable_text()
    off = cal.GroundFit(2.7e-5, 1.47, 2.5, 0.23, 3.44, False)
    assert not off.usable and "no soil meets the readings (residual rms 3.44" in off.unusable_text()


def test_two_open_short_pairs_at_one_frequency_are_refused():
    ln = from_spec({"family": "bog", "length": "76.2 m", "ground": "moist loam"}).line(F)
    zoc, zsc = _readings_of(ln, 76.2)
    with pytest.raises(cal.ReadingError, match=r"reading 2: a second pair at 1.83 MHz \(reading 1 is there too\)"):
        cal.line_from_open_short([cal.OpenShort(F, zoc, zsc), cal.OpenShort(F, 1.2 * zoc, zsc)], length_m=76.2)


def test_the_side_of_an_ambiguous_bearing_can_be_given(tmp_path):
    # A reviewer's loop readings fit 69 and 249 deg alike; the copy took 69 deg with no way to choose but writing a
    # source of the same name first.  --side takes the one of the two within 90 deg of a rough bearing, in the table,
    # the JSON and the copy; without it the table says the other side fits as well and how to take it.
    import json

    runner = CliRunner()
    rf = tmp_path / "r.toml"
    rf.write_text(EXAMPLE_80M)
    plain = runner.invoke(cli, ["locate", str(rf), "--format", "json"])
    fitted = json.loads(plain.stdout)["sources"][0]
    assert fitted["ambiguous_180"]
    other = (fitted["bearing_deg"] + 180.0) % 360.0
    table = runner.invoke(cli, ["locate", str(rf)]).stdout
    assert f"give --side {other:.0f}" in table
    out = tmp_path / "o.toml"
    args = ["locate", str(rf), "--side", f"{other + 30.0:.0f}", "--scenario", str(SCENARIOS / "marrow-fen.toml")]
    res = runner.invoke(cli, [*args, "--write", str(out), "--format", "json"])
    assert res.exit_code == 0, res.output
    assert json.loads(res.stdout)["sources"][0]["bearing_deg"] == pytest.approx(other)
    written = tomllib.loads(out.read_text())["noise"]["local"][-1]
    assert written["name"] == "located source"
    assert float(written["bearing"]) == pytest.approx(other, abs=0.5)
    bad = runner.invoke(cli, ["locate", str(rf), "--side", "400"])
    assert bad.exit_code == 2 and "--side" in bad.output


# -- locate's distances, sides and failure messages (hostile-input findings) ----------------------------------------

BASE = REPO / "tests" / "data" / "layout-vertical-and-bog.toml"  # no files beside it: its copy runs anywhere
FLAG = (
    '[antenna.flag]\nfamily = "terminated-loop"\nwidth = "6 m"\nloop_height = "3 m"\nheight = "1.5 m"\n'
    'termination = "900 ohm"\n'
)
FLAG_READINGS = "".join(
    f'\n[[reading]]\nantenna = "flag"\nbearing = {b}\nlevel = "{lv} dBm"\n'
    for b, lv in ((248, -116), (68, -128), (158, -121))
)


def _on_160m(tmp_path):
    """BASE on the example readings' band, 1.83 MHz (locate copies readings only into a scenario of their band)."""
    out = tmp_path / "base-160m.toml"
    out.write_text(BASE.read_text().replace('frequency = "3.55 MHz"', 'frequency = "1.83 MHz"', 1))
    return out


def _example(extra="", flag=False):
    """The example readings file with ``extra`` keys at its top (and a flag read three ways, which tells the side)."""
    from snrgain.tools.locate import EXAMPLE

    text = EXAMPLE.replace('ground = "moist loam"\n', f'ground = "moist loam"\n{extra}\n', 1)
    return text.replace('height = "18 m"\n', f'height = "18 m"\n\n{FLAG}', 1) + FLAG_READINGS if flag else text


def test_a_distance_list_gives_one_distance_per_source(tmp_path):
    # Three distances with one source were taken without a word and two ignored; one distance stood for two sources,
    # one of them known only to +- 39 deg.  A distance places one source: the list must give one per source.
    rf = tmp_path / "r.toml"
    out = tmp_path / "o.toml"
    copy = ["--scenario", str(_on_160m(tmp_path)), "--write", str(out)]
    for distance, sources, said in (
        ('["50 m", "60 m", "70 m"]', 1, "3 distances for 1 source (--sources 1)"),
        ('"50 m"', 2, "one distance for 2 sources (--sources 2)"),
        ('["50 m"]', 2, "one distance for 2 sources (--sources 2)"),
        ('["50 m", "60 m"]', 3, "2 distances for 3 sources (--sources 3)"),
    ):
        rf.write_text(_example(f"at = [10, 20]\ndistance = {distance}"))
        for args in ([], copy):
            res = CliRunner().invoke(cli, ["locate", str(rf), "--sources", str(sources), *args])
            assert res.exit_code == 2, res.output
            assert f"r.toml: distance: {said}" in res.stderr and "Traceback" not in res.output
            assert not out.exists()
    # One per source: each written at its own distance, and the output says which each got.  (The fit reads each
    # source at its distance, as the copy writes it: at 50 m and 46 m these readings leave source 2's bearing open.)
    rf.write_text(_example('at = [10, 20]\ndistance = ["300 m", "150 ft"]', flag=True))
    res = CliRunner().invoke(cli, ["locate", str(rf), "--sources", "2", *copy])
    assert res.exit_code == 0, res.output
    written = [s for s in tomllib.loads(out.read_text())["noise"]["local"] if s["name"].startswith("located")]
    assert [s["name"] for s in written] == ["located source 1", "located source 2"]
    for k, (src, dist) in enumerate(zip(written, (300.0, 45.72))):
        e, n = (float(v.split()[0]) for v in src["position"])
        assert np.hypot(e - 10, n - 20) == pytest.approx(dist, abs=0.1)
        (line,) = [ln for ln in res.stdout.splitlines() if ln.strip().startswith(f"source {k + 1} as")]
        assert f"the file's distance {k + 1}" in line and f"'located source {k + 1}'" in line
    assert "45.72 m from the readings (the file's distance 2" in res.stdout
    out.unlink()  # a file that writes its distances in feet is answered in feet
    rf.write_text(_example('at = [10, 20]\ndistance = ["984 ft", "150 ft"]', flag=True))
    res = CliRunner().invoke(cli, ["locate", str(rf), "--sources", "2", *copy])
    assert "150 ft (45.7 m) from the readings (the file's distance 2" in res.stdout
    assert "150 ft (45.7 m) from the readings (the readings file's distance 2)" in out.read_text()
    out.unlink()
    res = CliRunner().invoke(cli, ["locate", str(rf), "--sources", "2", *copy, "--format", "json"])
    assert [p["distance_m"] for p in json.loads(res.stdout)["written_sources"]] == pytest.approx([984 * 0.3048, 45.72])


def test_the_written_sources_need_one_distance_each():
    from dataclasses import replace

    from snrgain.tools import locate as loc

    base = loc.LocateResult(True, "fit converged", [], 50.0, 0.5, np.zeros(0), np.zeros(0))
    two = replace(base, sources=[loc.FittedSource(100.0, 5.0, 5.0, 80.0, False)] * 2)
    with pytest.raises(LocateError, match="1 distance"):
        loc.with_sources("", two, at_m=(0.0, 0.0), distances_m=(50.0,))
    text = loc.with_sources("", two, at_m=(0.0, 0.0), distances_m=(50.0, 80.0))
    assert [float(s["position"][0].split()[0]) for s in tomllib.loads(text)["noise"]["local"]] == pytest.approx(
        [50 * np.sin(np.radians(100)), 80 * np.sin(np.radians(100))], abs=0.05
    )


def test_side_against_a_fit_that_tells_the_side_is_said_not_silently_dropped(tmp_path):
    # With a flag read three ways the fit tells the side itself: --side was dropped without a word.
    rf = tmp_path / "r.toml"
    rf.write_text(_example(flag=True))
    res = CliRunner().invoke(cli, ["locate", str(rf), "--format", "json"])
    (s,) = json.loads(res.stdout)["sources"]
    assert not s["ambiguous_180"]
    against = (s["bearing_deg"] + 180.0) % 360.0
    res = CliRunner().invoke(cli, ["locate", str(rf), "--side", f"{against:.0f}"])
    assert res.exit_code == 0, res.output
    (note,) = [ln for ln in res.stdout.splitlines() if "--side" in ln]
    assert note.startswith("  note: source 1: the fit tells its side itself")
    assert f"--side {against:.0f} was not used for it" in note and "lies 180 deg from --side" in note
    res = CliRunner().invoke(cli, ["locate", str(rf), "--side", f"{s['bearing_deg']:.0f}", "--format", "json"])
    (note,) = json.loads(res.stdout)["notes"]
    assert "was not used for it" in note and "check the side" not in note


def test_a_side_square_to_both_bearings_is_refused(tmp_path):
    # --side 90 deg from both bearings that fit chose one without a word.
    rf = tmp_path / "r.toml"
    rf.write_text(_example())
    (s,) = json.loads(CliRunner().invoke(cli, ["locate", str(rf), "--format", "json"]).stdout)["sources"]
    assert s["ambiguous_180"]
    for square in ((s["bearing_deg"] + 90.0) % 360.0, (s["bearing_deg"] + 270.0) % 360.0):
        res = CliRunner().invoke(cli, ["locate", str(rf), "--side", f"{square:.0f}"])
        assert res.exit_code == 2, res.output
        assert f"--side: {square:.0f} deg lies 90 deg from both bearings" in res.output
        assert "tells neither side" in res.output and "Traceback" not in res.output
    res = CliRunner().invoke(cli, ["locate", str(rf), "--side", f"{(s['bearing_deg'] + 92.0) % 360.0:.0f}"])
    assert res.exit_code == 0, res.output


def test_the_copy_says_why_an_ambiguous_bearing_took_its_side():
    # The comment always credited the replaced source, also where --side chose or no source was replaced.
    from dataclasses import replace

    from snrgain.tools import locate as loc

    base = loc.LocateResult(True, "fit converged", [], 50.0, 0.5, np.zeros(0), np.zeros(0))
    res = replace(base, sources=[loc.FittedSource(100.0, 5.0, 10.0, 80.0, True)])

    def comment(text="", **kw):
        out = loc.with_sources(text, res, name="garage", **kw)
        (line,) = [ln for ln in out.splitlines() if "fitted by snrgain locate" in ln]
        return line

    assert comment(side_deg=300).endswith(
        "the readings fit 100 deg as well: this side is the one within 90 deg of --side 300"
    )
    garage = '[[noise.local]]\nname = "garage"\nbearing = 68\n'
    assert comment(garage, side_deg=300).endswith("this side is the one within 90 deg of --side 300")
    assert comment(garage).endswith(
        "the readings fit 280 deg as well: this side is that of the source of this name it replaces, at 68 deg"
    )
    assert comment().endswith("this side is the fit's own: the scenario has no source of this name to take a side from")
    assert comment('[[noise.local]]\nname = "garage"\nposition = [5, 5]\n').endswith(
        "this side is the fit's own: the source of this name it replaces gives no bearing to take a side from"
    )
    assert "square to both" in comment('[[noise.local]]\nname = "garage"\nbearing = 190\n')
    sure = replace(base, sources=[loc.FittedSource(100.0, 5.0, 10.0, 80.0, False)])
    assert "as well" not in loc.with_sources(garage, sure, name="garage", side_deg=300)


def test_a_bearing_uncertain_past_half_a_turn_is_said_to_be_no_bearing(tmp_path):
    # Two sources fitted to one loop's readings: the message quoted "the bearing's uncertainty is 261447396 deg".
    import re

    rf = tmp_path / "r.toml"
    rf.write_text(_example())
    res = CliRunner().invoke(cli, ["locate", str(rf), "--sources", "2"])
    assert res.exit_code == 1, res.output
    assert "no bearing at all" in res.stderr and "no bearing at all" in res.stdout
    assert not re.search(r"\d{4,} deg", res.output), res.output
    data = json.loads(CliRunner().invoke(cli, ["locate", str(rf), "--sources", "2", "--format", "json"]).stdout)
    assert max(s["bearing_sigma_deg"] for s in data["sources"]) > 180.0  # the case itself: past half a turn
    assert "past 180 deg: no bearing at all" in data["message"]


def test_a_readings_distance_out_of_range_is_quoted_in_its_own_unit(tmp_path):
    rf = tmp_path / "r.toml"
    rf.write_text(_example('at = [0, 0]\ndistance = "200000 ft"'))
    res = CliRunner().invoke(cli, ["locate", str(rf)])
    assert res.exit_code == 2, res.output
    assert 'distance: must be > 0 ft (0 m) and <= 164042 ft (50000 m); got "200000 ft"' in res.stderr
    rf.write_text(_example('at = [0, 0]\ndistance = "200 km"'))
    assert "<= 50000 m; got" in CliRunner().invoke(cli, ["locate", str(rf)]).stderr


def test_the_side_help_says_where_its_default_comes_from():
    # The help gave the default from --scenario, which is refused without --write ("go together").
    out = CliRunner().invoke(cli, ["locate", "--help"], terminal_width=200).stdout
    assert "in the scenario copied (--scenario with --write)" in " ".join(out.split())
    res = CliRunner().invoke(cli, ["locate", "r.toml", "--scenario", str(BASE)])
    assert res.exit_code == 2 and "--scenario and --write go together" in res.output


def test_a_pattern_table_is_read_without_the_files_ground_and_a_combination_is_refused(tmp_path):
    # The readings file's ground was put into every antenna table, and a pattern table, which takes no ground, was
    # refused for a key the user never wrote ("antenna.vertical.ground: unknown key here").  The ground now goes only
    # to the families that stand on one, and the pattern file is found from the readings file's folder.
    import shutil

    (tmp_path / "patterns").mkdir()
    shutil.copy(SCENARIOS / "patterns" / "cardioid-pair.csv", tmp_path / "patterns")
    table = 'family = "tabulated"\nfile = "patterns/cardioid-pair.csv"\n'
    rf = tmp_path / "r.toml"
    rf.write_text(_example().replace('family = "vertical"\nheight = "18 m"\n', table))
    res = CliRunner().invoke(cli, ["locate", str(rf), "--format", "json"])
    assert res.exit_code == 0, res.output
    assert json.loads(res.stdout)["ok"] and "ground" not in res.stderr
    # A bearing on a reading of the pattern table: it cannot be turned (it was said to "hear all round")
    turned = _example().replace('family = "vertical"\nheight = "18 m"\n', table)
    rf.write_text(turned.replace('antenna = "vertical"\n', 'antenna = "vertical"\nbearing = 90\n'))
    res = CliRunner().invoke(cli, ["locate", str(rf)])
    assert res.exit_code == 2 and "the tabulated family's pattern cannot be turned" in res.stderr, res.output
    assert "with rotate = the angle it was turned by" in res.stderr
    assert "hears all round" not in res.stderr
    no_file = turned.replace('file = "patterns/cardioid-pair.csv"\n', "")
    rf.write_text(no_file.replace('antenna = "vertical"\n', 'antenna = "vertical"\nbearing = 90\n'))
    res = CliRunner().invoke(cli, ["locate", str(rf)])  # the table's own problem said in the same run
    assert res.exit_code == 2 and "antenna.vertical.file: required key is missing" in res.stderr, res.output
    # A combination is made of a scenario's antennas, which a readings file has not: said, with the families taken.
    rf.write_text(_example().replace('family = "vertical"\nheight = "18 m"\n', 'family = "combination"\n'))
    res = CliRunner().invoke(cli, ["locate", str(rf)])
    assert res.exit_code == 2 and "Traceback" not in res.output
    assert "antenna.vertical.family: a combination is made of other antennas of a scenario" in res.stderr
    assert "small-loop" in res.stderr and "tabulated" in res.stderr and "isotropic" not in res.stderr
