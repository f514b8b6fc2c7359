"""Placed noise sources: the ground-wave field against published forms, and wires that run past a source."""

import numpy as np
import pytest

import snrgain
from noisemodels import groundwave as gw
from snrgain.antennas import from_spec
from snrgain.errors import ScenarioError
from snrgain.model import placed
from snrgain.physics.ground import C_M_PER_S
from snrgain.sky.noise import LocalSource

F = 1.83e6
LAM = C_M_PER_S / F
LOAM = {"permittivity": 13.0, "conductivity_s_per_m": 0.005}


def test_norton_attenuation_function_series_and_asymptote():
    # F(w) = 1 - j sqrt(pi w) exp(-w) erfc(j sqrt w) (the definition noisemodels.groundwave implements).  With
    # z = j sqrt(w): small |w|, the power series of erf (NIST DLMF 7.6.1; Abramowitz and Stegun 7.1.5) gives
    # F = 1 - j sqrt(pi w) - 2 w + O(w^1.5); large |w|, the asymptotic expansion sqrt(pi) z exp(z^2) erfc z ~
    # 1 - 1/(2 z^2) + 3/(4 z^4) - ... (DLMF 7.12.1; A&S 7.1.23) gives F ~ -1/(2 w) - 3/(4 w^2).  Both follow from
    # the definition and the error function's published expansions, so they check the implementation (through
    # scipy's Faddeeva function) independently of it.  (Formerly cited to a text on ground waves from memory.)
    assert gw.attenuation(0.0) == pytest.approx(1.0)
    for w in (1e-4, 1e-3, 1e-2j, 2e-3 - 1e-3j):
        series = 1 - 1j * np.sqrt(np.pi * w) - 2 * w
        assert abs(gw.attenuation(w) - series) < 3 * abs(w) ** 1.5 + 1e-12
    for w in (50.0, 200.0, 80.0 - 40j):
        asym = -1 / (2 * w) - 3 / (4 * w**2)
        assert abs(gw.attenuation(w) - asym) < 5 * abs(w) ** -3


@pytest.mark.parametrize("p", [0.01, 0.1, 0.3, 1.0, 3.0, 10.0, 30.0, 100.0])
def test_norton_attenuation_for_real_numerical_distance_by_quadrature(p):
    # For real w = p (a highly conducting ground) erfc(j sqrt p) = 1 - (2j / sqrt(pi)) int_0^sqrt(p) exp(t^2) dt
    # (the definition of erf, DLMF 7.2.1, on the imaginary axis), so F(p) = 1 - 2 sqrt(p) exp(-p) int_0^sqrt(p)
    # exp(t^2) dt - j sqrt(pi p) exp(-p): an independent evaluation by plain quadrature (scipy.integrate.quad),
    # no Faddeeva function.  Tolerance 1e-9 (measured below 1e-15).
    from scipy.integrate import quad

    integral = quad(lambda t: np.exp(t * t - p), 0.0, np.sqrt(p), epsabs=1e-14, epsrel=1e-13)[0]
    expect = 1 - 2 * np.sqrt(p) * integral - 1j * np.sqrt(np.pi * p) * np.exp(-p)
    assert abs(gw.attenuation(p) - expect) < 1e-9


@pytest.mark.parametrize("p", [0.01, 0.1, 0.3, 1.0, 3.0, 10.0, 30.0, 100.0])
def test_norton_attenuation_near_a_recalled_handbook_fit(p):
    # A consistency check, not an independent one: the rational fit |F| ~ (2 + 0.3 p) / (2 + p + 0.6 p^2) is the
    # project's recollection of a handbook fit to Norton's curves for real p; it could not be verified against a
    # published source, so it counts for nothing beyond a sanity check (the independent check is the quadrature
    # above).  Measured: within 12.5 % (the worst at p = 10).
    assert abs(gw.attenuation(p)) == pytest.approx((2 + 0.3 * p) / (2 + p + 0.6 * p**2), rel=0.13)


def test_conducting_ground_numerical_distance_is_nortons_p():
    # sigma >> omega eps: w -> pi r / (lambda x), x = sigma / (omega eps0) (Norton's p for b = 0).
    n2 = gw.complex_permittivity(F, 1.0, 5.0)  # sea water-like: x about 4.9e4
    x = 5.0 / (2 * np.pi * F * gw.EPS0_F_PER_M)
    w = gw.numerical_distance(1000.0, F, n2)
    assert w.real == pytest.approx(np.pi * 1000.0 / (LAM * x), rel=1e-3) and abs(w.imag) < 1e-3 * w.real


