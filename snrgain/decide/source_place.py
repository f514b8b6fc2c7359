"""How much a candidate's SNR gain rests on exactly where a placed noise source stands: the ``source-position``
notice.

A placed source (``[[noise.local]] position``) is heard through each antenna's near-field response, and an antenna
that happens to null it (a loop's or an array's null, a Beverage's side) can owe dB of its SNR gain to a null whose
place moves a few metres with the source.  The level's uncertainty is in the spreads; the place is not (a barn's
wiring, a fence line or a neighbour's supply radiates from metres of conductor, not a point).  So each placed
source is moved DISPLACEMENT_M north, east, south and west, every antenna's pickup of it worked again
(:func:`snrgain.model.placed.pickup`, the products' own), the level kept where it is anchored (read on the antenna
named by ``read_on``, the reference by default, or its Fa where it was measured), and each candidate's noise changed
by its share of that source (medians over the hours, as at the receiver input, the receiving chain's own floor
counted), its resistor and phasing kept as chosen for the written place (its feed line's own pickup of the source
is not moved with it: the products add it, this notice reads the antenna alone).  The SNR gain moves by the reference's
change less the candidate's (the signal stays).  A phasing unit set automatically (a ``combination`` with setting
"auto") is the exception: a listener sets it again by ear on the source as heard, so its setting follows the moved
source, and its SNR's change set again is taken from the steering's own forms (:func:`resetting_snr_db`).  A move
that would bring the source within the input's least distance of an antenna (1 m) is left out.  A candidate whose
SNR gain moves by SHIFT_DB or more at some displacement is named (snrgain's threshold: half a S-unit).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from snrgain.model.results import Notice

DISPLACEMENT_M = 5.0
SHIFT_DB = 3.0
DIRECTIONS = ((0.0, 1.0), (1.0, 0.0), (0.0, -1.0), (-1.0, 0.0))
"""North, east, south and west, as unit steps [east, north]."""
DIRECTION_NAMES = ("north", "east", "south", "west")


def _median_watts(values_dbm) -> float:
    from snrgain.model.spread import median  # np.median's value without loading numpy.ma

    v = np.asarray(values_dbm, dtype=float)
    return float(median(np.where(np.isfinite(v), 10 ** (v / 10), 0.0)))


def source_shares(result, source: str) -> float | None:
    """The share of ``source`` in what sets an antenna's SNR at the receiver input: its noise (median powers over the
    hours) and the receiving chain's own floor; None where the antenna's noise does not list the source."""
    comps = result.noise_by_component_dbm or {}
    if comps.get(source) is None:
        return None
    watts = {k: _median_watts(v) for k, v in comps.items() if v is not None}
    floor = (result.chain or {}).get("noise_floor_dbm")
    total = sum(watts.values()) + (10 ** (floor / 10) if floor is not None and np.isfinite(floor) else 0.0)
    return watts[source] / total if total > 0 else None


def moves(sc, antennas: list, src, step_m: float = DISPLACEMENT_M) -> list[tuple[int, tuple[float, float]]]:
    """(index into DIRECTIONS, the moved position) of each move of ``src`` by ``step_m`` that keeps it the input's
    least distance from every antenna (snrgain.scenario.MIN_SOURCE_GAP_M: the field model needs a distance)."""
    from snrgain.scenario.local import MIN_SOURCE_GAP_M, source_gap_m

    ref_m = antennas[0].params.position or (0.0, 0.0)
    out = []
    for i, (de, dn) in enumerate(DIRECTIONS):
        p = (src.position_m[0] + de * step_m, src.position_m[1] + dn * step_m)
        if all(a.composite or source_gap_m(p, src.height_m, a, ref_m) >= MIN_SOURCE_GAP_M for a in antennas):
            out.append((i, p))
    return out


def reading_index(src, antennas: list) -> int | None:
    """The index among ``antennas`` of the antenna a source's level was read on (``read_on``; the reference, 0,
    where that antenna is not among them); None for a source given as an Fa."""
    if src.level_dbm is None:
        return None
    names = [a.name for a in antennas]
    return names.index(src.read_on) if src.read_on in names else 0


def noise_shifts_db(sc, antennas: list, results: list, src, step_m: float = DISPLACEMENT_M) -> np.ndarray:
    """The change of each antenna's noise [dB] (at the receiver input, its chain's floor counted) with ``src``
    moved ``step_m`` along each of DIRECTIONS: shape (directions, antennas); NaN for a move :func:`moves` leaves
    out.  The source's level stays where it is anchored: a level read on an antenna (``read_on``, the reference by
    default) stays read there, so that antenna's noise stays; an Fa stays the Fa where it was measured (pickup's
    shares carry it)."""
    from snrgain.model.placed import pickup

    anchor = reading_index(src, antennas)
    base, _ = pickup(_with_source(sc, src), antennas)
    share = np.array([source_shares(r, src.name) or 0.0 for r in results])
    out = np.full((len(DIRECTIONS), len(antennas)), np.nan)
    for i, p in moves(sc, antennas, src, step_m):
        moved = replace(src, position_m=p)
        got, _ = pickup(_with_source(sc, moved), antennas)
        s0, s1 = base[src.name], got[moved.name]
        ratio = s1 / s0 if anchor is None else (s1 / s1[anchor]) / (s0 / s0[anchor])
        out[i] = 10 * np.log10(np.maximum(1.0 + share * (ratio - 1.0), 1e-30))
    return out


def resetting_snr_db(sc, skies, antennas: list, src, step_m: float = DISPLACEMENT_M) -> np.ndarray:
    """The change of each automatically set phasing unit's SNR [dB] (a combination with setting "auto") when it is
    set again for ``src`` moved ``step_m`` along each of DIRECTIONS: the highest SNR any setting gives under the
    noise with the source moved over the highest under the noise now, both from the steering's own forms
    (snrgain.model.steering.sky_forms, placed_forms: the noise averaged over the months and hours, the chain's
    counted), the moved source's level kept where it was read (``read_on``: the form rescaled by the reference's
    change against that antenna, as :func:`noise_shifts_db` keeps it; an Fa the pickup's own).  Shape
    (directions, antennas); NaN for every other antenna (and every antenna without ``skies``) and for a move
    :func:`moves` leaves out."""
    from snrgain.antennas.steering import free_optimum, ratio
    from snrgain.model.placed import pickup
    from snrgain.model.steering import placed_forms, sky_forms

    out = np.full((len(DIRECTIONS), len(antennas)), np.nan)
    units = [k for k in range(1, len(antennas)) if antennas[k].composite and getattr(antennas[k], "optimised", False)]
    if skies is None or skies.maps is None or not units:
        return out
    taken = moves(sc, antennas, src, step_m)
    anchor = reading_index(src, antennas) or None  # read on the reference (0): the forms keep it as they are
    if anchor is not None:  # the reference's pickup against the reading's antenna, at the written place and moved
        pair = [antennas[0], antennas[anchor]]
        s0 = pickup(_with_source(sc, src), pair)[0][src.name]
    for k in units:
        ant = antennas[k]
        held = placed_forms(_with_source(sc, src), skies, ant).get(src.name)
        if held is None:  # a unit that stands nowhere in particular: its setting held, as for any antenna
            continue
        signal, noise, _ = sky_forms(sc, skies, ant, k)
        now = ratio(free_optimum(signal, noise), signal, noise)  # set as the forms set it (0 dB for no move)
        for i, p in taken:
            moved_src = replace(src, position_m=p)
            scale = 1.0
            if anchor is not None:
                s1 = pickup(_with_source(sc, moved_src), pair)[0][src.name]
                scale = float((s1[0] / s1[1]) / (s0[0] / s0[1]))
            moved = noise - held + scale * placed_forms(_with_source(sc, moved_src), skies, ant)[src.name]
            out[i, k] = 10 * np.log10(ratio(free_optimum(signal, moved), signal, moved) / now)
    return out


def shifts_db(sc, antennas: list, results: list, src, step_m: float = DISPLACEMENT_M, skies=None) -> np.ndarray:
    """The change of each antenna's SNR gain [dB] with ``src`` moved: the reference's noise change less the
    antenna's (:func:`noise_shifts_db`; the signal stays), and for a phasing unit set automatically (with ``skies``)
    the reference's noise change plus the unit's SNR change set again (:func:`resetting_snr_db`); the reference's
    column 0."""
    reset = resetting_snr_db(sc, skies, antennas, src, step_m)
    noise = _unit_noise(noise_shifts_db(sc, antennas, results, src, step_m), reset)
    return noise[:, :1] - noise


def _unit_noise(noise: np.ndarray, reset_snr: np.ndarray) -> np.ndarray:
    """Noise shifts with each set-again unit's column its SNR change, as a noise change (the signal taken as
    staying: what its SNR gain over the reference reads)."""
    return np.where(np.isnan(reset_snr), noise, -reset_snr)


def _with_source(sc, src):
    """The scenario with ``src`` its only local source (the others' pickups do not change with this one's place)."""
    return replace(sc, noise=replace(sc.noise, local=(src,)))


def source_position_notices(sc, results: list, skies=None) -> list[Notice]:
    """``source-position`` notices for each placed source (module docstring); values source, step_m, directions
    (the moves taken, :func:`moves`), low_db and high_db (the least and most change over them), share, and
    ``reset`` True for a phasing unit set again on the moved source (with ``skies``, :func:`resetting_snr_db`):

    - for a candidate whose SNR gain moves by SHIFT_DB or more, where its own noise moves that much or the
      reference's is not said to: the change of its SNR gain, share the source's share of its noise; a switched
      antenna once, by the state that moves most (``shown_state``, and ``states`` how many of them move that much);
    - for the reference (once) where its own noise moves by SHIFT_DB or more (the level read on another antenna,
      ``read_on``, or an Fa measured elsewhere): the change of its noise, ``read_on`` the antenna the level was read
      on (None: an Fa): every SNR gain over it moves with that."""
    placed = [s for s in sc.noise.local if s.position_m is not None]
    if not placed:
        return []
    antennas = list(sc.antennas)
    by_name = {r.name: r for r in results}
    results = [by_name.get(a.name) for a in antennas]
    if any(r is None for r in results):
        return []  # results of other antennas than the scenario's (not the pipeline's own)
    out = []
    for src in placed:
        reset = resetting_snr_db(sc, skies, antennas, src)  # a unit set again on the moved source
        noise = _unit_noise(noise_shifts_db(sc, antennas, results, src), reset)
        taken = [DIRECTION_NAMES[i] for i in range(len(DIRECTIONS)) if np.isfinite(noise[i, 0])]
        if not taken:
            continue
        head = {"source": src.name, "step_m": DISPLACEMENT_M, "directions": taken}
        ref = _range(noise[:, 0])
        said_of_reference = max(map(abs, ref)) >= SHIFT_DB
        if said_of_reference:
            reader = src.read_on if src.level_dbm is not None else None
            values = {**head, "low_db": ref[0], "high_db": ref[1], "share": _share(results[0], src), "read_on": reader}
            out.append(Notice("source-position", antennas[0].name, {**values, "reference": True}))
        gain = noise[:, :1] - noise
        moving = [  # its gain moves, and not only with the reference's noise (said above where it is)
            k
            for k in range(1, len(antennas))
            if max(map(abs, _range(gain[:, k]))) >= SHIFT_DB
            and (max(map(abs, _range(noise[:, k]))) >= SHIFT_DB or not said_of_reference)
        ]
        out += [
            Notice(
                "source-position",
                antennas[k].name,
                {**head, **_gain_values(gain[:, k], results[k], src), "reset": bool(np.any(np.isfinite(reset[:, k])))},
            )
            for k in moving
        ]
    return out


def severity(values: dict) -> float:
    """How far a ``source-position`` notice's gain moves: of a switched antenna's states the one shown
    (snrgain.decide.decisions.by_switched_antenna)."""
    return max(abs(values["low_db"]), abs(values["high_db"]))


def _range(values) -> tuple[float, float]:
    return float(np.nanmin(values)), float(np.nanmax(values))


def _share(result, src) -> float:
    return float(source_shares(result, src.name) or 0.0)


def _gain_values(gain, result, src) -> dict:
    low, high = _range(gain)
    return {"low_db": low, "high_db": high, "share": _share(result, src)}


__all__ = [
    "moves",
    "noise_shifts_db",
    "reading_index",
    "resetting_snr_db",
    "severity",
    "shifts_db",
    "source_position_notices",
    "source_shares",
]
