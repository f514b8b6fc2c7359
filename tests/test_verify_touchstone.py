"""calibrate with Touchstone sweeps: a sweep synthesised from the line model returns its velocity factor and |Z0|."""

from __future__ import annotations

import json
import re
import warnings

import numpy as np
import pytest
from click.testing import CliRunner

from snrgain.antennas.base import build
from snrgain.cli.main import cli
from snrgain.physics import lines
from snrgain.tools import calibrate as cal
from snrgain.tools import touchstone as ts

WIRE = {"family": "beverage", "length": "250 m", "height": "2 m", "ground": "moist loam"}
FREQ_HZ = np.linspace(0.2e6, 3.6e6, 500)


@pytest.fixture(scope="module")
def model():
    """The wire as built and its line constants from the project's line model (the exact mode) over the sweep."""
    ant = build(WIRE, "wire")
    return ant, [ant.computed_line(float(f)) for f in FREQ_HZ]


def _impedances(consts, length_m, far_end):
    load = {"open": None, "short": 0.0}[far_end]
    return np.array([lines.input_impedance(c, length_m=length_m, load_ohm=load) for c in consts])


@pytest.mark.parametrize("far_end", ["open", "short"])
def test_sweep_returns_the_line_models_vf_and_z0(model, far_end, tmp_path):
    ant, consts = model
    path = tmp_path / f"{far_end}.s1p"
    ts.write_s1p(path, FREQ_HZ, _impedances(consts, ant.length_m, far_end))
    res = ts.analyse(ts.read_sweep(path), length_m=ant.length_m, far_end=far_end)
    assert len(res.extremes) >= 8 and not res.warnings
    for e in res.extremes:
        i = int(np.argmin(abs(FREQ_HZ - e["freq_hz"])))
        assert e["velocity_factor"] == pytest.approx(consts[i].velocity_factor, rel=0.01), e
    z0_model = np.median([abs(consts[int(np.argmin(abs(FREQ_HZ - e["freq_hz"])))].z0) for e in res.extremes])
    assert res.z0_magnitude_ohm == pytest.approx(z0_model, rel=0.05)


def test_any_touchstone_form_reads_alike(model, tmp_path):
    """Written by scikit-rf in MA and DB forms, as Z parameters, in kHz, with a 75 ohm reference: the same sweep."""
    import skrf

    ant, consts = model
    z = _impedances(consts, ant.length_m, "open")
    ref = ts.read_sweep(_written(tmp_path / "ri.s1p", z))
    freq = skrf.Frequency.from_f(FREQ_HZ / 1e3, unit="khz")
    s75 = (z - 75.0) / (z + 75.0)
    net = skrf.Network(frequency=freq, s=s75.reshape(-1, 1, 1), z0=75.0)
    for form, param in (("ma", "S"), ("db", "S"), ("ri", "Z")):
        p = tmp_path / f"{form}{param}.s1p"
        net.write_touchstone(str(p), form=form, parameter=param, r_ref=75.0, write_z0=False)
        got = ts.read_sweep(p)
        np.testing.assert_allclose(got.freq_hz, ref.freq_hz, rtol=1e-9)
        np.testing.assert_allclose(got.z_ohm, ref.z_ohm, rtol=1e-4)


def _written(path, z):
    ts.write_s1p(path, FREQ_HZ, z)
    return path


