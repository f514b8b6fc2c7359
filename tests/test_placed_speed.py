"""What makes placed sources and feed lines quick must not change what they give: the samples along a wire against
ten times as many, a termination search's resistors in one pass against each worked alone, the near field's kept
interpolation geometry against the field worked afresh."""

from __future__ import annotations

import numpy as np
import pytest

from snrgain.antennas import from_si
from snrgain.antennas.base import variant
from snrgain.memo import forget
from snrgain.model import placed
from snrgain.physics import feedline as phys
from snrgain.physics.quadrature import even_samples
from snrgain.physics.reciprocity import sample_steps, through_line, through_lines, wire_currents_in_field
from snrgain.sky.noise import LocalSource

F_HZ = 1.83e6


def _source(pos, height, pol="vertical", axis_deg=None):
    axis = None if axis_deg is None else float(np.radians(axis_deg))
    return LocalSource("s", 0.0, position_m=pos, height_m=height, polarisation=pol, orientation_rad=axis)


# (family, its spec, the source's place [m] relative to the feed with the wire running north, height, polarisation)
CASES = [
    ("beverage", {"length": 250.0, "height": 2.0}, (12.0, 120.0), 3.0, "vertical"),
    ("beverage", {"length": 250.0, "height": 2.0}, (4.0, 60.0), 6.0, "horizontal"),  # 4 m beside, 6 m up
    ("beverage", {"length": 150.0, "height": 1.0}, (-80.0, -150.0), 1.0, "vertical"),  # behind the feed
    ("unterminated", {"length": 120.0, "height": 3.0}, (30.0, 200.0), 12.0, "horizontal"),
    ("bog", {"length": 90.0}, (15.0, 40.0), 1.0, "vertical"),  # a slow line on the soil
]


@pytest.mark.parametrize("ground", ["moist loam", "very dry ground"])
@pytest.mark.parametrize("family, spec, pos, height, pol", CASES)
def test_samples_along_a_wire_against_ten_times_as_many(family, spec, pos, height, pol, ground):
    # sample_steps sets the step from the wavelength, the line's own and the closest approach; ten times the
    # samples move a feed current by under 0.005 dB (the rule: within 0.002 dB of a fine reference over 360 random
    # cases on land)
    wire = from_si(family, bearing=0.0, ground=ground, **spec)
    src = _source(pos, height, pol, 35.0 if pol == "horizontal" else None)

    def field(p, z):
        return placed.field_vector(src, p, z, F_HZ, wire.ground, kind=pol)

    closest = abs(pos[0]) if 0 <= pos[1] <= wire.length_m else float(np.hypot(*pos))
    x = placed.wire_grid(wire, src, F_HZ, closest)
    fine = even_samples(wire.length_m, 10 * (len(x) - 1))
    i, i10 = (wire_currents_in_field(wire, F_HZ, np.zeros((1, 2)), g, field)[0] for g in (x, fine))
    assert abs(20 * np.log10(abs(i / i10))) < 0.005
    assert abs(i - i10) / abs(i10) < 1e-3  # the phasor too (it adds to the feed line's)


def test_sample_steps_follow_the_wavelength_the_line_and_the_closest_approach():
    from snrgain.physics import reciprocity as rc

    lam = 299_792_458.0 / F_HZ
    per_lam, per_line, per_c = rc.STEPS_PER_WAVELENGTH, rc.STEPS_PER_LINE_WAVELENGTH, rc.STEPS_PER_CLOSEST
    assert sample_steps(200.0, F_HZ, 1000.0) == int(np.ceil(200.0 / (lam / per_lam)))  # free space's wavelength
    assert sample_steps(200.0, F_HZ, 5.0) == int(np.ceil(200.0 / (5.0 / per_c)))  # a source 5 m from the wire
    k = 2 * np.pi / lam
    assert sample_steps(200.0, F_HZ, 1000.0, 1.2 * k) == sample_steps(200.0, F_HZ, 1000.0)  # an overhead line
    assert sample_steps(200.0, F_HZ, 1000.0, 3.0 * k) == int(np.ceil(200.0 / (lam / 3.0 / per_line)))  # a slow one
    assert sample_steps(2.0, F_HZ, 1000.0) == rc.LEAST_STEPS


