"""What the transmitting vertical next door costs each receiving antenna, computed (snrgain.physics.scatter).

The vertical is the file's reference when it is of a family that transmits (``resonant_tx``; it stays the vertical
next door when another antenna is made the reference: ``Scenario.transmitting``) and stands on the plan (its
``position``, or the plan's origin when the site has a lot: the rule of snrgain.decide.lot). Its state while the
station receives is ``[site] tx_state``: "resonant" (its base on the transmitter's 50 ohm feed) or "detuned" (the
feed opened by a relay, or ``[site] tx_detune_reactance`` across the base). For each candidate that stands on the
plan and whose response has a phase, :func:`tx_cost` gives, for both states, the change of its RDF toward its
favoured direction (its bearing, else its strongest direction, at 20 deg elevation or the antenna's own
auto_elevation; an array's as its figures are read, snrgain.antennas.array.Array.front: its main lobe where its
weights were given or set for the SNR), of its front-to-back and of its forward gain. The RDF change is the SNR
gain's change under a uniform sky (DESIGN.md, SNR): the figure the notice warns on above
:data:`COST_WARNING_DB`. A long wire on the plan (its forward port) is driven by the vertical's whole field along
it and up its leads (physics.scatter.wire_coupling); phasing units hear the vertical through their parts; a
two-wire line's reversed port and pattern tables are not computed and keep the clearance rule.

The ranking hears the vertical too (:func:`with_structures`, a stage of the pipeline before the antennas are set
under the sky): each computed antenna's response becomes its response with the re-radiation of the vertical in
the user's state and of every structure added (each taken alone, their shares summed), so its SNR gain, RDF and
front-to-back in every output are those of the antenna where it stands.  The notices' per-state figures are
worked from the bare antenna (:func:`bare`).

Other structures (``[site] structures``: a tower, another vertical) are scatterers of the same kind, each a
monopole of its height and top loading loaded at its foot by its base_load (0: grounded); each is taken alone
(the coupling between two scatterers, a second-order term, is left out).
"""

from __future__ import annotations

import functools

import numpy as np

from snrgain.memo import Memo
from snrgain.model.notices import Notice
from snrgain.physics import scatter as phys

COST_WARNING_DB = 1.0
"""A vertical that takes more than this from an antenna's RDF (its SNR gain under a uniform sky) in the state the
user runs it is warned about (the issue's threshold; an assumption of snrgain)."""
FORWARD_ELEVATION_RAD = np.radians(20.0)
_AZ_STEP_DEG, _EL_STEP_DEG = 4.0, 2.0


@functools.lru_cache(maxsize=1)
def _grid():
    """tx_cost's directions (azimuths, elevations) [rad]: read-only arrays, made once."""
    az = np.radians(np.arange(0.0, 360.0, _AZ_STEP_DEG))
    el = np.radians(np.arange(0.5 * _EL_STEP_DEG, 90.0, _EL_STEP_DEG))
    a, e = (g.ravel() for g in np.meshgrid(az, el, indexing="ij"))
    a.flags.writeable = False
    e.flags.writeable = False
    return a, e


def tx_antenna(sc):
    """The site's transmitting vertical among the scenario's antennas (the file's reference when it is a vertical:
    ``Scenario.transmitting``, also when another antenna is made the reference), where it stands on a plan (its
    position, or the plan's origin when the site has a lot); else None."""
    name = getattr(sc, "transmitting", None)
    ant = next((a for a in sc.antennas if a.name == name), None) if name is not None else None
    if ant is None or not ant.resonant_tx:
        return None
    if ant.params.position is None and sc.site.lot_m is None:
        return None
    return ant


