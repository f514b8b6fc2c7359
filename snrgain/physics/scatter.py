"""A transmitting vertical next to a receiving antenna: the vertical as a scatterer.

Model
-----
The vertical (height h, top loading t, radius a, radial loss R_loss, its base loaded by Z_L: the transmitter's
feed, 50 ohm, when resonant; an open relay or a detuning reactance when detuned) receives from a plane wave of
unit field from direction d the open-circuit voltage

    V_v(d) = c_v e_v(d) phi(d),   c_v = lambda sqrt(R_v / (pi eta0)),   R_v = R_rad + R_loss,

e_v the vertical family's complex response (|e_v|^2 its gain: snrgain.antennas.vertical) and phi the incident
wave's phase at the vertical's place relative to the receiving antenna's phase reference.  (c_v e_v is the
effective height: a gain G of an antenna of input resistance R is an effective area lambda^2 G / (4 pi), that is
|h|^2 = lambda^2 G R / (pi eta0); a short monopole over a perfect ground gives |h| = its height, the textbook value:
Kraus, "Antennas", 2nd ed., Section 2-22 (cited from memory); a test checks it against the induced-EMF mutual
impedance.)  Its base current is I_v = -V_v / (Z_vv + Z_L), Z_vv the self impedance by the induced-EMF method
(snrgain.antennas.coupling.monopole_impedance, at the radius; with top loading the reactance of a monopole as tall
as its electrical length, :func:`self_impedance`) plus R_loss.  That current re-radiates; the receiving
antenna's open-circuit voltage gains Z_Av I_v, Z_Av the mutual impedance from the vertical's base to the antenna's
port.  The network equations of two ports (V = Z I, each port's incident-field source added) give, for the
antenna's port open,

    V_A(d) = V_A,inc(d) - Z_Av V_v(d) / (Z_vv + Z_L).

Z_Av is taken through the antenna's own port response to the vertical's field where it stands (reciprocity; the
route snrgain.model.placed takes for compact antennas and near sources): the vertical's E_z at the antenna, per
unit base current, by the closed-form field of a sinusoidal filament and its image (coupling.field_z: near,
induction and radiation terms; Schelkunoff and Friis 1952, Balanis 2005 eq. (8-53)), is a vertically polarised
wave arriving along the ground from the vertical's bearing; over a perfect ground a unit incident wave at grazing
makes a total E_z of -2 (E_theta = 1 points down there), so the antenna sees an incident wave of E_theta = -E_z / 2
and Z_Av = -c_A e_A,pg(toward the vertical, 0 deg) E_z / 2, e_A,pg its response over a perfect ground.  Over a
lossy ground E_z is multiplied by Norton's attenuation function at that distance
(noisemodels.groundwave.attenuation), near 1 within a few hundred metres at these frequencies.  Dividing by c_A:

    e_A,total(d) = e_A(d) + e_A,pg(d_v, 0) (E_z / 2) c_v e_v(d) phi(d) / (Z_vv + Z_L),

the second term vertically polarised only (the vertical radiates no horizontal field).  An array takes the sum
over its elements through its weights, each element hearing the field where it stands.

Limits (said, not hidden): the antenna is taken as compact, the vertical's wave as plane across it at the field
of its feed point (an array: each element at its own place); the second-order change of the antenna's own port
impedance by the vertical (Z_Av Z_vA / (Z_vv + Z_L)) is left out: it moves the antenna's output level a little,
not its pattern; the vertical's current is sinusoidal (the induced-EMF assumption, good to about 0.3 wavelength
tall: taller ones are refused); an open base stops the base current and with it the whole re-radiation in this
model, while a real open vertical still carries a small current (a wire a quarter wave long, cut at its base,
resonates only near twice the frequency: NEC shows the residue, tests/nec/scatter.json).  A long wire is not
compact (the vertical's field along it is no single wave): its term is its own response to the vertical's whole
field per unit base current, that field built as a column of short dipoles over the ground (near-ground model,
with the tilt that drives a wire) and integrated along the wire and up its leads through its line model
(:func:`wire_coupling`); against NEC-2 for a 100 m Beverage 2 m up with the vertical 10-80 m broadside and 10-40 m
behind it over lossy ground: RDF change within 0.1 dB, forward-gain change within 0.4 dB, front-to-back within
1 dB (tests/test_tx_scatter.py).
A loop takes the vertical's field at three points along its width (its grazing response fitted as a row of
point receivers) plus the circulation of the vertical's radial field along a top and a bottom wire at the loop's
lowest and highest points: exact in form for a rectangle (a flag), an approximation for the other shapes
(pennant, delta, diamond), which the NEC-2 set does not cover.  The vertical's wave tilt over lossy ground (the
surface wave's radial E) is left out.
"""

from __future__ import annotations

import numpy as np

from snrgain.memo import Memo
from snrgain.physics.ground import C_M_PER_S, ETA0_OHM
from snrgain.physics.quadrature import gauss_legendre
from snrgain.records import record

MAX_TX_HEIGHT_WAVELENGTHS = 0.3
"""The induced-EMF model of the vertical's current holds to about 0.3 wavelength (coupling.py)."""
DEFAULT_TX_RADIUS_M = 0.025
"""The transmitting vertical's radius when not given: 50 mm tubing (common practice for a self-supporting
vertical; an assumption of snrgain)."""
TX_STATES = ("resonant", "detuned")
GRAZING_RAD = 1e-3
"""The elevation the grazing response is taken at: its limit (some families return 0 at exactly 0 deg)."""
EQUIVALENT_POINTS = 3
"""Points along a loop's width that carry its grazing response (feed side, middle, far side)."""
RESONANT_LOAD_OHM = 50.0
"""The transmitter's feed seen from the vertical's base when it is connected (a 50 ohm system)."""