def test_graded_samples_and_their_rule():
    # a run graded toward a source 10 m from its middle: Simpson panels, fine near the source, coarse far from it;
    # the rule integrates what even samples do
    from snrgain.physics import reciprocity as rc

    x = rc.graded_samples(155.0, F_HZ, 10.0, 80.0)
    d = np.diff(x)
    np.testing.assert_allclose(d[0::2], d[1::2], rtol=1e-9)  # pairs of equal steps
    assert x[0] == 0.0 and x[-1] == 155.0
    near = np.abs(x[:-1] - 80.0) < 10.0
    assert d[near].max() <= 10.0 / rc.STEPS_PER_CLOSEST * np.hypot(1, 1) + 1e-9
    assert len(x) < sample_steps(155.0, F_HZ, 10.0)  # fewer than even steps fine everywhere
    w = rc.pairs_rule(x)
    assert w @ np.cos(x / 30.0) == pytest.approx(30.0 * np.sin(155.0 / 30.0), rel=1e-5)  # Simpson: 1.2e-6
    xe = even_samples(100.0, 50)
    from snrgain.physics.quadrature import samples_rule

    np.testing.assert_allclose(rc.pairs_rule(xe), samples_rule(xe), rtol=1e-12)
    # kept by the samples: the same weights as worked afresh, read-only, for a copy of the samples too
    rc._RULES.clear()
    fresh = rc.pairs_rule(x)
    again = rc.pairs_rule(np.array(x))
    assert again is fresh and not fresh.flags.writeable
    np.testing.assert_array_equal(fresh, w)


def test_a_termination_searchs_resistors_in_one_pass_equal_each_alone():
    # through_lines (two moments of the EMFs, then each wire's loads) gives through_line's currents; an open far
    # end and other feed rods too
    bev = from_si("beverage", length=220.0, height=2.0, bearing=0.4, ground="moist loam", termination=400.0)
    wires = [variant(bev, termination=r) for r in (50.0, 300.0, 520.0, 1500.0)]
    wires.append(variant(bev, termination=520.0, feed_ground=60.0))
    src = _source((30.0, 90.0), 2.0)
    u = np.array([np.sin(0.4), np.cos(0.4)])
    x = placed.wire_grid(bev, src, F_HZ, 20.0)
    emf, lead = placed._source_emfs(bev, src, F_HZ, np.zeros((1, 2)), bev.ground, x, u, "vertical")
    want = np.array([through_line(w, F_HZ, x, emf, lead)[0] for w in wires])
    np.testing.assert_allclose(through_lines(wires, F_HZ, x, emf, lead), want, rtol=1e-12)
    open_end = [from_si("unterminated", length=220.0, height=h, bearing=0.4, ground="moist loam") for h in (2.0,)]
    e2, l2 = placed._source_emfs(open_end[0], src, F_HZ, np.zeros((1, 2)), bev.ground, x, u, "vertical")
    np.testing.assert_allclose(
        through_lines(open_end, F_HZ, x, e2, l2), through_line(open_end[0], F_HZ, x, e2, l2), rtol=1e-12
    )


@pytest.mark.parametrize("family", ["beverage", "unterminated"])
def test_a_wires_sample_grids_through_the_line_at_once_equal_each_alone(family):
    # through_line_grids (the line and loads asked for once, the grids' transfer functions worked together, some
    # already kept) gives through_line's currents on each grid; an open far end too
    from snrgain.physics.reciprocity import through_line_grids

    wire = from_si(family, length=220.0, height=2.0, bearing=0.4, ground="moist loam")
    src = _source((30.0, 90.0), 2.0)
    u = np.array([np.sin(0.4), np.cos(0.4)])
    parts = []
    for n, closest in ((1, 20.0), (3, 5.0), (2, 60.0)):
        x = placed.wire_grid(wire, src, F_HZ, closest)
        feeds = np.column_stack([np.linspace(-20.0, 20.0, n), np.zeros(n)])
        emf, lead = placed._source_emfs(wire, src, F_HZ, feeds, wire.ground, x, u, "vertical")
        parts.append((x, emf, lead))
    want = [through_line(wire, F_HZ, x, emf, lead) for x, emf, lead in parts]
    forget()
    through_line(wire, F_HZ, *parts[1])  # one grid's transfer function kept, the others not
    got = through_line_grids(wire, F_HZ, parts)
    assert len(got) == len(want)
    for g, w in zip(got, want):
        np.testing.assert_allclose(g, w, rtol=1e-13, atol=0)


