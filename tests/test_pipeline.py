"""The staged pipeline: each step on its own, the layering of the package, notebook-safe output, safe input.

Expected values here are invariants of the definitions (DESIGN.md, "SNR" and "Noise sky") or published values
named beside them; the steps are checked one at a time, then together against evaluate().
"""

import ast
import importlib
import subprocess
import sys
import time
import tomllib
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

import snrgain
from noisemodels import p372
from noisemodels.sphere import upper_hemisphere
from snrgain.antennas import FAMILIES, from_si, from_spec
from snrgain.antennas.base import variant
from snrgain.cli.main import cli
from snrgain.files import OutputExistsError, write_atomic
from snrgain.model import pipeline, snr
from snrgain.model.pipeline import antenna_results, notices
from snrgain.model.spread import snr_spread
from snrgain.outputs.messages import notice_text
from snrgain.physics import chain as chainmod
from snrgain.scenario import load
from snrgain.sky import noise as noisemod
from snrgain.units import QuantityError, parse_attenuation_db_per_100m, parse_quantity
from tests.conftest import MINIMAL, P372_DIR, REPO, SCENARIOS, needs_p372

# -- step 1: the resolved scenario ---------------------------------------------------------------------------


def test_load_resolves_si_objects():
    sc = load(MINIMAL)
    assert (sc.site.latitude_deg, sc.site.longitude_deg) == (40.0, -75.0)
    assert sc.band.freq_hz == 1.83e6 and sc.band.bandwidth_hz == 500.0
    assert sc.times.months == (1,) and sc.times.utc_hours == (3.0,)
    assert sc.receiver.noise_figure_db == 15.0  # the documented default (receiver.DEFAULT_NOISE_FIGURE_DB)
    assert len(sc.chains) == len(sc.antennas) == 2
    assert sc.noise.man_made.environment == "residential" and sc.noise.atmospheric is None
    assert sc.target_weights.sum() == pytest.approx(1.0)


def test_receiver_floor_resolves_to_a_noise_figure():
    # k T0 b in 500 Hz is -174 dBm/Hz + 27 dB = -147.0 dBm; a floor of -132 dBm is a noise figure of 15 dB.
    sc = load(MINIMAL + '\n[receiver]\nnoise_floor = "-132 dBm"\n')
    assert sc.receiver.noise_figure_db == pytest.approx(15.0, abs=0.03)


# -- step 2 and 4: gains and temperatures ---------------------------------------------------------------------


def test_gains_and_temperatures_of_an_isotropic_antenna():
    grid = upper_hemisphere(16)
    iso = from_spec({"family": "isotropic"})
    tgt = snrgain.physics.targets.from_bearing("t", bearing_rad=0.5, elevation_lo_rad=0.1, elevation_hi_rad=0.3)
    gains = snr.antenna_gains([iso], 1.83e6, grid, [tgt])
    # 0 dBi above the horizon, 0 below: its gain averaged over the whole sphere is 1/2 (RDF 3.01 dB).
    assert gains.toward[0, 0] == pytest.approx(1.0) and gains.mean[0] == pytest.approx(0.5)
    place = noisemod.Place(40.0, -75.0, 1.83e6)
    skies = noisemod.build_skies(noisemod.NoiseSettings(), place, months=[1], utc_hours=[0, 12], grid=grid)
    temps = snr.sky_temperatures(gains, skies)
    assert temps.by_component.shape == (len(skies.names), 1, 1, 2)
    assert np.allclose(temps.total, temps.by_component.sum(axis=0))
    # Under a uniform sky the reference monopole's gain (3 sin^2 of the zenith angle, 0 below) integrates to
    # 4 pi over the upper hemisphere and the isotropic antenna's to 2 pi (DESIGN.md, "Noise"): the isotropic
    # antenna reads half the temperature of the Fa the sky was normalised to.  Galactic noise with a critical
    # frequency far below 1.83 MHz is uniform over the whole upper hemisphere.
    open_sky = noisemod.NoiseSettings(
        man_made=None, galactic=noisemod.GalacticNoise(critical_frequency_day_hz=1e4, critical_frequency_night_hz=1e4)
    )
    sky = noisemod.build_skies(open_sky, place, months=[1], utc_hours=[0], grid=grid)
    t = snr.sky_temperatures(gains, sky).total[0, 0, 0]
    assert t == pytest.approx(0.5 * p372.fa_to_temperature_k(sky.fa_db[0, 0, 0]), rel=0.01)


