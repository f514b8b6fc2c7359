"""How sure: the spread of the SNR gain over what is not known exactly.

Three sources of spread, each optional (``[uncertainty]`` in a scenario):

- the ground: its conductivity and permittivity, each log-normal between
  the 10 % and 90 % points of a named class's documented spread
  (:data:`snrgain.physics.ground.CLASS_SPREAD_FACTOR`) or of the ranges given.  The
  antennas standing on the site's ground are rebuilt at the nodes of a
  three-point Gauss-Hermite rule in each (nine grounds; the centre node is
  the nominal ground), e.g. M. Abramowitz and I. A. Stegun, "Handbook of
  Mathematical Functions" (1964), 25.4.46;
- the noise levels: each P.372 component (man-made, atmospheric, galactic)
  spread over its decile deviations D_u, D_l as P.372 Section 8 does, a
  normal distribution in dB whose upper half has sigma_u = D_u / 1.282 and
  lower half sigma_l = D_l / 1.282 (1.282 is the standard normal's 90 %
  point); a local source by its stated ``uncertainty`` the same way.  The
  components vary independently, each by one draw for all hours, from a
  fixed-seed generator: the same file gives the same numbers;
- the hours: every listened hour counts as an equally likely sample (or,
  turned off, the hours' SNR gains are averaged in dB first).

Every draw applies to all antennas at once (the same sky), so the spread is
that of the SNR gain itself, not of its parts.  A local source read on the
reference antenna keeps that reading at every ground (its strength is
rescaled so the reference still receives what was measured).  Pattern
tables, arrays of elements and NEC wire structures keep their nominal ground.
"""

from __future__ import annotations

import numpy as np

from snrgain.antennas.base import variant
from snrgain.physics.ground import Ground, GroundSpread
from snrgain.records import record

Z90 = 1.2815515655446004
"""The standard normal's 90 % point: a decile deviation is Z90 standard deviations."""

_GH3 = ((-np.sqrt(3.0), 1.0 / 6.0), (0.0, 2.0 / 3.0), (np.sqrt(3.0), 1.0 / 6.0))
"""Three-point Gauss-Hermite rule for a standard normal variable: (node, weight)."""


@record
class SnrSpread:
    """Per antenna and target (arrays (antennas, targets)): the SNR gain's median, 10 % and 90 % points [dB], and
    the probability [-] that it reaches ``beat_by_db`` over the reference."""

    median_db: np.ndarray
    p10_db: np.ndarray
    p90_db: np.ndarray
    probability: np.ndarray
    beat_by_db: float


def ground_nodes(nominal: Ground | None, spread: GroundSpread | None) -> list[tuple[Ground | None, float]]:
    """(ground, weight) nodes over the ground's spread; the nominal ground alone when there is none."""
    if nominal is None or spread is None or spread.is_zero:
        return [(nominal, 1.0)]
    (s_lo, s_hi), (e_lo, e_hi) = spread.conductivity_s_per_m, spread.permittivity
    ls, le = np.log(np.sqrt(s_lo * s_hi)), np.log(np.sqrt(e_lo * e_hi))
    ws, we = np.log(s_hi / s_lo) / (2 * Z90), np.log(e_hi / e_lo) / (2 * Z90)
    nodes = []
    for zs, w1 in _GH3:
        for ze, w2 in _GH3:
            if zs == 0.0 and ze == 0.0:
                nodes.append((nominal, w1 * w2))
                continue
            g = Ground(
                float(np.exp(ls + zs * ws)),
                float(np.clip(np.exp(le + ze * we), 1.0, 100.0)),
                f"{nominal.name} (spread)",
                spread.source,
            )
            nodes.append((g, w1 * w2))
    return nodes


