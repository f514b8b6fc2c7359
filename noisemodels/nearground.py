"""The field of a short vertical or horizontal electric dipole over flat lossy ground, from a few metres out.

A noise source on the lot (a supply, a lamp, an inverter on a roof) is a small radiator at height h; the field
wanted is at a point at height z, horizontal distance rho, over a homogeneous earth of complex relative
permittivity n^2 = eps_r - j sigma / (omega eps0) (phasors exp(+j omega t)).  Vectorised:

    E = E_direct + E_ground

- E_direct: the exact field of the dipole in free space (radiation, induction and quasi-static terms; e.g.
  C. A. Balanis, "Antenna Theory", 3rd ed. (2005), eqs. (4-10) and (4-26), in vector form).
- E_ground within RHO_MAX_M (3 km) horizontally: the exact Sommerfeld integrals of the ground's part
  (:mod:`noisemodels.halfspace`: numpy quadrature with the large-wavenumber part subtracted in closed form,
  tabulated per frequency, ground and kind and interpolated; within 0.05 dB of the scipy reference
  :mod:`noisemodels.sommerfeld` on every component over 10 % of the field, tests/test_nearground.py).
- E_ground beyond 3 km: the closed form below (within 0.6 dB of the integrals at 3-30 km, the same test; it is
  1-13 dB out close in, which is why the integrals are used there):

    E_ground = E_image,near + E_image,TM + E_image,TE

- The image: the perfect-ground image (a vertical dipole's image upright, a horizontal one's reversed) at depth
  h.  Its quasi-static term is weighted by the quasi-static image coefficient K = (n^2 - 1) / (n^2 + 1)
  (the near zone of a dipole over a conducting half-space: P. R. Bannister's quasi-static image theory, e.g.
  "Extension of quasi-static range finite conductivity earth image theory techniques to other ranges", IEEE
  Trans. AP-26 (1978) 507; cited from memory); so is a vertical dipole's induction term (its charges' image),
  while a horizontal dipole's induction term keeps the perfect image (the choice the Sommerfeld comparison
  favours: measured, not derived).
- Its radiation term, split into the part polarised in the plane of incidence (TM) and across it (TE), is
  weighted as in Norton's form for elevated terminals (K. A. Norton, Proc. IRE 24 (1936) 1367 and 25 (1937)
  1203; J. R. Wait, IEEE Antennas Propag. Mag. 40(5) (1998) 7-24):

      TM: R_v a(psi) + (1 - R_v) F(w_v) a_p,      TE: -[R_h + (1 - R_h) F(w_h)] b,

  R_v, R_h the Fresnel coefficients at the image ray's elevation psi (R_v -> +1, R_h -> -1 on a perfect ground),
  Delta_v = sqrt(n^2 - cos^2 psi) / n^2 and Delta_h = sqrt(n^2 - cos^2 psi), Norton's numerical distance
  w = -j (k R2 / 2) (sin psi + Delta)^2 and attenuation function F(w) (:func:`noisemodels.groundwave.attenuation`).
  a(psi) is the image's TM amplitude, a_p the same with sin psi set to its value at the pole of R_v,
  sin psi = -Delta_v (the uniform asymptotic evaluation keeps the pattern at the pole in the surface-wave term:
  it is what lets a horizontal dipole on the ground launch a vertical ground wave, Delta_v times a vertical
  dipole's), b the TE amplitude.

The tests compare both with the exact Sommerfeld integrals (:mod:`noisemodels.sommerfeld`) over 3 m to 30 km,
heights 0 to 15 m, two grounds and two frequencies, and with image theory on a perfect ground (``permittivity``
None: image theory, exact).

Normalisation: by -j omega mu0 I l / (4 pi), so a free-space dipole's broadside far field is exp(-j k R) / R
(a vertical dipole on a perfect ground far away: 2 / R).  Fields are returned as (east, north, up) components.
"""

from __future__ import annotations

import numpy as np

from noisemodels import halfspace
from noisemodels.constants import C_M_PER_S
from noisemodels.groundwave import attenuation, complex_permittivity


def _dipole_terms(p: np.ndarray, rel: np.ndarray, k: float, static: complex = 1.0):
    """(radiation, near) parts of a short dipole's field (N, 3): p (3,) or (N, 3) unit moment, rel (N, 3)."""
    r = np.linalg.norm(rel, axis=-1)
    rh = rel / r[:, None]
    pr = np.einsum("ni,ni->n", np.broadcast_to(p, rel.shape), rh)
    jkr = 1j * k * r
    g = np.exp(-jkr) / r
    trans = np.broadcast_to(p, rel.shape) - pr[:, None] * rh
    near_t = 1 / jkr + static / jkr**2
    rad = g[:, None] * trans
    near = g[:, None] * (trans * near_t[:, None] - 2 * near_t[:, None] * pr[:, None] * rh)
    return rad, near


