"""Noise readings in (snrgain.tools.noisereadings, snrgain noise-readings): the site's man-made level from a rise
over a matched load or an S-meter, through each antenna's modelled gain and chain."""

from __future__ import annotations

import json
import tomllib
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from noisemodels import p372
from snrgain.cli.main import cli
from snrgain.tools import noisereadings as nr

WREN = "scenarios/wren-corner.toml"
K_B = 1.380649e-23  # Boltzmann's constant, SI 2019 exact [J/K]
T0 = 290.0

# P.372's reference antenna: a short lossless monopole over a perfect ground, man-made noise alone; its antenna
# temperature is T0 10^(Fa/10) by the definition of Fa (ITU-R P.372, Section 2), so readings on it can be made
# by hand, independently of the pipeline.
MONOPOLE = """\
[site]
name = "Test plot"
latitude = 50.0
longitude = 10.0
ground = "perfect"

[band]
frequency = "1.83 MHz"
bandwidth = "500 Hz"

[time]
months = [12]
utc_hours = [0]

[receiver]
noise_figure = "12 dB"

[noise.man_made]
environment = "rural"

[noise.galactic]
enabled = false

[[target]]
name = "East"
bearing = 90
elevation = [10, 20]

[reference]
name = "short vertical"
family = "vertical"
height = "3 m"
ground_loss = "0 ohm"

[[candidate]]
name = "whip"
family = "vertical"
height = "5 m"
ground_loss = "0 ohm"
"""


def _reading(time, body):
    return f'\n[[reading]]\ntime = {time}\nantenna = "short vertical"\nfrequency = "1.83 MHz"\n{body}\n'


def test_rise_over_load_by_hand_on_the_reference_monopole(tmp_path):
    sc = tmp_path / "mono.toml"
    sc.write_text(MONOPOLE)
    fa_rural = float(p372.man_made(1.83e6, environment="rural").fa_db)  # 67.2 - 27.7 log10(1.83) = 59.93 dB
    assert fa_rural == pytest.approx(67.2 - 27.7 * np.log10(1.83), abs=1e-9)
    truth = fa_rural - 7.3
    t_a, t_e = T0 * 10 ** (truth / 10), T0 * (10**1.2 - 1)  # the receiver's 12 dB noise figure
    y_db = 10 * np.log10((t_a + t_e) / (T0 + t_e))  # Y-factor (Pozar, Microwave Engineering, sec. 10.2)
    text = _reading("2026-12-02T00:20:00Z", f'bandwidth = "2.4 kHz"\nantenna_db = {-110 + y_db:.4f}\nload_db = -110')
    (tmp_path / "r.toml").write_text(text)
    f = nr.fit(nr.load_readings(tmp_path / "r.toml"), sc)
    assert f.fa_db == pytest.approx(truth, abs=0.05)
    assert f.offset_db == pytest.approx(-7.3, abs=0.05) and f.environment == "rural"
    assert f.rows[0]["man_made_share"] == pytest.approx(1.0, abs=1e-3)
    # a reading on another band is listed, not used
    (tmp_path / "r.toml").write_text(
        text + _reading("2026-12-02T00:30:00Z", "antenna_db = -60\nload_db = -110").replace("1.83 MHz", "3.6 MHz")
    )
    g = nr.fit(nr.load_readings(tmp_path / "r.toml"), sc)
    assert (
        g.offset_db == pytest.approx(f.offset_db, abs=1e-6) and "not used: 3.6 MHz" in g.rows[1]["note"]
    )  # nothing else but the chain's own noise


