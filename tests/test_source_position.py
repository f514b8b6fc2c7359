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


def _decided(text, tmp_path, name="site.toml"):
    """(the scenario as the pipeline decides on it, its per-antenna results, the results)."""
    from snrgain.model import pipeline
    from snrgain.scenario import load

    seen = {}
    real = pipeline.decide

    def spy(sc, skies, antennas, cuts):
        seen.update(sc=sc, antennas=antennas)
        return real(sc, skies, antennas, cuts)

    path = tmp_path / name
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
    res = CliRunner().invoke(cli, ["rank", str(path), "--all-warnings"])  # said even of a candidate not built
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
    assert said[0].values["states"] == 2 and said[0].values["shown_state"].endswith("deg)")
    assert notice_text(said[0]).startswith(f"flag north (in 2 of its states; {said[0].values['shown_state']} shown)")


FIXED = NEAR.replace(
    'bearing = 0\nposition = ["60 m", "-42 m"]', 'bearing = 0\ntermination = "359 ohm"\nposition = ["60 m", "-42 m"]'
)
"""The flag with its resistor given: a re-run with the source moved then changes nothing but the source's place."""


@pytest.mark.parametrize(
    "case, edit",
    [
        ("a level read on the reference", lambda t: t),
        (
            "an Fa measured 30 m off",
            lambda t: t.replace('level = "S6"', 'fa = "60 dB"\nmeasured_at = ["60 m", "-30 m"]'),
        ),
        (
            "a receiver near the noise",
            lambda t: t.replace("[[target]]", '[receiver]\nnoise_floor = "-108 dBm"\n\n[[target]]', 1),
        ),
    ],
)
def test_the_shift_is_what_a_run_with_the_source_moved_gives(case, edit, tmp_path):
    """Against the pipeline itself: the scenario run again with the source written 5 m north and 5 m south, each
    candidate's nominal SNR gain toward the first target moves as shifts_db says (within 0.5 dB: the shares are
    medians over the hours), the level anchored as written (read on the reference; an Fa where it was measured)
    and the receiving chain's floor counted."""
    text = edit(FIXED)
    sc, results, r = _decided(text, tmp_path)
    src = next(s for s in sc.noise.local if s.position_m is not None)
    shifts = sp.shifts_db(sc, list(sc.antennas), results, src)
    before = {a.name: float(a.snr_gain_nominal_db[0]) for a in r.antennas}
    for i, north in ((0, -55), (2, -65)):  # north and south of (60, -60)
        moved = text.replace('position = ["60 m", "-60 m"]', f'position = ["60 m", "{north} m"]')
        assert moved != text
        _, _, r1 = _decided(moved, tmp_path, name=f"moved{i}.toml")
        for k, a in enumerate(r1.antennas):
            real = float(a.snr_gain_nominal_db[0]) - before[a.name]
            assert shifts[i, k] == pytest.approx(real, abs=0.5), (case, a.name, i)
    assert abs(shifts[0, 1]) > 3.0  # the flag moves, so the comparison means something


def test_a_move_onto_an_antenna_is_left_out(tmp_path):
    """A whip 4.5 m north of the source: the move 5 m north would put the source 0.5 m from it, within the input's
    least distance (1 m), so it is left out, and the warning names the moves it took."""
    whip = '\n[[candidate]]\nname = "whip"\nfamily = "vertical"\nheight = "6 m"\nposition = ["60 m", "-55.5 m"]\n'
    sc, results, r = _decided(NEAR + whip, tmp_path)
    src = next(s for s in sc.noise.local if s.position_m is not None)
    assert [i for i, _ in sp.moves(sc, list(sc.antennas), src)] == [1, 2, 3]
    shifts = sp.shifts_db(sc, list(sc.antennas), results, src)
    assert np.all(np.isnan(shifts[0])) and np.all(np.isfinite(shifts[1:]))
    said = [n for n in r.notices if n.code == "source-position"]
    assert said  # the whip 4.5 m off, and the flag, move
    for n in said:
        assert n.values["directions"] == ["east", "south", "west"]
        assert "moved 5 m east, south or west" in notice_text(n)