@pytest.mark.parametrize("pol", ["vertical", "both"])
def test_pickup_of_a_termination_searchs_resistors_equals_each_alone(pol):
    # pickup hears the resistors tried on one wire at one place together (placed._load_variant_powers): each power
    # and kept amplitude is what received_power and received_amplitudes give the wire alone
    bev = from_si(
        "beverage", length=200.0, height=2.0, bearing=0.8, ground="moist loam", termination=450.0, position=(40.0, 10.0)
    )
    ref = from_si("vertical", height=6.0, ground="moist loam", position=(0.0, 0.0))
    ants = [ref, *(variant(bev, termination=r) for r in (120.0, 380.0, 900.0))]
    src = _source((90.0, 70.0), 3.0, pol, 20.0 if pol == "both" else None)
    forget()
    p = np.full(len(ants), np.nan)
    placed._load_variant_powers(ants, src, F_HZ, (0.0, 0.0), bev.ground, p)
    assert np.isnan(p[0]) and np.all(np.isfinite(p[1:]))
    kept = [
        placed.received_amplitudes(a, src, F_HZ, (0.0, 0.0), bev.ground, kind=kind)
        for a in ants[1:]
        for kind, _ in placed.dipoles(src)
    ]
    forget()
    alone = [placed.received_power(a, src, F_HZ, (0.0, 0.0), bev.ground) for a in ants[1:]]
    np.testing.assert_allclose(p[1:], alone, rtol=1e-12)
    forget()
    fresh = [
        placed.received_amplitudes(a, src, F_HZ, (0.0, 0.0), bev.ground, kind=kind)
        for a in ants[1:]
        for kind, _ in placed.dipoles(src)
    ]
    np.testing.assert_allclose(np.array(kept), np.array(fresh), rtol=1e-12)


def test_a_wires_kept_place_before_a_source_gives_the_same_pickup():
    # placed._PLACES keeps a wire's feeds, direction and samples before a source (the same at every ground and for
    # every resistor): a pickup with them kept and the EMFs worked anew equals one with nothing kept, to the bit
    bev = from_si(
        "beverage", length=200.0, height=2.0, bearing=0.8, ground="moist loam", termination=450.0, position=(40.0, 10.0)
    )
    other = from_si("beverage", length=150.0, height=2.0, bearing=2.0, ground="moist loam", position=(-60.0, 30.0))
    ref = from_si("vertical", height=6.0, ground="moist loam", position=(0.0, 0.0))
    src = _source((90.0, 70.0), 3.0)
    ants = [ref, bev, other]

    def powers():
        p = np.full(len(ants), np.nan)
        placed._prefetch_wire_emfs(ants, src, F_HZ, (0.0, 0.0), bev.ground, "vertical", p)
        return [placed.received_power(a, src, F_HZ, (0.0, 0.0), bev.ground) for a in ants]

    forget()
    cold = powers()
    assert len(placed._PLACES) == 2
    placed._EMFS.clear()
    placed._AMPLITUDES.clear()
    np.testing.assert_array_equal(powers(), cold)


def test_a_sources_key_is_kept_only_for_a_frozen_source():
    from types import SimpleNamespace

    src = _source((90.0, 70.0), 3.0)
    assert placed._source_key(src, "vertical") is placed._source_key(src, "vertical")
    assert placed._source_key(src, "vertical") == placed._source_key_worked(src, "vertical")
    loose = SimpleNamespace(position_m=(1.0, 2.0), height_m=3.0, polarisation="vertical", orientation_rad=None)
    first = placed._source_key(loose, "vertical")
    loose.height_m = 5.0  # a source that may change is read afresh
    assert placed._source_key(loose, "vertical") != first


def test_feed_lines_currents_in_one_pass_equal_each_alone():
    # feedline._route_currents (each route's kept current scaled to each coupling) gives _route_current's
    from snrgain.model import feedline

    src = _source((10.0, -60.0), 1.0)
    g = from_si("beverage", length=200.0, height=2.0, bearing=0.0, ground="moist loam").ground
    a = phys.FeedLine((0.0, 0.0), (0.0, -120.0), 1.0, 0.0027, 0.0035, 25.0)
    b = phys.FeedLine((0.0, 0.0), (40.0, -90.0), None, 0.0027, 0.0035, 25.0)
    pairs = [
        (fl, phys.coupling(fl, F_HZ, g, rod_ohm=rod, loop_ohm=loop, load_ohm=400.0))
        for fl in (a, b, a.with_choke(2000.0))
        for rod, loop in ((20.0, 900 - 200j), (60.0, 700 + 50j))
    ]
    forget()
    got = feedline._route_currents(pairs, src, "vertical", F_HZ, g)
    forget()
    want = [feedline._route_current(fl, c, src, "vertical", F_HZ, g) for fl, c in pairs]
    np.testing.assert_allclose(got, want, rtol=1e-12)
    amps = feedline.port_amplitudes(F_HZ, got, [c.load_ohm for _, c in pairs])
    # port_response's arithmetic at the horizon, to the bit
    np.testing.assert_array_equal(amps, [feedline.port_amplitude(F_HZ, i, c.load_ohm) for i, (_, c) in zip(got, pairs)])