def test_sky_temperatures_need_maps():
    grid = upper_hemisphere(8)
    place = noisemod.Place(40.0, -75.0, 1.83e6)
    skies = noisemod.build_skies(noisemod.NoiseSettings(), place, months=[1], utc_hours=[0], grid=grid, maps=False)
    gains = snr.antenna_gains([from_spec({"family": "isotropic"})], 1.83e6, grid, [])
    with pytest.raises(ValueError, match="maps"):
        snr.sky_temperatures(gains, skies)


# -- step 3: the one sky builder ------------------------------------------------------------------------------


@needs_p372
def test_sky_builder_levels_follow_p372_and_agree_with_and_without_maps():
    settings = noisemod.NoiseSettings(
        man_made=noisemod.ManMadeNoise("rural"),
        atmospheric=noisemod.AtmosphericNoise(model="p372"),
        p372_dir=P372_DIR,
    )
    place = noisemod.Place(51.0, -1.0, 1.83e6)
    hours = [0.0, 6.0, 12.0]
    grid = upper_hemisphere(16)
    with_maps = noisemod.build_skies(settings, place, months=[1], utc_hours=hours, grid=grid)
    levels = noisemod.build_skies(settings, place, months=[1], utc_hours=hours, grid=grid, maps=False)
    assert with_maps.names == levels.names
    assert np.allclose(with_maps.fa_db, levels.fa_db, equal_nan=True)
    assert np.allclose(with_maps.total_fa_db, levels.total_fa_db)
    i_mm = with_maps.names.index("man-made (rural)")
    # ITU-R P.372 Table 1, rural: Fam = 67.2 - 27.7 log10(f / 1 MHz).
    assert with_maps.fa_db[i_mm, 0, 0] == pytest.approx(67.2 - 27.7 * np.log10(1.83), abs=1e-9)
    i_at = with_maps.index("atmospheric")[0]
    expect = p372.atmospheric(51.0, -1.0, month=1, freq_hz=1.83e6, utc_hour=6.0, data_dir=P372_DIR)
    assert with_maps.fa_db[i_at, 0, 1] == pytest.approx(float(expect.fa_db), abs=1e-9)
    power_sum = 10 * np.log10(np.sum(10 ** (with_maps.fa_db / 10), axis=0))
    assert np.allclose(with_maps.median_power_sum_fa_db, power_sum)


@needs_p372
def test_noise_command_and_ranking_share_the_sky_builder():
    # The noise command's man-made and galactic levels are the ranking's for the same place and hour.
    # At 7.1 MHz galactic noise passes the night ionosphere (critical frequency 3 MHz), so its level is finite.
    res = CliRunner().invoke(
        cli,
        [
            "noise",
            "--lat",
            "40",
            "--lon",
            "-75",
            "--month",
            "1",
            "--frequency",
            "7.1 MHz",
            "--format",
            "json",
            "--p372-dir",
            str(P372_DIR),
        ],
    )
    assert res.exit_code == 0, res.output
    import json

    day = json.loads(res.output)
    text = MINIMAL.replace("utc_hours = [3]", "utc_hours = [3, 15]").replace("1.83 MHz", "7.1 MHz")
    r = snrgain.evaluate(text)
    comps = r.noise.components
    for name in ("man-made (residential)", "galactic"):
        assert comps[name]["fa_db"][0, 0] == pytest.approx(day["components"][name]["fa_db"][3], abs=1e-9)
        assert comps[name]["fa_db"][0, 1] == pytest.approx(day["components"][name]["fa_db"][15], abs=1e-9)


# -- step 5 and 6: per-antenna figures, notices, summary ---------------------------------------------------


def _steps(text):
    sc = pipeline.resolve_sources(load(text))
    grid = upper_hemisphere(sc.nside)
    skies = pipeline.build_sky(sc, grid)
    sc = pipeline.steer(sc, grid, skies)
    return sc, grid, skies, pipeline.products(sc, sc.antennas, grid, skies)


def test_antenna_results_reference_is_zero_and_steps_equal_evaluate():
    sc, grid, skies, nominal = _steps(MINIMAL)
    per = antenna_results(sc, nominal, skies, snr_spread(sc, grid, skies, nominal))
    assert np.all(per[0].snr_gain_db == 0.0)
    whole = snrgain.evaluate(MINIMAL)
    assert per[1].snr_gain_median_db == pytest.approx(whole.candidates[0].snr_gain_median_db, abs=1e-12)


