"""A sweep of a scenario of several bands: each design in every band, a ``band`` column, each band's rows those of
a sweep of that band alone (``--band``)."""

import csv

from click.testing import CliRunner

from snrgain.cli.main import cli
from tests.conftest import REPO

SITE = REPO / "tests" / "data" / "sites" / "three-bands.toml"
VARY = ["--vary", "Beverage Europe: length = 200 m, 260 m"]


def _rows(path):
    with open(path, newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


def test_every_band_at_once_equals_each_band_alone(tmp_path):
    runner = CliRunner()
    res = runner.invoke(cli, ["sweep", str(SITE), *VARY, "-o", str(tmp_path / "all.csv")])
    assert res.exit_code == 0, res.output
    assert "in each of 3 bands (160 m, 80 m, 40 m)" in res.output
    rows = _rows(tmp_path / "all.csv")
    assert list(rows[0])[:2] == ["design", "band"]
    # design by design, each in every band, in the order of the file (a band's targets are those listened on it)
    order = list(dict.fromkeys((r["design"], r["band"]) for r in rows))
    assert order == [(d, b) for d in ("0", "1") for b in ("160 m", "80 m", "40 m")]
    for band in ("160 m", "80 m", "40 m"):
        out = tmp_path / f"{band[:-2]}.csv"
        res = runner.invoke(cli, ["sweep", str(SITE), *VARY, "--band", band, "-o", str(out)])
        assert res.exit_code == 0, res.output
        alone = _rows(out)
        assert "band" not in alone[0]
        mine = [{k: v for k, v in r.items() if k != "band"} for r in rows if r["band"] == band]
        assert mine == alone, band
    # the bands differ: the Beverage is not the same antenna on 160 m and 40 m
    by = {(r["band"], r["design"], r["target"]): float(r["snr_gain_db"]) for r in rows}
    assert abs(by[("160 m", "0", "Europe")] - by[("40 m", "0", "Europe")]) > 0.1


def test_a_band_key_varied_in_a_file_of_several_bands(tmp_path):
    # [[band]] is a list of tables: a band's key is set in every band (it used to stop with a TypeError).  At the
    # 80 m band's own frequency the rows are those of the file as written; at another they move.
    runner = CliRunner()
    out, same = tmp_path / "f.csv", tmp_path / "same.csv"
    vary = ["--vary", "band: frequency = 3.55 MHz, 3.8 MHz"]
    res = runner.invoke(cli, ["sweep", str(SITE), "--band", "80 m", *vary, "-o", str(out)])
    assert res.exit_code == 0, res.output
    res = runner.invoke(
        cli, ["sweep", str(SITE), "--band", "80 m", "--vary", "Beverage Europe: length = 240 m", "-o", str(same)]
    )
    assert res.exit_code == 0, res.output
    keys = ("antenna", "target", "snr_gain_db", "rdf_db")
    rows = _rows(out)
    at_own = [tuple(r[k] for k in keys) for r in rows if r["band: frequency [MHz]"] == "3.55"]
    as_written = [tuple(r[k] for k in keys) for r in _rows(same) if r["antenna"] == "Beverage Europe"]
    assert [r for r in at_own if r[0] == "Beverage Europe"] == as_written
    moved = [tuple(r[k] for k in keys) for r in rows if r["band: frequency [MHz]"] == "3.8"]
    assert moved != at_own


def test_a_band_frequency_is_not_varied_in_every_band_at_once(tmp_path):
    # Without --band one frequency would be set in every band, whose rows would still be labelled 160 m, 80 m and
    # 40 m (they were: '80 m' rows at 1.83 MHz).  Refused before any work, naming the bands and --band.
    res = CliRunner().invoke(
        cli, ["sweep", str(SITE), "--vary", "band: frequency = 1.83 MHz, 3.6 MHz", "-o", str(tmp_path / "f.csv")]
    )
    assert res.exit_code != 0
    assert "3 bands (160 m, 80 m, 40 m)" in res.output and "--band" in res.output
    assert not (tmp_path / "f.csv").exists()


def test_a_band_named_by_its_frequency_keeps_its_name_when_varied(tmp_path):
    # Bands without a name are named by their frequency as written (targets name them so too): varying the frequency
    # of the one --band picks changes that band alone, which keeps the name the user picked it by.  Before, every
    # band took the frequency, and the names collided.
    text = SITE.read_text(encoding="utf-8")
    for name, freq in (("160 m", "1.83 MHz"), ("80 m", "3.55 MHz"), ("40 m", "7.03 MHz")):
        text = text.replace(f'name = "{name}"\n', "").replace(f'"{name}"', f'"{freq}"')
    site = tmp_path / "unnamed.toml"
    site.write_text(text, encoding="utf-8")
    out = tmp_path / "f.csv"
    res = CliRunner().invoke(
        cli,
        ["sweep", str(site), "--band", "3.55 MHz", "--vary", "band: frequency = 3.55 MHz, 3.8 MHz", "-o", str(out)],
    )
    assert res.exit_code == 0, res.output
    rows = _rows(out)
    assert {r["band: frequency [MHz]"] for r in rows} == {"3.55", "3.8"}  # numbers, the unit in the header
    named = tmp_path / "named.csv"
    res = CliRunner().invoke(
        cli, ["sweep", str(SITE), "--band", "80 m", "--vary", "band: frequency = 3.55 MHz, 3.8 MHz", "-o", str(named)]
    )
    assert res.exit_code == 0, res.output
    keys = ("band: frequency [MHz]", "antenna", "target", "snr_gain_db")
    assert [tuple(r[k] for k in keys) for r in rows] == [tuple(r[k] for k in keys) for r in _rows(named)]


def test_a_time_key_a_band_sets_itself_is_refused_for_that_band(tmp_path):
    # three-bands.toml's 40 m band lists its own utc_hours: [time] utc_hours varied would not reach it, and its rows
    # would read as changed when nothing changed there; refused, naming the band and what to vary instead.
    from click.testing import CliRunner

    from snrgain.cli.main import cli

    path = REPO / "tests" / "data" / "sites" / "three-bands.toml"
    vary = ["--vary", "time: utc_hours = [0, 2], [4, 6]", "-o", str(tmp_path / "s.csv")]
    res = CliRunner().invoke(cli, ["sweep", str(path), *vary])
    assert res.exit_code == 2 and "does not reach '40 m', which has its own utc_hours" in " ".join(res.output.split())
    assert not (tmp_path / "s.csv").exists()
    res = CliRunner().invoke(cli, ["sweep", str(path), "--band", "80 m", *vary])
    assert res.exit_code == 0, res.output
