"""[site] structures (nearby metal that re-radiates: a tower, another vertical) and the TX vertical's state check;
what they do is computed by snrgain.model.scatter."""

from __future__ import annotations

from snrgain.constants import MIN_GAP_M
from snrgain.fields import Name, PlanPoint, StrictModel, nfc, quantity
from snrgain.units import length_said


class Structure(StrictModel):
    """A nearby metal structure that re-radiates (snrgain.model.scatter): a tower, another vertical, a mast."""

    name: Name
    position: PlanPoint
    """Its foot on the site plan [east, north]."""
    height: quantity("length", ge=0.5, le=300.0)
    top_loading: quantity("length", ge=0.0, le=300.0) = 0.0
    """Electrical length a top hat or a beam on top adds [m] (as the vertical family's top_loading)."""
    radius: quantity("length", ge=0.001, le=3.0) = 0.1
    """Its equivalent wire radius [m] (a lattice tower: about a third of its face width, common practice)."""
    base_load: quantity("resistance", ge=0.0, le=1e6) = 0.0
    """What connects its foot to the ground [ohm]: 0 grounded (a tower bonded to its ground rods), or a resistance."""
    ground_loss: quantity("resistance", ge=0.0, le=5000.0) = 10.0
    """The loss of its ground connection [ohm]."""
    clearance: quantity("length", ge=0.0, le=2000.0) | None = None
    """How far every antenna's feed point, wire and element stays from its foot [m] (None: its height, at least
    10 m: snrgain.decide.lot.structure_clearance_m; 0: no rule)."""


def check_detuning(tx_state: str, reactance_ohm: float | None) -> None:
    """A detuning reactance belongs to the detuned state: ValueError naming both keys otherwise."""
    if reactance_ohm is not None and tx_state != "detuned":
        raise ValueError(
            f"tx_detune_reactance: {reactance_ohm:g} ohm is given with tx_state = {tx_state!r}; a detuning "
            'reactance applies only with tx_state = "detuned"'
        )


def transmitting_vertical(given: str | None, built, file_reference) -> tuple[str | None, list]:
    """(the name of the site's transmitting vertical, problems): ``[site] transmitting`` when given (an antenna of
    the scenario of the vertical family, or "none"), else the file's reference when it is a vertical (it stays the
    vertical next door when ``--reference`` makes another antenna the reference)."""
    if given is None:
        ant = file_reference if file_reference is not None else built.antennas[0]
        return (ant.name if ant.resonant_tx else None), []
    if given.strip().lower() == "none":
        return None, []
    given = nfc(given)  # as the antennas' names are (snrgain.fields.check_name)
    names = [a.name for a in built.antennas]
    if given not in names:
        return None, [
            (
                "site.transmitting",
                f"no antenna named {given!r}; name the transmitting vertical among {', '.join(map(repr, names))}, "
                "or 'none'",
            )
        ]
    ant = built.antennas[names.index(given)]
    if not ant.resonant_tx:
        return None, [
            (
                "site.transmitting",
                f"{given!r} is a {ant.family}, not a vertical: name an antenna of the vertical family",
            )
        ]
    return given, []


def clear_of_scatterers(transmitting: str | None, built, site, placed_by_user=None) -> list[tuple[str, str]]:
    """Every receiving antenna the file places (``placed_by_user``: the names, a switched antenna's group among them,
    of the tables that give a ``position``, ``positions`` or elements' positions, each with that key; None: every
    antenna with one) stands at least
    :data:`snrgain.constants.MIN_GAP_M` on the plan from the transmitting vertical's base (where
    :func:`snrgain.model.scatter.tx_antenna` stands it: its position, or the plan's origin when the site has a lot;
    nothing is said without either) and from every structure's foot; one without a position stands at the
    reference's place by design.  Problems as (path, message)."""
    import numpy as np

    from snrgain.scenario.local import antenna_outline, gap_m

    feet = []
    names = [a.name for a in built.antennas]
    if transmitting in names:
        tx = built.antennas[names.index(transmitting)]
        if tx.params.position is not None or site.lot is not None:
            feet.append((f"the transmitting vertical ({transmitting!r})", tx.params.position or (0.0, 0.0)))
    structures = list(getattr(site, "structures", ()) or ())
    out = []
    for i, st in enumerate(structures):  # a structure on the vertical's spot, or on another's
        if st.name in [o.name for o in structures[:i]]:
            out.append((f'site.structures {i + 1} ("{st.name}").name', f"name {st.name!r} is used twice"))
            continue
        for what, foot in [*feet, *((f"the structure {o.name!r}", o.position) for o in structures[:i])]:
            gap = float(np.hypot(*(np.asarray(st.position, dtype=float) - np.asarray(foot, dtype=float))))
            if gap < MIN_GAP_M:
                out.append(
                    (
                        f'site.structures {i + 1} ("{st.name}").position',
                        f"it stands {length_said(gap, decimals=2)} from {what}: two structures cannot stand in one "
                        "place",
                    )
                )
                break
    feet += [(f"the structure {st.name!r}", st.position) for st in structures]
    for ant, where in zip(built.antennas, built.wheres):
        placed = ant.params.position is not None or getattr(ant, "positions", None) is not None
        group = getattr(getattr(ant, "switched", None), "group", None)
        written = None if placed_by_user is None else placed_by_user.get(ant.name, placed_by_user.get(group))
        if placed_by_user is not None and written is None:
            placed = False
        if ant.composite or ant.name == transmitting or not placed:
            continue
        for what, foot in feet:
            point = np.asarray([float(v) for v in foot], dtype=float)
            gap = min(gap_m(point, shape) for shape in antenna_outline(ant, (0.0, 0.0)))
            if gap < MIN_GAP_M:
                key = written or ("positions" if getattr(ant, "positions", None) is not None else "position")
                out.append(
                    (
                        f"{where}.{key}",
                        f"it stands {length_said(gap, decimals=2)} from {what} on the plan: two antennas cannot "
                        "stand in one place; keep every feed point, wire and element at least "
                        f"{length_said(MIN_GAP_M)} away (half a wavelength from a transmitting vertical is common "
                        "practice)",
                    )
                )
                break
    return out
