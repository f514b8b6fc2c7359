"""The receiving chain: Friis cascade, P.372 system noise factor, cables, preamplifier advice, S-meter."""

import numpy as np
import pytest

import snrgain
from snrgain.physics import chain
from snrgain.units import parse_power_dbm, s_units


def test_friis_three_stages_by_hand():
    # Friis (Proc. IRE 1944): F = F1 + (F2-1)/G1 + (F3-1)/(G1 G2).  A preamplifier of 20 dB gain and 2 dB NF,
    # a 3 dB cable, a 10 dB NF receiver: F = 1.585 + (1.995-1)/100 + (10-1)/(100/1.995) = 1.775 (2.49 dB),
    # worked out by hand from the formula.
    st = [
        chain.amplifier("pre", gain_db=20, noise_figure_db=2),
        chain.passive("cable", 3.0),
        chain.amplifier("rx", gain_db=0, noise_figure_db=10),
    ]
    f, g = chain.friis(st)
    expect = 10**0.2 + (10**0.3 - 1) / 100 + (10 - 1) / (100 / 10**0.3)
    assert f == pytest.approx(expect, rel=1e-12)
    assert 10 * np.log10(f) == pytest.approx(2.49, abs=0.005)
    assert 10 * np.log10(g) == pytest.approx(17.0, abs=1e-9)


def test_loss_ahead_of_receiver_adds_to_noise_figure():
    # Textbook result: a matched attenuator of loss L at T0 ahead of a receiver of noise figure F gives L + F dB.
    f, _ = chain.friis([chain.passive("cable", 4.0), chain.amplifier("rx", gain_db=0, noise_figure_db=12)])
    assert 10 * np.log10(f) == pytest.approx(16.0, abs=1e-9)


def test_p372_system_noise_factor_limits_and_friis():
    # ITU-R P.372 Section 2: f = fa + (lc-1) + lc(lt-1) + lc lt (fr-1).
    fr = 10.0
    assert chain.system_noise_factor(1e4, fr=fr) == pytest.approx(1e4 + fr - 1)  # lossless antenna and line
    assert chain.system_noise_factor(1e8, lc=2, lt=3, fr=fr) / 1e8 == pytest.approx(
        1.0, rel=1e-6
    )  # external-noise limited
    assert chain.system_noise_factor(0.0, lc=1, lt=1, fr=1) == 0.0
    # It equals fa + (F_chain - 1) with F_chain the Friis cascade of the same losses and receiver.
    lc, lt, fa = 1.6, 2.5, 300.0
    f_chain, _ = chain.friis([chain.Stage("c", 1 / lc, lc), chain.Stage("t", 1 / lt, lt), chain.Stage("r", 1, fr)])
    assert chain.system_noise_factor(fa, lc=lc, lt=lt, fr=fr) == pytest.approx(fa + f_chain - 1, rel=1e-12)


def test_s_meter_conversions():
    # IARU Region 1 Technical Recommendation R.1: S9 = -73 dBm below 30 MHz, 6 dB per S-unit.
    assert parse_power_dbm("S9") == -73.0
    assert parse_power_dbm("S1") == -121.0
    assert parse_power_dbm("S9+20") == -53.0
    assert s_units(-73.0) == "S9" and s_units(-79.0) == "S8" and s_units(-61.0) == "S9+12"