def test_notices_are_data_and_worded_at_the_edge():
    # 40 dB of feed-line loss ahead of a 40 dB noise figure: the chain's floor lies far above the sky's noise.
    text = MINIMAL + '\n[receiver]\nnoise_figure = 40\n\n[chain]\nfeedline = { loss = "40 dB" }\n'
    sc, grid, skies, nominal = _steps(text)
    notes = notices(sc, antenna_results(sc, nominal, skies, snr_spread(sc, grid, skies, nominal)))
    limited = [n for n in notes if n.code == "receiver-limited"]
    assert limited and all(n.values["worst_margin_db"] < n.values["margin_target_db"] for n in limited)
    sentence = notice_text(limited[0])
    margin = limited[0].values["worst_margin_db"]
    assert margin < 0 and limited[0].antenna in sentence and f"{-margin:.1f} dB below the receiver floor" in sentence


def test_a_receiver_no_preamp_brings_to_the_target_still_gets_the_preamp_that_comes_closest():
    # A 30 dB noise figure receiver behind 20 dB of cable, asked for 60 dB of margin: no 3 dB preamplifier brings
    # the sky that far over the floor at every hour, but one at the antenna still recovers most of what the
    # receiver costs; the table shows its gain marked '*' (it said "none", read as "no preamplifier needed") and the
    # warning says what it recovers.
    import io

    from rich.console import Console

    from snrgain.outputs.output import ranking_table

    text = MINIMAL + '\n[receiver]\nnoise_figure = 30\nmargin_target = 60\n\n[chain]\nfeedline = { loss = "20 dB" }\n'
    r = snrgain.evaluate(text)
    limited = [n for n in r.notices if n.code == "receiver-limited" and "best_gain_db" in n.values]
    assert limited
    v = limited[0].values
    a = r.antenna(limited[0].antenna)
    assert v["best_position"] == "antenna" and v["best_max_snr_loss_db"] < 0.1 * v["max_snr_loss_db"]
    assert np.any(np.isnan(a.preamp_gain_needed_db)) and a.preamp_best_effort["gain_db"] == v["best_gain_db"]
    assert f"cuts the receiver's cost from up to {v['max_snr_loss_db']:.1f} dB" in notice_text(limited[0])
    console = Console(width=200, record=True, file=io.StringIO())
    console.print(ranking_table(r))
    shown = console.export_text()
    (row,) = [ln for ln in shown.splitlines() if a.name in ln and "│" in ln]
    assert f"{v['best_gain_db']:.0f}*" in row and "none" not in row


def test_far_ground_rods_set_the_resistor_and_warn_when_they_eat_z0():
    # A BOG ended on one 1.2 m rod: in moist loam (5 mS/m) the rod is 143 ohm (Dwight) and the resistor |Z0| less
    # that; in sandy soil (1 mS/m) the rod's 716 ohm exceeds |Z0| and the user is told to lower it.
    bog = '\n[[candidate]]\nname = "bog"\nfamily = "bog"\nlength = "80 m"\nbearing = 45\nfar_ground = "rod"\n'
    r = snrgain.evaluate(MINIMAL + bog)
    b = r.candidates[-1].build
    assert b["far_ground_ohm"] == pytest.approx(143.2, abs=0.1) and b["feed_ground_ohm"] == 20.0
    # The resistor is the one answer (best RDF, wiredesign.termination_answer); |Z0| less the rod stands beside it.
    assert b["termination_answer"]["matched_ohm"] == pytest.approx(b["z0_magnitude_ohm"] - b["far_ground_ohm"])
    assert b["termination_ohm"] == pytest.approx(b["termination_answer"]["termination_ohm"])
    assert not [n for n in r.notices if n.code == "far-ground-too-high"]
    sandy = snrgain.evaluate(MINIMAL.replace('ground = "moist loam"', 'ground = "sandy soil"') + bog)
    (warn,) = [n for n in sandy.notices if n.code == "far-ground-too-high"]
    assert warn.antenna == "bog" and warn.values["far_ground_ohm"] > warn.values["z0_ohm"]
    assert "no resistor can terminate it" in notice_text(warn)
    bad = MINIMAL + bog.replace('far_ground = "rod"', 'far_ground = "rods"')
    with pytest.raises(Exception, match="far_ground"):
        snrgain.evaluate(bad)


