"""Long-wire antennas: NEC-2 reference solutions, textbook limits, the trade's rules, invariants, bad input."""

import json
import shutil
import tempfile
from pathlib import Path

import numpy as np
import pytest

from noisemodels.sphere import upper_hemisphere
from snrgain.antennas import SpecError, from_spec
from snrgain.model import snr
from snrgain.physics import lines
from snrgain.physics.ground import C_M_PER_S, GROUND_TYPES
from snrgain.tools import wiredesign
from tests.conftest import REPO

NEC_DIR = REPO / "tests" / "nec"
DEEMB = json.loads((NEC_DIR / "deembedded.json").read_text())
GRID = upper_hemisphere(32)
EL20 = np.radians(20.0)


def _model(case, *, termination, rods=0.0):
    return from_spec(
        {
            "family": "beverage",
            "length": f"{case['length_m']} m",
            "height": f"{case['height_m']} m",
            "diameter": f"{2 * case['radius_m']} m",
            "termination": termination,
            "feed_ground": rods,
            "far_ground": rods,
            "ground": {"conductivity": f"{case['conductivity_s_per_m']} S/m", "permittivity": case["permittivity"]},
        }
    )


def _figures(ant, f):
    g = ant.gain_linear(f, GRID.azimuth_rad, GRID.elevation_rad)
    fwd = ant.gain_linear(f, np.array([0.0]), np.array([EL20]))[0]
    back = ant.gain_linear(f, np.array([np.pi]), np.array([EL20]))[0]
    return {
        "forward_gain_dbi": 10 * np.log10(fwd / ant.mismatch(f)),
        "front_to_back_db": 10 * np.log10(fwd / back),
        "rdf_db": 10 * np.log10(fwd / snr.hemisphere_mean_gain(g, GRID)),
    }


def _assert_agrees(got, case, *, rdf_db, gain_db, fb_db):
    """The model's figures beside a stored NEC-2 case: RDF, forward gain and front-to-back within the given dB
    (front-to-back skipped only where both put the rear more than 20 dB down, where the depth of a null turns on
    details neither model claims)."""
    assert got["rdf_db"] == pytest.approx(case["rdf_db"], abs=rdf_db)
    assert got["forward_gain_dbi"] == pytest.approx(case["forward_gain_dbi"], abs=gain_db)
    if not (got["front_to_back_db"] > 20 and case["front_to_back_db"] > 20):
        assert got["front_to_back_db"] == pytest.approx(case["front_to_back_db"], abs=fb_db)


def test_rdf_trend_with_termination_follows_nec2():
    # Reference: the stored nec2c sweep of the termination resistor (150 m at 1.83 MHz, 3 m up over 1 mS/m,
    # 200-900 ohm) with NEC's wire-to-ground junction taken out as an impedance (deembedded.json; the model's rods are
    # zero, no fitting).  Each step's change of RDF follows NEC's: measured within 0.034 dB per step (NEC falls
    # 0.25-0.46 dB per step; with the junction's resistance alone taken out, 0.02 dB and 0.21-0.46 dB), checked to
    # 0.04 dB (formerly 0.05).  The absolute values are checked in test_against_nec2_with_the_junction_taken_out.
    sweep = [c for c in DEEMB["cases"] if "-r" in c["name"]]
    assert len(sweep) == 6
    nec = np.array([c["rdf_db"] for c in sweep])
    mine = np.array(
        [_figures(_model(c, termination=c["termination_ohm"]), c["freq_mhz"] * 1e6)["rdf_db"] for c in sweep]
    )
    assert np.all(np.diff(nec) < -0.2)  # the reference itself moves well beyond the tolerance below
    np.testing.assert_allclose(np.diff(mine), np.diff(nec), atol=0.04)


@pytest.mark.skipif(shutil.which("nec2c") is None, reason="nec2c (Debian package) not installed")
def test_stored_reference_reproduced_by_nec2c():
    import sys

    sys.path.insert(0, str(NEC_DIR))
    from necdeck import metrics, parse_output, run_nec2c

    case = DEEMB["cases"][0]
    deck = (NEC_DIR / case["deck"]).read_text()
    with tempfile.TemporaryDirectory() as tmp:
        out = parse_output(run_nec2c(deck, Path(tmp), "check"))
    m = metrics(out["theta_deg"], out["phi_deg"], out["gain_dbi"])
    for key in ("rdf_db", "forward_gain_dbi", "front_to_back_db"):
        assert m[key] == pytest.approx(case[key], abs=0.01)


