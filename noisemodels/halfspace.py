"""The ground's part of a short dipole's field over a lossy half-space by its Sommerfeld integrals, in numpy.

The run-time counterpart of :mod:`noisemodels.sommerfeld` (the scipy reference the tests hold it to): the same
seven integrals over the radial wavenumber lambda (a vertical dipole's E_z and E_rho, a horizontal one's P, Q, W
and W's derivatives; formulas and conventions there), evaluated for a whole grid of horizontal distances rho
and heights zeta = z + h at once and kept as a table per (frequency, ground), which
:func:`reflected` interpolates.

Each kernel's large-lambda behaviour is subtracted to second order and added back in closed form, so what is
integrated numerically falls off as lambda^-2 (the usual scheme, e.g. K. A. Michalski, IEEE Trans. AP-46 (1998)
1405, here carried one order further than the reference's quasi-static image).  With x = k0^2 / lambda^2,
K = (n^2 - 1) / (n^2 + 1) and large lambda (derived here):

    R_TM = K (1 + n^2 x / (n^2 + 1)),   R_TE = (n^2 - 1) x / 4,
    lambda D = -K - x ((n^2 - 1)/4 + K n^2/(n^2 + 1)),   M = -K lambda + (k0^2 / lambda) K (1/2 - n^2 / (n^2 + 1)),
    exp(-u0 zeta) = exp(-lambda zeta) (1 + k0^2 zeta / (2 lambda)),

and the subtracted terms integrate with the Laplace transforms of lambda^n J_m(lambda rho) (n = -1 .. 2;
Gradshteyn and Ryzhik 6.611.1, 6.621.1 and 6.623-type forms, from memory, each checked by quadrature in
tests/test_nearground.py).  A test checks the kernels' remainder falls as lambda^-2.

The remainder's integral runs along the real axis: lambda = k0 sin t below k0 and k0 cosh s up to 2 k0 (so the
branch point of u0 leaves no singularity; panels graded geometrically toward it, where the surface-wave pole
lies close to the axis over a good ground), then Gauss-Legendre panels no wider than half a period of the Bessel
functions, ending in a smooth cos^2 taper many periods long (the integrand is smooth there; the taper removes
the truncation's end-point error).  Bessel functions J0, J1 by the polynomial approximations of M. Abramowitz
and I. A. Stegun, "Handbook of Mathematical Functions" (1964), 9.4.1-9.4.6 (|error| < 1e-7; coefficients
from memory, checked against scipy.special in the tests).

Over a very good ground (|n^2| >= 100: sea water) P's R_TE stays near -1 up to |k1|, far past where the
integral is cut; its complex image -exp(-u0 d), d = 2 / (j k1), is taken out too and added back in closed form
(:func:`_te_image_depth`).

The table (one per frequency, ground and kind of dipole, the last few kept): rho on asinh(rho / 1 m) steps of
0.025 from 0 to at least 1 km (3 km when asked), zeta on 1 m steps from 0 up to the largest asked for (in 8 m
blocks, 32 m at least).  Close in (rho < 30 m) it holds the remainder, far out (rho > 100 m) the whole integrals
(the closed forms' non-radiating terms would beat against the radiating part's phase between nodes there), a smooth step
between; interpolated by tensor cubic Lagrange polynomials after taking out the phase exp(-j k0 R) and the 1 / R.
Building one takes 0.02-0.09 s (one BLAS thread), so each is also kept in the persistent cache
(:mod:`noisemodels.skycache`, keyed by every input and this module's source) and read back by later runs; a
point then costs about 2 microseconds.  Within 1e-3 of the
same integrals evaluated at the point (tests).  Beyond 3 km :mod:`noisemodels.nearground` uses its closed form
(within 0.6 dB there).
"""

from __future__ import annotations

from collections import OrderedDict
from functools import lru_cache

import numpy as np

from noisemodels import skycache
from noisemodels.constants import C_M_PER_S

RHO_MAX_M = 3000.0
"""The farthest horizontal distance the table holds."""
RHO_LEAST_M = 1000.0
"""The least reach of a table (a few hundredths of a second more than a shorter one, and seldom rebuilt)."""
ZETA_BLOCK_M = 8.0
ZETA_LEAST_M = 32.0
"""The least height a table reaches (source plus point): a source on a roof and an antenna 20 m up in one table, not
three grown one after another as a run asks higher (a few milliseconds more than a lower one)."""
RHO_SCALE_M = 1.0
S_STEP = 0.025
ZETA_STEP_M = 1.0
_BLOCK_EDGES_M = (0.0, 3.0, 10.0, 30.0, 100.0, 300.0, 1000.0, RHO_MAX_M)
_NODES = 6  # Gauss-Legendre nodes per panel
_GRADED = 8  # panels halving toward the branch point k0
_TABLES: OrderedDict = OrderedDict()
_TABLES_KEPT = 12