def test_s_meter_by_hand_r1_and_a_table(tmp_path):
    sc = tmp_path / "mono.toml"
    sc.write_text(MONOPOLE)
    t_e = T0 * (10**1.2 - 1)
    # S9+10 by IARU R.1 is -63 dBm; in 10 kHz it means T_A + T_e = P / (k b) (the chain's gain is 0 dB here)
    p_w = 10 ** (-63 / 10) * 1e-3
    truth = 10 * np.log10((p_w / (K_B * 10e3) - t_e) / T0)
    # the same power read as S7 on a receiver whose table puts S7 at -63 dBm
    text = '[[receiver]]\nname = "rx"\ns_meter = [["S5", -80], ["S7", -63], ["S9", -50]]\n'
    text += _reading("2026-12-02T00:20:00Z", 's_meter = "S9+10"\nbandwidth = "10 kHz"')
    text += _reading("2026-12-02T00:40:00Z", 's_meter = "S7"\nbandwidth = "10 kHz"\nreceiver = "rx"')
    (tmp_path / "r.toml").write_text(text)
    rs = nr.load_readings(tmp_path / "r.toml")
    assert [r.power_dbm for r in rs] == pytest.approx([-63.0, -63.0])
    f = nr.fit(rs, sc)
    assert f.fa_db == pytest.approx(truth, abs=0.05)
    assert nr.s_meter_dbm("S7", [(-91.0, -80.0), (-79.0, -63.0)], "x") == pytest.approx(-80 + 17 / 2)


def test_round_trip_from_a_known_level_within_1_db(tmp_path):
    """Readings synthesised from a known offset through the same modelled gain and chain, with 1.5 dB reading
    noise: 24 rises over the load a builder takes over four evenings, mostly on the antennas that hear the
    man-made noise (the Beverage and the whip; the TX vertical mostly hears the neighbour's supply, and the
    least-squares fit counts its readings by their man-made share).  Over 20 seeded trials the fitted Fa is within
    1 dB in at least 85 % (the fit's standard error here is about 0.5 dB, so about 93 % are expected), and the
    reported 90 % tolerance covers the truth in at least 75 % (15 of these 20 seeds since placed sources are heard
    through the near-ground field model, which changed the readings' man-made shares; 16 before)."""
    within, covered, worst = 0, 0, 0.0
    ants = ["Beverage Europe", "sense whip", "TX vertical", "Beverage Europe"]
    plan = [
        (f"2026-12-{2 + i // 6:02d}T{(2 * i) % 8:02d}:{(7 * i) % 60:02d}:00Z", ants[i % 4], "rise") for i in range(24)
    ]
    fa_env = float(p372.man_made(1.83e6, environment="residential").fa_db)
    for seed in range(20):
        truth = float(np.random.default_rng(seed).uniform(-10, 8))
        path = tmp_path / f"r{seed}.toml"
        path.write_text(nr.synthesise(WREN, offset_db=truth, plan=plan, noise_db=1.5, seed=seed))
        f = nr.fit(nr.load_readings(path), WREN)
        err = abs(f.fa_db - (fa_env + truth))
        within += err <= 1.0
        covered += err <= f.tolerance_db
        worst = max(worst, err)
        assert 0.8 < f.spread_db < 2.5  # the scatter found is the 1.5 dB put in
    assert within >= 17 and covered >= 15 and worst < 2.0, (within, covered, worst)
    shares = {r["antenna"]: r["man_made_share"] for r in f.rows}
    assert shares["TX vertical"] < shares["Beverage Europe"]


def test_readings_the_local_source_swamps_say_so(tmp_path):
    plan = [(f"2026-12-02T0{h}:10:00Z", "TX vertical", "rise") for h in (0, 2, 4, 6)]
    (tmp_path / "r.toml").write_text(nr.synthesise(WREN, offset_db=-20.0, plan=plan, noise_db=1.5, seed=2))
    f = nr.fit(nr.load_readings(tmp_path / "r.toml"), WREN)
    assert any("under a fifth" in n and "hears the local sources less" in n for n in f.notes)
    out = CliRunner().invoke(
        cli, ["noise-readings", WREN, str(tmp_path / "r.toml"), "--write", str(tmp_path / "w.toml")]
    )
    if not f.determined:
        assert out.exit_code != 0 and "no copy written" in out.output and not (tmp_path / "w.toml").exists()
    else:  # determined but loose: the tolerance must then be wide
        assert f.tolerance_db > 3.0


