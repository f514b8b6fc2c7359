"""`--reference NAME`: ranking against another antenna of the scenario equals editing the file (the two tables
swapped), and a local level stays read on the antenna the file says (``read_on``), so the noise does not move."""

from __future__ import annotations

import copy
import dataclasses
import json

import numpy as np
import pytest
from click.testing import CliRunner

from snrgain.cli.main import cli
from snrgain.errors import ScenarioError
from snrgain.model.pipeline import evaluate, resolve_sources
from snrgain.scenario import load

VERTICAL = {"name": "tx vertical", "family": "vertical", "height": "40 m"}
BEVERAGE = {"name": "beverage NE", "family": "beverage", "length": "250 m", "height": "2.5 m", "bearing": 45}
LOOP = {
    "name": "flag NE",
    "family": "terminated-loop",
    "width": "6 m",
    "loop_height": "3 m",
    "height": "2.5 m",
    "bearing": 45,
}
SHORT = {"name": "short vertical", "family": "vertical", "height": "6 m"}


def scenario(reference=VERTICAL, candidates=(BEVERAGE, LOOP, SHORT), local=None) -> dict:
    return {
        "site": {"name": "Test field", "latitude": 52.0, "longitude": 1.0, "ground": "moist loam"},
        "band": {"frequency": "1.83 MHz", "bandwidth": "500 Hz"},
        "time": {"months": [1], "utc_hours": [2, 4]},
        "noise": {
            "man_made": {"environment": "rural"},
            "atmospheric": {"model": "given", "fa": 40, "arrival": "uniform"},
            "local": local
            if local is not None
            else [{"name": "ballast", "bearing": 200, "elevation": "5 deg", "level": "S6"}],
        },
        "target": [{"name": "Europe", "bearing": 45, "elevation": ["5 deg", "25 deg"]}],
        "reference": copy.deepcopy(reference),
        "candidate": [copy.deepcopy(c) for c in candidates],
        "compute": {"nside": 8},
        "uncertainty": {"samples": 40, "ground": False},
    }


def _swapped(data: dict, name: str) -> dict:
    """The file edited by hand: the named candidate's table becomes [reference], the reference's takes its place,
    and each level names the antenna it was read on (the old reference)."""
    out = copy.deepcopy(data)
    k = next(i for i, c in enumerate(out["candidate"]) if c["name"] == name)
    out["reference"], out["candidate"][k] = out["candidate"][k], out["reference"]
    for src in out["noise"]["local"]:
        if "level" in src and "read_on" not in src:
            src["read_on"] = data["reference"]["name"]
    return out


def _fa(sc, name):
    return next(s.fa_db for s in resolve_sources(sc).noise.local if s.name == name)


def test_the_option_equals_editing_the_file():
    data = scenario()
    data["uncertainty"]["ground"] = True  # the ground spread too: each ground keeps the level read on its antenna
    by_option = evaluate(load(data, reference="beverage NE"))
    by_edit = evaluate(load(_swapped(data, "beverage NE")))
    assert by_option.reference.name == by_edit.reference.name == "beverage NE"
    assert [a.name for a in by_option.candidates] == [a.name for a in by_edit.candidates]
    for a, b in zip(by_option.antennas, by_edit.antennas):
        np.testing.assert_allclose(a.snr_gain_median_db, b.snr_gain_median_db, atol=0.01)
        np.testing.assert_allclose(np.asarray(a.snr_gain_db), np.asarray(b.snr_gain_db), atol=0.01, equal_nan=True)
    # and the candidates really are ranked against the new reference: it is 0 dB over itself
    assert abs(float(np.nanmax(np.abs(by_option.reference.snr_gain_median_db)))) < 1e-9


def test_a_level_read_on_the_file_reference_keeps_its_strength_under_another_reference():
    data = scenario()
    fa_file = _fa(load(data), "ballast")
    for other in ("beverage NE", "flag NE", "short vertical"):
        assert _fa(load(data, reference=other), "ballast") == pytest.approx(fa_file, abs=1e-9)
    # without read_on kept, a hand edit re-reads the S6 on the Beverage: the strength moves by many dB (the issue's
    # 24 dB); the option does not do that
    edited = _swapped(data, "beverage NE")
    del edited["noise"]["local"][0]["read_on"]
    assert abs(_fa(load(edited), "ballast") - fa_file) > 3.0


