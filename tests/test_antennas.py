"""Antenna families: textbook values, invariants, the tabulated reader, bad input."""

import numpy as np
import pytest

from snrgain.antennas import FAMILIES, SpecError, from_spec
from snrgain.physics.ground import C_M_PER_S

F = 1.83e6
QUARTER = C_M_PER_S / F / 4


def test_short_monopole_perfect_ground_4_77_dbi():
    # Short monopole over perfect ground: directivity 3 (1.5 doubled), 4.77 dBi (Kraus, Antennas, 2nd ed.).
    a = from_spec({"family": "vertical", "height": "0.5 m", "ground": "perfect", "ground_loss": 0})
    assert a.gain_dbi(F, 0.0, 0.0) == pytest.approx(10 * np.log10(3.0), abs=0.01)


def test_quarter_wave_monopole_5_15_dbi_and_36_ohm():
    # Quarter-wave monopole over perfect ground: 5.15 dBi and about 36.5 ohm (textbook: half-wave dipole
    # 2.15 dBi + 3 dB, 73 ohm / 2).
    a = from_spec({"family": "vertical", "height": f"{QUARTER} m", "ground": "perfect", "ground_loss": 0})
    assert a.gain_dbi(F, 123.0, 0.0) == pytest.approx(5.15, abs=0.02)
    assert a.radiation_resistance_ohm(F) == pytest.approx(36.5, abs=0.3)


def test_vertical_is_omnidirectional_and_vertical_polarized():
    a = from_spec({"family": "vertical", "height": "20 m", "ground": "moist loam"})
    g = a.gain_dbi(F, np.arange(0, 360, 30), 15.0)
    assert np.ptp(g) < 1e-9
    gv, gh = a.partial_gains_dbi(F, 0.0, 15.0)
    assert np.isneginf(gh)


def test_vertical_over_real_ground_null_at_horizon():
    # R_v -> -1 at grazing incidence: the direct and reflected rays cancel at the horizon over finite ground.
    a = from_spec({"family": "vertical", "height": "20 m", "ground": "moist loam"})
    assert np.isneginf(a.gain_dbi(F, 0.0, 0.0)) or a.gain_dbi(F, 0.0, 0.0) < -60


def test_ground_loss_lowers_gain_by_efficiency():
    # A quarter-wave vertical's base radiation resistance is 36.5 ohm (half the half-wave dipole's 73 ohm; Balanis,
    # "Antenna Theory", Section 4.6), so 20 ohm of ground loss costs 10 log10(56.5 / 36.5) = 1.90 dB of gain in
    # every direction.  Tolerance 0.02 dB: the textbook's 36.5 ohm is rounded (the model's sinusoidal current gives
    # 36.54 ohm).  The efficiency the model reports is the same ratio.
    h = f"{QUARTER} m"
    lossless = from_spec({"family": "vertical", "height": h, "ground": "moist loam", "ground_loss": 0})
    lossy = from_spec({"family": "vertical", "height": h, "ground": "moist loam", "ground_loss": "20 ohm"})
    for el in (5.0, 20.0, 60.0):
        diff = lossless.gain_dbi(F, 0, el) - lossy.gain_dbi(F, 0, el)
        assert diff == pytest.approx(10 * np.log10(56.5 / 36.5), abs=0.02)
    assert -10 * np.log10(lossy.efficiency(F)) == pytest.approx(10 * np.log10(56.5 / 36.5), abs=0.02)


def test_gain_zero_below_horizon_every_family(tmp_path):
    csv = tmp_path / "p.csv"
    _write_table(csv, lambda az, el: np.zeros_like(az))
    for spec in (
        {"family": "isotropic"},
        {"family": "vertical", "height": "10 m"},
        {"family": "tabulated", "file": str(csv)},
    ):
        a = from_spec(spec)
        assert np.all(np.isneginf(a.gain_dbi(F, [0, 90], [-1, -30])))


def test_isotropic_zero_dbi():
    a = from_spec({"family": "isotropic"})
    np.testing.assert_allclose(a.gain_dbi(F, [0, 77, 300], [0, 45, 89]), 0.0)


def _write_table(path, fn, *, step=5, polar=False):
    az = np.arange(0, 360, step, dtype=float)
    el = np.arange(0, 90.1, step, dtype=float)
    lines = ["# test table", "azimuth_deg,elevation_deg," + ("gain_v_dbi,gain_h_dbi" if polar else "gain_dbi")]
    for a in az:
        for e in el:
            g = fn(np.array(a), np.array(e))
            lines.append(f"{a},{e},{g},{g - 3}" if polar else f"{a},{e},{g}")
    path.write_text("\n".join(lines) + "\n")


