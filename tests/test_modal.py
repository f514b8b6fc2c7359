"""The exact (full-wave) mode of a wire over lossy ground: limits, quadrature, nec2c current fits, the closed form."""

import json

import numpy as np
import pytest

from snrgain.antennas import SpecError, from_spec
from snrgain.fields import make_ground
from snrgain.physics import lines, modal
from snrgain.physics.ground import C_M_PER_S
from tests.conftest import REPO

FITS = json.loads((REPO / "tests" / "nec" / "modal_fits.json").read_text())
REF = {c["name"]: c for c in json.loads((REPO / "tests" / "nec" / "reference.json").read_text())["cases"]}
A = 0.0008138  # AWG 14


def _ground(sigma, eps):
    return make_ground({"conductivity": f"{sigma} S/m", "permittivity": eps})


@pytest.mark.parametrize("h", [0.5, 2.0, 6.0])
def test_perfect_ground_limit(h):
    # A very good conductor: the TEM wave of a wire over its image, velocity factor 1 and Z0 = 60 ln(2h/a)
    # (e.g. the ARRL Antenna Book's 138 log10(4h/d)); a lossless wire.
    f = 1.83e6
    k0 = 2 * np.pi * f / C_M_PER_S
    gamma, z, y = modal.wire_over_earth(f, h, A, 1.0, 1e8, 0j, complex(0.0, 1.01 * k0))
    assert k0 / gamma.imag == pytest.approx(1.0, abs=1e-5)
    assert abs(np.sqrt(z / y)) == pytest.approx(60 * np.log(2 * h / A), rel=2e-3)


@pytest.mark.parametrize("f, h, sigma, eps", [(1.83e6, 2.0, 0.005, 13), (7.1e6, 1.0, 0.001, 5), (3.6e6, 6.0, 0.03, 20)])
def test_fixed_quadrature_matches_adaptive(f, h, sigma, eps):
    n2 = complex(eps, -sigma / (2 * np.pi * f * 8.8541878128e-12))
    g = complex(0.002, 1.03 * 2 * np.pi * f / C_M_PER_S)
    fast = modal.earth_integrals(g, f, h, n2)
    slow = modal.earth_integrals(g, f, h, n2, adaptive=True)
    for a, b in zip(fast, slow):
        assert abs(a - b) < 1e-9 * abs(b)


@pytest.mark.parametrize(
    "f, d, sigma, eps", [(1.83e6, 0.05, 0.005, 13), (3.6e6, 0.3, 0.001, 5), (7.1e6, 0.1, 0.03, 20)]
)
def test_buried_quadrature_matches_adaptive(f, d, sigma, eps):
    n2 = complex(eps, -sigma / (2 * np.pi * f * 8.8541878128e-12))
    g = complex(0.01, 2 * np.pi * f / C_M_PER_S / 0.22)
    fast = modal.buried_integrals(g, f, d, n2, offset_m=1.6e-3)
    slow = modal.buried_integrals(g, f, d, n2, offset_m=1.6e-3, adaptive=True)
    for a, b in zip(fast, slow):
        assert abs(a - b) < 1e-8 * abs(b)


@pytest.mark.parametrize("case", FITS["cases"], ids=[c["name"] for c in FITS["cases"]])
def test_against_nec2_current_fits(case):
    # Reference: nec2c's current along stored decks (tests/nec/cases), fitted to a forward and a reflected wave
    # (tests/nec/make_modal_fits.py).  Velocity factor within 1 % (measured 0.4 % at 1 mS/m, 0.2 % at 5 mS/m;
    # the closed form is 1.8 % and 0.5 % off).  Attenuation: the exact mode lies 24 % and 11 % above NEC's
    # (copper loss included; 21 % and 7 % for NEC's lossless wire), the closed form 16 % and 4 % below; NEC lies
    # between them, which these checks pin.  Why the mode decays faster than NEC's current: the next test.
    c = REF[case["name"]]
    g = _ground(c["conductivity_s_per_m"], c["permittivity"])
    f = c["freq_mhz"] * 1e6
    ex = lines.overhead_wire(f, radius_m=A, height_m=c["height_m"], ground=g)
    cf = lines.overhead_wire(f, radius_m=A, height_m=c["height_m"], ground=g, model="closed-form")
    assert ex.velocity_factor == pytest.approx(case["velocity_factor"], rel=0.01)
    assert abs(ex.velocity_factor - case["velocity_factor"]) < abs(cf.velocity_factor - case["velocity_factor"])
    lo, hi = sorted((ex.attenuation_db_per_100m, cf.attenuation_db_per_100m))
    assert lo < case["attenuation_db_per_100m"] < hi