def test_feed_lines_runs_worked_together_equal_each_alone():
    # phys.emf_currents (every run's samples in one pass) gives emf_current's current of each run: raised, buried,
    # choked, on other samples
    from snrgain.model import feedline

    g = from_si("beverage", length=200.0, height=2.0, bearing=0.0, ground="moist loam").ground
    runs = [
        phys.FeedLine((0.0, 0.0), (0.0, -120.0), 1.0, 0.0027, 0.0035, 25.0),
        phys.FeedLine((5.0, 3.0), (40.0, -90.0), None, 0.0027, 0.0035, 40.0),
        phys.FeedLine((-20.0, 10.0), (60.0, 60.0), 2.0, 0.0027, 0.0035, 10.0, choke_ohm=900.0),
    ]
    for src in (_source((10.0, -60.0), 1.0), _source((30.0, 20.0), 4.0, "horizontal", 30.0)):
        for kind, _ in placed.dipoles(src):
            cs = [phys.coupling(fl, F_HZ, g, rod_ohm=30.0, loop_ohm=800 - 90j, load_ohm=400.0) for fl in runs]
            emfs = [feedline._route_emf(fl, src, kind, F_HZ, g) for fl in runs]
            want = [phys.emf_current(fl, c, *e) for fl, c, e in zip(runs, cs, emfs)]
            np.testing.assert_allclose(phys.emf_currents(runs, cs, emfs), want, rtol=1e-12)
            np.testing.assert_array_equal(phys.emf_currents(runs[:1], cs[:1], emfs[:1]), want[:1])


def test_runs_points_and_emfs_worked_together_are_each_runs_to_the_bit():
    runs = [
        phys.FeedLine((0.0, 0.0), (0.0, -120.0), 1.0, 0.0027, 0.0035, 25.0),
        phys.FeedLine((5.0, 3.0), (40.0, -90.0), None, 0.0027, 0.0035, 40.0),
        phys.FeedLine((-20.0, 10.0), (60.0, 60.0), 2.0, 0.0027, 0.0035, 10.0),
    ]
    xs = [phys.route_samples(fl, F_HZ, 15.0, None, 0.3 * fl.length_m) for fl in runs]
    q, z = phys.runs_points(runs, xs)
    alone = [phys.route_points(fl, x) for fl, x in zip(runs, xs)]
    np.testing.assert_array_equal(q, np.concatenate([a[0] for a in alone]))
    np.testing.assert_array_equal(z, np.concatenate([a[1] for a in alone]))
    rng = np.random.default_rng(3)
    e = rng.normal(size=(len(q), 3)) + 1j * rng.normal(size=(len(q), 3))
    parts = np.split(e, np.cumsum([len(a[0]) for a in alone])[:-1])
    for got, fl, x, part in zip(phys.runs_emf_from(runs, xs, e), runs, xs, parts):
        for a, b in zip(got, phys.route_emf_from(fl, x, part)):
            np.testing.assert_array_equal(a, b)


def test_the_near_fields_kept_geometry_gives_the_field_worked_afresh():
    # noisemodels.halfspace keeps the interpolation's geometry by the points asked; another ground at the same
    # points reads its own table through it: the same field as with nothing kept, for points at a few heights and
    # for scattered ones
    from noisemodels import halfspace, nearground

    rng = np.random.default_rng(4)
    run = np.column_stack([np.linspace(-50.0, 300.0, 400), np.full(400, 20.0), np.full(400, 2.0)])
    scattered = np.column_stack([rng.uniform(-200, 200, (300, 2)), rng.uniform(0.0, 9.0, 300)])
    for rel in (run, scattered):
        for kind in ("vertical", "horizontal"):
            for eps, sig in ((13.0, 0.005), (5.0, 0.001), (80.0, 5.0)):
                kw = {"source_height_m": 3.0, "kind": kind, "axis_rad": 0.3, "permittivity": eps}
                kept = nearground.field(F_HZ, rel, conductivity_s_per_m=sig, **kw)
                halfspace.forget_geometry()
                fresh = nearground.field(F_HZ, rel, conductivity_s_per_m=sig, **kw)
                np.testing.assert_array_equal(kept, fresh)


