"""A short dipole's field over lossy ground (noisemodels.nearground) against the exact Sommerfeld integrals
(noisemodels.sommerfeld, evaluated with scipy.integrate) and against image theory on a perfect ground."""

import json
from pathlib import Path

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


REFERENCE = Path(__file__).parent / "nearground" / "reference.json"
BANDS = ((3.0, 10.0), (10.0, 30.0), (30.0, 100.0), (100.0, 1000.0), (1000.0, 40000.0))
# Largest |closed form - exact| [dB] per band of distance (3-10, 10-30, 30-100, 100-1000 m, 1-30 km) over the stored
# grid (tests/nearground/make_sommerfeld.py: 1.83 and 3.6 MHz, 5 mS/m eps 13 and 1 mS/m eps 5, source and
# observation heights 0-15 m), each component counted where it is over 10 % of the whole field.  Measured, then
# a margin of about 0.2 dB:
#   vertical dipole, whole field:      0.8  2.3  1.8  0.6  0.4
#   vertical dipole, vertical field:   0.7  3.1  1.9  0.6  0.5
#   vertical dipole, radial field:     4.8  3.8  2.0  1.1  0.3
#   horizontal dipole, whole field:    3.5  3.1  2.7  2.3  0.7
#   horizontal dipole, vertical:       8.0  4.3  3.1  6.6  0.8
#   horizontal dipole, radial:        12.3 13.2 11.8  2.5  0.1
#   horizontal dipole, across:         7.2  9.5  9.1  5.6  0.3
# The aim of 1 dB holds for a vertical source's whole field within 10 m and beyond 100 m, and for a
# horizontal one beyond 1 km; close
# in, the worst points are raised geometries near the quasi-static null of the vertical field (source 10 m up,
# 15 m away) and a horizontal dipole's horizontal field 10-100 m out (where its lateral waves are not in the
# closed form).
TOLERANCE_DB = {
    ("vertical", "total"): (1.0, 2.5, 2.0, 0.8, 0.6),
    ("vertical", "z"): (0.9, 3.3, 2.1, 0.8, 0.7),
    ("vertical", "rho"): (5.0, 4.0, 2.2, 1.3, 0.5),
    ("horizontal", "total"): (3.7, 3.3, 2.9, 2.5, 0.9),
    ("horizontal", "z"): (8.2, 4.5, 3.3, 6.8, 1.0),
    ("horizontal", "rho"): (12.5, 13.4, 12.0, 2.7, 0.3),
    ("horizontal", "phi"): (7.4, 9.7, 9.3, 5.8, 0.5),
}


def _reference_points():
    data = json.loads(REFERENCE.read_text())
    return data["grounds"], data["points"]


def _closed_form(p, grounds):
    eps, sig = grounds[p["ground"]]
    phi = p["phi"]
    # the reference's horizontal dipole lies along its x axis, phi from it: here its axis points east
    at = [[p["rho"] * np.cos(phi), p["rho"] * np.sin(phi), p["z"]]]
    e = ng.field(
        p["freq_hz"],
        at,
        source_height_m=p["h"],
        kind=p["kind"],
        axis_rad=np.pi / 2,
        permittivity=eps,
        conductivity_s_per_m=sig,
    )[0]
    c, s = np.cos(phi), np.sin(phi)
    return {"z": e[2], "rho": e[0] * c + e[1] * s, "phi": -e[0] * s + e[1] * c}


def test_closed_form_against_the_sommerfeld_integrals():
    grounds, points = _reference_points()
    assert len(points) == 2 * 2 * 2 * (15 * 8 + 4 * 3)
    worst: dict[tuple[str, str], list[float]] = {}
    for p in points:
        exact = {k: complex(*p[f"e_{k}"]) for k in ("z", "rho", "phi")}
        model = _closed_form(p, grounds)
        whole = np.sqrt(sum(abs(v) ** 2 for v in exact.values()))
        errs = {"total": _db(np.sqrt(sum(abs(v) ** 2 for v in model.values())), whole)}
        errs.update({k: _db(model[k], exact[k]) for k in exact if abs(exact[k]) > 0.1 * whole})
        band = next(i for i, (lo, hi) in enumerate(BANDS) if lo <= p["rho"] < hi)
        for comp, err in errs.items():
            w = worst.setdefault((p["kind"], comp), [0.0] * len(BANDS))
            w[band] = max(w[band], abs(err))
    for key, tol in TOLERANCE_DB.items():
        assert all(w <= t for w, t in zip(worst[key], tol)), (key, worst[key], tol)


@pytest.mark.parametrize("index", [0, 137, 300, 611, 1000])
def test_stored_reference_is_the_integrals(index):
    # A few stored points recomputed: the file is what noisemodels.sommerfeld gives (to 1e-6 relative).
    grounds, points = _reference_points()
    p = points[index]
    eps, sig = grounds[p["ground"]]
    e = sm.field(
        p["freq_hz"],
        eps,
        sig,
        kind=p["kind"],
        source_height_m=p["h"],
        rho_m=p["rho"],
        height_m=p["z"],
        phi_rad=p["phi"],
    )
    for k in ("z", "rho", "phi"):
        assert abs(e[k] - complex(*p[f"e_{k}"])) <= 1e-6 * max(abs(v) for v in e.values())


def test_far_out_the_field_is_nortons_surface_wave():
    # Published limit: on the ground far beyond the numerical distance 1, a vertical dipole's field is Norton's
    # surface wave 2 |F(w)| / R with |F| -> 1 / (2 |w|), so it falls as 1 / R^2: -19.1 dB from 10 to 30 km over
    # poor ground (1 mS/m, eps 5) at 3.6 MHz, where |w| is 48 to 145.  Checked on the stored Sommerfeld reference
    # (measured -19.2 dB; from 3 to 10 km, |w| 15 to 48, -21.3 dB: still steepening toward the law).  (ITU-R
    # P.368's curves show the same 1 / R^2 steepening beyond the numerical distance; recalled, not read off them.)
    grounds, points = _reference_points()
    sel = {
        p["rho"]: abs(complex(*p["e_z"]))
        for p in points
        if p["freq_hz"] == 3.6e6 and p["ground"] == "poor" and p["kind"] == "vertical" and p["h"] == 0 and p["z"] == 0
    }
    drop = _db(sel[30000.0], sel[10000.0])
    assert drop == pytest.approx(-20 * np.log10(3.0) * 2, abs=1.0)  # 1/R^2 over a factor of 3: -19.1 dB
