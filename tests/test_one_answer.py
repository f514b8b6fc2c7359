"""One pipeline, one answer: every command reaches the same numbers through the same stages.

These are invariants of the design (DESIGN.md, "Shape"), checked on every demo and on two sites of the
project's own (tests/data/sites: a 160 m and an 80 m station with an SNR-steered array, a placed source and a
phasing unit): nothing mutates an antenna; a sweep's no-op design equals rank's nominal figure; the plan serves
each target with its best antenna or says why; a phasing unit is never below its better part; and only the
pipeline composes the stages.
"""

import ast
import tomllib

import numpy as np
import pytest

import snrgain
from snrgain.model import pipeline
from snrgain.scenario import load, read_source
from snrgain.tools import sweep as sw
from tests.conftest import P372_DIR, REPO, SCENARIOS

SITES = sorted(
    p for p in (REPO / "tests" / "data" / "sites").glob("*.toml") if "[[band]]" not in p.read_text()
)  # a file of several bands is checked band by band (test_sweep_equals_rank_on_each_band)
DEMOS = sorted(SCENARIOS.glob("*.toml"))


@pytest.fixture(autouse=True)
def _p372(monkeypatch):
    if P372_DIR.is_dir():
        monkeypatch.setenv("SNRGAIN_P372_DIR", str(P372_DIR))


def _needs_data(path):
    if "p372" in path.read_text() and not P372_DIR.is_dir():
        pytest.skip("needs the ITU-R P.372 data (../shared/data/p372)")


@pytest.mark.parametrize("path", [SCENARIOS / "marrow-fen.toml", *SITES], ids=lambda p: p.stem)
def test_evaluate_changes_no_antenna(path):
    sc = load(path)
    az, el = np.arange(0.0, 360.0, 5.0), np.full(72, 15.0)
    before = [a.gain_dbi(sc.freq_hz, az, el) for a in sc.antennas]
    described = [a.describe() for a in sc.antennas]
    pipeline.evaluate(sc)
    for a, g, d in zip(sc.antennas, before, described):
        assert np.array_equal(a.gain_dbi(sc.freq_hz, az, el), g), a.name
        assert a.describe() == d, a.name


def test_steering_under_the_sky_returns_new_antennas():
    # The marrow-fen four-square steered for the site's noise: the steered copy points its lobe west, the
    # scenario's own antenna keeps its RDF steering.
    sc = pipeline.resolve_sources(load(SCENARIOS / "marrow-fen.toml"))
    grid = pipeline.sky_grid(sc)
    steered = pipeline.steer(sc, grid, pipeline.build_sky(sc, grid))
    k = [a.name for a in sc.antennas].index("four-square west")
    assert steered.antennas[k] is not sc.antennas[k]
    assert "under the site's noise" in steered.antennas[k].describe()["steered_for"]
    assert "under the site's noise" not in sc.antennas[k].describe().get("steered_for", "")


def _sweep_rows(path, vary):
    data, label, base = read_source(path)
    study = sw.Study(data, label, str(base), [sw.parse_vary(vary)])
    sw.validate(study)
    return sw.run_designs(study, [(0, (study.varies[0].values[0],))])


@pytest.mark.parametrize("path", [*DEMOS, *SITES], ids=lambda p: p.stem)
def test_sweep_equals_rank_for_every_candidate(path):
    _needs_data(path)
    r = snrgain.evaluate(path)
    targets = [t["name"] for t in r.targets]
    rank = {(a.name, t): a.snr_gain_nominal_db[i] for a in r.candidates for i, t in enumerate(targets)}
    # A no-op vary of a section: every design is a whole run through the stages.
    rows = _sweep_rows(path, f"site: name = {r.site['name']}")
    assert {(row["antenna"], row["target"]) for row in rows} == set(rank)
    for row in rows:
        assert row["snr_gain_db"] == pytest.approx(rank[row["antenna"], row["target"]], abs=0.01), row
    # A no-op vary of each candidate itself: the shared sky, the candidate alone through the same stages.
    data, _, _ = read_source(path)
    for table in [c["name"] for c in data["candidate"]]:
        # A no-op value: the table's own name (a name with a comma cannot be written in a list; its bearing then).
        same = f"name = {table}" if "," not in table else f"bearing = {data_value(data, table, 'bearing')}"
        rows = _sweep_rows(path, f"{table}: {same}")
        assert rows and all(row["antenna"].startswith(table) for row in rows)  # a two-wire's ports carry its name
        for row in rows:
            assert row["snr_gain_db"] == pytest.approx(rank[row["antenna"], row["target"]], abs=0.01), (table, row)