def noise_offsets_db(
    skies, local_uncertainty_db: dict[str, float], *, samples: int, seed: int, deciles: bool
) -> np.ndarray:
    """Draws of each component's level offset [dB], shape (draws, components, months, hours).

    P.372 components use their decile deviations (when ``deciles``), local sources the uncertainty given.
    One draw (all zeros) when nothing is uncertain.
    """
    nc, nm, nh = len(skies.names), len(skies.months), len(skies.utc_hours)
    du = np.zeros((nc, nm, nh))
    dl = np.zeros((nc, nm, nh))
    for i, (name, kind) in enumerate(zip(skies.names, skies.kinds)):
        if kind == "local":
            du[i] = dl[i] = local_uncertainty_db.get(name, 0.0)
        elif deciles:
            du[i] = np.nan_to_num(skies.du_db[i])
            dl[i] = np.nan_to_num(skies.dl_db[i])
    if not (np.any(du) or np.any(dl)):
        return np.zeros((1, nc, nm, nh))
    z = np.random.default_rng(seed).standard_normal((samples, nc))[:, :, None, None]
    return np.where(z > 0, z * du / Z90, z * dl / Z90)


def on_ground(sc, antennas, ground) -> list:
    """``antennas`` with those standing on the site's ground moved to ``ground`` (new antennas; a setting made
    under the sky is kept, and phasing units are remade over their moved parts)."""
    from snrgain.model.steering import repoint

    moved = []
    for ant in antennas:
        on_site = not ant.fixed_ground and getattr(ant, "ground", "none") == sc.site.ground
        if on_site and ground is not sc.site.ground:
            from snrgain.model.scatter import bare, beside

            moved_ant = variant(bare(ant), ground=ground)
            ant = beside(moved_ant, ant.scatterers) if bare(ant) is not ant else moved_ant
        moved.append(ant)
    return repoint(moved, list(antennas))


def variants(sc, nominal, grid, skies) -> list[tuple[object, float]]:
    """(products, weight) of each ground node: the nominal products at the centre node, the same stages
    (:func:`snrgain.model.pipeline.products`) over the antennas moved to each other ground; a level read on the
    reference keeps that reading at every ground (its strength moves so the moved reference still receives it)."""
    from snrgain.model import placed
    from snrgain.model.pipeline import strength_offsets_db
    from snrgain.model.products import products

    u = sc.uncertainty
    nodes = ground_nodes(sc.site.ground, sc.site.ground_spread if u.ground else None)
    moved_to = {i: on_ground(sc, nominal.antennas, g) for i, (g, _) in enumerate(nodes) if g is not sc.site.ground}
    placed.fields_ahead(sc, [(nodes[i][0], moved) for i, moved in moved_to.items()])  # every ground's field at once
    out = []
    for i, (ground, weight) in enumerate(nodes):
        if ground is sc.site.ground:
            out.append((nominal, weight))
            continue
        moved = moved_to[i]
        strength = strength_offsets_db(sc, moved, ground)
        out.append((products(sc, moved, grid, skies, ground=ground, strength_db=strength, known=nominal), weight))
    return out


DRAW_BLOCK = 1000
"""Noise draws worked at once: memory for the draws' level factors stays near DRAW_BLOCK x components x cells."""
FACTORS_HELD = 32_000_000
"""Up to this many draw x component x cell level factors (256 MB) are computed once and held; beyond, per block."""
EXACT_VALUES = 30_000
"""Up to this many weighted samples per antenna and target a quantile is taken by sorting them; above, on
0.001 dB histograms (:class:`Histogram`: the quantiles within 0.001 dB of the sorted samples', a test), which are
faster from about this many on (measured on the demo sites and the benchmark's: 36,000 samples 40 -> 33 ms, the
realistic site's 201,600 129 -> 86 ms; 28,800 42 against 46 ms)."""


def noise_db(factors_of, temps_by_component, t_chain_k: float, draws: int) -> np.ndarray:
    """An antenna's noise [dB K] under each draw, (draws, months, hours): its temperature from each component
    scaled by the draw's level factors, plus its chain's; the draws worked DRAW_BLOCK at a time."""
    out = []
    for start in range(0, draws, DRAW_BLOCK):
        f = factors_of(start, min(start + DRAW_BLOCK, draws))  # (block, comps, months, hours)
        block = np.einsum("ncmh,cmh->nmh", f, temps_by_component)
        block += t_chain_k  # 10 log10(.) worked in the block's own memory
        np.log10(block, out=block)
        block *= 10.0
        out.append(block)
    return out[0] if len(out) == 1 else np.concatenate(out)


