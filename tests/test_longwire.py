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
    # zero, no fitting).  Each step's change of RDF follows NEC's: measured within 0.032 dB per step (0.034 before
    # the down-leads were modelled as lines; NEC falls 0.25-0.46 dB per step; with the junction's resistance alone
    # taken out, 0.02 dB and 0.21-0.46 dB), checked to 0.04 dB (formerly 0.05).  The absolute values are checked in
    # test_against_nec2_with_the_junction_taken_out.
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
    # Tolerances: the README's claim, the largest differences measured on these three wires (RDF 0.84-1.62 dB, gain
    # 0.72-1.54 dB, front-to-back 0.46-1.59 dB, the model above PyNEC in each; with the down-leads neglected 0.85-1.57,
    # 0.73-1.49 and 0.47-1.55 dB; formerly 2/2/3 dB, looser than the README's "within 1.5 dB", which the RDF and
    # front-to-back of the 200 m wire at 1.83 MHz exceed).  These decks give each lead one segment.
    assert got["rdf_db"] == pytest.approx(ref["rdf_db"], abs=1.63)
    assert got["forward_gain_dbi"] == pytest.approx(ref["forward_gain_dbi"], abs=1.55)
    assert got["front_to_back_db"] == pytest.approx(ref["front_to_back_db"], abs=1.60)


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


def test_series_shunt_roots_take_the_positive_real_part():
    # from_series_shunt takes cmath's principal roots (Re >= 0) for gamma and Z0: the same numbers numpy's roots
    # with the sign flipped to Re >= 0 give, for Z' and Y' in every quadrant and on the axes.
    for z in (3 + 40j, -3 + 40j, 3 - 40j, -3 - 40j, 5.0, -5.0, 40j, -40j):
        for y in (1e-6 + 2e-4j, -1e-6 + 2e-4j, 2e-4j, -2e-4j, 1e-5):
            ln = lines.from_series_shunt(1.83e6, z, y)
            for got, square in ((ln.gamma, z * y), (ln.z0, z / y)):
                want = np.sqrt(complex(square))
                want = -want if want.real < 0 else want
                assert type(got) is complex and got.real >= 0
                assert abs(got - want) <= 1e-15 * abs(want)


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
    zf = ant.feed_load_ohm(f)  # the receiver's load and rod seen up the feed lead (test_down_leads_as_lines)
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
        assert cur["v"][0][i] == pytest.approx(i_f * ant.feed_current_ratio(f), rel=1e-5)


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


def test_down_leads_as_lines():
    # A down-lead is a short line at the speed of light whose per-metre inductance is half a 2h wire's partial
    # self-inductance (the lead and its image; Grover's filament form, longwire.straight_wire_inductance_h): Z h / c.
    from snrgain.antennas import longwire as lw

    a = 0.0008138
    for h in (0.5, 2.0, 6.0):
        z = lw.lead_impedance_ohm(h, a)
        assert z * h / C_M_PER_S == pytest.approx(0.5 * lw.straight_wire_inductance_h(2 * h, a), rel=5e-4)
    # Grover's long-wire limit, (mu0 l / 2 pi)(ln(2l / a) - 1) (from memory), and a 3 m lead near Jordan's 60 (ln(4h /
    # a) - 1) ohm.
    assert lw.straight_wire_inductance_h(3.0, a) == pytest.approx(2e-7 * 3.0 * (np.log(6.0 / a) - 1), rel=1e-4)
    assert lw.lead_impedance_ohm(3.0, a) == pytest.approx(60 * (np.log(12.0 / a) - 1), rel=1e-3)
    # Electrically short: the load, plus the lead's inductance, less its capacitance's shunt on the load (series
    # jwL - jwC Z_b^2 to first order in kh); a lossless line passes the power: |I_top|^2 Re Z_top = |I_b|^2 Re Z_b.
    f, h, z = 1.83e6, 3.0, lw.lead_impedance_ohm(3.0, a)
    w, ind, cap = 2 * np.pi * f, z * h / C_M_PER_S, h / (z * C_M_PER_S)
    for zb in (0.0, 50.0, 500.0 - 40j, 900.0):
        top = lw.up_the_lead(zb, f, h, z)
        assert top == pytest.approx(zb + 1j * w * ind - 1j * w * cap * zb**2, abs=0.03 * abs(zb) + 2.0)
        ratio = lw.lead_current_ratio(zb, f, h, z)
        assert abs(ratio) ** 2 * zb.real == pytest.approx(top.real, rel=1e-9, abs=1e-9)
    assert lw.up_the_lead(500.0, f, 1e-9, z) == pytest.approx(500.0)
    # The families: a BOG has no leads; a Beverage's loads pass through them; a 3 m lead of AWG 14 at 1.83 MHz is
    # about +60j ohm of series reactance, and a 500 ohm resistor at its foot looks like about 500 + 4j from the top
    # (the lead's own impedance is 516 ohm: its inductance and capacitance nearly cancel).
    bog = from_spec({"family": "bog", "length": "80 m", "ground": "moist loam", "termination": 400, "far_ground": 10})
    assert bog.lead_ohm() is None and bog.far_load_ohm(f) == pytest.approx(410.0)
    bev = from_spec(
        {
            "family": "beverage",
            "length": "150 m",
            "height": "3 m",
            "gauge": 14,
            "termination": 500,
            "far_ground": 0,
            "ground": "moist loam",
        }
    )
    assert lw.up_the_lead(0.0, f, 3.0, bev.lead_ohm()).imag == pytest.approx(59.6, abs=0.5)
    assert bev.far_load_ohm(f) == pytest.approx(500 + 4j, abs=1.0)


