"""[site] structures (nearby metal that re-radiates: a tower, another vertical) and the TX vertical's state check;
what they do is computed by snrgain.model.scatter."""

from __future__ import annotations

from snrgain.fields import Name, PlanPoint, StrictModel, quantity


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
