"""Scenario loading and validation: messages name file, field, value and what is allowed."""

import copy
import tomllib

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from snrgain.scenario import ScenarioError, load
from tests.conftest import MINIMAL, SCENARIOS


def test_minimal_loads_with_si_values(minimal_text):
    sc = load(minimal_text)
    assert sc.freq_hz == 1.83e6
    assert sc.bandwidth_hz == 500.0
    assert sc.reference.height_m == 20.0
    assert [a.name for a in sc.candidates] == ["iso"]
    assert np.degrees(sc.targets[0].bearing_rad) == pytest.approx(45.0)


def test_units_as_users_write_them(minimal_text):
    text = minimal_text.replace('height = "20 m"', 'height = "65.6 ft"').replace('"1.83 MHz"', '"1830 kHz"')
    sc = load(text)
    assert sc.reference.height_m == pytest.approx(19.995, abs=1e-3)
    assert sc.freq_hz == pytest.approx(1.83e6)


def test_default_reference_is_quarter_wave_vertical(minimal_text):
    text = minimal_text.replace('[reference]\nfamily = "vertical"\nheight = "20 m"\n', "")
    sc = load(text)
    assert sc.reference.family == "vertical"
    assert sc.reference.height_m == pytest.approx(299792458 / 1.83e6 / 4, abs=1e-3)


def test_site_ground_reaches_antennas(minimal_text):
    sc = load(minimal_text.replace('ground = "moist loam"', 'ground = { conductivity = "30 mS/m", permittivity = 20 }'))
    assert sc.reference.ground.conductivity_s_per_m == pytest.approx(0.03)


def _problems(text, tmp_path=None, name="s.toml"):
    if tmp_path is not None:
        p = tmp_path / name
        p.write_text(text)
        text = p
    with pytest.raises(ScenarioError) as exc:
        load(text)
    return exc.value


def test_error_names_file_field_value_and_range(tmp_path, minimal_text):
    err = _problems(minimal_text.replace('"1.83 MHz"', '"183 MHz"'), tmp_path, "my-site.toml")
    msg = str(err)
    assert "my-site.toml" in msg
    assert "band.frequency" in msg
    assert '"183 MHz"' in msg
    assert "0.1 MHz" in msg and "30 MHz" in msg


def test_unknown_keys_are_errors(minimal_text):
    err = _problems(minimal_text.replace("[band]", "[band]\nfrequncy = 3"))
    # a near miss of a key of the project's tables is named (a tester's "lenght" got no hint); others are not
    assert ("band.frequncy", "unknown key (did you mean 'frequency'?)") in err.problems
    err = _problems(minimal_text.replace("[band]", "[band]\nzzz = 3"))
    assert ("band.zzz", "unknown key (check its spelling)") in err.problems
    err = _problems(minimal_text + "\n[sitee]\nx = 1\n")
    assert any(p == "sitee" for p, _ in err.problems)


def test_every_problem_reported_at_once(minimal_text):
    text = (
        minimal_text.replace('"500 Hz"', '"500"')
        .replace('height = "20 m"', 'height = "-2 m"')
        .replace("months = [1]", "months = [13]")
    )
    err = _problems(text)
    paths = {p for p, _ in err.problems}
    assert {"band.bandwidth", "reference.height", "time.months"} <= paths


def test_candidate_problems_carry_their_index(minimal_text):
    text = minimal_text + '\n[[candidate]]\nname = "v"\nfamily = "vertical"\nheight = 7\n'
    err = _problems(text)
    # Items count from 1 and carry their name: the second candidate is "v".
    assert any(p == 'candidate 2 ("v").height' and "bare number" in m for p, m in err.problems)


def test_duplicate_and_missing_candidate_names(minimal_text):
    err = _problems(minimal_text + '\n[[candidate]]\nname = "iso"\nfamily = "isotropic"\n')
    assert any("used twice" in m for _, m in err.problems)
    err = _problems(minimal_text + '\n[[candidate]]\nfamily = "isotropic"\n')
    assert any("needs a name" in m for _, m in err.problems)