def test_cable_table_is_consistent_with_the_textbook_coax_loss():
    # A consistency check, not an independent one: the generic cables' losses (snrgain.physics.chain.CABLES) are the
    # project's assumption (typical values recalled, not verified against any datasheet).  The two-point fit
    # k1 sqrt(f) + k2 f passes through both of its points and between them lies above the sqrt(f) line through
    # the 1 MHz point (the dielectric term is positive).
    c = chain.cable_by_name("RG-213")
    assert c.loss_db_per_100ft(np.array([1e6, 10e6])) == pytest.approx([0.16, 0.6], abs=1e-9)
    assert c.k1 > 0 and c.k2 > 0
    assert c.loss_db_per_100ft(4e6) > 0.16 * np.sqrt(4.0)
    assert chain.cable_by_name("RG-6").impedance_ohm == 75
    # The textbook coaxial-line forms (Z0 = (60 / sqrt(eps_r)) ln(D/d); conductor loss R' / (2 Z0) with
    # R' = R_s (1/(pi d) + k_s/(pi D)), R_s = sqrt(pi f mu0 / sigma); e.g. Ramo, Whinnery and Van Duzer, Section
    # 5.11) for solid-PE cable of RG-213's outline (2.26 mm inner, 7.24 mm dielectric): Z0 within 10 % of the type's
    # nominal 50 ohm (46.6 ohm: the stranded inner conductor is thinner than its outline), and a loss within 40 %
    # of the assumed table at 10 MHz.
    loss_db_per_m, z0 = chain.coax_loss_from_geometry(
        10e6, inner_diameter_m=2.26e-3, dielectric_diameter_m=7.24e-3, permittivity=2.25
    )
    assert z0 == pytest.approx(50.0, rel=0.1)
    assert loss_db_per_m * 30.48 == pytest.approx(0.6, rel=0.4)
    with pytest.raises(ValueError, match="'RG-58'"):
        chain.cable_by_name("RG-999")


def test_preamp_gain_for_margin():
    rx = chain.amplifier("rx", gain_db=0, noise_figure_db=15)
    base = chain.Chain((chain.passive("cable", 3.0), rx))
    probe = chain.with_suggested_preamp(base)
    t_a = 290 * 10 ** (25 / 10)  # Fa 25 dB delivered by a weak antenna
    g = probe.preamp_gain_for_margin(t_a, 10.0)
    assert g is not None and g > 0
    margin = 10 * np.log10(t_a / (290 * probe.with_preamp_gain(g).noise_factor))
    assert margin == pytest.approx(10.0, abs=1e-6)
    # Unreachable: the preamplifier's own noise (3 dB NF after 3 dB of cable) caps the margin below 20 dB here.
    assert probe.preamp_gain_for_margin(290 * 10**2.4, 20.0) is None


def test_chain_in_a_scenario(minimal_text):
    weak = minimal_text.replace(
        '[[candidate]]\nname = "iso"\nfamily = "isotropic"',
        # the trade's matched resistor: this test is the chain's (the resistor of best SNR gain here lies at the
        # top of the range searched, 5000 ohm, and its louder output moves where a preamplifier would go)
        '[[candidate]]\nname = "bog"\nfamily = "bog"\nlength = "60 m"\nauto_for = "z0"\n',
    )
    base = weak.replace("[time]", '[noise.man_made]\nenvironment = "quiet rural"\n\n[time]')
    lossy = base + '\n[chain]\nfeedline = { cable = "RG-58", length = "600 ft" }\n[receiver]\nnoise_figure = "20 dB"\n'
    r = snrgain.evaluate(lossy)
    bog = r.candidates[0]
    assert bog.receiver_limited
    # 600 ft of RG-58 ahead of the receiver: a preamplifier there cannot help enough; at the antenna it can.
    assert np.all(bog.preamp_gain_needed_db > 0) and bog.preamp_position == "antenna"
    assert any("at the antenna" in w for w in r.warnings)
    with_pre = lossy.replace(
        "[receiver]", '[chain.preamp]\ngain = "20 dB"\nnoise_figure = "3 dB"\nposition = "antenna"\n[receiver]'
    )
    r2 = snrgain.evaluate(with_pre)
    assert r2.candidates[0].snr_gain_nominal_db[0] > bog.snr_gain_nominal_db[0]  # the scenario has one target


def test_an_antenna_can_have_its_own_chain(minimal_text):
    two = minimal_text + (
        '\n[[candidate]]\nname = "iso far"\nfamily = "isotropic"\n'
        'chain = { feedline = { cable = "RG-58", length = "1500 ft" } }\n'
    )
    r = snrgain.evaluate(two)
    near = next(c for c in r.candidates if c.name == "iso")
    far = next(c for c in r.candidates if c.name == "iso far")
    # The far one loses about the cable's loss at the receiver and some SNR to the chain; the pattern is the same.
    assert far.chain["gain_db"] < near.chain["gain_db"] - 4
    assert np.all(far.noise_dbm < near.noise_dbm - 4)
    assert far.snr_gain_nominal_db[0] <= near.snr_gain_nominal_db[0]
    np.testing.assert_allclose(far.rdf_db, near.rdf_db)
    assert r.reference.chain["gain_db"] == pytest.approx(0.0)