@pytest.mark.skipif(shutil.which("nec2c") is None, reason="nec2c (Debian package) not installed")
def test_down_leads_against_nec2_over_a_perfect_ground():
    # Reference: nec2c over a perfect ground (GN 1): no junction to take out, so the down-leads are all that stands
    # between the line model and NEC at the ends.  Leads and wire split into 0.25 m segments (NEC's figures below
    # moved by under 3.5 % from 1 m segments).  Short wires shorted at the far end show the leads' inductance: the
    # model's feed impedance within 2.4-5.9 % of NEC's (the leads neglected: 12-43 %, all too low); 150 m wires with
    # 300 ohm at the foot of the far lead show their capacitance too: within 3.2-5.3 % (neglected: 7.1-28 %; a series
    # inductance alone, 4.2-16 %); unterminated wires (no far lead, open) of 10-60 m, whose high feed impedance the
    # feed lead's capacitance works on most: within 0.4-3.4 % (neglected: 22-40 %).  Checked to 6.5 % against the
    # neglected leads' 12, 7 and 20 %.  (Longer wires with a near-matched resistor turn on the line's own propagation
    # over a perfect ground, which neither side of this comparison is about: 8-32 % with or without the leads.)
    import sys

    sys.path.insert(0, str(NEC_DIR))
    from necdeck import input_impedance, run_nec2c

    a = 0.0008138
    cases = [(1.83, 20, 3, 0), (1.83, 20, 2, 0), (1.83, 20, 1, 0), (1.83, 10, 3, 0), (3.6, 10, 2, 0)]
    cases += [(1.83, 150, 3, 300), (1.83, 150, 2, 300), (1.83, 150, 1, 300)]
    cases += [(1.83, 20, 3, None), (1.83, 30, 2, None), (1.83, 60, 3, None), (3.6, 30, 2, None), (1.83, 10, 3, None)]
    with tempfile.TemporaryDirectory() as tmp:
        for f_mhz, length, h, term in cases:
            nl = round(h / 0.25)
            wires = [
                f"GW 1 {nl} 0 0 0 0 0 {h:g} {a:g}",
                f"GW 2 {round(length / 0.25)} 0 0 {h:g} {length:g} 0 {h:g} {a:g}",
            ]
            if term is not None:
                wires.append(f"GW 3 {nl} {length:g} 0 {h:g} {length:g} 0 0 {a:g}")
            deck = ["CM down-lead check over a perfect ground", "CE", *wires, "GE 1", "GN 1"]
            if term is not None:
                deck.append(f"LD 0 3 1 1 {term:g} 0 0")
            deck += [f"FR 0 1 0 0 {f_mhz:g} 0", "EX 0 1 1 0 1 0", "XQ", "EN"]
            z_nec = input_impedance(run_nec2c("\n".join(deck) + "\n", Path(tmp), "lead"))
            spec = {"length": f"{length} m", "height": f"{h} m", "diameter": f"{2 * a} m", "ground": "perfect"}
            if term is None:
                ant = from_spec({**spec, "family": "unterminated", "feed_ground": 0})
            else:
                ant = from_spec({**spec, "family": "beverage", "termination": term, "feed_ground": 0, "far_ground": 0})
            f = f_mhz * 1e6
            no_leads = lines.input_impedance(
                ant.line(f), length_m=length, load_ohm=None if term is None else float(term)
            )
            assert abs(ant.feed_point_impedance(f) - z_nec) < 0.065 * abs(z_nec)
            assert abs(no_leads - z_nec) > {None: 0.2, 0: 0.12}.get(term, 0.07) * abs(z_nec)


