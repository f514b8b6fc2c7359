"""The builder's answer: per-target rankings, RDF on the trade's scale, how sure, the station plan, build sheets.

Published values: the directivity of a short monopole over a perfect ground plane, 3 (4.77 dB), and of a
quarter-wave monopole, 3.28 (5.15 dB) (J. D. Kraus, "Antennas", 2nd ed. (1988), Sections 5-6 and 16-3).
The rest are invariants of the definitions in snrgain.model.spread and snrgain.decide.plan.
"""

import numpy as np
import pytest
from click.testing import CliRunner

import snrgain
from snrgain.cli.main import cli
from snrgain.decide import plan as planmod
from snrgain.decide.build import coax_length_m, nearest_standard_ohm
from snrgain.model.spread import ground_nodes, weighted_quantiles
from snrgain.physics.ground import C_M_PER_S, class_spread
from tests.conftest import HAVE_P372, MINIMAL, P372_DIR, SCENARIOS, demo_params

NO_SPREAD = "\n[uncertainty]\nground = false\nnoise_deciles = false\nlocal_sources = false\nhours = false\n"


@pytest.fixture(autouse=True)
def _in_the_scenarios_folder(monkeypatch):
    # Demo texts name their pattern tables relative to the scenarios folder.
    monkeypatch.chdir(SCENARIOS)


RDF_SITE = """
[site]
name = "bench"
latitude = 40.0
longitude = -75.0
ground = "perfect"

[band]
frequency = "1.83 MHz"

[time]
months = [1]
utc_hours = [3]

[noise.man_made]
environment = "none"

[[target]]
name = "horizon"
bearing = 0
elevation = [0, 2]

[reference]
name = "quarter-wave"
family = "vertical"
height = "{quarter} m"
ground_loss = 0

[[candidate]]
name = "short"
family = "vertical"
height = "3 m"
ground_loss = 0
"""


def test_rdf_on_the_trades_scale():
    quarter = C_M_PER_S / 1.83e6 / 4
    r = snrgain.evaluate(RDF_SITE.format(quarter=quarter))
    # Kraus: 5.15 dB for the quarter-wave monopole, 4.77 dB for a short one (3 m is 0.018 wavelength).
    assert r.reference.rdf_db[0] == pytest.approx(5.15, abs=0.05)
    assert r.candidates[0].rdf_db[0] == pytest.approx(4.77, abs=0.05)
    # Lossless over a perfect ground the whole-sphere average gain is 1: the mean gain is 0 dBi.
    assert r.reference.mean_gain_dbi == pytest.approx(0.0, abs=0.05)


@pytest.mark.filterwarnings("ignore:All-NaN")
@pytest.mark.parametrize("path", demo_params())
def test_best_is_the_highest_median_in_every_demo(path, monkeypatch):
    if HAVE_P372:
        monkeypatch.setenv("SNRGAIN_P372_DIR", str(P372_DIR))
    r = snrgain.evaluate(path)
    for i, tr in enumerate(r.target_results):
        best = max(r.candidates, key=lambda a: a.snr_gain_median_db[i])
        assert tr.best == best.name == tr.ranking[0]
        runner = r.antenna(tr.ranking[1]) if len(tr.ranking) > 1 else r.reference
        assert tr.margin_db == pytest.approx(best.snr_gain_median_db[i] - runner.snr_gain_median_db[i])
        assert tr.margin_db >= 0


def _worth(r, members) -> float:
    # The plan's worth from its definition (snrgain.decide.plan): the weighted mean over targets of the serving member's
    # median SNR gain as a power ratio, in dB; never a sum or mean of dB over targets.
    w = np.array([t["weight"] for t in r.targets])
    best = [max(a.snr_gain_median_db[i] for a in members) for i in range(len(r.targets))]
    return float(10 * np.log10(np.dot(w, 10 ** (np.array(best) / 10))))