@pytest.mark.nec
@pytest.mark.parametrize("f_mhz, length, height", [(1.83, 200.0, 2.0), (1.83, 400.0, 3.0), (3.6, 200.0, 2.0)])
def test_against_pynec_over_perfect_ground(f_mhz, length, height):
    # Reference: PyNEC (NEC-2++), perfect ground (GN 1), wires of 1.2 to 2.4 wavelengths with down-leads.
    # Over perfect ground a low wire is a poor antenna (about -30 dBi), a hard test of the EMF bookkeeping.
    pynec = pytest.importorskip("PyNEC", reason="PyNEC (optional extra 'nec') not installed")
    import sys

    sys.path.insert(0, str(NEC_DIR))
    from necdeck import metrics

    r, term = 0.0008138, 500.0
    lam = C_M_PER_S / (f_mhz * 1e6)
    ns = int(np.ceil(length / (lam / 40)))
    nl = max(1, int(round(height / (length / ns))))
    ctx = pynec.nec_context()
    geo = ctx.get_geometry()
    geo.wire(1, nl, 0, 0, 0, 0, 0, height, r, 1, 1)
    geo.wire(2, ns, 0, 0, height, length, 0, height, r, 1, 1)
    geo.wire(3, nl, length, 0, height, length, 0, 0, r, 1, 1)
    ctx.geometry_complete(1)
    ctx.gn_card(1, 0, 0, 0, 0, 0, 0, 0)
    ctx.ld_card(0, 3, nl, nl, term, 0, 0)
    ctx.ex_card(0, 1, 1, 0, 1.0, 0, 0, 0, 0, 0)
    ctx.fr_card(0, 1, f_mhz, 0)
    ctx.rp_card(0, 46, 180, 0, 5, 0, 0, 0.0, 0.0, 2.0, 2.0, 0, 0)
    rp = ctx.get_radiation_pattern(0)
    th, ph = np.meshgrid(rp.get_theta_angles(), rp.get_phi_angles(), indexing="ij")
    ref = metrics(th.ravel(), ph.ravel(), np.asarray(rp.get_gain()).ravel())
    ant = from_spec(
        {
            "family": "beverage",
            "length": f"{length} m",
            "height": f"{height} m",
            "diameter": f"{2 * r} m",
            "termination": term,
            "feed_ground": 0,
            "far_ground": 0,
            "ground": "perfect",
        }
    )
    got = _figures(ant, f_mhz * 1e6)
    # Tolerances: the README's claim, the largest differences measured on these three wires (RDF 0.85-1.57 dB, gain
    # 0.73-1.49 dB, front-to-back 0.47-1.55 dB, the model above PyNEC in each; formerly 2/2/3 dB, looser than the
    # README's "within 1.5 dB", which the RDF and front-to-back of the 200 m wire at 1.83 MHz exceeded).
    assert got["rdf_db"] == pytest.approx(ref["rdf_db"], abs=1.57)
    assert got["forward_gain_dbi"] == pytest.approx(ref["forward_gain_dbi"], abs=1.49)
    assert got["front_to_back_db"] == pytest.approx(ref["front_to_back_db"], abs=1.55)


# -- line constants ----------------------------------------------------------------


@pytest.mark.parametrize("h, d_mm", [(1.0, 1.63), (3.0, 1.63), (6.0, 2.05)])
def test_perfect_ground_limit_z0(h, d_mm):
    # Z0 of a wire over a perfect plane: 60 ln(2h/a) = 138 log10(4h/d) (ARRL Antenna Book form).
    a = d_mm / 2000
    ln = lines.overhead_wire(1.83e6, radius_m=a, height_m=h, ground=None)
    assert abs(ln.z0) == pytest.approx(60 * np.log(2 * h / a), rel=0.005)
    assert 60 * np.log(2 * h / a) == pytest.approx(138 * np.log10(4 * h / (2 * a)), rel=0.005)
    assert ln.velocity_factor == pytest.approx(1.0, abs=0.005)


def test_velocity_factor_of_a_3m_wire_near_09():
    # Common practice: a wire about 3 m high over moist loam (5 mS/m, 13) has a velocity factor near 0.9 at 1.8 MHz.
    ln = lines.overhead_wire(
        1.83e6, radius_m=lines.awg_diameter_m(14) / 2, height_m=3.0, ground=GROUND_TYPES["moist loam"]
    )
    assert 0.85 <= ln.velocity_factor <= 0.98
    assert 400 <= abs(ln.z0) <= 650  # common practice: a few hundred ohms, 450-600 for AWG 14 at a few metres


# README ("Limits of validity"): 1.6 mm wire in 0.8 mm PVC (eps_r 3.5) over moist loam at 1.83-3.6 MHz; per
# placement the velocity factor range (to 0.01), |Z0| (to the README's rounding) and, buried, the attenuation.
_BOG_README = [
    ({"height": "on soil"}, (0.36, 0.40), (190, 205), None),
    ({"height": "2 cm"}, (0.62, 0.65), (335, 345), None),
    ({"height": "5 cm"}, (0.70, 0.72), (375, 385), None),
    ({"height": "10 cm"}, (0.75, 0.77), (405, 410), None),
    ({"depth": "5 cm"}, (0.21, 0.26), (105, 130), (66, 106)),
]


