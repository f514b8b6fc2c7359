"""The exact field of a short electric dipole over a homogeneous lossy half-space, by numerical Sommerfeld integrals.

A reference for :mod:`noisemodels.nearground` (imported by the tests only: it needs scipy.integrate and is slow,
a few tens of milliseconds per point).  Phasors exp(+j omega t); air z > 0, earth z < 0 with complex relative
permittivity n^2 = eps_r - j sigma / (omega eps0), k1^2 = n^2 k0^2; the dipole (moment I l) at height h, the
observation point at horizontal distance rho and height z, zeta = z + h.

Hertz-vector form (A. Sommerfeld, Ann. Phys. 28 (1909) 665 and "Partial Differential Equations in Physics"
(1949) sec. 32-33; A. Banos, "Dipole Radiation in the Presence of a Conducting Half-Space" (1966) ch. 2), with
E = k0^2 Pi + grad div Pi, Pi's direct part C exp(-j k0 R1) / R1 times the dipole's direction and
C = I l / (4 pi j omega eps0), u0 = sqrt(lambda^2 - k0^2), u = sqrt(lambda^2 - k1^2) (real parts >= 0):

- vertical dipole: Pi_z = C [exp(-j k0 R1)/R1 + int_0^inf R_TM exp(-u0 zeta) J0(lambda rho) lambda / u0 dlambda],
  R_TM = (n^2 u0 - u) / (n^2 u0 + u);
- horizontal dipole along x: Pi_x = C [exp(-j k0 R1)/R1 + int R_TE exp(-u0 zeta) J0 lambda / u0 dlambda],
  R_TE = (u0 - u) / (u0 + u), and Pi_z = C cos(phi) int D exp(-u0 zeta) J1(lambda rho) lambda dlambda,
  D = 2 lambda (u - u0) / (k0^2 (n^2 u0 + u)),

the coefficients following from Sommerfeld's boundary conditions at z = 0 (k^2 Pi_x, its z-derivative, k^2 Pi_z
and div Pi continuous), derived afresh here.  Taking the derivatives under the integral, the reflected field of
the horizontal dipole is, with P = int R_TE e J0 lambda/u0, Q = int D e J1 lambda and W = -int M e J1,
M = R_TE lambda^2 / u0 + D u0 lambda (e = exp(-u0 zeta)):

    E_rho = C cos(phi) [k0^2 P + dW/drho],  E_phi = -C sin(phi) [k0^2 P + W / rho],
    E_z = C cos(phi) [k0^2 Q + dW/dzeta],

and of the vertical one E_z = C int R_TM e J0 lambda^3 / u0, E_rho = C int R_TM e J1 lambda^2.

Numerics (the usual scheme, e.g. K. A. Michalski, "Extrapolation methods for Sommerfeld integral tails", IEEE
Trans. AP-46 (1998) 1405): along the real axis, lambda = k0 sin t below k0 and k0 cosh s above it (so 1/u0's
branch point leaves no singularity), scipy.integrate.quad_vec on every kernel at once up to a break point; beyond,
the integral over half-periods pi / rho, summed by Wynn's epsilon algorithm.  The quasi-static part of each
kernel (the image with K = (n^2 - 1)/(n^2 + 1), which grows with lambda) is subtracted with exp(-lambda zeta)
and added back in closed form (Laplace transforms of lambda^n J_m: Gradshteyn and Ryzhik 6.611.1, 6.621.1 and
their derivatives; a test checks them by quadrature).

Output: the reflected part plus the direct dipole field, normalised like :mod:`noisemodels.nearground` (by
-j omega mu0 I l / (4 pi): a free-space dipole's broadside far field is exp(-j k0 R) / R).
"""

from __future__ import annotations

import numpy as np

from noisemodels.constants import C_M_PER_S, EPS0_F_PER_M


def _laplace(rho: float, zeta: float) -> dict[str, float]:
    """int_0^inf lambda^n J_m(lambda rho) exp(-lambda zeta) dlambda (key "m,n") and the rho- and zeta-derivatives
    needed (G&R 6.611.1, 6.621.1; R = sqrt(rho^2 + zeta^2))."""
    r = np.hypot(rho, zeta)
    out = {
        "0,0": 1 / r,
        "0,2": (2 * zeta**2 - rho**2) / r**5,
        "1,0": (r - zeta) / (rho * r),
        "1,1": rho / r**3,
        "1,2": 3 * rho * zeta / r**5,
    }
    out["d1,1/drho"] = 1 / r**3 - 3 * rho**2 / r**5
    return out