# Tolerances: the README's claims ("Long wires"), each the largest difference measured on these decks rounded up to
# 0.01 dB, with NEC's junction taken out as an impedance (deembedded.json) and the model's down-leads as short lines
# with their loads at their feet (longwire.lead_impedance_ohm; before that, the leads neglected, in brackets): RDF
# 0.20 dB (0.19), forward gain 0.32 dB (0.29), front-to-back 0.76 dB over 5-30 mS/m (0.52) and 1.93 dB over 1 mS/m
# (0.87 with five outliers up to 3.74).  The leads moved the model's front-to-back over 5-30 mS/m up by 0.04-0.45 dB
# (the 1 m wire at 7.1 MHz 0.52 -> 0.75 dB above NEC, the 36 m wire 0.33 -> 0.45) and the 36 m wire's RDF and gain
# by 0.08 and 0.10 dB; over 1 mS/m, where the deepest nulls turn on what the far end presents, the termination sweep's
# departures went from +0.62, +1.83, +3.73, +2.05, +0.86, +0.60 dB (200-900 ohm) to -0.40, -0.22, +1.49, +1.92,
# +1.26, +1.00 dB, the 570 ohm wire's from +1.39 to +1.64 dB and the 1.2 m wire's from +1.84 to +1.80 dB.  Named
# outlier: the 36 m wire over 30 mS/m at 7.1 MHz, which has almost no directivity, reads 0.92 dB more RDF and
# 1.03 dB more forward gain than NEC (0.85 and 0.92 before).  A one-off fit of NEC's current along the wire had shown
# its far end presenting the termination plus 19 + 59j ohm over 1 mS/m, +46j over 5 mS/m and +38j over 30 mS/m: an
# inductance alone (a lead's partial self-inductance, about +52j ohm for a 3 m lead at 1.83 MHz) brought the sweep
# within 1.0 dB of front-to-back but took the feed impedance 42-99j ohm above NEC's on every case and the 250 m wire
# of long.json 2.4 dB below NEC's front-to-back; the lead as a line (its capacitance with the resistor at its foot,
# as in the decks) keeps the feed impedance and leaves the sweep within 1.92 dB.  Over a perfect ground, with no
# junction to take out, the lines are the better account (test_down_leads_against_nec2_over_a_perfect_ground).
_RDF_WIDER = {"f710-l36-h2-s30ms-deemb": 0.93}
_GAIN_WIDER = {"f710-l36-h2-s30ms-deemb": 1.03}
FB_DB = {"5-30 mS/m": 0.76, "1 mS/m": 1.93}


def _soil(case):
    return "1 mS/m" if case["conductivity_s_per_m"] < 0.002 else "5-30 mS/m"


@pytest.mark.parametrize("case", DEEMB["cases"], ids=[c["name"] for c in DEEMB["cases"]])
def test_against_nec2_with_the_junction_taken_out(case):
    # Reference: nec2c with its wire-to-ground junction measured as an impedance on a stub of the same segmentation
    # (its input impedance on the soil less on a perfect ground; 62 - 15j ohm for a 2 m bottom segment over 5 mS/m,
    # 163 - 96j and 228 - 272j ohm over 1 mS/m) and subtracted by series loads, LD 4 (tests/nec/make_deembedded.py).
    # The model gets the true rod resistance of NEC's ideal connections: zero, no fitting.
    f = case["freq_mhz"] * 1e6
    ant = _model(case, termination=case["termination_ohm"])
    _assert_agrees(
        _figures(ant, f),
        case,
        rdf_db=_RDF_WIDER.get(case["name"], 0.20),
        gain_db=_GAIN_WIDER.get(case["name"], 0.32),
        fb_db=FB_DB[_soil(case)],
    )


@pytest.mark.parametrize("case", DEEMB["cases"], ids=[c["name"] for c in DEEMB["cases"]])
def test_feed_impedance_against_nec2_with_the_junction_taken_out(case):
    # The feed impedance of the same references (the feed's junction, in series with NEC's source, taken out by its
    # LD 4 load): the line's input impedance with the termination at its far end, down the feed lead.  Measured
    # within 9.0 % of NEC's over 1 mS/m (the 900 ohm step, 718 - 19j against 738 + 44j ohm; 13.6 % at the 200 ohm
    # step before the leads were lines) and within 15.8 % over 5-30 mS/m (the 2.5 m wire at 3.6 MHz, 532 - 24j
    # against 510 + 54j ohm, 12.4 % before: NEC is more inductive there than the model with or without its leads);
    # checked to 9.1 and 16 %.  With the junction's resistance alone taken out NEC's feed impedance kept the
    # junction's reactance, and the difference reached 45 % (the 1.2 m wire at 3.6 MHz).
    f = case["freq_mhz"] * 1e6
    z_nec = complex(*case["feed_impedance_ohm"])
    z = _model(case, termination=case["termination_ohm"]).feed_point_impedance(f)
    assert abs(z - z_nec) < {"1 mS/m": 0.091, "5-30 mS/m": 0.16}[_soil(case)] * abs(z_nec)


