"""The source-position notice (snrgain.decide.source_place): a candidate whose SNR gain moves by 3 dB or more when a
placed source moves 5 m is named, with how much."""

import numpy as np
import pytest

from snrgain.decide import source_place as sp
from snrgain.outputs.messages import notice_text
from tests.conftest import REPO

BASE = (REPO / "tests" / "data" / "sites" / "sedge-bank-160.toml").read_text()
NEAR = BASE[: BASE.index("[[candidate]]")] + (
    '[[candidate]]\nname = "flag north"\nfamily = "terminated-loop"\nwidth = "8 m"\nloop_height = "4 m"\n'
    'height = "1.5 m"\nbearing = 0\nposition = ["60 m", "-42 m"]\n\n'
    '[[candidate]]\nname = "Beverage west"\nfamily = "beverage"\nlength = "150 m"\nheight = "2.5 m"\n'
    'bearing = 285\nposition = ["160 m", "60 m"]\n'
)  # the barn light stands at (60, -60) m: 18 m behind the flag


def _decided(text, tmp_path):
    """(the scenario as the pipeline decides on it, its per-antenna results, the results)."""
    from snrgain.model import pipeline
    from snrgain.scenario import load

    seen = {}
    real = pipeline.decide

    def spy(sc, skies, antennas, cuts):
        seen.update(sc=sc, antennas=antennas)
        return real(sc, skies, antennas, cuts)

    path = tmp_path / "site.toml"
    path.write_text(text)
    pipeline.decide = spy
    try:
        r = pipeline.evaluate(load(path))
    finally:
        pipeline.decide = real
    return seen["sc"], seen["antennas"], r


def test_a_source_behind_a_close_flag_moves_its_gain_and_is_said(tmp_path):
    sc, results, r = _decided(NEAR, tmp_path)
    src = next(s for s in sc.noise.local if s.position_m is not None)
    shifts = sp.shifts_db(sc, list(sc.antennas), results, src)
    names = [a.name for a in sc.antennas]
    assert np.all(shifts[:, 0] == 0)  # the level is read on the reference: its gain over itself stays 0
    flag = shifts[:, names.index("flag north")]
    # 5 m north brings the source to 13 m of the flag's centre from 18 m: louder, the gain falls; south, quieter
    assert flag[0] < -3.0 and flag[2] > 2.0
    said = {n.antenna: n.values for n in r.notices if n.code == "source-position"}
    assert set(said) == {"flag north"}  # the Beverage 150 m off hears the move as nothing
    v = said["flag north"]
    assert v["low_db"] == pytest.approx(flag.min()) and v["high_db"] == pytest.approx(flag.max())
    assert v["share"] > 0.5
    text = notice_text(next(n for n in r.notices if n.code == "source-position"))
    assert text.startswith("flag north: its SNR gain rests on exactly where 'barn light' stands: moved 5 m")
    assert f"{v['low_db']:.1f}" in text


def test_no_move_no_change_and_a_far_source_moves_nothing(tmp_path):
    sc, results, _ = _decided(NEAR, tmp_path)
    src = next(s for s in sc.noise.local if s.position_m is not None)
    assert np.all(sp.shifts_db(sc, list(sc.antennas), results, src, step_m=0.0) == 0.0)
    far = NEAR.replace('position = ["60 m", "-60 m"]', 'position = ["2000 m", "-1500 m"]')
    sc, results, r = _decided(far, tmp_path)
    src = next(s for s in sc.noise.local if s.position_m is not None)
    assert np.max(np.abs(sp.shifts_db(sc, list(sc.antennas), results, src))) < 0.1  # 5 m in 2.5 km
    assert not [n for n in r.notices if n.code == "source-position"]


def test_rank_prints_it(tmp_path):
    from click.testing import CliRunner

    from snrgain.cli.main import cli

    path = tmp_path / "site.toml"
    path.write_text(NEAR)
    res = CliRunner().invoke(cli, ["rank", str(path)])
    assert res.exit_code == 0, res.output
    assert "flag north: its SNR gain rests on exactly where 'barn light' stands" in res.output


def test_a_switched_flag_is_named_once(tmp_path):
    """A flag switched front and back is one antenna to build: one warning, by the state whose gain moves most."""
    text = NEAR.replace(
        'bearing = 0\nposition = ["60 m", "-42 m"]', 'directions = ["0 deg", "180 deg"]\nposition = ["60 m", "-42 m"]'
    )
    _, _, r = _decided(text, tmp_path)
    said = [n for n in r.notices if n.code == "source-position"]
    assert [n.antenna for n in said] == ["flag north"]
    assert said[0].values["states"] == 2 and said[0].values["state"].endswith("deg)")
    assert notice_text(said[0]).startswith(f"flag north (in 2 of its states; {said[0].values['state']} shown)")