def test_closed_form_departs_over_poor_ground_at_the_higher_bands():
    # Measured: 100 m of AWG 14 2 m over 1 mS/m at 7.1 MHz: the closed form's velocity factor 3.4 % low and its
    # attenuation 28 % high against the exact mode; over 5 mS/m at 1.83 MHz, 0.3 % in velocity factor.
    f = 7.1e6
    g = _ground(0.001, 5.0)
    ex = lines.overhead_wire(f, radius_m=A, height_m=2.0, ground=g)
    cf = lines.overhead_wire(f, radius_m=A, height_m=2.0, ground=g, model="closed-form")
    assert 100 * (cf.velocity_factor / ex.velocity_factor - 1) == pytest.approx(-3.4, abs=0.3)
    assert 100 * (cf.attenuation_db_per_100m / ex.attenuation_db_per_100m - 1) == pytest.approx(28.0, abs=3.0)
    g5 = _ground(0.005, 13.0)
    ex5 = lines.overhead_wire(1.83e6, radius_m=A, height_m=2.0, ground=g5)
    cf5 = lines.overhead_wire(1.83e6, radius_m=A, height_m=2.0, ground=g5, model="closed-form")
    assert abs(cf5.velocity_factor / ex5.velocity_factor - 1) < 0.005


def test_a_beverage_takes_either_line_model():
    base = {"family": "beverage", "length": "200 m", "height": "2 m", "ground": "sandy soil"}
    exact = from_spec(base)
    closed = from_spec({**base, "line_model": "closed-form"})
    assert exact.line(3.6e6).velocity_factor != closed.line(3.6e6).velocity_factor
    # |Z0| of the same mode (the trade's resistor; "auto" is the one of best SNR gain or RDF, test_termination_answer)
    assert exact.matched_termination_ohm(3.6e6) == pytest.approx(abs(exact.line(3.6e6).z0) - 20.0)
    with pytest.raises(SpecError, match="line_model"):
        from_spec({**base, "line_model": "tem"})


BOG = {"family": "bog", "length": "80 m", "diameter": "1.6 mm", "insulation_thickness": "0.8 mm"}


def _bog(height, model="exact", f=1.83e6):
    spec = {**BOG, "height": height, "insulation_permittivity": 3.5, "ground": "moist loam", "line_model": model}
    return from_spec(spec).line(f)


def test_insulated_mode_reduces_to_the_bare_wire():
    # Insulation of permittivity 1 and vanishing thickness: the bare wire's mode.
    f, h = 3.6e6, 0.5
    zi = lines.wire_internal_impedance(f, A)
    start = complex(0.0, 1.02 * 2 * np.pi * f / C_M_PER_S)
    bare = modal.wire_over_earth(f, h, A, 13.0, 0.005, zi, start)
    thin = modal.wire_over_earth(f, h, A, 13.0, 0.005, zi, start, A * (1 + 1e-9), 1.0)
    assert thin[0] == pytest.approx(bare[0], rel=1e-6)


@pytest.mark.parametrize("f", [1.83e6, 3.6e6])
@pytest.mark.parametrize("height", ["1 cm", "2 cm", "5 cm"])
def test_bog_closed_form_agrees_with_the_exact_mode_off_the_soil(height, f):
    # snrgain's own shunt-path model of a wire held above the soil against the exact mode with the insulation as
    # a coaxial layer: velocity factor within 1 %, attenuation within 10 % (measured: 0.0-0.7 % and 3-6 %).
    ex, cf = _bog(height, "exact", f), _bog(height, "closed-form", f)
    assert cf.velocity_factor == pytest.approx(ex.velocity_factor, rel=0.01)
    assert cf.attenuation_db_per_100m == pytest.approx(ex.attenuation_db_per_100m, rel=0.10)


