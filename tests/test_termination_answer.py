"""One termination answer: `wire`, the build sheet (rank --build, the report) and the antenna's own "auto" give the
same resistor, the one that maximises the figure it claims; and NEC-2 prefers the same resistors as the model."""

import json

import numpy as np
import pytest

from noisemodels.sphere import upper_hemisphere
from snrgain.antennas import from_spec
from snrgain.antennas.base import variant
from snrgain.decide.build import build_sheet, nearest_standard_ohm
from snrgain.model import snr
from snrgain.tools import wiredesign
from tests.conftest import HAVE_P372, P372_DIR, REPO

SCAN = json.loads((REPO / "tests" / "nec" / "termscan.json").read_text())
GRID = upper_hemisphere(32)
EL20 = np.radians(20.0)


def _beverage(case, termination="auto", auto_for="rdf"):
    return from_spec(
        {
            "family": "beverage",
            "length": f"{case['length_m']} m",
            "height": f"{case['height_m']} m",
            "diameter": f"{2 * case['radius_m']} m",
            "feed_ground": 0,
            "far_ground": 0,
            "termination": termination,
            "auto_for": auto_for,
            "ground": {"conductivity": f"{case['conductivity_s_per_m']} S/m", "permittivity": case["permittivity"]},
        }
    )


def _nec_at(case, key, r):
    """NEC's figure at resistor r, interpolated in log R over the scan."""
    rs = np.array([x["termination_ohm"] for x in case["runs"]])
    return float(np.interp(np.log(r), np.log(rs), [x[key] for x in case["runs"]]))


@pytest.mark.parametrize("case", SCAN["cases"], ids=[c["name"] for c in SCAN["cases"]])
def test_nec2_prefers_the_models_resistor(case):
    # Reference: de-embedded nec2c scans of the far resistor (tests/nec/make_termscan.py), 0.4-1 wavelength.  In NEC
    # as in the model the best RDF lies at 100-270 ohm, far under |Z0| (about 540 ohm): not a model fault.  Measured:
    # the model's RDF follows NEC's within 0.05-0.45 dB over 100-1000 ohm; NEC's RDF at the model's best resistor
    # is within 0.05 dB of NEC's best on the scan.  These decks take NEC's junction out by its resistance alone, so over
    # 1 mS/m NEC's far end keeps the junction's reactance (-162j ohm for the 2 m lead at 3.6 MHz): since the model's
    # down-leads are lines (longwire.lead_impedance_ohm) its RDF there reads 0.70 dB under these decks' at 100 ohm
    # (-0.70 to +0.17 dB over the scan; -0.36 to -0.06 with the leads neglected), and within 0.29 dB of the same decks
    # with the junction taken out as an impedance (make_deembedded.deembedded_run, run by hand: -0.21 to +0.29 dB),
    # checked to 0.71 dB there.
    f = case["freq_mhz"] * 1e6
    best = _beverage(case).termination_ohm(f)
    nec_rdf = [x["rdf_db"] for x in case["runs"]]
    assert _nec_at(case, "rdf_db", best) > max(nec_rdf) - 0.15
    assert best < 0.6 * abs(_beverage(case).line(f).z0)  # well under |Z0|, in NEC too:
    assert case["runs"][int(np.argmax(nec_rdf))]["termination_ohm"] < 0.6 * abs(_beverage(case).line(f).z0)
    for run in case["runs"]:
        ant = _beverage(case, run["termination_ohm"])
        g = ant.gain_linear(f, GRID.azimuth_rad, GRID.elevation_rad)
        fw = ant.gain_linear(f, np.array([0.0]), np.array([EL20]))[0]
        rdf = 10 * np.log10(fw / snr.hemisphere_mean_gain(g, GRID))  # NEC's scale (necdeck.metrics_toward)
        assert rdf == pytest.approx(run["rdf_db"], abs=0.71 if case["conductivity_s_per_m"] < 0.002 else 0.5)