def test_antenna_chain_errors_name_the_antenna(minimal_text):
    from snrgain.scenario import ScenarioError, load

    bad = (
        minimal_text
        + '\n[[candidate]]\nname = "x"\nfamily = "isotropic"\n'
        + 'chain = { feedline = { cable = "RG-1" , length = "10 m"} }\n'
    )
    with pytest.raises(ScenarioError, match=r"candidate 2 \(\"x\"\)\.chain\.feedline"):
        load(bad)


def _gain_written_out(ch, t_a: float, margin_db: float):
    """Chain.preamp_gain_for_margin's steps written out for each call (as before its chain-only terms were kept)."""
    need_f = t_a / (290.0 * 10 ** (margin_db / 10))
    if ch.with_preamp_gain(0.0).noise_factor <= need_f:
        return 0.0
    before, after = list(ch.stages[: ch.preamp_index]), list(ch.stages[ch.preamp_index + 1 :])
    f_b, g_b = chain.friis(before) if before else (1.0, 1.0)
    f_a = chain.friis(after)[0] if after else 1.0
    f_p = ch.stages[ch.preamp_index].noise_factor
    floor = (f_b if before else f_p) + ((f_p - 1) / g_b if before else 0.0)
    denom = g_b * (need_f - floor)
    if denom <= 0:
        return None
    g_p = (f_a - 1) / denom
    return float(max(10 * np.log10(g_p), 0.0)) if g_p > 0 else 0.0


def test_noise_budget_preamp_advice_equals_the_steps_per_cell():
    """noise_budget works a chain's terms once for every month and hour: the same gains and positions to the bit as
    each cell's own steps."""
    assert chain.T0_K == 290.0
    rx = chain.amplifier("rx", gain_db=0, noise_figure_db=15)
    own = chain.amplifier("pre", gain_db=10, noise_figure_db=4)
    chains = [
        chain.Chain((chain.passive("transformer", 0.5), chain.passive("cable", 3.0), rx)),
        chain.Chain((chain.passive("transformer", 0.5), chain.passive("cable", 12.0), rx)),  # a lossy feed line
        chain.Chain((chain.passive("transformer", 0.5), own, chain.passive("cable", 3.0), rx), preamp_index=1),
        chain.Chain((own, rx), preamp_index=0),
    ]
    t_a = 290 * 10 ** (np.linspace(-5.0, 45.0, 24) / 10).reshape(4, 6)
    for ch in chains:
        for margin in (3.0, 10.0, 25.0):
            budget = chain.noise_budget(ch, t_a, bandwidth_hz=500.0, margin_target_db=margin)
            cells, where = [], set()
            for t in t_a.ravel():
                tries = [(ch, "as placed")] if ch.preamp_index is not None else []
                tries = tries or [(chain.with_suggested_preamp(ch, p), p) for p in ("receiver", "antenna")]
                g = next(((g, p) for c, p in tries if (g := _gain_written_out(c, float(t), margin)) is not None), None)
                cells.append(np.nan if g is None else g[0])
                where |= {g[1]} if g else set()
            assert np.array_equal(budget.preamp_gain_needed_db.ravel(), np.array(cells), equal_nan=True)
            assert budget.preamp_position == (sorted(where)[-1] if where else None)
            one = chain.preamp_advice(ch, float(t_a.ravel()[8]), margin)[0]
            assert one == cells[8] or (np.isnan(one) and np.isnan(cells[8]))