def test_the_departures_beside_necs_own_spread():
    # tests/nec/make_deembedded.py reran seven cases with the down-leads split finer (40-200 segments per
    # wavelength; NEC's junction grows from 62 - 15j to 117 - 32j ohm over 5 mS/m, from 163 - 96j and 228 - 272j to
    # 652 - 396j and 670 - 803j ohm over 1 mS/m).  Over 5 mS/m the figures hold: front-to-back within 0.50 dB, RDF
    # 0.06 dB, checked to 0.6 and 0.1 dB.  Over 1 mS/m NEC's front-to-back moves with the segmentation, by 8.0 dB at
    # the 300 ohm step of the sweep (17.3-25.4 dB, the model's 17.3 at its low end), 2.3 dB for the 1.2 m wire
    # (10.0-12.3 dB), 1.3, 0.9 and 1.4 dB for the 570 ohm wire and the 400 and 500 ohm steps; for those four the
    # model's front-to-back lies above every segmentation's, by 1.64, 1.57, 0.63 and 1.85 dB (1.68, 1.32, 2.87 and
    # 1.98 with the leads neglected; checked to the next 0.01 dB): NEC's uncertainty covers part of the departure.
    # The 7.1 MHz wire's RDF climbs 0.20 dB toward the model's as NEC's leads are split finer, less than the model
    # departs from it (0.92 dB).
    checks = {c["name"]: c["runs"] for c in DEEMB["segmentation_check"]}
    cases = {c["name"]: c for c in DEEMB["cases"]}

    def values(name, key):
        return [r[key] for r in checks[name]]

    def spread(name, key):
        return max(values(name, key)) - min(values(name, key))

    def mine(name):
        case = cases[name]
        return _figures(_model(case, termination=case["termination_ohm"]), case["freq_mhz"] * 1e6)

    assert spread("f183-l131-h2-s5ms-deemb", "front_to_back_db") < 0.6
    assert spread("f183-l131-h2-s5ms-deemb", "rdf_db") < 0.1
    above_every_segmentation = {
        "f360-l70-h12-s1ms-deemb": 1.65,
        "f183-l150-h3-s1ms-deemb": 1.58,
        "f183-l150-h3-s1ms-r400-deemb": 0.64,
        "f183-l150-h3-s1ms-r500-deemb": 1.86,
    }
    for name, bound in above_every_segmentation.items():
        assert cases[name]["front_to_back_db"] == checks[name][0]["front_to_back_db"]  # the stored run is the coarsest
        assert 0 < mine(name)["front_to_back_db"] - max(values(name, "front_to_back_db")) <= bound
    r300 = "f183-l150-h3-s1ms-r300-deemb"
    assert spread(r300, "front_to_back_db") > 7.0
    fb = mine(r300)["front_to_back_db"]
    assert min(values(r300, "front_to_back_db")) - 0.01 <= fb <= max(values(r300, "front_to_back_db"))
    rdf = values("f710-l36-h2-s30ms-deemb", "rdf_db")
    assert rdf == sorted(rdf) and rdf[-1] - rdf[0] > 0.15
    assert mine("f710-l36-h2-s30ms-deemb")["rdf_db"] - rdf[-1] > 0.5


def test_the_impedance_moved_the_former_outliers_toward_the_model():
    # The stored references against their former, resistance-only figures (make_deembedded.py runs both): the two
    # outliers of the resistive references came nearer the model, 9.56 -> 12.15 dB (the model 13.95) and 23.40 ->
    # 17.54 dB (17.32), and the 1.2 m wire's RDF by 0.33 dB and forward gain by 0.42 dB (0.37 -> 0.05 and 0.47 ->
    # 0.05 dB from the model); over 5-30 mS/m nothing moved by more than 1.11 dB front-to-back (the 1 m wire at
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
    # wavelengths, the junction's resistance taken out (tests/nec/make_long.py; its reactance, 15-96j ohm
    # capacitive on the shorter decks, stays in NEC's loads).  Tolerances: the README's claims, RDF 0.11 dB, forward
    # gain 0.43 dB, front-to-back 1.76 dB (measured with the down-leads as lines: RDF 0.00-0.107 dB, gain
    # 0.02-0.42 dB, F/B 0.14-1.75 dB, the 250 m wire over 30 mS/m; with the leads neglected F/B 0.3-1.46 dB, checked
    # to 1.5; formerly 0.5/1/2 dB, looser than the README).
    f = case["freq_mhz"] * 1e6
    ant = _model(case, termination=case["termination_ohm"])
    _assert_agrees(_figures(ant, f), case, rdf_db=0.11, gain_db=0.43, fb_db=1.76)


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