def test_tabulated_reproduces_grid_points_and_interpolates(tmp_path):
    f = lambda az, el: -10 + 5 * np.cos(np.radians(az)) - 0.1 * el  # noqa: E731  (linear in el, smooth in az)
    csv = tmp_path / "t.csv"
    _write_table(csv, f)
    a = from_spec({"family": "tabulated", "file": str(csv)})
    assert a.gain_dbi(F, 30.0, 20.0) == pytest.approx(f(30.0, 20.0), abs=1e-9)
    # Between grid points in elevation the linear function is reproduced exactly.
    assert a.gain_dbi(F, 30.0, 22.5) == pytest.approx(f(30.0, 22.5), abs=1e-9)
    # Periodic in azimuth: 357.5 deg lies between 355 and 0 (=360).
    assert a.gain_dbi(F, 357.5, 10.0) == pytest.approx(0.5 * (f(355.0, 10.0) + f(0.0, 10.0)), abs=1e-9)


def test_tabulated_rotate(tmp_path):
    csv = tmp_path / "t.csv"
    _write_table(csv, lambda az, el: -10 + 5 * np.cos(np.radians(az)))
    a = from_spec({"family": "tabulated", "file": str(csv), "rotate": 90})
    assert a.gain_dbi(F, 90.0, 10.0) == pytest.approx(-5.0, abs=1e-9)
    assert a.gain_dbi(F, 270.0, 10.0) == pytest.approx(-15.0, abs=1e-9)


def test_tabulated_polarizations_sum(tmp_path):
    csv = tmp_path / "t.csv"
    _write_table(csv, lambda az, el: np.full_like(az, -6.0), polar=True)
    a = from_spec({"family": "tabulated", "file": str(csv)})
    expect = 10 * np.log10(10**-0.6 + 10**-0.9)
    assert a.gain_dbi(F, 10, 10) == pytest.approx(expect, abs=1e-9)


@pytest.mark.parametrize(
    "content, match",
    [
        ("azimuth_deg,elevation_deg,gain\n0,0,1\n", "unknown column"),
        ("azimuth_deg,gain_dbi\n0,1\n", "elevation_deg"),
        ("azimuth_deg,elevation_deg,gain_dbi\n0,0,1\n0,90,1\n90,0,x\n90,90,1\n", "line 4: not a finite number"),
        ("azimuth_deg,elevation_deg,gain_dbi\n0,0,1\n0,90,nan\n90,0,1\n90,90,1\n", "line 3: not a finite number"),
        ("azimuth_deg,elevation_deg,gain_dbi\n0,0,1\n0,90,1\n90,0,1\n", "complete grid"),
        ("azimuth_deg,elevation_deg,gain_dbi\n0,0,1\n0,45,1\n90,0,1\n90,45,1\n", "cover 0 to 90"),
        ("# only a comment\n", "no header"),
    ],
)
def test_tabulated_bad_files_name_the_problem(tmp_path, content, match):
    csv = tmp_path / "bad.csv"
    csv.write_text(content)
    with pytest.raises(SpecError, match=match) as exc:
        from_spec({"family": "tabulated", "file": str(csv)})
    assert "bad.csv" in str(exc.value)


def test_tabulated_missing_file():
    with pytest.raises(SpecError, match="cannot read the pattern file"):
        from_spec({"family": "tabulated", "file": "/nonexistent/x.csv"})


def test_spec_errors_name_field_value_and_range():
    with pytest.raises(SpecError) as exc:
        from_spec({"family": "vertical", "height": "-3 ft", "colour": "red"})
    msg = str(exc.value)
    assert "height" in msg and '"-3 ft"' in msg and "between 0.05 m and 300 m" in msg
    assert "colour: unknown key" in msg


def test_unknown_family_lists_choices():
    with pytest.raises(SpecError, match="'isotropic'.*'vertical'"):
        from_spec({"family": "verticle"})


def test_bare_number_length_rejected():
    with pytest.raises(SpecError, match="bare number is ambiguous"):
        from_spec({"family": "vertical", "height": 20})


def test_vertical_too_tall_for_model():
    a = from_spec({"family": "vertical", "height": "45 m"})
    with pytest.raises(ValueError, match="wavelengths"):
        a.check_frequency(7.1e6)