def data_value(data, table, key):
    """The value a candidate table gives ``key`` as the sweep syntax writes it (a no-op vary), or its default 0."""
    v = next(c for c in data["candidate"] if c["name"] == table).get(key, 0)
    return v[0] if isinstance(v, list) else v


@pytest.mark.parametrize("path", [*DEMOS, *SITES], ids=lambda p: p.stem)
def test_plan_serves_each_target_with_its_best_or_says_why(path):
    _needs_data(path)
    r = snrgain.evaluate(path)
    for i, tr in enumerate(r.target_results):
        (service,) = r.plan.by_target[i]
        if service.antenna != tr.best:
            why = r.plan.not_best[i]
            assert why["best"] == tr.best and why["served_by"] == service.antenna
    # The same with a limit that binds: the plan names what it leaves out.
    text = path.read_text() + "\n[plan]\nmax_antennas = 1\n"
    one = snrgain.evaluate(load(tomllib.loads(text), base_dir=path.parent, p372_dir=P372_DIR))
    for i, tr in enumerate(one.target_results):
        (service,) = one.plan.by_target[i]
        assert service.antenna == tr.best or one.plan.not_best[i]["best"] == tr.best


@pytest.mark.parametrize("path", [p for p in [*DEMOS, *SITES] if "combination" in p.read_text()], ids=lambda p: p.stem)
def test_phasing_unit_never_below_its_better_part(path):
    _needs_data(path)
    sc = load(path)
    r = snrgain.evaluate(sc)
    for ant, res in zip(sc.candidates, r.candidates):
        if not ant.composite:
            continue
        ti = pipeline.nearest_target(sc, ant.params.bearing)
        parts = [r.reference if e is sc.reference else r.antenna(e.name) for e in ant.elements]
        better = max(0.0 if p is r.reference else p.snr_gain_nominal_db[ti] for p in parts)
        assert res.snr_gain_nominal_db[ti] >= better - 1e-6, (res.name, res.snr_gain_nominal_db[ti], better)


def test_a_unit_passing_one_antenna_hears_exactly_that_antenna():
    # Fen Reach's Beverage + loop passing the Beverage alone (what a unit does with the loop's input off) hears the
    # placed street light and the sky exactly as the Beverage does (its pickup is the Beverage's, summed along the
    # wire): the same temperatures and gains, so the same SNR gains.
    from snrgain.model import pipeline
    from snrgain.model.products import products, snr_gains
    from snrgain.model.scatter import with_structures
    from snrgain.model.steering import with_candidates
    from snrgain.scenario import load

    sc = with_structures(pipeline.resolve_sources(load(REPO / "tests" / "data" / "sites" / "fen-reach-80.toml")))
    grid = pipeline.sky_grid(sc)
    skies = pipeline.build_sky(sc, grid)
    names = [a.name for a in sc.antennas]
    unit, bev = sc.antennas[names.index("Beverage + loop")], sc.antennas[names.index("Beverage north-east")]
    assert unit.elements[0] is bev
    alone = unit.alone(sc.freq_hz, 0, "the Beverage alone")
    both = with_candidates(sc, [bev, alone], names.index("Beverage north-east"))  # on the Beverage's chain
    p = products(both, both.antennas, grid, skies)
    np.testing.assert_allclose(p.temps.by_component[:, 2], p.temps.by_component[:, 1], rtol=1e-9)
    np.testing.assert_allclose(p.gains.toward[2], p.gains.toward[1], rtol=1e-9)
    gains = snr_gains(both, p)
    np.testing.assert_allclose(gains[2], gains[1], atol=1e-9)