def field(
    freq_hz: float,
    rel_m,
    *,
    source_height_m: float,
    kind: str = "vertical",
    axis_rad: float = 0.0,
    permittivity: float | None = None,
    conductivity_s_per_m: float | None = None,
) -> np.ndarray:
    """E (N, 3) complex [east, north, up] at points ``rel_m`` (N, 3): [east, north, height above the soil] of
    each point relative to the source's foot, from a short dipole at ``source_height_m``: ``kind`` "vertical" or
    "horizontal" (its axis at compass bearing ``axis_rad``).  ``permittivity`` None: a perfect ground.
    Normalised as the module docstring says."""
    ground = None if permittivity is None else (permittivity, conductivity_s_per_m)
    return field_grounds(freq_hz, rel_m, [ground], source_height_m=source_height_m, kind=kind, axis_rad=axis_rad)[0]


def field_grounds(
    freq_hz: float, rel_m, grounds, *, source_height_m: float, kind: str = "vertical", axis_rad: float = 0.0
) -> np.ndarray:
    """:func:`field` at the same points over each of several grounds: (G, N, 3), ``grounds`` a sequence of
    (permittivity, conductivity [S/m]) or None (a perfect ground).  What does not depend on the ground (the checks,
    the direct wave, the points' distances and the tables' interpolation geometry) is worked once for all of them
    (a ground spread's nine grounds); each ground's values are those :func:`field` gives alone, to the bit."""
    rel = np.atleast_2d(np.asarray(rel_m, dtype=float))
    if rel.shape[-1] != 3:
        raise ValueError("points must be [east, north, height] triples")
    h = float(source_height_m)
    if h < 0 or np.any(rel[:, 2] < 0):
        raise ValueError("heights must be at or above the soil (>= 0 m)")
    k = 2 * np.pi * freq_hz / C_M_PER_S
    if kind == "vertical":
        p = np.array([0.0, 0.0, 1.0])
    elif kind == "horizontal":
        p = np.array([np.sin(axis_rad), np.cos(axis_rad), 0.0])
    else:
        raise ValueError(f"kind must be 'vertical' or 'horizontal'; got {kind!r}")
    d_rel = rel - np.array([0.0, 0.0, h])
    i_rel = rel + np.array([0.0, 0.0, h])
    if np.any(np.linalg.norm(d_rel, axis=-1) <= 0):
        raise ValueError("a point coincides with the source")
    rad_d, near_d = _dipole_terms(p, d_rel, k)
    direct = rad_d + near_d
    pi = np.array([-p[0], -p[1], p[2]])  # the perfect-ground image
    out = np.empty((len(grounds), len(rel), 3), dtype=complex)
    rho = np.hypot(rel[:, 0], rel[:, 1])
    near = rho <= halfspace.RHO_MAX_M
    every, none = bool(np.all(near)), not np.any(near)
    far = ~near
    lossy = [g for g, ground in enumerate(grounds) if ground is not None]
    n2s = [complex_permittivity(freq_hz, grounds[g][0], grounds[g][1]) for g in lossy]
    if lossy and every:
        out[lossy] = direct[None] + _exact_reflected_grounds(freq_hz, n2s, rel, h, kind, p)
    elif lossy and not none:
        out[np.ix_(lossy, np.flatnonzero(near))] = direct[near][None] + _exact_reflected_grounds(
            freq_hz, n2s, rel[near], h, kind, p
        )
    for g, n2 in zip(lossy, n2s):
        if not every:
            out[g, far] = direct[far] + _closed_form_reflected(n2, k, p, pi, i_rel[far], kind, axis_rad)
    for g, ground in enumerate(grounds):
        if ground is None:
            rad_i, near_i = _dipole_terms(pi, i_rel, k)
            out[g] = direct + rad_i + near_i
    return out


def _exact_reflected(freq_hz: float, n2: complex, rel: np.ndarray, h: float, kind: str, p: np.ndarray) -> np.ndarray:
    """The ground's part of the field (N, 3) by the Sommerfeld integrals (:mod:`noisemodels.halfspace`)."""
    return _exact_reflected_grounds(freq_hz, [n2], rel, h, kind, p)[0]


