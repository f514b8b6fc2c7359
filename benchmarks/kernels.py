"""Each family's pattern kernel against a minimal numpy version of the same formula (not a test).

    python benchmarks/kernels.py [--load]

For every family the project's own call, ``antenna.gain_linear(f, az, el)`` on a fresh antenna (built before the
clock starts) of a kind already seen in the process (its line constants and quadrature known, every in-run store
of results emptied before each run), is timed against a *floor*: the same formula written here as plain numpy
with nothing but the arithmetic, its constants (line constants, loads, scale factors, the grid's distinct
elevations) worked out before the clock starts.  The floor's numbers are checked against the project's
(relative 1e-9) before either is timed, so the two compute the same thing.  Target (the speed issue): every
kernel within 1.5x of its floor.

``--load`` runs the same with a second process keeping one of the two cores busy (numpy products in a loop), and
adds a four-square of verticals against PyNEC on the same structure (target: >= 100x under load).

The grid is the pattern grid of the NEC comparison in benchmarks/bench.py: 2 deg in azimuth and elevation from
1 deg up (180 x 45 = 8,100 directions), 1.83 MHz, moist loam.
"""

from __future__ import annotations

import argparse
import multiprocessing as mp
import sys
import time
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parents[1]
if str(REPO) not in sys.path:
    sys.path.insert(0, str(REPO))

from snrgain.antennas import from_si  # noqa: E402
from snrgain.memo import forget  # noqa: E402

F = 1.83e6
C = 299_792_458.0
ETA0 = 376.730313668
MU0 = 4e-7 * np.pi
GROUND = "moist loam"
LAM = C / F


def grid():
    """(az, el) flattened, and the grid's structure the floors may use: (distinct elevations, their index per
    direction, cos az, sin az)."""
    az, el = np.meshgrid(np.radians(np.arange(0.0, 360.0, 2.0)), np.radians(np.arange(1.0, 90.0, 2.0)))
    az, el = az.ravel(), el.ravel()
    el_u, inv = np.unique(el, return_inverse=True)
    return az, el, (el_u, inv, np.cos(az), np.sin(az))


def _eps(ground, f):
    return ground.complex_permittivity(f)


def _fresnel(eps, s, c):
    root = np.sqrt(eps - c * c + 0j)
    es = eps * s
    return (es - root) / (es + root), (s - root) / (s + root)


# -- floors: the arithmetic of each family's pattern and nothing else ------------------------------------------------


def beverage_floor(ant, struct):
    """The long wire (snrgain.antennas.longwire: a Beverage with its down-leads, a BOG without, an unterminated wire
    with its far end open): the transmission-line currents of a plane wave along the wire, the leads' EMFs, the
    feed current into the receiver's load."""
    el_u, inv, cos_az, sin_az = struct
    line = ant.line(F)
    g, z0, length, h = line.gamma, line.z0, ant.length_m, ant.wire_height_m()
    load = ant.receiver_load_ohm(F)
    z_feed, z_far = ant.feed_load_ohm(F), ant.far_load_ohm(F)  # the loads at the leads' feet, seen up the leads
    leads = ant.has_leads
    k = 2 * np.pi * F / C
    eps = _eps(ant.ground, F)
    cb, sb = np.cos(ant.bearing_rad), np.sin(ant.bearing_rad)
    e2, eg = np.exp(-2 * g * length), np.exp(-g * length)
    ch, sh = 0.5 * (1 + e2), 0.5 * (1 - e2)
    if z_far is None:  # open far end
        den = z0 * ch + z_feed * sh
        c_p, c_m, c_end, c_phase = 0.5, -0.5, sh, 0.0
    else:
        den = z0 * (z_feed + z_far) * ch + (z0 * z0 + z_feed * z_far) * sh
        c_p, c_m, c_end, c_phase = 0.5 * (z0 + z_far), 0.5 * (z0 - z_far), z0 * ch + z_far * sh, z0 * eg
    scale2 = 4 * np.pi / LAM**2 * load * ETA0 * abs(ant.feed_current_ratio(F)) ** 2 / abs(den) ** 2
    s_u, c_u = np.sin(el_u), np.cos(el_u)

    def run():
        r_v, r_h = _fresnel(eps, s_u, c_u)
        up = np.exp(1j * k * h * s_u)
        dn = up.conj()
        f_v = s_u * (up - r_v * dn)
        f_h = up + r_h * dn
        cd = cos_az * cb + sin_az * sb
        sd = sin_az * cb - cos_az * sb
        along = c_u[inv] * cd
        phase = np.exp((1j * k * length) * along)
        jkc = 1j * k * along
        decay = phase * eg
        q = c_p * ((decay - 1.0) / (jkc - g)) + c_m * ((decay - e2) / (jkc + g))
        i_v = -cd * f_v[inv] * q
        if leads:
            seg = (up - 1.0) / (1j * k * s_u)
            lead = c_u * (seg + r_v * seg.conj())
            i_v += lead[inv] * (c_end - c_phase * phase)
        i_h = -sd * f_h[inv] * q
        return scale2 * (i_v.real**2 + i_v.imag**2 + i_h.real**2 + i_h.imag**2)

    return run