def _plan_checks(r):
    p = r.plan
    assert all(a >= planmod.MIN_ADDED_DB for a in p.added_db)
    assert sum(p.added_db) == pytest.approx(p.gain_db, abs=1e-9)
    members = [r.reference] + [r.antenna(n) for n in p.antennas]
    assert p.gain_db == pytest.approx(_worth(r, members), abs=1e-9)
    # One statistic: each target is served by the member with the highest median toward it, and where that is not
    # the target's best antenna overall, the plan says which is and why.
    for i, tr in enumerate(r.target_results):
        (service,) = p.by_target[i]
        served = max(members, key=lambda a: a.snr_gain_median_db[i])
        assert service.antenna == served.name
        assert service.snr_gain_db == pytest.approx(served.snr_gain_median_db[i])
        best = r.antenna(tr.best)
        if best.snr_gain_median_db[i] > served.snr_gain_median_db[i] + 1e-9:
            assert p.not_best[i]["best"] == tr.best and p.not_best[i]["served_by"] == served.name
            assert p.not_best[i]["reason"] in ("max_antennas", "adds_little", "alternative")
        else:
            assert i not in p.not_best
    # No candidate left out would add as much as MIN_ADDED_DB (when no limit binds).
    if p.max_antennas is None and p.antennas:
        # (an alternative to a member, standing in its place, cannot be added: the plan builds one of the two)
        beside = {b for pair in p.alternatives for b in pair if set(pair) & set(p.antennas)}
        for c in r.candidates:
            if c.name not in p.antennas and c.name not in beside:
                assert _worth(r, [*members, c]) - p.gain_db < planmod.MIN_ADDED_DB


@pytest.mark.filterwarnings("ignore:All-NaN")
@pytest.mark.parametrize("path", demo_params())
def test_plan_adds_up_in_every_demo(path, monkeypatch):
    if HAVE_P372:
        monkeypatch.setenv("SNRGAIN_P372_DIR", str(P372_DIR))
    _plan_checks(snrgain.evaluate(path))


def test_plan_with_a_limit_and_greedy_agrees_with_exact(monkeypatch):
    text = (SCENARIOS / "alder-hollow.toml").read_text() + "\n[plan]\nmax_antennas = 1\n"
    r = snrgain.evaluate(text)
    assert len(r.plan.antennas) == 1 and r.plan.max_antennas == 1
    _plan_checks(r)
    full = snrgain.evaluate(SCENARIOS / "alder-hollow.toml")
    monkeypatch.setattr(planmod, "EXACT_LIMIT", 0)  # force the greedy search
    greedy = snrgain.evaluate(SCENARIOS / "alder-hollow.toml")
    assert greedy.plan.method == "greedy" and full.plan.method == "exact"
    assert greedy.plan.gain_db == pytest.approx(full.plan.gain_db, abs=1e-9)


def test_plan_serves_each_target_at_every_listened_hour():
    r = snrgain.evaluate(SCENARIOS / "alder-hollow.toml")
    for i, t in enumerate(r.targets):
        hours = sorted(h for s in r.plan.by_target[i] for h in s.utc_hours)
        assert hours == sorted(t["utc_hours"])


def test_no_spread_gives_todays_value():
    # Every spread off: the median and both deciles are the SNR gain averaged in dB over the target's hours.
    for text in (MINIMAL + NO_SPREAD, (SCENARIOS / "alder-hollow.toml").read_text() + NO_SPREAD):
        r = snrgain.evaluate(text)
        for a in r.candidates:
            for i in range(len(r.targets)):
                today = np.nanmean(a.snr_gain_db[i])
                assert a.snr_gain_nominal_db[i] == pytest.approx(today, abs=1e-12)
                for v in (a.snr_gain_p10_db[i], a.snr_gain_median_db[i], a.snr_gain_p90_db[i]):
                    assert v == pytest.approx(today, abs=0.01)


def test_spreads_widen_the_band_and_are_deterministic():
    text = (SCENARIOS / "alder-hollow.toml").read_text()
    a, b = snrgain.evaluate(text), snrgain.evaluate(text)
    for x, y in zip(a.candidates, b.candidates):
        np.testing.assert_array_equal(x.snr_gain_median_db, y.snr_gain_median_db)
        np.testing.assert_array_equal(x.probability_beats, y.probability_beats)
    narrow = snrgain.evaluate(text + NO_SPREAD)
    width = [c.snr_gain_p90_db - c.snr_gain_p10_db for c in a.candidates]
    assert max(float(np.max(w)) for w in width) > 3.0  # the ground and noise spreads matter on this site
    assert all(np.all(c.snr_gain_p90_db - c.snr_gain_p10_db < 0.011) for c in narrow.candidates)
    for c in a.candidates:
        assert np.all((c.probability_beats >= 0) & (c.probability_beats <= 1))