# -- only the pipeline composes the stages ----------------------------------------------------------------------

STAGE_PIECES = {
    "antenna_gains": "snrgain/model/snr.py",
    "sky_temperatures": "snrgain/model/snr.py",
    "snr_gain_over_reference": "snrgain/model/snr.py",
    "pickup": "snrgain/model/placed.py",
    "received_power": "snrgain/model/placed.py",
    "build_skies": "snrgain/sky/noise.py",
    "snr_spread": "snrgain/model/spread.py",
    "station_plan": "snrgain/decide/plan.py",
}
"""The pieces the stages are made of (name -> home module): only the pipeline (and the spread's map over
variants) puts them together; commands call the stages (snrgain.model.pipeline)."""
COMPOSERS = {
    "snrgain/model/pipeline.py",
    "snrgain/model/products.py",
    "snrgain/model/steering.py",
    "snrgain/model/spread.py",
    "snrgain/decide/decisions.py",
    "snrgain/decide/source_place.py",
    "snrgain/decide/bandplan.py",
    "snrgain/sky/noiseday.py",
    "snrgain/tools/locatenear.py",
}
"""The stage modules the pipeline is made of (bandplan: the plan across the bands of evaluate_bands; source_place:
the decide stage's notice on a placed source's place, the products' pickup of it moved); noiseday builds the sky
alone for `snrgain noise` (no antennas); locatenear is locate's fit of a placed source, each reading antenna's
pickup of it read through the products' own function (so the fit and rank hear a source alike), no stage composed."""


def test_only_the_pipeline_composes_the_stages():
    sites = []
    for path in sorted((REPO / "snrgain").rglob("*.py")):
        rel = path.relative_to(REPO).as_posix()
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Call):
                f = node.func
                name = f.attr if isinstance(f, ast.Attribute) else getattr(f, "id", None)
                if name in STAGE_PIECES and rel not in COMPOSERS and rel != STAGE_PIECES[name]:
                    sites.append(f"{rel}:{node.lineno} {name}")
    assert not sites, "stages composed by hand outside the pipeline:\n" + "\n".join(sites)


def test_the_spread_on_histograms_equals_the_exact_one(monkeypatch):
    # Large spreads are ranked on 0.001 dB histograms shifted per target (snrgain.model.spread.Histogram); the same
    # scenario ranked exactly (sorting every weighted sample) must agree to 0.01 dB (bins of 0.001 dB: merged
    # samples move the interpolation a little).
    from snrgain.model import spread

    path = REPO / "tests" / "data" / "sites" / "sedge-bank-160.toml"
    exact = snrgain.evaluate(path)
    monkeypatch.setattr(spread, "EXACT_VALUES", 0)
    binned = snrgain.evaluate(path)
    for a, b in zip(exact.antennas, binned.antennas):
        for key in ("snr_gain_median_db", "snr_gain_p10_db", "snr_gain_p90_db"):
            assert np.allclose(getattr(a, key), getattr(b, key), atol=0.01), (a.name, key)
        assert np.allclose(a.probability_beats, b.probability_beats, atol=0.002, equal_nan=True), a.name