def test_dipole_field_near_and_far():
    # Far out: the field falls as 1 / r times |F|: doubling the distance lowers the power by 6.02 dB plus the
    # change of the ground-wave attenuation (tests the far-field form; the induction term still adds 0.05 dB at
    # 2 km, 12 wavelengths).
    for r in (5e3, 10e3, 20e3):
        e1, e2 = (abs(gw.dipole_field(d, F, **LOAM)) for d in (r, 2 * r))
        f1, f2 = (
            abs(gw.attenuation(gw.numerical_distance(d, F, gw.complex_permittivity(F, 13.0, 0.005))))
            for d in (r, 2 * r)
        )
        assert 20 * np.log10(e2 / e1) == pytest.approx(-6.02 + 20 * np.log10(f2 / f1), abs=0.03)
        assert 20 * np.log10(f2 / f1) < -0.5  # the ground takes its share beyond the 1/r law
    # Close in (k r << 1) the quasi-static term 1 / (k^2 r^3) rules: r^-3, 60 dB per decade.
    k = 2 * np.pi / LAM
    for r in (1.0, 3.0):
        assert abs(gw.dipole_field(r, F, **LOAM)) == pytest.approx(1 / (k**2 * r**3), rel=0.02)
    # Over a perfect ground F = 1: the dipole's own field on the plane.
    assert abs(gw.dipole_field(10 * LAM, F, permittivity=None, conductivity_s_per_m=None)) == pytest.approx(
        1 / (10 * LAM), rel=0.01
    )


def _src(x, y, height=2.0, pol="vertical"):
    return LocalSource(
        "s", 0.0, float(np.radians(5.0)), 0.0, 60.0, position_m=(x, y), height_m=height, polarisation=pol
    )


BEV = {"family": "beverage", "length": "250 m", "height": "2 m", "bearing": 0, "ground": "moist loam"}


def _exact_field_vector(src, points_m, height_m, freq_hz, ground, *, kind):
    """placed.field_vector through the exact Sommerfeld integrals (noisemodels.sommerfeld): a vertical source."""
    from noisemodels import sommerfeld

    assert kind == "vertical"
    p = np.atleast_2d(np.asarray(points_m, dtype=float))
    z = np.broadcast_to(np.asarray(height_m, dtype=float), (len(p),))
    out = np.zeros((len(p), 3), dtype=complex)
    for i, ((x, y), zi) in enumerate(zip(p, z)):
        dx, dy = x - src.position_m[0], y - src.position_m[1]
        rho = float(np.hypot(dx, dy))
        e = sommerfeld.field(
            freq_hz,
            ground.permittivity,
            ground.conductivity_s_per_m,
            kind="vertical",
            source_height_m=src.height_m,
            rho_m=rho,
            height_m=float(zi),
        )
        out[i] = (e["rho"] * dx / rho, e["rho"] * dy / rho, e["z"])
    return out


@pytest.mark.parametrize(
    "where, height, tol_db",
    # measured (run-time field, the integrals by numpy, against the scipy reference): 0.000 dB in all three (15 m
    # abeam the middle, 2 m up; 30 m abeam, 6 m up; 40 m beyond the far end, 2 m up); the closed form before:
    # -0.17, -0.19 and -0.48 dB
    [((15.0, 125.0), 2.0, 0.05), ((30.0, 125.0), 6.0, 0.05), ((0.0, 290.0), 2.0, 0.05)],
)
def test_wire_beside_a_source_with_the_exact_field(monkeypatch, where, height, tol_db):
    # A Beverage driven by a near source: the line model's EMF is the field along the wire (and up its leads);
    # the run-time field (noisemodels.nearground) against the scipy Sommerfeld reference on the same 65 points.
    bev = from_spec(BEV)
    src = _src(*where, height=height)
    x = np.linspace(0.0, 250.0, 65)
    i_closed = placed.wire_feed_current(bev, src, F, (0.0, 0.0), bev.ground, x_m=x)
    monkeypatch.setattr(placed, "field_vector", _exact_field_vector)
    i_exact = placed.wire_feed_current(bev, src, F, (0.0, 0.0), bev.ground, x_m=x)
    assert abs(20 * np.log10(abs(i_closed) / abs(i_exact))) < tol_db


