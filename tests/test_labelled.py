"""Labelled results: Results.to_xarray() and to_dataframe() against the Results' own arrays and the JSON.

No new physics here: every expected number is the Results object's own array or the JSON output's number, so a
label attached to the wrong axis, a unit missing or a row dropped fails.
"""

import csv
import io
import json
import subprocess
import sys

import numpy as np
import pytest

import snrgain
from snrgain.model.labelled import DATAFRAME_COLUMNS, UNITS
from snrgain.outputs import output
from tests.conftest import REPO, SCENARIOS

# Two targets listened at different hours, so that snr_gain_db holds NaN where one is not listened for.
TWO_TARGETS = """
[site]
name = "label test"
latitude = 52.0
longitude = 5.0
ground = "moist loam"

[band]
frequency = "1.83 MHz"
bandwidth = "500 Hz"

[time]
months = [1, 12]
utc_hours = [0, 2, 4]

[[target]]
name = "north-east"
bearing = 45
elevation = [10, 20]

[[target]]
name = "west"
bearing = 270
elevation = [5, 15]
utc_hours = [4, 6]

[reference]
family = "vertical"
height = "20 m"

[[candidate]]
name = "iso"
family = "isotropic"

[[candidate]]
name = "wire west"
family = "beverage"
length = "250 m"
height = "2.5 m"
bearing = 270
"""

ALLOWED_UNITS = {"dB", "dBi", "dBm", "K", "-", "deg", "h"}


@pytest.fixture(scope="module")
def two():
    return snrgain.evaluate(TWO_TARGETS)


@pytest.fixture(scope="module")
def fen():
    return snrgain.evaluate(SCENARIOS / "marrow-fen.toml")


def test_dimensions_and_labels_are_the_results_own(two):
    ds = two.to_xarray()
    assert list(ds["antenna"].values) == [a.name for a in two.antennas]
    assert list(ds["family"].values) == [a.family for a in two.antennas]
    assert list(ds["is_reference"].values) == [True, False, False]
    assert list(ds["target"].values) == ["north-east", "west"]
    assert list(ds["month"].values) == two.months == [1, 12]
    assert list(ds["utc_hour"].values) == two.utc_hours == [0.0, 2.0, 4.0, 6.0]
    assert list(ds["component"].values) == list(two.noise.names)
    assert ds["snr_gain_db"].dims == ("antenna", "target", "month", "utc_hour")
    assert ds["snr_gain_db"].shape == (3, 2, 2, 4)
    assert ds["noise_by_component_dbm"].dims == ("antenna", "component", "month", "utc_hour")
    assert ds["snr_gain_quantile_db"].dims == ("antenna", "target", "quantile")
    for k, a in enumerate(two.antennas):
        np.testing.assert_array_equal(ds["snr_gain_db"].values[k], a.snr_gain_db)  # NaN where they are NaN
        np.testing.assert_array_equal(ds["noise_dbm"].values[k], a.noise_dbm)
        np.testing.assert_array_equal(ds["rdf_db"].values[k], a.rdf_db)
        np.testing.assert_array_equal(ds["gain_toward_target_dbi"].values[k], a.gain_dbi)
        q = ds["snr_gain_quantile_db"].isel(antenna=k)
        np.testing.assert_array_equal(q.sel(quantile=0.1).values, a.snr_gain_p10_db)
        np.testing.assert_array_equal(q.sel(quantile=0.5).values, a.snr_gain_median_db)
        np.testing.assert_array_equal(q.sel(quantile=0.9).values, a.snr_gain_p90_db)
        for ci, c in enumerate(two.noise.names):
            np.testing.assert_array_equal(ds["noise_by_component_dbm"].values[k, ci], a.noise_by_component_dbm[c])
    np.testing.assert_array_equal(ds["fa_db"].values, two.noise.fa_db)
    # "west" is listened for at 4 and 6 UTC only, "north-east" at 0, 2 and 4 (the [time] default)
    west = ds["snr_gain_db"].sel(antenna="wire west", target="west")
    assert np.isfinite(west.sel(utc_hour=[4.0, 6.0])).all() and np.isnan(west.sel(utc_hour=[0.0, 2.0])).all()
    ne = ds["snr_gain_db"].sel(antenna="wire west", target="north-east")
    assert np.isnan(ne.sel(utc_hour=6.0)).all() and np.isfinite(ne.sel(utc_hour=[0.0, 2.0, 4.0])).all()
    # the ranks are the target's ranking, the reference 0
    for ti, tr in enumerate(two.target_results):
        ranks = ds["rank_for_target"].isel(target=ti)
        assert [str(n) for n in ranks.sortby(ranks)["antenna"].values] == [two.reference.name, *tr.ranking]
        assert ds["best"].values[ti] == tr.best


