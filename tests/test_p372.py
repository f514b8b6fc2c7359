"""ITU-R P.372 man-made and galactic levels and the Section 8 combination."""

import numpy as np
import pytest

from noisemodels import p372


@pytest.mark.parametrize(
    "env, c, d",
    # Recommendation ITU-R P.372, Section 5, Table 1: Fam = c - d log10(f_MHz).
    [("city", 76.8, 27.7), ("residential", 72.5, 27.7), ("rural", 67.2, 27.7), ("quiet rural", 53.6, 28.6)],
)
@pytest.mark.parametrize("f_mhz", [0.5, 1.0, 1.83, 3.6, 7.1, 10.0])
def test_man_made_table1(env, c, d, f_mhz):
    got = p372.man_made(f_mhz * 1e6, environment=env).fa_db
    assert got == pytest.approx(c - d * np.log10(f_mhz), abs=1e-9)


def test_man_made_spot_values():
    # Worked by hand from P.372 Table 1: residential at 1 MHz is c itself; city at 10 MHz is 76.8 - 27.7.
    assert p372.man_made(1e6, environment="residential").fa_db == pytest.approx(72.5)
    assert p372.man_made(10e6, environment="city").fa_db == pytest.approx(49.1)
    assert p372.man_made(10e6, environment="quiet rural").fa_db == pytest.approx(25.0)


def test_man_made_deciles_table1():
    # P.372 Table 1 decile deviations (upper, lower) [dB].
    lv = p372.man_made(2e6, environment="city")
    assert (float(lv.du_db), float(lv.dl_db)) == (11.0, 6.7)
    lv = p372.man_made(2e6, environment="rural")
    assert (float(lv.du_db), float(lv.dl_db)) == (9.2, 4.6)


def test_man_made_rejects_unknown_environment_listing_choices():
    with pytest.raises(ValueError, match="'city', 'residential'"):
        p372.man_made(2e6, environment="suburban")


def test_galactic_formula():
    # P.372 Section 6: Fa = 52 - 23 log10(f_MHz): 52 dB at 1 MHz, 29 dB at 10 MHz.
    assert p372.galactic(1e6).fa_db == pytest.approx(52.0)
    assert p372.galactic(10e6).fa_db == pytest.approx(29.0)
    assert float(p372.galactic(5e6).du_db) == 2.0


def test_vectorised_over_frequency():
    f = np.array([1e6, 2e6, 4e6])
    out = p372.man_made(f, environment="rural").fa_db
    assert out.shape == (3,)
    assert np.all(np.diff(out) < 0)


def test_combine_two_equal_components_add_3_db():
    # Two equal powers: +10 log10(2) = 3.01 dB (P.372 Section 8 with zero spread reduces to the power sum).
    tot = p372.combine([p372.NoiseLevel(50.0, 0.0, 0.0), p372.NoiseLevel(50.0, 0.0, 0.0)])
    assert tot.fa_db == pytest.approx(50.0 + 10 * np.log10(2), abs=1e-9)
    assert tot.du_db == pytest.approx(0.0, abs=1e-9)


def test_combine_equal_components_with_spread_near_3_db():
    # With equal spreads the moment matching narrows the spread of the sum, so the median rises a little
    # more than 3 dB; within 0.5 dB of 3 dB for deviations of a few dB (P.372 Section 8 formulas).
    lv = p372.NoiseLevel(50.0, 4.0, 4.0)
    tot = p372.combine([lv, lv])
    assert 3.0 <= float(tot.fa_db) - 50.0 <= 3.5
    assert float(tot.du_db) < 4.0


def test_combine_single_component_is_itself():
    lv = p372.NoiseLevel(61.0, 9.2, 4.6)
    tot = p372.combine([lv])
    assert float(tot.fa_db) == pytest.approx(61.0, abs=1e-9)
    assert float(tot.du_db) == pytest.approx(9.2, abs=1e-9)
    assert float(tot.dl_db) == pytest.approx(4.6, abs=1e-9)


def test_combine_weak_component_barely_matters():
    tot = p372.combine([p372.NoiseLevel(60.0, 0.0, 0.0), p372.NoiseLevel(30.0, 0.0, 0.0)])
    assert float(tot.fa_db) == pytest.approx(60.0, abs=0.01)


def test_fa_dbm_round_trip_and_ktb():
    # kT0b in 1 Hz at 290 K is -173.98 dBm (Boltzmann constant, 2019 SI).
    assert p372.fa_to_dbm(0.0, bandwidth_hz=1.0) == pytest.approx(-173.98, abs=0.01)
    assert p372.dbm_to_fa(p372.fa_to_dbm(47.0, bandwidth_hz=500.0), bandwidth_hz=500.0) == pytest.approx(47.0)