def _rdf(ant, f, bearing):
    g = ant.gain_linear(f, GRID.azimuth_rad, GRID.elevation_rad)
    fw = ant.gain_linear(f, np.array([bearing]), np.array([EL20]))[0]
    return 10 * np.log10(fw / (np.sum(g * GRID.solid_angle_sr) / (4 * np.pi)))


def _fb(ant, f, bearing):
    return 10 * np.log10(
        ant.gain_linear(f, np.array([bearing]), np.array([EL20]))[0]
        / ant.gain_linear(f, np.array([bearing + np.pi]), np.array([EL20]))[0]
    )


def _scenario_antennas():
    from snrgain.errors import ScenarioError
    from snrgain.scenario import load, read_source, split_bands

    out = []
    for path in sorted([*REPO.glob("scenarios/*.toml"), *REPO.glob("tests/data/sites/*.toml")]):
        data, label, base = read_source(path)
        for band, one in split_bands(data, label):  # a file of several bands: each band's antennas
            try:
                sc = load(one, base_dir=base, label=label, p372_dir=P372_DIR if HAVE_P372 else None)
            except ScenarioError:
                if HAVE_P372:
                    raise
                continue  # asks for the P.372 data, which this machine lacks: its antennas are not collected
            tag = path.stem if band is None else f"{path.stem}-{band}"
            for ant in sc.candidates:
                if wiredesign.termination_answer(ant, sc.freq_hz) is not None:
                    out.append(pytest.param(ant, sc.freq_hz, id=f"{tag}-{ant.name}"))
    return out


ANTENNAS = _scenario_antennas()


@pytest.mark.parametrize("ant,f", ANTENNAS)
def test_one_resistor_everywhere_and_it_is_the_best(ant, f):
    answer = wiredesign.termination_answer(ant, f)
    sheet = build_sheet(ant, f)
    # The build sheet (rank --build and the report print it) carries the answer `wire` prints.
    assert sheet["termination_answer"]["termination_ohm"] == pytest.approx(answer.best_ohm)
    if not sheet["termination_given"]:
        assert sheet["termination_ohm"] == pytest.approx(answer.best_ohm)
    assert answer.standard_ohm == nearest_standard_ohm(answer.best_ohm)
    # On a sweep of the resistor (full-resolution sky grid, independent of the search's coarse one) the answer is
    # the best, or within 0.2 dB of the best, of the figure it claims.
    if answer.criterion == "z0":  # the trade's rule, asked for: |Z0| less the far ground, no figure claimed
        assert answer.best_ohm == pytest.approx(answer.matched_ohm)
        return
    bearing = getattr(ant, "bearing_rad", getattr(ant.params, "bearing", 0.0))
    figure = _rdf if answer.criterion == "rdf" else _fb
    sweep = [
        figure(variant(ant, termination=float(r)), f, bearing) for r in answer.best_ohm * np.geomspace(0.4, 2.5, 31)
    ]
    got = figure(variant(ant, termination=answer.best_ohm), f, bearing)
    assert got >= max(sweep) - 0.2
    from snrgain.antennas.longwire import RESISTOR_SWEEP_OHM

    # the flatness either side; an answer at the lowest (highest) resistor searched has nothing better inside
    # the range on that side, only beyond it
    if answer.best_ohm > RESISTOR_SWEEP_OHM[0] * 1.01:
        assert answer.loss_at_0p7_db >= -1e-6
    if answer.best_ohm < RESISTOR_SWEEP_OHM[-1] / 1.01:
        assert answer.loss_at_1p4_db >= -1e-6