def test_a_best_effort_preamp_comes_within_half_a_db_of_unlimited_gain():
    """Where no gain brings the margin to the target, the preamplifier suggested (chain.best_effort_preamp) is the
    gain at which the chain's noise factor lies 0.5 dB above its limit at unlimited gain, by Friis's formula (H. T.
    Friis, Proc. IRE 32, 1944) worked here by hand on the chain with that gain and with 100 dB; where a lossy feed
    line stands ahead of the receiver it goes at the antenna, whose limit is more than 0.5 dB lower."""
    rx = chain.amplifier("rx", gain_db=0, noise_figure_db=18)
    for cable_db, where in ((0.2, "receiver"), (6.0, "antenna")):
        ch = chain.Chain((chain.passive("transformer", 0.5), chain.passive("cable", cable_db), rx))
        t_a = np.array([[40.0, 80.0], [150.0, 300.0]])  # a quiet small loop's few tens to hundreds of kelvin
        b = chain.best_effort_preamp(ch, t_a)
        assert b.position == where
        fitted = chain.with_suggested_preamp(ch, where)
        limit = fitted.with_preamp_gain(100.0).noise_factor
        assert 10 * np.log10(fitted.with_preamp_gain(b.gain_db).noise_factor / limit) == pytest.approx(0.5, abs=1e-6)
        other = chain.with_suggested_preamp(ch, "receiver" if where == "antenna" else "antenna")
        # at the antenna where that tends to a floor more than 0.5 dB lower; else before the receiver
        assert bool(10 * np.log10(limit / other.with_preamp_gain(100.0).noise_factor) < -0.5) is (where == "antenna")
        t_c = fitted.with_preamp_gain(b.gain_db).temperature_k
        np.testing.assert_allclose(b.snr_loss_db, 10 * np.log10((t_a + t_c) / t_a), rtol=1e-12)
        budget = chain.noise_budget(ch, t_a, bandwidth_hz=500.0, margin_target_db=10.0)
        assert np.all(np.isnan(budget.preamp_gain_needed_db))
        assert (budget.best_effort.gain_db, budget.best_effort.position) == (b.gain_db, b.position)
        assert np.all(b.snr_loss_db < budget.receiver_snr_loss_db)
    reachable = chain.noise_budget(ch, np.array([1e7]), bandwidth_hz=500.0, margin_target_db=10.0)
    assert reachable.best_effort is None  # a gain reaches the target: the budget's own advice stands


def test_a_best_effort_preamp_never_makes_reception_worse():
    """No best-effort preamplifier where fitting one would not lower the worst hour's loss: a receiver of 2 dB noise
    figure is quieter than the suggested 3 dB preamplifier; and the chain's own preamplifier is never turned down (a
    30 dB one was advised down to 18 dB, its loss rising from 13.1 to 13.6 dB)."""
    t_a = np.array([[30.0, 60.0]])
    quiet = chain.Chain((chain.passive("transformer", 0.5), chain.amplifier("rx", gain_db=0, noise_figure_db=2)))
    assert chain.best_effort_preamp(quiet, t_a) is None
    assert chain.noise_budget(quiet, t_a, bandwidth_hz=500.0, margin_target_db=10.0).best_effort is None
    own = chain.amplifier("pre", gain_db=30, noise_figure_db=6)
    rx = chain.amplifier("rx", gain_db=0, noise_figure_db=15)
    placed = chain.Chain((chain.passive("transformer", 0.5), own, chain.passive("cable", 10.0), rx), preamp_index=1)
    b = chain.best_effort_preamp(placed, t_a)
    assert b is None or (b.gain_db >= 30.0 and b.position == "as placed")
    low = chain.Chain((chain.passive("transformer", 0.5), chain.amplifier("pre", gain_db=3, noise_figure_db=3),
                       chain.passive("cable", 10.0), rx), preamp_index=1)  # fmt: skip
    raised = chain.best_effort_preamp(low, t_a)  # a 3 dB preamplifier behind 10 dB of cable: more gain helps
    assert raised is not None and raised.gain_db > 3.0 and raised.position == "as placed"
    before = 10 * np.log10((t_a + low.temperature_k) / t_a)
    assert np.max(raised.snr_loss_db) < np.max(before) - 0.1