@pytest.mark.parametrize("where", [(15.0, 125.0), (-8.0, 40.0), (30.0, 260.0), (3.0, -20.0)])
def test_wire_pickup_matches_direct_integration(where):
    # The model's sampling against a direct integration on a ten-times finer grid (trapezoid rule, 40,001 points).
    bev = from_spec(BEV)
    src = _src(*where)
    i_model = placed.wire_feed_current(bev, src, F, (0.0, 0.0), bev.ground)
    fine = np.linspace(0.0, 250.0, 40_001)
    i_fine = placed.wire_feed_current(bev, src, F, (0.0, 0.0), bev.ground, x_m=fine)
    assert abs(i_model - i_fine) < 0.01 * abs(i_fine)


@pytest.mark.parametrize("az_deg", [0.0, 30.0, 120.0, 150.0, 180.0])
def test_far_source_is_the_plane_wave_pattern(az_deg):
    # 30 km away: the sampled pickup equals the closed-form realized gain toward that direction (the same line
    # model through its closed-form integrals), to 0.5 dB (measured: 0.03-0.4 dB).  Near the pattern's side nulls
    # (60 and 90 deg here, pickup below -30 dBi) they part by up to 1.7 dB: the ground wave runs along the wire
    # with slowness cos(dphi), the plane wave at the source's 5 deg elevation with cos(dphi) cos(5 deg).
    bev = from_spec(BEV)
    az = np.radians(az_deg)
    src = _src(30e3 * np.sin(az), 125.0 + 30e3 * np.cos(az))
    p = placed.received_power(bev, src, F, (0.0, 0.0), bev.ground)
    e = abs(placed.source_field(src, [[0.0, 125.0]], F, bev.ground)[0][0]) ** 2
    g = bev.gain_linear(F, np.array([az]), np.array([src.elevation_rad]))[0]
    assert 10 * np.log10(p / e) == pytest.approx(10 * np.log10(g), abs=0.5)


SCEN = """
[site]
name = "test lot"
latitude = 44.2
longitude = -71.3
ground = "moist loam"

[band]
frequency = "1.83 MHz"

[time]
months = [1]
utc_hours = [4]

[uncertainty]
ground = false
noise_deciles = false
local_sources = false

[[noise.local]]
name = "supply"
position = ["60 m", "30 m"]
{level}

[[target]]
name = "Europe"
bearing = 45
elevation = [10, 25]

[reference]
family = "vertical"
height = "40 m"

[[candidate]]
name = "near"
family = "vertical"
height = "6 m"
position = ["70 m", "30 m"]

[[candidate]]
name = "far"
family = "vertical"
height = "6 m"
position = ["-60 m", "150 m"]

[[candidate]]
name = "nowhere"
family = "vertical"
height = "6 m"
"""


def test_placed_source_in_a_scenario():
    r = snrgain.evaluate(SCEN.format(level='level = "S7"'))
    by = {c.name: c for c in [r.reference, *r.candidates]}
    # The reading on the reference is what the reference hears of the source.
    assert by["vertical"].noise_by_component_dbm["supply"].max() == pytest.approx(-85.0, abs=0.05)  # S7 = S9 - 12 dB
    assert by["near"].snr_gain_nominal_db[0] < by["far"].snr_gain_nominal_db[0] - 20
    # An antenna without a position stands at the reference: the old direction-only behaviour.
    old = snrgain.evaluate(
        SCEN.format(level='level = "S7"').replace('position = ["60 m", "30 m"]', "bearing = 63.43494882\nspread = 0")
    )
    new_nowhere = next(c for c in r.candidates if c.name == "nowhere").snr_gain_nominal_db[0]
    old_nowhere = next(c for c in old.candidates if c.name == "nowhere").snr_gain_nominal_db[0]
    assert new_nowhere == pytest.approx(old_nowhere, abs=0.3)


def test_fa_measured_elsewhere_is_carried_to_the_reference():
    # Fa 70 dB measured 10 m from the source: the reference, 67 m away, hears it much weaker than Fa 70 at its place.
    here = snrgain.evaluate(SCEN.format(level="fa = 70"))
    there = snrgain.evaluate(SCEN.format(level='fa = 70\nmeasured_at = ["60 m", "40 m"]'))
    n_here = here.reference.noise_by_component_dbm["supply"].max()
    n_there = there.reference.noise_by_component_dbm["supply"].max()
    assert n_there < n_here - 10