def test_feed_lines_sky_part_by_route_equals_each_feed_line_integrated():
    # the integrator takes each distinct route's sky gain into a canonical end once (feedline.sky_rows); each feed
    # line's part is its route's times |thevenin_scale|^2: the same as integrating every feed line's own gain
    import snrgain
    from snrgain.model import feedline, snr
    from snrgain.model.pipeline import build_sky, resolve_sources, sky_grid

    text = """
[site]
name = "Quince Flat (invented)"
latitude = 44.2
longitude = -71.3
ground = "moist loam"
lot = [[-400, -400], [400, -400], [400, 400], [-400, 400]]
[band]
frequency = "1.83 MHz"
[time]
months = [1]
utc_hours = [2, 6]
[[target]]
name = "Europe"
bearing = 45
elevation = [10, 25]
[reference]
family = "vertical"
height = "20 m"
position = [0, 0]
[[noise.local]]
name = "supply"
position = [10, 70]
height = "1 m"
level = "S9"
"""
    for i, r in enumerate((150, 400, 900)):
        text += f'[[candidate]]\nname = "b{i}"\nfamily = "beverage"\nlength = "200 m"\nheight = "2 m"\n'
        text += f'bearing = 45\ntermination = "{r} ohm"\nposition = [0, 150]\n'
        text += 'feed_line = { to = [0, -5], height = "1 m" }\n'
    sc = resolve_sources(snrgain.load(text))
    grid = sky_grid(sc)
    skies = build_sky(sc, grid)
    ants = list(sc.antennas)
    shares, powers = placed.pickup(sc, ants)
    prep = feedline.prepare(sc, ants, powers)
    assert len(feedline.sky_rows(prep)[0]) == 1  # three feed lines, one route
    ref_gains = snr.antenna_gains(ants[:1], sc.freq_hz, grid, sc.targets)
    part = snr.sky_temperatures(feedline.gains(prep, sc, ref_gains), skies, pickup=feedline.no_pickup(prep))
    temps = snr.sky_temperatures(ref_gains, skies)
    temps = snr.Temperatures(np.repeat(temps.by_component, len(ants), axis=1), None)
    _, fl_t = feedline.added(prep, temps, part, skies)
    caches = [ref_gains.caches[0]]
    for k in sorted(prep.lines):
        fl, c = prep.lines[k]
        caches.append(snr.GainCache(lambda az, el, fl=fl, c=c: phys.sky_gain(fl, c, sc.freq_hz, az, el, prep.ground)))
    each = snr.sky_temperatures(
        snr.Gains(caches, np.zeros((len(caches), 0)), np.zeros(len(caches))),
        skies,
        pickup={n: np.zeros(len(caches)) for n in prep.powers},
    )
    sky_rows_ = [i for i, name in enumerate(skies.names) if name not in prep.powers]
    got = fl_t.by_component[sky_rows_][:, sorted(prep.lines)]
    want = each.by_component[sky_rows_][:, 1:]
    np.testing.assert_allclose(got, want, rtol=1e-9)
    assert np.any(want > 0)  # the sky components the feed lines hear (a few are zero at these hours)


GROUNDS = ("very dry ground", "moist loam", "salt marsh")


@pytest.mark.parametrize("family", ["beverage", "unterminated"])
def test_a_wires_line_over_several_grounds_at_once_equals_each_grounds(family):
    # reciprocity.through_line_grounds (a spread's grounds in one array expression, each wire its own line and
    # loads) gives through_line's current on each ground, to rounding
    from snrgain.physics.reciprocity import through_line_grounds

    wires = [from_si(family, length=200.0, height=2.0, bearing=0.4, ground=g) for g in GROUNDS]
    x = even_samples(200.0, 90)
    rng = np.random.default_rng(3)
    emf = rng.normal(size=(3, len(x))) + 1j * rng.normal(size=(3, len(x)))
    lead = rng.normal(size=(3, 2)) + 1j * rng.normal(size=(3, 2))
    want = [complex(through_line(w, F_HZ, x, e[None], d)[0]) for w, e, d in zip(wires, emf, lead)]
    np.testing.assert_allclose(through_line_grounds(wires, F_HZ, x, emf, lead), want, rtol=1e-13)
    want = [complex(through_line(w, F_HZ, x, e[None], None)[0]) for w, e in zip(wires, emf)]
    np.testing.assert_allclose(through_line_grounds(wires, F_HZ, x, emf, None), want, rtol=1e-13)
    # open on some grounds only (a terminated wire beside an unterminated one): one by one, the same currents
    mixed = [wires[0], from_si("beverage", length=200.0, height=2.0, bearing=0.4, ground=GROUNDS[1]), wires[2]]
    for lead_ in (lead, None):
        want = [
            complex(through_line(w, F_HZ, x, e[None], None if lead_ is None else d)[0])
            for w, e, d in zip(mixed, emf, lead)
        ]
        np.testing.assert_allclose(through_line_grounds(mixed, F_HZ, x, emf, lead_), want, rtol=1e-13)


