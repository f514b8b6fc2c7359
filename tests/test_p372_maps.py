"""P.372 atmospheric noise from the ITU-R Study Group 3 numerical maps, and its directions of arrival."""

import csv

import numpy as np
import pytest

from noisemodels import p372, p372_maps, sky, sphere, storms
from tests.conftest import P372_DIR, SCENARIOS, needs_p372

pytestmark = needs_p372

CHECK = P372_DIR / "check-values-site-south.csv"


def _rows():
    with open(CHECK) as fh:
        return list(csv.DictReader(fh))


def test_check_values_site_south_within_0_1_db():
    # Reference: ITU-R Study Group 3's own program for P.372 (its figure data), recovered to plain
    # time-block values (shared/data/p372/README.md, "Check values"): FaA, Du, Dl within 0.1 dB.
    rows = _rows()
    assert len(rows) == 324
    lat = np.array([float(r["lat_deg"]) for r in rows])
    lon = np.array([float(r["lon_deg"]) for r in rows])
    f = np.array([float(r["freq_mhz"]) for r in rows]) * 1e6
    block = np.array([int(r["time_block"]) for r in rows])
    month = np.array([int(r["month"]) for r in rows])
    for m in (1, 7):
        sel = month == m
        got = p372.atmospheric(lat[sel], lon[sel], month=m, freq_hz=f[sel], time_block=block[sel], data_dir=P372_DIR)
        for key, col in (("fa_db", "FaA_db"), ("du_db", "DuA_db"), ("dl_db", "DlA_db")):
            expect = np.array([float(r[col]) for r, s in zip(rows, sel) if s])
            np.testing.assert_allclose(getattr(got, key), expect, atol=0.1, err_msg=f"month {m} {key}")


def test_vectorised_shapes():
    lat, lon = np.meshgrid(np.arange(-60, 61, 30.0), np.arange(0, 360, 90.0), indexing="ij")
    out = p372.atmospheric(lat, lon, month=7, freq_hz=1.83e6, time_block=5, data_dir=P372_DIR)
    assert out.fa_db.shape == lat.shape
    f = p372.atmospheric(40.0, -75.0, month=7, freq_hz=np.array([1.8e6, 3.6e6, 7.1e6]), time_block=0, data_dir=P372_DIR)
    assert f.fa_db.shape == (3,)


def test_smooth_interpolation_hits_block_values_at_centres():
    # The interpolation in time equals each block value at the block's centre (local mean time 02, 06, ... h).
    lat, lon = 35.0, 45.0  # local mean time = UTC + 3 h
    for b in range(6):
        utc = (4 * b + 2 - lon / 15) % 24
        smooth = p372.atmospheric(lat, lon, month=1, freq_hz=3.6e6, utc_hour=utc, data_dir=P372_DIR)
        block = p372.atmospheric(lat, lon, month=1, freq_hz=3.6e6, time_block=b, data_dir=P372_DIR)
        assert float(smooth.fa_db) == pytest.approx(float(block.fa_db), abs=1e-9)
        assert float(smooth.du_db) == pytest.approx(float(block.du_db), abs=1e-9)


def test_smooth_interpolation_is_continuous_over_24_h():
    # Continuity: a tiny step in time gives a tiny change everywhere, block centres and midnight included.
    # (Linear interpolation in power is steep in dB next to a quiet block centre, so the step is tiny.)
    hours = np.linspace(0, 24, 24 * 60 + 1)
    kw = dict(month=7, freq_hz=1.83e6, data_dir=P372_DIR)
    fa = p372.atmospheric(-10.0, 130.0, utc_hour=hours, **kw).fa_db
    fa_eps = p372.atmospheric(-10.0, 130.0, utc_hour=(hours + 1e-7) % 24, **kw).fa_db
    assert np.max(np.abs(fa_eps - fa)) < 0.01
    assert fa[0] == pytest.approx(fa[-1], abs=1e-9)
    # Between centres the value stays within the two neighbouring block values.
    blocks = [float(p372.atmospheric(-10.0, 130.0, time_block=b, **kw).fa_db) for b in range(6)]
    assert fa.min() >= min(blocks) - 1e-9 and fa.max() <= max(blocks) + 1e-9


def test_tropical_night_far_above_polar_day_at_160m():
    # Plausibility (common practice): tropical storms make night-time 160 m noise far stronger than polar days.
    tropic_night = p372.atmospheric(5.0, 20.0, month=4, freq_hz=1.83e6, time_block=0, data_dir=P372_DIR).fa_db
    polar_day = p372.atmospheric(75.0, 20.0, month=6, freq_hz=1.83e6, time_block=3, data_dir=P372_DIR).fa_db
    assert tropic_night - polar_day > 30.0


