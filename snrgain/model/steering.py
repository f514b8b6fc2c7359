"""The pipeline's steering stage: the antennas set under the site's own noise sky (arrays steered for SNR, phasing
units) returned as new antennas; a phasing unit never worse than its better part.  Composed by
:mod:`snrgain.model.pipeline`."""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from snrgain.model.products import Products, products, snr_gains, target_statistic
from snrgain.model.scatter import bare, beside
from snrgain.scenario import Scenario


def nearest_target(sc: Scenario, bearing_rad: float, both_ways: bool = False) -> int:
    """Index of the target whose bearing lies nearest ``bearing_rad`` (``both_ways``: a figure-eight's, nearest either
    of its two lobes, ``bearing_rad`` and the opposite bearing)."""
    ways = (bearing_rad, bearing_rad + np.pi) if both_ways else (bearing_rad,)
    off = [min(abs((t.bearing_rad - b + np.pi) % (2 * np.pi) - np.pi) for b in ways) for t in sc.targets]
    return int(np.argmin(off))


OFF_LOBE_DB = 10.0
"""A target whose gain lies more than this [dB] under the peak of the antenna's azimuth pattern (at the target's own
elevations, with the resistor of best RDF) is outside its main lobe: a resistor chosen under the sky is not tuned
toward it (a near-short that helps a side lobe is not what a builder fits to a wire that faces elsewhere)."""


