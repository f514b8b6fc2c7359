"""Small values kept in the persistent cache (noisemodels.skycache.remembered): read back by a later run exactly as
computed, at most SMALL_WRITES written per kind and process, off with the cache; the loop's static constants
(snrgain.antennas.termloop) through it."""

import numpy as np
import pytest

from noisemodels import skycache


@pytest.fixture
def cache_dir(tmp_path, monkeypatch):
    monkeypatch.setenv(skycache.ENV_DIR, str(tmp_path))
    monkeypatch.delenv(skycache.ENV_OFF, raising=False)
    monkeypatch.setattr(skycache, "_small_writes", {})
    return skycache.folder()


def test_a_value_is_computed_once_then_read_back(cache_dir):
    calls = []

    def compute():
        calls.append(1)
        return np.array([1.0 / 3.0, -0.0, 2e-300])

    first = skycache.remembered("test", {"a": 1}, compute)
    again = skycache.remembered("test", {"a": 1}, compute)
    assert len(calls) == 1
    assert first.tobytes() == again.tobytes()  # to the bit, the sign of zero included
    assert len(list(cache_dir.glob("test-*.npy"))) == 1 and not list(cache_dir.glob(".tmp-*"))
    skycache.remembered("test", {"a": 2}, compute)  # another key is another entry
    assert len(calls) == 2


def test_writes_per_kind_are_bounded(cache_dir, monkeypatch):
    monkeypatch.setattr(skycache, "SMALL_WRITES", 3)
    for i in range(5):
        assert skycache.remembered("few", {"i": i}, lambda i=i: np.array([float(i)]))[0] == i
    assert len(list(cache_dir.glob("few-*.npy"))) == 3
    skycache.remembered("other", {"i": 0}, lambda: np.array([0.0]))  # each kind has its own count
    assert len(list(cache_dir.glob("other-*.npy"))) == 1


def test_off_or_damaged_is_computed(cache_dir, monkeypatch):
    monkeypatch.setenv(skycache.ENV_OFF, "1")
    assert skycache.remembered("test", {"a": 1}, lambda: np.array([5.0]))[0] == 5.0
    assert not cache_dir.exists() or not list(cache_dir.iterdir())
    monkeypatch.setenv(skycache.ENV_OFF, "0")
    skycache.remembered("test", {"a": 1}, lambda: np.array([5.0]))
    (entry,) = cache_dir.glob("test-*.npy")
    entry.write_bytes(b"\x93NUMPY garbage")
    assert skycache.remembered("test", {"a": 1}, lambda: np.array([6.0]))[0] == 6.0


def test_code_digest_follows_the_files(tmp_path):
    f = tmp_path / "m.py"
    f.write_text("x = 1\n")
    one = skycache.code_digest(f)
    g = tmp_path / "n.py"
    g.write_text("x = 2\n")
    assert skycache.code_digest(g) != one and skycache.code_digest(f) == one
    assert skycache.code_digest(tmp_path / "missing.py") != one


def test_loop_constants_read_back_equal_the_solution(cache_dir, monkeypatch):
    from snrgain.antennas import termloop

    upper, lower = termloop.loop_polygon("rectangle", 8.0, 4.0, 1.5)
    key = (termloop._key(upper), termloop._key(lower), 0.001, -0.93)
    termloop._loop_constants.cache_clear()
    solved = termloop._solve_loop_constants(*key)
    first = termloop._loop_constants(*key)
    assert first == solved
    termloop._loop_constants.cache_clear()

    def no_solve(*a):
        raise AssertionError("solved again")

    monkeypatch.setattr(termloop, "_solve_loop_constants", no_solve)
    assert termloop._loop_constants(*key) == solved  # read back, to the bit
    termloop._loop_constants.cache_clear()


def test_wire_modes_read_back_equal_the_solver(cache_dir, monkeypatch):
    from snrgain.physics import lines, modal
    from snrgain.physics.ground import Ground

    loam = Ground(0.005, 13.0, "moist loam")

    def constants():
        return lines.overhead_wire(1.83e6, radius_m=0.001, height_m=2.5, ground=loam), lines.insulated_on_ground(
            1.83e6, radius_m=0.0008, insulation_radius_m=0.0016, insulation_permittivity=3.5, ground=loam
        )

    lines._mode.cache_clear()
    modal.wire_over_earth.cache_clear()
    first = constants()
    assert len(list(cache_dir.glob("wiremode-*.npy"))) == 2
    lines._mode.cache_clear()

    def no_solve(*a):
        raise AssertionError("solved again")

    monkeypatch.setattr(modal, "wire_over_earth", no_solve)
    again = constants()
    for a, b in zip(first, again):
        assert a == b  # to the bit
    lines._mode.cache_clear()


def test_thin_wire_current_read_back_equals_the_solution(cache_dir, monkeypatch):
    from snrgain.antennas import vertical

    args = (1.83e6, 6.0, 0.0125, complex(0.91, -0.02))
    vertical._CURRENTS.clear()
    z0, i0 = vertical.thin_wire_current(*args)
    np.testing.assert_array_equal(i0, vertical._solve_current(*args, len(z0)))
    vertical._CURRENTS.clear()

    def no_solve(*a):
        raise AssertionError("solved again")

    monkeypatch.setattr(vertical, "_solve_current", no_solve)
    z1, i1 = vertical.thin_wire_current(*args)
    assert z1.tobytes() == z0.tobytes() and i1.tobytes() == i0.tobytes()
    vertical._CURRENTS.clear()