def _less(fresh: np.ndarray, other: np.ndarray) -> np.ndarray:
    """``fresh - other`` in ``fresh``'s own memory (an array nothing else holds)."""
    return np.subtract(fresh, other, out=fresh)


def snr_spread(sc, grid, skies, nominal) -> SnrSpread:
    """The SNR gain's spread for every antenna and target (module docstring): a map of the pipeline's stages over
    the ground nodes, then of the noise draws.

    The SNR gain over the reference under a draw is the ratio of signals (one number per antenna and target)
    over the ratio of noises (per draw, month and hour, the same for every target), so the noise is worked once per
    antenna and node, and memory grows with the draws and the hours, not with the antennas or the targets.
    """
    u = sc.uncertainty
    per_node = variants(sc, nominal, grid, skies)
    local = {s.name: s.uncertainty_db for s in sc.noise.local} if u.local_sources else {}
    offsets = noise_offsets_db(skies, local, samples=u.samples, seed=u.seed, deciles=u.noise_deciles)
    draws = offsets.shape[0]

    held = 10.0 ** (offsets / 10.0) if offsets.size <= FACTORS_HELD else None  # (draws, comps, months, hours)

    def factors_of(i, j):
        return held[i:j] if held is not None else 10.0 ** (offsets[i:j] / 10.0)

    t_chain = np.array([c.temperature_k for c in sc.chains])
    masks = [times.mask(sc.times) for times in sc.target_times]
    with np.errstate(divide="ignore"):
        ref_noise = [noise_db(factors_of, p.temps.by_component[:, 0], t_chain[0], draws) for p, _ in per_node]
    n_ant, n_tgt = nominal.gains.toward.shape
    out = {k: np.zeros((n_ant, n_tgt)) for k in ("median", "p10", "p90", "prob")}
    for a in range(n_ant):
        with np.errstate(divide="ignore"):
            nodes = [
                (
                    10.0 * np.log10(p.gains.toward[a] / p.gains.toward[0]),  # (targets,)
                    _less(noise_db(factors_of, p.temps.by_component[:, a], t_chain[a], draws), ref),  # (draws, m, h)
                    weight,
                )
                for (p, weight), ref in zip(per_node, ref_noise)
            ]
        per_target = [int(m.sum()) if u.hours else 1 for m in masks]
        if len(nodes) * draws * max(per_target) <= EXACT_VALUES:
            # per distinct set of listened cells: each node's -noise, sorted once (sorted_runs)
            runs = sorted_runs([noise for _, noise, _ in nodes], masks, u.hours)
            for t_idx, mask in enumerate(masks):
                key = mask.tobytes()
                # a node's shift keeps its run sorted: the quantiles are read from the runs (run_quantiles)
                stats = run_quantiles(
                    [run + signal[t_idx] for run, (signal, _, _) in zip(runs[key], nodes)],
                    [weight / run.size for run, (_, _, weight) in zip(runs[key], nodes)],
                    (0.1, 0.5, 0.9),
                    u.beat_by_db,
                )
                out["p10"][a, t_idx], out["median"][a, t_idx], out["p90"][a, t_idx], out["prob"][a, t_idx] = stats
            continue
        hists: dict[bytes, list] = {}  # one histogram of -noise per node and distinct set of listened cells
        for t_idx, mask in enumerate(masks):
            key = mask.tobytes()
            if key not in hists:
                hists[key] = [
                    Histogram.of(-noise[:, mask] if u.hours else -noise[:, mask].mean(axis=1)) for _, noise, _ in nodes
                ]
            total = Histogram.sum(
                [h.shifted(signal[t_idx]).scaled(weight) for h, (signal, _, weight) in zip(hists[key], nodes)]
            )
            stats = (*total.quantiles((0.1, 0.5, 0.9)), total.share_at_least(u.beat_by_db))
            out["p10"][a, t_idx], out["median"][a, t_idx], out["p90"][a, t_idx], out["prob"][a, t_idx] = stats
    return SnrSpread(out["median"], out["p10"], out["p90"], out["prob"], u.beat_by_db)