def _exact_reflected_grounds(freq_hz: float, n2s, rel: np.ndarray, h: float, kind: str, p: np.ndarray) -> np.ndarray:
    """:func:`_exact_reflected` over each ground of ``n2s`` (G, N, 3), the points' geometry worked once."""
    k = 2 * np.pi * freq_hz / C_M_PER_S
    rho = np.hypot(rel[:, 0], rel[:, 1])
    zeta = rel[:, 2] + h
    ig = halfspace.reflected_grounds(freq_hz, n2s, rho, zeta, kind) / k**2  # (G, 7, N)
    safe = np.where(rho > 0, rho, 1.0)
    out = np.empty((len(n2s), len(rel), 3), dtype=complex)
    if kind == "vertical":
        rho_hat = np.column_stack([rel[:, 0] / safe, rel[:, 1] / safe])
        out[:, :, 0] = ig[:, 1] * rho_hat[:, 0]
        out[:, :, 1] = ig[:, 1] * rho_hat[:, 1]
        out[:, :, 2] = ig[:, 0]
        return out
    # the horizontal dipole along x = its axis, y = z cross x; phi from the axis
    x_hat = p[:2]
    y_hat = np.array([-p[1], p[0]])
    xs, ys = rel[:, :2] @ x_hat, rel[:, :2] @ y_hat
    c = np.where(rho > 0, xs / safe, 1.0)
    s = np.where(rho > 0, ys / safe, 0.0)
    kk = k**2
    for g in range(len(n2s)):
        e_rho = c * (kk * ig[g, 2] + ig[g, 5])
        e_phi = -s * (kk * ig[g, 2] + ig[g, 4])
        e_z = c * (kk * ig[g, 3] + ig[g, 6])
        # back to (east, north): rho_hat = c x_hat + s y_hat, phi_hat = -s x_hat + c y_hat
        e_x = e_rho * c - e_phi * s
        e_y = e_rho * s + e_phi * c
        out[g, :, 0] = e_x * x_hat[0] + e_y * y_hat[0]
        out[g, :, 1] = e_x * x_hat[1] + e_y * y_hat[1]
        out[g, :, 2] = e_z
    return out


def _closed_form_reflected(n2, k, p, pi, i_rel, kind, axis_rad):
    """The ground's part of the field (N, 3) in closed form: the quasi-static image and Norton's TM/TE terms."""
    kq = (n2 - 1) / (n2 + 1)
    # a vertical dipole's image: K on both its induction and quasi-static terms (its charges' image); a horizontal
    # one's induction term, which its current's (vector potential's) image shapes, keeps the perfect image
    rad_i, near_i = _dipole_terms(pi, i_rel, k, static=kq)
    if kind == "vertical":
        near_i = kq * _dipole_terms(pi, i_rel, k)[1]
    r2 = np.linalg.norm(i_rel, axis=-1)
    rho = np.hypot(i_rel[:, 0], i_rel[:, 1])
    sin_psi = i_rel[:, 2] / r2
    cos_psi = rho / r2
    # the plane of incidence: rho_hat (away from the source along the ground), phi_hat across it, theta_hat
    # (the image ray's TM direction) = sin(psi) rho_hat - cos(psi) z_hat
    safe = np.where(rho > 0, rho, 1.0)
    rho_hat = np.stack([i_rel[:, 0] / safe, i_rel[:, 1] / safe, np.zeros_like(rho)], axis=-1)
    rho_hat[rho == 0] = (np.sin(axis_rad), np.cos(axis_rad), 0.0)
    phi_hat = np.stack([-rho_hat[:, 1], rho_hat[:, 0], np.zeros_like(rho)], axis=-1)
    theta_hat = sin_psi[:, None] * rho_hat - cos_psi[:, None] * np.array([0.0, 0.0, 1.0])
    p_rho = pi[0] * rho_hat[:, 0] + pi[1] * rho_hat[:, 1]
    a_tm = sin_psi * p_rho - cos_psi * pi[2]
    b_te = pi[0] * phi_hat[:, 0] + pi[1] * phi_hat[:, 1]
    root = np.sqrt(n2 - cos_psi**2)
    delta_v, delta_h = root / n2, root
    r_v = (sin_psi - delta_v) / (sin_psi + delta_v)
    r_h = (sin_psi - delta_h) / (sin_psi + delta_h)
    f_v = attenuation(-0.5j * k * r2 * (sin_psi + delta_v) ** 2)
    f_h = attenuation(-0.5j * k * r2 * (sin_psi + delta_h) ** 2)
    jkr2 = 1j * k * r2
    a_pole = -delta_v * (1 + 1 / jkr2) * p_rho - cos_psi * pi[2]
    g = np.exp(-jkr2) / r2
    # the surface wave's polarisation at the pole: tilted forward by Delta_v (the ground wave's wave tilt)
    theta_pole = -(delta_v * (1 + 1 / jkr2))[:, None] * rho_hat - np.sqrt(1 - delta_v**2)[:, None] * np.array(
        [0.0, 0.0, 1.0]
    )
    tm = (r_v * a_tm * g)[:, None] * theta_hat + ((1 - r_v) * f_v * a_pole * g)[:, None] * theta_pole
    te = -(r_h + (1 - r_h) * f_h) * b_te * g
    return near_i + tm + te[:, None] * phi_hat


def direct_field(freq_hz: float, rel_m, *, source_height_m: float, kind: str = "vertical", axis_rad: float = 0.0):
    """The dipole's own field in free space (no ground) at the points of :func:`field`, normalised alike: the
    incident wave a pattern over ground (which holds the ground's reflection itself) is driven by."""
    rel = np.atleast_2d(np.asarray(rel_m, dtype=float))
    k = 2 * np.pi * freq_hz / C_M_PER_S
    p = np.array([0.0, 0.0, 1.0]) if kind == "vertical" else np.array([np.sin(axis_rad), np.cos(axis_rad), 0.0])
    rad, near = _dipole_terms(p, rel - np.array([0.0, 0.0, float(source_height_m)]), k)
    return rad + near