def tx_vertical(sc, *, state: str | None = None) -> phys.TxVertical | None:
    """The transmitting vertical of a scenario (:func:`tx_antenna`) as a scatterer in ``state`` (default: the site's
    tx_state), or None where the site has none on a plan."""
    ant = tx_antenna(sc)
    if ant is None:
        return None
    site = sc.site
    state = state or getattr(site, "tx_state", "resonant")
    load = phys.state_load(state, getattr(site, "tx_detune_reactance_ohm", None))
    return phys.TxVertical(bare(ant), tuple(float(x) for x in (ant.params.position or (0.0, 0.0))), load)


def modelled(antenna) -> bool:
    """Whether the vertical's effect on ``antenna`` is computed (a compact antenna or an array, with phase, on the
    plan)."""
    from snrgain.antennas.base import Antenna

    if antenna.composite:
        return False
    if antenna.long_wire:  # through its line model (physics.scatter.wire_coupling); a reversed port is not
        return (
            getattr(antenna, "integrates_near_sources", False)
            and getattr(antenna.params, "port", "forward") == "forward"
            and antenna.params.position is not None
        )
    if type(antenna).complex_response is Antenna.complex_response:
        return False
    return antenna.params.position is not None or getattr(antenna, "positions", None) is not None


def _rdf_db(g, el):
    """RDF [dB] of gains on tx_cost's grid (the sphere's cells, then forward and back; rows of places allowed):
    forward over the mean over the upper hemisphere's cells, weighted by their solid angle."""
    w = np.cos(el[:-2]) * np.radians(_AZ_STEP_DEG) * np.radians(_EL_STEP_DEG) / (4 * np.pi)
    mean = g[..., :-2] @ w
    return 10 * np.log10(np.maximum(g[..., -2], 1e-30)) - 10 * np.log10(np.maximum(mean, 1e-30))


def _metrics(ev, eh, az, el, fwd_az, fwd_el):
    g = np.abs(ev) ** 2 + np.abs(eh) ** 2
    fwd, back = float(g[-2]), float(g[-1])
    db = lambda x: 10 * np.log10(max(x, 1e-30))  # noqa: E731
    return {
        "rdf_db": float(_rdf_db(g, el)),
        "front_to_back_db": float(db(fwd) - db(back)),
        "forward_gain_dbi": float(db(fwd)),
    }


def structure_scatterers(sc) -> list[tuple[str, phys.TxVertical | None, float]]:
    """(name, scatterer or None where too tall for the model, height in wavelengths) of each ``[site] structures``
    entry: a monopole of its height and top loading over the site's ground, its foot loaded by base_load."""
    from snrgain.antennas.base import from_si
    from snrgain.physics.ground import C_M_PER_S

    out = []
    for st in getattr(sc.site, "structures", ()):
        g = sc.site.ground
        ground = "perfect" if g is None else {"permittivity": g.permittivity, "conductivity": g.conductivity_s_per_m}
        v = from_si("vertical", height=st.height, top_loading=st.top_loading, ground_loss=st.ground_loss, ground=ground)
        tx = phys.TxVertical(v, tuple(float(x) for x in st.position), complex(st.base_load), float(st.radius))
        h_wl = (st.height + st.top_loading) * sc.freq_hz / C_M_PER_S
        out.append((st.name, tx if h_wl <= phys.MAX_TX_HEIGHT_WAVELENGTHS else None, h_wl))
    return out


def wire_terms(sc, antennas, tx: phys.TxVertical) -> list:
    """The coupling terms (physics.scatter.coupling_terms) of the long wires among ``antennas`` (placed copies of a
    few designs: a layout's trials), worked for all places of one design at once; None for the others."""
    out: list = [None] * len(antennas)
    groups, _ = _design_groups(antennas, wires=True)
    for ks in groups.values():
        feeds = np.array([bare(antennas[k]).params.position for k in ks], dtype=float)
        try:
            c = phys.wire_couplings(bare(antennas[ks[0]]), tx, sc.freq_hz, feeds)
        except ValueError:  # a vertical too tall for the model: tx_cost says None
            continue
        for k, ck, f in zip(ks, c, feeds):
            out[k] = (complex(ck), f)
    return out