def test_a_level_read_on_a_candidate_moves_the_reference_once(tmp_path):
    """The level read on the flag 18 m from the source: moving the source changes what the flag hears, so the
    source's strength read there, so the reference's noise and every gain over it. Said once, of the reference,
    with the antenna it was read on; the Beverage 150 m off, whose own noise stays, is not named for it."""
    text = FIXED.replace('level = "S6"', 'level = "S9"\nread_on = "flag north"')
    sc, results, r = _decided(text, tmp_path)
    src = next(s for s in sc.noise.local if s.position_m is not None)
    noise = sp.noise_shifts_db(sc, list(sc.antennas), results, src)
    names = [a.name for a in sc.antennas]
    assert np.all(np.abs(noise[:, names.index("flag north")]) < 0.05)  # the level stays read there
    assert np.nanmax(np.abs(noise[:, 0])) >= sp.SHIFT_DB
    said = [n for n in r.notices if n.code == "source-position"]
    assert [n.antenna for n in said] == ["TX vertical"]
    v = said[0].values
    assert v["reference"] and v["read_on"] == "flag north"
    assert (v["low_db"], v["high_db"]) == pytest.approx((np.nanmin(noise[:, 0]), np.nanmax(noise[:, 0])))
    assert notice_text(said[0]).startswith(
        "TX vertical (the reference): every SNR gain over it rests on exactly where 'barn light' stands"
    )


def test_a_gain_moved_by_both_noises_is_still_said(tmp_path, monkeypatch):
    """The reference's noise 2 dB down and the candidate's 2 dB up: the gain moves 4 dB though neither noise moves 3;
    with no warning on the reference, the candidate is named."""
    sc, results, _ = _decided(FIXED, tmp_path)
    n = len(sc.antennas)
    fake = np.zeros((len(sp.DIRECTIONS), n))
    fake[0, 0], fake[0, 1] = -2.0, 2.0
    monkeypatch.setattr(sp, "noise_shifts_db", lambda *a, **k: fake)
    said = sp.source_position_notices(sc, results)
    assert [x.antenna for x in said] == [sc.antennas[1].name]
    assert said[0].values["low_db"] == pytest.approx(-4.0)


UNIT = BASE[: BASE.index("[[candidate]]")].replace('level = "S6"', 'level = "S8"') + (
    '[[candidate]]\nname = "Beverage west"\nfamily = "beverage"\nlength = "150 m"\nheight = "2.5 m"\n'
    'bearing = 290\nposition = ["90 m", "-40 m"]\n\n'
    '[[candidate]]\nname = "sense"\nfamily = "vertical"\nheight = "6 m"\nground_loss = "30 ohm"\n'
    'position = ["60 m", "-45 m"]\n\n'
    '[[candidate]]\nname = "unit"\nfamily = "combination"\nantennas = ["Beverage west", "sense"]\nbearing = 290\n'
)  # the barn light (S8 on the vertical) 36 m from the Beverage's feed, the sense vertical 15 m north of it