def test_registry_has_issue_families():
    assert {"isotropic", "vertical", "tabulated"} <= set(FAMILIES)


def test_distinct_matches_numpy_unique():
    from snrgain.antennas.geometry import distinct

    rng = np.random.default_rng(3)
    for v in (
        np.sort(rng.integers(0, 10, 200)).astype(float),
        np.sort(rng.random(50))[::-1],
        rng.integers(0, 7, 100).astype(float),
        np.array([2.0]),
    ):
        u, inv = distinct(v)
        u_ref, inv_ref = np.unique(v, return_inverse=True)
        np.testing.assert_array_equal(np.sort(u), u_ref)
        np.testing.assert_array_equal(u[inv], v)


def test_direction_geometry_is_never_stale():
    # The cache keeps the last direction sets; an array changed in place must give its new geometry.
    from snrgain.antennas.geometry import direction_geometry

    az = np.radians(np.arange(0.0, 360.0, 10.0))
    el = np.full_like(az, 0.3)
    first = direction_geometry(az, el)
    assert direction_geometry(az.copy(), el.copy()) is first  # equal content: a hit
    az[0] = 1.0
    again = direction_geometry(az, el)
    assert again is not first and again.cos_az[0] == pytest.approx(np.cos(1.0))
    bev = from_spec({"family": "beverage", "length": "200 m", "height": "2.5 m", "ground": "moist loam"})
    g1 = bev.gain_linear(1.83e6, az, el)
    az += 0.5  # in place, same object
    g2 = bev.gain_linear(1.83e6, az, el)
    fresh = bev.gain_linear(1.83e6, az.copy() + 0.0, el.copy())
    np.testing.assert_array_equal(g2, fresh)
    assert not np.allclose(g1, g2)
    # The cache's key samples a set's values; a change between the sampled ones is caught by the full comparison.
    big_az, big_el = np.meshgrid(np.radians(np.arange(0.0, 360.0, 2.0)), np.radians(np.arange(1.0, 90.0, 2.0)))
    big_az, big_el = big_az.ravel(), big_el.ravel()
    one = direction_geometry(big_az, big_el)
    other_el = big_el.copy()
    other_el[1001] = 0.25  # not among the sampled values (every 126th)
    two = direction_geometry(big_az, other_el)
    assert two is not one and 0.25 in two.el_u and 0.25 not in one.el_u


def test_library_edges_are_refused_naming_the_argument():
    # Issue 28's library edges: a zero, NaN or array frequency, NaN directions, numpy scalars into from_si, and no
    # numpy warning leaking from a null (below the horizon the gain is 0 and reads -inf dBi, quietly).
    import warnings

    import numpy as np
    import pytest

    from snrgain.antennas import from_si

    v = from_si("vertical", height=np.float32(18.0))
    assert v.params.height == pytest.approx(18.0)
    for bad, says in ((0.0, "freq_hz"), (float("nan"), "freq_hz"), (np.array([1.8e6, 3.5e6]), "one at a time")):
        with pytest.raises(ValueError, match=says):
            v.gain_dbi(bad, 0.0, 10.0)
    with pytest.raises(ValueError, match="elevation_deg"):
        v.gain_dbi(1.83e6, 0.0, float("nan"))
    with pytest.raises(ValueError, match="azimuth_deg"):
        v.gain_dbi(1.83e6, [0.0, float("inf")], 10.0)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert v.gain_dbi(1.83e6, 0.0, -10.0) == -np.inf
        assert np.isfinite(v.gain_dbi(np.float32(1.83e6), 0.0, 10.0))


def test_phased_verticals_elements_take_the_arrays_diameter():
    # The elements' solved currents (read by near sources) use the array's conductor diameter.
    a = from_spec(
        {
            "family": "phased-verticals",
            "positions": [[0, 0], [0, 20]],
            "height": "6 m",
            "diameter": "40 mm",
            "steering": "given",
            "phases": [0, 90],
            "phase_sense": "lag",
            "ground": "moist loam",
        }
    )
    assert [e.radius_m for e in a.elements] == [0.02, 0.02]


QUARTER_183 = C_M_PER_S / 1.83e6 / 4