@pytest.mark.parametrize("site", [(40.0, -90.0, 7), (-25.0, 135.0, 1), (10.0, 0.0, 4)])
def test_falls_with_frequency_at_night(site):
    # Plausibility (common practice): atmospheric noise falls with frequency across 1.8-7 MHz at night.
    lat, lon, month = site
    f = np.array([1.8e6, 3.6e6, 5.3e6, 7.1e6])
    fa = p372.atmospheric(lat, lon, month=month, freq_hz=f, time_block=0, data_dir=P372_DIR).fa_db
    assert np.all(np.diff(fa) < 0)


def test_env_var_supplies_folder(monkeypatch):
    monkeypatch.setenv(p372_maps.ENV_VAR, str(P372_DIR))
    via_env = p372.atmospheric(0.0, 0.0, month=3, freq_hz=2e6, time_block=1)
    named = p372.atmospheric(0.0, 0.0, month=3, freq_hz=2e6, time_block=1, data_dir=P372_DIR)
    assert via_env.fa_db == named.fa_db and via_env.du_db == named.du_db and via_env.dl_db == named.dl_db


def test_missing_folder_says_how_to_get_data(monkeypatch, tmp_path):
    monkeypatch.delenv(p372_maps.ENV_VAR, raising=False)
    with pytest.raises(p372_maps.P372DataError, match='Study Group 3.*model = "given"'):
        p372.atmospheric(0.0, 0.0, month=3, freq_hz=2e6, time_block=1)
    with pytest.raises(p372_maps.P372DataError, match="COEFF03W.txt"):
        p372.atmospheric(0.0, 0.0, month=3, freq_hz=2e6, time_block=1, data_dir=tmp_path)


def _corrupt(tmp_path, edit, name="p372"):
    d = tmp_path / name
    d.mkdir()
    text = (P372_DIR / "COEFF02W.txt").read_text(encoding="latin-1")
    (d / "COEFF02W.txt").write_text(edit(text), encoding="latin-1")
    return d


def test_corrupt_files_name_file_and_section(tmp_path):
    d = _corrupt(tmp_path, lambda t: t.replace("fakabp(2,6)", "fakabq(2,6)"))
    with pytest.raises(p372_maps.P372DataError, match=r"COEFF02W.txt: section fakabp\(2, 6\) not found"):
        p372.atmospheric(0.0, 0.0, month=2, freq_hz=2e6, time_block=1, data_dir=d)


def test_truncated_section_and_bad_number(tmp_path):
    def cut(t):
        i = t.index("dud(5,12,5)")
        lines = t[i:].splitlines()
        return t[:i] + "\n".join(lines[:5] + lines[8:]) + "\n"

    d = _corrupt(tmp_path, cut)
    with pytest.raises(p372_maps.P372DataError, match="section dud.*values, expected 300"):
        p372.atmospheric(0.0, 0.0, month=2, freq_hz=2e6, time_block=1, data_dir=d)
    d2 = _corrupt(tmp_path, lambda t: t.replace("fam(14,12)\n", "fam(14,12)\n 0.1x2E+01\n", 1), name="bad-number")
    with pytest.raises(p372_maps.P372DataError, match="line .*section fam: not a number"):
        p372.atmospheric(0.0, 0.0, month=2, freq_hz=2e6, time_block=1, data_dir=d2)


def test_bad_arguments():
    with pytest.raises(ValueError, match="exactly one of"):
        p372.atmospheric(0.0, 0.0, month=2, freq_hz=2e6, data_dir=P372_DIR)
    with pytest.raises(ValueError, match="time_block"):
        p372.atmospheric(0.0, 0.0, month=2, freq_hz=2e6, time_block=6, data_dir=P372_DIR)
    with pytest.raises(ValueError, match="month"):
        p372.atmospheric(0.0, 0.0, month=13, freq_hz=2e6, time_block=1, data_dir=P372_DIR)


# -- directions of arrival ---------------------------------------------------------


def _share_by_bearing(comp, lo_deg, hi_deg):
    p = comp.weight_k_sr * sky.reference_monopole_gain(comp.directions.elevation_rad)
    az = np.degrees(comp.directions.azimuth_rad)
    return p[(az >= lo_deg) & (az < hi_deg)].sum() / p.sum()


def test_storm_map_normalised_to_site_fa():
    # DESIGN.md: the reference monopole integrated over the map returns the site's P.372 Fa.
    grid = sphere.upper_hemisphere(32)
    lv = p372.atmospheric(41.6, -72.35, month=7, freq_hz=1.83e6, utc_hour=4, data_dir=P372_DIR)
    comp = storms.storm_component(
        41.6, -72.35, month=7, utc_hour=4, freq_hz=1.83e6, level=lv, directions=grid, data_dir=P372_DIR
    )
    assert p372.temperature_to_fa_db(sky.reference_temperature_k(comp)) == pytest.approx(float(lv.fa_db), abs=1e-9)