def test_summary_ranks_each_target_by_median_and_repr_is_compact():
    r = snrgain.evaluate(SCENARIOS / "marrow-fen.toml")
    for i, tr in enumerate(r.target_results):
        medians = [r.antenna(n).snr_gain_median_db[i] for n in tr.ranking]
        assert medians == sorted(medians, reverse=True)
    text = repr(r)
    assert "\n" not in text and len(text) < 300 and r.site["name"] in text
    assert all(len(repr(c)) < 200 for c in r.candidates)


def test_noise_budget_matches_friis_floor():
    # A receiver alone: the floor is k T0 b F = -174 + 10 log10(500) + NF dBm (T0 = 290 K, ITU-R P.372).
    ch = chainmod.cascade(freq_hz=1.83e6, receiver_noise_figure_db=10.0)
    b = chainmod.noise_budget(ch, np.array([[2900.0]]), bandwidth_hz=500.0, margin_target_db=10.0)
    assert b.floor_dbm == pytest.approx(-173.98 + 10 * np.log10(500) + 10.0, abs=0.01)
    # T_A = 10 T0: the margin over a 10 dB noise figure's floor is 0 dB.
    assert b.margin_db[0, 0] == pytest.approx(0.0, abs=1e-9)


# -- layering and habits ------------------------------------------------------------------------------------

PACKAGE_FILES = sorted((REPO / "snrgain").rglob("*.py")) + sorted((REPO / "noisemodels").rglob("*.py"))


def _imports(path: Path):
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.module:
            yield node.module, [a.name for a in node.names]
        elif isinstance(node, ast.Import):
            for a in node.names:
                yield a.name, []


def test_layering():
    for path in PACKAGE_FILES:
        rel = path.relative_to(REPO).as_posix()
        in_cli = rel.startswith("snrgain/cli/")
        for module, names in _imports(path):
            if rel.startswith("noisemodels/"):
                assert not module.startswith("snrgain"), f"{rel} imports {module}: noisemodels knows nothing of snrgain"
            if module == "click" or module.startswith("click."):
                assert in_cli, f"{rel} imports click: only snrgain.cli knows the command-line framework"
            if not in_cli and module.startswith(("snrgain", "noisemodels")):
                private = [n for n in names if n.startswith("_") and not n.startswith("__")]
                assert not private, f"{rel} imports private names {private} from {module}"


PHYSICS = (
    "snr",
    "spread",
    "placed",
    "chain",
    "lines",
    "modal",
    "ground",
    "plan",
    "build",
    "noise",
    "receiver",
    "targets",
    "pipeline",
)


def test_the_physics_needs_no_input_schema():
    # The input schema (pydantic sections, snrgain.fields, snrgain.scenario's models) stays at the edge: the
    # physics and the stages take SI values and resolved objects (the pipeline may load a file for the user).
    for name in PHYSICS:
        path = Path(importlib.import_module(f"snrgain.{name}").__file__)  # where it lives in its group
        for module, names in _imports(path):
            assert module.split(".")[0] != "pydantic", f"{name}.py imports pydantic"
            assert module != "snrgain.fields", f"{name}.py imports the input fields"
            if module == "snrgain.scenario":
                assert set(names) <= {"Scenario", "load", "load_bands"}, f"{name}.py imports {names} from the schema"
    assert not hasattr(chainmod, "from_section")


def test_evaluate_is_a_few_named_steps():
    tree = ast.parse((REPO / "snrgain" / "model" / "pipeline.py").read_text(encoding="utf-8"))
    fn = next(n for n in tree.body if isinstance(n, ast.FunctionDef) and n.name == "evaluate")
    body_start = fn.body[1].lineno if isinstance(fn.body[0], ast.Expr) else fn.body[0].lineno  # after the docstring
    assert fn.end_lineno - body_start + 1 <= 40