@pytest.mark.parametrize(
    "positions, exponentials",
    [
        ([[0, 0], [QUARTER_183, 0], [0, QUARTER_183], [QUARTER_183, QUARTER_183]], 2),  # four-square, square
        ([[100, -250], [120, -250], [100, -230], [120, -230]], 3),  # the same off the origin: a reference phase
        ([[0, 20], [20 + 1e-12, 0], [0, -20], [-20, 0]], 2),  # diamond, one offset 1 pm off (one offset all the same)
        ([[0, 0], [0, 41]], None),  # a pair: one exponential, one per element
        ([[3, 4], [5, 6], [7, 1]], None),  # nothing shared: one per element
        ([[0, 0]], None),
    ],
)
def test_position_factor_is_the_weighted_sum_of_position_phases(positions, exponentials):
    """The array factor sum_i a_i exp(j (kx x_i + ky y_i)) with the fewest exponentials
    (snrgain.antennas.array.position_factor) against the sum written out; and how many it takes."""
    from snrgain.antennas.array import _factor_plan, position_factor

    rng = np.random.default_rng(7)
    kx, ky = rng.normal(size=300) * 0.04, rng.normal(size=300) * 0.04  # wave numbers at 1.8 MHz, any direction
    amps = rng.normal(size=len(positions)) + 1j * rng.normal(size=len(positions))
    direct = sum(a * np.exp(1j * (kx * x + ky * y)) for a, (x, y) in zip(amps, positions))
    np.testing.assert_allclose(position_factor(amps, positions, kx, ky), direct, rtol=0, atol=1e-9)
    x0, y0, xs, ys, terms = _factor_plan(tuple(map(tuple, np.asarray(positions, dtype=float))))
    if exponentials is None:
        assert terms is None
    else:
        assert len(xs) + len(ys) + (x0 != 0 or y0 != 0) == exponentials


@pytest.mark.parametrize(
    "element",
    [
        {"family": "vertical", "height": "6 m", "ground": "moist loam"},
        {"family": "small-loop", "width": "2 m", "loop_height": "2 m", "height": "3 m", "ground": "moist loam"},
    ],
)
def test_array_gain_is_its_complex_response_squared(element):
    """An array of identical elements takes its gain from |element|^2 |array factor|^2 (no complex product, for a
    vertical on the distinct elevations): the same as the weighted sum of each element's own response, below the
    horizon too."""
    q = QUARTER_183
    spec = {
        "family": "array",
        "elements": [{**element, "position": [x, y]} for x, y in ((0, 0), (q, 0), (0, q), (q, q))],
        "steering": "given",
    }
    spec["elements"] = [{**e, "phase": p} for e, p in zip(spec["elements"], (0, 90, 90, 180))]
    spec["phase_sense"] = "lag"
    ant = from_spec(spec)
    az = np.radians(np.linspace(0, 358, 180))[:, None] * np.ones((1, 7))
    el = np.radians(np.array([-10, 0, 1, 10, 30, 60, 90]))[None, :] * np.ones((180, 1))
    gv, gh = ant.partial_gains(1.83e6, az, el)
    # the general path: each element's own response with its position phase, weighted, over the combiner's norm
    w = ant.weights_at(1.83e6)
    rv, rh = ant.element_responses(1.83e6, az, el)
    norm = float(np.real(w.conj() @ ant.norm_matrix(1.83e6) @ w))
    ev, eh = (np.einsum("i,i...->...", w, r) / np.sqrt(norm) for r in (rv, rh))
    tiny = 1e-12 * float(np.max(gv))  # near the nulls the two sums cancel in a different order
    np.testing.assert_allclose(gv, np.abs(ev) ** 2, rtol=1e-10, atol=tiny)
    np.testing.assert_allclose(gh, np.abs(eh) ** 2, rtol=1e-10, atol=tiny)
    assert np.all(gv[:, 0] == 0) and np.max(gv) > 0


def test_a_tall_verticals_message_names_top_loading_only_where_there_is_some():
    # a reviewer read "plus 0 ft (0 m) of top loading" on a plain vertical
    from snrgain.antennas import from_si

    with pytest.raises(ValueError) as plain:
        from_si("vertical", height=60.0).check_frequency(7.1e6)
    assert str(plain.value).startswith("height: 60 m is 1.42 wavelengths") and "top loading" not in str(plain.value)
    with pytest.raises(ValueError) as loaded:
        from_si("vertical", height=30.0, top_loading=20.0).check_frequency(7.1e6)
    assert "height: 30 m, plus 20 m of top loading, is 1.18 wavelengths" in str(loaded.value)
