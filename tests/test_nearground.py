"""A short dipole's field over lossy ground (noisemodels.nearground) against the exact Sommerfeld integrals
(noisemodels.sommerfeld, evaluated with scipy.integrate) and against image theory on a perfect ground."""

import numpy as np
import pytest

from noisemodels import nearground as ng
from noisemodels import sommerfeld as sm
from noisemodels.constants import C_M_PER_S

LOAM = (13.0, 0.005)  # moist loam: eps_r 13, 5 mS/m
POOR = (5.0, 0.001)  # poor ground: eps_r 5, 1 mS/m


def _db(a, b):
    return 20 * np.log10(abs(a) / abs(b))


@pytest.mark.parametrize("rho, zeta", [(3.0, 0.0), (10.0, 2.0), (30.0, 0.5), (7.0, 12.0)])
def test_reference_laplace_transforms_by_quadrature(rho, zeta):
    # The closed forms the reference adds back (Gradshteyn and Ryzhik 6.611.1, 6.621.1 and derivatives), checked
    # by plain quadrature with a small damping where zeta = 0 (int of lambda^n J_m(lambda rho) e^{-lambda zeta}).
    from scipy.integrate import quad
    from scipy.special import jv

    z = max(zeta, 0.3)
    got = sm._laplace(rho, z)
    for key, (m, n) in {"0,0": (0, 0), "0,2": (0, 2), "1,0": (1, 0), "1,1": (1, 1), "1,2": (1, 2)}.items():
        val = quad(lambda t, m=m, n=n: t**n * jv(m, t * rho) * np.exp(-t * z), 0, 60 / z, limit=4000)[0]
        assert got[key] == pytest.approx(val, rel=1e-6, abs=1e-9)


def test_perfect_ground_is_image_theory():
    # A perfect ground: the field is the dipole's and its image's (a vertical dipole's image upright, a
    # horizontal one's reversed) -- exact.  Over a very good conductor the lossy forms must tend to it: R_v -> 1,
    # R_h -> -1, K -> 1, F(w) -> 1.  Within 0.05 dB on every component above 1 % of the field at 1e5 S/m
    # (measured 0.023 dB; at 1000 S/m 0.22 dB, a horizontal field 0.4 m up at 350 m: the difference falls as
    # 1 / sqrt(sigma), so it is the finite conductivity, not a defect).
    f = 1.83e6
    rng = np.random.default_rng(7)
    pts = np.column_stack([rng.uniform(-300, 300, 40), rng.uniform(-300, 300, 40), rng.uniform(0, 15, 40)])
    for kind, h in (("vertical", 0.0), ("vertical", 8.0), ("horizontal", 6.0)):
        perfect = ng.field(f, pts, source_height_m=h, kind=kind, axis_rad=0.3)
        k = 2 * np.pi * f / C_M_PER_S
        p = np.array([0, 0, 1.0]) if kind == "vertical" else np.array([np.sin(0.3), np.cos(0.3), 0.0])
        img = np.array([-p[0], -p[1], p[2]])
        expect = np.array(
            [
                sm.direct_field(p, q - np.array([0, 0, h]), k) + sm.direct_field(img, q + np.array([0, 0, h]), k)
                for q in pts
            ]
        )
        np.testing.assert_allclose(perfect, expect, rtol=1e-9, atol=1e-15)
        metal = ng.field(f, pts, source_height_m=h, kind=kind, axis_rad=0.3, permittivity=1.0, conductivity_s_per_m=1e5)
        big = np.abs(expect) > 0.01 * np.linalg.norm(expect, axis=1, keepdims=True)
        assert np.max(np.abs(_db(metal[big], expect[big]))) < 0.05


def test_reference_tends_to_image_theory_over_a_good_conductor():
    # The Sommerfeld reference itself over 1 S/m (|n| about 100 at 1.83 MHz) at short range: image theory within
    # 0.3 dB on the vertical field (the ground's finite conductivity is all that separates them).
    f = 1.83e6
    k = 2 * np.pi * f / C_M_PER_S
    for kind, h, z, rho in (
        ("vertical", 3.0, 1.0, 10.0),
        ("vertical", 6.0, 2.0, 100.0),
        ("horizontal", 3.0, 1.0, 10.0),
    ):
        e = sm.field(f, 10.0, 1.0, kind=kind, source_height_m=h, rho_m=rho, height_m=z, phi_rad=0.7)
        p = np.array([0, 0, 1.0]) if kind == "vertical" else np.array([1.0, 0, 0])
        rel = np.array([rho * np.cos(0.7), rho * np.sin(0.7), z])
        img = sm.direct_field(np.array([-p[0], -p[1], p[2]]), rel + [0, 0, h], k)
        expect = sm.direct_field(p, rel - [0, 0, h], k) + img
        assert abs(_db(e["z"], expect[2])) < 0.3