@pytest.mark.parametrize("where, vf, z0, att", _BOG_README, ids=[next(iter(w.values())) for w, *_ in _BOG_README])
def test_bog_line_constants_as_the_readme_states(where, vf, z0, att):
    # The README's statement of the model's own BOG values, pinned so that the documentation cannot drift from the
    # code: a consistency check, not an independent reference.  (Formerly VF 0.55-0.85 and |Z0| 150-600 ohm on three
    # soils, looser than anything the README says.)  The independent check, the builders' 0.65-0.77 and 160-300 ohm
    # (common practice), is tests/test_modal.py::test_bog_on_soil_against_the_builders_range.
    spec = {"family": "bog", "length": "80 m", "diameter": "1.6 mm", "insulation_thickness": "0.8 mm"}
    ant = from_spec({**spec, **where, "insulation_permittivity": 3.5, "ground": "moist loam"})
    for f in (1.83e6, 3.6e6):
        ln = ant.line(f)
        assert vf[0] <= round(ln.velocity_factor, 2) <= vf[1]
        assert z0[0] <= abs(ln.z0) <= z0[1]
        if att is not None:
            assert att[0] <= round(ln.attenuation_db_per_100m) <= att[1]


def test_skin_effect_internal_impedance_limit():
    # For a >> delta the internal impedance tends to R_s/(2 pi a) (1 + j), R_s = 1/(sigma delta) (Ramo et al.).
    f, a, sigma = 7e6, 1e-3, lines.COPPER_S_PER_M
    delta = np.sqrt(2 / (2 * np.pi * f * 4e-7 * np.pi * sigma))
    z = lines.wire_internal_impedance(f, a, sigma)
    rs = 1 / (sigma * delta)
    assert z.real == pytest.approx(rs / (2 * np.pi * a), rel=0.05)
    assert z.imag == pytest.approx(rs / (2 * np.pi * a), rel=0.05)


def test_measured_constants_round_trip():
    ln = lines.measured_constants(1.83e6, velocity_factor=0.7, attenuation_db_per_100m=3.0, z0_ohm=350)
    again = lines.from_series_shunt(1.83e6, ln.z_series, ln.y_shunt)
    assert again.velocity_factor == pytest.approx(0.7)
    assert again.attenuation_db_per_100m == pytest.approx(3.0)
    assert abs(again.z0) == pytest.approx(350)
    assert again.attenuation_db_per_100ft == pytest.approx(3.0 * 0.3048)


def test_awg_diameters():
    # ASTM B258 / the AWG table: AWG 14 = 1.628 mm, AWG 10 = 2.588 mm, AWG 18 = 1.024 mm.
    assert lines.awg_diameter_m(14) * 1e3 == pytest.approx(1.628, abs=0.002)
    assert lines.awg_diameter_m(10) * 1e3 == pytest.approx(2.588, abs=0.002)
    assert lines.awg_diameter_m(18) * 1e3 == pytest.approx(1.024, abs=0.002)


@pytest.mark.parametrize("k, alpha, expect_ft", [(0.9, 0, 1215), (0.75, 0, 405), (0.5, 0, 135), (0.75, 20, 343)])
def test_max_effective_length_rule(k, alpha, expect_ft):
    # Common practice check values at 160 m with lambda = 540 ft (the list).
    got = lines.max_effective_length_m(540.0, velocity_factor=k, elevation_rad=np.radians(alpha))
    assert got == pytest.approx(expect_ft, abs=2.0)


# -- the response: closed form, invariants -------------------------------------------