def test_products_from_known_products_equal_products_worked_afresh():
    # products(known=) takes gains, placed-source powers and temperatures from earlier products (a sweep's
    # reference, a layout's design at another place); every number must equal the same stage worked from scratch.
    path = REPO / "scenarios" / "wren-corner.toml"
    sc = pipeline.resolve_sources(load(path))
    grid = pipeline.sky_grid(sc)
    skies = pipeline.build_sky(sc, grid)
    base = pipeline.products(sc, sc.antennas, grid, skies)
    bev = sc.candidates[0]
    moved = [sc.reference, bev.at((10.0, 150.0)), bev.at((120.0, 30.0)), sc.candidates[2]]
    fresh = pipeline.products(sc, moved, grid, skies)
    reused = pipeline.products(sc, moved, grid, skies, known=base)
    assert np.allclose(reused.gains.toward, fresh.gains.toward, rtol=1e-12)
    assert np.allclose(reused.temps.by_component, fresh.temps.by_component, rtol=1e-9)
    for name in fresh.powers:
        assert np.allclose(reused.powers[name], fresh.powers[name], rtol=1e-12)
    # The placed supply is heard differently at the two new places (the reuse did not copy the old place's).
    row = skies.names.index("neighbour's supply")
    assert not np.isclose(fresh.temps.by_component[row, 1, 0, 0], fresh.temps.by_component[row, 2, 0, 0])


def test_sweep_with_another_reference_equals_rank_with_it():
    # --reference on sweep loads the scenario as rank --reference does: a no-op vary of a section (full runs) and
    # of a candidate (the shared path) give rank's figures against the same reference to 0.01 dB.
    path = SITES[0]
    _needs_data(path)
    data, label, base = read_source(path)
    other = next(c["name"] for c in data["candidate"] if c.get("family") == "beverage")
    r = snrgain.evaluate(load(path, reference=other))
    rank = {(a.name, t["name"]): a.snr_gain_nominal_db[i] for a in r.candidates for i, t in enumerate(r.targets)}
    last = data["candidate"][-1]["name"]
    for vary in (f"site: name = {r.site['name']}", f"{last}: name = {last}"):
        study = sw.Study(data, label, str(base), [sw.parse_vary(vary)], reference=other)
        sw.validate(study)
        rows = sw.run_designs(study, [(0, (study.varies[0].values[0],))])
        assert rows and all(row["antenna"] != other for row in rows)
        for row in rows:
            assert row["snr_gain_db"] == pytest.approx(rank[row["antenna"], row["target"]], abs=0.01), (vary, row)


def test_sweep_equals_rank_on_each_band():
    # A file of several bands: sweep --band NAME and rank's figures for that band (evaluate_bands) agree to
    # 0.01 dB on the full path and the shared one.
    path = REPO / "tests" / "data" / "sites" / "three-bands.toml"
    bands = pipeline.evaluate_bands(path)
    data, label, base = read_source(path)
    for name, r in bands.bands:
        rank = {(a.name, t["name"]): a.snr_gain_nominal_db[i] for a in r.candidates for i, t in enumerate(r.targets)}
        for vary in (f"site: name = {r.site['name']}", "BOG Japan: name = BOG Japan"):
            study = sw.Study(data, label, str(base), [sw.parse_vary(vary)], band=name)
            sw.validate(study)
            rows = sw.run_designs(study, [(0, (study.varies[0].values[0],))])
            assert rows
            for row in rows:
                assert row["snr_gain_db"] == pytest.approx(rank[row["antenna"], row["target"]], abs=0.01), (name, row)


def test_a_tie_in_the_last_digit_is_ranked_as_the_plan_takes_it():
    # Two antennas whose medians differ by rounding alone (a combination whose second part adds nothing, 2e-15 dB
    # above its first part): the ranking keeps the scenario's order, as the plan serves a tie with the earlier
    # antenna, so the two never name different best antennas (a case met on tests/data/sites/fen-reach-80.toml).
    from types import SimpleNamespace

    from snrgain.decide.plan import station_plan
    from snrgain.model.results import rank_for_target

    def cand(name, db):
        return SimpleNamespace(name=name, snr_gain_median_db=[db], group=None)

    ref = cand("ref", 0.0)
    alone, combined = cand("wire", 12.404011360048347), cand("wire + loop", 12.404011360048349)
    tr = rank_for_target([alone, combined, cand("loop", 5.1)], 0, "Japan", ref)
    assert tr.best == "wire" and tr.ranking[:2] == ["wire", "wire + loop"] and tr.margin_db < 1e-12
    plan = station_plan(
        ["ref", "wire", "wire + loop", "loop"], [[0.0], [12.404011360048347], [12.404011360048349], [5.1]], [1.0]
    )
    assert plan.by_target[0][0].antenna == tr.best and not plan.not_best
    # a real difference still ranks first
    assert rank_for_target([alone, cand("better", 12.5)], 0, "Japan", ref).best == "better"


