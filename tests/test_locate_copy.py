"""locate --write: the copy describes each source as the fit modelled it, so rank of the copy gives the antennas the
readings were taken on their fitted levels; what the copy cannot tell rank is said; the copy is read back and a copy
that misses the fit is said."""

import json
import tomllib

import numpy as np
import pytest
from click.testing import CliRunner

from snrgain.antennas import from_spec
from snrgain.cli.main import cli
from snrgain.fields import make_ground

LOOP = 'family = "small-loop"\nwidth = "1 m"\nloop_height = "1 m"\nheight = "1.5 m"\n'
VERTICAL = 'family = "vertical"\nheight = "20 m"\n'
BEVERAGE = 'family = "beverage"\nlength = "200 m"\nheight = "2.5 m"\nbearing = 60\ntermination = "400 ohm"\n'
LOOP_BEARINGS = (0, 45, 90, 135)


def _scenario(ground="moist loam", frequency="3.55 MHz", reference=None):
    """An invented lot, Copse End, whose antennas are the ones the readings were taken on, each standing where they
    were taken ([0, 0]); no noise but the galactic, so the located source stands out in rank's JSON."""
    ref = reference or f'name = "vertical"\n{VERTICAL}'
    loops = "".join(
        f'\n[[candidate]]\nname = "loop {b}"\n{LOOP}bearing = {b}\nposition = [0, 0]\n' for b in LOOP_BEARINGS
    )
    vertical = "" if reference is None else f'\n[[candidate]]\nname = "vertical"\n{VERTICAL}position = [0, 0]\n'
    return (
        f'[site]\nname = "Copse End"\nlatitude = 52.1\nlongitude = -1.3\nground = "{ground}"\ntransmitting = "none"\n\n'
        f'[band]\nfrequency = "{frequency}"\nbandwidth = "500 Hz"\n\n[time]\nmonths = [1]\nutc_hours = [2]\n\n'
        '[noise.man_made]\nenvironment = "none"\n\n[noise.atmospheric]\nmodel = "none"\n\n'
        '[[target]]\nname = "east"\nbearing = 90\nelevation = [5, 25]\n\n'
        f"[reference]\n{ref}position = [0, 0]\n{vertical}{loops}"
        f'\n[[candidate]]\nname = "beverage"\n{BEVERAGE}position = [0, 0]\n'
    )


# Invented readings of a source some 115 deg from the reading point, 120 m off: the vertical, a 1 m loop turned four
# ways and a 200 m Beverage toward 60 deg.
LEVELS = {"vertical": -95.6, "loop 0": -127.7, "loop 45": -129.0, "loop 90": -120.9, "loop 135": -120.4}
BEVERAGE_LEVEL = -128.3


def _readings(placed=True):
    where = 'at = [0, 0]\ndistance = "120 m"\n' if placed else ""
    head = (
        f'frequency = "3.55 MHz"\nbandwidth = "500 Hz"\nground = "moist loam"\n{where}\n'
        f"[antenna.loop]\n{LOOP}\n[antenna.vertical]\n{VERTICAL}\n[antenna.beverage]\n{BEVERAGE}"
    )
    rows = f'\n[[reading]]\nantenna = "vertical"\nlevel = "{LEVELS["vertical"]} dBm"\n' + "".join(
        f'\n[[reading]]\nantenna = "loop"\nbearing = {b}\nlevel = "{LEVELS[f"loop {b}"]} dBm"\n' for b in LOOP_BEARINGS
    )
    return head + rows + f'\n[[reading]]\nantenna = "beverage"\nlevel = "{BEVERAGE_LEVEL} dBm"\n'


def _locate(tmp_path, *, placed=True, **scenario):
    rf, base, copy = tmp_path / "readings.toml", tmp_path / "copse.toml", tmp_path / "copy.toml"
    rf.write_text(_readings(placed))
    base.write_text(_scenario(**scenario))
    res = CliRunner().invoke(
        cli, ["locate", str(rf), "--scenario", str(base), "--write", str(copy), "--format", "json"]
    )
    assert res.exit_code == 0, res.output
    return json.loads(res.stdout), copy, res.stderr