def test_closed_form_matches_numerical_integration_of_the_source():
    # The closed-form integral of the distributed source against a direct quadrature of
    # I_F = (1/D) int E_x(x) [Z0 cosh g(L-x) + Z_R sinh g(L-x)] dx plus the down-lead terms.
    ant = from_spec({"family": "beverage", "length": "230 m", "height": "2.5 m", "ground": "moist loam", "bearing": 30})
    f = 1.83e6
    az, el = np.radians(np.array([10.0, 95.0, 200.0])), np.radians(np.array([12.0, 30.0, 5.0]))
    cur, _ = ant.currents(f, az, el)
    ln = ant.line(f)
    g, z0, L, h = ln.gamma, ln.z0, ant.length_m, 2.5
    zf = ant.receiver_load_ohm(f) + ant.params.feed_ground
    zr = ant.far_load_ohm(f)
    k = 2 * np.pi * f / C_M_PER_S
    from snrgain.physics.ground import reflection_coefficients

    x = np.linspace(0, L, 20001)
    for i in range(3):
        s, dphi = np.sin(el[i]), az[i] - np.radians(30)
        rv, _ = reflection_coefficients(ant.ground, el[i], f)
        ax = -s * np.cos(dphi) * (np.exp(1j * k * h * s) - rv * np.exp(-1j * k * h * s))
        ex = ax * np.exp(1j * k * x * np.cos(el[i]) * np.cos(dphi))
        z = np.linspace(0, h, 2001)
        lead = np.cos(el[i]) * np.trapezoid(np.exp(1j * k * z * s) + rv * np.exp(-1j * k * z * s), z)
        d = z0 * (zf + zr) * np.cosh(g * L) + (z0**2 + zf * zr) * np.sinh(g * L)
        kern = z0 * np.cosh(g * (L - x)) + zr * np.sinh(g * (L - x))
        v_far = lead * np.exp(1j * k * L * np.cos(el[i]) * np.cos(dphi))
        i_f = (np.trapezoid(ex * kern, x) + lead * (z0 * np.cosh(g * L) + zr * np.sinh(g * L)) - v_far * z0) / d
        assert cur["v"][0][i] == pytest.approx(i_f, rel=1e-5)


def test_terminated_wire_favours_its_bearing():
    # A wrong EMF sign shows up as a front-to-back below 0 dB (DESIGN.md).
    for fam in ("beverage", "bog"):
        spec = {"family": fam, "length": "200 m", "bearing": 60, "ground": "moist loam", "auto_for": "front_to_back"}
        if fam == "beverage":
            spec["height"] = "2.5 m"
        ant = from_spec(spec)
        assert ant.gain_dbi(1.83e6, 60, 20) - ant.gain_dbi(1.83e6, 240, 20) > 10


def test_unterminated_wire_has_strong_rear_lobe():
    t = from_spec(
        {"family": "beverage", "length": "250 m", "height": "2.5 m", "ground": "moist loam", "auto_for": "z0"}
    )
    u = from_spec({"family": "unterminated", "length": "250 m", "height": "2.5 m", "ground": "moist loam"})
    fb_t = t.gain_dbi(1.83e6, 0, 20) - t.gain_dbi(1.83e6, 180, 20)
    fb_u = u.gain_dbi(1.83e6, 0, 20) - u.gain_dbi(1.83e6, 180, 20)
    assert fb_u < 6 and fb_t > fb_u + 10


def test_pattern_shape_independent_of_feed_load():
    # Reciprocity: the feed load scales the received power equally in every direction.
    a = from_spec(
        {"family": "beverage", "length": "250 m", "height": "2.5 m", "ground": "moist loam", "turns_ratio": 2.0}
    )
    b = from_spec(
        {"family": "beverage", "length": "250 m", "height": "2.5 m", "ground": "moist loam", "turns_ratio": 4.0}
    )
    ga = a.gain_linear(1.83e6, GRID.azimuth_rad, GRID.elevation_rad)
    gb = b.gain_linear(1.83e6, GRID.azimuth_rad, GRID.elevation_rad)
    ratio = gb[ga > 0] / ga[ga > 0]
    assert np.ptp(ratio) / ratio.mean() < 1e-9


def test_longer_wire_more_rdf_up_to_a_point():
    f = 1.83e6
    lam = C_M_PER_S / f
    tgt = wiredesign.along_wire_target(0.0)
    rdf = [
        wiredesign.rdf_db(
            from_spec({"family": "beverage", "length": f"{x * lam} m", "height": "2.5 m", "ground": "moist loam"}),
            f,
            tgt,
            GRID,
        )
        for x in (0.3, 0.6, 1.0, 1.5)
    ]
    assert np.all(np.diff(rdf) > 0)
    advice = wiredesign.best_length(
        {"family": "beverage", "length": "100 m", "height": "2.5 m", "ground": "moist loam"}, f, steps=25
    )
    assert 0.1 * lam < advice.best_m < advice.lengths_m[-1]  # an interior optimum: "up to a point"


def test_two_wire_ports_mirror_each_other():
    spec = {"family": "two-wire", "length": "250 m", "height": "2.5 m", "ground": "moist loam", "bearing": 45}
    fwd = from_spec(spec)
    rev = from_spec({**spec, "port": "reverse"})
    f = 1.83e6
    assert fwd.gain_dbi(f, 45, 20) - fwd.gain_dbi(f, 225, 20) > 10
    assert rev.gain_dbi(f, 225, 20) - rev.gain_dbi(f, 45, 20) > 10
    # The reverse port carries the differential line's loss on top of a similar response.
    assert rev.gain_dbi(f, 225, 20) == pytest.approx(fwd.gain_dbi(f, 45, 20), abs=3.0)
    assert rev.differential_loss(f) < 1.0