def test_cli_example_fits_and_writes_a_copy_that_ranks(tmp_path):
    ex = CliRunner().invoke(cli, ["noise-readings", "--example"])
    assert ex.exit_code == 0
    (tmp_path / "ex.toml").write_text(ex.output)
    dest = tmp_path / "learned.toml"
    args = ["noise-readings", WREN, str(tmp_path / "ex.toml"), "--write", str(dest), "--format", "json"]
    out = CliRunner().invoke(cli, args)
    assert out.exit_code == 0, out.output
    got = json.loads(out.stdout)
    assert -8.0 < got["fitted_db"] < 0.0 and got["written"] == str(dest)
    assert len(got["readings"]) == 5 and got["readings"][4]["offset_db"] is None  # S7 on the TX vertical
    assert {m["antenna"] for m in got["moves"]} >= {"Beverage Europe", "BOG Europe"}
    new = dest.read_text()
    assert new.startswith(Path(WREN).read_text().rstrip("\n"))
    assert tomllib.loads(new)["noise"]["man_made"]["offset"] == f"{got['fitted_db']:+.1f} dB"
    rank = CliRunner().invoke(cli, ["rank", str(dest)])
    # no warning about the copy itself; the quieter man-made level fitted leaves the supply read S7 on the TX
    # vertical most of its noise, which the ranking explains (local-source-dominates), not a fault of the copy
    warned = [
        ln for ln in rank.output.lower().splitlines() if ln.startswith("warning") and "is most of its noise" not in ln
    ]
    assert rank.exit_code == 0 and not warned
    again = CliRunner().invoke(cli, args)
    assert again.exit_code != 0 and "exists" in again.output and dest.read_text() == new


@pytest.mark.parametrize(
    "body, where, words",
    [
        ('antenna = "TX vertical"\nantenna_db = -90\nload_db = -110', "reading[1].frequency", "missing"),
        ('antenna = "TX vertical"\nfrequency = "1.83 MHz"\nantenna_db = -90', "reading[1]", "antenna_db and load_db"),
        ('antenna = "TX vertical"\nfrequency = "1.83 MHz"\nantenna_db = -90\nload_db = -80\n', "reading[1]", "no rise"),
        # a rise of 320 dB was taken (T_A 9e35 K); nan was refused without its value or what is allowed
        (
            'antenna = "TX vertical"\nfrequency = "1.83 MHz"\nantenna_db = 200\nload_db = -120\n',
            "reading[1]: antenna_db = 200 and load_db = -120: a rise of 320 dB over the load",
            "a rise lies above 0 and at most 100 dB",
        ),
        (
            'antenna = "TX vertical"\nfrequency = "1.83 MHz"\nantenna_db = nan\nload_db = -120\n',
            "reading[1].antenna_db: the receiver's output noise with the antenna: a finite number of dB",
            "in the same dB scale as load_db; got nan",
        ),
        (
            'antenna = "TX vertical"\nfrequency = "1.83 MHz"\nantenna_db = -20\nload_db = "-inf"\n',
            "reading[1].load_db: the receiver's output noise with the matched load",
            'got "-inf"',
        ),
        (
            'antenna = "TX vertical"\nfrequency = "1.83 MHz"\nbandwidth = "2 kHz"\ns_meter = "S4"\nantenna_db = -1',
            "reading[1]",
            "either",
        ),
        ('antenna = "TX vertical"\nfrequency = "1.83 MHz"\ns_meter = "S4"', "reading[1].bandwidth", "bandwidth"),
        (
            'antenna = "TX vertical"\nfrequency = "1.83 MHz"\nbandwidth = "2 kHz"\ns_meter = "S4"\nreceiver = "x"',
            "reading[1].receiver",
            "no [[receiver]]",
        ),
        ('antenna = "TX vertical"\nfrequency = "1.83 MHz"\nbandwidth = "2 kHz"\ns_meter = "S11"', "s_meter", "S9+10"),
        ('antenna = "TX vertical"\nfrequency = "fast"\nantenna_db = -90\nload_db = -110', "frequency", "fast"),
        ('antenna = "TX vertical"\nfrequency = "1.83 MHz"\nantenna_db = -90\nload_db = -110\ncolour = 1', "colour", ""),
    ],
)
def test_bad_readings_named(tmp_path, body, where, words):
    (tmp_path / "r.toml").write_text(f"[[reading]]\ntime = 2026-12-02T00:10:00Z\n{body}\n")
    out = CliRunner().invoke(cli, ["noise-readings", WREN, str(tmp_path / "r.toml")])
    assert out.exit_code != 0 and "Traceback" not in out.output
    assert where in out.output and words in out.output, out.output