def test_bog_on_soil_against_the_builders_range():
    # 1.6 mm wire in 0.8 mm PVC (eps_r 3.5) over moist loam (5 mS/m, 13).  Builders report velocity factors of
    # 0.65-0.77 and terminate at 160-300 ohm (common practice).  The physics (the exact mode) says otherwise for
    # a wire resting on bare soil: VF 0.36-0.40 with |Z0| 190-205 ohm; the builders' velocity factors need the
    # axis 3-10 cm up (grass, litter), where |Z0| is 355-410 ohm (at 15 cm the VF reaches 0.78-0.80, past their
    # range; formerly stated as 3-15 cm).  But a builder's resistor is |Z0| less the far ground: one 1.2 m rod in
    # this soil is 143 ohm (Dwight's formula), which leaves 195-265 ohm for 2-10 cm, inside the builders' range.
    # So a wire held a few cm up, ended on a rod, fits both numbers.  README says so.
    on = [_bog("on soil", f=f) for f in (1.83e6, 3.6e6)]
    assert [round(ln.velocity_factor, 2) for ln in on] == [0.36, 0.40]
    assert all(160 < abs(ln.z0) < 300 for ln in on) and all(ln.velocity_factor < 0.65 for ln in on)
    up = [_bog("5 cm", f=f) for f in (1.83e6, 3.6e6)]
    assert all(0.65 <= ln.velocity_factor <= 0.77 for ln in up) and all(abs(ln.z0) > 300 for ln in up)
    for height in ("3 cm", "5 cm", "8 cm", "10 cm"):
        spec = {**BOG, "height": height, "insulation_permittivity": 3.5, "ground": "moist loam", "far_ground": "rod"}
        ant = from_spec(spec)
        assert ant.far_rod_ohm == pytest.approx(143.2, abs=0.1)
        for f in (1.83e6, 3.6e6):
            assert 0.65 <= round(ant.line(f).velocity_factor, 2) <= 0.77  # to the two decimals builders quote
            assert 160 < ant.matched_termination_ohm(f) < 300
    assert all(_bog("15 cm", f=f).velocity_factor > 0.775 for f in (1.83e6, 3.6e6))  # the range's upper edge
    # The closed form cannot follow the wire down onto the soil (its spreading term diverges there).
    cf = _bog("on soil", "closed-form")
    assert abs(cf.velocity_factor / on[0].velocity_factor - 1) > 0.2


def test_a_nearly_lossless_ground_keeps_the_closed_form():
    # Loss tangent 0.002 (10 uS/m, eps_r 13, 7.1 MHz): the mode leaks into the ground and the iteration does not
    # settle; the line model says so by returning the closed form rather than failing (measured: below a loss
    # tangent of about 0.01 only).
    g = make_ground({"conductivity": "0.01 mS/m", "permittivity": 13})
    ex = lines.overhead_wire(7.1e6, radius_m=A, height_m=2.0, ground=g)
    cf = lines.overhead_wire(7.1e6, radius_m=A, height_m=2.0, ground=g, model="closed-form")
    assert ex.gamma == cf.gamma
    assert lines.overhead_wire(7.1e6, radius_m=A, height_m=2.0, ground=_ground(3e-4, 13.0)).gamma != pytest.approx(
        lines.overhead_wire(7.1e6, radius_m=A, height_m=2.0, ground=_ground(3e-4, 13.0), model="closed-form").gamma
    )


LONG = json.loads((REPO / "tests" / "nec" / "long.json").read_text())