def test_design_helpers():
    spec = {"family": "beverage", "length": "250 m", "height": "2.5 m", "ground": "moist loam"}
    t = wiredesign.best_termination(spec, 1.83e6, values_ohm=np.geomspace(100, 3000, 25))
    assert 300 < t.textbook_ohm < 700
    assert t.values_ohm[0] < t.best_ohm < t.values_ohm[-1]
    fb = wiredesign.best_termination(spec, 1.83e6, metric="front_to_back", values_ohm=np.geomspace(100, 3000, 25))
    # The front-to-back optimum lies near the matched termination (textbook: |Z0|).
    assert fb.best_ohm == pytest.approx(fb.textbook_ohm, rel=0.35)
    tr = wiredesign.transformer(from_spec({**spec, "auto_for": "z0"}), 1.83e6)  # a matched line: a resistive feed
    assert tr.exact_turns_ratio == pytest.approx(np.sqrt(abs(tr.feed_point_impedance_ohm) / 75))
    assert tr.chosen_mismatch_loss_db < 0.01 and tr.practical_mismatch_loss_db < 0.5
    sweep = wiredesign.sweep_rdf(
        spec, 1.83e6, lengths_m=[150, 250], terminations_ohm=[300, 500], bearings_deg=[0, 90], nside=8
    )
    assert sweep.shape == (2, 2, 2)


# -- bad input ------------------------------------------------------------------------


@pytest.mark.parametrize(
    "spec, match",
    [
        ({"family": "beverage", "length": "250 m", "height": "-1 m"}, "height"),
        ({"family": "beverage", "length": "0 m", "height": "2 m"}, "length"),
        (
            {
                "family": "beverage",
                "length": "250 m",
                "height": "2 m",
                "velocity_factor": 1.2,
                "attenuation": 1,
                "z0": 400,
            },
            "velocity_factor",
        ),
        ({"family": "beverage", "length": "250 m", "height": "2 m", "velocity_factor": 0.8}, "all three"),
        ({"family": "unterminated", "length": "250 m", "height": "2 m", "termination": 500}, "no far-end termination"),
        ({"family": "beverage", "length": "250 m", "height": "2 m", "gauge": 14, "diameter": "2 mm"}, "gauge"),
        ({"family": "bog", "length": "80 m", "ground": "perfect"}, "real ground"),
    ],
)
def test_bad_input_names_the_field(spec, match):
    with pytest.raises(SpecError, match=match):
        ant = from_spec(spec)
        ant.check_frequency(1.83e6)
        ant.line(1.83e6)


def test_frequency_outside_validity():
    ant = from_spec({"family": "beverage", "length": "250 m", "height": "6 m"})
    with pytest.raises(ValueError, match="wavelengths"):
        ant.check_frequency(7.1e6)
    with pytest.raises(ValueError, match="0.1-30 MHz"):
        ant.check_frequency(50e6)


# Tolerances: the README's claims ("Long wires"), each the largest difference measured on these decks rounded up to
# 0.01 dB, with NEC's junction taken out as an impedance (deembedded.json since the references of issue 21; the
# former, resistance-only figures in brackets, kept in each case's "resistance_only"): RDF 0.19 dB (0.38), forward gain
# 0.29 dB (0.91), front-to-back 0.52 dB on the wires over 5-30 mS/m (0.60) and 0.87 dB on the rest of the termination
# sweep (1.22).  Named outliers: the 36 m wire over 30 mS/m at 7.1 MHz, which has almost no directivity, reads 0.85 dB
# more RDF and 0.93 dB more forward gain than NEC (0.84 and 0.90: its junction, 22 - 2j ohm, is nearly the stub's
# resistance, 23.4 ohm, less the stub's own radiation resistance, so this case barely moved).  Over 1 mS/m the model's
# front-to-back is above NEC's in all eight cases, 0.60-3.73 dB; the named ones: the 1.2 m wire at 3.6 MHz 1.84 dB
# (NEC 12.2, the model 14.0; formerly 4.44 dB against NEC's 9.6), the 300 ohm step of the sweep 1.83 dB (NEC 17.5, the
# model 19.4; formerly 4.04 against 23.4), and three that got worse: the 400 ohm step 3.73 dB (NEC 19.4, the model
# 23.2; formerly both above 20 dB, NEC 29.4, and not compared), the 500 ohm step 2.05 dB (NEC 16.8, the model 18.9;
# formerly 0.32 dB against 19.2) and the 570 ohm wire 1.39 dB (NEC 14.9, the model 16.3; formerly 0.15 dB against
# 16.2).  Over 1 mS/m the front-to-back near the deepest null turns on what NEC's far end presents: its current
# along the wire, fitted as a line with a free Z0 over the six sweep steps (make_nearwire.line_fit; a one-off check,
# not stored), shows the termination plus 19 + 59j ohm now and plus 29 - 37j ohm with the resistance alone taken out
# (plus 38j over 30 mS/m, where the junction has no reactance; a 3 m lead's partial self-inductance, Rosa's formula
# from memory, is +55j ohm at 1.83 MHz).  Given those residuals at its far end the model reproduces NEC's sweep within
# 1.2 dB of front-to-back now, and did formerly but for the 400 ohm null (4.1 dB): the model's neglect of the
# down-leads' inductance (longwire.py's docstring) is the likely rest of the departure, and the three that got worse
# had agreed while NEC's far end carried the junction's capacitive reactance instead.  The next test sets these
# beside NEC's own segmentation spread.
_RDF_WIDER = {"f710-l36-h2-s30ms-deemb": 0.85}
_GAIN_WIDER = {"f710-l36-h2-s30ms-deemb": 0.93}
_FB_WIDER = {
    "f360-l70-h12-s1ms-deemb": 1.85,
    "f183-l150-h3-s1ms-r300-deemb": 1.83,
    "f183-l150-h3-s1ms-r400-deemb": 3.74,
    "f183-l150-h3-s1ms-r500-deemb": 2.05,
    "f183-l150-h3-s1ms-deemb": 1.39,
}