def test_bad_inputs_at_the_edges(tmp_path):
    table = '[[receiver]]\nname = "rx"\ns_meter = [["S5", -80], ["S7", -63]]\n'
    (tmp_path / "r.toml").write_text(
        table
        + '[[reading]]\ntime = 2026-12-02T00:10:00Z\nantenna = "TX vertical"\nfrequency = "1.83 MHz"\n'
        + 'bandwidth = "2 kHz"\ns_meter = "S9"\nreceiver = "rx"\n'
    )
    out = CliRunner().invoke(cli, ["noise-readings", WREN, str(tmp_path / "r.toml")])
    assert out.exit_code != 0 and "outside the receiver's calibration table" in out.output
    (tmp_path / "n.toml").write_text(
        '[[reading]]\ntime = 2026-12-02T00:10:00Z\nantenna = "no such"\nfrequency = "1.83 MHz"\n'
        "antenna_db = -90\nload_db = -110\n"
    )
    out = CliRunner().invoke(cli, ["noise-readings", WREN, str(tmp_path / "n.toml")])
    assert out.exit_code != 0 and "'no such' is not in the scenario" in out.output
    (tmp_path / "e.toml").write_text("# nothing\n")
    out = CliRunner().invoke(cli, ["noise-readings", WREN, str(tmp_path / "e.toml")])
    assert out.exit_code != 0 and "no [[reading]]" in out.output
    assert CliRunner().invoke(cli, ["noise-readings"]).exit_code == 2


def test_readings_below_the_other_noise_are_not_a_fit(tmp_path):
    """Readings under what the other components alone give (here a given atmospheric Fa 20 dB over the rural
    man-made curve) drive the fit to the schema's lowest offset with an absurd interval: that is said, with its
    reasons, and no level, tolerance or move is presented as a result (table and JSON)."""
    sc = tmp_path / "mono.toml"
    sc.write_text(MONOPOLE + '\n[noise.atmospheric]\nmodel = "given"\nfa = 80\nupper_decile = 5\nlower_decile = 5\n')
    t_a, t_e = T0 * 10 ** (60.0 / 10), T0 * (10**1.2 - 1)  # Fa 60 dB: under the atmospheric noise alone
    y_db = 10 * np.log10((t_a + t_e) / (T0 + t_e))
    text = "".join(
        _reading(
            f"2026-12-02T00:{m:02d}:00Z", f'bandwidth = "2.4 kHz"\nantenna_db = {-110 + y_db + d:.2f}\nload_db = -110'
        )
        for m, d in ((10, 0.0), (20, 3.0), (30, -4.0))
    )
    (tmp_path / "r.toml").write_text(text)
    f = nr.fit(nr.load_readings(tmp_path / "r.toml"), sc)
    assert not f.determined and len(f.not_determined_because) >= 2
    assert any("lowest offset" in r for r in f.not_determined_because)
    out = CliRunner().invoke(cli, ["noise-readings", str(sc), str(tmp_path / "r.toml")])
    assert out.exit_code == 0, out.output
    assert "not determined by these readings" in out.output and "lowest offset" in out.output
    assert "-40.0 dB" not in out.output and "(90 %)" not in out.output and "before -> after" not in out.output
    got = json.loads(
        CliRunner().invoke(cli, ["noise-readings", str(sc), str(tmp_path / "r.toml"), "--format", "json"]).stdout
    )
    assert got["determined"] is False and got["not_determined_because"]
    assert got["fitted_db"] is None and got["tolerance_90_db"] is None and got["man_made_fa_db"] is None
    assert got["moves"] is None