@pytest.mark.parametrize("placed", [True, False], ids=["placed at its distance", "by its bearing"])
def test_rank_of_the_copy_gives_the_fitted_levels_on_the_antennas_read(tmp_path, placed):
    # The copy wrote a bearing source with spread 5 deg (the fit's is a point) and a placed one with no spread (rank's
    # default 10 deg) although the fit had read it as a plane wave: rank of the copy then put the Beverage 7 to 11 dB
    # and the vertical 1.6 to 3.7 dB over their fitted levels.  Now each is written as fitted.
    fit, copy, _ = _locate(tmp_path, placed=placed)
    assert fit["ok"] and fit["background_determined"] is False  # each fitted level is the source's alone
    ranked = CliRunner().invoke(cli, ["rank", str(copy), "--format", "json"])
    assert ranked.exit_code == 0, ranked.output
    data = json.loads(ranked.stdout)
    fitted = {r["label"]: r["fitted_dbm"] for r in fit["readings"]}
    for antenna in [data["reference"], *data["candidates"]]:
        got = antenna["noise_by_component_dbm"]["located source"][0][0]
        assert got == pytest.approx(fitted[antenna["name"]], abs=0.5), antenna["name"]
    written = tomllib.loads(copy.read_text())["noise"]["local"][-1]
    assert written["spread"] == "0 deg" and ("position" in written) is placed and fit["placed"] is placed
    if placed:
        assert written["polarisation"] == "vertical" and written["height"] == "2 m"
    # locate's own reading back of the copy says the same, on the sources' share of each reading
    assert fit["copy_check_worst_db"] < 0.5 and len(fit["copy_check"]) == 6
    for r in fit["readings"]:
        assert r["sources_dbm"] == pytest.approx(r["fitted_dbm"], abs=0.05)


def test_the_copy_says_what_rank_cannot_be_told(tmp_path):
    # Read on 3.55 MHz over moist loam, copied into a scenario on 3.8 MHz over sandy soil: rank takes the Fa at its
    # own band and the placed source's field over its own soil; the copy's comment and stderr say both.
    fit, copy, err = _locate(tmp_path, ground="sandy soil", frequency="3.8 MHz")
    comment = [ln for ln in copy.read_text().splitlines() if ln.startswith("# rank cannot be told")]
    assert len(comment) == 2
    assert "read at 3.55 MHz and rank takes the same Fa at 3.8 MHz" in comment[0]
    assert "over the readings' ground (moist loam) and rank takes it over the site's (sandy soil)" in comment[1]
    assert err.count("warning: the copy cannot tell rank") == 2
    # The soil moves the Beverage's pickup of a source 100 m off its wire by more than the 1 dB the check allows.
    (beverage,) = [c for c in fit["copy_check"] if c["label"] == "beverage"]
    assert abs(beverage["copy_dbm"] - beverage["fitted_dbm"]) > 1.0
    assert "misses the fitted level by more than 1 dB on" in err and "beverage" in err
    # the same readings into a scenario of their own band and soil: nothing to say
    (tmp_path / "own").mkdir()
    fit, copy, err = _locate(tmp_path / "own")
    assert "rank cannot be told" not in copy.read_text() and "warning" not in err


def test_a_copy_rank_reads_otherwise_than_the_fit_is_said(tmp_path):
    # rank hears a placed source through the scenario's reference: a small loop square to the source hears its
    # vertically polarised field far less than its pattern (both polarisations) says, so rank lifts every antenna's
    # level alike.  The copy is as fitted; locate reads it back and says so, and why.
    ref = f'name = "loop ref"\n{LOOP}bearing = 25\n'
    fit, _, err = _locate(tmp_path, reference=ref)
    assert fit["copy_check_worst_db"] > 10.0
    (warning,) = [ln for ln in err.splitlines() if "misses the fitted level" in ln]
    assert "on 6 of 6 readings" in warning and "every reading alike" in warning and "'loop ref'" in warning


def test_a_far_source_that_fits_better_than_the_placed_one_is_said(tmp_path):
    # Readings as a far source heard in both polarisations gives them (the loops' nulls filled), read as a vertical
    # dipole 120 m off: the placed fit is written (the copy is what the fit modelled), and the result says the far
    # one fits better and how to fit it so.  Readings the placed source fits best get no such note.
    rf = tmp_path / "r.toml"
    far = {"vertical": -95.9, "loop 0": -126.0, "loop 45": -127.2, "loop 90": -120.6, "loop 135": -120.3}
    text = _readings(placed=True)
    for label, level in far.items():
        text = text.replace(f'"{LEVELS[label]} dBm"', f'"{level} dBm"')
    rf.write_text(text.replace(f'"{BEVERAGE_LEVEL} dBm"', '"-122.3 dBm"'))
    data = json.loads(CliRunner().invoke(cli, ["locate", str(rf), "--format", "json"]).stdout)
    assert data["ok"] and data["placed"]
    (note,) = [n for n in data["notes"] if n.startswith("read as a far source")]
    assert f"against {data['residual_rms_db']:.2f} dB for a short vertical dipole" in note
    assert "leave distance out of the readings file" in note
    rf.write_text(_readings(placed=True))
    data = json.loads(CliRunner().invoke(cli, ["locate", str(rf), "--format", "json"]).stdout)
    assert data["ok"] and not [n for n in data["notes"] if n.startswith("read as a far source")]