@record
class TxVertical:
    """The transmitting vertical as a scatterer: ``vertical`` an antenna of the vertical family (its height, top
    loading, radial loss and ground), where it stands [m east, m north], its radius [m] and its base load [ohm]
    (None: open)."""

    vertical: object
    position_m: tuple[float, float]
    load_ohm: complex | None = RESONANT_LOAD_OHM
    radius_m: float = DEFAULT_TX_RADIUS_M

    def with_load(self, load_ohm: complex | None) -> TxVertical:
        return TxVertical(self.vertical, self.position_m, load_ohm, self.radius_m)


def state_load(state: str, detune_reactance_ohm: float | None = None) -> complex | None:
    """The base load of a state: resonant, 50 ohm; detuned, the detuning reactance (j X) or open (None)."""
    if state == "resonant":
        return RESONANT_LOAD_OHM
    if state == "detuned":
        return None if detune_reactance_ohm is None else 1j * float(detune_reactance_ohm)
    raise ValueError(f"tx_state: {state!r} is not a state; allowed: {', '.join(TX_STATES)}")


def check_height(tx: TxVertical, freq_hz: float) -> None:
    v = tx.vertical
    h_wl = (v.height_m + v.top_m) * freq_hz / C_M_PER_S
    if h_wl > MAX_TX_HEIGHT_WAVELENGTHS:
        raise ValueError(
            f"the transmitting vertical is {h_wl:.2f} wavelengths tall at {freq_hz / 1e6:g} MHz; its re-radiation is "
            f"modelled up to {MAX_TX_HEIGHT_WAVELENGTHS} wavelengths"
        )


def self_impedance(tx: TxVertical, freq_hz: float) -> complex:
    """Z_vv [ohm]: induced-EMF self impedance over a perfect ground plus the radial system's loss.

    With top loading t the resistance is the induced EMF's of the top-loaded current, and the reactance that of a
    plain monopole h + t tall: the top loading is given as the electrical length the hat adds, that is, a hat that
    takes the current as the missing length of wire would (sin(k (h + t - z)) below it).  The induced EMF of the
    top-loaded current on the wire itself would put the hat's charge at the wire's tip, a point charge on a wire
    25 mm across, whose self-field gives a capacitance far smaller than any hat's (-5600 ohm for a 12 m vertical
    with 8.5 m of loading at 3.5 MHz, a hat that resonates it): the vertical would be taken as detuned.  NEC-2 on a
    vertical with a hat of four wires tuned to resonance: tests/nec/scatter_tophat.json."""
    from snrgain.antennas.coupling import monopole_impedance

    v = tx.vertical
    f, h, top, a = float(freq_hz), float(v.height_m), float(v.top_m), float(tx.radius_m)
    z = monopole_impedance(f, h, top, a)
    if top > 0:
        z = complex(z.real, monopole_impedance(f, h + top, 0.0, a).imag)
    return z + float(v.ground_loss_ohm)


def effective_height_scale(tx: TxVertical, freq_hz: float) -> float:
    """c_v = lambda sqrt(R_v / (pi eta0)) [m]: the effective height per unit of the family's complex response."""
    v = tx.vertical
    r_v = v.radiation_resistance_ohm(freq_hz) + v.ground_loss_ohm
    return C_M_PER_S / freq_hz * np.sqrt(r_v / (np.pi * ETA0_OHM))


def field_at(tx: TxVertical, freq_hz: float, points_m, z_m) -> np.ndarray:
    """E_z [V/m] per unit base current at plan points (N, 2) and heights (N,) [m], the ground's surface-wave
    attenuation applied over a lossy ground."""
    from snrgain.antennas.coupling import field_z

    v = tx.vertical
    k = 2 * np.pi * freq_hz / C_M_PER_S
    p = np.atleast_2d(np.asarray(points_m, dtype=float))
    rho = np.hypot(p[:, 0] - tx.position_m[0], p[:, 1] - tx.position_m[1])
    rho = np.maximum(rho, 4 * tx.radius_m)
    z = np.broadcast_to(np.asarray(z_m, dtype=float), rho.shape)
    ez = np.array([field_z(k, v.height_m, v.top_m, float(r), float(zz)) for r, zz in zip(rho, z)], dtype=complex)
    ez = ez / np.sin(k * (v.height_m + v.top_m))
    g = v.ground
    if g is not None:
        from noisemodels.groundwave import attenuation, complex_permittivity, numerical_distance

        n2 = complex_permittivity(freq_hz, g.permittivity, g.conductivity_s_per_m)
        ez = ez * attenuation(numerical_distance(rho, freq_hz, n2, "vertical"))
    return ez