def test_every_variable_and_coordinate_carries_its_unit(two):
    ds = two.to_xarray()
    for name, var in ds.data_vars.items():
        assert var.attrs.get("units") in ALLOWED_UNITS, name
        assert var.attrs["units"] == UNITS[name]
        assert name.endswith(("_db", "_dbi", "_dbm", "_k")) == (var.attrs["units"] not in ("-",)), name
    for name, coord in ds.coords.items():
        if name not in ("antenna", "target", "component", "atmospheric_decile"):  # labels, not quantities
            assert coord.attrs.get("units") in ALLOWED_UNITS, name
    assert ds.attrs["frequency_hz"] == two.freq_hz and ds.attrs["reference"] == two.reference.name


def test_temperature_is_fa_above_290_k(two):
    # Fa = 10 log10(T / T0), T0 = 290 K (ITU-R P.372 Section 2): the temperature variable is its inverse.
    ds = two.to_xarray()
    t = ds["median_power_sum_temperature_k"].values
    np.testing.assert_allclose(10 * np.log10(t / 290.0), two.noise.median_power_sum_fa_db, rtol=0, atol=1e-9)


def test_a_value_selected_by_label_is_the_json_number(fen):
    doc = json.loads(output.to_json(fen))
    ds = fen.to_xarray()
    cand = doc["candidates"][3]
    ti, mi, hi = 1, 1, 2
    target = doc["targets"][ti]["name"]
    month, hour = doc["months"][mi], doc["utc_hours"][hi]
    picked = ds["snr_gain_db"].sel(antenna=cand["name"], target=target, month=month, utc_hour=hour)
    assert float(picked) == cand["snr_gain_db"]["values"][ti][mi][hi]
    row = next(r for r in doc["targets"][ti]["ranking"] if r["name"] == cand["name"])
    median = ds["snr_gain_quantile_db"].sel(antenna=cand["name"], target=target, quantile=0.5)
    assert float(median) == row["snr_gain_db"]["median"]
    assert float(ds["rdf_db"].sel(antenna=cand["name"], target=target)) == row["rdf_db"]
    noise = ds["noise_dbm"].sel(antenna=cand["name"], month=month, utc_hour=hour)
    assert float(noise) == cand["noise_dbm"]["values"][mi][hi]
    best = doc["targets"][ti]["best"]
    assert ds["best"].sel(target=target) == best["name"]
    assert float(ds["best_margin_db"].sel(target=target)) == best["margin_db"]