def terminated_loop_floor(ant, struct):
    """The terminated loop (snrgain.antennas.termloop): the loop's top and bottom as a line driven by the field
    difference between their heights, and its sides' EMFs, magnetic part whole and electric part scaled."""
    el_u, inv, cos_az, sin_az = struct
    line = ant.line(F)
    g, z0, width = line.gamma, line.z0, ant.width_m
    term = ant.termination_ohm(F)
    load = ant._load_ohm(F, term)
    share = ant.electric_share(F)
    k = 2 * np.pi * F / C
    eps = _eps(ant.ground, F)
    b = ant.line_bearing_rad
    cb, sb = np.cos(b), np.sin(b)
    e2, eg = np.exp(-2 * g * width), np.exp(-g * width)
    ch, sh = 0.5 * (1 + e2), 0.5 * (1 - e2)
    den = z0 * (load + term) * ch + (z0 * z0 + load * term) * sh
    near, far = (z0 * ch + term * sh) / den, z0 * eg / den
    scale2 = 4 * np.pi / LAM**2 * load * ETA0
    s_u, c_u = np.sin(el_u), np.cos(el_u)
    z_top, z_bot = ant.z_top, ant.z_bottom

    def run():
        r_v, r_h = _fresnel(eps, s_u, c_u)
        up_t, up_b = np.exp(1j * k * z_top * s_u), np.exp(1j * k * z_bot * s_u)
        d_v = s_u * ((up_t - up_b) - r_v * (up_t.conj() - up_b.conj()))
        d_h = (up_t - up_b) + r_h * (up_t.conj() - up_b.conj())
        seg = (up_t - up_b) / (1j * k * s_u)
        side = c_u * (seg + r_v * seg.conj())
        cd = cos_az * cb + sin_az * sb
        sd = sin_az * cb - cos_az * sb
        along = c_u[inv] * cd
        phase = np.exp((1j * k * width) * along)
        jkc = 1j * k * along
        decay = phase * eg
        q = (0.5 * (z0 + term) / den) * ((decay - 1.0) / (jkc - g)) + (0.5 * (z0 - term) / den) * (
            (decay - e2) / (jkc + g)
        )
        sd_u = side[inv]
        mag, ele = 0.5 * sd_u * (1.0 - phase), (0.5 * share) * sd_u * (1.0 + phase)
        i_v = -cd * d_v[inv] * q + (mag + ele) * near + (mag - ele) * far
        i_h = -sd * d_h[inv] * q
        return scale2 * (i_v.real**2 + i_v.imag**2 + i_h.real**2 + i_h.imag**2)

    return run


def _vertical_constants(ant):
    k = 2 * np.pi * F / C
    p_rad, i_sq = ant._power_terms(F)
    scale2 = 4 * np.pi * ETA0 * k**2 / (32 * np.pi**2) / (p_rad + 0.5 * i_sq * ant.ground_loss_ohm)
    z = ant._z
    cur = np.sin(k * (ant.height_m + ant.top_m - z)) * ant._wz
    return k, scale2, z, cur


def _vertical_field(k, z, cur, eps, s_u, c_u):
    """cos(el) F(el) of the vertical on the distinct elevations: F = integral I(z) [e^{jkzs} + R_v e^{-jkzs}] dz."""
    r_v, _ = _fresnel(eps, s_u, c_u)
    ph = np.exp(1j * k * s_u[:, None] * z[None, :])
    return c_u * ((ph * cur).sum(axis=1) + r_v * (ph.conj() * cur).sum(axis=1))