def test_only_the_ground_spread():
    text = (SCENARIOS / "alder-hollow.toml").read_text()
    r = snrgain.evaluate(text + "\n[uncertainty]\nnoise_deciles = false\nlocal_sources = false\nhours = false\n")
    bog = r.antenna("BOG toward Europe")
    assert bog.snr_gain_p90_db[0] - bog.snr_gain_p10_db[0] > 1.0  # a wire on the ground depends on the soil
    assert r.uncertainty["ground"]["conductivity_s_per_m"] == pytest.approx([0.002, 0.0125])
    # A ground given without ranges has no spread.
    fixed = text.replace('ground = "moist loam"', 'ground = { conductivity = "5 mS/m", permittivity = 13 }', 1)
    r2 = snrgain.evaluate(fixed + "\n[uncertainty]\nnoise_deciles = false\nlocal_sources = false\nhours = false\n")
    assert r2.uncertainty["ground"] is None
    assert all(np.all(c.snr_gain_p90_db - c.snr_gain_p10_db < 0.011) for c in r2.candidates)


def test_probability_of_beating_falls_with_the_margin():
    text = (SCENARIOS / "alder-hollow.toml").read_text()
    p3 = snrgain.evaluate(text).antenna("cardioid pair toward Europe").probability_beats
    p8 = snrgain.evaluate(text + "\n[uncertainty]\nbeat_by = 8\n").antenna("cardioid pair toward Europe")
    assert np.all(p8.probability_beats <= p3 + 1e-12)


def test_ground_nodes_and_class_spread():
    spread = class_spread("moist loam")  # 5 mS/m, 13: a factor 2.5 and 1.5 each way (documented assumption)
    assert spread.conductivity_s_per_m == pytest.approx((0.002, 0.0125))
    nodes = ground_nodes(snrgain.scenario.load(MINIMAL).site.ground, spread)
    assert len(nodes) == 9 and sum(w for _, w in nodes) == pytest.approx(1.0)
    # Gauss-Hermite nodes at +-sqrt(3) standard deviations; the 90 % point is 1.2816 of them.
    sigmas = sorted({g.conductivity_s_per_m for g, _ in nodes})
    s = np.log(2.5) / 1.2815515655446004
    assert sigmas[-1] == pytest.approx(0.005 * np.exp(np.sqrt(3) * s))
    assert weighted_quantiles([0.0, 10.0], [1.0, 1.0], (0.5,))[0] == pytest.approx(5.0)


def test_per_target_hours_override_the_scenario_times():
    second = '\n[[target]]\nname = "south"\nbearing = 180\nelevation = [10, 20]\n'  # the [time] hours
    text = (
        MINIMAL.replace("utc_hours = [3]", "utc_hours = [3, 15]").replace(
            "elevation = [10, 20]\n", "elevation = [10, 20]\nutc_hours = [15]\n"
        )
        + second
        + NO_SPREAD
    )
    r = snrgain.evaluate(text)
    assert r.utc_hours == [3.0, 15.0]  # the grid: every hour some target is listened at
    assert r.targets[0]["utc_hours"] == [15.0] and r.targets[1]["utc_hours"] == [3.0, 15.0]
    g = r.candidates[0].snr_gain_db
    assert np.isnan(g[0, 0, 0]) and np.isfinite(g[0, 0, 1]) and np.all(np.isfinite(g[1]))
    assert r.candidates[0].snr_gain_median_db[0] == pytest.approx(g[0, 0, 1], abs=0.01)
    assert r.plan.by_target[0][0].utc_hours == [15.0]