_ALONE = Memo(64)


def _alone(antenna, freq_hz: float):
    """(azimuths, elevations, favoured bearing, its response there, its metrics alone) on tx_cost's grid; kept per
    design (``gain_key``: a placed antenna's far field does not move with it)."""
    key = antenna.gain_key()
    if key is None:
        return _alone_worked(antenna, freq_hz)
    return _ALONE.get((key, float(freq_hz)), lambda: _alone_worked(antenna, freq_hz))


def _alone_worked(antenna, freq_hz: float):
    az, el = _grid()
    fwd_el = float(getattr(antenna.params, "auto_elevation", FORWARD_ELEVATION_RAD))
    bearing = getattr(antenna.params, "bearing", None)
    if hasattr(antenna, "front"):  # an array: toward its bearing where steering aimed it there, else its lobe
        bearing, fwd_el = antenna.front(freq_hz)
    elif bearing is None:
        ring = np.radians(np.arange(0.0, 360.0, 1.0))
        ev, eh = antenna.complex_response(freq_hz, ring, np.full(ring.shape, fwd_el))
        bearing = float(ring[np.argmax(np.abs(ev) ** 2 + np.abs(eh) ** 2)])
    ends = np.array([bearing, (bearing + np.pi) % (2 * np.pi)]), np.array([fwd_el, fwd_el])
    # the grid's directions and the two of the design apart: the grid's geometry is kept (one set for every design)
    response = tuple(
        np.concatenate(parts)
        for parts in zip(antenna.complex_response(freq_hz, az, el), antenna.complex_response(freq_hz, *ends))
    )
    az, el = np.concatenate([az, ends[0]]), np.concatenate([el, ends[1]])
    return az, el, bearing, response, _metrics(*response, az, el, bearing, fwd_el)


def tx_costs_db(sc, antennas, tx: phys.TxVertical, terms=None) -> np.ndarray:
    """:func:`tx_cost`'s cost_db (the RDF the scatterer, in its own state, takes) of each of ``antennas``, 0 where it
    is not computed: the places of one design worked at once (its response alone is the same at every place; the
    re-radiated part differs by a complex factor and a phase per place).  ``terms``: each one's coupling terms
    when already worked (:func:`wire_terms`), or None.  Equal to tx_cost one by one (a test)."""
    f = sc.freq_hz
    out = np.zeros(len(antennas))
    terms = list(terms) if terms is not None else [None] * len(antennas)
    if tx.load_ohm is None:
        return out  # an open base re-radiates nothing in this model
    try:
        phys.check_height(tx, f)
    except ValueError:
        return out
    groups, singles = _design_groups(antennas)
    for k in singles:
        c = tx_cost(sc, antennas[k], tx=tx, terms=terms[k])
        out[k] = 0.0 if c is None else c["cost_db"]
    k_wave = 2 * np.pi * f / phys.C_M_PER_S
    for key, ks in groups.items():
        b0 = bare(antennas[ks[0]])
        alone, sums, ux, uy = _SUMS.get(
            (key, phys._params_json(tx.vertical.params), float(tx.radius_m), complex(tx.load_ohm), float(f)),
            lambda b0=b0: _design_sums(b0, tx, f),
        )
        for start in range(0, len(ks), 128):
            chunk = ks[start : start + 128]
            cs, refs = [], []
            for k in chunk:
                b = bare(antennas[k])
                t = terms[k]
                if t is None:
                    t = phys.coupling_terms(b, tx, f, np.asarray(b.params.position or (0.0, 0.0), dtype=float))
                cs.append(t[0])
                refs.append(t[1])
            d = np.asarray(tx.position_m, dtype=float)[None, :] - np.asarray(refs, dtype=float)
            out[chunk] = alone["rdf_db"] - _rdf_at(sums, np.asarray(cs), d, k_wave, ux, uy)
    return out