def vertical_floor(ant, struct):
    """The vertical monopole (snrgain.antennas.vertical): the sinusoidal current's form factor with the Fresnel
    reflection, per distinct elevation, spread over the grid."""
    el_u, inv, _, _ = struct
    k, scale2, z, cur = _vertical_constants(ant)
    eps = _eps(ant.ground, F)
    s_u, c_u = np.sin(el_u), np.cos(el_u)

    def run():
        e = _vertical_field(k, z, cur, eps, s_u, c_u)
        return (scale2 * (e.real**2 + e.imag**2))[inv]

    return run


def small_loop_floor(ant, struct):
    """The small loop (snrgain.antennas.smallloop): the magnetic field normal to the loop, incident plus reflected."""
    el_u, inv, cos_az, sin_az = struct
    p = ant.params
    k = 2 * np.pi * F / C
    r_rad, r_loss = ant.input_resistance_ohm(F)
    omega = 2 * np.pi * F
    scale = (omega * MU0 * ant.area_m2 * p.turns) ** 2 / (4 * ETA0 * (r_rad + r_loss))
    amp2 = 4 * np.pi * scale / LAM**2
    eps = _eps(ant.ground, F)
    s_u, c_u = np.sin(el_u), np.cos(el_u)
    cb, sb = np.cos(p.bearing), np.sin(p.bearing)

    def run():
        r_v, r_h = _fresnel(eps, s_u, c_u)
        up = np.exp(1j * k * p.height * s_u)
        dn = up.conj()
        a_v = up + r_v * dn
        a_h = s_u * (r_h * dn - up)
        cd = cos_az * cb + sin_az * sb
        sd = sin_az * cb - cos_az * sb
        h_v = cd * a_v[inv]
        h_h = sd * a_h[inv]
        return amp2 * (h_v.real**2 + h_v.imag**2 + h_h.real**2 + h_h.imag**2)

    return run


def array_floor(ant, struct):
    """Phased verticals (snrgain.antennas.array): one element's field times the weighted sum of the elements'
    position phases, each phase exp(j k east x) exp(j k north y) from one exponential per distinct nonzero
    coordinate (which coordinate each element takes worked out before the clock starts; the cases here stand with
    an element at the origin, so no reference phase)."""
    el_u, inv, cos_az, sin_az = struct
    k, scale2, z, cur = _vertical_constants(ant.elements[0])
    eps = _eps(ant.elements[0].ground, F)
    s_u, c_u = np.sin(el_u), np.cos(el_u)
    amps = ant.element_amplitudes(F)
    x, y = ant.positions[:, 0], ant.positions[:, 1]
    xs, ys = sorted({v for v in x if v}), sorted({v for v in y if v})
    terms = [(a, xs.index(xi) if xi else None, ys.index(yi) if yi else None) for a, xi, yi in zip(amps, x, y)]

    def run():
        e = _vertical_field(k, z, cur, eps, s_u, c_u)
        ce = c_u[inv]
        kx, ky = k * ce * sin_az, k * ce * cos_az
        ex = [np.exp(1j * v * kx) for v in xs]
        ey = [np.exp(1j * v * ky) for v in ys]
        af = np.zeros(kx.shape, dtype=complex)
        for a, i, j in terms:
            if i is None and j is None:
                af += a
            elif i is None or j is None:
                af += a * (ex[i] if j is None else ey[j])
            else:
                af += a * (ex[i] * ey[j])
        e2 = scale2 * (e.real**2 + e.imag**2)
        return e2[inv] * (af.real**2 + af.imag**2)

    return run


QUARTER = LAM / 4

CASES = {
    "beverage 250 m": (
        lambda: from_si("beverage", length=250.0, height=2.5, ground=GROUND, termination=500.0),
        beverage_floor,
    ),
    "BOG 90 m": (
        lambda: from_si("bog", length=90.0, ground=GROUND, termination=400.0),
        beverage_floor,
    ),
    "unterminated 250 m": (
        lambda: from_si("unterminated", length=250.0, height=2.5, ground=GROUND),
        beverage_floor,
    ),
    "terminated loop 8 x 4 m": (
        lambda: from_si("terminated-loop", width=8.0, loop_height=4.0, height=1.5, ground=GROUND, termination=900.0),
        terminated_loop_floor,
    ),
    "vertical quarter wave": (lambda: from_si("vertical", height=QUARTER, ground=GROUND), vertical_floor),
    "small loop 2 x 2 m": (
        lambda: from_si("small-loop", width=2.0, loop_height=2.0, height=2.5, ground=GROUND),
        small_loop_floor,
    ),
    "phased verticals (pair)": (
        lambda: from_si(
            "phased-verticals",
            positions=[[0.0, 0.0], [0.0, QUARTER]],
            height=5.0,
            ground=GROUND,
            steering="given",
            phases=[0.0, 90.0],
            phase_sense="lag",
        ),
        array_floor,
    ),
    "four-square (verticals)": (
        lambda: from_si(
            "phased-verticals",
            positions=[[0.0, 0.0], [QUARTER, 0.0], [0.0, QUARTER], [QUARTER, QUARTER]],
            height=5.0,
            ground=GROUND,
            steering="given",
            phases=[0.0, 90.0, 90.0, 180.0],
            phase_sense="lag",
        ),
        array_floor,
    ),
}