@pytest.mark.parametrize("case", LONG["center_fed"], ids=[c["name"] for c in LONG["center_fed"]])
def test_the_whole_spectrum_reproduces_nec2_along_a_long_wire(case):
    # Reference: nec2c 1.3 with the fbar() fix (tests/nec/make_long.py), a lossless horizontal wire twelve
    # wavelengths long fed at its middle; a forward and a reflected wave fitted to its current over 0.5-3
    # wavelengths.  The same fit to the current snrgain.physics.modal.gap_current computes for an infinite wire (the
    # mode plus the rest of the spectrum) agrees: velocity factor within 0.2 %, attenuation within 3 % (measured 0.05 %
    # and 0.6-1.2 %).  The mode alone decays faster (measured 2.5 % faster at 1.83 MHz 2 m over 5 mS/m, 16-19 %
    # over 1 mS/m and at 7.1 MHz): the rest of the spectrum, up to a fifth of the current, decays more slowly and
    # a single fitted wave averages the two.  So NEC's fitted attenuation is not the mode's; the line model uses
    # the mode, and the Beverage figures agree with NEC (tests/test_longwire.py).
    import sys

    sys.path.insert(0, str(REPO / "tests" / "nec"))
    from make_modal_fits import fit_gamma

    f = case["freq_mhz"] * 1e6
    k0 = 2 * np.pi * f / C_M_PER_S
    x = np.array(case["x_m"])
    args = (f, case["height_m"], case["radius_m"], case["permittivity"], case["conductivity_s_per_m"])
    mode, rest = modal.gap_current(*args, x)
    lam = 2 * np.pi / k0
    keep = (x > case["fit_wavelengths"][0] * lam) & (x < case["fit_wavelengths"][1] * lam)
    g, _ = fit_gamma(x[keep], (mode + rest)[keep], k0)
    assert k0 / g.imag == pytest.approx(case["velocity_factor"], rel=0.002)
    db = 20 / np.log(10) * 100
    assert g.real * db == pytest.approx(case["attenuation_db_per_100m"], rel=0.03)
    gamma = modal.wire_over_earth(*args, 0j, complex(0.0, 1.05 * k0))[0]
    assert gamma.real * db > 1.02 * case["attenuation_db_per_100m"]
    assert k0 / gamma.imag == pytest.approx(case["velocity_factor"], rel=0.01)


def test_gap_current_over_a_good_conductor_is_the_transmission_lines():
    # A gap of 1 V in an infinite line drives V / (2 Z0) each way, decaying as exp(-gamma x) (the transmission-line
    # result); over a near-perfect earth the rest of the spectrum vanishes.
    f, h = 1.83e6, 2.0
    k0 = 2 * np.pi * f / C_M_PER_S
    x = np.array([50.0, 200.0])
    mode, rest = modal.gap_current(f, h, A, 1.0, 1e3, x)
    gamma, z, y = modal.wire_over_earth(f, h, A, 1.0, 1e3, 0j, complex(0.0, 1.05 * k0))
    expect = 1 / (2 * np.sqrt(z / y)) * np.exp(-gamma * x)
    assert np.allclose(mode, expect, rtol=1e-3)
    assert np.all(np.abs(rest) < 1e-3 * np.abs(mode))


TABLE = json.loads((REPO / "tests" / "data" / "exact_mode_table.json").read_text())


def test_the_line_model_is_the_exact_mode_over_the_table():
    # The stored table of the exact mode (heights 0.5-6 m, 0.5-30 mS/m, 1.8-7.3 MHz; this project's solver, checked
    # above against the perfect-ground limit and nec2c current fits): the default line model reproduces it, so
    # the Beverage the pipeline uses is within 1 % in VF and 10 % in attenuation of it (here to 1e-4).
    for row in TABLE["rows"]:
        ln = lines.overhead_wire(
            row["freq_hz"],
            radius_m=A,
            height_m=row["height_m"],
            ground=_ground(row["conductivity_s_per_m"], row["permittivity"]),
        )
        assert ln.velocity_factor == pytest.approx(row["velocity_factor"], rel=1e-4)
        assert ln.attenuation_db_per_100m == pytest.approx(row["attenuation_db_per_100m"], rel=1e-4)
        assert ln.z0 == pytest.approx(complex(*row["z0_ohm"]), rel=1e-4)


def _king_unbounded(f, eps, sigma, eps_i, a, b):
    """The thin-insulation closed form of an insulated wire in an unbounded dissipative medium, as the project
    recalls it from R. W. P. King's insulated-antenna theory (King, Smith, Owens and Wu, "Antennas in Matter",
    1981): k_L = k2 [1 + H0(k4 b) / (k4 b ln(b/a) H1(k4 b))]^(1/2), exp(-i w t), k2 the insulation's wavenumber,
    k4 the medium's; valid where |k4|^2 >> |k_L|^2.  NOT verified: the formula could not be checked against the
    book or the papers (Wu, King and Giri, Radio Science 8 (1973) 699, treat the same problem), so it is the
    project's own assumption and the tests that use it are consistency checks, not independent ones."""
    from scipy.special import hankel1

    w = 2 * np.pi * f
    k0 = w / C_M_PER_S
    k2 = k0 * np.sqrt(eps_i)
    k4 = k0 * np.sqrt(eps + 1j * sigma / (w * 8.8541878128e-12))
    k_l = k2 * np.sqrt(1 + hankel1(0, k4 * b) / (k4 * b * np.log(b / a) * hankel1(1, k4 * b)))
    return complex(k_l.imag, k_l.real)  # as gamma = alpha + j beta