def _design_groups(antennas, *, wires: bool = False) -> tuple[dict, list]:
    """({gain_key: indices} of the computed antennas (:func:`modelled`) that share a design, [indices of the computed
    ones without a gain_key]); ``wires``: long wires only.  :func:`modelled` is asked once per design and whether it
    stands on the plan (all it depends on besides the design)."""
    groups: dict = {}
    singles: list = []
    seen: dict = {}
    for k, a in enumerate(antennas):
        b = bare(a)
        if wires and not b.long_wire:
            continue
        key = b.gain_key()
        if key is None:
            if modelled(b) and not wires:
                singles.append(k)
            continue
        placed = b.params.position is not None or getattr(b, "positions", None) is not None
        m = seen.get((key, placed))
        if m is None:
            m = seen[(key, placed)] = modelled(b)
        if m:
            groups.setdefault(key, []).append(k)
    return groups, singles


_SUMS = Memo(64)
"""A design's :func:`_design_sums` beside one scatterer (a layout scores the same design at many places, call after
call)."""


_GRID_FIELD = Memo(8)
"""A scatterer's :func:`_cell_field` on tx_cost's grid (the same for every design beside it)."""


def _design_sums(b0, tx: phys.TxVertical, f: float) -> tuple:
    """(its metrics alone, :func:`_cell_sums`, the cells' east and north direction cosines) of the design of ``b0``
    beside ``tx`` on tx_cost's grid: all of :func:`tx_costs_db` that is the same at every place."""
    az, el, _, (ev0, eh0), alone = _alone(b0, f)
    n = len(az) - 2  # tx_cost's grid (the same for every design), then the design's forward and back
    key = (phys._params_json(tx.vertical.params), complex(tx.load_ohm), float(tx.radius_m), float(f))
    grid = _GRID_FIELD.get(key, lambda: _grid_field(tx, f, *_grid()))
    if not (np.array_equal(grid[0], az[:n]) and np.array_equal(grid[1], el[:n])):  # not that grid: worked here
        grid = _grid_field(tx, f, az[:n], el[:n])
    ends = _cell_field(tx, f, az[n:], el[n:])  # elementwise: the same values as worked with the grid's
    field, ux, uy = (np.concatenate([g, e]) for g, e in zip(grid[2:5], ends))
    return alone, _cell_sums(ev0, eh0, field, el, ux, uy, grid[5]), ux, uy


def _grid_field(tx: phys.TxVertical, f: float, az: np.ndarray, el: np.ndarray) -> tuple:
    """(azimuths, elevations, :func:`_cell_field` on them, :func:`_grid_sums`): a scatterer's part of tx_cost's
    grid, the same for every design beside it."""
    field, ux, uy = _cell_field(tx, f, az, el)
    return az, el, field, ux, uy, _grid_sums(el, ux, uy, field)


def _grid_sums(el, ux, uy, field) -> tuple:
    """What :func:`_cell_sums` takes of the grid's cells alone (the same for every design beside one scatterer):
    their weights as :func:`_rdf_db` weighs them, where the azimuths' turned half starts (all of them when the
    grid's azimuths do not come in pairs 180 deg apart: every cell's phase worked), and the weighted mean of
    |field|^2."""
    n = len(el)
    w = np.cos(el) * np.radians(_AZ_STEP_DEG) * np.radians(_EL_STEP_DEG) / (4 * np.pi)
    half = n // 2
    paired = (
        n % 2 == 0 and np.allclose(ux[half:], -ux[:half], atol=1e-12) and np.allclose(uy[half:], -uy[:half], atol=1e-12)
    )
    return w, half if paired else n, float(np.sum(w * np.abs(field) ** 2))