def radial_field_at(tx: TxVertical, freq_hz: float, points_m, z_m) -> np.ndarray:
    """E_rho [V/m] per unit base current (outward from the vertical) at plan points (N, 2) and heights (N,) [m]: the
    closed form for a sinusoidal filament and its image without top loading (Balanis, "Antenna Theory", 3rd ed.
    (2005), eq. (8-52), the dipole of half-length h), times the surface-wave attenuation as for E_z."""
    v = tx.vertical
    k = 2 * np.pi * freq_hz / C_M_PER_S
    h = v.height_m + v.top_m
    p = np.atleast_2d(np.asarray(points_m, dtype=float))
    rho = np.maximum(np.hypot(p[:, 0] - tx.position_m[0], p[:, 1] - tx.position_m[1]), 4 * tx.radius_m)
    z = np.broadcast_to(np.asarray(z_m, dtype=float), rho.shape)
    r1, r2, r0 = np.hypot(rho, z - h), np.hypot(rho, z + h), np.hypot(rho, z)
    bracket = (
        (z - h) * np.exp(-1j * k * r1) / r1
        + (z + h) * np.exp(-1j * k * r2) / r2
        - 2 * z * np.cos(k * h) * np.exp(-1j * k * r0) / r0
    )
    er = 1j * ETA0_OHM / (4 * np.pi * rho) * bracket / np.sin(k * h)
    g = v.ground
    if g is not None:
        from noisemodels.groundwave import attenuation, complex_permittivity, numerical_distance

        n2 = complex_permittivity(freq_hz, g.permittivity, g.conductivity_s_per_m)
        er = er * attenuation(numerical_distance(rho, freq_hz, n2, "vertical"))
    return er


def loop_correction(part, tx: TxVertical, freq_hz: float, points, z_low: float, z_high: float) -> np.ndarray:
    """What the loop's horizontal wires add: the circulation of the vertical's radial field along the top and
    bottom wires, int (E_x,top - E_x,bottom) dx (x from the feed side to the far side), shared as an equal and
    opposite E_z on the feed and far sides (Faraday: the loop's magnetic response is the circulation of E, here
    not all on the sides as it is for a plane wave at grazing).  Returns the change of E_z at ``points``."""
    pts = np.asarray(points, dtype=float)
    x = np.linspace(0.0, 1.0, 17)
    line = pts[0][None, :] + np.multiply.outer(x, pts[-1] - pts[0])
    width = float(np.hypot(*(pts[-1] - pts[0])))
    u = (pts[-1] - pts[0]) / width
    d = line - np.asarray(tx.position_m, dtype=float)
    cos_ux = (d @ u) / np.maximum(np.hypot(d[:, 0], d[:, 1]), 1e-9)
    top = radial_field_at(tx, freq_hz, line, np.full(len(line), z_high)) * cos_ux
    bottom = radial_field_at(tx, freq_hz, line, np.full(len(line), z_low)) * cos_ux
    circ = np.trapezoid(top - bottom, x) * width
    delta = circ / max(z_high - z_low, 1e-6)
    out = np.zeros(len(pts), dtype=complex)
    out[0], out[-1] = 0.5 * delta, -0.5 * delta
    return out


def _centre_height(antenna) -> float:
    """The height [m] where a compact antenna takes the vertical's field: a loop's middle, a vertical's half."""
    p = antenna.params
    low = float(getattr(p, "height", 0.0) or 0.0)
    span = getattr(p, "loop_height", None)
    return low + 0.5 * float(span) if span is not None else 0.5 * low if antenna.resonant_tx else low


_TWINS = Memo(64)


def _perfect_twin(antenna):
    """The antenna over a perfect ground.  One twin is made per design (its gains key and name) and stood where
    each place asks (``at``): its copies share what it worked out, such as the resistor "auto" chooses, which does
    not depend on where it stands (it was searched again at every place of a layout's grid)."""
    from snrgain.antennas.base import variant

    if getattr(antenna, "ground", None) is None:
        return antenna
    key = antenna.gain_key()
    place = antenna.params.position
    if key is None or place is None or getattr(antenna, "switched", None) is not None:
        return variant(antenna, ground="perfect")
    twin = _TWINS.get((key, antenna.name), lambda: variant(antenna, ground="perfect"))
    return twin if twin.params.position == place else twin.at(place)


def parts(antenna, freq_hz: float, at_m):
    """(part, plan point, weight) of each radiating part, and the plan point the antenna's phase refers to: an
    array's elements through their amplitudes in its response (``element_amplitudes``: the weights over the
    combiner's norm, and for elements fed by lines the currents their coupling makes of the weights; phases
    referred to the plan's origin), else the antenna at ``at_m``."""
    elements = getattr(antenna, "elements", None)
    positions = getattr(antenna, "positions", None)
    if elements and positions is not None and len(positions) == len(elements) and not antenna.composite:
        amps = antenna.element_amplitudes(freq_hz)
        pos = np.asarray(positions, dtype=float)
        return [(e, pos[i], complex(amps[i])) for i, e in enumerate(elements)], np.zeros(2)
    at = np.asarray(at_m, dtype=float)
    return [(antenna, at, 1.0)], at


def equivalent_points(part, pos) -> np.ndarray:
    """Plan points [m] carrying a compact antenna's grazing response: its feed point, and for an antenna with a
    width along a line (a loop) points along that width (feed side, middle, far side)."""
    width = getattr(part, "width_m", None)
    bearing = getattr(part, "line_bearing_rad", None)
    pos = np.asarray(pos, dtype=float)
    if width is None or bearing is None:
        return pos[None, :]
    u = np.array([np.sin(bearing), np.cos(bearing)])
    return pos[None, :] + np.multiply.outer(np.linspace(0.0, float(width), EQUIVALENT_POINTS), u)