@pytest.mark.parametrize(
    "spec",
    [
        {"family": "beverage", "length": "140 m", "height": "2.5 m"},
        {"family": "beverage", "length": "250 m", "height": "2 m", "ground": "sandy soil"},
        {"family": "bog", "length": "80 m"},
    ],
)
def test_wire_and_build_sheet_agree(spec):
    f = 1.83e6
    for crit in ("rdf", "front_to_back"):
        rep = wiredesign.wire_report({**spec, "auto_for": crit}, f)
        ant = from_spec({**spec, "auto_for": crit})
        sheet = build_sheet(ant, f)
        assert rep["termination_answers"][crit]["termination_ohm"] == pytest.approx(sheet["termination_ohm"])
        assert sheet["termination_answer"]["criterion"] == crit
    # The 140 m wire of issue 22: best RDF near 150 ohm (161 before the down-leads were modelled as lines), best
    # front-to-back near 210 ohm, |Z0| less 20 ohm 529 ohm, and the build sheet now says the same (it said 390-529 ohm).
    if spec["length"] == "140 m":
        assert rep["termination_answers"]["rdf"]["termination_ohm"] == pytest.approx(153, rel=0.05)
        assert rep["termination_answers"]["front_to_back"]["termination_ohm"] == pytest.approx(211, rel=0.05)
        assert rep["termination_answers"]["rdf"]["matched_ohm"] == pytest.approx(529, rel=0.02)
        assert rep["termination_answers"]["rdf"]["over_matched_db"] > 0.3


def test_the_trades_rule_stays_available():
    ant = from_spec({"family": "beverage", "length": "140 m", "height": "2.5 m", "auto_for": "z0"})
    assert ant.termination_ohm(1.83e6) == pytest.approx(ant.matched_termination_ohm(1.83e6))


def test_snr_termination_is_the_best_under_the_sky():
    # auto_for = "snr": the resistor of the ranking's statistic (nominal median SNR gain over the target's hours)
    # toward the target nearest the bearing, under the site's noise (pipeline.steer).  Checked against separate
    # runs of the whole pipeline with the resistor fixed at 0.5x, 0.7x, 1.4x and 2x.
    from snrgain.model import pipeline
    from snrgain.scenario import load

    text = (REPO / "scenarios" / "wren-corner.toml").read_text()
    anchor = 'position = ["60 m", "90 m"]\n'
    assert anchor in text

    def run(extra):
        sc = load(text.replace(anchor, anchor + extra, 1), base_dir=REPO / "scenarios")
        sc2, _, _, per = pipeline.nominal(sc)
        ant = next(a for a in sc2.candidates if a.name == "Beverage Europe")
        res = next(r for r in per if r.name == "Beverage Europe")
        return ant, res

    ant, res = run('auto_for = "snr"\n')
    assert ant.sky_termination is not None and ant.sky_termination["target"] == "Europe"
    best = ant.params.termination
    answer = res.build["termination_answer"]
    assert answer["criterion"] == "snr" and answer["termination_ohm"] == pytest.approx(best)
    assert res.build["termination_ohm"] == pytest.approx(best) and not res.build["termination_given"]
    ti = 0  # Europe
    got = res.snr_gain_nominal_db[ti]
    for factor in (0.5, 0.7, 1.4, 2.0):
        _, other = run(f"termination = {factor * best:.3f}\n")
        assert got >= other.snr_gain_nominal_db[ti] - 0.2
    # The answer's flatness figures are read off the same statistic.
    _, at_07 = run(f"termination = {0.7 * best:.3f}\n")
    assert got - at_07.snr_gain_nominal_db[ti] == pytest.approx(answer["loss_at_0p7_db"], abs=0.05)


def test_rank_build_and_the_report_print_the_answer():
    # One resistor in words: rank --build's build lines and the report's build sheet come from the same sheet, and
    # the wire command's answer for the same antenna and criterion is that resistor.
    import html

    import snrgain
    from snrgain.outputs.output import build_lines
    from snrgain.outputs.report import render

    r = snrgain.evaluate(REPO / "scenarios" / "marrow-fen.toml")
    lines = dict(build_lines(r))
    page = html.unescape(render(r))
    flag = r.antenna("flag toward north-west")
    ohm = flag.build["termination_answer"]["termination_ohm"]
    assert flag.build["termination_ohm"] == pytest.approx(ohm)
    assert f"termination {ohm:.0f} ohm" in lines[flag.name] and f"termination {ohm:.0f} ohm" in page
    # the matched resistor is said as what it is: a flag's is its loop's |Z0| (it has no far ground; it was said to
    # be "|Z0| less the far ground", a wire's)
    assert f"over the {flag.build['termination_answer']['matched_ohm']:.0f} ohm of the loop's |Z0|" in page
    assert "far ground" not in lines[flag.name]
    assert "gas discharge tube" in lines[flag.name]