def test_dataframe_one_row_per_listened_hour(two):
    df = two.to_dataframe()
    assert list(df.columns) == DATAFRAME_COLUMNS
    assert all(c.endswith(("_db", "_dbi", "_dbm")) for c in df.columns[6:] if c != "probability_beats_reference")
    listened = sum(int(np.isfinite(a.snr_gain_db).sum()) for a in two.antennas)
    assert len(df) == listened == 3 * (2 * 3 + 2 * 2)
    assert len(two.to_dataframe(listened_only=False)) == 3 * 2 * 2 * 4
    assert list(df["target"].unique()) == ["north-east", "west"]
    assert set(df[df["target"] == "west"]["utc_hour"]) == {4.0, 6.0}
    for row in df.itertuples(index=False):
        a = two.antenna(row.antenna)
        ti = [t["name"] for t in two.targets].index(row.target)
        mi, hi = two.months.index(row.month), two.utc_hours.index(row.utc_hour)
        assert row.snr_gain_db == a.snr_gain_db[ti, mi, hi]
        assert row.noise_dbm == a.noise_dbm[mi, hi]
        assert row.rdf_db == a.rdf_db[ti] and row.snr_gain_median_db == a.snr_gain_median_db[ti]
        assert row.rank_for_target == (0 if a is two.reference else 1 + two.target_results[ti].ranking.index(a.name))


def test_csv_is_the_dataframe_rounded(two):
    rows = list(csv.DictReader(io.StringIO(output.to_csv(two))))
    df = two.to_dataframe()
    # the CSV's documented columns, unchanged
    assert list(rows[0]) == [
        "target",
        "rank_for_target",
        "antenna",
        "family",
        "month",
        "utc_hour",
        "snr_gain_db",
        "gain_toward_target_dbi",
        "rdf_db",
        "front_to_back_db",
        "noise_dbm",
        "margin_db",
        "receiver_snr_loss_db",
    ]
    assert len(rows) == len(df)
    for r, d in zip(rows, df.itertuples(index=False)):
        assert (r["target"], r["antenna"], int(r["rank_for_target"])) == (d.target, d.antenna, d.rank_for_target)
        assert (int(r["month"]), float(r["utc_hour"])) == (d.month, d.utc_hour)
        for col in ("snr_gain_db", "rdf_db", "noise_dbm", "margin_db"):
            assert float(r[col]) == pytest.approx(getattr(d, col), abs=0.0005)


def test_import_snrgain_loads_neither_xarray_nor_pandas():
    code = "import sys, snrgain; print('xarray' in sys.modules, 'pandas' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=REPO, check=True).stdout
    assert out.split() == ["False", "False"]


def test_every_ranking_number_of_the_json_is_in_the_dataset(fen):
    # The JSON's per-target rankings and the Dataset are two views of the same numbers: none may disagree.
    doc = json.loads(output.to_json(fen))
    ds = fen.to_xarray()
    keys = {
        "rdf_db": "rdf_db",
        "front_to_back_db": "front_to_back_db",
        "gain_toward_target_dbi": "gain_toward_target_dbi",
        "probability_beats_reference": "probability_beats_reference",
    }
    checked = 0
    for t in doc["targets"]:
        for rank, row in enumerate(t["ranking"], start=1):
            at = {"antenna": row["name"], "target": t["name"]}
            assert int(ds["rank_for_target"].sel(at)) == rank
            for lab, q in (("p10", 0.1), ("median", 0.5), ("p90", 0.9)):
                assert float(ds["snr_gain_quantile_db"].sel(at).sel(quantile=q)) == row["snr_gain_db"][lab]
            assert float(ds["snr_gain_nominal_db"].sel(at)) == row["snr_gain_db"]["nominal"]
            for key, var in keys.items():
                value = float(ds[var].sel(at))
                assert (not np.isfinite(value)) if row[key] is None else value == row[key]  # null: not finite
                checked += 1
    assert checked == 4 * len(doc["targets"]) * len(fen.candidates)


def test_results_not_yet_ranked_still_label(two):
    # Results built before the per-target decisions (no target_results) give ranks 0 and no best, not an error.
    from dataclasses import replace

    ds = replace(two, target_results=[]).to_xarray()
    assert (ds["rank_for_target"].values == 0).all()
    assert list(ds["best"].values) == ["", ""] and np.isnan(ds["best_margin_db"].values).all()
    np.testing.assert_array_equal(ds["snr_gain_db"].values[1], two.candidates[0].snr_gain_db)