# Abramowitz and Stegun 9.4.1, 9.4.3, 9.4.4, 9.4.6 (from memory; tests check them against scipy.special)
_J0_SMALL = (1.0, -2.2499997, 1.2656208, -0.3163866, 0.0444479, -0.0039444, 0.0002100)
_J0_F = (0.79788456, -0.00000077, -0.00552740, -0.00009512, 0.00137237, -0.00072805, 0.00014476)
_J0_T = (-0.78539816, -0.04166397, -0.00003954, 0.00262573, -0.00054125, -0.00029333, 0.00013558)
_J1_SMALL = (0.5, -0.56249985, 0.21093573, -0.03954289, 0.00443319, -0.00031761, 0.00001109)
_J1_F = (0.79788456, 0.00000156, 0.01659667, 0.00017105, -0.00249511, 0.00113653, -0.00020033)
_J1_T = (-2.35619449, 0.12499612, 0.00005650, -0.00637879, 0.00074348, 0.00079824, -0.00029166)


def _poly(c, x):
    out = np.full_like(x, c[-1])
    for a in c[-2::-1]:
        out = out * x + a
    return out


def bessel_j0_j1(x) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(J0(x), J1(x), J1(x) / x) for real x >= 0 (J1(x)/x -> 1/2 at 0)."""
    x = np.asarray(x, dtype=float)
    j0, j1, j1x = np.empty_like(x), np.empty_like(x), np.empty_like(x)
    small = x <= 3.0
    xs = x[small]
    y = (xs / 3.0) ** 2
    j0[small] = _poly(_J0_SMALL, y)
    j1x[small] = _poly(_J1_SMALL, y)
    j1[small] = j1x[small] * xs
    big = ~small
    xb = x[big]
    t = 3.0 / xb
    amp = 1.0 / np.sqrt(xb)
    j0[big] = amp * _poly(_J0_F, t) * np.cos(xb + _poly(_J0_T, t))
    j1b = amp * _poly(_J1_F, t) * np.cos(xb + _poly(_J1_T, t))
    j1[big] = j1b
    j1x[big] = j1b / xb
    return j0, j1, j1x


def _laplace(rho, zeta) -> dict[str, np.ndarray]:
    """int_0^inf lambda^n J_m(lambda rho) exp(-lambda zeta) dlambda ("m,n", n = -1 .. 2) and the derivatives the
    fields need; forms stable at rho -> 0 (R - zeta written rho^2 / (R + zeta)).  "w/rho": the rho-divided J1
    transforms for W / rho."""
    rho = np.asarray(rho, dtype=float)
    zeta = np.asarray(zeta, dtype=float)
    r = np.hypot(rho, zeta)
    rz = r + zeta
    return {
        "0,0": 1 / r,
        "0,1": zeta / r**3,
        "0,2": (2 * zeta**2 - rho**2) / r**5,
        "1,-1": rho / rz,
        "1,0": rho / (r * rz),
        "1,1": rho / r**3,
        "1,2": 3 * rho * zeta / r**5,
        # divided by rho
        "1,-1/rho": 1 / rz,
        "1,0/rho": 1 / (r * rz),
        "1,1/rho": 1 / r**3,
        # rho-derivatives
        "d1,-1": zeta / (r * rz),
        "d1,0": zeta / r**3 - 1 / (r * rz),
        "d1,1": 1 / r**3 - 3 * rho**2 / r**5,
    }


def _coefficients(n2: complex):
    kq = (n2 - 1) / (n2 + 1)
    a1 = n2 / (n2 + 1)
    a0 = a1 + 0.5
    c_m = kq * (0.5 - a1)
    return kq, a0, a1, c_m


def kernels(lam, u0, k0: float, n2: complex):
    """(A, B, C), each (7, L): the kernels of the seven integrals at real lambda (with u0 given on the proper
    branch), A multiplying exp(-u0 zeta), and the subtracted large-lambda part B + zeta C multiplying
    exp(-lambda zeta); rows as :func:`noisemodels.sommerfeld.reflected_kernels` but row 4 is W / rho's (same A, B,
    C as W: the Bessel factor differs)."""
    lam = np.asarray(lam, dtype=float)
    u = np.sqrt(lam**2 - n2 * k0**2 + 0j)
    u = np.where(u.real < 0, -u, u)
    kq, a0, a1, c_m = _coefficients(n2)
    r_tm = (n2 * u0 - u) / (n2 * u0 + u)
    r_te = (u0 - u) / (u0 + u)
    d = 2 * lam * (u - u0) / (k0**2 * (n2 * u0 + u))
    m = r_te * lam**2 / u0 + d * u0 * lam
    k2 = k0**2
    zero = np.zeros_like(lam)
    inv = 1.0 / lam
    # P's R_TE less its complex image -exp(-u0 d) (d = 2 / (j k1)): over a good conductor R_TE stays near -1 up to
    # |k1|, far past where the integrand is cut; the image takes that plateau away
    d_te = _te_image_depth(k0, n2)
    r_te_left = r_te if d_te is None else r_te + np.exp(-u0 * d_te)
    a = np.array([r_tm * lam**3 / u0, r_tm * lam**2, r_te_left * lam / u0, d * lam, -m, -m, m * u0])
    b = np.array(
        [
            kq * (lam**2 + k2 * a0),
            kq * (lam**2 + k2 * a1),
            zero,
            -kq + zero,
            kq * lam - c_m * k2 * inv,
            kq * lam - c_m * k2 * inv,
            -kq * lam**2 + c_m * k2 + kq * k2 / 2,
        ]
    )
    c = np.array(
        [
            kq * k2 * lam / 2,
            kq * k2 * lam / 2,
            zero,
            -kq * k2 * inv / 2,
            kq * k2 / 2 + zero,
            kq * k2 / 2 + zero,
            -kq * k2 * lam / 2,
        ]
    )
    return a, b, c


TE_IMAGE_FROM = 100.0
"""|n^2| from which P's integrand has its TE complex image taken out (sea water, not the soils)."""