def _cell_field(tx: phys.TxVertical, f: float, az: np.ndarray, el: np.ndarray) -> tuple:
    """(the scatterer's re-radiated field per unit coupling term, east and north direction cosines) on directions."""
    field = phys.effective_height_scale(tx, f) * phys.vertical_response(tx, f, az, el)
    field = field / (phys.self_impedance(tx, f) + tx.load_ohm)
    return field, np.cos(el) * np.sin(az), np.cos(el) * np.cos(az)


def _cell_sums(ev0, eh0, field, el, ux, uy, grid_sums=None) -> tuple:
    """What the RDF of ``ev0 + c field exp(j k d . u)`` (and ``eh0``) on tx_cost's grid (:func:`_rdf_db`) needs of
    the response and the scattered field, the same at every place: the mean of |ev0|^2 + |eh0|^2 and of |field|^2
    over the cells, weighted as :func:`_rdf_db` weighs them; a = w conj(ev0) field on each half of the azimuths
    (the second half the first turned 180 deg: its phases the conjugates); and the forward direction's values.
    ``grid_sums``: the grid's own part (:func:`_grid_sums`) when already worked."""
    n = len(el) - 2
    w, half, power = grid_sums if grid_sums is not None else _grid_sums(el[:n], ux[:n], uy[:n], field[:n])
    a = w * np.conj(ev0[:n]) * field[:n]
    return (
        float(np.sum(w * (np.abs(ev0[:n]) ** 2 + np.abs(eh0[:n]) ** 2))),
        power,
        a[:half],
        np.conj(a[half:]),
        (ev0[-2], abs(eh0[-2]) ** 2, field[-2]),
    )


def _rdf_at(sums, cs, d, k_wave, ux, uy) -> np.ndarray:
    """:func:`_rdf_db` of |ev0 + c field exp(j k d . u)|^2 + |eh0|^2 for each place (its coupling term c (P,), its
    offset d (P, 2) toward the scatterer), from :func:`_cell_sums`: the mean over the cells is
    mean(|ev0|^2 + |eh0|^2) + |c|^2 mean(|field|^2) + 2 Re(c sum(a exp(j k d . u))), the phases worked on the
    first half of the azimuths only (the grid's azimuths come in pairs 180 deg apart, so the second half's phases
    are the first's conjugates), at many places as the east phase times the north one (:func:`_phase_rows`): the
    sum over the cells one matrix product over the distinct east and north offsets."""
    base, power, a1, a2c, (ev_f, h2_f, field_f) = sums
    half = len(a1)
    if len(d) > 1:  # places on a lattice: rows of phases per east and per north offset, shared
        grid = (float(k_wave), hash(ux[:half].tobytes()), hash(uy[:half].tobytes()))
        east, we = _phase_rows(grid, 0, d[:, 0], k_wave, ux[:half])
        north, wn = _phase_rows(grid, 1, d[:, 1], k_wave, uy[:half])
        # sum_j east[e, j] north[n, j] a[j] for every pair of offsets as one matrix product, then each place's pair
        m = len(a2c)
        s = ((east * a1) @ north.T)[we, wn] + np.conj(((east[:, :m] * a2c) @ north[:, :m].T)[we, wn])
    else:
        arg = k_wave * (d[:, :1] * ux[None, :half] + d[:, 1:] * uy[None, :half])
        phi = np.cos(arg) + 1j * np.sin(arg)
        s = np.einsum("pj,j->p", phi, a1) + np.conj(np.einsum("pj,j->p", phi[:, : len(a2c)], a2c))
    mean = base + np.abs(cs) ** 2 * power + 2 * np.real(cs * s)
    fwd = np.exp(1j * k_wave * (d[:, 0] * ux[-2] + d[:, 1] * uy[-2]))
    g_f = np.abs(ev_f + cs * field_f * fwd) ** 2 + h2_f
    return 10 * np.log10(np.maximum(g_f, 1e-30)) - 10 * np.log10(np.maximum(mean, 1e-30))


_PHASES = Memo(256)
"""exp(j k x u) over tx_cost's cells for one east or north offset x [m] (a layout's places share a lattice)."""