@pytest.mark.parametrize("height", [1.0, None])
def test_a_runs_emfs_and_current_over_several_grounds_at_once_equal_each_grounds(height):
    # physics.feedline.run_emf_grounds and emf_currents_grounds (a spread's grounds at once, each its own line and
    # coupling) give route_emf_from's EMFs to the bit and emf_current's current to rounding; raised and buried
    from snrgain.physics.reciprocity import graded_samples

    grounds = [from_si("beverage", length=200.0, height=2.0, bearing=0.0, ground=g).ground for g in GROUNDS]
    fl = phys.FeedLine((5.0, 3.0), (40.0, -90.0), height, 0.0027, 0.0035, 40.0, choke_ohm=900.0)
    x = graded_samples(fl.length_m, F_HZ, 12.0, 30.0)
    n = len(phys.runs_points([fl], [x])[1])
    rng = np.random.default_rng(4)
    e = rng.normal(size=(3, n, 3)) + 1j * rng.normal(size=(3, n, 3))
    emf, lead = phys.run_emf_grounds(fl, x, e)
    cs = [phys.coupling(fl, F_HZ, g, rod_ohm=30.0, loop_ohm=800 - 90j, load_ohm=400.0) for g in grounds]
    want = []
    for g, c in enumerate(cs):
        x_g, emf_g, lead_g = phys.route_emf_from(fl, x, e[g])
        np.testing.assert_array_equal(emf[g], emf_g)
        np.testing.assert_array_equal(lead[g], lead_g)
        want.append(phys.emf_current(fl, c, x_g, emf_g, lead_g))
    np.testing.assert_allclose(phys.emf_currents_grounds(fl, cs, x, emf, lead), want, rtol=1e-12)


def test_amplitudes_of_several_antennas_are_each_antennas():
    # placed.received_amplitudes_of (the key's other parts worked once) holds and reads what received_amplitudes
    # does, one antenna at a time, to the bit
    src = _source((60.0, 40.0), 3.0)
    ants = [from_si("beverage", length=200.0, height=2.0, bearing=b, ground="moist loam") for b in (0.2, 1.4)]
    ants += [from_si("vertical", height=6.0, ground="moist loam", position=(5.0, 5.0))]
    ground = ants[0].ground
    forget()
    got = placed.received_amplitudes_of(ants, src, F_HZ, (0.0, 0.0), ground, kind="vertical")
    forget()
    want = [placed.received_amplitudes(a, src, F_HZ, (0.0, 0.0), ground, kind="vertical") for a in ants]
    assert got == want
    assert placed.received_amplitudes_of(ants, src, F_HZ, (0.0, 0.0), ground, kind="vertical") == want  # held


def test_a_compact_antennas_amplitudes_from_several_sources_at_once_equal_each_sources():
    # placed._through_currents_sources (one response call toward every source, the plane waves from every direction
    # at once) gives _through_currents' amplitude from each source's dipole, to rounding
    ant = from_si("vertical", height=18.0, ground="moist loam", position=(3.0, -4.0))
    at = np.array([3.0, -4.0])
    srcs = [_source((60.0, 40.0), 3.0), _source((-20.0, 90.0), 6.0, "horizontal", 30.0), _source((5.0, -70.0), 1.0)]
    pairs = [(s, kind) for s in srcs for kind, _ in placed.dipoles(s)]
    segments = placed.transmit_segments(ant, F_HZ)
    got = placed._through_currents_sources(ant, pairs, F_HZ, at, ant.ground, segments)
    want = [placed._through_currents(ant, s, F_HZ, at, ant.ground, kind, segments) for s, kind in pairs]
    np.testing.assert_allclose(got, want, rtol=1e-12)