def test_a_loose_fit_is_not_determined():
    """The interval threshold alone: a fit inside the range whose 90 % half-width passes MAX_TOLERANCE_DB."""
    row = {"offset_db": -3.0}
    f = nr.NoiseFit(0.0, -3.0, 4.0, nr.MAX_TOLERANCE_DB + 0.1, "rural", 1.83e6, [row])
    assert not f.determined and "wider than +-10 dB" in f.not_determined_because[0]
    assert nr.NoiseFit(0.0, -3.0, 4.0, nr.MAX_TOLERANCE_DB - 0.1, "rural", 1.83e6, [row]).determined
    assert nr.NoiseFit(0.0, -3.0, 0.0, float("nan"), "rural", 1.83e6, [row]).determined  # one reading


def test_a_receiver_named_by_a_list_is_an_input_error(tmp_path):
    text = '[[receiver]]\nname = "rx"\ns_meter = [["S5", -80], ["S9", -50]]\n'
    text += _reading("2026-12-02T00:40:00Z", 's_meter = "S7"\nbandwidth = "10 kHz"\nreceiver = []')
    (tmp_path / "r.toml").write_text(text)
    from snrgain.errors import ReadingsError

    with pytest.raises(ReadingsError) as err:
        nr.load_readings(tmp_path / "r.toml")
    assert any(p.endswith(".receiver") and "as text; got []" in m for p, m in err.value.problems)


def test_a_receiver_named_twice_is_an_input_error(tmp_path):
    # the second table of one name was taken silently, the later S-meter table winning for every reading on it
    text = '[[receiver]]\nname = "rx"\ns_meter = [["S5", -80], ["S9", -50]]\n'
    text += '[[receiver]]\nname = "rx"\ns_meter = [["S1", -100], ["S9", -50]]\n'
    text += _reading("2026-12-02T00:40:00Z", 's_meter = "S7"\nbandwidth = "10 kHz"\nreceiver = "rx"')
    (tmp_path / "r.toml").write_text(text)
    from snrgain.errors import ReadingsError

    with pytest.raises(ReadingsError) as err:
        nr.load_readings(tmp_path / "r.toml")
    assert ("receiver[2].name", "'rx' is already used by receiver[1]; name each once") in err.value.problems


def test_one_reading_that_holds_little_man_made_noise_determines_nothing(tmp_path):
    # The offset's tolerance rests on at least one reading's least uncertainty (1 dB) over the readings'
    # sensitivities: one reading on the demo's TX vertical 47 dB over the load, whose man-made share is 0.3 %, was
    # called determined (-20.6 dB, tolerance unknown) and moved the predicted gains by up to 13 dB; a 0.2 dB change
    # of the reading made it undetermined.
    (tmp_path / "r.toml").write_text(
        '[[reading]]\ntime = 2026-12-02T23:10:00Z\nantenna = "TX vertical"\nfrequency = "1.83 MHz"\n'
        'bandwidth = "500 Hz"\nantenna_db = -73.0\nload_db = -120.0\n'
    )
    f = nr.fit(nr.load_readings(tmp_path / "r.toml"), WREN)
    assert max(r["man_made_share"] for r in f.rows if r.get("man_made_share") is not None) < 0.01
    assert np.isfinite(f.tolerance_db) and f.tolerance_db > nr.MAX_TOLERANCE_DB
    assert not f.determined and "wider than" in " ".join(f.not_determined_because)