def test_a_unit_over_a_wire_whose_resistor_is_set_under_the_sky():
    # tests/data/combo-auto-terminated.toml: the Beverage's resistor is chosen under the sky (the default) before the
    # phasing unit over it is set; the steering stage once looked for the unit's parts among the antennas as loaded
    # and failed.  The unit stands over the wire as set (the very antenna the wire's own row is), and it is never
    # worse than its better part toward its target.
    import snrgain
    from snrgain.model import pipeline
    from tests.conftest import REPO

    path = REPO / "tests" / "data" / "combo-auto-terminated.toml"
    r = snrgain.evaluate(path)
    by = {a.name: a for a in r.candidates}
    combo, wire, loop = by["combo"], by["A"], by["B"]
    assert combo.snr_gain_median_db[0] >= max(wire.snr_gain_median_db[0], loop.snr_gain_median_db[0]) - 1e-9
    set_ = pipeline.nominal(load(path))[0]
    names = [a.name for a in set_.antennas]
    unit, a = set_.antennas[names.index("combo")], set_.antennas[names.index("A")]
    assert getattr(a, "sky_termination", None) is not None  # the wire's resistor was chosen under the sky
    assert any(e is a for e in unit.elements)


def test_why_the_plan_passes_a_targets_best_is_said_on_the_plans_own_scale():
    # A reviewer's contest site: "Europe: the best (+1.0 dB) is not in the plan because building it adds less than
    # 0.1 dB" read as a verdict on the antenna, while it was the plan's power-ratio worth; and a target served by an
    # antenna as good as its best to the printed 0.1 dB got the same note, "outweigh its 0.0 dB"; and "larger gains
    # toward other targets" was said where the other target's gain was not larger.  The note now says what building
    # it would add to the plan and the target's weight in it, and a gain equal to the best's as printed is said as
    # that.
    from snrgain.outputs.messages import plan_not_best_text

    little = {"best": "bev", "best_db": 1.04, "served_by": "tx", "served_db": 0.0, "reason": "adds_little"}
    little |= {"adds_db": 0.03, "weight": 0.5}
    text = plan_not_best_text("Europe", little)
    said = "adds less than 0.1 dB to the plan as a whole (0.03 dB; Europe weighs 50 % of it, the targets taken as "
    assert said + "power ratios)" in text
    assert text.endswith("Build it too if Europe counts on its own.")
    tie = {**little, "best_db": 3.52, "served_db": 3.50}
    assert plan_not_best_text("Europe", tie) == (
        "Europe: tx serves it (+3.5 dB), within 0.05 dB of the best, bev, which the plan does not build for it."
    )
    full = {**little, "reason": "max_antennas"}
    assert "([plan] max_antennas); tx serves it (+0.0 dB)." in plan_not_best_text("Europe", full)


def test_what_an_unbuilt_best_would_add_is_the_plans_own_number():
    # The note's figure is the plan's own: building the best too raises the worth by exactly adds_db (0.04 dB for a
    # 0.2 dB edge on a target of weight 1/2, the other target at 3.5 dB, where "larger gains toward other targets"
    # was said of a gain that was not larger).
    import numpy as np

    from snrgain.decide.plan import station_plan, worth

    g = np.array([[0.0, 0.0], [3.5, 3.5], [3.68, 0.0]])
    w = np.array([0.5, 0.5])
    p = station_plan(["ref", "loop", "bev"], g, w)
    why = p.not_best[0]
    assert why["reason"] == "adds_little" and why["weight"] == 0.5
    assert why["adds_db"] == pytest.approx(worth(g, w, [1, 2]) - worth(g, w, [1]))
    assert 0 < why["adds_db"] < 0.1