@pytest.mark.skipif(not HAVE_P372, reason="needs the ITU-R P.372 coefficient files (SNRGAIN_P372_DIR)")
def test_a_resistor_that_trades_the_rear_null_for_little_snr_is_said():
    # Alder Hollow in summer: the Beverage toward Europe's resistor of best SNR gain beats |Z0| by under 1 dB while
    # its front-to-back toward the bearing at 20 deg lies more than 10 dB below |Z0|'s: a notice says so, its numbers
    # those of the wire itself at the two resistors (its pattern front and back, worked here afresh)
    import snrgain
    from snrgain.outputs.messages import notice_text
    from snrgain.scenario import load

    path = REPO / "scenarios" / "alder-hollow-summer.toml"
    r = snrgain.evaluate(load(path, p372_dir=P372_DIR))
    said = {n.antenna: n.values for n in r.notices if n.code == "termination-fragile"}
    v = said["Beverage toward Europe"]
    assert v["over_safer_db"] < 1.0 and v["front_to_back_safer_db"] - v["front_to_back_db"] >= 10.0
    sc = load(path, p372_dir=P372_DIR)
    wire = next(a for a in sc.candidates if a.name == "Beverage toward Europe")
    b = float(wire.params.bearing)
    # each as built, its nearest E12 value (a reviewer: a one-value knife-edge null was weighed)
    for ohm, key in ((v["standard_ohm"], "front_to_back_db"), (v["safer_standard_ohm"], "front_to_back_safer_db")):
        g = variant(wire, termination=ohm).gain_linear(sc.freq_hz, np.array([b, b + np.pi]), np.array([EL20, EL20]))
        assert 10 * np.log10(g[0] / g[1]) == pytest.approx(v[key], abs=0.05)
    text = notice_text(next(n for n in r.notices if n.code == "termination-fragile"))
    words = {
        "matched": "|Z0| less the far ground",
        "rdf": "the resistor of best RDF",
        "front_to_back": "the resistor of best front-to-back",
    }[v["safer"]]
    assert f"beats {words} ({v['safer_ohm']:.0f} ohm)" in text
    assert f"{v['safer_ohm']:.0f} ohm is the safer build" in text


SHORT_BEVERAGE_80 = """
[site]
name = "Teasel Row (invented)"
latitude = 42.4
longitude = -71.2
ground = "moist loam"

[band]
frequency = "3.55 MHz"
bandwidth = "2.4 kHz"

[time]
months = [1]
utc_hours = [0, 4]

[noise.man_made]
environment = "residential"

[noise.atmospheric]
model = "none"

[[noise.local]]
name = "television"
position = [5, 5]
height = "3 m"
polarisation = "both"
orientation = 90
level = "S8"

[[target]]
name = "Europe"
bearing = 45
elevation = [5, 25]

[reference]
name = "vertical"
family = "vertical"
height = "20 m"
ground_loss = "15 ohm"
position = [-10, 60]

[[candidate]]
name = "short Beverage"
family = "beverage"
length = "65 m"
height = "2 m"
bearing = 33
position = [-18, 12]
"""