def test_read_on_names_any_antenna_and_is_the_same_as_reading_there():
    data = scenario(local=[{"name": "ballast", "bearing": 200, "level": "S6", "read_on": "short vertical"}])
    fa = _fa(load(data), "ballast")
    assert _fa(load(data, reference="short vertical"), "ballast") == pytest.approx(fa, abs=1e-9)
    # a vertical of 6 m and one of 40 m hear a low-angle source differently: read_on matters
    plain = scenario(local=[{"name": "ballast", "bearing": 200, "level": "S6"}])
    assert abs(_fa(load(plain), "ballast") - fa) > 0.5
    # "reference" names the file's reference
    named = scenario(local=[{"name": "ballast", "bearing": 200, "level": "S6", "read_on": "reference"}])
    assert _fa(load(named, reference="flag NE"), "ballast") == pytest.approx(_fa(load(plain), "ballast"), abs=1e-9)


def test_bad_names_are_refused_with_the_field():
    data = scenario(local=[{"name": "ballast", "bearing": 200, "level": "S6", "read_on": "nowhere"}])
    with pytest.raises(ScenarioError) as err:
        load(data)
    assert any(p == 'noise.local 1 ("ballast").read_on' and "nowhere" in m for p, m in err.value.problems)
    with pytest.raises(ScenarioError) as err:
        load(scenario(), reference="no such antenna")
    assert any(p == "--reference" and "beverage NE" in m for p, m in err.value.problems)
    with pytest.raises(ScenarioError) as err:
        load(scenario(local=[{"name": "b", "bearing": 200, "fa": 50, "read_on": "flag NE"}]))
    assert any("read_on" in m for _, m in err.value.problems)


def test_a_level_read_on_a_directional_antenna_gets_a_notice():
    on_vertical = evaluate(load(scenario()))
    assert not [n for n in on_vertical.notices if n.code == "level-on-directional"]
    on_beverage = evaluate(
        load(scenario(local=[{"name": "ballast", "bearing": 200, "level": "S6", "read_on": "beverage NE"}]))
    )
    (n,) = [n for n in on_beverage.notices if n.code == "level-on-directional"]
    assert n.antenna == "beverage NE" and n.values["ripple_db"] > 10
    assert any("depends on its pattern" in w for w in on_beverage.warnings)


def _value(v) -> str:
    if isinstance(v, str):
        return json.dumps(v)
    if isinstance(v, list):
        return "[" + ", ".join(_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{k} = {_value(x)}" for k, x in v.items()) + " }"
    return repr(v).lower() if isinstance(v, bool) else repr(v)


def toml_text(data: dict) -> str:
    """The test scenarios as TOML (tables, arrays of tables, inline values): enough for these files."""
    lines = []

    def table(name, d):
        plain = {k: v for k, v in d.items() if not isinstance(v, dict) and not _tables(v)}
        lines.append(f"[{name}]")
        lines.extend(f"{k} = {_value(v)}" for k, v in plain.items())
        for k, v in d.items():
            if isinstance(v, dict):
                table(f"{name}.{k}", v)
            elif _tables(v):
                for item in v:
                    lines.append(f"[[{name}.{k}]]")
                    lines.extend(f"{a} = {_value(b)}" for a, b in item.items())

    for k, v in data.items():
        if isinstance(v, dict):
            table(k, v)
        else:
            for item in v:
                lines.append(f"[[{k}]]")
                lines.extend(f"{a} = {_value(b)}" for a, b in item.items())
    return "\n".join(lines) + "\n"


def _tables(v) -> bool:
    return isinstance(v, list) and bool(v) and all(isinstance(x, dict) for x in v)


def test_rank_takes_the_reference_option(tmp_path):
    path = tmp_path / "s.toml"
    path.write_text(toml_text(scenario()), encoding="utf-8")
    res = CliRunner().invoke(cli, ["rank", str(path), "--reference", "flag NE", "--format", "json"])
    assert res.exit_code == 0, res.output
    out = json.loads(res.stdout)
    assert out["reference"]["name"] == "flag NE"
    res = CliRunner().invoke(cli, ["rank", str(path), "--reference", "nobody"])
    assert res.exit_code == 2 and "--reference" in res.output