def test_single_storm_region_concentrates_on_its_bearing():
    # A storm region placed by hand 2,000 km south-east (bearing about 135) of a site at night.
    from pyproj import Geod

    grid = sphere.upper_hemisphere(32)

    def one_storm(lat, lon):
        _, _, dist = Geod(ellps="WGS84").inv(
            np.full(lat.size, -88.0), np.full(lat.size, 27.0), lon.ravel(), lat.ravel()
        )
        return np.where(dist.reshape(lat.shape) < 300e3, 1.0, 1e-9)

    lon0, lat0, _ = Geod(ellps="WGS84").fwd(-88.0, 27.0, 315.0, 2000e3)  # site 2,000 km north-west of the storm
    comp = storms.storm_component(
        lat0,
        lon0,
        month=1,
        utc_hour=6,
        freq_hz=1.83e6,
        level=p372.NoiseLevel(60, 0, 0),
        directions=grid,
        sources=one_storm,
    )
    assert _share_by_bearing(comp, 115, 155) > 0.9


def test_sunlit_paths_contribute_less():
    # The same storm by night and by day at the reflection points: daytime absorption cuts its share.
    def ring(lat, lon):
        return np.ones_like(lat)

    f = 1.83e6
    az, el, night = storms.arrival_samples(0.0, 0.0, month=3, utc_hour=0.0, freq_hz=f, sources=ring)
    _, _, day = storms.arrival_samples(0.0, 0.0, month=3, utc_hour=12.0, freq_hz=f, sources=ring)
    far = np.ones_like(el, dtype=bool)
    assert day[far].sum() < 1e-3 * night[far].sum()
    # Absorption law: zero sun (night) gives only the night loss per hop.
    assert storms.hop_absorption_db(1.83, np.radians(10), np.radians(120)) == pytest.approx(
        storms.NIGHT_LOSS_DB_PER_HOP
    )
    assert storms.hop_absorption_db(7.1, np.radians(10), 0.0) < storms.hop_absorption_db(1.83, np.radians(10), 0.0)


def test_p372_atmospheric_in_a_scenario(minimal_text, monkeypatch):
    import snrgain

    monkeypatch.delenv(p372_maps.ENV_VAR, raising=False)
    text = minimal_text + f'\n[noise.atmospheric]\nmodel = "p372"\ndata_dir = "{P372_DIR}"\n'
    r = snrgain.evaluate(text)
    comp = r.noise.components["atmospheric (P.372)"]
    expect = p372.atmospheric(40.0, -75.0, month=1, freq_hz=1.83e6, utc_hour=3, data_dir=P372_DIR)
    assert comp["fa_db"][0, 0] == pytest.approx(float(expect.fa_db), abs=1e-9)
    assert comp["du_db"][0, 0] == pytest.approx(float(expect.du_db), abs=1e-9)


def test_scenario_asking_for_p372_without_data_fails_clearly(minimal_text, monkeypatch):
    from snrgain.scenario import ScenarioError, load

    monkeypatch.delenv(p372_maps.ENV_VAR, raising=False)
    with pytest.raises(ScenarioError, match="noise.atmospheric: .*no data folder is set.*SNRGAIN_P372_DIR"):
        load(minimal_text + '\n[noise.atmospheric]\nmodel = "p372"\n')
    # A scenario that does not ask runs without data.
    assert load(minimal_text).noise.atmospheric is None


def test_data_dir_precedence_option_scenario_env(minimal_text, monkeypatch, tmp_path):
    # The command line's --p372-dir wins over the scenario key, which wins over $SNRGAIN_P372_DIR; an error about the
    # folder says which of them named it.
    from snrgain.scenario import ScenarioError, load

    text = minimal_text + '\n[noise.atmospheric]\nmodel = "p372"\n'
    missing = tmp_path / "missing"
    # The option alone works.
    monkeypatch.delenv(p372_maps.ENV_VAR, raising=False)
    assert load(text, p372_dir=P372_DIR).noise.p372_dir == P372_DIR
    # The option wins over the environment variable, even one naming a folder that does not exist.
    monkeypatch.setenv(p372_maps.ENV_VAR, str(missing))
    assert load(text, p372_dir=P372_DIR).noise.p372_dir == P372_DIR
    # The environment variable alone: its folder, and the error says it named it.
    with pytest.raises(ScenarioError, match=r"the folder \$SNRGAIN_P372_DIR names: .*does not exist") as err:
        load(text)
    assert str(missing) in str(err.value)
    # The scenario key wins over the environment variable, the option over the key.
    keyed = text + f'data_dir = "{P372_DIR}"\n'
    assert load(keyed).noise.p372_dir == P372_DIR
    assert load(keyed, p372_dir=P372_DIR).noise.p372_dir == P372_DIR
    with pytest.raises(ScenarioError, match="the folder --p372-dir names: .*does not exist"):
        load(keyed, p372_dir=missing)
    with pytest.raises(ScenarioError, match="the folder noise.atmospheric.data_dir names: .*does not exist"):
        load(text + f'data_dir = "{missing}"\n')