MERGE_GROUPS = 3
"""A set of listened cells made of up to this many groups of cells (:func:`sorted_runs`) has its run merged from the
groups' sorted runs; of more, sorted whole."""


def _negated_sorted(fresh: np.ndarray) -> np.ndarray:
    """``np.sort(-fresh.ravel())`` worked in ``fresh``'s own memory (an array nothing else holds: a mask's pick, a
    mean), for no copies of the samples beyond it."""
    run = fresh.reshape(-1)
    np.negative(run, out=run)
    run.sort()
    return run


def _merged(runs: list[np.ndarray]) -> np.ndarray:
    """Sorted runs merged: ``np.sort(np.concatenate(runs), kind="stable")`` sorted in the concatenation's memory."""
    out = np.concatenate(runs)
    out.sort(kind="stable")
    return out


def sorted_runs(noises, masks, hours: bool) -> dict[bytes, list[np.ndarray]]:
    """Each node's -noise (``noises``: arrays (draws, months, hours)) over each distinct set of listened cells
    (``masks``, keyed by their bytes), sorted: what :func:`run_quantiles` reads, per node.  With the hours counted
    each sample is one draw at one cell; else one draw's mean over the cells.

    With the hours counted, the cells are grouped by which of the distinct sets hold them (targets listened at
    different hours: the hours all of them share, those only some do), each group's samples sorted once per node,
    and a set's run merged from its groups' runs (a stable sort of sorted pieces merges them, in linear time): the
    same values in the same order as the set's samples sorted whole, for less work than sorting every set whole
    (sorting costs more per sample the more samples there are).  A set of more than :data:`MERGE_GROUPS` groups is
    sorted whole."""
    distinct: dict[bytes, np.ndarray] = {}
    for mask in masks:
        distinct.setdefault(mask.tobytes(), mask)
    if not hours:
        return {
            key: [_negated_sorted(noise[:, mask].mean(axis=1)) for noise in noises] for key, mask in distinct.items()
        }
    held = np.array(list(distinct.values()))  # (sets, months, hours)
    groups: dict[bytes, np.ndarray] = {}  # cells by the sets holding them (cells in none left out)
    for cell in zip(*np.nonzero(held.any(axis=0))):
        groups.setdefault(held[(slice(None), *cell)].tobytes(), np.zeros(held.shape[1:], dtype=bool))[cell] = True
    patterns = {g: np.frombuffer(g, dtype=bool) for g in groups}
    out: dict[bytes, list] = {}
    pieces: dict[bytes, list] = {}  # each group's sorted runs, per node
    for k, (key, mask) in enumerate(distinct.items()):
        parts = [g for g in groups if patterns[g][k]]
        if not 1 <= len(parts) <= MERGE_GROUPS:
            out[key] = [_negated_sorted(noise[:, mask]) for noise in noises]
            continue
        for g in parts:
            if g not in pieces:
                pieces[g] = [_negated_sorted(noise[:, groups[g]]) for noise in noises]
        if len(parts) == 1:  # the set is one group: its run
            out[key] = pieces[parts[0]]
            continue
        out[key] = [_merged([pieces[g][i] for g in parts]) for i in range(len(noises))]
    return out


@record
class Size:
    """What a scenario's evaluation will cost, estimated before any work from its dimensions."""

    antennas: int
    grounds: int
    draws: int
    components: int
    cells: int
    pixels: int
    noise_work: float
    """Element operations of each antenna's noise under every draw at every ground [-]."""
    sky_work: float
    """Multiply-adds of the sky integrals of every antenna at every ground (matrix products) [-]."""
    memory_bytes: int
    """The largest arrays held at once [B]."""

    NOISE_OPS_PER_SECOND = 2e8
    SKY_OPS_PER_SECOND = 2e9
    """Rates these steps reach on one core, measured on the limits scenario of benchmarks/limits.py (a rough
    scale: the estimate is for refusing what cannot finish, not a timer)."""

    @property
    def seconds(self) -> float:
        return self.noise_work / self.NOISE_OPS_PER_SECOND + self.sky_work / self.SKY_OPS_PER_SECOND