def grazing_weights(twin, freq_hz: float, points, pos) -> np.ndarray:
    """Amplitudes a_n at ``points`` whose sum sum_n a_n exp(j k u(psi).(x_n - pos)) is the antenna's grazing
    vertically polarised response over a perfect ground at every bearing psi (least squares over 72 bearings):
    the antenna as a row of point receivers, so a wave that is not plane across it (the vertical a few metres
    away) is heard through the field at each point, not through a direction alone."""
    k = 2 * np.pi * freq_hz / C_M_PER_S
    psi = np.radians(np.arange(0.0, 360.0, 5.0))
    ev, _ = twin.complex_response(freq_hz, psi, np.full(psi.shape, GRAZING_RAD))
    u = np.stack([np.sin(psi), np.cos(psi)], axis=1)
    a = np.exp(1j * k * (u @ (np.asarray(points) - pos).T))
    coef, *_ = np.linalg.lstsq(a, ev, rcond=None)
    return coef


def _grazing_on(twin, freq_hz: float, points, pos) -> np.ndarray:
    """:func:`grazing_weights`, kept in the tables' memo by what they depend on (read-only): the twin's gains key
    (its family and parameters; the twins of one antenna at every ground of the spread are one perfect-ground
    twin), its place, the points and ``pos``; worked each time for an antenna without such a key."""
    key = twin.gain_key()
    points, pos = np.ascontiguousarray(points, dtype=float), np.ascontiguousarray(pos, dtype=float)
    if key is None:
        return grazing_weights(twin, freq_hz, points, pos)

    def make():
        out = grazing_weights(twin, freq_hz, points, pos)
        out.flags.writeable = False
        return out

    place = twin.params.position
    full = ("grazing", key, None if place is None else tuple(map(float, place)), float(freq_hz))
    return _TABLES.get((*full, points.shape, points.tobytes(), pos.tobytes()), make)


SEGMENT_POINTS = 16
"""Gauss-Legendre points up the vertical for its field as a column of short dipoles (:func:`field_vector_at`):
within 5e-4 of 32 points from 3 m out (measured)."""
WIRE_STEP_WAVELENGTHS = 1 / 20
"""Samples along a long wire for the vertical's field: this fraction of a wavelength or a third of the closest
approach, whichever is finer, at least WIRE_MIN_SAMPLES (the field varies on those scales only)."""
WIRE_MIN_SAMPLES = 64


def field_vector_at(tx: TxVertical, freq_hz: float, points_m, z_m) -> np.ndarray:
    """E (N, 3) [V/m, east, north, up] per unit base current at plan points (N, 2) and heights (N,) [m]: the
    vertical as a column of short vertical dipoles carrying its sinusoidal current sin(k (H - z)) / sin(k H) (H its
    height plus top loading), each over the vertical's ground by :func:`noisemodels.nearground.field` (direct wave,
    quasi-static image, Norton's reflected and surface waves; on a lossy ground this carries the wave's tilt, the
    radial field a long wire is driven by).  Normalisation: a dipole of moment I dl gives -j k eta0 I dl / (4 pi)
    times nearground's field.  Over a perfect ground it is the closed forms of :func:`field_at` and
    :func:`radial_field_at` (a test, to 1e-4)."""
    from noisemodels import nearground

    v = tx.vertical
    k = 2 * np.pi * freq_hz / C_M_PER_S
    h, big_h = float(v.height_m), float(v.height_m + v.top_m)
    p = np.atleast_2d(np.asarray(points_m, dtype=float))
    rel = np.column_stack([p[:, 0] - tx.position_m[0], p[:, 1] - tx.position_m[1], np.zeros(len(p))])
    rho = np.hypot(rel[:, 0], rel[:, 1])
    close = rho < 4 * tx.radius_m  # on the vertical's axis: taken at four radii out, as field_at does
    rel[close, 0] = 4 * tx.radius_m
    rel[close, 1] = 0.0
    rel[:, 2] = np.broadcast_to(np.asarray(z_m, dtype=float), len(p))
    t, w = gauss_legendre(SEGMENT_POINTS)
    zs, ws = (t + 1) * h / 2, w * h / 2
    current = np.sin(k * (big_h - zs)) / np.sin(k * big_h)
    g = v.ground
    eps = None if g is None else g.permittivity
    sig = None if g is None else g.conductivity_s_per_m
    e = np.zeros((len(p), 3), dtype=complex)
    for zz, ww, ii in zip(zs, ws, current):
        e += (ii * ww) * nearground.field(
            freq_hz, rel, source_height_m=float(zz), kind="vertical", permittivity=eps, conductivity_s_per_m=sig
        )
    return e * (-1j * k * ETA0_OHM / (4 * np.pi))


_JSON = Memo(64)
"""Parameters' JSON by the parameters object (held, so its id stays its own): the memo keys below, made once."""


def _params_json(params) -> str:
    """``params.model_dump_json()`` (the vertical's parameters in the memo keys), made once per parameters object (they
    are frozen) rather than on every field, response or table asked for."""
    held, text = _JSON.get(id(params), lambda: (params, params.model_dump_json()))
    if held is not params:  # parameters let go, others at their address: made afresh
        _JSON.clear()
        held, text = _JSON.get(id(params), lambda: (params, params.model_dump_json()))
    return text


_TABLES = Memo(256)
"""The vertical's field tables (:func:`_field_table`) and its own response on a set of directions
(:func:`vertical_response`), kept for the next antenna, resistor or place asking."""
TABLE_RHO_M = np.geomspace(0.05, 50_000.0, 1200)
"""Distances [m] the vertical's field is tabulated at for long wires (:func:`_field_along`): 1.16 % apart."""