@pytest.mark.parametrize(
    "change, message",
    [
        ('position = ["60 m", "30 m"]', "exactly one of bearing"),
        ("position = [0.3, 0.2]", "at least 1 m away"),
        ("measured_at = [1, 1]", "measured_at goes with fa"),
        ("latitude = 44.3", "both latitude and longitude"),
        ('polarisation = "horizontal"', "orientation: a horizontal source needs"),
        ('polarisation = "both"', "orientation: a both source needs"),
    ],
)
def test_placed_source_bad_input(change, message):
    text = SCEN.format(level='level = "S7"')
    if change.startswith("position = [0.3"):
        text = text.replace('position = ["60 m", "30 m"]', change)
    elif change.startswith("position"):
        text = text.replace('name = "supply"\n', 'name = "supply"\nbearing = 10\n')
    else:
        text = text.replace('name = "supply"\n', f'name = "supply"\n{change}\n')
    with pytest.raises(ScenarioError, match=message):
        snrgain.evaluate(text)


def test_one_wire_at_many_places_equals_each_place_alone():
    # The layout search hears a placed source on one design at many feed points at once
    # (placed.wire_feed_currents); each must equal the single-feed computation exactly (same sample grid).
    import numpy as np

    from snrgain.antennas import from_si
    from snrgain.model import placed
    from snrgain.sky.noise import LocalSource

    bev = from_si("beverage", length=200.0, height=2.0, bearing=np.radians(45.0), ground="moist loam")
    src = LocalSource("supply", bearing_rad=0.0, position_m=(235.0, -20.0), height_m=2.0)
    feeds = np.array([[0.0, 0.0], [60.0, 90.0], [200.0, -10.0], [230.0, -15.0]])  # the last one close by
    batch = placed.wire_feed_currents(bev, src, 1.83e6, feeds, bev.ground)
    alone = [placed.wire_feed_current(bev, src, 1.83e6, f, bev.ground) for f in feeds]
    assert np.allclose(batch, alone, rtol=1e-12, atol=0)


def test_orientation_only_on_placed_sources():
    text = SCEN.format(level='level = "S7"').replace(
        'position = ["60 m", "30 m"]', 'bearing = 30\npolarisation = "horizontal"\norientation = 20'
    )
    with pytest.raises(ScenarioError, match="orientation goes with a placed source"):
        snrgain.evaluate(text)


@pytest.mark.parametrize("az_deg", [0.0, 40.0, 150.0])
def test_far_horizontal_source_gives_the_vertical_ones_ratios(az_deg):
    # 2 km away a horizontal dipole's ground wave off its ends is vertical, so the Beverage over a whip reads as for
    # a vertical source (the project's NEC-2 runs gave the two within 0.5 dB at 2 km; measured here with the axis
    # 20 deg off the line to the antennas: +0.18, +0.47 and -0.15 dB at 0, 40 and 150 deg).
    bev = from_spec(BEV)
    whip = from_spec({"family": "vertical", "height": "6 m", "ground": "moist loam"})
    az = np.radians(az_deg)
    pos = (2e3 * np.sin(az), 125.0 + 2e3 * np.cos(az))
    ratios = []
    for pol in ("vertical", "horizontal"):
        src = LocalSource(
            "s",
            0.0,
            float(np.radians(5.0)),
            0.0,
            60.0,
            position_m=pos,
            height_m=4.0,
            polarisation=pol,
            orientation_rad=az + np.radians(20.0),
        )
        ratios.append(
            placed.received_power(bev, src, F, (0.0, 0.0), bev.ground)
            / placed.received_power(whip, src, F, (0.0, 0.0), bev.ground)
        )
    assert 10 * np.log10(ratios[1] / ratios[0]) == pytest.approx(0.0, abs=0.5)