@pytest.mark.parametrize("f", [1.83e6, 3.6e6])
def test_buried_wire_deep_in_sea_water_agrees_with_the_recalled_thin_insulation_form(f):
    # Consistency check (the closed form above is unverified): deep in sea water (4 S/m, eps_r 80), 1 mm wire in
    # 3 mm of eps_r 2.3 insulation, where the closed form's conditions hold, the exact buried mode and the closed
    # form, two independent constructions of the project's, agree: velocity factor within 0.2 %, attenuation within
    # 3 % (measured 0.03 % and 0.7-1.1 %).
    k0 = 2 * np.pi * f / C_M_PER_S
    g = modal.wire_in_earth(f, 80.0, 1e-3, 80.0, 4.0, 0j, complex(0.0, k0 / 0.3), 3e-3, 2.3)[0]
    king = _king_unbounded(f, 80.0, 4.0, 2.3, 1e-3, 3e-3)
    assert k0 / g.imag == pytest.approx(k0 / king.imag, rel=0.002)
    assert g.real == pytest.approx(king.real, rel=0.03)


def test_buried_bog_in_soil_feels_the_surface():
    # 1.6 mm wire in 0.8 mm PVC (eps_r 3.5) in moist loam (5 mS/m, 13) at 1.83 MHz.  Deep down the surface
    # terms vanish (20 m and 50 m agree); 5 cm down the air above speeds the wave up (VF 0.21 against 0.19 deep).
    # The recalled closed form (unverified) reads VF 0.15 and 12 dB/100 m here: thin insulation in soil meets neither
    # of its conditions
    # (|k4|^2 is 1.2 |k_L|^2, not >> it, and the soil's own admittance, in series with the insulation's, is of
    # the same size), which this mode keeps.  The closed form reads 15 % slower at 5 cm.
    f = 1.83e6
    k0 = 2 * np.pi * f / C_M_PER_S
    zi = lines.wire_internal_impedance(f, 0.8e-3)
    start = complex(0.0, k0 / 0.2)

    def vf(d):
        return k0 / modal.wire_in_earth(f, d, 0.8e-3, 13.0, 0.005, zi, start, 1.6e-3, 3.5)[0].imag

    assert vf(20.0) == pytest.approx(vf(50.0), rel=1e-4)
    assert vf(0.05) > 1.08 * vf(50.0)
    assert round(vf(0.05), 2) == 0.21
    king = _king_unbounded(f, 13.0, 0.005, 3.5, 0.8e-3, 1.6e-3)
    assert k0 / king.imag < 0.85 * vf(50.0)
    buried = {**BOG, "depth": "5 cm", "insulation_permittivity": 3.5, "ground": "moist loam"}
    ex = from_spec(buried).line(f)
    cf = from_spec({**buried, "line_model": "closed-form"}).line(f)
    assert ex.velocity_factor == pytest.approx(vf(0.05), rel=1e-6)
    assert cf.velocity_factor < 0.9 * ex.velocity_factor
    with pytest.raises(SpecError, match="depth"):
        from_spec({**buried, "depth": "1 mm"})