def _te_image_depth(k0: float, n2: complex) -> complex | None:
    """The complex depth d = 2 / (j k1) of the TE image: R_TE = -exp(-u0 d) to first order in u0 / k1 (the
    complex-image form of J. R. Wait, and P. R. Bannister, e.g. IEEE Trans. AP-26 (1978) 507; from memory).  Its
    spectral integral is closed: int exp(-u0 (zeta + d)) J0(lambda rho) lambda / u0 = exp(-j k0 R_d) / R_d,
    R_d = sqrt(rho^2 + (zeta + d)^2) (Sommerfeld's identity continued to Re(zeta + d) > 0)."""
    if abs(n2) < TE_IMAGE_FROM:
        return None
    k1 = np.sqrt(complex(n2)) * k0
    return 2 / (1j * k1)


def closed_forms(rho, zeta, k0: float, n2: complex, *, laplace=None, rows=None) -> np.ndarray:
    """(7, N): the integrals of the subtracted parts (B + zeta C) exp(-lambda zeta) times each row's Bessel factor
    (``laplace``: :func:`_laplace` of the same points, when already worked); ``rows``: only those worked (the kind's,
    :data:`ROWS`), the others left zero."""
    g = _laplace(rho, zeta) if laplace is None else laplace
    zeta = np.asarray(zeta, dtype=float)
    kq, a0, a1, c_m = _coefficients(n2)
    k2 = k0**2

    def te_image():
        d_te = _te_image_depth(k0, n2)
        if d_te is None:
            return np.zeros(np.shape(zeta), dtype=complex)
        r_d = np.sqrt(np.asarray(rho, dtype=float) ** 2 + (zeta + d_te) ** 2)
        return -np.exp(-1j * k0 * r_d) / r_d

    forms = (
        lambda: kq * (g["0,2"] + k2 * a0 * g["0,0"] + k2 / 2 * zeta * g["0,1"]),
        lambda: kq * (g["1,2"] + k2 * a1 * g["1,0"] + k2 / 2 * zeta * g["1,1"]),
        te_image,
        lambda: -kq * (g["1,0"] + k2 / 2 * zeta * g["1,-1"]),
        lambda: kq * g["1,1/rho"] - c_m * k2 * g["1,-1/rho"] + kq * k2 / 2 * zeta * g["1,0/rho"],  # W / rho
        lambda: kq * g["d1,1"] - c_m * k2 * g["d1,-1"] + kq * k2 / 2 * zeta * g["d1,0"],  # dW / drho
        lambda: -kq * g["1,2"] + c_m * k2 * g["1,0"] + kq * k2 / 2 * (g["1,0"] - zeta * g["1,1"]),  # dW / dzeta
    )
    out = np.zeros((7, *np.shape(zeta)), dtype=complex)
    for r in range(7) if rows is None else rows:
        out[r] = forms[r]()
    return out


ROWS = {"vertical": (0, 1), "horizontal": (2, 3, 4, 5, 6)}
"""The integrals each kind of dipole needs (rows of :func:`kernels`)."""
_BESSEL_OF_ROW = {0: "j0", 1: "j1", 2: "j0", 3: "j1", 4: "j1/rho", 6: "j1"}  # row 5: lambda J0 - J1/rho


