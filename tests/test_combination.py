"""A combination of two antennas of the scenario through a phase and amplitude unit."""

import numpy as np
import pytest
from click.testing import CliRunner

import snrgain
from snrgain.cli.main import cli
from snrgain.errors import ScenarioError
from tests.conftest import MINIMAL

SENSE = '[[candidate]]\nname = "sense"\nfamily = "vertical"\nheight = "6 m"\nposition = ["30 m", "10 m"]\n\n'


def _scenario(extra: str) -> str:
    local = (
        '[[noise.local]]\nname = "street light"\nbearing = 200\nelevation = 5\nspread = 5\nfa = 95\n\n'
        "[uncertainty]\nground = false\nnoise_deciles = false\nlocal_sources = false\n\n"
    )
    text = MINIMAL.replace("[[target]]", local + "[[target]]", 1)
    return text.replace('[[candidate]]\nname = "iso"\nfamily = "isotropic"\n', SENSE + extra)


def _combo(name, setting=None):
    s = f'[[candidate]]\nname = "{name}"\nfamily = "combination"\nantennas = ["reference", "sense"]\nbearing = 45\n'
    if setting is not None:
        s += f'setting = {{ phase = {setting[0]}, amplitude = "{setting[1]} dB", phase_sense = "lag" }}\n'
    return s + "\n"


def test_auto_setting_is_the_best_and_its_error_cost_is_reported():
    # The maximum-SNR setting (two antennas: one complex ratio, so the free optimum; Van Trees, Optimum Array
    # Processing, Section 6.2) against each antenna alone and against given settings around it; its reported
    # loss under +-10 deg, +-1 dB errors against the same settings given by hand.
    r = snrgain.evaluate(_scenario(_combo("auto")))
    got = {c.name: float(c.snr_gain_nominal_db[0]) for c in r.candidates}
    assert got["auto"] > got["sense"] + 10 and got["auto"] > 10  # the local source nulled (measured: +24.6 dB)
    st = next(c for c in r.candidates if c.name == "auto").parameters["setting"]
    phase, amp = st["phase_lag_deg"], st["amplitude_db"]
    grid = [(phase + d, amp + a) for d in range(-180, 180, 10) for a in (-3.0, 0.0, 3.0)]
    errors = [(phase + d, amp + a) for d in (-10, 0, 10) for a in (-1.0, 0.0, 1.0) if (d, a) != (0, 0.0)]
    named = {f"g{i}": s for i, s in enumerate(grid)} | {f"e{i}": s for i, s in enumerate(errors)}
    given = {}
    items = list(named.items())
    for chunk in (items[:60], items[60:]):  # a scenario holds at most 64 candidates
        text = _scenario("".join(_combo(k, s) for k, s in chunk))
        given.update({c.name: float(c.snr_gain_nominal_db[0]) for c in snrgain.evaluate(text).candidates})
    assert len(given) == len(named) + 1
    best_given = max(v for k, v in given.items() if k != "sense")
    assert got["auto"] >= best_given - 0.01
    worst_err = min(given[f"e{i}"] for i in range(len(errors)))
    assert got["auto"] - worst_err == pytest.approx(st["loss_with_error_db"], abs=0.05)
    assert st["loss_with_error_db"] > 1.0  # a deep null is sharp


def test_combination_build_sheet_and_names():
    r = snrgain.evaluate(_scenario(_combo("auto")))
    b = next(c for c in r.candidates if c.name == "auto").build
    assert b["antennas"] == ["vertical", "sense"] and np.isfinite(b["setting"]["amplitude_db"])


@pytest.mark.parametrize(
    "antennas, message",
    [
        ('["reference", "nowhere"]', "no antenna named 'nowhere'"),
        ('["sense", "sense"]', "two different antennas"),
        ('["reference", "pair"]', "cannot combine a combination"),
    ],
)
def test_combination_bad_input(antennas, message, tmp_path):
    extra = (
        f'[[candidate]]\nname = "pair"\nfamily = "combination"\nantennas = {antennas}\n\n'
        if "pair" not in antennas
        else '[[candidate]]\nname = "pair"\nfamily = "combination"\nantennas = ["reference", "sense"]\n\n'
        f'[[candidate]]\nname = "pair2"\nfamily = "combination"\nantennas = {antennas}\n\n'
    )
    text = _scenario(extra)
    with pytest.raises(ScenarioError, match=message):
        snrgain.evaluate(text)
    p = tmp_path / "s.toml"
    p.write_text(text)
    res = CliRunner().invoke(cli, ["rank", str(p)])
    assert res.exit_code == 2 and message.split("'")[0] in res.stderr and "Traceback" not in res.output