TABLE_BLOCK = 40
"""Nodes of :data:`TABLE_RHO_M` worked at once, when a distance first needs them (most wires span a few hundred)."""


class _Table:
    """(E_rho, E_z) exp(+j k rho) at :data:`TABLE_RHO_M`, filled a block of nodes at a time (NaN where not yet).

    Also kept in the persistent cache (:mod:`noisemodels.skycache`, kind "txfield"), keyed by the table's key, the
    grid and the source of the code that computes it: a later run starts from the blocks earlier runs made."""

    def __init__(self, key=None):
        self.e_rho = np.full(len(TABLE_RHO_M), np.nan + 0j)
        self.e_z = np.full(len(TABLE_RHO_M), np.nan + 0j)
        self.done = np.zeros(-(-len(TABLE_RHO_M) // TABLE_BLOCK), dtype=bool)
        from noisemodels import skycache

        self.disk_key = _disk_key(key) if key is not None and skycache.enabled() else None
        if self.disk_key is not None:
            kept = skycache.load("txfield", self.disk_key)
            if kept is not None and kept.shape == (3, len(TABLE_RHO_M)) and kept.dtype == np.complex128:
                done = kept[2, ::TABLE_BLOCK].real > 0
                if len(done) == len(self.done):
                    self.e_rho, self.e_z, self.done = kept[0].copy(), kept[1].copy(), done

    def keep(self) -> None:
        """Write the table (its blocks made so far) to the persistent cache."""
        if self.disk_key is not None:
            from noisemodels import skycache

            made = np.repeat(self.done, TABLE_BLOCK)[: len(TABLE_RHO_M)].astype(complex)
            skycache.store("txfield", self.disk_key, np.stack([self.e_rho, self.e_z, made]))


TXFIELD_VERSION = 1
"""Part of the persistent cache's key of the vertical's field tables; bump it when what they hold changes in a way
the key's other parts (the sources of the modules that compute them among them) would not show."""


def _code_digest() -> str:
    """SHA-256 of the sources the vertical's field tables are computed by (this module, the quadrature, the ground's
    constants and every module of noisemodels, which the near-ground field uses), once per process."""
    global _DIGEST
    if _DIGEST is None:
        import hashlib
        from pathlib import Path

        import noisemodels
        from snrgain.physics import ground, quadrature

        h = hashlib.sha256()
        files = [Path(__file__), Path(quadrature.__file__), Path(ground.__file__)]
        files += sorted(Path(noisemodels.__file__).parent.glob("*.py"))
        for f in files:
            try:
                h.update(f.read_bytes())
            except OSError:
                h.update(b"?")
        _DIGEST = h.hexdigest()
    return _DIGEST


_DIGEST: str | None = None


def _disk_key(key: tuple) -> dict:
    return {
        "version": TXFIELD_VERSION,
        "code": _code_digest(),
        "table": [str(key[1]), float(key[2]), float(key[3]), float(key[4])],
        "grid": [float(TABLE_RHO_M[0]), float(TABLE_RHO_M[-1]), len(TABLE_RHO_M), TABLE_BLOCK, SEGMENT_POINTS],
    }


def _field_table(tx: TxVertical, freq_hz: float, z_m: float, lo: int = 0, hi: int | None = None):
    """(E_rho, E_z) exp(+j k rho) of :func:`field_vector_at` at :data:`TABLE_RHO_M` and height ``z_m``: the field is
    the same all round the vertical, and without its travelling phase it is smooth in log(rho).  Only the nodes
    ``lo`` .. ``hi`` (default all) are sure to be there: the table is made in blocks as distances ask."""
    key = ("table", _params_json(tx.vertical.params), tx.radius_m, float(freq_hz), float(z_m))
    table = _TABLES.get(key, lambda: _Table(key))
    hi = len(TABLE_RHO_M) - 1 if hi is None else hi
    blocks = np.arange(lo // TABLE_BLOCK, hi // TABLE_BLOCK + 1)
    todo = blocks[~table.done[blocks]]
    if len(todo):
        nodes = np.concatenate([np.arange(b * TABLE_BLOCK, min((b + 1) * TABLE_BLOCK, len(TABLE_RHO_M))) for b in todo])
        k = 2 * np.pi * freq_hz / C_M_PER_S
        rho = np.maximum(TABLE_RHO_M[nodes], 4 * tx.radius_m)
        here = TxVertical(tx.vertical, (0.0, 0.0), tx.load_ohm, tx.radius_m)
        e = field_vector_at(here, freq_hz, np.column_stack([rho, np.zeros_like(rho)]), np.full(len(rho), z_m))
        undo = np.exp(1j * k * rho)
        table.e_rho[nodes], table.e_z[nodes] = e[:, 0] * undo, e[:, 2] * undo
        table.done[todo] = True
        table.keep()
    return table.e_rho, table.e_z


def _field_along(tx: TxVertical, freq_hz: float, pts, heights) -> np.ndarray:
    """:func:`field_vector_at` at plan points (N, 2) and heights (N,), read from tables of the field against the
    distance at each height (:func:`_field_table`, interpolated in log distance; within 1e-3 of the direct sum from
    1 m out, a test): a long wire asks at a few heights only (its own and its leads' quadrature points), at many
    places (a layout's trials, a resistor searched under the sky)."""
    pts = np.ascontiguousarray(np.atleast_2d(np.asarray(pts, dtype=float)))
    heights = np.ascontiguousarray(np.broadcast_to(np.asarray(heights, dtype=float), (len(pts),)))
    if len(pts) > ALONG_MEMO_POINTS:
        return _field_along_now(tx, freq_hz, pts, heights)
    key = (
        "along",
        *_standing_key(tx, freq_hz),
        pts.tobytes(),
        heights.tobytes(),
    )
    return _ALONG.get(key, lambda: _field_along_now(tx, freq_hz, pts, heights))


def _standing_key(tx: TxVertical, freq_hz: float) -> tuple:
    """What the vertical's field at given places depends on: the vertical, where it stands, its radius, the
    frequency (the start of the memo keys of its field along wires and at compact parts)."""
    return (_params_json(tx.vertical.params), tuple(map(float, tx.position_m)), float(tx.radius_m), float(freq_hz))


_ALONG = Memo(64)
"""The vertical's field along a wire as last asked (:func:`_field_along`) and the EMFs it drives along the wire and
up its leads (:func:`wire_couplings`): the same points for every resistor a termination search tries and every
ground variant of the spreads (the wire does not move)."""
ALONG_MEMO_POINTS = 20_000
"""Larger requests (a layout's many places at once) are worked afresh rather than kept."""


def _on_table(tx: TxVertical, pts: np.ndarray) -> tuple:
    """(offsets from the vertical (N, 2), distances rho (N,) [m], log rho, the field table's log-distance grid) of
    plan points, for reading the vertical's field tables (:func:`_between`, :func:`_interpolator`)."""
    d = pts - np.asarray(tx.position_m, dtype=float)[None, :]
    rho = np.maximum(np.hypot(d[:, 0], d[:, 1]), 4 * tx.radius_m)
    return d, rho, np.log(rho), np.log(np.maximum(TABLE_RHO_M, 4 * tx.radius_m))


def _between(grid: np.ndarray, x: np.ndarray) -> tuple:
    """(j, lo, hi): each point's node, grid[j] <= x < grid[j + 1] (the last of equal nodes), and the table rows the
    points fall between."""
    j = np.searchsorted(grid, x, side="right") - 1
    return j, max(int(j.min()), 0), min(int(j.max()) + 1, len(grid) - 1)


def _field_along_now(tx: TxVertical, freq_hz: float, pts: np.ndarray, heights: np.ndarray) -> np.ndarray:
    d, rho, lr, grid = _on_table(tx, pts)
    k = 2 * np.pi * freq_hz / C_M_PER_S
    out = np.zeros((len(pts), 3), dtype=complex)
    zs = np.unique(heights, return_counts=True)[0]  # counted: a plain np.unique would load numpy.ma (~15 ms)
    for z in zs:
        sel = slice(None) if len(zs) == 1 else np.flatnonzero(heights == z)  # one height: no selection
        x, r = lr[sel], rho[sel]
        j, lo, hi = _between(grid, x)
        e_rho, e_z = _field_table(tx, freq_hz, float(z), lo, hi)
        phase = np.exp(-1j * k * r)
        at = _interpolator(x, grid, j)
        er, ez = at(e_rho) * phase, at(e_z) * phase
        out[sel, 0] = er * d[sel, 0] / r
        out[sel, 1] = er * d[sel, 1] / r
        out[sel, 2] = ez
    return out


def _field_along_wire(tx: TxVertical, freq_hz: float, pts, height_m: float, u: np.ndarray) -> np.ndarray:
    """The part along the horizontal unit vector ``u`` of :func:`_field_along` at plan points (N, 2) all at
    ``height_m`` (a wire's samples): only the radial field's table is read (the vertical field does not enter), in
    the same arithmetic; kept as :func:`_field_along` keeps its values (the same wire asked again for every
    resistor a termination search tries)."""
    pts = np.ascontiguousarray(np.atleast_2d(np.asarray(pts, dtype=float)))
    u = np.asarray(u, dtype=float)

    def now():
        d, rho, lr, grid = _on_table(tx, pts)
        k = 2 * np.pi * freq_hz / C_M_PER_S
        j, lo, hi = _between(grid, lr)
        e_rho, _ = _field_table(tx, freq_hz, float(height_m), lo, hi)
        er = _interpolator(lr, grid, j)(e_rho) * np.exp(-1j * k * rho)
        return er * d[:, 0] / rho * u[0] + er * d[:, 1] / rho * u[1]

    if len(pts) > ALONG_MEMO_POINTS:
        return now()
    key = (
        "along the wire",
        *_standing_key(tx, freq_hz),
        float(height_m),
        u.tobytes(),
        pts.tobytes(),
    )
    return _ALONG.get(key, now)


def _lead_emfs(tx: TxVertical, freq_hz: float, ends, height_m: float) -> np.ndarray:
    """The EMF up a down-lead of ``height_m`` standing at each of the plan points ``ends`` (M, 2) in the vertical's
    field: snrgain.physics.reciprocity.wire_emfs' Gauss-Legendre sum of :func:`_field_along`'s vertical field up it,
    by the same arithmetic, with the distances' interpolation worked once for all the rule's heights (the same plan
    points at each) rather than once per height."""
    from snrgain.physics.reciprocity import LEAD_POINTS, lead_rule

    t, wq = lead_rule()
    zs = (t + 1) * height_m / 2
    ends = np.ascontiguousarray(np.atleast_2d(np.asarray(ends, dtype=float)))
    _, rho, lr, grid = _on_table(tx, ends)
    k = 2 * np.pi * freq_hz / C_M_PER_S
    j, lo, hi = _between(grid, lr)
    phase = np.exp(-1j * k * rho)
    at = _interpolator(lr, grid, j)
    out = np.zeros((len(ends) * LEAD_POINTS, 3), dtype=complex)  # laid out as wire_emfs asks for the points
    for m, z in enumerate(zs):
        _, e_z = _field_table(tx, freq_hz, float(z), lo, hi)
        out[m::LEAD_POINTS, 2] = at(e_z) * phase
    return (out[:, 2].reshape(len(ends), LEAD_POINTS) @ wq) * height_m / 2


def _interpolator(x: np.ndarray, grid: np.ndarray, j: np.ndarray):
    """np.interp(x, grid, .) of complex tables, real and imaginary parts, with the interval j of each x found once
    (grid[j] <= x < grid[j + 1]; the same arithmetic: slope (f[j+1] - f[j]) / (grid[j+1] - grid[j]) times
    (x - grid[j]) plus f[j], the end values beyond the ends)."""
    below, above = j < 0, j >= len(grid) - 1
    jc = np.clip(j, 0, len(grid) - 2)
    dx = x - grid[jc]
    step = grid[1:] - grid[:-1]

    def part(f):
        v = (f[jc + 1] - f[jc]) / step[jc] * dx + f[jc]
        if below.any() or above.any():
            v = np.where(below, f[0], np.where(above, f[-1], v))
        return v

    def at(t):
        return part(t.real) + 1j * part(t.imag)

    return at


def wire_coupling(wire, tx: TxVertical, freq_hz: float, feed_m) -> complex:
    """A long wire's response (in its pattern's units: port_response of its feed current) to the vertical's field
    per unit base current (:func:`field_vector_at` along the wire at its height and up its down-leads), by the same
    reciprocity integral a placed noise source drives it with (snrgain.model.placed; it gives the line model's
    own plane-wave currents exactly when handed a plane wave: a test)."""
    return complex(wire_couplings(wire, tx, freq_hz, np.asarray(feed_m, dtype=float)[None, :])[0])


def wire_couplings(wire, tx: TxVertical, freq_hz: float, feeds_m) -> np.ndarray:
    """:func:`wire_coupling` of the same wire with its feed at each of ``feeds_m`` (N, 2) [m], in one array
    expression (a layout trying a design at many places); the samples along the wire are set by the closest
    approach of any of them."""
    from snrgain.antennas.longwire import port_response
    from snrgain.physics.reciprocity import through_line, wire_emfs

    feeds = np.atleast_2d(np.asarray(feeds_m, dtype=float))
    u = np.array([np.sin(wire.bearing_rad), np.cos(wire.bearing_rad)])
    to_tx = np.asarray(tx.position_m, dtype=float)[None, :] - feeds
    along = np.clip(to_tx @ u, 0.0, wire.length_m)
    closest = float(np.min(np.hypot(*(to_tx - along[:, None] * u[None, :]).T)))
    step = min(C_M_PER_S / freq_hz * WIRE_STEP_WAVELENGTHS, max(closest, 1.0) / 3.0)
    x = np.linspace(0.0, wire.length_m, max(WIRE_MIN_SAMPLES, int(np.ceil(wire.length_m / step))) + 1)

    def field(pts, heights):  # the whole field (the leads are worked by leads below)
        return _field_along(tx, freq_hz, pts, heights)

    def along(pts, height):  # along the wire: the radial field's part along it alone
        return _field_along_wire(tx, freq_hz, pts, height, u)

    def leads(ends, height):  # up the leads: the vertical field's interpolation shared by the rule's heights
        return _lead_emfs(tx, freq_hz, ends, height)

    def emfs():
        emf, lead = wire_emfs(wire, feeds, x, u, field, along, leads)
        for v in (emf, lead):
            if v is not None:
                v.flags.writeable = False
        return emf, lead

    # what wire_emfs reads of the wire: its length, height and leads (every resistor tried takes the same EMFs)
    key = (
        "wire emfs",
        *_standing_key(tx, freq_hz),
        float(wire.length_m),
        float(wire.wire_height_m()),
        bool(wire.has_leads),
        feeds.shape,
        feeds.tobytes(),
        x.tobytes(),
        u.tobytes(),
    )
    emf, lead = _ALONG.get(key, emfs) if len(feeds) * len(x) <= ALONG_MEMO_POINTS else emfs()
    i_f = through_line(wire, freq_hz, x, emf, lead)
    load = wire.receiver_load_ohm(freq_hz)
    return port_response(freq_hz, i_f, load_ohm=load, elevation_rad=np.full(len(feeds), 0.1)).astype(complex)


def coupling_terms(antenna, tx: TxVertical, freq_hz: float, at_m) -> tuple[complex, np.ndarray]:
    """(sum over parts of weight x e_pg(toward the vertical, grazing) x E_z / 2, the antenna's phase reference
    [m]); a part with a width takes the field at several points along it (:func:`grazing_weights`).  A long wire:
    (its response to the vertical's field per unit base current, :func:`wire_coupling`; its feed point): the same
    term, a compact antenna's response to that field being e_pg E_z / 2 (the families' vertical polarisation
    points up at the horizon: a unit wave makes E_z = +2 at a perfect ground).  Checked against NEC-2 for a
    Beverage with the vertical broadside and behind it (tests/test_tx_scatter.py)."""
    if getattr(antenna, "integrates_near_sources", False) and not getattr(antenna, "composite", False):
        feed = np.asarray(at_m, dtype=float)
        return wire_coupling(antenna, tx, freq_hz, feed), feed
    items, ref = parts(antenna, freq_hz, at_m)
    total = 0j
    for part, pos, weight in items:
        twin = _perfect_twin(part)
        points = equivalent_points(part, pos)
        ez = _field_on(part, tx, freq_hz, points)
        if len(points) == 1:
            d = np.asarray(tx.position_m, dtype=float) - pos
            bearing = np.array([np.mod(np.arctan2(d[0], d[1]), 2 * np.pi)])
            ev, _ = twin.complex_response(freq_hz, bearing, np.array([GRAZING_RAD]))
            total += weight * complex(ev[0]) * ez[0] / 2
        else:
            total += weight * complex(np.sum(_grazing_on(twin, freq_hz, points, pos) * ez)) / 2
    return total, ref


def _field_on(part, tx: TxVertical, freq_hz: float, points) -> np.ndarray:
    """E_z [V/m] per unit base current a compact part takes at its equivalent points (:func:`coupling_terms`): at
    its centre height, or for a loop averaged over its height plus what its horizontal wires add
    (:func:`loop_correction`).  Kept by the vertical and the part's points and heights alone (read-only): the same
    field for every resistor tried and every ground of the spread."""
    points = np.ascontiguousarray(points, dtype=float)
    z = _centre_height(part)
    span = getattr(part.params, "loop_height", None)
    loop = (
        None
        if span is None or len(points) == 1
        else (float(part.params.height), float(part.params.height) + float(span))
    )

    def make():
        if loop is None:
            ez = field_at(tx, freq_hz, points, np.full(len(points), z))
        else:
            lo, hi = loop
            zq = lo + (hi - lo) * (0.5 + 0.5 * gauss_legendre(4)[0])
            ez = np.mean([field_at(tx, freq_hz, points, np.full(len(points), zz)) for zz in zq], axis=0)
            ez = ez + loop_correction(part, tx, freq_hz, points, lo, hi)
        ez.flags.writeable = False
        return ez

    key = (
        "field on",
        *_standing_key(tx, freq_hz),
        points.shape,
        points.tobytes(),
        float(z),
        loop,
    )
    return _TABLES.get(key, make)


def with_vertical(antenna, tx: TxVertical, freq_hz: float, azimuth_rad, elevation_rad, *, at_m, terms=None):
    """(e_v, e_h) of ``antenna`` standing at ``at_m`` with the vertical beside it (module docstring); ``terms`` the
    result of :func:`coupling_terms` when already made."""
    az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
    ev, eh = antenna.complex_response(freq_hz, az, el)
    return ev + scattered(antenna, tx, freq_hz, az, el, at_m=at_m, terms=terms), eh


def vertical_response(tx: TxVertical, freq_hz: float, az, el) -> np.ndarray:
    """The vertical's own e_v on a set of directions, kept for the next antenna asking on the same directions (a
    ranking asks on the same sky grid for every candidate and every resistor tried)."""
    az, el = np.ascontiguousarray(az, dtype=float), np.ascontiguousarray(el, dtype=float)
    if az.size <= FEW_DIRECTIONS:  # a near source's direction: worked, not kept (they crowded out the sky's tables)
        return tx.vertical.complex_response(freq_hz, az, el)[0]
    key = ("response", _params_json(tx.vertical.params), float(freq_hz), az.shape, az.tobytes(), el.tobytes())
    return _TABLES.get(key, lambda: tx.vertical.complex_response(freq_hz, az, el)[0])


FEW_DIRECTIONS = 8
"""Direction sets this small (a placed source's, snrgain.model.placed) are worked each time, not kept in the tables
memo: cheap, and each would push out a sky grid's table."""


def scattered(antenna, tx: TxVertical, freq_hz: float, azimuth_rad, elevation_rad, *, at_m, terms=None):
    """The vertical's re-radiated share of ``antenna``'s vertically polarised response (the second term of the
    module docstring's e_A,total): 0 for an open base."""
    check_height(tx, freq_hz)
    az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
    if tx.load_ohm is None:
        return np.zeros(az.shape, dtype=complex)
    c, ref = coupling_terms(antenna, tx, freq_hz, at_m) if terms is None else terms
    return c * _reradiated(tx, freq_hz, az, el, ref)


def _reradiated(tx: TxVertical, freq_hz: float, az, el, ref) -> np.ndarray:
    """The vertical's re-radiation per unit coupling term on a set of directions, in the phase of the antenna's
    reference point ``ref``: kept for the next antenna or resistor at the same point asking on the same sky."""
    az, el = np.ascontiguousarray(az, dtype=float), np.ascontiguousarray(el, dtype=float)
    ref = np.asarray(ref, dtype=float)

    def make():
        k = 2 * np.pi * freq_hz / C_M_PER_S
        d = np.asarray(tx.position_m, dtype=float) - ref
        phi = np.exp(1j * k * np.cos(el) * (d[0] * np.sin(az) + d[1] * np.cos(az)))
        e_tx = vertical_response(tx, freq_hz, az, el)
        z = self_impedance(tx, freq_hz) + tx.load_ohm
        return effective_height_scale(tx, freq_hz) * e_tx * phi / z

    if az.size <= FEW_DIRECTIONS:
        return make()
    key = (
        "reradiated",
        _params_json(tx.vertical.params),
        tuple(map(float, tx.position_m)),
        complex(tx.load_ohm),
        float(tx.radius_m),
        float(freq_hz),
        ref.tobytes(),
        az.shape,
        az.tobytes(),
        el.tobytes(),
    )
    return _TABLES.get(key, make)