def _panels(lo: float, hi: float, width: float, graded_toward: float | None = None) -> np.ndarray:
    """Panel edges over [lo, hi], none wider than ``width``, refined geometrically toward an end if asked."""
    n = max(1, int(np.ceil((hi - lo) / width)))
    edges = np.linspace(lo, hi, n + 1)
    if graded_toward is not None:
        d = (hi - lo) * 0.5 ** np.arange(1, _GRADED + 1)
        edges = np.union1d(edges, graded_toward - d if graded_toward == hi else graded_toward + d)
    return edges


@lru_cache(maxsize=4)
def _legendre(n: int):
    return np.polynomial.legendre.leggauss(n)


def _gauss(edges: np.ndarray):
    x, w = _legendre(_NODES)
    half = np.diff(edges) / 2
    mid = (edges[:-1] + edges[1:]) / 2
    return (mid[:, None] + half[:, None] * x[None, :]).ravel(), (half[:, None] * w[None, :]).ravel()


def lambda_nodes(k0: float, n2: complex, rho_lo: float, rho_hi: float):
    """(lambda, u0, weight) nodes for the remainder integrals of distances rho_lo..rho_hi."""
    half_period = np.pi / max(rho_hi, 1e-3)
    # below k0: lambda = k0 sin t
    t, wt = _gauss(_panels(0.0, np.pi / 2, min(half_period / k0, 0.25), graded_toward=np.pi / 2))
    lam_a, u0_a, w_a = k0 * np.sin(t), 1j * k0 * np.cos(t), wt * k0 * np.cos(t)
    # k0 .. 2 k0: lambda = k0 cosh s
    s1 = float(np.arccosh(2.0))
    s, ws = _gauss(_panels(0.0, s1, min(half_period / (k0 * np.sqrt(3.0)), 0.25), graded_toward=0.0))
    lam_b, u0_b, w_b = k0 * np.cosh(s), k0 * np.sinh(s) + 0j, ws * k0 * np.sinh(s)
    # 2 k0 on: past the ground's branch point |k1| (lateral waves along the surface still matter close in), then a
    # cos^2 taper; beyond 100 m the integrand is smooth on the scale of the Bessel functions' period there
    k1 = abs(np.sqrt(n2)) * k0
    # (over a very good ground |k1| is far out, and the integrand smooth well before it: the Bessel functions'
    # oscillation cancels it; so at most 40 / rho_lo)
    reach = 2 * k0 + min(8 * k1 if rho_lo < 100.0 else np.inf, 40.0 / max(rho_lo, 0.5))
    taper = max(reach, min(10 * np.pi / max(rho_lo, 1e-3), 4 * reach))
    lam_c, w_c = _gauss(
        np.union1d(_panels(2 * k0, reach, min(half_period, k1)), _panels(reach, reach + taper, half_period))
    )
    win = np.where(lam_c <= reach, 1.0, np.cos(0.5 * np.pi * (lam_c - reach) / taper) ** 2)
    u0_c = np.sqrt(lam_c**2 - k0**2) + 0j
    return (
        np.concatenate([lam_a, lam_b, lam_c]),
        np.concatenate([u0_a, u0_b, u0_c]),
        np.concatenate([w_a, w_b, w_c * win]),
    )