def test_build_sheet_values():
    r = snrgain.evaluate(SCENARIOS / "marrow-fen.toml")
    two_wire = r.antenna("two-wire pair, north-west port").build
    assert two_wire["termination_standard_ohm"] == nearest_standard_ohm(two_wire["termination_ohm"])
    flag = r.antenna("flag toward north-west").build
    assert 100 <= flag["termination_ohm"] <= 5000 and flag["turns_ratio"] > 1
    pv = r.antenna("phased verticals north-west").build
    # Delay = length / (velocity factor x c); RG-6's velocity factor 0.83 from the cable table.
    for ns, m in zip(pv["delays_ns"], pv["phasing_lengths_m"]):
        assert m == pytest.approx(ns * 1e-9 * 0.83 * C_M_PER_S)
    assert coax_length_m(100e-9, 0.66) == pytest.approx(19.786, abs=1e-3)
    # E12 (IEC 60063): 528 -> 560, 339 -> 330, 1153 -> 1200.
    assert [nearest_standard_ohm(x) for x in (528.0, 339.0, 1153.0)] == [560.0, 330.0, 1200.0]


def test_rank_build_table():
    res = CliRunner().invoke(cli, ["rank", str(SCENARIOS / "marrow-fen.toml"), "--build"])
    assert res.exit_code == 0, res.output
    out = " ".join(res.stdout.split())  # the terminal table wraps long lines
    assert "Best toward East Asia" in out and "Station plan" in out and "Build sheet" in out
    assert "phasing delays" in out and "of RG-6" in out
    # each delay beside its element's place, as the scenario writes positions (the pair: the origin, then 13.5 m west
    # and 16.1 m north)
    assert "phasing delays, element by element (east, north): at (0.0 m, 0.0 m)" in out
    assert "at (-13.5 m, 16.1 m)" in out


@pytest.mark.parametrize(
    "extra, field",
    [
        ("\n[plan]\nmax_antennas = 0\n", "plan.max_antennas"),
        ('\n[[noise.local]]\nname = "n"\nbearing = 90\nfa = 60\nuncertainty = "-3 dB"\n', "uncertainty"),
        ("\n[uncertainty]\nbeat_by = -1\n", "uncertainty"),
    ],
)
def test_bad_builder_input_is_exit_2(tmp_path, extra, field):
    p = tmp_path / "s.toml"
    p.write_text(MINIMAL + extra)
    res = CliRunner().invoke(cli, ["check", str(p)])
    assert res.exit_code == 2 and field in res.stderr and str(p) in res.stderr


def test_empty_hours_and_reversed_ranges_are_exit_2(tmp_path):
    cases = [
        (
            MINIMAL.replace("elevation = [10, 20]\n", "elevation = [10, 20]\nutc_hours = []\n"),
            'target 1 ("north-east").utc_hours',
        ),
        (
            MINIMAL.replace(
                'ground = "moist loam"', 'ground = { conductivity = ["8 mS/m", "2 mS/m"], permittivity = 13 }'
            ),
            "site.ground",
        ),
        (
            MINIMAL.replace('ground = "moist loam"', 'ground = { conductivity = "5 mS/m", permittivity = [20, 8] }'),
            "site.ground",
        ),
    ]
    for text, field in cases:
        p = tmp_path / "s.toml"
        p.write_text(text)
        res = CliRunner().invoke(cli, ["check", str(p)])
        assert res.exit_code == 2 and field in res.stderr, res.stderr
        assert "Traceback" not in res.output


def test_ground_range_sets_the_spread_and_its_middle():
    text = MINIMAL.replace(
        'ground = "moist loam"', 'ground = { conductivity = ["2 mS/m", "8 mS/m"], permittivity = [9, 16] }'
    )
    sc = snrgain.scenario.load(text)
    assert sc.site.ground.conductivity_s_per_m == pytest.approx(0.004)  # geometric middle
    assert sc.site.ground.permittivity == pytest.approx(12.0)
    assert sc.site.ground_spread.conductivity_s_per_m == (0.002, 0.008)