def test_a_fragile_resistor_is_weighed_against_the_resistor_of_best_rdf_too(tmp_path):
    # A 65 m Beverage at 80 m beside a placed television: the resistor of best SNR gain, well above |Z0|, beats |Z0|
    # by a hair with little front-to-back given up (no warning against it), but the resistor of best RDF, far below
    # |Z0|, keeps a much deeper rear null for little less SNR gain: the warning names that one, its SNR gain read
    # off the resistors tried under the sky and checked here against the ranking run with each resistor written.
    import snrgain
    from snrgain.decide.decisions import trades_front_to_back
    from snrgain.outputs.messages import notice_text
    from snrgain.scenario import load

    path = tmp_path / "site.toml"
    path.write_text(SHORT_BEVERAGE_80)
    r = snrgain.evaluate(load(path))
    v = next(n.values for n in r.notices if n.code == "termination-fragile")
    wire = r.antenna("short Beverage")
    ans = wire.build["termination_answer"]
    # (the resistor of best front-to-back, weighed since, keeps a deeper null still: the warning names that one)
    assert v["safer"] in ("rdf", "front_to_back") and v["safer_ohm"] < 0.6 * ans["matched_ohm"] < ans["termination_ohm"]
    sc = load(path)
    cand = sc.candidates[0]
    assert v["safer_ohm"] == pytest.approx(wiredesign.termination_answer(cand, sc.freq_hz, v["safer"]).best_ohm)
    assert v["front_to_back_safer_db"] - v["front_to_back_db"] >= 5.0 and v["over_safer_db"] < 1.0

    def fb(ohm):
        b = float(cand.params.bearing)
        g = variant(cand, termination=ohm).gain_linear(sc.freq_hz, np.array([b, b + np.pi]), np.array([EL20, EL20]))
        return 10 * np.log10(g[0] / g[1])

    # against |Z0| alone it would not be said: the trade there is under the thresholds
    assert not trades_front_to_back(ans["over_matched_db"], fb(ans["matched_ohm"]) - fb(ans["termination_ohm"]))

    def median_with(ohm):
        text = SHORT_BEVERAGE_80.replace("bearing = 33\n", f'bearing = 33\ntermination = "{ohm:.3f} ohm"\n')
        p = tmp_path / f"site-{ohm:.0f}.toml"
        p.write_text(text)
        return float(snrgain.evaluate(load(p)).antenna("short Beverage").snr_gain_median_db[0])

    gained = median_with(ans["termination_ohm"]) - median_with(v["safer_ohm"])
    assert gained == pytest.approx(v["over_safer_db"], abs=0.15)
    text = notice_text(next(n for n in r.notices if n.code == "termination-fragile"))
    words = {"rdf": "RDF", "front_to_back": "front-to-back"}[v["safer"]]
    assert f"beats the resistor of best {words} ({v['safer_ohm']:.0f} ohm)" in text
    assert f'auto_for = "{v["safer"]}"' in text


@pytest.mark.parametrize(
    "over_db, given_up_db, said",
    [
        (0.09, 4.0, True),  # a tester's BOG: 998 ohm for 0.09 dB over 325 ohm, 4 dB of front-to-back given up
        (0.35, 4.5, True),  # their Beverage: 1129 ohm for 0.35 dB, 4.5 dB given up
        (0.5, 4.0, False),  # 4 dB for half a dB: under 10 dB per dB gained
        (0.09, 2.5, False),  # under the 3 dB floor
        (1.2, 15.0, False),  # over 1 dB gained: worth it as modelled
    ],
)
def test_a_fragile_resistor_weighs_what_it_gains(over_db, given_up_db, said):
    from snrgain.decide.decisions import trades_front_to_back

    assert trades_front_to_back(over_db, given_up_db) is said


@pytest.mark.parametrize(
    "spec,side,end",
    [
        ({"family": "beverage", "length": "1 m", "height": "2 m"}, "low", 30.0),
        ({"family": "beverage", "length": "200 m", "height": "2 m", "ground": "perfect"}, "high", 5000.0),
    ],
    ids=["1 m wire", "over perfect ground"],
)
def test_a_resistor_at_an_end_of_the_range_searched_is_said_to_be_that_end(spec, side, end):
    # A 1 m "Beverage" rates best the lower the resistor (it still gains below the 30 ohm searched); over perfect
    # ground a 200 m wire the higher (beyond 5000 ohm).  The search's end is what "auto" gives, and every printer
    # says it is that end of the range, not an optimum ("the resistor of best RDF" with a negative "lost" before).
    from snrgain.cli.wire import termination_lines

    f = 1.83e6
    answer = wiredesign.termination_answer(from_spec({**spec, "auto_for": "rdf"}), f)
    assert answer.best_ohm == pytest.approx(end) and answer.at_bound == side
    assert answer.search_ohm == pytest.approx((30.0, 5000.0))
    assert (answer.loss_at_0p7_db if side == "low" else answer.loss_at_1p4_db) < 0  # it does rise beyond
    assert (answer.loss_at_1p4_db if side == "low" else answer.loss_at_0p7_db) > 0  # and falls inside
    text = "\n".join(termination_lines(wiredesign.wire_report({**spec, "auto_for": "rdf"}, f)))
    assert "no optimum of RDF along the wire at 20 deg within the 30-5000 ohm searched" in text
    assert f"range's {'lower' if side == 'low' else 'upper'} end, {end:.0f} ohm" in text
    assert "the resistor of best RDF" not in text and "-0." not in text
    sheet = build_sheet(from_spec({**spec, "auto_for": "rdf"}), f)
    assert sheet["termination_answer"]["at_search_bound"] == side