MEMORY_BASE_BYTES = 100e6
MEMORY_PER_DRAW_CELL = 4
MEMORY_PER_CELL_PIXEL = 3.5
MEMORY_PER_ANTENNA_PIXEL = 20
"""The memory estimate's terms: a base, and the float64 values held per ground node x draw x cell (each node's noise
of the reference and of an antenna, and their sorted or binned copies), per cell x pixel (the sky's maps) and per
antenna x pixel (patterns and the quantities worked from them).  Fitted, on the safe side, to peak memory measured by
`benchmarks/limits.py --memory` (12 months x 48 hours, one target): 5000 draws at nside 64 1.15 GB, 10,000 at nside
64 1.87 GB, 20,000 at nside 32 3.04 GB, 5000 at nside 128 2.25 GB, 16 antennas more 1.21 and 2.50 GB; the terms
before them (two copies per draw and cell, three per cell and pixel, none per antenna) gave 0.82-1.84 GB, under every
one (a run of 20,000 draws at nside 128 took 4.4 GB, estimated at 2.8 GB, past the 4 GB bound without a word)."""


def size(sc) -> Size:
    """The cost of a scenario's evaluation (:class:`Size`), from its dimensions alone."""
    u = sc.uncertainty
    nodes = len(ground_nodes(sc.site.ground, sc.site.ground_spread if u.ground else None))
    deciles = u.noise_deciles or (u.local_sources and any(s.uncertainty_db > 0 for s in sc.noise.local))
    draws = u.samples if deciles else 1
    cells = len(sc.times.months) * len(sc.times.utc_hours)
    comps = 3 + len(sc.noise.local)
    pixels = 6 * sc.nside**2  # the upper hemisphere
    ants = len(sc.antennas)
    factors = draws * comps * cells
    held = factors <= FACTORS_HELD  # else the level factors are computed again per antenna and ground (8x the cost)
    memory = MEMORY_BASE_BYTES + 8 * (
        (factors if held else DRAW_BLOCK * comps * cells)
        + MEMORY_PER_DRAW_CELL * nodes * draws * cells
        + MEMORY_PER_CELL_PIXEL * cells * pixels
        + MEMORY_PER_ANTENNA_PIXEL * ants * pixels
    )
    noise = float(ants * nodes * factors * (1 if held else 8))
    sky = float(ants * nodes * 3 * cells * pixels)
    return Size(ants, nodes, draws, comps, cells, pixels, noise, sky, int(memory))


@record
class Histogram:
    """Weighted samples [dB] on bins of STEP_DB: bin k holds the weight of the values nearest ``(start + k) *
    STEP_DB``.  A constant added to every sample is a shift of whole bins, so the histograms of one antenna's
    noise serve every target (each adds its signal), in time linear in the samples once and in the bins after."""

    start: int
    weights: np.ndarray

    STEP_DB = 0.001

    @classmethod
    def of(cls, values) -> Histogram:
        """The histogram of equally weighted samples (total weight 1)."""
        v = np.clip(np.asarray(values, dtype=float).ravel(), -400.0, 400.0)
        k = np.rint(v / cls.STEP_DB).astype(np.int64)
        lo = int(k.min())
        return cls(lo, np.bincount(k - lo) / v.size)

    def shifted(self, db: float) -> Histogram:
        return Histogram(self.start + int(np.rint(db / self.STEP_DB)), self.weights)

    def scaled(self, factor: float) -> Histogram:
        return Histogram(self.start, self.weights * factor)

    @staticmethod
    def sum(hists) -> Histogram:
        lo = min(h.start for h in hists)
        hi = max(h.start + h.weights.size for h in hists)
        w = np.zeros(hi - lo)
        for h in hists:
            w[h.start - lo : h.start - lo + h.weights.size] += h.weights
        return Histogram(lo, w)

    def quantiles(self, qs) -> tuple[float, ...]:
        """The values [dB] below which the fractions ``qs`` of the weight lie (to half a bin).

        >>> v = np.random.default_rng(1).normal(0.0, 3.0, 2_000_000)
        >>> h = Histogram.of(v).quantiles((0.1, 0.5, 0.9))
        >>> bool(np.allclose(h, weighted_quantiles(v, np.ones(v.size), (0.1, 0.5, 0.9)), atol=0.001))
        True
        """
        nz = np.nonzero(self.weights)[0]  # as weighted_quantiles: linear between the bins' weight midpoints
        w = self.weights[nz]
        mid = (np.cumsum(w) - 0.5 * w) / w.sum()
        return tuple(float(np.interp(q, mid, (self.start + nz) * self.STEP_DB)) for q in qs)

    def share_at_least(self, db: float) -> float:
        """The fraction of the weight at or above ``db``."""
        k = int(np.ceil(db / self.STEP_DB - 1e-9)) - self.start
        return float(self.weights[max(k, 0) :].sum() / self.weights.sum())