def _phase_rows(grid: tuple, axis: int, x: np.ndarray, k_wave: float, u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(exp(j k v u) (V, cells) for each distinct offset v of ``x`` (P,) along one axis, which of them each offset
    is (P,)): each row worked once and kept (``grid``: what the cells are); the phase exp(j k d . u) of a place is
    the product of its east and its north offset's."""
    values, which = np.unique(x, return_inverse=True)

    def row(v):
        arg = k_wave * v * u
        return np.cos(arg) + 1j * np.sin(arg)

    rows = np.array([_PHASES.get((grid, axis, float(v)), lambda v=v: row(v)) for v in values])
    return rows, which.ravel()


def tx_cost(
    sc, antenna, *, at_m=None, tx: phys.TxVertical | None = None, states: dict | None = None, terms=None
) -> dict | None:
    """The vertical's effect on ``antenna`` (standing at ``at_m``, default its position): {"alone": metrics, then
    per state (default "resonant" and "detuned"; ``states`` name -> base load for another scatterer) its RDF change,
    front-to-back and forward-gain change, "state": the state run, "cost_db": the RDF lost in that state,
    "distance_m"}; None where not computed (:func:`modelled`, no vertical, a vertical too tall for the model).
    ``terms``: its coupling terms when already worked (:func:`wire_terms`)."""
    tx = tx or tx_vertical(sc)
    antenna = bare(antenna)
    if tx is None or not modelled(antenna):
        return None
    f = sc.freq_hz
    try:
        phys.check_height(tx, f)
    except ValueError:
        return None
    at = np.asarray(at_m if at_m is not None else (antenna.params.position or (0.0, 0.0)), dtype=float)
    az, el, bearing, response, alone = _alone(antenna, f)
    terms = phys.coupling_terms(antenna, tx, f, at) if terms is None else terms
    if states is None:
        state = "resonant" if tx.load_ohm == phys.RESONANT_LOAD_OHM else "detuned"
        states = {"resonant": phys.RESONANT_LOAD_OHM, "detuned": tx.load_ohm if state == "detuned" else None}
    else:
        state = next(iter(states))
    out = {"alone": alone, "state": state, "bearing_rad": bearing}
    for name, load in states.items():
        ev = response[0] + phys.scattered(antenna, tx.with_load(load), f, az, el, at_m=at, terms=terms)
        m = _metrics(ev, response[1], az, el, 0, 0)
        out[name] = {
            "rdf_change_db": float(m["rdf_db"] - alone["rdf_db"]),
            "front_to_back_db": float(m["front_to_back_db"]),
            "forward_gain_change_db": float(m["forward_gain_dbi"] - alone["forward_gain_dbi"]),
        }
    out["cost_db"] = -out[state]["rdf_change_db"]
    out["distance_m"] = closest_approach_m(antenna, tx.position_m, at_m=at_m)
    return out


def closest_approach_m(antenna, point_m, *, at_m=None) -> float:
    """How near ``antenna`` comes to a point of the plan [m]: its feed point, a long wire's run, a loop's width, an
    array's elements (snrgain.scenario.local.antenna_outline; an antenna without a position at the plan's origin, as
    :func:`tx_cost` takes it); ``at_m``: the antenna moved so that its feed point (an array's centre) stands there."""
    from snrgain.model.placed import antenna_point
    from snrgain.scenario.local import antenna_outline, gap_m

    origin = (0.0, 0.0)
    shapes = antenna_outline(antenna, origin)
    if at_m is not None:
        shift = np.asarray(at_m, dtype=float) - antenna_point(antenna, origin)
        shapes = [shape + shift for shape in shapes]
    return min(gap_m(np.asarray(point_m, dtype=float), shape) for shape in shapes)


_EFFECTS: list = []  # the last scenario's (scenario, rows, notices): decisions asks for both


def tx_effects(sc) -> tuple[list[dict], list[Notice]]:
    """(rows, notices): per antenna the transmitting vertical (in both states) and each structure computed do to
    it, a row each ({"antenna", "scatterer", "state" (the one run), "distance_m", "cost_db", "alone":
    {rdf_db, front_to_back_db, forward_gain_dbi}, and per state its RDF change, front-to-back and forward-gain
    change}: the results' ``tx_vertical``); and the notices (:func:`tx_notices`)."""
    if _EFFECTS and _EFFECTS[0][0] is sc:
        return _EFFECTS[0][1], _EFFECTS[0][2]
    rows, out = [], []
    tx = tx_vertical(sc)
    tx_name = getattr(sc, "transmitting", None)
    for ant in sc.candidates if tx is not None else ():
        if ant.name == tx_name:
            continue
        c = tx_cost(sc, ant, tx=tx)
        if c is None:
            continue
        rows.append(_row(ant.name, tx_name, c, phys.TX_STATES))
        if c["cost_db"] <= COST_WARNING_DB:
            continue
        values = {
            "state": c["state"],
            "cost_db": c["cost_db"],
            "distance_m": c["distance_m"],
            "front_to_back_alone_db": c["alone"]["front_to_back_db"],
        }
        for s in phys.TX_STATES:
            for k, v in c[s].items():
                values[f"{s}_{k}"] = v
        out.append(Notice("tx-vertical-cost", ant.name, values))
    for name, st, h_wl in structure_scatterers(sc):
        if st is None:
            out.append(Notice("structure-not-computed", None, {"structure": name, "height_wavelengths": h_wl}))
            continue
        for ant in sc.candidates:
            c = tx_cost(sc, ant, tx=st, states={"as built": st.load_ohm})
            if c is None:
                continue
            rows.append(_row(ant.name, name, c, ("as built",)))
            if c["cost_db"] <= COST_WARNING_DB:
                continue
            values = {
                "structure": name,
                "cost_db": c["cost_db"],
                "distance_m": c["distance_m"],
                "front_to_back_db": c["as built"]["front_to_back_db"],
                "front_to_back_alone_db": c["alone"]["front_to_back_db"],
                "forward_gain_change_db": c["as built"]["forward_gain_change_db"],
            }
            out.append(Notice("structure-cost", ant.name, values))
    _EFFECTS[:] = [(sc, rows, out)]
    return rows, out


def _row(antenna: str, scatterer: str | None, c: dict, states) -> dict:
    return {
        "antenna": antenna,
        "scatterer": scatterer,
        "state": c["state"],
        "distance_m": c["distance_m"],
        "cost_db": c["cost_db"],
        "alone": {k: float(v) for k, v in c["alone"].items()},
        **{s: c[s] for s in states if s in c},
    }


def tx_notices(sc) -> list[Notice]:
    """``tx-vertical-cost`` for each antenna the vertical costs more than COST_WARNING_DB of RDF in the user's
    state (values: state, cost_db, distance_m, and per state its RDF change, front-to-back and forward-gain change,
    with the antenna's front-to-back alone); ``structure-cost`` likewise for each ``[site] structures`` entry
    (values: structure, cost_db, distance_m, front_to_back_db, front_to_back_alone_db, forward_gain_change_db),
    and ``structure-not-computed`` (structure, height_wavelengths) for one too tall for the model."""
    return tx_effects(sc)[1]


# -- the antennas as they stand beside the scatterers (a pipeline stage) -------------------------------------------

_BESIDE_CLASSES: dict[type, type] = {}


def bare(antenna):
    """``antenna`` without the scatterers :func:`beside` added (itself when it has none)."""
    return getattr(antenna, "bare_antenna", antenna)


def _beside_class(cls: type) -> type:
    """A subclass of an antenna family whose response adds the scatterers' re-radiation (one per family)."""
    hit = _BESIDE_CLASSES.get(cls)
    if hit is not None:
        return hit

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
        ev, eh = cls.complex_response(self, freq_hz, az, el)
        ev = np.array(ev, dtype=complex)
        for i, tx in enumerate(self.scatterers):
            ev = ev + phys.scattered(
                self.bare_antenna, tx, freq_hz, az, el, at_m=self.scatter_point, terms=self._scatter_terms(freq_hz, i)
            )
        return ev, eh

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        ev, eh = complex_response(self, freq_hz, azimuth_rad, elevation_rad)
        return np.abs(ev) ** 2, np.abs(eh) ** 2

    def gain_linear(self, freq_hz, azimuth_rad, elevation_rad):
        gv, gh = partial_gains(self, freq_hz, azimuth_rad, elevation_rad)
        return gv + gh

    def _scatter_terms(self, freq_hz, i):
        key = (float(freq_hz), i)
        if key not in self._terms:
            tx = self.scatterers[i]
            self._terms[key] = phys.coupling_terms(self.bare_antenna, tx, freq_hz, self.scatter_point)
        return self._terms[key]

    def at(self, position_m):
        return beside(self.bare_antenna.at(position_m), self.scatterers)

    def gain_key(self):
        return None  # its gains depend on where it stands

    def __reduce__(self):
        return beside, (self.bare_antenna, self.scatterers)

    hit = type(
        cls.__name__,
        (cls,),
        {
            "__doc__": f"{cls.__name__} beside the site's scatterers (snrgain.model.scatter.beside).",
            "__module__": __name__,
            "complex_response": complex_response,
            "partial_gains": partial_gains,
            "gain_linear": gain_linear,
            "_scatter_terms": _scatter_terms,
            "at": at,
            "gain_key": gain_key,
            "__reduce__": __reduce__,
        },
    )
    _BESIDE_CLASSES[cls] = hit
    return hit


def beside(antenna, scatterers):
    """``antenna`` (a new object, the given one untouched) with the re-radiation of ``scatterers``
    (:class:`snrgain.physics.scatter.TxVertical`, each in the state it is run in) added to its response."""
    import copy

    base = bare(antenna)
    out = copy.copy(base)
    out.__class__ = _beside_class(type(base))
    out.bare_antenna = base
    out.scatterers = tuple(scatterers)
    out.scatter_point = np.asarray(base.params.position or (0.0, 0.0), dtype=float)
    out._terms = {}
    return out


def site_scatterers(sc) -> list[phys.TxVertical]:
    """The scatterers a candidate hears in the ranking: the transmitting vertical in the site's tx_state and each
    structure as built, those that re-radiate (an open base does not, in this model) and are not too tall."""
    out = []
    tx = tx_vertical(sc)
    if tx is not None:
        out.append(tx)
    out.extend(st for _, st, _ in structure_scatterers(sc) if st is not None)
    kept = []
    for st in out:
        if st.load_ohm is None:
            continue
        try:
            phys.check_height(st, sc.freq_hz)
        except ValueError:
            continue  # said by the notices (structure-not-computed); the vertical's own height is checked there
        kept.append(st)
    return kept


def with_structures(sc):
    """The scenario with each antenna whose coupling is computed (:func:`modelled`) standing beside the site's
    scatterers (:func:`site_scatterers`): new antennas, phasing units remade over their moved parts; the
    transmitting vertical itself as it is (it is the scatterer; the reference, unless another antenna is made the
    reference, when that one stands beside the vertical like any other).  The scenario itself when nothing
    changes."""
    from snrgain.model.steering import repoint, with_antennas

    scat = site_scatterers(sc)
    if not scat:
        return sc
    tx_name = getattr(sc, "transmitting", None)
    old = list(sc.antennas)
    new = [a if a.name == tx_name or not modelled(bare(a)) else beside(a, scat) for a in old]
    if all(a is b for a, b in zip(new, old)):
        return sc
    return with_antennas(sc, repoint(new, old))