@pytest.mark.parametrize("case", DEEMB["cases"], ids=[c["name"] for c in DEEMB["cases"]])
def test_against_nec2_with_the_junction_taken_out(case):
    # Reference: nec2c with its wire-to-ground junction measured as an impedance on a stub of the same segmentation
    # (its input impedance on the soil less on a perfect ground; 62 - 15j ohm for a 2 m bottom segment over 5 mS/m,
    # 163 - 96j and 228 - 272j ohm over 1 mS/m) and subtracted by series loads, LD 4 (tests/nec/make_deembedded.py).
    # The model gets the true rod resistance of NEC's ideal connections: zero, no fitting.
    f = case["freq_mhz"] * 1e6
    ant = _model(case, termination=case["termination_ohm"])
    fb = 0.87 if "-r" in case["name"] else 0.52
    _assert_agrees(
        _figures(ant, f),
        case,
        rdf_db=_RDF_WIDER.get(case["name"], 0.19),
        gain_db=_GAIN_WIDER.get(case["name"], 0.29),
        fb_db=_FB_WIDER.get(case["name"], fb),
    )


@pytest.mark.parametrize("case", DEEMB["cases"], ids=[c["name"] for c in DEEMB["cases"]])
def test_feed_impedance_against_nec2_with_the_junction_taken_out(case):
    # The feed impedance of the same references (the feed's junction, in series with NEC's source, taken out by its
    # LD 4 load): the line's input impedance with the termination at its far end.  Measured within 13.7 % of NEC's
    # (largest at 200 ohm over 1 mS/m, 372 - 105j against 358 - 57j ohm, the far down-lead's inductance again);
    # checked to 14 %.  With the junction's resistance alone taken out NEC's feed impedance kept the junction's
    # reactance, and the difference reached 45 % (the 1.2 m wire at 3.6 MHz: 545 - 24j against 672 - 337j ohm).
    f = case["freq_mhz"] * 1e6
    z_nec = complex(*case["feed_impedance_ohm"])
    z = _model(case, termination=case["termination_ohm"]).feed_point_impedance(f)
    assert abs(z - z_nec) < 0.14 * abs(z_nec)