def test_target_needs_one_way(minimal_text):
    err = _problems(minimal_text.replace("bearing = 45", "bearing = 45\nlatitude = 10\nlongitude = 10"))
    assert any("either bearing" in m for _, m in err.problems)


def test_local_source_needs_exactly_one_level(minimal_text):
    text = minimal_text + '\n[[noise.local]]\nname = "n"\nbearing = 90\nlevel = "S7"\nfa = 40\n'
    err = _problems(text)
    assert any("exactly one of level" in m for _, m in err.problems)
    err = _problems(minimal_text + '\n[[noise.local]]\nname = "n"\nbearing = 90\nlevel = "S12"\n')
    assert any('noise.local 1 ("n").level' == p for p, _ in err.problems)


def test_s_units_and_dbm_levels(minimal_text):
    for level in ('"S7"', '"S9+10"', '"-95 dBm"'):
        sc = load(minimal_text + f'\n[[noise.local]]\nname = "n"\nbearing = 90\nlevel = {level}\n')
        assert sc.noise.local[0].level_dbm in (-85.0, -63.0, -95.0)


def test_man_made_choices_listed(minimal_text):
    err = _problems(minimal_text + '\n[noise.man_made]\nenvironment = "suburban"\n')
    msg = str(err)
    assert "noise.man_made.environment" in msg and "'quiet rural'" in msg


def test_atmospheric_given_needs_fa(minimal_text):
    err = _problems(minimal_text + '\n[noise.atmospheric]\nmodel = "given"\n')
    assert any("needs fa" in m for _, m in err.problems)


def test_not_toml_and_missing_file(tmp_path):
    err = _problems("this is = not [toml", tmp_path)
    assert "not valid TOML" in str(err)
    with pytest.raises(ScenarioError, match="cannot read the file"):
        load(tmp_path / "absent.toml")


def test_pattern_file_relative_to_scenario():
    sc = load(SCENARIOS / "alder-hollow.toml")
    assert any(a.family == "tabulated" for a in sc.candidates)


# -- malformed scenarios never give a traceback --------------------------------

BASE = tomllib.loads(MINIMAL)

junk = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(-(10**6), 10**6),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=12),
    st.sampled_from(["1.83 MHz", "-5 m", "S7", "5 mS/m", "400 ft", "abc", "1e999 Hz", ""]),
    st.lists(st.integers(-50, 50), max_size=3),
    st.dictionaries(st.text(max_size=5), st.integers(), max_size=2),
)


def _leaves(d, path=()):
    if isinstance(d, dict):
        for k, v in d.items():
            yield from _leaves(v, path + (k,))
    elif isinstance(d, list) and d and isinstance(d[0], dict):
        for i, v in enumerate(d):
            yield from _leaves(v, path + (i,))
    else:
        yield path


LEAVES = list(_leaves(BASE))


def _set(d, path, value):
    for k in path[:-1]:
        d = d[k]
    if value is _DELETE:
        del d[path[-1]]
    else:
        d[path[-1]] = value


_DELETE = object()


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    edits=st.lists(st.tuples(st.sampled_from(LEAVES), st.one_of(junk, st.just(_DELETE))), min_size=1, max_size=4),
    extra=st.one_of(
        st.none(), st.tuples(st.sampled_from(["site", "band", "time", ""]), st.text(min_size=1, max_size=6))
    ),
)
def test_malformed_scenarios_give_clear_errors(edits, extra):
    data = copy.deepcopy(BASE)
    for path, value in edits:
        try:
            _set(data, path, value)
        except (KeyError, TypeError, IndexError):
            pass
    if extra is not None:
        section, key = extra
        target = data.get(section, data) if section else data
        if isinstance(target, dict) and key not in target:
            target[key] = 1
    try:
        load(data)
    except ScenarioError as exc:
        assert exc.problems
        for _path, msg in exc.problems:
            assert isinstance(msg, str) and msg