@pytest.mark.parametrize(
    "f, h, sigma, eps", [(1.83e6, 2.5, 0.005, 13), (1.83e6, 1.0, 0.001, 5), (7.1e6, 3.0, 0.005, 13)]
)
def test_the_secant_settles_on_the_plain_iterations_root(f, h, sigma, eps):
    # The mode is found by the secant method on g(gamma) - gamma (modal._settle); the plain iteration
    # gamma <- g(gamma), written out here, converges to the same root (8-27 steps on these wires, contraction
    # rates 0.05-0.4).
    from noisemodels.groundwave import complex_permittivity
    from snrgain.physics.ground import EPS0_F_PER_M, MU0_H_PER_M

    k0 = 2 * np.pi * f / C_M_PER_S
    omega = 2 * np.pi * f
    n2 = complex_permittivity(f, eps, sigma)
    z_int = complex(lines.wire_internal_impedance(f, A, 5.8e7))
    gamma = start = complex(0.02 * k0, 1.03 * k0)
    for _ in range(80):
        p, q = modal.earth_integrals(gamma, f, h, n2)
        lam = modal._image_term(gamma, k0, A, h)
        z = z_int + 1j * omega * MU0_H_PER_M / (2 * np.pi) * (lam + 2 * p)
        y = 2j * np.pi * omega * EPS0_F_PER_M / (lam + q)
        new = complex(np.sqrt(z * y))
        new = -new if new.imag < 0 else new
        if abs(new - gamma) < 1e-13 * abs(gamma):
            break
        gamma = new
    got = modal.wire_over_earth.__wrapped__(f, h, A, eps, sigma, z_int, start)
    assert got[0] == pytest.approx(new, rel=1e-11)
    assert got[1] == pytest.approx(z, rel=1e-11)
    assert got[2] == pytest.approx(y, rel=1e-11)


@pytest.mark.parametrize("sigma, eps", [(5.0, 80.0), (0.03, 20.0), (0.005, 13.0), (0.001, 5.0), (1e-4, 3.0)])
def test_newton_settles_on_the_secants_mode(sigma, eps):
    # Newton's steps with the integrals' slopes and the check rule (modal._settle) against the secant's path
    # finished on the fine rule (modal.wire_over_earth_secant, the solver before Newton): sea water to very dry
    # ground, 0.5-8 MHz, bare wires 0.3-12 m up and an insulated wire resting on the soil.  Measured over 1029
    # such wires (seven grounds, five heights, three radii, insulated wires on and over the soil): at most 6e-12
    # relative in gamma, Z' and Y' (the two rules' own difference where the check accepts the coarse root), and
    # the same wires without a settled mode.  1e-10 leaves room.
    g = _ground(sigma, eps)
    for f in (0.5e6, 3.6e6, 8.0e6):
        for h, a in ((0.3, 0.5e-3), (2.5, A), (12.0, 2e-3)):
            zi = complex(lines.wire_internal_impedance(f, a))
            start = complex(lines.overhead_wire(f, radius_m=a, height_m=h, ground=g, model="closed-form").gamma)
            args = (f, h, a, float(eps), float(sigma), zi, start)
            _same_mode(modal.wire_over_earth.__wrapped__(*args), modal.wire_over_earth_secant(*args))
        b = 1.6e-3
        start = lines.insulated_on_ground(
            f, radius_m=0.5e-3, insulation_radius_m=b, insulation_permittivity=2.3, ground=g, model="closed-form"
        ).gamma
        args = (f, b, 0.5e-3, float(eps), float(sigma), complex(lines.wire_internal_impedance(f, 0.5e-3)))
        args += (complex(start), b, 2.3)
        _same_mode(modal.wire_over_earth.__wrapped__(*args), modal.wire_over_earth_secant(*args))


def _same_mode(got, want):
    assert (got is None) == (want is None)
    if want is not None:
        for x, y in zip(got, want):
            assert abs(x - y) <= 1e-10 * abs(y)


@pytest.mark.parametrize("f, h, sigma, eps, offset", [(1.83e6, 2.5, 0.005, 13, 0.0), (7.1e6, 2e-3, 1e-4, 3, 1.6e-3)])
def test_the_integrals_slopes_are_their_derivatives(f, h, sigma, eps, offset):
    # The slopes Newton's steps use (modal._earth_sums, modal._image_slope) against central differences of the
    # values on the same rule (step 1e-6 |gamma|: agreement to about 1e-9 measured; the image term's slope loses
    # digits to cancellation where kappa0 r' is small, 3e-4 at 2 mm up, which only slows Newton's steps).
    from noisemodels.groundwave import complex_permittivity

    k0 = 2 * np.pi * f / C_M_PER_S
    n2 = complex_permittivity(f, eps, sigma)
    g = complex(0.03 * k0, 1.04 * k0)
    rule = modal._fixed_rule(g, f, h, n2, offset, modal.COARSE_NODES)
    p, q, dp, dq = modal._earth_sums(rule, g, k0, h, n2, slopes=True)
    assert (p, q) == modal._earth_on(rule, g, k0, h, n2)
    d = 1e-6 * abs(g)
    (pp, qp), (pm, qm) = modal._earth_on(rule, g + d, k0, h, n2), modal._earth_on(rule, g - d, k0, h, n2)
    assert abs(dp - (pp - pm) / (2 * d)) < 1e-7 * abs(dp)
    assert abs(dq - (qp - qm) / (2 * d)) < 1e-7 * abs(dq)
    lam, dlam = modal._image_slope(g, k0, 0.0008, h)
    assert lam == modal._image_term(g, k0, 0.0008, h)
    central = (modal._image_term(g + d, k0, 0.0008, h) - modal._image_term(g - d, k0, 0.0008, h)) / (2 * d)
    assert abs(dlam - central) < 1e-3 * abs(central)