def test_report_takes_the_reference_option(tmp_path):
    path = tmp_path / "s.toml"
    path.write_text(toml_text(scenario()), encoding="utf-8")
    out = tmp_path / "r.html"
    res = CliRunner().invoke(cli, ["report", str(path), "--reference", "beverage NE", "-o", str(out)])
    assert res.exit_code == 0, res.output
    html = out.read_text(encoding="utf-8")
    assert "beverage NE (reference)" in html and "no candidate beats beverage NE" in html and "tx vertical" in html


def test_on_another_ground_the_level_stays_read_on_its_antenna():
    # The ground spread moves every antenna to other soils; a level's strength then moves so that the antenna it was
    # read on still receives it: the same offsets whichever antenna is the reference.
    from snrgain.model.pipeline import strength_offsets_db
    from snrgain.model.spread import ground_nodes, on_ground

    data = scenario()
    data["uncertainty"]["ground"] = True
    file_sc, other_sc = resolve_sources(load(data)), resolve_sources(load(data, reference="beverage NE"))
    nodes = [
        g for g, _ in ground_nodes(file_sc.site.ground, file_sc.site.ground_spread) if g is not file_sc.site.ground
    ]
    assert nodes
    for g in nodes:
        a = strength_offsets_db(file_sc, on_ground(file_sc, file_sc.antennas, g))
        b = strength_offsets_db(other_sc, on_ground(other_sc, other_sc.antennas, g))
        assert a["ballast"] == pytest.approx(b["ballast"], abs=1e-9)
        assert abs(a["ballast"]) > 1e-3  # the ground does move it


def test_a_levels_unit_component_kept_across_grounds_reads_the_same():
    # each ground's reference reads a level again through the source's unit component, made once and kept: the same
    # Fa as a fresh one gives, to the bit
    from snrgain.memo import forget
    from snrgain.model.spread import ground_nodes, on_ground
    from snrgain.sky import noise

    data = scenario()
    data["uncertainty"]["ground"] = True
    sc = resolve_sources(load(data))
    src = next(s for s in sc.noise.local if s.level_dbm is not None)
    for g, _ in ground_nodes(sc.site.ground, sc.site.ground_spread):
        ref = on_ground(sc, sc.antennas, g)[0]

        def gain(az, el, ref=ref):
            return ref.gain_linear(sc.freq_hz, az, el)

        forget()
        fresh = noise.level_to_fa_db(src, sc.place, gain)
        assert noise.level_to_fa_db(src, sc.place, gain) == fresh and len(noise._UNITS) == 1
        # several levels read together (the reference's gain asked once on all their directions): each one's own
        others = [src, dataclasses.replace(src, name="b", bearing_rad=src.bearing_rad + 1.0, elevation_rad=0.3)]
        together = noise.levels_to_fa_db(others, sc.place, gain)
        alone = [noise.level_to_fa_db(s, sc.place, gain) for s in others]
        assert together == pytest.approx(alone, rel=1e-14, abs=1e-12)