def median(values, axis: int | None = None):
    """``np.median(values, axis)``, the same value by the same steps (a partition, the mean of the middle one or
    two, NaN where a NaN is among the values), without numpy.ma, which np.median imports to look for a mask (about
    15 ms of a command's start).  Integer and empty input go to np.median itself."""
    a = np.asarray(values)
    size = a.size if axis is None else a.shape[axis]
    if size == 0 or a.dtype.kind not in "fc":
        return np.median(a, axis=axis)
    kth = [size // 2 - 1, size // 2, -1] if size % 2 == 0 else [(size - 1) // 2, -1]
    part = np.partition(a, kth, axis=axis)
    if part.shape == ():
        return part.item()
    ax = 0 if axis is None else axis
    index = part.shape[ax] // 2
    middle = [slice(None)] * part.ndim
    middle[ax] = slice(index, index + 1) if part.shape[ax] % 2 else slice(index - 1, index + 1)
    out = np.mean(part[tuple(middle)], axis=ax)
    last = part.take(-1, axis=ax)  # a NaN is partitioned to the end
    nan = np.isnan(last)
    if not nan.any():
        return out
    if isinstance(out, np.generic):
        return last
    np.copyto(out, last, where=nan)
    return out


def over_hours(values_db, hours: bool) -> float:
    """The one statistic over a target's months and hours of nominal SNR gains [dB]: their median, or with the
    hours not counted as a spread (``[uncertainty] hours = false``) their mean in dB."""
    v = np.asarray(values_db, dtype=float)
    return float(median(v) if hours else np.mean(v))


def over_hours_rows(values_db, masks, hours: bool) -> np.ndarray:
    """:func:`over_hours` of every row and target at once: ``values_db`` (rows, targets, months, hours), ``masks``
    (targets, months, hours) the cells each target is listened at; (rows, targets) [dB].  Each target's cells are
    taken for every row in one array and their medians found along them at once: the same values as row by row
    (a mean is summed row by row: along an axis numpy sums in another order)."""
    v = np.asarray(values_db, dtype=float)
    out = np.empty(v.shape[:2])
    for t, mask in enumerate(masks):
        cells = v[:, t][:, mask]  # (rows, cells listened)
        out[:, t] = median(cells, axis=1) if hours else [np.mean(row) for row in cells]
    return out


PROBES = 64
"""Values tried at once in each narrowing step of :func:`run_quantiles`."""
WINDOW = 4096
"""Samples :func:`run_quantiles` sorts around each quantile once the narrowing has brought them to this few."""


def run_quantiles(runs, weights, quantiles, at_least: float) -> tuple[float, ...]:
    """:func:`weighted_quantiles` of the samples of several sorted runs (run k's samples each of weight
    ``weights[k]``, ordered as a stable sort of their concatenation orders them: ties in run order), then the share
    of the weight at or above ``at_least``, without sorting them all.

    The weight below any value is a count per run (searchsorted) times its weight, so a few rounds of
    :data:`PROBES` values narrow each quantile to a window [a, b) of at most :data:`WINDOW` samples with the weight
    below a more than one sample's weight short of the quantile's (or a the smallest sample) and the weight below b
    more than one past it (or b past the largest): the two weight midpoints the quantile falls between then both lie
    in the window, and only its samples are merged.  The interpolation is :func:`weighted_quantiles`'s; the weight
    below the window is summed by counts, not sample by sample, so the quantiles agree to rounding (a test)."""
    runs = [np.asarray(r, dtype=float) for r in runs if np.size(r)]
    w = np.asarray([wk for r, wk in zip(runs, weights) if np.size(r)], dtype=float)
    if not runs:
        raise ValueError("no samples")
    n = np.array([r.size for r in runs])
    total = float(n @ w)
    w_max = float(w.max())

    def counts(x) -> np.ndarray:  # (runs, len(x)): the samples of each run < each of the values x
        return np.array([np.searchsorted(r, x, side="left") for r in runs])

    lo = min(float(r[0]) for r in runs)
    hi = float(np.nextafter(max(float(r[-1]) for r in runs), np.inf))
    frac = np.arange(PROBES + 1) / PROBES
    targets = [q * total for q in quantiles]
    # every quantile narrowed at once: one searchsorted per run and round for the probes of all of them
    a, b = [lo] * len(targets), [hi] * len(targets)
    first = [np.zeros(len(runs), dtype=int) for _ in targets]  # counts below a and b
    last = [n.copy() for _ in targets]
    active = [i for i in range(len(targets)) if int((last[i] - first[i]).sum()) > WINDOW]
    while active:
        probes = np.array([a[i] + (b[i] - a[i]) * frac for i in active])
        probes[:, -1] = [b[i] for i in active]
        flat = counts(probes.ravel())  # (runs, active x probes)
        c = flat.reshape(len(runs), len(active), PROBES + 1)
        g = (w @ flat).reshape(len(active), PROBES + 1)
        still = []
        for row, i in enumerate(active):
            j = max(int(np.searchsorted(g[row], targets[i] - w_max, side="left")) - 1, 0)
            k = min(int(np.searchsorted(g[row], targets[i] + w_max, side="right")), PROBES)
            if probes[row, j] == a[i] and probes[row, k] == b[i]:
                continue  # no narrower window (ties, or the ends): merged as it is
            a[i], b[i], first[i], last[i] = float(probes[row, j]), float(probes[row, k]), c[:, row, j], c[:, row, k]
            if int((last[i] - first[i]).sum()) > WINDOW:
                still.append(i)
        active = still
    out = []
    for i, q in enumerate(quantiles):
        ends = [(r[f], r[m - 1]) for r, f, m in zip(runs, first[i], last[i]) if m > f]
        if ends and min(e[0] for e in ends) == max(e[1] for e in ends):
            out.append(float(ends[0][0]))  # one value throughout the window (ties: the reference over itself)
            continue
        v = np.concatenate([r[f:m] for r, f, m in zip(runs, first[i], last[i])])
        ww = np.concatenate([np.full(m - f, wk) for wk, f, m in zip(w, first[i], last[i])])
        order = np.argsort(v, kind="stable")
        v, ww = v[order], ww[order]
        cum = (float(np.array(first[i]) @ w) + np.cumsum(ww) - 0.5 * ww) / total
        out.append(float(np.interp(q, cum, v)))
    share = float((n - np.array([np.searchsorted(r, at_least, side="left") for r in runs])) @ w) / total
    return (*out, share)


def weighted_quantiles(values, weights, quantiles) -> tuple[float, ...]:
    """Quantiles of weighted samples (linear between the midpoints of the sorted samples' weights).

    >>> weighted_quantiles([1.0, 2.0, 3.0], [1.0, 1.0, 1.0], (0.5,))
    (2.0,)
    >>> weighted_quantiles([5.0], [1.0], (0.1, 0.9))
    (5.0, 5.0)
    """
    v = np.asarray(values, dtype=float)
    w = np.asarray(weights, dtype=float)
    order = np.argsort(v, kind="stable")
    v, w = v[order], w[order]
    cum = (np.cumsum(w) - 0.5 * w) / np.sum(w)
    return tuple(float(np.interp(q, cum, v)) for q in quantiles)