def _wynn(partial: np.ndarray) -> np.ndarray:
    """Wynn's epsilon algorithm on partial sums (K, m) -> the limit estimate (m,), each column on its own; a column
    whose sums have already settled (or whose table meets a zero difference) keeps its last settled value."""
    out = np.array(partial[-1], dtype=complex)
    for j in range(partial.shape[1]):
        s = [complex(v) for v in partial[:, j]]
        scale = max(abs(v) for v in s) + 1e-300
        if abs(s[-1] - s[-2]) <= 1e-13 * scale:
            continue
        prev, cur = [0j] * len(s), list(s)
        best, k = cur[-1], 0
        while len(cur) > 2:
            nxt = []
            for i in range(len(cur) - 1):
                d = cur[i + 1] - cur[i]
                if abs(d) <= 1e-15 * scale * (1 + abs(cur[i])):
                    nxt = None
                    break
                nxt.append(prev[i + 1] + 1.0 / d)
            if nxt is None:
                break
            prev, cur = cur, nxt
            k += 1
            if k % 2 == 0:
                best = cur[-1]
        out[j] = best
    return out


def reflected_kernels(lam, k0: float, n2: complex, rho: float, zeta: float, u0=None):
    """The integrands of the reflected field's integrals at real lambda (array), each minus its quasi-static
    part; rows: VED E_z, VED E_rho, HED P, HED Q, HED W, HED dW/drho, HED dW/dzeta (all without the C factor)."""
    from scipy.special import j0, j1

    lam = np.asarray(lam, dtype=float)
    if u0 is None:
        u0 = np.sqrt(lam.astype(complex) ** 2 - k0**2)
        u0 = np.where(lam < k0, 1j * np.sqrt(np.maximum(k0**2 - lam**2, 0.0)), u0)
    u = np.sqrt(lam**2 - n2 * k0**2 + 0j)
    kq = (n2 - 1) / (n2 + 1)
    e = np.exp(-u0 * zeta)
    es = np.exp(-lam * zeta)
    b0, b1 = j0(lam * rho), j1(lam * rho)
    r_tm = (n2 * u0 - u) / (n2 * u0 + u)
    r_te = (u0 - u) / (u0 + u)
    d = 2 * lam * (u - u0) / (k0**2 * (n2 * u0 + u))
    m = r_te * lam**2 / u0 + d * u0 * lam
    b1p = lam * b0 - b1 / rho  # lambda J1'(lambda rho)
    return np.array(
        [
            (r_tm * e * lam**3 / u0 - kq * lam**2 * es) * b0,
            (r_tm * e - kq * es) * lam**2 * b1,
            r_te * e * lam / u0 * b0,
            (d * e * lam + kq * es) * b1,
            -(m * e + kq * lam * es) * b1,
            -(m * e + kq * lam * es) * b1p,
            (m * u0 * e + kq * lam**2 * es) * b1,
        ]
    )


def _quasi_static(rho, zeta, k0):
    """The subtracted parts' integrals, in the rows of :func:`reflected_kernels` (times K)."""
    g = _laplace(rho, zeta)
    return np.array([g["0,2"], g["1,2"], 0.0, -g["1,0"], g["1,1"], g["d1,1/drho"], -g["1,2"]])