@pytest.mark.parametrize(
    "case, edit",
    [
        ("a level read on the reference", lambda t: t),
        (
            "read on the sense vertical, a source radiating both ways",
            lambda t: t.replace(
                'height = "3 m"', 'height = "3 m"\npolarisation = "both"\norientation = "90 deg"'
            ).replace('level = "S8"', 'level = "S8"\nread_on = "sense"'),
        ),
    ],
)
def test_a_phasing_unit_is_set_again_on_the_moved_source(case, edit, tmp_path):
    """A phasing unit set automatically is set again by ear on the source where it stands: against the pipeline run
    with the source written 5 m north and south (the unit steered there afresh), its SNR gain toward the first
    target moves as shifts_db with the sky says (within 0.1 dB, the Beverage's resistor given so that nothing but
    the unit's setting follows the move), the level kept where it was read; the setting held would be off by
    several dB.  The unit is not named where its gain stays."""
    from snrgain.model import pipeline

    text = edit(
        UNIT.replace(
            'bearing = 290\nposition = ["90 m", "-40 m"]',
            'bearing = 290\nposition = ["90 m", "-40 m"]\ntermination = 500',
        )
    )
    captured = {}
    real = pipeline.build_sky

    def keep(sc, grid):
        captured["skies"] = real(sc, grid)
        return captured["skies"]

    pipeline.build_sky = keep
    try:
        sc, results, r = _decided(text, tmp_path)
    finally:
        pipeline.build_sky = real
    src = next(s for s in sc.noise.local if s.position_m is not None)
    names = [a.name for a in sc.antennas]
    k = names.index("unit")
    reset = sp.shifts_db(sc, list(sc.antennas), results, src, skies=captured["skies"])
    held = sp.shifts_db(sc, list(sc.antennas), results, src)
    snr = sp.resetting_snr_db(sc, captured["skies"], list(sc.antennas), src, step_m=0.0)
    assert np.all(np.abs(snr[:, k]) < 1e-9) and np.all(np.isnan(np.delete(snr, k, axis=1)))  # no move: no change
    before = float(r.antenna("unit").snr_gain_nominal_db[0])
    for i, north in ((0, -55), (2, -65)):
        moved = text.replace('position = ["60 m", "-60 m"]', f'position = ["60 m", "{north} m"]')
        _, _, r1 = _decided(moved, tmp_path, name=f"moved{i}.toml")
        real_shift = float(r1.antenna("unit").snr_gain_nominal_db[0]) - before
        assert reset[i, k] == pytest.approx(real_shift, abs=0.1), case
        assert abs(held[i, k] - real_shift) > 3.0  # the setting held: what the notice said before
    said = {n.antenna for n in r.notices if n.code == "source-position"}
    if np.nanmax(np.abs(reset[:, k])) < sp.SHIFT_DB:
        assert "unit" not in said


def test_shifts_take_the_step_for_a_unit_too(tmp_path):
    sc, results, r = _decided(UNIT, tmp_path)
    src = next(s for s in sc.noise.local if s.position_m is not None)
    from snrgain.model import pipeline

    skies = pipeline.build_sky(sc, pipeline.sky_grid(sc))
    assert np.all(sp.shifts_db(sc, list(sc.antennas), results, src, step_m=0.0, skies=skies) == 0.0)


def test_a_unit_set_again_says_so():
    from snrgain.model.results import Notice

    values = {"source": "barn light", "step_m": 5.0, "directions": ["north", "south"], "low_db": -4.2, "high_db": 1.0}
    text = notice_text(Notice("source-position", "unit", {**values, "share": 0.3, "reset": True}))
    assert "with the unit set again on it where it then stands (as by ear), the gain changes by -4.2 to +1.0" in text
    held = notice_text(Notice("source-position", "flag", {**values, "share": 0.3, "reset": False}))
    assert "with this antenna's resistor and phasing as chosen now, the gain changes by -4.2" in held


def test_the_plan_marks_an_antenna_whose_gain_rests_on_the_place(tmp_path):
    """An antenna of the plan whose source-position warning falls by 6 dB or more is marked under its line in the
    plan (a tester's plan recommended a +36 dB null 12 cm wide without a word there)."""
    from snrgain.model.results import Notice
    from snrgain.outputs.output import plan_text

    _, _, r = _decided(NEAR, tmp_path)
    assert r.plan.antennas == ["Beverage west"]
    assert "rests on exactly where" not in str(plan_text(r))
    values = {"source": "barn light", "step_m": 5.0, "directions": ["north"], "low_db": -12.5, "high_db": 1.0}
    r.notices.append(Notice("source-position", "Beverage west", {**values, "share": 0.9}))
    text = str(plan_text(r))
    assert "! its gain rests on exactly where 'barn light' stands: -12.5 dB with it 5 m off" in text