def test_newton_finished_on_both_rules_is_the_check_rules_root(monkeypatch):
    # Near the root the coarse and check rules are evaluated together, and the check rule's root taken one step from
    # there (Halley's after Newton's first step, or Newton's near the end: modal._settle, finish).  Against the path
    # that steps on the coarse rule to its root and checks that on the check rule: measured within 6.3e-13 relative
    # over 1029 wires (seven grounds, seven frequencies 0.5-8 MHz, heights 0.3-12 m, three radii, insulated wires on
    # and over the soil; 1.0e-12 of the secant's path on the fine rule, the same wires without a mode).
    settle = modal._settle

    def without_finish(step, start, tol, plain_steps, step_slope=None, finish=None):
        return settle(step, start, tol, plain_steps, step_slope)

    for sigma, eps in ((0.005, 13.0), (0.001, 5.0), (0.03, 20.0)):
        g = _ground(sigma, eps)
        for f in (1.83e6, 3.6e6, 7.1e6):
            for h in (1.0, 2.5, 6.0):
                zi = complex(lines.wire_internal_impedance(f, A))
                start = complex(lines.overhead_wire(f, radius_m=A, height_m=h, ground=g, model="closed-form").gamma)
                args = (f, h, A, eps, sigma, zi, start)
                monkeypatch.setattr(modal, "_settle", settle)
                fast = modal.wire_over_earth.__wrapped__(*args)
                monkeypatch.setattr(modal, "_settle", without_finish)
                _same_mode(fast, modal.wire_over_earth.__wrapped__(*args))
    # the 250 m Beverage's wire: one coarse Newton step, then Halley's on both rules
    monkeypatch.setattr(modal, "_settle", settle)
    calls = []
    sums, curves = modal._earth_sums, modal._earth_curves
    monkeypatch.setattr(modal, "_earth_sums", lambda *a, **k: calls.append("sums") or sums(*a, **k))
    monkeypatch.setattr(modal, "_earth_curves", lambda *a, **k: calls.append("curves") or curves(*a, **k))
    f = 1.83e6
    g = _ground(0.005, 13.0)
    start = complex(lines.overhead_wire(f, radius_m=A, height_m=2.5, ground=g, model="closed-form").gamma)
    modal.wire_over_earth.__wrapped__(f, 2.5, A, 13.0, 0.005, complex(lines.wire_internal_impedance(f, A)), start)
    assert calls == ["sums", "curves"]