def test_the_named_outliers_beside_necs_own_spread():
    # tests/nec/make_deembedded.py reran seven cases with the down-leads split finer (40-200 segments per
    # wavelength; NEC's junction grows from 62 - 15j to 117 - 32j ohm over 5 mS/m, from 163 - 96j and 228 - 272j to
    # 652 - 396j and 670 - 803j ohm over 1 mS/m).  Over 5 mS/m the figures hold: front-to-back within 0.50 dB, RDF
    # 0.06 dB, checked to 0.6 and 0.1 dB.  Over 1 mS/m NEC's front-to-back moves with the segmentation, by 8.0 dB at
    # the 300 ohm step of the sweep (17.3-25.4 dB, the model's 19.4 inside), 2.3 dB for the 1.2 m wire (10.0-12.3 dB),
    # 1.3, 0.9 and 1.4 dB for the 570 ohm wire and the 400 and 500 ohm steps; for those four the model's
    # front-to-back lies above every segmentation's, by 1.68, 1.32, 2.87 and 1.98 dB (checked to the next 0.01 dB):
    # NEC's uncertainty covers part of the departure, the rest is the model's (the far down-lead's inductance, see
    # above).  With the junction's resistance alone taken out NEC's spread had been 11.9 and 4.8 dB for the first
    # two, with NEC's front-to-back falling (not rising) as the leads were split finer.  The 7.1 MHz wire's RDF climbs
    # 0.20 dB toward the model's (0.33 dB formerly), less than the model departs from it (0.85 dB).
    checks = {c["name"]: c["runs"] for c in DEEMB["segmentation_check"]}
    cases = {c["name"]: c for c in DEEMB["cases"]}

    def values(name, key):
        return [r[key] for r in checks[name]]

    def spread(name, key):
        return max(values(name, key)) - min(values(name, key))

    assert spread("f183-l131-h2-s5ms-deemb", "front_to_back_db") < 0.6
    assert spread("f183-l131-h2-s5ms-deemb", "rdf_db") < 0.1
    above_every_segmentation = {
        "f183-l150-h3-s1ms-r300-deemb": 0.0,
        "f360-l70-h12-s1ms-deemb": 1.69,
        "f183-l150-h3-s1ms-deemb": 1.33,
        "f183-l150-h3-s1ms-r400-deemb": 2.88,
        "f183-l150-h3-s1ms-r500-deemb": 1.99,
    }
    assert set(above_every_segmentation) == set(_FB_WIDER)
    for name, bound in above_every_segmentation.items():
        case = cases[name]
        assert case["front_to_back_db"] == checks[name][0]["front_to_back_db"]  # the stored run is the coarsest
        mine = _figures(_model(case, termination=case["termination_ohm"]), case["freq_mhz"] * 1e6)["front_to_back_db"]
        assert abs(mine - case["front_to_back_db"]) > 1.0  # an outlier indeed, beyond the 0.87 dB of the rest
        assert mine - max(values(name, "front_to_back_db")) <= bound
    assert spread("f183-l150-h3-s1ms-r300-deemb", "front_to_back_db") > 7.0
    rdf = values("f710-l36-h2-s30ms-deemb", "rdf_db")
    assert rdf == sorted(rdf) and rdf[-1] - rdf[0] > 0.15


def test_the_impedance_moved_the_former_outliers_toward_the_model():
    # The stored references against their former, resistance-only figures (make_deembedded.py runs both): the two
    # outliers of the resistive references came nearer the model, 9.56 -> 12.15 dB (the model 13.99) and 23.40 ->
    # 17.54 dB (19.37), and the 1.2 m wire's RDF by 0.33 dB and forward gain by 0.42 dB (0.38 -> 0.05 and 0.48 ->
    # 0.06 dB from the model); over 5-30 mS/m nothing moved by more than 1.11 dB front-to-back (the 1 m wire at
    # 7.1 MHz, whose junction is 62 - 63j ohm) and 0.03 dB RDF.
    cases = {c["name"]: c for c in DEEMB["cases"]}
    for name in ("f360-l70-h12-s1ms-deemb", "f183-l150-h3-s1ms-r300-deemb"):
        case, old = cases[name], cases[name]["resistance_only"]
        mine = _figures(_model(case, termination=case["termination_ohm"]), case["freq_mhz"] * 1e6)
        for key in ("front_to_back_db", "rdf_db", "forward_gain_dbi"):
            assert abs(mine[key] - case[key]) <= abs(mine[key] - old[key]) + 0.01
        assert abs(mine["front_to_back_db"] - case["front_to_back_db"]) < 0.5 * abs(
            mine["front_to_back_db"] - old["front_to_back_db"]
        )
    for case in DEEMB["cases"]:
        if case["conductivity_s_per_m"] >= 0.005:
            old = case["resistance_only"]
            assert abs(case["front_to_back_db"] - old["front_to_back_db"]) < 1.2
            assert abs(case["rdf_db"] - old["rdf_db"]) < 0.05


LONG = json.loads((NEC_DIR / "long.json").read_text())


@pytest.mark.parametrize("case", LONG["beverages"], ids=[c["name"] for c in LONG["beverages"]])
def test_against_nec2_beverages_of_builders_lengths(case):
    # Reference: nec2c 1.3 with the one-line fix to fbar() (tests/nec/nec2c-fbar.patch, built by build_nec2c.sh),
    # which lets NEC-2 run wires longer than a wavelength over Sommerfeld ground (the packaged engine gives a feed
    # impedance of -1.5 Mohm on the first of these decks; long.json's engine_check).  Terminated wires of 1.2-2.4
    # wavelengths, the junction taken out as above (tests/nec/make_long.py).  Tolerances: the README's claims, RDF
    # 0.11 dB, forward gain 0.43 dB, front-to-back 1.5 dB (measured: RDF 0.00-0.105 dB, gain 0.01-0.43 dB, F/B
    # 0.3-1.46 dB; formerly 0.5/1/2 dB, looser than the README).
    f = case["freq_mhz"] * 1e6
    ant = _model(case, termination=case["termination_ohm"])
    _assert_agrees(_figures(ant, f), case, rdf_db=0.11, gain_db=0.43, fb_db=1.5)