@pytest.mark.parametrize("family", ["beverage", "bog"])
def test_wave_forms_give_the_feed_current_forms(family):
    """The kept wave's part (WaveForms.currents) is A + Z B of feed_current_forms for one far load and for several
    at once, with the leads' EMF (beverage) and without (bog); and a grid reaching below the horizon is masked
    there as a grid above it is not (invariant: two ways of the same line model)."""
    from snrgain.antennas import longwire as lw

    spec = {"family": family, "length": "120 m", "bearing": "30 deg", "termination": "400 ohm"}
    if family == "beverage":
        spec["height"] = "2 m"
    ant = from_spec(spec)
    f = 1.83e6
    az, el = np.radians(np.arange(0.0, 360.0, 7.0)), np.radians(np.linspace(1.0, 89.0, 52))
    w = lw.plane_wave(f, az, el, bearing_rad=ant.bearing_rad, ground=ant.ground)
    f_v, f_h = lw.field_along_wire(w, ant.wire_height_m())
    lead = lw.vertical_emf(w, 0.0, ant.wire_height_m())[w.inv] if ant.has_leads else 0.0
    drives = dict(drive_v=w.cos_dphi * (-f_v)[w.inv], drive_h=w.sin_dphi * (-f_h)[w.inv], v_end=lead)
    line = ant.line(f)
    (av, bv), (ah, bh), _ = lw.feed_current_forms(w, line=line, length_m=ant.length_m, z_feed=0.0, **drives)
    forms = lw.WaveForms.of(w, line=line, length_m=ant.length_m, all_up=True, **drives)
    for z in (50.0, 523.0 - 40j):
        i_v, i_h = forms.currents(z)
        np.testing.assert_allclose(i_v, av + z * bv, rtol=1e-12, atol=1e-12 * np.abs(av + z * bv).max())
        np.testing.assert_allclose(i_h, ah + z * bh, rtol=1e-12, atol=1e-12 * np.abs(ah + z * bh).max())
    zs = np.array([100.0, 300.0, 900.0])[:, None]
    i_v, i_h = forms.currents(zs)
    assert i_v.shape == (3, az.size)
    np.testing.assert_allclose(i_h[2], ah + 900.0 * bh, rtol=1e-12)
    # the pattern below the horizon is zero, above it the same as on the upper grid alone
    el2 = np.concatenate([el, -el[:5]])
    az2 = np.concatenate([az, az[:5]])
    g_all = ant.gain_linear(f, az2, el2)
    assert np.all(g_all[-5:] == 0.0)
    np.testing.assert_allclose(g_all[:-5], ant.gain_linear(f, az, el), rtol=1e-12)


def test_the_length_rule_takes_a_line_a_hair_faster_than_light():
    # over a ground of nearly air's constants (0.01 mS/m, permittivity 1) the line model gives a velocity factor of
    # 1.0005; the length rule refused it, and rank and wire stopped with "velocity_factor must lie in (0, 1]"
    from snrgain.physics.lines import max_effective_length_m

    lam = C_M_PER_S / 1.83e6
    fast = max_effective_length_m(lam, velocity_factor=1.0005, elevation_rad=np.radians(20.0))
    assert fast == pytest.approx(lam / (4 * (1 / 1.0005 - np.cos(np.radians(20.0)))))
    assert max_effective_length_m(lam, velocity_factor=1.2, elevation_rad=np.radians(20.0)) == float("inf")
    with pytest.raises(ValueError, match="velocity_factor must be > 0"):
        max_effective_length_m(lam, velocity_factor=0.0)
    wire = from_spec(
        {
            "family": "beverage",
            "length": "244 m",
            "height": "2.5 m",
            "ground": {"conductivity": "0.01 mS/m", "permittivity": 1},
        }
    )
    assert wire.line(1.83e6).velocity_factor > 1.0  # the case met: the model's own line