def test_importing_plots_leaves_the_backend_alone():
    code = (
        "import matplotlib; matplotlib.use('svg'); import snrgain.outputs.plots, snrgain.outputs.report; "
        "import matplotlib.pyplot as plt; print(matplotlib.get_backend(), len(plt.get_fignums()))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    assert out == ["svg", "0"]


def test_plots_draw_into_given_axes():
    from matplotlib.figure import Figure

    from snrgain.outputs import plots

    r = snrgain.evaluate(SCENARIOS / "marrow-fen.toml")
    fig = Figure()
    ax = fig.add_subplot()
    assert plots.elevation_pattern(r, ax=ax) is fig and len(ax.get_lines()) >= 1 + len(r.candidates)
    polar = Figure().add_subplot(projection="polar")
    assert plots.azimuth_pattern(r, ax=polar) is polar.figure
    with pytest.raises(ValueError, match="polar"):
        plots.azimuth_pattern(r, ax=Figure().add_subplot())
    three = Figure().subplots(1, 3)
    assert plots.ranking_chart(r, ax=three) is three[0].figure
    with pytest.raises(ValueError, match="3 panel"):
        plots.ranking_chart(r, ax=three[:2])
    one = Figure().add_subplot()
    assert plots.noise_sky(r, total_only=True, ax=one) is one.figure


# -- SI construction -------------------------------------------------------------------------------------------


def test_from_si_equals_from_spec_for_the_demo_antennas():
    az = np.radians(np.arange(0.0, 360.0, 15.0))
    el = np.radians(np.full_like(az, 15.0))
    seen = set()
    for name in ("alder-hollow.toml", "marrow-fen.toml"):
        sc = load(SCENARIOS / name, p372_dir=P372_DIR)
        for ant in sc.antennas:
            if ant.family == "array":
                continue
            twin = variant(ant)  # every parameter re-validated from its SI value
            assert np.allclose(twin.gain_linear(sc.freq_hz, az, el), ant.gain_linear(sc.freq_hz, az, el), rtol=1e-12)
            seen.add(ant.family)
    assert {"beverage", "bog", "vertical"} <= seen


def test_from_si_validates_like_a_scenario():
    from snrgain.antennas import SpecError

    with pytest.raises(SpecError, match="height"):
        from_si("beverage", length=250.0, height=-2.0)
    with pytest.raises(SpecError, match="unknown key"):
        from_si("beverage", length=250.0, height=2.5, lenght=3.0)
    # Angles are radians in SI: pi/2 is due east.
    bev = from_si("beverage", length=250.0, height=2.5, bearing=np.pi / 2, auto_for="front_to_back")
    assert bev.gain_dbi(1.83e6, 90.0, 15.0) > bev.gain_dbi(1.83e6, 270.0, 15.0) + 10


def test_every_family_is_registered_with_a_summary():
    assert all(f.summary for f in FAMILIES.values())


# -- quantities: one grammar -----------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "text",
    ["2,5 m", "8 10 ft", "3 m; 2", "1.83 MHz 2", "9**9**9 m", "2*3 m", "(1) m", "nan m", "inf m", "1e999 m", "m"],
)
def test_quantity_grammar_refuses_what_it_cannot_read(text):
    t0 = time.perf_counter()
    with pytest.raises(QuantityError):
        parse_quantity(text, "length")
    assert time.perf_counter() - t0 < 1.0  # nothing is evaluated, so nothing can hang


@pytest.mark.parametrize(
    "text, metres",
    [("400 ft", 121.92), ("2 cm", 0.02), ("1.5e3 m", 1500.0), (" 12 m ", 12.0), ("3 meters", 3.0), ("-1 m", -1.0)],
)
def test_quantity_grammar_reads_numbers_with_one_unit(text, metres):
    assert parse_quantity(text, "length") == pytest.approx(metres)


def test_attenuation_forms():
    # 1 dB/100 ft = 3.2808 dB/100 m (1 ft = 0.3048 m exactly).
    assert parse_attenuation_db_per_100m("1 dB/100ft") == pytest.approx(1 / 0.3048)
    assert parse_attenuation_db_per_100m("2 dB / 100 m") == 2.0
    assert parse_attenuation_db_per_100m(2.5) == 2.5
    for bad in ("fastdb/100m", "fast dB/100m", "2 dB/100 furlongs", "-1 dB/100m", True):
        with pytest.raises(QuantityError):
            parse_attenuation_db_per_100m(bad)


def _candidate_strings():
    """(scenario, candidate index, key) for every quantity string in the demos' candidate tables."""
    out = []
    for path in sorted(SCENARIOS.glob("*.toml")):
        data = tomllib.loads(path.read_text(encoding="utf-8"))
        for i, cand in enumerate(data.get("candidate", [])):
            for key, value in cand.items():
                if isinstance(value, str) and any(ch.isdigit() for ch in value):
                    out.append((path.name, i, key))
    return out