def test_horizontal_source_in_a_scenario():
    # A horizontal source with its orientation runs end to end; turned broadside to the vertical reference it gives
    # the reference no vertical field, so a level read there cannot place it (the check names the field).
    text = SCEN.format(level='level = "S7"').replace(
        'name = "supply"\n', 'name = "supply"\npolarisation = "horizontal"\norientation = 63.43494882\n'
    )
    r = snrgain.evaluate(text)
    assert np.isfinite(r.candidates[0].snr_gain_nominal_db[0])
    broadside = text.replace("orientation = 63.43494882", "orientation = 153.43494882")
    with pytest.raises(ScenarioError, match="picks up nothing"):
        snrgain.evaluate(broadside)
    # given as an Fa it is carried to the reference all the same: refused too (it was taken, every wire then hearing
    # it some 300 dB louder than the reference, +200 dBm of noise), naming the field
    as_fa = broadside.replace('level = "S7"', 'fa = "70 dB"')
    with pytest.raises(ScenarioError, match=r"\.fa: the reference antenna \(vertical\) picks up nothing"):
        snrgain.evaluate(as_fa)
    assert np.isfinite(snrgain.evaluate(as_fa.replace('"horizontal"', '"both"')).candidates[0].snr_gain_nominal_db[0])
    # a hair off broadside (0.035 deg: the reference 70 dB down in the source's null) is as deaf (a review: a candidate
    # was ranked 99 dB below the reference); 1.4 deg off (33 dB down) is heard
    for turned in ("153.4", "153.43"):
        with pytest.raises(ScenarioError, match="60 dB or more below what it would hear"):
            snrgain.evaluate(as_fa.replace("orientation = 153.43494882", f"orientation = {turned}"))
    snrgain.evaluate(as_fa.replace("orientation = 153.43494882", "orientation = 152"))


def _segment_whip(height="6 m", position=(0.0, 0.0)):
    """A whip read through its transmit currents on segments (the vertical family's ``transmit_segments``, the hook
    placed.received_amplitudes reads): it stands at a position (one without keeps the pattern reading)."""
    return from_spec({"family": "vertical", "height": height, "ground": "moist loam", "position": list(position)})


@pytest.mark.parametrize("az_deg", [0.0, 30.0, 150.0, 180.0])
def test_far_source_through_the_currents_gives_the_patterns_ratio(az_deg):
    # 30 km away, a Beverage (its line model driven by the whole field) over a whip read through its currents
    # (reciprocity) gives their patterns' ratio at the source's elevation.  Measured: -0.07 dB ahead, -0.19 dB at
    # 30 deg; in the rear, where the Beverage's pattern is 36-38 dB down, -0.30 dB at 150 deg and +0.32 dB at 180
    # (a ground wave runs along the wire with slowness cos(dphi), the 5-deg plane wave with cos(dphi) cos(5 deg)).
    bev = from_spec(BEV)
    whip = _segment_whip(position=(0.0, 125.0))
    az = np.radians(az_deg)
    src = _src(30e3 * np.sin(az), 125.0 + 30e3 * np.cos(az))
    got = placed.received_power(bev, src, F, (0.0, 0.0), bev.ground) / placed.received_power(
        whip, src, F, (0.0, 125.0), bev.ground
    )
    el = np.array([src.elevation_rad])
    expect = bev.gain_linear(F, np.array([az]), el)[0] / whip.gain_linear(F, np.array([az]), el)[0]
    assert 10 * np.log10(got / expect) == pytest.approx(0.0, abs=0.35 if az_deg >= 150.0 else 0.3)


def test_whip_through_its_currents_against_the_exact_field(monkeypatch):
    # A source 10 m up, 15 m from a 6 m whip (a raised source close in, where the old slant-distance field overstated
    # the whip by 7.7-8.8 dB against NEC-2): the reciprocity voltage with the run-time field against the same
    # with the scipy Sommerfeld reference up the whip.  Measured: 0.00 dB apart (the run-time field is the same
    # integrals by numpy, noisemodels.halfspace; the closed form it replaced within 3 km was 2.10 dB low here, its
    # vertical field 2-3 dB low near the quasi-static null); the pattern reading at the soil (its vertical field now
    # exact too) comes out 0.86 dB high (1.00 dB low with the closed form).
    whip = _segment_whip()
    plain = from_spec({"family": "vertical", "height": "6 m", "ground": "moist loam"})
    src = _src(15.0, 0.0, height=10.0)
    ground = whip.ground
    p_closed = placed.received_power(whip, src, F, (0.0, 0.0), ground)  # the run-time field
    p_pattern = placed.received_power(plain, src, F, (0.0, 0.0), ground)
    monkeypatch.setattr(placed, "field_vector", _exact_field_vector)
    p_exact = placed.received_power(whip, src, F, (0.0, 0.0), ground)
    assert 10 * np.log10(p_closed / p_exact) == pytest.approx(0.0, abs=0.05)
    assert 10 * np.log10(p_pattern / p_exact) == pytest.approx(0.86, abs=0.3)