def target_outside_lobe(sc: Scenario, ant, ti: int) -> dict | None:
    """{target, target_bearing_deg, bearing_deg, off_deg, below_db} where target ``ti`` lies outside ``ant``'s main
    lobe (OFF_LOBE_DB under the peak of its azimuth pattern at the target's elevations, weighted as the target
    weighs them); None where it lies within it."""
    t = sc.targets[ti]
    az = np.radians(np.arange(0.0, 360.0, 1.0))
    el = np.asarray(t.elevation_rad, dtype=float)
    w = np.asarray(t.weight, dtype=float)
    cut = ant.gain_linear(
        sc.freq_hz, np.broadcast_to(az, (el.size, az.size)), np.broadcast_to(el[:, None], (el.size, az.size))
    )
    toward = float(np.sum(w * ant.gain_linear(sc.freq_hz, t.azimuth_rad, el)))
    peak = float(np.sum(w * np.max(cut, axis=1)))
    below = 10.0 * np.log10(max(peak, 1e-300) / max(toward, 1e-300))
    if below <= OFF_LOBE_DB:
        return None
    bearing = float(np.degrees(getattr(ant, "bearing_rad", getattr(ant.params, "bearing", 0.0)))) % 360.0
    target = float(np.degrees(t.bearing_rad)) % 360.0
    return {
        "target": t.name,
        "target_bearing_deg": target,
        "bearing_deg": bearing,
        "off_deg": abs((target - bearing + 180.0) % 360.0 - 180.0),
        "below_db": float(below),
    }


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
    ``old`` (a stage that returns new antennas keeps the phasing units over them); a part that is already one of
    ``antennas`` (a unit set under the sky after its part was: steer) keeps its place."""
    out = list(antennas)
    for k, ant in enumerate(out):
        if ant.composite and ant.elements:
            idx = [_place_of(e, old, antennas) for e in ant.elements]
            out[k] = ant.with_parts([out[i] for i in idx])
    return out


def _place_of(part, old: list, antennas: list) -> int:
    """Where ``part`` stands: its index in ``old``, else in ``antennas`` (by identity: two antennas may be equal)."""
    for pool in (old, antennas):
        for i, o in enumerate(pool):
            if o is part:
                return i
    raise LookupError(f"a part of a combination, {getattr(part, 'name', part)!r}, is not among the antennas")


def sky_forms(sc: Scenario, skies, ant, k: int, feed_line_k: float = 0.0):
    """(signal, noise, target index) quadratic forms of an antenna's element weights under the sky: the noise
    averaged over the scenario's months and hours plus the chain's noise on the combiner's normalisation, the
    signal toward the target nearest its bearing (snrgain.antennas.steering).  A placed source enters the noise of an
    array or a phasing unit as its elements (a unit's two antennas) hear it where they stand (:func:`placed_forms`),
    as the products take it, not as a spot on the sky at its bearing from the reference: the null a unit sets with
    a sense antenna is set on the source as both antennas hear it.  ``feed_line_k``: what the antenna's feed line
    adds to its noise [K] (:func:`feed_line_temperature`), the same for any weights, entered on the combiner's
    normalisation as the chain's noise is."""
    from snrgain.antennas.steering import quadratic_form

    placed = placed_forms(sc, skies, ant)

    def responses_of(f, az, el):
        return element_responses_standing(ant, f, az, el)

    # The form is linear in the brightness: the maps on one set of directions are summed over components, months
    # and hours first, and each set's form made once.
    brightness: dict[int, list] = {}
    for comps in skies.maps.values():
        for c in comps:
            if c.name in placed:
                continue
            held = brightness.setdefault(id(c.directions), [c.directions, 0.0])
            held[1] = held[1] + c.weight_k_sr
    noise = 0
    for directions, total in brightness.values():
        responses = responses_of(sc.freq_hz, directions.azimuth_rad, directions.elevation_rad)
        noise = noise + quadratic_form(*responses, total / (4 * np.pi))
    noise = noise / len(skies.maps) + (sc.chains[k].temperature_k + feed_line_k) * ant.norm_matrix(sc.freq_hz)
    for form in placed.values():
        noise = noise + form
    ti = nearest_target(sc, ant.params.bearing)
    t = sc.targets[ti]
    signal = quadratic_form(*responses_of(sc.freq_hz, t.azimuth_rad, t.elevation_rad), t.weight)
    return signal, noise, ti


def feed_line_temperature(sc: Scenario, grid, skies, ant, k: int) -> float:
    """What candidate ``k``'s feed line adds to its noise [K], averaged over the months and hours: its shield's
    pickup of the sky and of the placed sources (snrgain.model.feedline), from a pass of the products; 0 without a
    feed line.  For an array it is the same for any weights (a series voltage in its phasing unit's output, whose
    path and the elements' add in power), so the steering takes it as it takes the chain's noise."""
    if ant.name not in (getattr(sc, "feed_lines", None) or {}):
        return 0.0
    if hasattr(bare(ant), "with_weights"):  # any weights (the same answer): a copy, the scenario's own untouched
        own = bare(ant).with_weights(sc.freq_hz, np.ones(len(bare(ant).weights)), "feed line")
        ant = own if bare(ant) is ant else beside(own, ant.scatterers)
    sub = with_candidates(sc, [ant], k)
    p = products(sub, [sc.antennas[0], ant], grid, skies)
    if p.feed_lines is None:
        return 0.0
    return float(np.mean(p.feed_lines.effect[:, 1].sum(axis=0)))


def one_element_arrays(ant, freq_hz: float) -> list:
    """(the array with element i's unit weight alone, sqrt(Q_ii)) for each element i, standing as ``ant`` stands
    (beside the site's scatterers where it is): its response times sqrt(Q_ii) is element i's own (the array's is
    sum_i w_i r_i over sqrt(w^H Q w), the scatterers' re-radiation linear in the weights too)."""
    own = bare(ant)
    q = np.real(np.diag(own.norm_matrix(freq_hz)))
    units = [own.with_weights(freq_hz, np.eye(len(q))[i], "one element") for i in range(len(q))]
    if own is not ant:
        units = [beside(u, ant.scatterers) for u in units]
    return list(zip(units, np.sqrt(q)))


def element_responses_standing(ant, freq_hz: float, az, el):
    """An array's element responses (as Array.element_responses: the array's response is sum_i w_i r_i over
    sqrt(w^H Q w)) as it stands: beside the site's scatterers, with their re-radiation, each element's response as
    it stands beside them (:func:`one_element_arrays`); else (or a composite) its own."""
    if ant.composite or bare(ant) is ant:
        return ant.element_responses(freq_hz, az, el)
    cols = [[r * root for r in u.complex_response(freq_hz, az, el)] for u, root in one_element_arrays(ant, freq_hz)]
    return np.array([c[0] for c in cols]), np.array([c[1] for c in cols])


def placed_forms(sc: Scenario, skies, ant) -> dict:
    """Each placed source's quadratic form in an array's element weights, or a phasing unit's two (name -> (N, N)):
    the reference's temperature from it (its sky component through the reference's pattern, averaged over the
    months and hours) times the array's share of it, P_A / P_ref with the pickup's own scaling
    (snrgain.model.placed.pickup: a level read elsewhere, an Fa measured elsewhere), P_A(w) = sum over the
    source's dipoles of |sum_i w_i a_i|^2 on the combiner's normalisation: a_i what element i alone delivers per
    unit weight, from where it stands (its near field, through its own currents; a unit's antenna as the products
    hear it alone, snrgain.model.placed.received_amplitudes).  Empty for an array that stands nowhere in
    particular."""
    from noisemodels.sky import weighted_temperature_k
    from snrgain.antennas.steering import quadratic_form
    from snrgain.model import placed as pl

    sources = [s for s in sc.noise.local if s.position_m is not None]
    if not sources or not pl.has_place(ant) or not hasattr(ant, "with_weights"):
        return {}
    f, ref = sc.freq_hz, sc.antennas[0]
    ref_m = ref.params.position or (0.0, 0.0)
    units = one_element_arrays(ant, f)  # beside the site's scatterers where it stands: as the products hear it
    out = {}
    for src in sources:
        shares, powers = pl.pickup(replace(sc, noise=replace(sc.noise, local=(src,))), [ref])
        t_ref = np.mean(
            [
                weighted_temperature_k(
                    ref.gain_linear(f, c.directions.azimuth_rad, c.directions.elevation_rad), c.weight_k_sr
                )
                for comps in skies.maps.values()
                for c in comps
                if c.name == src.name
            ]
        )
        scale = t_ref * float(shares[src.name][0] / powers[src.name][0])
        form = 0
        for kind, _ in pl.dipoles(src):
            amps = np.array(
                [np.array(pl.received_amplitudes(u, src, f, ref_m, sc.site.ground, kind=kind)) * r for u, r in units]
            )
            form = form + quadratic_form(amps[:, :1], amps[:, 1:])
        out[src.name] = scale * form
    return out


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
            if target_outside_lobe(sc, bare(ant), ti) is not None:
                continue  # its resistor of best RDF, as it stands (decisions: termination-off-target)
            score = TerminationScore(sc, grid, skies, ref, put, k, ti)
            ants[k] = put(bare(ant).termination_under_sky(sc.freq_hz, score, sc.targets[ti].name))
            continue
        signal, noise, ti = sky_forms(sc, skies, ant, k, feed_line_temperature(sc, grid, skies, ant, k))
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


class TerminationScore:
    """score(variants) for a resistor searched under the sky (``termination_under_sky``): each variant's statistic
    toward target ``ti`` [dB], as :func:`_median_gains` gives it, from the products of a few resistors.

    A terminated antenna's feed current from any excitation (a sky direction, a placed source, a scatterer's
    re-radiation) is I(R) = c(R) (alpha + R beta): the far load R enters the numerator linearly (the line's
    integrals and the ends' EMFs weighted by it), and the rest, the network's denominator and the feed load's
    scale (a transformer whose ratio follows R included), is one factor c(R) common to every excitation.
    Normalised on one probe direction p, I_d(R) = I_p(R) (a_d + R b_d) / (1 + R delta), delta shared by every d;
    delta follows from three resistors' responses at a few directions (least squares).  Every power the products
    hold (gains toward the targets, temperatures of every month and hour) is then
    |I_p(R)|^2 q(R) / |1 + R delta|^2 with q a real quadratic in R, fitted exactly through three resistors'
    products.  Any other resistor costs one probe response, not a pass of the products.  Two further resistors'
    products check the form (relative 1e-7); where it does not hold (a family whose current is not of this form)
    every resistor is worked in full.  The placed sources' part is checked apart: a loop's pickup of a near source
    through its segments' currents is not of the form to 1e-7, so it is then worked for every resistor (the
    source's pickup alone, :func:`snrgain.model.placed.pickup`).  A feed line's part (its sky part through its route,
    and what it changes of the placed sources' part) is not of the form either: it goes with the placed sources'
    part (snrgain.model.feedline: prepare, sky_cells; the route's sky part once), checked against the products' own
    on the five resistors worked in full (else every resistor is).  The antenna's own amplitude from each placed
    source's dipole is of the form too, a_s(R) = e_p(R) (A_s + R B_s) / (1 + R delta) with e_p the probe response:
    A_s and B_s are fitted once per wire on the three resistors' amplitudes (the products' own), checked on all five,
    and each other resistor's feed line is then worked from them (its coupling, a few numbers) instead of the
    sources' pickup along the wire anew; where that does not hold to CHECK_RTOL, the placed sources' part is worked
    in full.  The statistic is :func:`_median_gains`'s, from the same gains and temperatures (to rounding)."""

    CHECK_RTOL = 1e-7

    def __init__(self, sc: Scenario, grid, skies, ref: Products, put, k: int, ti: int):
        self.sc, self.grid, self.skies, self.ref, self.put, self.k, self.ti = sc, grid, skies, ref, put, k, ti
        self.model = None  # (resistors, q coefficients per quantity, delta, probe directions), once fitted
        self.direct = False  # the form did not hold: every resistor worked in full
        self.placed_formed = False  # the placed sources' part follows the form too
        self.feed_lines = False  # the candidate has a feed line (its part goes with the placed sources')
        self.routes_sky: dict = {}  # its route's sky part (feedline.sky_cells), the same for every resistor
        self.amplitudes = None  # (source name, kind) -> (A, B) (2,) each: the own amplitudes' form, where it holds
        self.reference_powers = None  # source name -> the reference's own power (the products' feed lines')
        self._worked_ants: list = []  # the antennas the last pass of the products took (their amplitudes kept)

    def __call__(self, variants) -> np.ndarray:
        variants = list(variants)
        if self.direct or (self.model is None and len(variants) < 5):
            return self._worked(variants)
        if self.model is None:
            out = self._fit(variants)
            if out is not None:
                return out
            self.direct = True
            return self._worked(variants)
        return self._statistic(self._predict(variants))

    def _worked(self, variants) -> np.ndarray:
        return _median_gains(self.sc, self.grid, self.skies, self.ref, [self.put(a) for a in variants], self.k, self.ti)

    def _quantities(self, variants) -> tuple[np.ndarray, np.ndarray] | None:
        """(formed, placed) of each variant, from a pass of the products (the reference known): formed (variants,
        targets + cells), its gains toward the targets, then its temperature from every component but the placed
        sources per month and hour; placed (variants, cells), its temperature from the placed sources.  With a feed
        line the antenna's own sky part is formed, and the feed line's (its sky part and what it changes of the
        placed sources' part) goes with the placed sources' part (worked in full, :meth:`_placed`)."""
        sub = with_candidates(self.sc, variants, self.k)
        ants = [self.put(a) for a in variants]
        p = products(sub, [self.ref.antennas[0], *ants], self.grid, self.skies, known=self.ref)
        n = len(variants)
        rows = self._placed_rows()
        by = p.temps.by_component[:, 1:].reshape(p.temps.by_component.shape[0], n, -1)
        apart = by[rows].sum(axis=0)
        self.feed_lines = p.feed_lines is not None
        self._worked_ants = ants
        if self.feed_lines:  # the sky rows of effect are the feed line's own sky part (snrgain.model.feedline.added)
            self.reference_powers = p.feed_lines.prepared.reference_powers
            fl_sky = np.delete(p.feed_lines.effect[:, 1:].reshape(by.shape), rows, axis=0)
            sky = (np.delete(by, rows, axis=0) - fl_sky).sum(axis=0)
            apart = apart + fl_sky.sum(axis=0)
        else:
            sky = np.delete(by, rows, axis=0).sum(axis=0)
        return np.concatenate([p.gains.toward[1:].reshape(n, -1), sky], axis=1), apart

    def _placed_rows(self) -> list[int]:
        return [self.skies.names.index(s.name) for s in self.sc.noise.local if s.position_m is not None]

    def _placed(self, variants, own: dict | None = None) -> np.ndarray:
        """(variants, cells): each variant's temperature from the placed sources, worked in full (their pickup where
        the antenna stands, :func:`snrgain.model.placed.pickup`; the reference's share as the products take it), and
        with a feed line what it adds (snrgain.model.feedline: its share of the placed sources, its sky part).
        ``own``: the variants' own amplitudes from each placed source's dipole ((source name, kind) -> (variants,
        2) complex, :meth:`_own_amplitudes`) instead of their pickup (with a feed line; the reference's power the
        products')."""
        from snrgain.model import feedline, placed, snr

        n = len(variants)
        cells = self.ref.temps.total[0].size
        if not self._placed_rows() and not self.feed_lines:
            return np.zeros((n, cells))
        sub = with_candidates(self.sc, variants, self.k)
        ants = [self.ref.antennas[0], *[self.put(a) for a in variants]]
        if own is None:
            shares, powers = placed.pickup(sub, ants)
            prep = feedline.prepare(sub, ants, powers) if self.feed_lines else None
        else:  # a share is P / P_ref times the source's scale, which the ratio below drops
            shares, powers, vertical = {}, {}, {}
            for name, p_ref in self.reference_powers.items():
                p = np.zeros(n + 1)
                p[0] = p_ref
                for (src, kind), a in own.items():
                    if src == name:
                        p[1:] += np.abs(a[:, 0]) ** 2 + np.abs(a[:, 1]) ** 2
                        vertical[src, kind] = np.concatenate([[0j], a[:, 0]])
                powers[name], shares[name] = p, p / p_ref
            prep = feedline.prepare(sub, ants, powers, own=vertical)
        shares = feedline.shares_with(prep, shares)
        out = np.zeros((n, cells))
        for name, share in shares.items():
            t_ref = self.ref.temps.by_component[self.skies.names.index(name), 0].ravel()
            out += (share[1:] / share[0])[:, None] * t_ref[None, :]
        if prep is not None:  # and the feed line's sky part (its route's worked once: the products' part)
            gains = feedline.gains(prep, sub, self.ref.gains)

            def part():
                return snr.sky_temperatures(gains, self.skies, pickup=feedline.no_pickup(prep)).by_component

            out += feedline.sky_cells(prep, len(ants), self.routes_sky, part)[1:]
        return out

    def _statistic(self, quantities: np.ndarray) -> np.ndarray:
        """The statistic toward ``ti`` of variants with these quantities (gains toward the targets, then the total
        temperature per month and hour; as :func:`_median_gains`)."""
        from types import SimpleNamespace

        n, n_tgt = len(quantities), len(self.sc.targets)
        ref = self.ref
        toward = np.concatenate([ref.gains.toward[:1], quantities[:, :n_tgt]])
        total = np.concatenate([ref.temps.total[:1], quantities[:, n_tgt:].reshape(n, *ref.temps.total.shape[1:])])
        sub = with_candidates(self.sc, [self.sc.antennas[self.k]] * n, self.k)
        p = SimpleNamespace(gains=SimpleNamespace(toward=toward), temps=SimpleNamespace(total=total))
        return target_statistic(sub, snr_gains(sub, p))[1:, self.ti]

    def _probe_directions(self):
        t = self.sc.targets[self.ti]
        grid = self.grid
        pick = np.linspace(0, len(grid.azimuth_rad) - 1, 24).astype(int)
        az = np.concatenate([t.azimuth_rad, grid.azimuth_rad[pick]])
        el = np.concatenate([t.elevation_rad, grid.elevation_rad[pick]])
        return az, el, int(np.argmax(t.weight))

    def _responses(self, ant, az, el) -> np.ndarray:
        ev, eh = ant.complex_response(self.sc.freq_hz, az, el)
        return np.concatenate([np.ravel(ev), np.ravel(eh)])

    def _fit(self, variants):
        rs = np.array([_resistor(v) for v in variants])
        if not np.all(np.isfinite(rs)) or len(set(rs.tolist())) != len(rs):
            return None
        order = np.argsort(rs)
        n = len(rs)
        fit = [int(order[0]), int(order[n // 2]), int(order[-1])]
        check = [int(order[n // 4]), int(order[(3 * n) // 4])]
        if len({*fit, *check}) != 5:
            return None
        az, el, probe = self._probe_directions()
        r3 = rs[fit]
        resp = np.array([self._responses(variants[i], az, el) for i in fit])  # (3, directions)
        if not np.all(np.isfinite(resp)) or np.any(resp[:, probe] == 0):
            return None
        rho = resp / resp[:, probe : probe + 1]  # (3, d): (a_d + R b_d) / (1 + R delta)
        normal = np.cross(np.ones(3), r3)  # orthogonal to (1, 1, 1) and (R1, R2, R3)
        a = normal @ rho
        b = (normal * r3) @ rho
        keep = np.abs(b) > 1e-9 * np.max(np.abs(b))
        if not np.any(keep):
            return None
        delta = -np.vdot(b[keep], a[keep]) / np.vdot(b[keep], b[keep])
        scale = np.abs(resp[:, probe]) ** 2 / np.abs(1 + r3 * delta) ** 2  # (3,)
        worked = self._quantities([variants[i] for i in fit + check])
        if worked is None:
            return None
        formed, placed_t = worked
        # the placed sources' part checked on its own: where their pickup is not of the form (a loop's near-field
        # pickup through its segments' currents), it is worked in full for every resistor
        both = np.concatenate([formed, placed_t], axis=1)
        q3 = both[:3] / scale[:, None]
        x3 = r3 / r3[1]  # the quadratic through the three resistors, in R / R_mid for conditioning
        coeffs = np.linalg.solve(np.vander(x3, 3), q3)  # (3, quantities): q = c0 x^2 + c1 x + c2
        self.model = (r3[1], coeffs, delta, az, el, probe)
        predicted = np.array([self._formed(variants[i]) for i in check])
        tol = self.CHECK_RTOL * np.max(np.abs(both[3:]), axis=0) + 1e-300
        ok = np.abs(predicted - both[3:]) <= tol
        m = formed.shape[1]
        if not np.all(ok[:, :m]):
            self.model = None
            return None
        self.placed_formed = bool(np.all(ok[:, m:]))
        if self.feed_lines and not self.placed_formed:  # the feed lines' part as _placed works it: checked too
            five = [variants[i] for i in fit + check]
            self.amplitudes = self._amplitude_form(five, self._worked_ants, resp[:, probe], placed_t)
            if self.amplitudes is None:
                again = self._placed(five)
                if not self._close(again, placed_t):
                    self.model = None
                    return None
        values = np.empty((n, m))
        n_tgt = len(self.sc.targets)
        for j, i in enumerate(fit + check):
            values[i] = formed[j]
            values[i, n_tgt:] += placed_t[j]
        rest = [i for i in range(n) if i not in fit and i not in check]
        if rest:
            values[rest] = self._predict([variants[i] for i in rest])
        return self._statistic(values)

    def _predict(self, variants) -> np.ndarray:
        """(variants, targets + cells): gains toward the targets and total temperatures from the form (the placed
        sources' part worked in full where it is not of the form, with a feed line from the own amplitudes' form
        where that holds)."""
        n_tgt, cells = len(self.sc.targets), self.ref.temps.total[0].size
        probes = np.array([self._probe_response(v) for v in variants])
        both = np.array([self._formed(v, e) for v, e in zip(variants, probes)])
        out = both[:, : n_tgt + cells]
        if self.placed_formed:
            out[:, n_tgt:] += both[:, n_tgt + cells :]
        elif self.amplitudes is not None:
            out[:, n_tgt:] += self._placed(variants, own=self._own_amplitudes(variants, probes))
        else:
            out[:, n_tgt:] += self._placed(variants)
        return out

    def _probe_response(self, variant) -> complex:
        """A variant's (vertical) complex response toward the probe direction (what the form is normalised on)."""
        _, _, _, az, el, probe = self.model
        ev, _ = variant.complex_response(self.sc.freq_hz, az[probe : probe + 1], el[probe : probe + 1])
        return complex(np.ravel(ev)[0])

    def _formed(self, variant, probe_response: complex | None = None) -> np.ndarray:
        """A variant's gains toward the targets and its temperature from the sky but the placed sources (the form)."""
        r_mid, coeffs, delta, az, el, probe = self.model
        r = _resistor(variant)
        ev = self._probe_response(variant) if probe_response is None else probe_response
        x = r / r_mid
        scale = abs(ev) ** 2 / abs(1 + r * delta) ** 2
        return scale * (coeffs[0] * x * x + coeffs[1] * x + coeffs[2])

    def _close(self, worked: np.ndarray, held: np.ndarray) -> bool:
        """Whether ``worked`` placed sources' parts (variants, cells) are the products' ``held`` ones to CHECK_RTOL."""
        return bool(np.all(np.abs(worked - held) <= self.CHECK_RTOL * np.max(np.abs(held), axis=0) + 1e-300))

    AMPLITUDE_RTOL = 1e-9
    """How closely the five worked resistors' own amplitudes must follow their fitted form (relative to the
    largest of each source's dipole): the form is exact for a wire, so only rounding is left."""

    def _amplitude_form(self, five, worked, probe3, placed_t) -> dict | None:
        """(source name, kind) -> (A, B) (each (2,): vertical, horizontal) of the own amplitudes' form
        a(R) = e_p(R) (A + x B) / (1 + R delta), x = R / R_mid, fitted on the first three of ``five`` (the resistors
        the quadratic went through; ``probe3`` their probe responses) from the amplitudes the products worked for
        ``worked`` (the same antennas as they took them: kept by snrgain.model.placed), checked on all five, and
        the placed sources' part worked from it checked against the products' ``placed_t``; None where either
        does not hold (the part is then worked in full for every resistor)."""
        from snrgain.model import placed

        if self.reference_powers is None or len(worked) != len(five):
            return None
        r_mid, _, delta, _, _, _ = self.model
        f, ground = self.sc.freq_hz, self.sc.site.ground
        ref_m = self.ref.antennas[0].params.position or (0.0, 0.0)
        rs = np.array([_resistor(v) for v in five])
        probes = np.concatenate([probe3, [self._probe_response(v) for v in five[3:]]])
        x = rs / r_mid
        design = np.stack([np.ones(3), x[:3]], axis=1)
        norm = (1 + rs * delta) / probes  # a (1 + R delta) / e_p = A + x B
        out = {}
        for src in (s for s in self.sc.noise.local if s.position_m is not None):
            for kind, _ in placed.dipoles(src):
                a = np.array([placed.received_amplitudes(w, src, f, ref_m, ground, kind=kind) for w in worked])
                y = a * norm[:, None]  # (5, 2)
                if not np.all(np.isfinite(y)):
                    return None
                coef = np.linalg.lstsq(design, y[:3], rcond=None)[0]  # (2, 2): A, B
                fitted = (coef[0][None, :] + x[:, None] * coef[1][None, :]) / norm[:, None]
                if np.any(np.abs(fitted - a) > self.AMPLITUDE_RTOL * np.max(np.abs(a)) + 1e-300):
                    return None
                out[src.name, kind] = (coef[0], coef[1])
        if not self._close(self._placed(five, own=self._own_amplitudes(five, probes, out)), placed_t):
            return None
        return out

    def _own_amplitudes(self, variants, probes, amplitudes=None) -> dict:
        """(source name, kind) -> (variants, 2) complex: the variants' own amplitudes from the form (``probes``:
        their probe responses; ``amplitudes`` the form's (A, B), by default the one fitted)."""
        r_mid, _, delta, _, _, _ = self.model
        rs = np.array([_resistor(v) for v in variants])
        x = rs / r_mid
        scale = np.asarray(probes, dtype=complex) / (1 + rs * delta)
        forms = self.amplitudes if amplitudes is None else amplitudes
        return {key: scale[:, None] * (a[None, :] + x[:, None] * b[None, :]) for key, (a, b) in forms.items()}


def _resistor(ant) -> float:
    t = getattr(ant.params, "termination", None)
    return float(t) if isinstance(t, (int, float)) else float("nan")