@pytest.mark.parametrize("f, h, sigma, eps, offset", [(1.83e6, 2.5, 0.005, 13, 0.0), (7.1e6, 2e-3, 1e-4, 3, 1.6e-3)])
def test_the_integrals_curvatures_are_their_slopes_derivatives(f, h, sigma, eps, offset):
    # Halley's step (modal._earth_curves, modal._image_curve) against central differences of the slopes on the same
    # rule (step 1e-4 |gamma|: about 1e-6 measured), and its values and slopes against modal._earth_sums.
    from noisemodels.groundwave import complex_permittivity

    k0 = 2 * np.pi * f / C_M_PER_S
    n2 = complex_permittivity(f, eps, sigma)
    g = complex(0.03 * k0, 1.04 * k0)
    pair = (modal.COARSE_NODES, modal.CHECK_NODES)
    rules = modal._rules_on(modal._earth_edges(-(g**2 + k0**2), k0, h, n2), pair, offset)
    lo = modal._rule_of(rules, pair, 0)[0].size
    first, (p, q, dp, dq, d2p, d2q) = modal._earth_curves(rules, g, k0, h, n2, lo)
    want = modal._earth_sums(rules, g, k0, h, n2, slopes=True)
    for got, ref in zip((*first, p, q, dp, dq), (*want[0][:2], *want[1])):
        assert abs(got - ref) < 1e-13 * abs(ref)
    d = 1e-4 * abs(g)
    up, down = (modal._earth_sums(rules, g + s, k0, h, n2, slopes=True)[1] for s in (d, -d))
    assert abs(d2p - (up[2] - down[2]) / (2 * d)) < 1e-4 * abs(d2p)
    assert abs(d2q - (up[3] - down[3]) / (2 * d)) < 1e-4 * abs(d2q)
    lam, dlam, d2lam = modal._image_curve(g, k0, 0.0008, h)
    assert (lam, abs(dlam - modal._image_slope(g, k0, 0.0008, h)[1]) < 1e-8 * abs(dlam)) == (
        modal._image_term(g, k0, 0.0008, h),
        True,
    )
    central = (modal._image_slope(g + d, k0, 0.0008, h)[1] - modal._image_slope(g - d, k0, 0.0008, h)[1]) / (2 * d)
    assert abs(d2lam - central) < 1e-4 * abs(d2lam)


@pytest.mark.parametrize("counts, offset", [((32, 48), 0.0), ((12, 24, 32), 1.6e-3)])
def test_a_rule_of_several_holds_each_rule_to_the_bit(counts, offset):
    # modal._rules_on builds its nodes from the standard ones made once (quadrature.stacked_rules): each rule taken
    # out of it (modal._rule_of) equals modal._rule_on's own rule on the same edges, bit for bit.
    edges = [0.0, 0.0039, 0.039, 0.06, 0.082, 0.6, 0.82, 8.0]
    rules = modal._rules_on(edges, counts, offset)
    for i, n in enumerate(counts):
        alone = modal._rule_on(edges, n, offset)
        for got, want in zip(modal._rule_of(rules, counts, i), alone):
            assert (got is None and want is None) or np.array_equal(got, want)


def test_the_fast_mode_is_the_reference_mode_over_a_broad_grid():
    # The mode the line model takes (modal.wire_over_earth: Newton's steps and Halley's finish on the coarse and
    # check rules) against the secant's path finished on the fine rule (modal.wire_over_earth_secant) over the wires
    # the tool models: bare wires 0.3-10 m up with three radii and insulated wires on and just over the soil, grounds
    # from 0.5 mS/m to sea water, 1.8-7.3 MHz.  The same wires have no settled mode on both paths (some insulated
    # wires resting on the soil), the rest agree within 1e-10 relative in gamma, Z' and Y' (measured 1.8e-11 over a
    # grid of 3680 such wires).
    grounds = ((5e-4, 3.0), (2e-3, 10.0), (5e-3, 13.0), (0.03, 20.0), (5.0, 80.0))
    freqs = (1.8e6, 3.8e6, 5.3e6, 7.3e6)
    none = 0
    for sigma, eps in grounds:
        g = _ground(sigma, eps)
        for f in freqs:
            for h in (0.3, 1.0, 2.5, 10.0):
                for a in (0.25e-3, A, 2.5e-3):
                    zi = complex(lines.wire_internal_impedance(f, a))
                    start = lines.overhead_wire(f, radius_m=a, height_m=h, ground=g, model="closed-form").gamma
                    args = (f, h, a, eps, sigma, zi, complex(start))
                    _same_mode(modal.wire_over_earth.__wrapped__(*args), modal.wire_over_earth_secant(*args))
            for a, b, eps_i in ((0.5e-3, 1.6e-3, 2.3), (0.4e-3, 1.0e-3, 3.5)):
                for h in (b, 0.02):
                    wire = {"radius_m": a, "insulation_radius_m": b, "insulation_permittivity": eps_i, "height_m": h}
                    start = lines.insulated_on_ground(f, **wire, ground=g, model="closed-form").gamma
                    args = (f, h, a, eps, sigma, complex(lines.wire_internal_impedance(f, a)), complex(start), b, eps_i)
                    got = modal.wire_over_earth.__wrapped__(*args)
                    _same_mode(got, modal.wire_over_earth_secant(*args))
                    none += got is None
    assert none > 0  # the grid holds wires without a settled mode too