@pytest.mark.parametrize("scenario, index, key", _candidate_strings())
def test_a_malformed_quantity_is_an_exit_2_message(tmp_path, scenario, index, key):
    data = tomllib.loads((SCENARIOS / scenario).read_text(encoding="utf-8"))
    data["candidate"][index][key] = "1,5 m"
    bad = tmp_path / "bad.toml"
    bad.write_text(_toml(data), encoding="utf-8")
    res = CliRunner().invoke(cli, ["check", str(bad), "--p372-dir", str(P372_DIR)])
    assert res.exit_code == 2, res.output
    assert "Traceback" not in res.output and key in res.output


def test_malformed_measured_attenuation_in_a_scenario(tmp_path):
    text = MINIMAL + (
        '\n[[candidate]]\nname = "bog"\nfamily = "bog"\nlength = "80 m"\nvelocity_factor = 0.7\n'
        'attenuation = "fastdb/100m"\nz0 = 300\n'
    )
    p = tmp_path / "s.toml"
    p.write_text(text, encoding="utf-8")
    res = CliRunner().invoke(cli, ["check", str(p)])
    assert res.exit_code == 2 and "attenuation" in res.output and "Traceback" not in res.output


def _toml(data) -> str:
    """A small TOML writer for the demo structures (tables, arrays of tables, scalars, arrays, inline tables)."""

    def value(v):
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, (int, float)):
            return repr(v)
        if isinstance(v, str):
            return '"' + v.replace("\\", "\\\\").replace('"', '\\"') + '"'
        if isinstance(v, list):
            return "[" + ", ".join(value(x) for x in v) + "]"
        if isinstance(v, dict):
            return "{ " + ", ".join(f'"{k}" = {value(x)}' for k, x in v.items()) + " }"
        raise TypeError(v)

    lines = []

    def table(prefix, d):
        scalars = {k: v for k, v in d.items() if not isinstance(v, dict) and not _is_table_array(v)}
        for k, v in scalars.items():
            lines.append(f'"{k}" = {value(v)}')
        for k, v in d.items():
            name = f"{prefix}.{k}" if prefix else k
            if isinstance(v, dict):
                lines.append(f"\n[{name}]")
                table(name, v)
            elif _is_table_array(v):
                for item in v:
                    lines.append(f"\n[[{name}]]")
                    table(name, item)

    table("", data)
    return "\n".join(lines) + "\n"


def _is_table_array(v):
    return isinstance(v, list) and v and all(isinstance(x, dict) for x in v)


# -- writing files ------------------------------------------------------------------------------------------------


def test_atomic_writer(tmp_path):
    p = tmp_path / "out.txt"
    write_atomic(p, "one")
    with pytest.raises(OutputExistsError) as info:
        write_atomic(p, "two")
    assert info.value.path == p and "--overwrite" not in str(info.value)  # no command-line wording in the library
    write_atomic(p, "two", overwrite=True)
    assert p.read_text() == "two"

    def broken(tmp):
        Path(tmp).write_text("half")
        raise RuntimeError("disk full")

    with pytest.raises(RuntimeError):
        write_atomic(p, broken, overwrite=True)
    assert p.read_text() == "two" and sorted(x.name for x in tmp_path.iterdir()) == ["out.txt"]


def test_help_check_new_and_wire_leave_healpy_and_matplotlib_unimported():
    # (tests/test_light_start.py checks --help and check for scipy's slow parts and pyproj too)
    code = (
        "import sys\n"
        "from click.testing import CliRunner\n"
        "from snrgain.cli.main import cli\n"
        "assert CliRunner().invoke(cli, ['--help']).exit_code == 0\n"
        f"assert CliRunner().invoke(cli, ['check', {str(SCENARIOS / 'alder-hollow.toml')!r}]).exit_code == 0\n"
        "assert CliRunner().invoke(cli, ['new', '-']).exit_code == 0\n"
        "assert CliRunner().invoke(cli, ['wire', '--frequency', '1.83 MHz', '--length', '200 m']).exit_code == 0\n"
        "print(sorted(m for m in ('matplotlib', 'healpy') if m in sys.modules))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.strip()
    assert out == "[]"
