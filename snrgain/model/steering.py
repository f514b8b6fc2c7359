"""The pipeline's steering stage: the antennas set under the site's own noise sky (arrays steered for SNR, phasing
units) returned as new antennas; a phasing unit never worse than its better part.  Composed by
:mod:`snrgain.model.pipeline`."""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from snrgain.model.products import Products, products, snr_gains, target_statistic
from snrgain.scenario import Scenario


def nearest_target(sc: Scenario, bearing_rad: float) -> int:
    """Index of the target whose bearing lies nearest ``bearing_rad``."""
    off = [abs((t.bearing_rad - bearing_rad + np.pi) % (2 * np.pi) - np.pi) for t in sc.targets]
    return int(np.argmin(off))


def with_candidates(sc: Scenario, candidates, k: int) -> Scenario:
    """The scenario holding its reference and ``candidates``, each on the chain of the scenario's antenna ``k``
    (a sweep's or a layout's designs of one candidate, a phasing unit's trial settings)."""
    candidates = tuple(candidates)
    return replace(sc, candidates=candidates, chains=(sc.chains[0], *[sc.chains[k]] * len(candidates)))


def with_antennas(sc: Scenario, antennas) -> Scenario:
    """The scenario holding ``antennas`` ([reference, *candidates], as a stage returned them)."""
    antennas = list(antennas)
    return replace(sc, reference=antennas[0], candidates=tuple(antennas[1:]))


def repoint(antennas: list, old: list) -> list:
    """Composite antennas made over the antennas at the same places in ``antennas`` as their parts stood in
    ``old`` (a stage that returns new antennas keeps the phasing units over them)."""
    out = list(antennas)
    for k, ant in enumerate(out):
        if ant.composite and ant.elements:
            idx = [next(i for i, o in enumerate(old) if o is e) for e in ant.elements]
            out[k] = ant.with_parts([out[i] for i in idx])
    return out


def sky_forms(sc: Scenario, skies, ant, k: int):
    """(signal, noise, target index) quadratic forms of an antenna's element weights under the sky: the noise
    averaged over the scenario's months and hours plus the chain's noise on the combiner's normalisation, the
    signal toward the target nearest its bearing (snrgain.antennas.steering)."""
    from snrgain.antennas.steering import quadratic_form

    # The form is linear in the brightness: the maps on one set of directions are summed over components, months
    # and hours first, and each set's form made once.
    brightness: dict[int, list] = {}
    for comps in skies.maps.values():
        for c in comps:
            held = brightness.setdefault(id(c.directions), [c.directions, 0.0])
            held[1] = held[1] + c.weight_k_sr
    noise = 0
    for directions, total in brightness.values():
        responses = ant.element_responses(sc.freq_hz, directions.azimuth_rad, directions.elevation_rad)
        noise = noise + quadratic_form(*responses, total / (4 * np.pi))
    noise = noise / len(skies.maps) + sc.chains[k].temperature_k * ant.norm_matrix(sc.freq_hz)
    ti = nearest_target(sc, ant.params.bearing)
    t = sc.targets[ti]
    signal = quadratic_form(*ant.element_responses(sc.freq_hz, t.azimuth_rad, t.elevation_rad), t.weight)
    return signal, noise, ti


def steer(sc: Scenario, grid, skies) -> Scenario:
    """The scenario with every candidate that ``uses_sky`` (arrays steered for SNR, phasing units) set under its
    sky: new antennas, the scenario's own untouched.

    A phasing unit's automatic setting is the best, by the ranking's statistic (the median over its target's
    hours of the SNR gain over the reference), of the maximum-SNR setting and each of its two antennas alone, so
    it is never worse than the better of its parts toward its target (its parts as they stand beside the site's
    scatterers, :func:`snrgain.model.scatter.with_structures`, which runs before).  An array beside them is
    steered on its own elements' responses and then put back beside them; a resistor chosen under the sky is
    scored with the antenna beside them.
    """
    from snrgain.model.scatter import bare, beside

    old = list(sc.antennas)
    order = sorted((k for k, a in enumerate(old) if k > 0 and a.uses_sky), key=lambda k: old[k].sky_order)
    if not order or skies.maps is None:
        return sc
    ants = list(old)
    ref = None
    for k in order:
        ant = repoint(ants, old)[k]
        # An antenna beside the site's scatterers (with_structures) is set as itself and put back beside them; a
        # resistor is scored beside them.
        put = (lambda a, s=ant.scatterers: beside(a, s)) if bare(ant) is not ant else (lambda a: a)
        if hasattr(ant, "termination_under_sky"):  # a resistor chosen by the ranking's statistic (longwire)
            if ref is None:
                ref = products(sc, [ants[0]], grid, skies)
            ti = nearest_target(sc, ant.params.bearing)
            ants[k] = put(
                bare(ant).termination_under_sky(
                    sc.freq_hz,
                    lambda variants, ref=ref, k=k, ti=ti, put=put: _median_gains(
                        sc, grid, skies, ref, [put(a) for a in variants], k, ti
                    ),
                    sc.targets[ti].name,
                )
            )
            continue
        signal, noise, ti = sky_forms(sc, skies, ant, k)
        note = f"SNR toward {sc.targets[ti].name} under the site's noise"
        if bare(ant) is not ant:  # an array: steered on its own elements' responses
            ants[k] = put(bare(ant).under_sky(sc.freq_hz, signal=signal, noise=noise, note=note))
            continue
        choices = [ant.under_sky(sc.freq_hz, signal=signal, noise=noise, note=note)]
        if ant.composite and ant.optimised:
            for i, part in enumerate(ant.elements):
                alone = ant.alone(sc.freq_hz, i, f"{part.name} alone: the better part toward {sc.targets[ti].name}")
                alone.setting_loss(sc.freq_hz, signal, noise)
                choices.append(alone)
            if ref is None:
                ref = products(sc, [ants[0]], grid, skies)
            ants[k] = choices[int(np.argmax(_median_gains(sc, grid, skies, ref, choices, k, ti)))]
        else:
            ants[k] = choices[0]
    return with_antennas(sc, repoint(ants, old))


def _median_gains(sc: Scenario, grid, skies, ref: Products, ants, k: int, ti: int) -> np.ndarray:
    """Each of ``ants``' (designs of candidate ``k``) statistic toward target ``ti`` without the spreads [dB], all in
    one pass of the products."""
    ants = list(ants)
    sub = with_candidates(sc, ants, k)
    p = products(sub, [ref.antennas[0], *ants], grid, skies, known=ref)
    return target_statistic(sub, snr_gains(sub, p))[1:, ti]
