"""``--reference NAME`` (rank, report, sweep): another antenna of the scenario made the reference, as if its table and
the file's reference had been swapped in the file.

Not every antenna can be the reference: a switched antenna is one antenna of several states, and the site's noise
is read on one fixed antenna; one steered for SNR needs a reference to be steered against.  A refusal lists only the
antennas the option takes, and a switched antenna is recognised by every name the tools that measure take for it
(its own, a state's whole name, a state's shorter one: snrgain.scenario.connected), so that the name first tried
is refused for what it is.  Names are compared in Unicode's composed form (snrgain.fields.nfc).
"""

from __future__ import annotations

from snrgain.fields import nfc

from .antennas import Built
from .connected import REFERENCE, short_label
from .switched import switched_state


def why_not_reference(ant) -> str | None:
    """Why this antenna of the scenario cannot be made the reference, or None."""
    state = switched_state(ant)
    if state is not None:
        return f"is one state of the switched antenna {state.group!r}, which cannot be the reference"
    if getattr(ant.params, "steering", None) == "auto" and getattr(ant.params, "auto_for", None) == "snr":
        return "is steered for SNR (auto_for = 'snr'), which needs a reference to compare with"
    return None


def _switched_named(antennas, name: str) -> tuple[str, list[str]] | None:
    """(the switched antenna, its states' names) that ``name`` names by its own name, a state's whole name or a
    state's shorter one; None for a name of no switched antenna."""
    groups: dict[str, list[str]] = {}
    hit = None
    for ant in antennas:
        state = switched_state(ant)
        if state is None:
            continue
        groups.setdefault(state.group, []).append(ant.name)
        if name in (nfc(state.group), nfc(ant.name), nfc(f"{state.group} {short_label(state.state)}")):
            hit = hit or state.group
    return (hit, groups[hit]) if hit is not None else None


def choose_reference(built: Built, name: str) -> list[tuple[str, str]]:
    """Make the antenna named ``name`` the reference (in place): it leaves the candidates, and the file's reference
    takes its place among them, as if the two tables had been swapped in the file.  ``"reference"`` or the file's
    reference's name keeps the file as it is.  Problems as (path, message): a refusal lists the antennas the
    option takes."""
    names = [a.name for a in built.antennas]
    name = nfc(name)
    if name == REFERENCE or name == names[0]:
        return []
    others = [repr(a.name) for a in built.antennas[1:] if why_not_reference(a) is None]
    offered = (
        f"--reference takes {', '.join(others)} (or {names[0]!r}, the file's reference)"
        if others
        else f"--reference takes no antenna of this scenario but its own reference, {names[0]!r}"
    )
    switched = _switched_named(built.antennas[1:], name)
    if name not in names and switched is None:
        return [("--reference", f"no antenna named {name!r}; {offered}")]
    if switched is not None:
        group, states = switched
        what = (
            f"is the switched antenna {group!r} ({len(states)} states: {', '.join(repr(s) for s in states)})"
            if name == nfc(group)
            else f"is one state of the switched antenna {group!r}"
        )
        return [
            (
                "--reference",
                f"{name!r} {what}: a switched antenna cannot be the reference (the site's noise is read on one "
                f"fixed antenna); {offered}",
            )
        ]
    k = names.index(name)
    why = why_not_reference(built.antennas[k])
    if why is not None:
        return [("--reference", f"{name!r} {why}; {offered}")]
    for lst in (built.antennas, built.wheres, built.chains):
        lst[0], lst[k] = lst[k], lst[0]
    built.placeable.pop(name, None)  # the reference stands where it is
    if built.feed_lines.pop(built.wheres[0], None) is not None:  # as the file's reference takes none
        import warnings

        warnings.warn(
            f"--reference {name!r}: its feed_line is left out while it is the reference (the site's noise is read on "
            "the reference as it stands; feed lines are scored on candidates)",
            stacklevel=2,
        )
    return []