def test_terminated_sweep_variation(model, tmp_path):
    ant, consts = model
    z0 = abs(consts[len(consts) // 2].z0)
    z = {}
    for r in (0.5 * z0, z0, 2 * z0):
        z[r] = np.array([lines.input_impedance(c, length_m=ant.length_m, load_ohm=r) for c in consts])
    var = {
        r: ts.analyse(ts.Sweep(FREQ_HZ, v, "t"), length_m=250.0, far_end="terminated").variation for r, v in z.items()
    }
    assert var[z0] < var[0.5 * z0] and var[z0] < var[2 * z0]  # the matched termination varies least


def test_calibrate_reads_sweeps_from_the_readings_file(model, tmp_path):
    ant, consts = model
    ts.write_s1p(tmp_path / "open.s1p", FREQ_HZ, _impedances(consts, ant.length_m, "open"))
    (tmp_path / "wire.toml").write_text(
        '[wire]\nfamily = "beverage"\nlength = "250 m"\nheight = "2 m"\n\n'
        '[[sweep]]\nfile = "open.s1p"\nfar_end = "open"\n'
    )
    res = cal.calibrate(cal.load_readings(tmp_path / "wire.toml"))
    at = [consts[int(np.argmin(abs(FREQ_HZ - e["freq_hz"])))] for e in res.sweeps[0].extremes]
    assert res.sweeps[0].velocity_factor == pytest.approx(np.median([c.velocity_factor for c in at]), rel=0.01)
    assert res.suggested_termination_ohm is not None
    # the ground fitted to the sweep's velocity factors is the one the sweep was made over (moist loam, 5 mS/m)
    assert res.fit.conductivity_s_per_m == pytest.approx(5e-3, rel=0.15)
    out = CliRunner().invoke(cli, ["calibrate", str(tmp_path / "wire.toml")])
    assert out.exit_code == 0, out.output
    assert "sweep open.s1p (far end open): velocity factor" in out.output


def test_bad_sweeps_are_named(tmp_path):
    (tmp_path / "bad.s1p").write_text("this is not touchstone\n")
    with pytest.raises(ts.SweepError, match="bad.s1p"):
        ts.read_sweep(tmp_path / "bad.s1p")
    (tmp_path / "wire.toml").write_text(
        '[wire]\nfamily = "beverage"\nlength = "250 m"\nheight = "2 m"\n\n'
        '[[sweep]]\nfile = "missing.s1p"\nfar_end = "open"\n'
    )
    out = CliRunner().invoke(cli, ["calibrate", str(tmp_path / "wire.toml")])
    assert out.exit_code == 2 and "missing.s1p" in out.output and "Traceback" not in out.output
    (tmp_path / "wire.toml").write_text(
        '[wire]\nfamily = "beverage"\nlength = "250 m"\nheight = "2 m"\n\n'
        '[[sweep]]\nfile = "bad.s1p"\nfar_end = "sideways"\n'
    )
    out = CliRunner().invoke(cli, ["calibrate", str(tmp_path / "wire.toml")])
    assert out.exit_code == 2 and "far_end" in out.output


@pytest.mark.parametrize(
    "text, said",
    [
        ("", "empty, not a Touchstone sweep: a 1-port file (.s1p) holds its option line"),
        ("  \n\n", "empty, not a Touchstone sweep"),
        ("! saved by an analyser\n!\n", "only comments, not a Touchstone sweep"),
    ],
)
def test_an_empty_sweep_is_said_in_the_projects_words(tmp_path, text, said):
    # An empty .s1p gave scikit-rf's "Ran out of input".
    path = tmp_path / "open.s1p"
    path.write_text(text)
    with pytest.raises(ts.SweepError) as err:
        ts.read_sweep(path)
    assert str(err.value).startswith(f"{path}: {said}") and "Ran out" not in str(err.value)


@pytest.mark.parametrize(
    "body, said",
    [
        ("1.0 0.1 0.2\n1.1 nan 0.2\n1.2 0.3 0.1\n", "line 3: '1.1 nan 0.2' holds a value that is not a finite number"),
        ("1.0 0.1 0.2\n1.1 abc 0.2\n", "line 3: 'abc' is not a number"),
        ("1.0 0.1 0.2 0.5\n1.1 0.1 0.2\n", "line 2: 4 numbers; a 1-port point is 3"),
        ("1.0 0.1 0.2\n" * 6, "the frequency 1 MHz is given more than once"),
    ],
)
def test_a_sweeps_faulty_line_is_named(tmp_path, body, said):
    # A NaN stopped calibrate with scikit-rf's 'Array must not contain infs or NaNs', naming neither file nor line;
    # repeated frequencies passed with a warning of scikit-rf's on the terminal.
    path = tmp_path / "sweep.s1p"
    path.write_text("# MHz S RI R 50\n" + body)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(ts.SweepError) as err:
            ts.read_sweep(path)
    assert str(err.value).startswith((f"{path} {said}", f"{path}: {said}")), str(err.value)


def test_sweep_through_a_feed_line_is_flagged(model):
    """Three metres of 50 ohm coax (VF 0.66) between analyser and wire: the warning names the feed line."""
    ant, consts = model
    z = _impedances(consts, ant.length_m, "open")
    coax = [
        lines.measured_constants(f, velocity_factor=0.66, attenuation_db_per_100m=0.5, z0_ohm=50.0) for f in FREQ_HZ
    ]
    through = np.array([lines.input_impedance(c, length_m=3.0, load_ohm=zl) for c, zl in zip(coax, z)])
    res = ts.analyse(ts.Sweep(FREQ_HZ, through, "through"), length_m=ant.length_m, far_end="open")
    assert res.reactance_share > ts.REACTANCE_SHARE_WARN
    assert any("feed line" in w for w in res.warnings)
    direct = ts.analyse(ts.Sweep(FREQ_HZ, z, "direct"), length_m=ant.length_m, far_end="open")
    assert direct.reactance_share < 0.1 and not direct.warnings


def _write_z(path, freq_hz, z_ohm, *, scale=1.0, head="# Hz Z RI R 50"):
    """A Z-parameter file of ``z_ohm / scale`` (scale 50: normalised to R 50, as Touchstone v1 holds Z)."""
    rows = [f"{f:.3f} {v.real / scale:.6f} {v.imag / scale:.6f}" for f, v in zip(freq_hz, z_ohm)]
    path.write_text("\n".join([head, *rows]) + "\n")
    return path


def _wire_toml(path, *sweeps):
    body = '[wire]\nfamily = "beverage"\nlength = "250 m"\nheight = "2 m"\n'
    for name, far_end in sweeps:
        body += f'\n[[sweep]]\nfile = "{name}"\nfar_end = "{far_end}"\n'
    path.write_text(body)
    return path


def test_a_v1_file_of_ohms_is_refused_naming_the_format(model, tmp_path):
    # A v1 Z file of ohms (v1 holds Z normalised to R) read R = 50 times too large: calibrate gave |Z0| 16557 ohm and
    # a termination of 16489 ohm, exit 0.  The same values normalised read right.
    ant, consts = model
    z = _impedances(consts, ant.length_m, "open")
    fine = ts.read_sweep(_write_z(tmp_path / "norm.s1p", FREQ_HZ, z, scale=50.0))
    res = ts.analyse(fine, length_m=ant.length_m, far_end="open")
    assert 400 < res.z0_magnitude_ohm < 700 and not res.warnings
    _write_z(tmp_path / "ohms.s1p", FREQ_HZ, z)
    with pytest.raises(ts.SweepError) as err:
        ts.analyse(ts.read_sweep(tmp_path / "ohms.s1p"), length_m=ant.length_m, far_end="open")
    said = str(err.value)
    assert said.startswith(f"{tmp_path / 'ohms.s1p'}: the sweep's extremes give |Z0| ")
    assert "more than any wire over ground has (30-1000 ohm; over 2000 is refused)" in said
    assert "option line" in said and "normalised to R" in said
    out = CliRunner().invoke(cli, ["calibrate", str(_wire_toml(tmp_path / "w.toml", ("ohms.s1p", "open")))])
    assert out.exit_code == 2 and "ohms.s1p" in out.output and "Traceback" not in out.output, out.output
    assert "textbook termination" not in out.output


@pytest.mark.parametrize(
    "scale, said",
    [
        (1 / 50, "less than a wire over ground has (30-1000 ohm"),  # normalised values read as ohms (v2)
        (2.5, "more than a wire over ground has (30-1000 ohm)"),
        (1.0, None),
    ],
)
def test_a_sweeps_z0_outside_a_wires_is_warned_of(model, scale, said):
    ant, consts = model
    z = scale * _impedances(consts, ant.length_m, "open")
    res = ts.analyse(ts.Sweep(FREQ_HZ, z, "s"), length_m=ant.length_m, far_end="open")
    if said is None:
        assert not res.warnings
    else:
        assert len(res.warnings) == 1 and said in res.warnings[0] and "option line" in res.warnings[0]


def test_no_suggested_termination_beyond_what_a_wire_takes():
    # |Z0| over WIRE_Z0_MAX_OHM is refused, so the termination suggested (|Z0| less the far rod) is one a wire takes
    from snrgain.antennas.longwire import RESISTOR_SWEEP_OHM

    assert ts.WIRE_Z0_MAX_OHM <= RESISTOR_SWEEP_OHM[-1]
    spec = {**WIRE, "family": "beverage", "termination": ts.WIRE_Z0_MAX_OHM}
    assert build(spec, "wire").params.termination == ts.WIRE_Z0_MAX_OHM
    assert build({**WIRE, "velocity_factor": 0.9, "attenuation": 1.0, "z0": ts.WIRE_Z0_MAX_OHM}, "wire")
    assert ts.wire_z0_problem(ts.WIRE_Z0_MAX_OHM)[0] == "warn"
    assert ts.wire_z0_problem(1.001 * ts.WIRE_Z0_MAX_OHM)[0] == "refuse"
    assert ts.wire_z0_problem(float("nan"))[0] == "refuse"


def test_open_short_readings_of_no_wire_are_refused():
    f = 1.83e6
    with pytest.raises(cal.ReadingError, match=r"reading at 1.83 MHz gives, as sqrt\(Zoc Zsc\), \|Z0\| 3000 ohm"):
        cal.check_open_short_z0(
            [lines.measured_constants(f, velocity_factor=0.8, attenuation_db_per_100m=2.0, z0_ohm=3000.0)]
        )
    warned = cal.check_open_short_z0(
        [lines.measured_constants(f, velocity_factor=0.8, attenuation_db_per_100m=2.0, z0_ohm=z) for z in (10.0, 500.0)]
    )
    assert len(warned) == 1 and "|Z0| 10 ohm, less than a wire over ground has" in warned[0]


def test_sweeps_that_disagree_on_z0_are_said_or_refused(model, tmp_path):
    # An open sweep of 7 ohm and a shorted one of 329 ohm were combined silently into 148 ohm.
    ant, consts = model
    z_open = _impedances(consts, ant.length_m, "open")
    z_short = _impedances(consts, ant.length_m, "short")
    ts.write_s1p(tmp_path / "open.s1p", FREQ_HZ, z_open)
    ts.write_s1p(tmp_path / "short.s1p", FREQ_HZ, z_short)
    ts.write_s1p(tmp_path / "short_far.s1p", FREQ_HZ, 1.6 * z_short)
    ts.write_s1p(tmp_path / "short_v2.s1p", FREQ_HZ, z_short / 50)
    agree = cal.sweep_readings([(tmp_path / "open.s1p", "open"), (tmp_path / "short.s1p", "short")], ant.length_m)
    assert cal.check_sweeps_agree(agree) == []
    far = cal.sweep_readings([(tmp_path / "open.s1p", "open"), (tmp_path / "short_far.s1p", "short")], ant.length_m)
    warned = cal.check_sweeps_agree(far)
    assert len(warned) == 1 and "the sweeps disagree on |Z0|: open.s1p (far end open)" in warned[0]
    assert "short_far.s1p (far end short)" in warned[0] and "a factor 1.6" in warned[0]
    assert "the termination below takes their median" in warned[0]
    assert "median" not in cal.check_sweeps_agree(far, termination_from_sweeps=False)[0]
    toml = _wire_toml(tmp_path / "w.toml", ("open.s1p", "open"), ("short_v2.s1p", "short"))
    out = CliRunner().invoke(cli, ["calibrate", str(toml)])
    assert out.exit_code == 2 and "Traceback" not in out.output, out.output
    assert "the sweeps disagree on |Z0|: short_v2.s1p (far end short)" in out.output
    assert re.search(r"a factor (49\.\d|50), more than 3", out.output) and "textbook termination" not in out.output
    toml = _wire_toml(tmp_path / "w.toml", ("open.s1p", "open"), ("short_far.s1p", "short"))
    out = CliRunner().invoke(cli, ["calibrate", str(toml), "--format", "json"])
    assert out.exit_code == 0, out.output
    data = json.loads(out.output)
    assert len(data["warnings"]) == 1 and "a factor 1.6" in data["warnings"][0]


GOOD_ROWS = "2.0 0.1 0.2\n3.0 0.2 0.1\n4.0 0.3 0.1\n5.0 0.1 0.3\n6.0 0.2 0.2\n"


@pytest.mark.parametrize(
    "head, bad, said",
    [
        (
            "# MHz S RI R 50",
            "-1.0 0.1 0.2",
            "line 2 ('-1.0 0.1 0.2'): frequency -1 MHz; a sweep's points lie above 0 Hz",
        ),
        (
            "# MHz S RI R 50",
            "0 0.1 0.2",
            "line 2 ('0 0.1 0.2'): frequency 0 MHz; a sweep's points lie above 0 Hz and at",
        ),
        ("# MHz S MA R 50", "1.0 5.0 30", "line 2 ('1.0 5.0 30'): reflection |S| 5 (+14.0 dB) against R 50 ohm"),
        ("# MHz S DB R 50", "1.0 20 30", "line 2 ('1.0 20 30'): reflection |S| 10 (+20.0 dB) against R 50 ohm"),
        ("# MHz Z RI R 50", "1.0 -2 0.5", "line 2 ('1.0 -2 0.5'): reflection |S| 2.72 (+8.7 dB) against R 50 ohm"),
        ("# MHz Z RI R 50", "1.0 0 0", "line 2 ('1.0 0 0'): impedance 0 ohm; a wire at its feed never reads"),
    ],
)
def test_a_sweeps_values_out_of_range_are_refused(tmp_path, head, bad, said):
    # A negative frequency, 0 Hz, 1e30 MHz and |S| 5 or +20 dB (no passive load's) passed with exit 0.
    path = tmp_path / "sweep.s1p"
    rows = GOOD_ROWS if "Hz " not in head[:5] else GOOD_ROWS.replace(".0 ", ".0e6 ")
    path.write_text(f"{head}\n{bad}\n{rows}")
    with pytest.raises(ts.SweepError) as err:
        ts.read_sweep(path)
    assert str(err.value).startswith(f"{path} "), str(err.value)
    assert said in str(err.value)
    if "|S|" in said:
        assert "a passive wire reflects at most |S| 1" in str(err.value)


def test_an_analysers_whole_range_is_read_up_to_300_mhz_and_a_sweep_wholly_above_is_refused(tmp_path):
    # An analyser's default range (to 900 MHz) saved with the low bands: its points above 300 MHz are left out, the
    # rest read (the whole file was refused at its first point above); a sweep wholly above 300 MHz is a unit's slip
    # (a file without its option line is read in GHz), refused with what to check.
    path = tmp_path / "sweep.s1p"
    path.write_text("# MHz S RI R 50\n" + GOOD_ROWS + "301 0.1 0.2\n900 0.1 0.2\n1e30 5.0 0.2\n")
    low = tmp_path / "low.s1p"
    low.write_text("# MHz S RI R 50\n" + GOOD_ROWS)
    got, want = ts.read_sweep(path), ts.read_sweep(low)
    np.testing.assert_array_equal(got.freq_hz, want.freq_hz)
    np.testing.assert_array_equal(got.z_ohm, want.z_ohm)
    path.write_text("# GHz S RI R 50\n" + GOOD_ROWS)
    with pytest.raises(ts.SweepError, match="a sweep's points lie above 0 Hz and at most 300 MHz: check the frequency"):
        ts.read_sweep(path)


@pytest.mark.parametrize("text", ["# MHz Z RI R 50\n", "# MHz Z RI R 50\n1.0 0.1 0.2\n"])
def test_a_sweep_of_too_few_points_is_refused(tmp_path, text):
    path = tmp_path / "sweep.s1p"
    path.write_text(text)
    with pytest.raises(ts.SweepError, match="fewer than 5 points"):
        ts.read_sweep(path)


def test_values_just_inside_the_ranges_are_read(tmp_path):
    # |S| a little over 1 (an analyser's calibration error on a nearly open point) and 300 MHz are taken
    path = tmp_path / "sweep.s1p"
    path.write_text("# MHz S MA R 50\n1.0 1.02 -80\n" + GOOD_ROWS.replace("6.0 0.2 0.2", "300 0.2 0.2"))
    assert ts.read_sweep(path).freq_hz[-1] == 300e6


@pytest.mark.parametrize(
    "head, said",
    [
        ("# MHz Z RI R 0", "line 1: reference resistance 0 ohm ('# MHz Z RI R 0')"),
        ("# MHz Z RI R -50", "line 1: reference resistance -50 ohm ('# MHz Z RI R -50')"),
        ("! an analyser's file\n# MHz S RI R", "line 2: reference resistance (none) ohm"),
        ("[Version] 2.0\n# MHz Z RI\n[Number of Ports] 1\n[Reference] 0", "line 4: reference resistance 0 ohm"),
    ],
)
def test_a_reference_resistance_not_above_0_is_refused(tmp_path, head, said):
    # R 0 stopped calibrate with "cannot convert float NaN to integer"; R -50 with scikit-rf's words on infinities.
    path = tmp_path / "sweep.s1p"
    path.write_text(f"{head}\n" + ("[Network Data]\n" if "Version" in head else "") + GOOD_ROWS)
    with pytest.raises(ts.SweepError) as err:
        ts.read_sweep(path)
    assert str(err.value).startswith(f"{path} {said}"), str(err.value)
    assert "the reference resistance must be more than 0 ohm" in str(err.value)
    out = CliRunner().invoke(cli, ["calibrate", str(_wire_toml(tmp_path / "w.toml", ("sweep.s1p", "open")))])
    assert out.exit_code == 2 and "sweep.s1p line" in out.output and "Traceback" not in out.output, out.output


def test_a_sweep_file_that_is_missing_or_a_folder_is_said_as_such(tmp_path):
    from snrgain.errors import ReadingsError

    (tmp_path / "folder.s1p").mkdir()
    (tmp_path / "wire.toml").write_text(
        '[wire]\nfamily = "beverage"\nlength = "250 m"\nheight = "2 m"\n\n'
        '[[sweep]]\nfile = "gone.s1p"\nfar_end = "open"\n\n[[sweep]]\nfile = "folder.s1p"\nfar_end = "short"\n'
    )
    with pytest.raises(ReadingsError) as err:
        cal.load_readings(tmp_path / "wire.toml")
    said = dict(err.value.problems)
    assert said["sweep[1].file"].endswith("gone.s1p does not exist")
    assert said["sweep[2].file"].endswith("folder.s1p is a folder, not a file")
    import os

    os.mkfifo(tmp_path / "pipe.s1p")
    (tmp_path / "wire.toml").write_text(
        '[wire]\nfamily = "beverage"\nlength = "250 m"\nheight = "2 m"\n\n'
        '[[sweep]]\nfile = "pipe.s1p"\nfar_end = "open"\n'
    )
    with pytest.raises(ReadingsError) as err:
        cal.load_readings(tmp_path / "wire.toml")
    assert dict(err.value.problems)["sweep[1].file"].endswith("is not a regular file (a device, a pipe or a socket)")