def test_the_plan_says_what_else_to_build(tmp_path):
    from snrgain.outputs.output import also_build

    r = snrgain.evaluate(_scenario(_combo("auto")))
    assert r.plan.antennas[0] == "auto"
    assert also_build([r], r.plan, 0) == " (build sense for it)"
    p = tmp_path / "s.toml"
    p.write_text(_scenario(_combo("auto")))
    res = CliRunner().invoke(cli, ["rank", str(p)])
    assert "1. auto: adds" in res.stdout and "(build sense for it)" in res.stdout


def test_a_missing_part_is_named_against_every_other_antenna():
    """The list of names a combination may take holds every antenna written, those with problems of their own too,
    and not the combination itself (it listed the unit and left out a whip whose table had an unknown key)."""
    extra = '[[candidate]]\nname = "whip"\nfamily = "vertical"\nheight = "6 m"\ncolour = "red"\n\n'
    extra += '[[candidate]]\nname = "nulling"\nfamily = "combination"\nantennas = ["reference", "nowhere"]\n\n'
    with pytest.raises(ScenarioError) as err:
        snrgain.evaluate(_scenario(extra))
    said = next(m for m in str(err.value).splitlines() if "no antenna named 'nowhere'" in m)
    assert "'whip'" in said and "'sense'" in said and "'nulling'" not in said


def test_a_part_without_a_position_stands_at_the_references_place():
    """Where the placed sources' pickup hears it (snrgain.model.placed.antenna_point), not at the plan's origin."""
    from snrgain.scenario import load

    text = _scenario(
        '[[candidate]]\nname = "whip"\nfamily = "vertical"\nheight = "6 m"\n\n'
        '[[candidate]]\nname = "pair"\nfamily = "combination"\nantennas = ["sense", "whip"]\n\n'
    )
    text = text.replace("[reference]\n", "[reference]\nposition = [30, 20]\n", 1)
    unit = next(a for a in load(text).candidates if a.name == "pair")
    assert unit.positions.tolist() == [[30.0, 10.0], [30.0, 20.0]]


def test_a_unit_made_the_reference_says_it_is_set_otherwise():
    """Ranked over another antenna (rank --reference), a unit set automatically is set for RDF, not under the noise:
    a warning says so (its figures differed from its row as a candidate without a word)."""
    from snrgain.outputs.messages import notice_text
    from snrgain.scenario import load

    text = _scenario(_combo("pair"))
    as_candidate = snrgain.evaluate(text)
    assert not [n for n in as_candidate.notices if n.code == "reference-not-set-under-noise"]
    r = snrgain.evaluate(load(text, reference="pair"))
    said = [n for n in r.notices if n.code == "reference-not-set-under-noise"]
    assert [n.antenna for n in said] == ["pair"]
    assert notice_text(said[0]).startswith(
        "pair (the reference): its phase and amplitude setting is set for the best RDF"
    )


def test_a_setting_beyond_a_units_range_asks_for_an_attenuator():
    """Two inputs 30 dB or more apart: the build sheet names the weaker one's attenuator (a unit's controls commonly
    span 20-30 dB, common practice); closer, nothing is said."""
    from snrgain.outputs.output import build_lines

    r = snrgain.evaluate(_scenario(_combo("pair", (135, -34))))
    text = dict(build_lines(r))["pair"]
    assert "sense enters 34 dB below vertical: beyond the 30 dB" in text
    assert "a fixed attenuator in sense's input" in text
    r = snrgain.evaluate(_scenario(_combo("pair", (135, -6))))
    assert "attenuator" not in dict(build_lines(r))["pair"]


def test_a_small_loops_build_line_gives_its_size_and_plane():
    """What to cut for a small loop: its width and height, and its plane both ways (a figure-eight has no single
    'toward'); it gave its height alone."""
    from snrgain.outputs.output import build_lines

    loop = (
        '[[candidate]]\nname = "box"\nfamily = "small-loop"\nwidth = "2 m"\nloop_height = "1.5 m"\nheight = "2 m"\n'
        "bearing = 200\n\n"
    )
    text = dict(build_lines(snrgain.evaluate(_scenario(loop))))["box"]
    assert "its plane along 20-200 deg" in text and "rectangle 2.00 x 1.50 m" in text