def test_p372_dir_option_wins_on_the_command_line(tmp_path):
    from click.testing import CliRunner

    from snrgain.cli.main import cli

    scenario = SCENARIOS / "alder-hollow-summer.toml"
    env = {p372_maps.ENV_VAR: str(tmp_path / "missing")}
    res = CliRunner().invoke(cli, ["check", str(scenario), "--p372-dir", str(P372_DIR)], env=env)
    assert res.exit_code == 0, res.output
    res = CliRunner().invoke(cli, ["check", str(scenario)], env=env)
    assert res.exit_code == 2 and "$SNRGAIN_P372_DIR names" in res.stderr
    args = ["noise", "--lat", "0", "--lon", "0", "--month", "1", "--frequency", "2 MHz", "--format", "json"]
    res = CliRunner().invoke(cli, [*args, "--p372-dir", str(P372_DIR)], env=env)
    assert res.exit_code == 0, res.output
    res = CliRunner().invoke(cli, args, env=env)
    assert res.exit_code == 2 and "$SNRGAIN_P372_DIR names" in res.stderr


def test_noise_command_table_and_json(tmp_path):
    import json

    from click.testing import CliRunner

    from snrgain.cli.main import cli

    runner = CliRunner()
    args = [
        "noise",
        "--lat",
        "41.6",
        "--lon",
        "-72.35",
        "--month",
        "7",
        "--frequency",
        "1.83 MHz",
        "--p372-dir",
        str(P372_DIR),
    ]
    res = runner.invoke(cli, args)
    assert res.exit_code == 0, res.output
    assert "atmospheric" in res.stdout and "share" in res.stdout
    res = runner.invoke(cli, args + ["--format", "json"])
    data = json.loads(res.stdout)
    assert len(data["utc_hours"]) == 24 and len(data["total"]["fa_db"]) == 24
    assert sum(s["share_percent"] for s in data["directions"]["sectors"]) == pytest.approx(100.0)
    res = runner.invoke(
        cli,
        ["noise", "--lat", "0", "--lon", "0", "--month", "1", "--frequency", "2 MHz", "--p372-dir", str(tmp_path)],
        env={p372_maps.ENV_VAR: ""},
    )
    assert res.exit_code == 2 and "COEFF01W.txt" in res.stderr


def test_a_damaged_coefficient_file_is_refused(tmp_path):
    # A value such as 1e308 in a used section once changed Fa silently; it names the file, line and section now.
    text = (P372_DIR / "COEFF01W.txt").read_text(encoding="latin-1")
    lines = text.splitlines()
    start = next(i for i, ln in enumerate(lines) if p372_maps._HEADER.match(ln) and "FAKP" in ln.upper())
    lines[start + 1] = "1e308 " + lines[start + 1]
    (tmp_path / "COEFF01W.txt").write_text("\n".join(lines), encoding="latin-1")
    with pytest.raises(p372_maps.P372DataError, match="out of range"):
        p372_maps.read_coefficients(tmp_path / "COEFF01W.txt", 1)


@needs_p372
@pytest.mark.parametrize("section", ["fam", "dud"])
def test_a_section_zeroed_throughout_is_refused(tmp_path, section):
    # A damaged copy with a section filled with zeros read as Fa 0 dB (fam) or deciles of 0 dB (dud) without a word.
    import re

    text = (P372_DIR / "COEFF02W.txt").read_text(encoding="latin-1")
    heads = list(p372_maps._HEADER_IN_TEXT.finditer(text))
    i = next(k for k, m in enumerate(heads) if m.group(1) == section)
    end = heads[i + 1].start() if i + 1 < len(heads) else len(text)
    body = re.sub(r"[-+0-9.Ee]+", "0.0", text[heads[i].end() : end])
    (tmp_path / "COEFF02W.txt").write_text(text[: heads[i].end()] + body + text[end:], encoding="latin-1")
    with pytest.raises(p372_maps.P372DataError, match=f"section {section}.*holds one value throughout .0.*damaged"):
        p372_maps.read_coefficients(tmp_path / "COEFF02W.txt", 2)