def test_a_margin_under_the_receiver_floor_is_said_as_below():
    # a reviewer read "external noise is only -1.9 dB above the receiver floor"
    from snrgain.model.notices import Notice
    from snrgain.outputs.messages import notice_text

    v = {"worst_margin_db": -1.9, "margin_target_db": 10.0, "max_snr_loss_db": 4.1, "preamp_gain_db": 28.0}
    v["preamp_position"] = "antenna"
    said = notice_text(Notice("receiver-limited", "a", v))
    assert "external noise is 1.9 dB below the receiver floor at worst" in said
    v["worst_margin_db"] = 2.9
    said = notice_text(Notice("receiver-limited", "a", v))
    assert "external noise is only 2.9 dB above the receiver floor" in said


def test_a_margin_that_rounds_to_the_target_is_not_short_of_it():
    """The margin is said to 0.1 dB: one of 9.97 dB against a 10 dB target is printed 10.0, so it meets the target
    (no gain needed at that hour), as one of 9.94 dB (printed 9.9) does not; a shortfall needing under 1 dB of gain
    is offered 1 dB, never "0 dB of gain"."""
    from snrgain.outputs.messages import preamp_advice_text
    from snrgain.outputs.output import preamp_cell

    assert list(chain.short_of_target(np.array([9.97, 9.94, 10.0, 12.0, -3.0]), 10.0)) == [
        False,
        True,
        False,
        False,
        True,
    ]
    ch = chain.cascade(freq_hz=1.83e6, receiver_noise_figure_db=12.0)
    t_ten = 290.0 * ch.noise_factor * 10.0  # T_A whose margin is 10 dB exactly
    t_a = np.array([[t_ten * 10 ** (-0.003), t_ten * 10 ** (-0.006)]])  # margins 9.97 and 9.94 dB
    b = chain.noise_budget(ch, t_a, bandwidth_hz=500.0, margin_target_db=10.0)
    np.testing.assert_allclose(b.margin_db, [[9.97, 9.94]], atol=1e-9)
    assert b.preamp_gain_needed_db[0, 0] == 0.0 and 0.0 < b.preamp_gain_needed_db[0, 1] < 0.5
    assert preamp_cell(True, b.preamp_gain_needed_db) == "1"
    assert preamp_advice_text(float(np.max(b.preamp_gain_needed_db)), "receiver").startswith("About 1 dB of gain")


def test_a_scenario_whose_worst_margin_prints_as_the_target_is_not_receiver_limited(minimal_text):
    # A reviewer saw "external noise is only 10.0 dB above the receiver floor at worst (target 10 dB) ... About 0 dB
    # of gain" and "10.0 !" with a preamp of "0" in the table.  The receiver's noise figure is set here so that the
    # candidate's worst margin is 9.97 dB (the margin moves dB for dB with the noise figure of a chain that is the
    # receiver alone), against a target of 40 dB.
    import io

    from rich.console import Console

    from snrgain.outputs.output import ranking_table

    first = snrgain.evaluate(minimal_text + '\n[receiver]\nnoise_figure = "10 dB"\n')
    worst = float(np.min(first.candidates[0].margin_db))
    nf = 10.0 + worst - 39.97
    r = snrgain.evaluate(minimal_text + f'\n[receiver]\nnoise_figure = "{nf:.6f} dB"\nmargin_target = 40\n')
    iso = r.candidates[0]
    worst = float(np.min(iso.margin_db))
    assert worst == pytest.approx(39.97, abs=1e-4) and f"{worst:.1f}" == "40.0"
    assert not iso.receiver_limited and np.all(iso.preamp_gain_needed_db == 0.0)
    assert not [n for n in r.notices if n.code == "receiver-limited" and n.antenna == "iso"]
    console = Console(width=200, record=True, file=io.StringIO())
    console.print(ranking_table(r))
    (row,) = [ln for ln in console.export_text().splitlines() if " iso " in ln and "│" in ln]
    assert "40.0 " in row and "!" not in row and row.rstrip("│ ").endswith("-")
    from snrgain.outputs.plots import ranking_chart

    fig = ranking_chart(r)
    said = [t.get_text() for t in fig.axes[2].texts if t.get_text().startswith(" ")]
    assert said == [" 40.0"]  # the figure's margin panel marks it as the table does