def _real_matmul(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """a (real) @ b (complex) by one real product."""
    b = np.ascontiguousarray(b)
    return (a @ b.view(float)).view(complex)


def remainder_grid(k0: float, n2: complex, rho: np.ndarray, zeta: np.ndarray, rows=tuple(range(7))) -> np.ndarray:
    """(len(rows), len(rho), len(zeta)): the numerically integrated remainders of ``rows`` on the grid rho x zeta."""
    rho = np.asarray(rho, dtype=float)
    zeta = np.asarray(zeta, dtype=float)
    nz = len(zeta)
    out = np.zeros((len(rows), len(rho), nz), dtype=complex)
    edges = _BLOCK_EDGES_M
    for lo, hi in zip(edges[:-1], edges[1:]):
        sel = np.nonzero((rho >= lo) & ((rho < hi) | (hi == edges[-1])))[0]
        if len(sel) == 0:
            continue
        r = rho[sel]
        lam, u0, w = lambda_nodes(k0, n2, float(r.min()), float(r.max()))
        a, b, c = kernels(lam, u0, k0, n2)
        eu = np.exp(-np.outer(u0, zeta))
        el = np.exp(-np.outer(lam, zeta))
        elz = el * zeta[None, :]
        # the integrands (lambda x zeta) of each row, gathered by the Bessel factor they take
        rhs: dict[str, list] = {"j0": [], "j1": [], "j1/rho": []}
        for i_out, i in enumerate(rows):
            m = (w * a[i])[:, None] * eu
            if i != 2:
                m -= (w * b[i])[:, None] * el + (w * c[i])[:, None] * elz
            if i == 5:  # lambda J1'(lambda rho) = lambda J0 - J1 / rho
                rhs["j0"].append((i_out, lam[:, None] * m, 1.0))
                rhs["j1/rho"].append((i_out, m, -1.0))
            else:
                rhs[_BESSEL_OF_ROW[i]].append((i_out, m, 1.0))
        j0, j1, j1x = bessel_j0_j1(np.outer(r, lam))
        mats = {"j0": j0, "j1": j1, "j1/rho": j1x * lam[None, :] if rhs["j1/rho"] else None}
        for name, parts in rhs.items():
            if not parts:
                continue
            prod = _real_matmul(mats[name], np.concatenate([m for _, m, _ in parts], axis=1))
            for n, (i_out, _, sign) in enumerate(parts):
                out[i_out, sel] += sign * prod[:, n * nz : (n + 1) * nz]
    return out


TABLE_VERSION = 1
"""Part of the persistent cache's key of the tables (:func:`_disk_key`); bump it when what a table holds changes
in a way the key's other parts (this module's source among them) would not show."""


@lru_cache(maxsize=1)
def _source_digest() -> str:
    """SHA-256 of this module's source: a table kept on disk is used only by the code that computed it."""
    import hashlib

    try:
        with open(__file__, "rb") as fh:
            return hashlib.sha256(fh.read()).hexdigest()
    except OSError:
        return "unknown"


def _disk_key(freq_hz: float, n2: complex, kind: str, rho_top: float, zeta_top: float) -> dict:
    """Every input of a table, for the persistent cache (:mod:`noisemodels.skycache`): the frequency, the ground's
    relative complex permittivity, the kind, the reach, the grid's and the quadrature's constants, and this
    module's source."""
    n2 = complex(n2)
    return {
        "version": TABLE_VERSION,
        "source": _source_digest(),
        "freq_hz": float(freq_hz),
        "n2": [n2.real, n2.imag],
        "kind": str(kind),
        "reach": [float(rho_top), float(zeta_top)],
        "constants": [
            RHO_SCALE_M,
            S_STEP,
            ZETA_STEP_M,
            list(_BLOCK_EDGES_M),
            list(FAR_SHARE_M),
            _NODES,
            _GRADED,
            TE_IMAGE_FROM,
            C_M_PER_S,
        ],
    }


class _Table:
    """The remainders (demodulated) of one kind's rows on the grid asinh(rho) x zeta, to ``rho_top`` and
    ``zeta_top``."""

    def __init__(self, freq_hz: float, n2: complex, kind: str, rho_top: float, zeta_top: float):
        self.k0 = 2 * np.pi * freq_hz / C_M_PER_S
        self.rows = ROWS[kind]
        self.rho_top, self.zeta_top = rho_top, zeta_top
        self.s = np.arange(0.0, np.arcsinh(rho_top / RHO_SCALE_M) + 3 * S_STEP, S_STEP)
        self.zeta = np.arange(0.0, zeta_top + 3 * ZETA_STEP_M, ZETA_STEP_M)
        shape = (len(self.rows), len(self.s), len(self.zeta))
        key = _disk_key(freq_hz, n2, kind, rho_top, zeta_top)
        kept = skycache.load("halfspace", key)
        if kept is not None and kept.shape == shape and kept.dtype == np.complex128:
            self.values = kept
            return
        rho = RHO_SCALE_M * np.sinh(self.s)
        vals = remainder_grid(self.k0, n2, rho, self.zeta, self.rows)
        far = rho >= FAR_SHARE_M[0]
        if np.any(far):
            g_rho, g_zeta = np.meshgrid(rho[far], self.zeta, indexing="ij")
            whole = closed_forms(g_rho.ravel(), g_zeta.ravel(), self.k0, n2, rows=self.rows)[list(self.rows)]
            vals[:, far] += _far_share(rho[far])[None, :, None] * whole.reshape(len(self.rows), int(far.sum()), -1)
        r = np.hypot(rho[:, None], self.zeta[None, :])
        self.values = vals * (np.maximum(r, 1.0) * np.exp(1j * self.k0 * r))[None]
        skycache.store("halfspace", key, self.values)

    def remainder(self, rho: np.ndarray, zeta: np.ndarray) -> np.ndarray:
        """(len(rows), N) interpolated remainders.  Points at a few heights (a wire's or a feed line's run and the
        Gauss-Legendre points up their leads) take the table interpolated along zeta once per height, then a cubic
        in rho alone: the same tensor-product polynomial, summed in another order.  What depends on the points alone
        (stencils, weights, the phase) is kept for the next table asked at the same points (:func:`_geometry`: the
        same wires under each ground of a spread)."""
        return _remainders([self], rho, zeta)[0]


def _weighted(term, w: np.ndarray) -> np.ndarray:
    """sum_k term(k) w[:, k]: the interpolation's weighted sum, one gathered term at a time (einsum over a last axis
    of 4 or 16 was 4x slower)."""
    out = term(0) * w[:, 0]
    for k in range(1, w.shape[1]):
        out += term(k) * w[:, k]
    return out


def _gathered(flat: np.ndarray, at: np.ndarray, w: np.ndarray) -> np.ndarray:
    """sum_k flat[:, at[k]] w[k] (rows, N): ``flat`` (rows, nodes), the stencil's node indices ``at`` and weights
    ``w`` (K, N) stencil node first.  One gather of every node, one product and a sum over the stencil's axis, which
    numpy adds slice by slice in order: the same sums, to the bit, as :func:`_weighted`'s one term at a time, in three
    calls instead of 3 K (the calls' own cost is most of the time at a few hundred points)."""
    v = flat[:, at]  # (rows, K, N)
    v *= w
    return v.sum(axis=1)


class _Kept(OrderedDict):
    """A geometry store (:func:`_geometry`, :func:`_near_geometry`) that counts the bytes of the arrays it holds as
    entries come and go (:func:`_keep`), so keeping one more is not a walk over every entry held."""

    def __init__(self):
        super().__init__()
        self.nbytes = 0

    def clear(self) -> None:
        super().clear()
        self.nbytes = 0


_GEOMETRY = _Kept()
_GEOMETRY_KEPT = 48
GEOMETRY_MAX_POINTS = 20_000
"""Requests of more points (a layout's many places) have their geometry worked afresh, not kept."""
GEOMETRY_MAX_BYTES = 96 * 2**20
"""Bytes of arrays each of the two geometry stores keeps at most (one entry of 20,000 points is about 5 MB)."""


def _keep(store: _Kept, key, out: tuple) -> None:
    """Keep ``out`` in ``store`` by ``key``, dropping the oldest past _GEOMETRY_KEPT entries or GEOMETRY_MAX_BYTES."""
    if key in store:
        store.nbytes -= _nbytes(store[key])
    store[key] = out
    store.nbytes += _nbytes(out)
    while len(store) > _GEOMETRY_KEPT or (len(store) > 1 and store.nbytes > GEOMETRY_MAX_BYTES):
        store.nbytes -= _nbytes(store.popitem(last=False)[1])


def _bytes_held(store: OrderedDict) -> int:
    """The bytes of every array ``store`` holds, counted afresh (what a :class:`_Kept` store's ``nbytes`` tracks)."""
    return sum(_nbytes(out) for out in store.values())


def _nbytes(value) -> int:
    return sum(a.nbytes for a in _arrays(value))


def _arrays(value):
    if isinstance(value, np.ndarray):
        yield value
    elif isinstance(value, (tuple, list)):
        for v in value:
            yield from _arrays(v)


def forget_geometry() -> None:
    """Empty the kept geometries (:func:`_geometry`, :func:`_near_geometry`): what a benchmark's timed run clears
    with snrgain's in-run memos (the tables themselves stay: they are kept across runs, on disk too)."""
    _GEOMETRY.clear()
    _NEAR.clear()


def _geometry(k0: float, ns: int, nz: int, rho: np.ndarray, zeta: np.ndarray) -> tuple:
    """The interpolation's geometry of the points (rho, zeta) on a table of ``ns`` x ``nz`` nodes: ("heights",
    per-height zeta stencils and weights, per-point indices into the table interpolated to those heights, rho
    weights, phase) when the points stand at a few heights, else ("points", indices, tensor weights, phase), or
    ("mixed", the points at the heights holding many of them, their "heights" geometry, the rest, their "points"
    one): a wire's or a run's points beside a compact antenna's segments, each at its own height; kept by the
    points' values (the last few)."""
    small = rho.size <= GEOMETRY_MAX_POINTS
    if small:
        key = (float(k0), ns, nz, rho.tobytes(), zeta.tobytes())
        held = _GEOMETRY.get(key)
        if held is not None:
            _GEOMETRY.move_to_end(key)
            return held
    r = np.hypot(rho, zeta)
    phase = np.exp(-1j * k0 * r) / np.maximum(r, 1.0)
    i0, ti = _stencil(np.arcsinh(rho / RHO_SCALE_M) / S_STEP, ns)
    heights, which, counts = np.unique(zeta, return_inverse=True, return_counts=True)
    which = which.reshape(-1)
    busy = 2 * counts >= ns  # heights holding enough points to pay for the table's interpolation to them
    if len(heights) * ns <= 2 * len(zeta):
        out = _heights_geometry(heights, which, i0, ti, phase, nz)
    elif busy.any():  # a wire's or a run's height beside scattered points (a compact antenna's segments)
        on = busy[which]
        h, p = np.flatnonzero(on), np.flatnonzero(~on)
        kept, w = np.unique(which[h], return_inverse=True)
        out = (
            "mixed",
            h,
            _heights_geometry(heights[kept], w.reshape(-1), i0[h], ti[h], phase[h], nz),
            p,
            _points_geometry(zeta[p], i0[p], ti[p], phase[p], nz),
        )
    else:
        out = _points_geometry(zeta, i0, ti, phase, nz)
    if small:
        _keep(_GEOMETRY, key, out)
    return out


def _heights_geometry(heights, which, i0, ti, phase, nz: int) -> tuple:
    """("heights", per-height zeta stencils and weights, per-point indices into the table interpolated to those
    heights (4, N), rho weights (4, N), phase) of points at ``heights[which]``."""
    j0, tj = _stencil(heights / ZETA_STEP_M, nz)
    wz = np.stack(_lagrange(tj), axis=1)  # (heights, 4)
    at = (i0[None, :] + np.arange(4)[:, None]) * len(heights) + which[None, :]  # (4, N)
    return ("heights", j0, wz, at, np.stack(_lagrange(ti)), phase)


def _points_geometry(zeta, i0, ti, phase, nz: int) -> tuple:
    """("points", indices into the table (16, N), tensor weights (16, N), phase) of points at heights ``zeta``."""
    j0, tj = _stencil(zeta / ZETA_STEP_M, nz)
    offsets = (np.arange(4)[:, None] * nz + np.arange(4)[None, :]).ravel()
    at = offsets[:, None] + (i0 * nz + j0)[None, :]  # (16, N)
    w = (np.stack(_lagrange(ti))[:, None, :] * np.stack(_lagrange(tj))[None, :, :]).reshape(16, -1)
    return ("points", at, w, phase)


FAR_SHARE_M = (30.0, 100.0)
"""Where the table goes over from the remainder (close in) to the whole integrals (far out, where the closed
forms' non-radiating 1 / R terms would beat against the radiating part's phase between nodes)."""


def _far_share(rho: np.ndarray) -> np.ndarray:
    """0 below FAR_SHARE_M[0], 1 beyond FAR_SHARE_M[1], a smooth step in log rho between."""
    lo, hi = np.log(FAR_SHARE_M[0]), np.log(FAR_SHARE_M[1])
    x = np.clip((np.log(np.maximum(rho, 1e-9)) - lo) / (hi - lo), 0.0, 1.0)
    return x * x * (3 - 2 * x)


def _stencil(p: np.ndarray, n: int):
    i = np.clip(np.floor(p).astype(int) - 1, 0, n - 4)
    return i, p - i  # the position within the 4-node stencil, nodes at 0, 1, 2, 3


def _lagrange(t: np.ndarray):
    return (
        -(t - 1) * (t - 2) * (t - 3) / 6,
        t * (t - 2) * (t - 3) / 2,
        -t * (t - 1) * (t - 3) / 2,
        t * (t - 1) * (t - 2) / 6,
    )


def table(freq_hz: float, n2: complex, kind: str, rho_max_m: float, zeta_max_m: float) -> _Table:
    """The table of a frequency, ground and kind reaching ``rho_max_m`` and ``zeta_max_m`` (kept: the last few
    asked for; one reaching farther serves nearer points too)."""
    rho_top = next(e for e in _BLOCK_EDGES_M[1:] if e >= min(max(rho_max_m, RHO_LEAST_M), RHO_MAX_M))
    zeta_top = ZETA_BLOCK_M * max(1, int(np.ceil(max(zeta_max_m, ZETA_LEAST_M) / ZETA_BLOCK_M)))
    base = (float(freq_hz), complex(n2), kind)
    for key, tab in _TABLES.items():
        if key[:3] == base and key[3] >= rho_top and key[4] >= zeta_top:
            _TABLES.move_to_end(key)
            return tab
    for key in [k for k in _TABLES if k[:3] == base]:  # grown, not rebuilt piecemeal: the old one is let go
        rho_top, zeta_top = max(rho_top, key[3]), max(zeta_top, key[4])
        del _TABLES[key]
    tab = _TABLES[base + (rho_top, zeta_top)] = _Table(freq_hz, n2, kind, rho_top, zeta_top)
    while len(_TABLES) > _TABLES_KEPT:
        _TABLES.popitem(last=False)
    return tab


def reflected(freq_hz: float, n2: complex, rho, zeta, kind: str) -> np.ndarray:
    """(7, N): the reflected-field integrals ``kind`` needs (the others zero) at distances ``rho`` (<= RHO_MAX_M)
    and heights ``zeta`` (interpolated remainder plus closed forms), without the 1 / k0^2 of the field."""
    return reflected_grounds(freq_hz, [n2], rho, zeta, kind)[0]


def reflected_grounds(freq_hz: float, n2s, rho, zeta, kind: str) -> np.ndarray:
    """(G, 7, N): :func:`reflected` over each ground of ``n2s`` at the same points, each ground's values those
    :func:`reflected` gives alone, to the bit.  The points' geometry is worked (or found) once, and where the tables
    have the same grid and the points stand at a few heights their interpolation to those heights (small) is
    stacked, so the gathers at the points are one per stencil node for all grounds (a ground spread's nine)."""
    rho = np.asarray(rho, dtype=float)
    zeta = np.asarray(zeta, dtype=float)
    out = np.zeros((len(n2s), 7, rho.size), dtype=complex)
    if rho.size == 0:
        return out
    if np.any(rho > RHO_MAX_M) or np.any(rho < 0) or np.any(zeta < 0):
        raise ValueError(f"the table holds 0 <= rho <= {RHO_MAX_M} m and zeta >= 0")
    rho_max, zeta_max = float(rho.max()), float(zeta.max())
    tabs = [table(freq_hz, n2, kind, rho_max, zeta_max) for n2 in n2s]
    rows = list(tabs[0].rows)
    shapes = {t.values.shape for t in tabs}
    if len(tabs) > 1 and len(shapes) == 1:
        out[:, rows] = _remainders(tabs, rho, zeta)
    else:
        for g, tab in enumerate(tabs):
            out[g, rows] = tab.remainder(rho, zeta)
    close = np.nonzero(rho < FAR_SHARE_M[1])[0]
    if len(close):
        near = _near_geometry(rho, zeta, close)
        rc, zc = rho[close], zeta[close]
        for g, (n2, tab) in enumerate(zip(n2s, tabs)):
            cf = closed_forms(rc, zc, tab.k0, n2, laplace=near[1], rows=rows)
            for r in rows:
                out[g, r, close] += near[0] * cf[r]
    return out


def _remainders(tabs, rho: np.ndarray, zeta: np.ndarray) -> np.ndarray:
    """(G, rows, N): :meth:`_Table.remainder` of each of ``tabs`` (one grid) at the same points, the gathers at the
    points shared: each table's values interpolated to the points' few heights are stacked (small), then gathered
    once per stencil node; the same products summed in the same order as table by table."""
    first = tabs[0]
    return _remainders_at(tabs, _geometry(first.k0, len(first.s), len(first.zeta), rho, zeta))


def _remainders_at(tabs, g: tuple) -> np.ndarray:
    """(G, rows, N): :func:`_remainders` through the points' geometry ``g`` (:func:`_geometry`)."""
    n_rows = len(tabs[0].rows)
    if g[0] == "mixed":
        _, h, g_h, p, g_p = g
        out = np.empty((len(tabs), n_rows, len(h) + len(p)), dtype=complex)
        out[:, :, h] = _remainders_at(tabs, g_h)
        out[:, :, p] = _remainders_at(tabs, g_p)
        return out
    if g[0] == "points":
        _, at, w, phase = g
        return np.stack([_gathered(t.values.reshape(n_rows, -1), at, w) * phase for t in tabs])
    _, j0, wz, at, wr, phase = g
    at_h = np.stack([_weighted(lambda k, t=t: t.values[:, :, j0 + k], wz) for t in tabs])  # (G, rows, nodes, heights)
    got = _gathered(at_h.reshape(len(tabs) * n_rows, -1), at, wr) * phase
    return got.reshape(len(tabs), n_rows, -1)


_NEAR = _Kept()


def _near_geometry(rho: np.ndarray, zeta: np.ndarray, close: np.ndarray) -> tuple:
    """(1 - the far share, the Laplace transforms of :func:`_laplace`) at the points ``close`` of (rho, zeta), kept
    by the points' values as :func:`_geometry` keeps its own."""
    small = rho.size <= GEOMETRY_MAX_POINTS
    if small:
        key = (rho.tobytes(), zeta.tobytes())
        held = _NEAR.get(key)
        if held is not None:
            _NEAR.move_to_end(key)
            return held
    out = (1 - _far_share(rho[close]), _laplace(rho[close], zeta[close]))
    if small:
        _keep(_NEAR, key, out)
    return out


def reflected_direct(freq_hz: float, n2: complex, rho: float, zeta: float) -> np.ndarray:
    """(7,): the same integrals at one point by quadrature there (no table): the check on the interpolation."""
    k0 = 2 * np.pi * freq_hz / C_M_PER_S
    rem = remainder_grid(k0, n2, np.array([rho]), np.array([zeta]))[:, 0, 0]
    return rem + closed_forms(np.array([rho]), np.array([zeta]), k0, n2)[:, 0]