def test_placed_sources_under_another_reference():
    # A placed source's level stays read on the file's reference under another reference (its pickup is carried from
    # the reference in force, P_A / P_ref, so its strength is the one that gives the file's reference the reading):
    # every antenna's noise is the one the file gives, to round-off, over the ground spread too, and only the
    # reference changes.  The resistors are fixed: an "auto" one is chosen under the sky only for a candidate.
    at = {"tx vertical": [0, 0], "beverage NE": [30, 40], "flag NE": [60, -20], "short vertical": [-20, 10]}
    fixed = {"beverage NE": {"termination": "450 ohm"}, "flag NE": {"termination": "900 ohm"}}
    ants = [dict(a, position=at[a["name"]], **fixed.get(a["name"], {})) for a in (VERTICAL, BEVERAGE, LOOP, SHORT)]
    level = scenario(ants[0], ants[1:], local=[{"name": "shed", "position": ["120 m", "-30 m"], "level": "S7"}])
    level["uncertainty"]["ground"] = True
    a = evaluate(load(level))
    assert np.asarray(a.antenna("tx vertical").noise_by_component_dbm["shed"]) == pytest.approx(-85.0, abs=1e-9)
    for other in ("short vertical", "beverage NE", "flag NE"):
        b = evaluate(load(level, reference=other))
        assert b.reference.name == other and "tx vertical" in [x.name for x in b.candidates]
        for x in a.antennas:
            y = b.antenna(x.name)
            np.testing.assert_allclose(np.asarray(y.noise_dbm), np.asarray(x.noise_dbm), rtol=0, atol=1e-9)
            for name in x.noise_by_component_dbm:
                np.testing.assert_allclose(
                    np.asarray(y.noise_by_component_dbm[name]), np.asarray(x.noise_by_component_dbm[name]), atol=1e-9
                )
            # the SNR gain over the new reference: each antenna's over the file's less the new reference's
            want = np.asarray(x.snr_gain_db) - np.asarray(a.antenna(other).snr_gain_db)
            np.testing.assert_allclose(np.asarray(y.snr_gain_db), want, atol=1e-9, equal_nan=True)
    # read on an antenna set under the site's noise (a pair steered for SNR) it is refused, with the way out
    pair = {"name": "pair", "family": "phased-verticals", "positions": [[-40, 0], [-40, 20]], "height": "6 m"}
    pair |= {"feed": "buffered", "steering": "auto", "auto_for": "snr"}
    on_pair = scenario(ants[0], [*ants[1:], pair], local=[dict(level["noise"]["local"][0], read_on="pair")])
    with pytest.raises(ScenarioError) as err:
        load(on_pair)
    assert any(p.endswith("read_on") and "measured_at" in m for p, m in err.value.problems)
    # a placed fa stays where the file's reference stands (its default measured_at), so each antenna's noise moves
    # only by how the reference in force hears the source against a monopole at its own place (the field's ratio
    # carries the level there): the compact-source approximation (10 deg spread), and, the short vertical standing
    # 22 m from the resonant vertical with the source beyond it, the vertical's shadow, which the field's ratio does
    # not see (3.4 dB here, NEC-2's order: tests/test_near_scatter.py), half of it offset by the short vertical's own
    # near-field reading: 0.6 dB in all (0.05 dB before the vertical's share of a near source was read through its
    # own currents).  A known limit of the field's ratio under another reference, said in the README.
    fa = scenario(ants[0], ants[1:], local=[{"name": "shed", "position": ["120 m", "-30 m"], "fa": 70}])
    a, b = evaluate(load(fa)), evaluate(load(fa, reference="short vertical"))
    for x in a.antennas:
        np.testing.assert_allclose(np.asarray(b.antenna(x.name).noise_dbm), np.asarray(x.noise_dbm), atol=0.7)


def test_a_reference_with_a_feed_line_is_taken_without_it_and_says_so(tmp_path):
    # the file's reference takes no feed line (an input error); an antenna made the reference by --reference has its
    # feed line left out the same way, and a warning says so instead of leaving it out silently
    import warnings

    from snrgain.scenario import load

    path = tmp_path / "fed.toml"
    path.write_text(MINIMAL_FED, encoding="utf-8")
    with pytest.warns(UserWarning, match="--reference 'wire': its feed_line is left out while it is the reference"):
        sc = load(path, reference="wire")
    assert sc.reference.name == "wire" and "wire" not in sc.feed_lines
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert "wire" in load(path).feed_lines  # as written: the candidate's line is scored


MINIMAL_FED = """
[site]
name = "test site"
latitude = 40.0
longitude = -75.0
ground = "moist loam"
lot = [[-50, -50], [300, -50], [300, 100], [-50, 100]]

[band]
frequency = "1.83 MHz"

[time]
months = [1]
utc_hours = [3]

[[target]]
name = "north-east"
bearing = 45
elevation = [10, 20]

[reference]
family = "vertical"
height = "20 m"

[[candidate]]
name = "wire"
family = "beverage"
length = "200 m"
height = "2 m"
bearing = 45
position = [20, 0]
feed_line = { to = [0, 10], height = "1 m" }
"""