def test_a_source_at_a_distance_keeps_its_elevation(tmp_path):
    rf = tmp_path / "r.toml"
    rf.write_text(_readings(placed=True))
    res = CliRunner().invoke(cli, ["locate", str(rf), "--fit-elevation"])
    assert res.exit_code == 2 and "Traceback" not in res.output
    assert "--fit-elevation" in res.output and "its elevation is held (--elevation), not fitted" in res.output
    rf.write_text(_readings(placed=False))
    assert CliRunner().invoke(cli, ["locate", str(rf), "--fit-elevation"]).exit_code == 0


@pytest.mark.parametrize(
    "spec",
    [
        VERTICAL,
        LOOP + "bearing = 30\n",
        BEVERAGE,
    ],
    ids=["vertical", "small loop", "beverage"],
)
def test_a_source_far_off_is_heard_as_its_pattern_says(spec):
    # The fit's placed source, 20 km off: each antenna's pickup over the field's power at the reading point tends to
    # its vertical gain toward the source (the plane wave of a vertically polarised source).
    from snrgain.tools.locatenear import Near, near_gains

    table = tomllib.loads(spec)
    antenna = from_spec({**table, "ground": "moist loam"})
    az, el = np.radians(40.0), np.radians(5.0)
    near = Near((0.0, 0.0), (20e3,), make_ground("moist loam"))
    got = near_gains([antenna], near, 0, az, el, 3.55e6)[0]
    gv, _ = antenna.partial_gains(3.55e6, np.array([az]), np.array([el]))
    assert 10 * np.log10(got / gv[0]) == pytest.approx(0.0, abs=0.1)


def test_a_copy_check_refuses_is_not_written(tmp_path):
    # The source lands on a candidate of the scenario (a placed source must stand 1 m or more from every antenna):
    # the copy was written all the same, with a warning, and `check` of it then failed.  Now the copy is loaded
    # before it is written: the fit is printed, nothing is written (nor the plot), and the command exits 1 (the fit's
    # result cannot be written: no bad input), naming the antenna and where the readings put the source.
    base = _scenario() + '\n[[candidate]]\nname = "shed vertical"\n' + VERTICAL + "position = [109.4, -49.3]\n"
    (tmp_path / "copse.toml").write_text(base)
    rf, copy, png = tmp_path / "readings.toml", tmp_path / "copy.toml", tmp_path / "dir.png"
    rf.write_text(_readings())
    args = ["locate", str(rf), "--scenario", str(tmp_path / "copse.toml"), "--write", str(copy), "--plot", str(png)]
    for fmt in ("table", "json"):
        res = CliRunner().invoke(cli, [*args, "--format", fmt])
        assert res.exit_code == 1 and "Traceback" not in res.output
        assert not copy.exists() and not png.exists()
        assert f"snrgain: --write: the copy, loaded as check and rank load it, is refused:\n{copy}: noise.local" in (
            res.stderr
        )
        assert 'the source stands 0.00 m from candidate 6 ("shed vertical"); place it at least 1 m away' in res.stderr
        assert "'located source' stands where the fit puts it: 120 m from the reading point [0 m, 0 m]" in res.stderr
        assert res.stderr.rstrip().endswith("no copy written, nor the plot")
    data = json.loads(res.stdout)
    assert data["ok"] and data["written"] is None and "shed vertical" in data["not_written_because"]
    assert "plot" not in data and "written_sources" not in data


def test_readings_of_another_band_are_not_copied(tmp_path):
    # Readings at 3.55 MHz were written into a 7.1 MHz scenario as its Fa there, with a warning and exit 0; as
    # noise-readings leaves out a reading off the band, the copy is refused before the fit, naming both frequencies.
    rf, base, copy = tmp_path / "readings.toml", tmp_path / "copse.toml", tmp_path / "copy.toml"
    rf.write_text(_readings())
    base.write_text(_scenario(frequency="7.1 MHz"))
    res = CliRunner().invoke(cli, ["locate", str(rf), "--scenario", str(base), "--write", str(copy)])
    assert res.exit_code == 2 and "Traceback" not in res.output and not copy.exists()
    assert "warning" not in res.stderr and "fit converged" not in res.stdout  # refused before the fit
    assert "the readings were taken at 3.55 MHz and the scenario listens at 7.1 MHz (40m)" in res.stderr
    assert "more than 5 % apart" in res.stderr and "no copy written" in res.stderr


def test_a_reading_speaks_for_its_own_amateur_band_or_within_5_percent():
    from snrgain.tools.noisereadings import on_band

    assert on_band(1.99e6, 1.83e6) and on_band(3.8e6, 3.55e6)  # one band, more than 5 % apart
    assert on_band(2.05e6, 1.96e6) and not on_band(2.07e6, 1.96e6)  # off the band: 5 % either way
    assert not on_band(7.1e6, 1.83e6)