def test_an_undetermined_fit_says_nothing_of_a_fitted_level():
    """A fit the readings do not determine has no level to remark on: the note on where a fitted level lies against
    P.372's environments is kept for a determined fit (a tester read "not determined by these readings" and then
    "the fitted man-made level, Fa -10.7 dB ... check before writing it")."""
    row = {"reading": 1, "time_utc": "2026-11-10 23:00", "antenna": "v", "kind": "rise over load"}
    rows = [{**row, "antenna_temperature_k": 4e4, "offset_db": -40.0, "man_made_fa_db": -10.7, "note": ""}]
    loose = nr.NoiseFit(0.0, -40.0, 0.0, 50.0, "quiet rural", 7.05e6, rows, ["a"], ["the fitted man-made level"])
    assert not loose.determined and loose.shown_notes == ["a"]
    assert "the fitted man-made level" not in "\n".join(nr.fit_lines(loose))
    assert loose.as_dict()["notes"] == ["a"]
    tight = nr.NoiseFit(0.0, -3.0, 0.5, 1.0, "quiet rural", 7.05e6, [{**rows[0], "offset_db": -3.0}], ["a"], ["b"])
    assert tight.determined and tight.shown_notes == ["a", "b"] and "note: b" in nr.fit_lines(tight)


def test_write_of_an_undetermined_level_prints_the_readings_writes_nothing_and_exits_1(tmp_path):
    # It exited 2 (bad input) with only the reason, the readings' comparison unsaid, though no input was wrong: as
    # verify --write, it now says the readings and the fit, writes nothing, and fails (1) with the reason on stderr.
    plan = [(f"2026-12-02T0{h}:10:00Z", "TX vertical", "rise") for h in (0, 2, 4, 6)]
    (tmp_path / "r.toml").write_text(nr.synthesise(WREN, offset_db=-20.0, plan=plan, noise_db=1.5, seed=2))
    assert not nr.fit(nr.load_readings(tmp_path / "r.toml"), WREN).determined
    dest = tmp_path / "w.toml"
    args = ["noise-readings", WREN, str(tmp_path / "r.toml"), "--write", str(dest)]
    out = CliRunner().invoke(cli, args)
    assert out.exit_code == 1 and not dest.exists()
    assert "not determined by these readings" in out.stdout and "TX vertical" in out.stdout
    assert "--write: the readings do not fix the man-made level (" in out.stderr and "no copy written" in out.stderr
    out = CliRunner().invoke(cli, [*args, "--format", "json"])
    d = json.loads(out.stdout)
    assert out.exit_code == 1 and not dest.exists() and d["determined"] is False and d["written"] is None
    assert d["not_written_because"].startswith("the readings do not fix the man-made level")


def test_a_reading_given_twice_is_said(tmp_path):
    # The example's first reading pasted again at the end counted twice without a word.  It still counts as written
    # (a reading taken again within the minute can read the same), and a note says it weighs twice.
    first = nr.EXAMPLE.split("[[reading]]")[1].split("# load_temperature")[0]
    (tmp_path / "r.toml").write_text(nr.EXAMPLE + "\n[[reading]]" + first)
    out = CliRunner().invoke(cli, ["noise-readings", WREN, str(tmp_path / "r.toml"), "--format", "json"])
    assert out.exit_code == 0, out.output
    notes = [n for n in json.loads(out.stdout)["notes"] if "same reading" in n]
    assert notes == [
        "readings 1 and 6 are the same reading (time, antenna, frequency and values alike): each counts in the fit, "
        "so it weighs twice; remove the copies if read once"
    ]
    (tmp_path / "once.toml").write_text(nr.EXAMPLE)
    alone = CliRunner().invoke(cli, ["noise-readings", WREN, str(tmp_path / "once.toml")])
    assert alone.exit_code == 0 and "same reading" not in alone.output


def test_what_to_read_instead_follows_what_swamps_the_readings():
    # the advice named local sources on a site that places none (a review): it follows what dominates the readings
    from snrgain.tools.noisereadings import quieter_reading

    sky, chain = np.array([4000.0, 5000.0]), np.array([300.0, 300.0])
    assert "local sources" in quieter_reading(sky, chain, True)
    assert "atmospheric and galactic" in quieter_reading(sky, chain, False)
    assert all("preamplifier" in quieter_reading(chain, sky, local) for local in (False, True))