def test_a_resistor_inside_the_range_is_an_optimum():
    from snrgain.cli.wire import termination_lines

    spec = {"family": "beverage", "length": "140 m", "height": "2.5 m", "auto_for": "rdf"}
    answer = wiredesign.termination_answer(from_spec(spec), 1.83e6)
    assert answer.at_bound is None and 30.0 < answer.best_ohm < 5000.0
    text = "\n".join(termination_lines(wiredesign.wire_report(spec, 1.83e6)))
    assert "the resistor of best RDF" in text and "no optimum" not in text


@pytest.mark.skipif(not HAVE_P372, reason="needs the ITU-R P.372 coefficient files (SNRGAIN_P372_DIR)")
def test_rank_build_says_a_resistor_under_the_sky_is_an_end_of_the_range():
    # The 90 m BOG at 40 m: its SNR gain toward Japan is highest at the lowest resistor tried (the search widened
    # out to 30 ohm, the range's lower end): the build lines (rank --build, the report) say so.
    from click.testing import CliRunner

    from snrgain.cli.main import cli

    site = REPO / "tests" / "data" / "sites" / "three-bands.toml"
    res = CliRunner().invoke(cli, ["rank", str(site), "--band", "40 m", "--build", "--p372-dir", str(P372_DIR)])
    assert res.exit_code == 0, res.output
    text = " ".join(res.stdout.split())
    assert "no optimum of SNR gain toward Japan within the 30-" in text
    assert "end, 30 ohm" in text and "so that end is given, not an optimum" in text


def test_a_resistor_is_not_tuned_toward_a_target_outside_the_wires_main_lobe(tmp_path):
    # A reviewer's reversible Beverage: its south-west state (225 deg) was given a near-short, 33 ohm, tuned for SNR
    # toward the nearest target, South America at 152 deg, 73 deg off the wire and in a side lobe.  Now a target
    # more than OFF_LOBE_DB under the peak of the wire's own azimuth pattern is not tuned toward: the wire keeps its
    # resistor of best RDF (the one `wire` gives for auto_for = "rdf"), and a warning says why; the same wire turned
    # toward that target is still tuned under the sky.
    import snrgain
    from snrgain.model.steering import OFF_LOBE_DB
    from snrgain.outputs.messages import notice_text
    from snrgain.scenario import load

    text = SHORT_BEVERAGE_80.replace('name = "Europe"\nbearing = 45', 'name = "South America"\nbearing = 152')
    text = text.replace('length = "65 m"', 'length = "240 m"').replace("bearing = 33", "bearing = 225")
    path = tmp_path / "site.toml"
    path.write_text(text)
    r = snrgain.evaluate(load(path))
    (n,) = [n for n in r.notices if n.code == "termination-off-target"]
    assert n.antenna == "short Beverage" and n.values["target"] == "South America"
    assert n.values["off_deg"] == pytest.approx(73.0) and n.values["below_db"] > OFF_LOBE_DB
    sc = load(path)
    rdf = wiredesign.termination_answer(sc.candidates[0], sc.freq_hz, "rdf").best_ohm
    assert r.antenna("short Beverage").build["termination_ohm"] == pytest.approx(rdf)
    said = "its nearest target, South America at 152 deg, 73 deg off its bearing 225 deg, lies "
    assert said in notice_text(n) and "dB under the peak of its pattern there" in notice_text(n)

    path.write_text(text.replace("bearing = 225", "bearing = 150"))
    r = snrgain.evaluate(load(path))
    assert not [n for n in r.notices if n.code == "termination-off-target"]
    assert r.antenna("short Beverage").build["termination_answer"]["criterion"] == "snr"