def test_build_sheet_says_when_the_termination_hardly_matters():
    # A wire that loses more than 20 dB end to end returns what its far end reflects 40 dB down.
    from snrgain.antennas import from_spec
    from snrgain.decide.build import build_sheet

    buried = build_sheet(
        from_spec({"family": "bog", "length": "40 m", "depth": "10 cm", "ground": "moist loam"}), 1.83e6
    )
    laid = build_sheet(from_spec({"family": "bog", "length": "80 m", "ground": "moist loam"}), 1.83e6)
    assert buried["end_to_end_loss_db"] > 20 > laid["end_to_end_loss_db"]
    assert buried["end_to_end_loss_db"] == pytest.approx(
        from_spec({"family": "bog", "length": "40 m", "depth": "10 cm", "ground": "moist loam"})
        .line(1.83e6)
        .attenuation_db_per_100m
        * 0.4
    )


def test_a_yardstick_is_ranked_but_never_the_best(tmp_path):
    # the starter file's isotropic yardstick ranks first toward "far south" (+0.8 dB), but it is nothing to build:
    # the best there is the best buildable candidate, as the station plan takes it (which serves that target with
    # the reference: no candidate beats it)
    from click.testing import CliRunner

    import snrgain
    from snrgain.cli.main import cli

    path = tmp_path / "starter.toml"
    assert CliRunner().invoke(cli, ["new", str(path)]).exit_code == 0
    r = snrgain.evaluate(str(path))
    t = [t["name"] for t in r.targets].index("far south")
    tr = r.target_results[t]
    assert tr.ranking[0] == "isotropic yardstick" and tr.best != "isotropic yardstick"
    buildable = [n for n in tr.ranking if n != "isotropic yardstick"]
    assert tr.best == buildable[0] and tr.runner_up == buildable[1]
    assert "isotropic yardstick" not in r.plan.antennas


def _line_pair(tmp_path, first: str, second: str):
    """The tests' Sedge Bank site with a pair of 7 m verticals whose elements take ``first`` and ``second`` (their
    delay keys), written to a file: (its path, the scenario, the pair's build sheet)."""
    from snrgain.decide.build import build_sheet
    from snrgain.scenario import load

    text = (SCENARIOS.parent / "tests" / "data" / "sites" / "sedge-bank-160.toml").read_text()
    text += (
        '\n[[candidate]]\nname = "line pair"\nfamily = "array"\nbearing = 45\nsteering = "given"\nelements = [\n'
        f'  {{ family = "vertical", height = "7 m", position = [100, 0], {first} }},\n'
        f'  {{ family = "vertical", height = "7 m", position = [111.6, 11.6], {second} }},\n]\n'
    )
    path = tmp_path / "site.toml"
    path.write_text(text)
    sc = load(path)
    return path, sc, build_sheet(next(a for a in sc.candidates if a.name == "line pair"), sc.freq_hz)


def test_a_delay_line_given_is_repeated_as_given(tmp_path):
    """An element given its own delay line (length and velocity factor) alone: the build sheet repeats that line, not
    the same delay restated as another cable."""
    line = 'delay_line = { length = "60 m", velocity_factor = 0.66 }'
    path, sc, sheet = _line_pair(tmp_path, 'delay = "0 ns"', line)
    assert sheet["given_lines"] == [None, {"length_m": pytest.approx(60.0), "velocity_factor": 0.66}]
    assert sheet["delays_ns"][1] == pytest.approx(60.0 / (0.66 * C_M_PER_S) * 1e9)
    res = CliRunner().invoke(cli, ["rank", str(path), "--build"])
    assert res.exit_code == 0, res.output
    out = " ".join(res.stdout.split())
    assert "60.00 m of your line (VF 0.66) (the others of RG-6, VF 0.83)" in out


def test_delay_lines_given_to_every_element_are_repeated(tmp_path):
    """Lines of 10 m and 70 m (VF 0.66) on both elements: both repeated as written, not shifted to start at 0 ns."""
    lines = [f'delay_line = {{ length = "{x} m", velocity_factor = 0.66 }}' for x in (10, 70)]
    _, _, sheet = _line_pair(tmp_path, *lines)
    assert [g["length_m"] for g in sheet["given_lines"]] == pytest.approx([10.0, 70.0])
    assert sheet["delays_ns"] == pytest.approx([x / (0.66 * C_M_PER_S) * 1e9 for x in (10.0, 70.0)])