def _best(fn, n):
    """Best wall time of ``n`` runs of ``fn`` [s] (benchmarks/bench.py's best_of)."""
    from benchmarks.bench import best_of

    return best_of(fn, n)[0]


def _best_fresh(build, az, el, n):
    """Best time of ``gain_linear`` on a freshly built antenna (built before the clock starts, every in-run store
    of results emptied: snrgain.memo.forget), its kind's line constants and quadrature known."""
    best = float("inf")
    for _ in range(n):
        ant = build()
        forget()
        t = time.perf_counter()
        ant.gain_linear(F, az, el)
        best = min(best, time.perf_counter() - t)
    return best


def kernels(repeat: int = 50) -> list[tuple[str, float, float]]:
    """(family, kernel [s], floor [s]) per case, after checking that the floor computes the kernel's numbers."""
    az, el, struct = grid()
    out = []
    for name, (build, floor) in CASES.items():
        ant = build()
        ours = ant.gain_linear(F, az, el)
        run = floor(ant, struct)
        theirs = run()
        err = float(np.max(np.abs(theirs - ours)) / np.max(ours))
        if err > 1e-9:
            raise AssertionError(f"{name}: the floor differs from the kernel by {err:.1e} of the peak")
        t_ours = _best_fresh(build, az, el, repeat)
        t_floor = _best(run, repeat)
        out.append((name, t_ours, t_floor))
    return out


def _busy(stop):
    a = np.random.default_rng(0).standard_normal((300, 300))
    while not stop.is_set():
        a = np.tanh(a @ a.T * 1e-3)


def four_square_against_pynec():
    """(PyNEC [s], ours [s]) for the four-square's 2 deg pattern, or None without PyNEC."""
    try:
        import PyNEC  # noqa: F401
    except ImportError:
        return None
    from benchmarks.bench import _grid_2deg, _pynec

    q = QUARTER
    wires = [(x, y, 0, x, y, 5.0, 3) for x, y in ((0, 0), (q, 0), (0, q), (q, q))]
    sources = [(1, 1, 0.0), (2, 1, -90.0), (3, 1, -90.0), (4, 1, -180.0)]
    t_nec = _best(lambda: _pynec(wires, feed=(1, 1), sources=sources), 3)
    az, el = _grid_2deg()
    build = CASES["four-square (verticals)"][0]
    build().gain_linear(F, az, el)
    t_ours = _best_fresh(build, az, el, 30)
    return t_nec, t_ours


def report(load: bool) -> None:
    rows = kernels()
    print(f"\nkernels against their minimal numpy floor ({'one core kept busy' if load else 'idle'}; best of 50):")
    print(f"{'family':<28}{'kernel [ms]':>12}{'floor [ms]':>12}{'ratio':>8}   target <= 1.5x")
    for name, ours, floor in rows:
        print(f"{name:<28}{ours * 1e3:>12.3f}{floor * 1e3:>12.3f}{ours / floor:>7.2f}x")
    if load:
        got = four_square_against_pynec()
        if got is None:
            print("PyNEC not installed (pip install '.[nec]'): the four-square against NEC-2 skipped")
        else:
            t_nec, t_ours = got
            print(
                f"four-square pattern (2 deg grid) under load: PyNEC {t_nec * 1e3:.1f} ms, ours {t_ours * 1e3:.3f} ms, "
                f"{t_nec / t_ours:.0f}x   (target >= 100x)"
            )


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--load", action="store_true", help="keep one core busy in a second process while timing")
    args = ap.parse_args(argv)
    from snrgain.allocator import tune

    tune()  # freed memory kept for the next array, as the command line does
    if not args.load:
        report(False)
        return
    stop = mp.Event()
    hog = mp.Process(target=_busy, args=(stop,), daemon=True)
    hog.start()
    try:
        report(True)
    finally:
        stop.set()
        hog.join(5)


if __name__ == "__main__":
    main()