MW_BOG = """
[site]
name = "Sorrel Flats (invented)"
latitude = 41.2
longitude = -88.1
ground = "moist loam"

[band]
frequency = "0.6 MHz"
bandwidth = "5 kHz"

[time]
months = [1]
utc_hours = [2, 6]

[noise.man_made]
environment = "quiet rural"

[noise.atmospheric]
model = "none"

[[target]]
name = "transatlantic"
bearing = 46
elevation = [5, 20]

[reference]
name = "barn whip"
family = "vertical"
height = "8 m"
ground_loss = "40 ohm"
position = [0, 0]

[[candidate]]
name = "BOG"
family = "bog"
length = "300 m"
bearing = 45
height = "on soil"
position = [10, 10]

[[candidate]]
name = "Beverage"
family = "beverage"
length = "250 m"
height = "2.5 m"
bearing = 45
position = [-40, 10]
"""


def test_a_wire_far_past_the_length_rule_that_a_shorter_one_beats_is_said(tmp_path):
    # A reviewer's medium-wave BOG: 300 m on the soil at 0.6 MHz, where `wire` gives 147 m as its best length; a
    # sweep gave +9.0 dB at 150 m against +3.4 dB at 300 m, and rank said nothing.  Now a wire past 1.5 times the
    # maximum-effective-length rule (common practice) whose RDF a shorter one beats by 1.5 dB is said, its RDF and
    # the shorter one's worked again here; the Beverage in the air, well inside its rule, is not.
    import snrgain
    from noisemodels.sphere import upper_hemisphere
    from snrgain.outputs.messages import notice_text
    from snrgain.physics import lines
    from snrgain.physics.ground import C_M_PER_S
    from snrgain.scenario import load

    path = tmp_path / "site.toml"
    path.write_text(MW_BOG)
    r = snrgain.evaluate(load(path))
    (n,) = [n for n in r.notices if n.code == "wire-too-long"]
    v = n.values
    assert n.antenna == "BOG" and v["target"] == "transatlantic"
    sc = load(path)
    vf = v["velocity_factor"]
    assert 0.25 < vf < 0.45  # a wire on the soil: a third of the speed of light or so (common practice)
    t = sc.targets[0]
    rule = lines.max_effective_length_m(C_M_PER_S / 0.6e6, velocity_factor=vf, elevation_rad=t.mean_elevation_rad)
    assert v["rule_m"] == pytest.approx(rule) and v["length_m"] > 1.5 * rule
    assert v["best_length_m"] < 300.0 and v["best_rdf_db"] - v["rdf_db"] >= 1.5
    # each length with its own resistor of best RDF (a reviewer: the long wire's resistor, chosen for SNR, on the
    # shorter ones named a length that was not the best and understated its RDF), worked again here
    grid = upper_hemisphere(sc.nside)
    bog = sc.candidates[0]
    assert v["resistor"] == "rdf"
    for length, said in ((300.0, v["rdf_db"]), (v["best_length_m"], v["best_rdf_db"])):
        own = variant(bog, length=length, termination="auto", auto_for="rdf")
        assert wiredesign.rdf_db(own, sc.freq_hz, t, grid) == pytest.approx(said, abs=1e-6)
    assert "a shorter wire would do better" in notice_text(n) and "its own resistor of best RDF" in notice_text(n)
    # a resistor the user gave stays as given
    path.write_text(MW_BOG.replace('height = "on soil"', 'height = "on soil"\ntermination = "300 ohm"', 1))
    given = [n for n in snrgain.evaluate(load(path)).notices if n.code == "wire-too-long"]
    assert all(n.values["resistor"] == "given" for n in given)
    path.write_text(MW_BOG.replace('length = "300 m"', 'length = "60 m"'))
    assert not [n for n in snrgain.evaluate(load(path)).notices if n.code == "wire-too-long"]
    # a wire facing no target is not judged toward one it does not face (a shorter, less directional wire "wins"
    # there: a reviewer's BOG 80 deg off its target was told to shrink from 120 m to 36 m)
    path.write_text(MW_BOG.replace("bearing = 45\nheight", "bearing = 140\nheight"))
    r = snrgain.evaluate(load(path))
    assert [n for n in r.notices if n.code == "termination-off-target"]
    assert not [n for n in r.notices if n.code == "wire-too-long"]