def test_the_engine_fix_changes_nothing_below_a_wavelength():
    # The stored short decks give the same figures through the packaged and the patched engine (to the 0.01 dB
    # NEC prints), so the short references above stand; a long deck through the packaged engine is nonsense.
    check = LONG["engine_check"]
    assert check["short_decks"] == len(DEEMB["cases"])
    assert check["short_decks_largest_difference_db"] < 0.01
    assert check["long_deck_feed_impedance_packaged_ohm"][0] < 0 < check["long_deck_feed_impedance_patched_ohm"][0]


@pytest.mark.skipif(
    not (NEC_DIR / "engine" / "nec2c-fbar").is_file(), reason="patched nec2c not built (tests/nec/build_nec2c.sh)"
)
def test_long_reference_reproduced_by_the_patched_engine():
    import sys

    sys.path.insert(0, str(NEC_DIR))
    from necdeck import metrics, parse_output, patched_engine, run_nec2c

    case = LONG["beverages"][0]
    with tempfile.TemporaryDirectory() as tmp:
        out = parse_output(run_nec2c((NEC_DIR / case["deck"]).read_text(), Path(tmp), "long", patched_engine()))
    got = metrics(out["theta_deg"], out["phi_deg"], out["gain_dbi"])
    for key in ("rdf_db", "forward_gain_dbi", "front_to_back_db"):
        assert got[key] == pytest.approx(case[key], abs=0.01)


@pytest.mark.skipif(shutil.which("nec2c") is None, reason="nec2c (Debian package) not installed")
def test_junction_stub_reproduced_by_nec2c():
    # The 2 m stub over 5 mS/m at 1.83 MHz: NEC's junction, 62 - 15j ohm (grows as the segment shortens); its input
    # resistance read straight off nec2c's table is the junction's resistance within 0.5 ohm (the difference is the
    # stub's input resistance over a perfect ground, 0.21 ohm in NEC; a short monopole's 40 pi^2 (h/lambda)^2 gives
    # 0.06 ohm, a textbook formula from memory).
    import sys

    sys.path.insert(0, str(NEC_DIR))
    from necdeck import junction_impedance, run_nec2c, stub_deck

    stub = {"freq_mhz": 1.83, "height_m": 2.0, "radius_m": 0.0008138, "permittivity": 13.0}
    stub["conductivity_s_per_m"] = 0.005
    z, r_in = [], []
    with tempfile.TemporaryDirectory() as tmp:
        for segments in (1, 3):
            z.append(junction_impedance(**stub, segments=segments, workdir=Path(tmp)))
            text = run_nec2c(stub_deck(**stub, segments=segments), Path(tmp), "stub")
            i = text.index("ANTENNA INPUT PARAMETERS")
            r_in.append(float(text[i:].splitlines()[3].split()[6]))
    stored = complex(*DEEMB["cases"][0]["junction_ohm"])
    assert abs(z[0] - stored) < 0.01
    assert stored.imag < -10  # reactive: what the former, resistance-only references left in
    assert r_in[0] == pytest.approx(stored.real, abs=0.5)
    assert abs(z[1]) > 2 * abs(z[0])  # the artefact grows as the bottom segment shortens (2 m -> 0.67 m)


@pytest.mark.parametrize(
    "spec",
    [
        {"family": "beverage", "length": "250 m", "height": "2.5 m", "ground": "moist loam", "termination": "500 ohm"},
        {"family": "beverage", "length": "180 m", "height": "1 m", "ground": "very dry ground", "bearing": 30},
        {"family": "two-wire", "length": "250 m", "height": "2.5 m", "ground": "moist loam", "port": "reverse"},
    ],
    ids=["beverage", "auto", "two-wire-reverse"],
)
def test_gains_from_the_forms_are_the_responses_powers(spec):
    # partial_gains of a terminated wire come straight from its response forms (A + Z B) without forming the
    # complex responses; they must be |complex_response|^2, 0 below the horizon.
    a = from_spec(spec)
    az, el = np.meshgrid(np.radians(np.arange(0.0, 360.0, 7.5)), np.radians(np.arange(-6.0, 90.0, 4.0)))
    ev, eh = a.complex_response(1.83e6, az, el)
    gv, gh = a.partial_gains(1.83e6, az, el)
    assert gv.shape == az.shape
    np.testing.assert_allclose(gv, np.abs(ev) ** 2, rtol=1e-12, atol=0)
    np.testing.assert_allclose(gh, np.abs(eh) ** 2, rtol=1e-12, atol=0)
    assert np.all(gv[el < 0] == 0) and np.all(gh[el < 0] == 0)
    np.testing.assert_allclose(a.gain_linear(1.83e6, az, el), gv + gh, rtol=1e-15)