def reflected_integrals(freq_hz: float, permittivity: float, conductivity: float, rho: float, zeta: float):
    """The seven integrals of :func:`reflected_kernels` over lambda in (0, inf) (complex)."""
    from scipy.integrate import quad_vec

    k0 = 2 * np.pi * freq_hz / C_M_PER_S
    n2 = complex(permittivity, -conductivity / (2 * np.pi * freq_hz * EPS0_F_PER_M))
    kq = (n2 - 1) / (n2 + 1)
    opts = {"epsabs": 0.0, "epsrel": 1e-8, "limit": 20000}

    def below(t):  # lambda = k0 sin t; dlambda = k0 cos t dt; u0 = j k0 cos t
        lam = k0 * np.sin(t)
        u0 = 1j * k0 * np.cos(t)
        return reflected_kernels(lam, k0, n2, rho, zeta, u0=u0) * (k0 * np.cos(t))

    a_break = max(4.0 * abs(np.sqrt(n2)) * k0, k0 * 1.5)

    def above(s):  # lambda = k0 cosh s; u0 = k0 sinh s
        lam = k0 * np.cosh(s)
        u0 = k0 * np.sinh(s) + 0j
        return reflected_kernels(lam, k0, n2, rho, zeta, u0=u0) * (k0 * np.sinh(s))

    # the Bessel functions oscillate with period 2 pi / rho: split the finite range so quad_vec sees them
    n_osc = int(np.ceil(k0 * rho / np.pi)) + 1
    total = 0j
    edges = np.linspace(0.0, np.pi / 2, min(n_osc, 4000) + 1)
    for lo, hi in zip(edges[:-1], edges[1:]):
        total = total + quad_vec(below, lo, hi, **opts)[0]
    s1 = float(np.arccosh(min(2.0, a_break / k0)))  # the cosh substitution near the branch point, up to 2 k0
    n_osc = int(np.ceil(k0 * rho / np.pi)) + 1
    for lo, hi in zip(np.linspace(0.0, s1, min(n_osc, 4000) + 1)[:-1], np.linspace(0.0, s1, min(n_osc, 4000) + 1)[1:]):
        total = total + quad_vec(above, lo, hi, **opts)[0]
    x, wq = np.polynomial.legendre.leggauss(24)
    lo = k0 * np.cosh(s1)
    if (
        a_break > lo
    ):  # smooth from 2 k0 on: Gauss-Legendre on pieces no longer than a half-period of the Bessel functions
        n = int(np.ceil((a_break - lo) / min(np.pi / rho, k0))) + 1
        e = np.linspace(lo, a_break, n + 1)
        lam = (e[:-1, None] + (x[None, :] + 1) * (np.diff(e)[:, None] / 2)).ravel()
        wts = (wq[None, :] * (np.diff(e)[:, None] / 2)).ravel()
        total = total + reflected_kernels(lam, k0, n2, rho, zeta) @ wts
    # tail: half-periods of the Bessel functions, summed by Wynn's epsilon
    step = np.pi / rho
    n_tail = 40 if zeta * step * 40 < 60 else max(8, int(60 / (zeta * step)) + 1)
    if zeta > 0:
        n_tail = min(n_tail, int(np.ceil(80 / (zeta * step))) + 8)
    pieces = []
    for i in range(n_tail):
        lo = a_break + i * step
        lam = lo + (x + 1) * step / 2
        pieces.append(np.einsum("kn,n->k", reflected_kernels(lam, k0, n2, rho, zeta), wq) * step / 2)
    partial = np.cumsum(np.array(pieces), axis=0)
    tail = _wynn(partial) if zeta * a_break < 40 else partial[-1]
    return total + tail + kq * _quasi_static(rho, zeta, k0)


def direct_field(dipole: np.ndarray, rel_m: np.ndarray, k0: float) -> np.ndarray:
    """The exact field of a short dipole of unit direction ``dipole`` at offset ``rel_m`` (3,), normalised by
    -j omega mu0 I l / (4 pi) (free-space broadside far field exp(-j k0 R) / R)."""
    r = float(np.linalg.norm(rel_m))
    rh = rel_m / r
    pr = float(dipole @ rh)
    jkr = 1j * k0 * r
    a = 1 + 1 / jkr + 1 / jkr**2
    b = -2 * (1 / jkr + 1 / jkr**2)
    return np.exp(-jkr) / r * ((dipole - pr * rh) * a + pr * rh * b)


def field(
    freq_hz: float,
    permittivity: float,
    conductivity: float,
    *,
    kind: str,
    source_height_m: float,
    rho_m: float,
    height_m: float,
    phi_rad: float = 0.0,
) -> dict[str, complex]:
    """The exact total field (direct + reflected) at (rho, phi, z) of a vertical ("vertical") or an x-directed
    horizontal ("horizontal") dipole at height h, phi measured from the dipole's axis; components "z", "rho",
    "phi", normalised as :func:`direct_field`."""
    k0 = 2 * np.pi * freq_hz / C_M_PER_S
    zeta = source_height_m + height_m
    ref = reflected_integrals(freq_hz, permittivity, conductivity, rho_m, zeta) / k0**2
    c, s = np.cos(phi_rad), np.sin(phi_rad)
    rel = np.array([rho_m * c, rho_m * s, height_m - source_height_m])
    if kind == "vertical":
        d = direct_field(np.array([0.0, 0.0, 1.0]), rel, k0)
        e_z, e_rho, e_phi = ref[0], ref[1], 0j
    elif kind == "horizontal":
        d = direct_field(np.array([1.0, 0.0, 0.0]), rel, k0)
        p, q, w, dw_drho, dw_dzeta = ref[2:]
        e_rho = c * (k0**2 * p + dw_drho)
        e_phi = -s * (k0**2 * p + w / rho_m)
        e_z = c * (k0**2 * q + dw_dzeta)
    else:
        raise ValueError(f"kind must be 'vertical' or 'horizontal'; got {kind!r}")
    d_rho = d[0] * c + d[1] * s
    d_phi = -d[0] * s + d[1] * c
    return {"z": complex(d[2] + e_z), "rho": complex(d_rho + e_rho), "phi": complex(d_phi + e_phi)}