def test_the_resistor_of_best_front_to_back_is_weighed_too(tmp_path):
    # A reviewer's 150 m Beverage on 160 m took 66 ohm for SNR gain, 1.5 dB over |Z0| (no warning against it) but only
    # 0.7 dB over the resistor of best front-to-back, which kept 18 dB of rear null against 9.  That one is weighed
    # now: here a placed source far off puts the SNR-best at 1252 ohm, and the warning names the resistor of best
    # front-to-back (the one `wire` and auto_for = "front_to_back" give), its front-to-back worked again here.
    import snrgain
    from snrgain.outputs.messages import notice_text
    from snrgain.scenario import load

    text = SHORT_BEVERAGE_80.replace('frequency = "3.55 MHz"', 'frequency = "1.83 MHz"')
    text = text.replace('length = "65 m"', 'length = "150 m"').replace('ground = "moist loam"', 'ground = "moist clay"')
    text = text.replace('height = "2 m"\nbearing = 33', 'height = "2.5 m"\nbearing = 33\nfar_ground = "rod"')
    path = tmp_path / "site.toml"
    path.write_text(text.replace("position = [5, 5]", "position = [200, 200]"))
    r = snrgain.evaluate(load(path))
    (n,) = [n for n in r.notices if n.code == "termination-fragile"]
    v = n.values
    sc = load(path)
    cand = sc.candidates[0]
    assert v["safer"] == "front_to_back"
    assert v["safer_ohm"] == pytest.approx(wiredesign.termination_answer(cand, sc.freq_hz, "front_to_back").best_ohm)
    b = float(cand.params.bearing)
    g = variant(cand, termination=v["safer_standard_ohm"]).gain_linear(
        sc.freq_hz, np.array([b, b + np.pi]), np.full(2, EL20)
    )
    assert 10 * np.log10(g[0] / g[1]) == pytest.approx(v["front_to_back_safer_db"], abs=0.05)
    assert v["over_safer_db"] < 1.0 and v["front_to_back_safer_db"] - v["front_to_back_db"] >= 10.0
    assert 'the safer build (auto_for = "front_to_back")' in notice_text(n)


@pytest.mark.parametrize("name", ["alder-hollow.toml", "alder-hollow-summer.toml", "marrow-fen.toml"])
def test_a_resistor_that_keeps_its_own_null_as_built_is_not_called_fragile(name):
    # A reviewer: 653 ohm (E12 680) kept 28-32 dB of front-to-back and was still warned against, for a 45 dB null
    # at exactly 608 ohm whose E12 value, 560 ohm, does no better.  Now each resistor is weighed as built (its E12
    # value), and one that keeps FRAGILE_QUIET_FRONT_TO_BACK_DB as built is not warned against.
    import snrgain
    from snrgain.decide.decisions import FRAGILE_QUIET_FRONT_TO_BACK_DB
    from snrgain.scenario import load

    if "summer" in name and not HAVE_P372:
        pytest.skip("needs the ITU-R P.372 coefficient files (SNRGAIN_P372_DIR)")
    r = snrgain.evaluate(load(REPO / "scenarios" / name, p372_dir=P372_DIR if HAVE_P372 else None))
    for n in r.notices:
        if n.code == "termination-fragile":
            v = n.values
            assert v["front_to_back_db"] < FRAGILE_QUIET_FRONT_TO_BACK_DB
            assert v["standard_ohm"] != v["safer_standard_ohm"]
