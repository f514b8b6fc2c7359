"""A candidate that cannot be built where the file places it (off the lot, in a keep-out area, within a given
tx_clearance) is ranked but left out of the station plan, with a note where it is a target's best
(snrgain.decide.lot.unfit, snrgain.decide.plan.station_plan's ``unfit``)."""

import json

import numpy as np
import pytest
from click.testing import CliRunner

import snrgain
from snrgain.cli.main import cli
from snrgain.decide.plan import station_plan
from snrgain.model.pipeline import evaluate_bands
from tests.scenario_text import scenario_text

CANDIDATES = """
[[candidate]]
name = "Beverage east"
family = "beverage"
position = [10, 60]
length = "240 m"
height = "2.5 m"
bearing = 90
termination = "500 ohm"

[[candidate]]
name = "flag east"
family = "terminated-loop"
position = [40, 100]
width = "8 m"
loop_height = "4 m"
height = "1.5 m"
bearing = 90
termination = "900 ohm"
"""
TWO_BANDS = {"160 m": ("1.83 MHz", ""), "80 m": ("3.55 MHz", "")}


def _site(lot_east: float, bands=None) -> str:
    return scenario_text(
        name="Thistle Row",
        site_extra=f"lot = [[-20, -20], [{lot_east}, -20], [{lot_east}, 120], [-20, 120]]\n",
        bands=bands,
        targets=(("Europe", 90, 5, 20),),
        candidates=CANDIDATES,
    )


def test_a_beverage_that_runs_off_the_lot_is_ranked_but_not_built():
    r = snrgain.evaluate(_site(120))
    assert r.target_results[0].best == "Beverage east"  # ranked first toward Europe
    assert "Beverage east" not in r.plan.antennas and r.plan.antennas == ["flag east"]
    why = r.plan.not_best[0]
    assert why["reason"] == "unfit" and why["best"] == "Beverage east" and why["served_by"] == "flag east"
    assert why["where"]["code"] == "off-lot" and why["where"]["values"]["outside_m"] == pytest.approx(130, abs=1)
    assert list(r.plan.unfit) == ["Beverage east"]
    fits = snrgain.evaluate(_site(300))  # the same wire on a lot it fits: built
    assert fits.plan.antennas[0] == "Beverage east" and not fits.plan.unfit


def test_the_table_and_the_json_say_why(tmp_path):
    path = tmp_path / "site.toml"
    path.write_text(_site(120))
    res = CliRunner().invoke(cli, ["rank", str(path)])
    assert res.exit_code == 0, res.output
    flat = " ".join(res.stdout.split())
    assert (
        "Note: Europe: the best, Beverage east" in flat
        and "is not in the plan because it cannot be built where the file places it (it runs off the lot, up to "
        "130 m beyond its edge); flag east serves it"
        in flat
        and "snrgain layout looks for a place that fits" in flat
    )
    out = tmp_path / "r.json"
    assert CliRunner().invoke(cli, ["rank", str(path), "--format", "json", "-o", str(out)]).exit_code == 0
    plan = json.loads(out.read_text())["plan"]
    assert plan["unfit"][0]["antenna"] == "Beverage east" and plan["unfit"][0]["code"] == "off-lot"
    assert plan["not_best"][0]["reason"] == "unfit"


def test_the_plan_across_bands_leaves_it_out_too():
    br = evaluate_bands(_site(120, TWO_BANDS))
    assert "Beverage east" not in br.plan.antennas
    assert {br.plan.not_best[c]["reason"] for c in br.plan.not_best} == {"unfit"}
    assert "Beverage east" in br.plan.unfit


def test_a_phasing_unit_over_an_unfit_part_is_left_out_with_it():
    g = np.array([[0.0], [3.0], [2.0], [9.0]])  # 'unit' (3) over 'a' (1) and 'b' (2)
    off = {1: {"code": "in-keep-out", "values": {"area": "house"}}}
    p = station_plan(["ref", "a", "b", "unit"], g, np.array([1.0]), parts=[(), (), (), (1, 2)], unfit=off)
    assert p.antennas == ["b"]
    assert p.unfit["unit"] == {"code": "part-unfit", "values": {"part": "a", **off[1]}}
    assert p.not_best[0]["reason"] == "unfit" and p.not_best[0]["best"] == "unit"
    from snrgain.outputs.messages import plan_not_best_text

    assert "its part a enters the keep-out area 'house'" in plan_not_best_text("Europe", p.not_best[0])


def test_a_plan_of_nothing_but_an_unfit_best_still_says_why(tmp_path):
    from snrgain.outputs.output import plan_text
    from snrgain.outputs.report import render

    only = CANDIDATES[: CANDIDATES.index('[[candidate]]\nname = "flag east"')]
    r = snrgain.evaluate(_site(120).replace(CANDIDATES, only))
    assert r.plan.antennas == [] and r.plan.not_best[0]["reason"] == "unfit"
    text = " ".join(str(plan_text(r)).split())
    assert "no candidate adds 0.1 dB or more; keep TX vertical." in text and "runs off the lot" in text
    html = render(r, draw=lambda jobs, **kw: [b"<svg></svg>" for _ in jobs])
    assert "cannot be built where the file places it" in html
