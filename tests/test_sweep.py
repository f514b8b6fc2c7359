"""Design sweeps: the --vary syntax, the shared fast path against full runs, Dask against one process, output."""

import csv
import time

import pytest
from click.testing import CliRunner

from snrgain.cli.main import cli
from snrgain.scenario import read_source
from snrgain.tools import sweep as sw
from tests.conftest import SCENARIOS

DEMO = SCENARIOS / "alder-hollow.toml"


def _study(*varies, spread=False):
    data, label, base = read_source(DEMO)
    return sw.Study(data, label, str(base), [sw.parse_vary(v) for v in varies], spread=spread)


def test_parse_ranges_and_lists():
    v = sw.parse_vary("Beverage toward Europe: length = 150 m to 350 m by 10 m")
    assert len(v.values) == 21 and v.values[0] == "150 m" and v.values[-1] == "350 m"
    assert v.column == "Beverage toward Europe: length [m]" and v.column_values[-1] == 350.0
    assert sw.parse_vary("x: termination = 600 to 400 by -100").values == [600, 500, 400]
    assert sw.parse_vary("site: ground = sandy soil, moist loam").values == ["sandy soil", "moist loam"]
    assert sw.parse_vary("time: utc_hours = 2, 4").values == [[2], [4]]


@pytest.mark.parametrize(
    "text, says",
    [
        ("Beverage: length = 150 m to 350 m by 0 m", "must not be zero"),
        ("Beverage: length = 100 m to 200 m by 1e400 m", "step '1e400 m' is not a finite number"),
        ("Beverage: length = 1e400 m to 2e400 m by 1 m", "start '1e400 m' is not a finite number"),
        ("Beverage: length = 1 m to nan m by 1 m", "cannot read the range's stop 'nan m'"),
        ("Beverage: length = 150 m to 350 m by -10 m", "empty"),
        ("Beverage: length = 350 m to 150 m by 10 m", "empty"),
        ("Beverage: length = 150 m to 350 ft by 10 m", "one unit"),
        ("Beverage: length =", "no values"),
        ("length = 150 m", "TABLE: KEY = VALUES"),
        ("Beverage: length = 150 m to 350 m", "START to STOP by STEP"),
    ],
)
def test_bad_vary_is_named(text, says):
    with pytest.raises(sw.VaryError, match=says) as info:
        sw.parse_vary(text)
    assert text in str(info.value)


@pytest.mark.parametrize(
    "vary, says",
    [
        ("nobody: length = 100 m, 200 m", "no candidate named 'nobody'; the candidates are"),
        # a near miss is named; a target is said to be one (it said "no candidate named 'Europe'")
        ("Beverage toward Europa: length = 100 m", "(did you mean 'Beverage toward Europe'?)"),
        ("Europe: bearing = 10, 20", "'Europe' is a target: a sweep varies the antennas"),
        ("Beverage toward Europe: lenght = 100 m, 200 m", "unknown key"),
        ("Beverage toward Europe: length = 1000 m to 5000 m by 4000 m", "5000 m"),
        ("site: ground = moist loam, marsh", "marsh"),
    ],
)
def test_bad_vary_is_exit_2(tmp_path, vary, says):
    out = tmp_path / "s.csv"
    res = CliRunner().invoke(cli, ["sweep", str(DEMO), "--vary", vary, "-o", str(out)])
    assert res.exit_code == 2, res.output
    assert vary in res.stderr and says in res.stderr
    assert res.stderr.count(vary) == 1  # the argument said once (a key's check repeated it inside its own message)
    assert not out.exists()
    # every --vary is checked before anything is printed: it said "sweep: 2 designs" first
    assert res.stderr.startswith(f"snrgain: --vary {vary!r}") and res.stdout == "", res.stderr


def test_the_vary_that_breaks_the_first_design_is_the_one_named(tmp_path):
    # Two --vary: a good length and an unknown key.  The unknown key was laid on the length ("--vary '... length =
    # 100 m, 200 m': with '100 m' the scenario is invalid: ... colour: unknown key"), after the header was printed.
    good, bad = "Beverage toward Europe: length = 100 m, 200 m", "Beverage toward Europe: colour = red"
    out = tmp_path / "s.csv"
    res = CliRunner().invoke(cli, ["sweep", str(DEMO), "--vary", good, "--vary", bad, "-o", str(out)])
    assert res.exit_code == 2, res.output
    assert res.stderr.startswith(f"snrgain: --vary {bad!r}: with 'red' the scenario is invalid")
    assert "colour: unknown key" in res.stderr and good not in res.stderr and not out.exists()


def test_fast_path_equals_full_runs(monkeypatch):
    study = _study(
        "Beverage toward Europe: length = 180 m to 300 m by 60 m", "BOG toward Europe: termination = 200, 400"
    )
    assert study.fast
    chunk = list(enumerate(sw.designs(study.varies)))
    fast = sw.run_designs(study, chunk)
    monkeypatch.setattr(sw.Study, "fast", property(lambda self: False))
    full = sw.run_designs(study, chunk)
    assert len(fast) == len(full) == 6 * 2 * 2  # designs x varied antennas x targets
    for a, b in zip(fast, full):
        assert a.keys() == b.keys()
        for k in a:
            if isinstance(a[k], float):
                assert a[k] == pytest.approx(b[k], abs=1e-9), k
            else:
                assert a[k] == b[k], k


def test_sweep_command_writes_a_tidy_csv(tmp_path):
    out = tmp_path / "s.csv"
    res = CliRunner().invoke(
        cli, ["sweep", str(DEMO), "--vary", "Beverage toward Europe: height = 2 m to 4 m by 1 m", "-o", str(out)]
    )
    assert res.exit_code == 0, res.output
    rows = list(csv.DictReader(out.open()))
    assert len(rows) == 3 * 2
    assert rows[0]["Beverage toward Europe: height [m]"] == "2.0" and rows[0]["antenna"] == "Beverage toward Europe"
    assert {r["target"] for r in rows} == {"Europe", "South America"}
    # It refuses to overwrite.
    again = CliRunner().invoke(
        cli, ["sweep", str(DEMO), "--vary", "Beverage toward Europe: height = 2 m, 3 m", "-o", str(out)]
    )
    assert again.exit_code == 2 and "--overwrite" in again.stderr


def test_parquet_and_spread(tmp_path):
    pq = pytest.importorskip("pyarrow.parquet")
    out = tmp_path / "s.parquet"
    res = CliRunner().invoke(cli, ["sweep", str(DEMO), "--vary", "time: months = 1, 12", "--spread", "-o", str(out)])
    assert res.exit_code == 0, res.output
    table = pq.read_table(out).to_pylist()
    assert len(table) == 2 * 5 * 2  # designs x candidates (a scenario key: all of them) x targets
    assert all(r["snr_gain_p10_db"] <= r["snr_gain_median_db"] <= r["snr_gain_p90_db"] for r in table)


def test_dask_local_cluster_equals_one_process(tmp_path):
    pytest.importorskip("distributed")
    study = _study("Beverage toward Europe: length = 150 m to 330 m by 20 m")
    one, two = tmp_path / "one.csv", tmp_path / "two.csv"
    sw.run(study, one, chunk_designs=3)
    sw.run(study, two, dask="local", chunk_designs=3)
    a, b = list(csv.DictReader(one.open())), list(csv.DictReader(two.open()))
    assert len(a) == len(b) == 10 * 2
    for ra, rb in zip(a, b):
        for k in ra:
            try:
                assert float(ra[k]) == pytest.approx(float(rb[k]), abs=1e-9), k
            except ValueError:
                assert ra[k] == rb[k]


def test_unreachable_scheduler_fails_fast(tmp_path):
    pytest.importorskip("distributed")
    t0 = time.perf_counter()
    res = CliRunner().invoke(
        cli,
        [
            "sweep",
            str(DEMO),
            "--vary",
            "Beverage toward Europe: height = 2 m, 3 m",
            "--dask",
            "tcp://127.0.0.1:9",
            "-o",
            str(tmp_path / "s.csv"),
        ],
    )
    assert time.perf_counter() - t0 < 10.0
    assert res.exit_code == 2 and "--dask" in res.stderr and "scheduler" in res.stderr
    assert not (tmp_path / "s.csv").exists()


def test_designs_are_lazy():
    varies = [sw.parse_vary("a: x = 1 to 1000 by 1"), sw.parse_vary("a: y = 1 to 1000 by 1")]
    assert sw.design_count(varies) == 1_000_000
    first = next(iter(sw.designs(varies)))
    assert first == (1.0, 1.0)


def test_chunks_sized_from_the_work_per_design_not_the_shared_set_up(monkeypatch, tmp_path):
    # The first design also builds the shared sky and reference; were its time the measure, every chunk would
    # hold one design.  Here it takes 2 s more, beyond a chunk's 0.6 s of work, and the designs after it nothing
    # more (each well under 0.3 s, even on a busy machine): they run in few chunks.
    study = _study("Beverage toward Europe: length = 150 m to 330 m by 20 m")
    real, calls = sw.run_designs, []

    def timed(st, chunk):
        calls.append(len(chunk))
        if len(calls) == 1:
            time.sleep(2.0)
        return real(st, chunk)

    monkeypatch.setattr(sw, "run_designs", timed)
    monkeypatch.setattr(sw, "TARGET_CHUNK_S", 0.6)
    out = tmp_path / "s.csv"
    sw.run(study, out)
    assert sum(calls) == 10 and len(calls) < 10, calls
    assert len(list(csv.DictReader(out.open()))) == 10 * 2


def test_cluster_chunks_are_larger_yet_several_per_worker(monkeypatch, tmp_path):
    # On a cluster each task costs the scheduler and the worker a few milliseconds: chunks hold up to
    # TARGET_DASK_CHUNK_S of work, yet every worker gets CHUNKS_PER_WORKER of them (here the share binds).
    study = _study("Beverage toward Europe: length = 150 m to 399 m by 2 m")  # 125 designs
    sizes = []

    class Client:  # what run asks of a client: its workers
        def scheduler_info(self):
            return {"workers": {"tcp://a": {}, "tcp://b": {}}}

    def on_dask(st, chunks, client):
        for block in chunks:
            sizes.append(len(block))
            yield len(block), sw.run_designs(st, block)

    monkeypatch.setattr(sw, "connect", lambda address: Client())
    monkeypatch.setattr(sw, "close", lambda client: None)
    monkeypatch.setattr(sw, "_on_dask", on_dask)
    monkeypatch.setattr(sw, "TARGET_CHUNK_S", 1e-6)  # in one process: a design a chunk
    monkeypatch.setattr(sw, "TARGET_DASK_CHUNK_S", 100.0)
    out = tmp_path / "s.csv"
    sw.run(study, out, dask="tcp://fake:1")
    share = -(-sum(sizes) // (2 * sw.CHUNKS_PER_WORKER))  # the designs after those timed in this process
    assert sizes[:-1] == [share] * (len(sizes) - 1) and 1 <= sizes[-1] <= share, sizes
    assert 2 * sw.CHUNKS_PER_WORKER - 1 <= len(sizes) <= 2 * sw.CHUNKS_PER_WORKER, sizes
    assert len(list(csv.DictReader(out.open()))) == 125 * 2


def test_a_sweep_may_rename_a_candidate_and_a_long_one_is_asked_for(tmp_path):
    # Issue 28: `--vary 'X: name = a, b'` ended in a StopIteration traceback; a million designs ran silently.
    out = tmp_path / "n.csv"
    res = CliRunner().invoke(cli, ["sweep", str(DEMO), "--vary", "Beverage toward Europe: name = a, b", "-o", str(out)])
    assert res.exit_code == 0, res.output
    rows = list(csv.DictReader(out.open()))
    assert {r["antenna"] for r in rows} == {"a", "b"} and "sweep: 2 designs" in res.output
    big = ["--vary", "Beverage toward Europe: length = 100 m to 1099.999 m by 0.001 m"]
    res = CliRunner().invoke(cli, ["sweep", str(DEMO), *big, "-o", str(tmp_path / "big.csv")])
    assert res.exit_code == 2 and "--allow-long" in res.output and not (tmp_path / "big.csv").exists()


FEED_SCENARIO = """
[site]
name = "test lot"
latitude = 44.2
longitude = -71.3
ground = "moist loam"

[band]
frequency = "1.83 MHz"

[time]
months = [1]
utc_hours = [4]

[[noise.local]]
name = "supply"
position = ["10 m", "75 m"]
height = "1 m"
level = "S9"

[[target]]
name = "Europe"
bearing = 45
elevation = [10, 25]

[reference]
family = "vertical"
height = "40 m"

[[candidate]]
name = "bev"
family = "beverage"
length = "200 m"
height = "2 m"
bearing = 45
position = ["0 m", "150 m"]
termination = "500 ohm"
feed_line = { to = ["0 m", "0 m"], height = "1 m" }

[[candidate]]
name = "other"
family = "beverage"
length = "150 m"
height = "2 m"
bearing = 90
position = ["-100 m", "-50 m"]
"""


def _feed_study(tmp_path, *varies):
    path = tmp_path / "feed.toml"
    path.write_text(FEED_SCENARIO)
    data, label, base = read_source(path)
    return path, sw.Study(data, label, str(base), [sw.parse_vary(v) for v in varies])


def _same_rows(a_rows, b_rows):
    assert len(a_rows) == len(b_rows)
    for a, b in zip(a_rows, b_rows):
        assert a.keys() == b.keys()
        for k in a:
            if isinstance(a[k], float):
                assert a[k] == pytest.approx(b[k], abs=1e-9), k
            else:
                assert a[k] == b[k], k


def test_a_candidate_with_a_feed_line_sweeps_as_rank_scores_it(tmp_path, monkeypatch):
    # A candidate's own keys varied with its feed_line table there: the shared fast path scores the design with the
    # line (its run starting where the design stands), as a full run and rank do; the file's own design is rank's.
    import snrgain

    path, study = _feed_study(tmp_path, "bev: termination = 400, 500")
    # the design moved too (its feed line's run then starts where it stands); a list value, so made here
    study.varies.append(sw.Vary("bev: position", "bev", "position", [[0, 150], [0, 140]], "bev: position", [150, 140]))
    assert study.fast
    chunk = list(enumerate(sw.designs(study.varies)))
    fast = sw.run_designs(study, chunk)
    monkeypatch.setattr(sw.Study, "fast", property(lambda self: False))
    full = sw.run_designs(study, chunk)
    monkeypatch.undo()
    _same_rows(fast, full)
    ranked = {c.name: c for c in snrgain.evaluate(path).candidates}["bev"]
    own = [r for r in fast if r["bev: termination"] == 500 and r["design"] == 2]
    assert own and own[0]["snr_gain_db"] == pytest.approx(float(ranked.snr_gain_nominal_db[0]), abs=1e-9)
    # the line is scored: without it the same design gains otherwise
    bare_data = {
        **study.data,
        "candidate": [{k: v for k, v in c.items() if k != "feed_line"} for c in study.data["candidate"]],
    }
    bare = sw.run_designs(sw.Study(bare_data, study.label, study.base_dir, study.varies), chunk)
    assert abs(bare[2]["snr_gain_db"] - own[0]["snr_gain_db"]) > 0.5
    # a feed line's own key varied: every design in full
    out = tmp_path / "s.csv"
    res = CliRunner().invoke(
        cli, ["sweep", str(path), "--vary", "bev: feed_line.isolation = shared-ground, transformer", "-o", str(out)]
    )
    assert res.exit_code == 0, res.output
    rows = list(csv.DictReader(out.open()))
    assert [r["antenna"] for r in rows] == ["bev", "bev"]
    assert float(rows[1]["snr_gain_db"]) > float(rows[0]["snr_gain_db"]) + 0.5


def test_sweep_takes_another_reference_with_a_placed_level(tmp_path):
    # The placed source's level stays read on the file's reference (snrgain.model.pipeline.resolve_sources): the
    # sweep runs against another reference, the file's own design as rank --reference scores it.
    import snrgain

    path, study = _feed_study(tmp_path, "bev: termination = 400, 500")
    study.reference = "other"
    assert study.fast
    rows = sw.run_designs(study, list(enumerate(sw.designs(study.varies))))
    ranked = {c.name: c for c in snrgain.evaluate(snrgain.load(path, reference="other")).candidates}["bev"]
    assert rows[1]["snr_gain_db"] == pytest.approx(float(ranked.snr_gain_nominal_db[0]), abs=1e-9)
    out = tmp_path / "s.csv"
    vary = "bev: termination = 400, 500"
    res = CliRunner().invoke(cli, ["sweep", str(path), "--reference", "other", "--vary", vary, "-o", str(out)])
    assert res.exit_code == 0, res.output
    # a problem of the scenario itself is said as rank says it, not blamed on a varied value
    bad = tmp_path / "bad.csv"
    res = CliRunner().invoke(cli, ["sweep", str(path), "--reference", "nobody", "--vary", vary, "-o", str(bad)])
    assert res.exit_code == 2
    assert "--reference: no antenna named 'nobody'" in res.stderr and "--vary" not in res.stderr and not bad.exists()


@pytest.mark.parametrize("kind", ["silent", "garbage"])
def test_dask_at_a_listener_that_is_no_scheduler_says_so_in_time(kind):
    # a port that accepts but never speaks kept the client waiting without end; one that answers with other bytes
    # (an HTTP server) gave a MemoryError traceback (its bytes read as a message length of exabytes)
    pytest.importorskip("distributed")
    import socket
    import threading
    import time

    from snrgain.tools.sweep import connect

    server = socket.socket()
    server.bind(("127.0.0.1", 0))
    server.listen(4)
    held = []

    def serve():
        while True:
            try:
                c, _ = server.accept()
            except OSError:
                return
            held.append(c)
            if kind == "garbage":
                c.sendall(b"HTTP/1.1 400 Bad Request\r\nContent-Length: 0\r\n\r\n")
                c.close()

    threading.Thread(target=serve, daemon=True).start()
    address = f"tcp://127.0.0.1:{server.getsockname()[1]}"
    t = time.perf_counter()
    try:
        with pytest.raises(ValueError, match=f"--dask '{address}': "):
            connect(address, timeout_s=1.0)
    finally:
        server.close()
        for c in held:
            c.close()
    assert time.perf_counter() - t < 30.0


def test_rows_say_where_a_design_does_not_fit_the_site():
    # The demo's lot is 250 m x 240 m: a 300 m Beverage from its feed point toward 45 deg leaves it, and one turned
    # north crosses the Beverage toward South America (what check says of such a scenario, snrgain.decide.lot).  The
    # shared fast path and full runs say the same.
    study = _study("Beverage toward Europe: length = 180 m, 300 m", "Beverage toward Europe: bearing = 45, 0")
    chunk = list(enumerate(sw.designs(study.varies)))
    rows = sw.run_designs(study, chunk)
    said = {
        (r["Beverage toward Europe: length [m]"], r["Beverage toward Europe: bearing"]): r["placement_warnings"]
        for r in rows
    }
    assert said == {
        (180.0, 45): "",
        (180.0, 0): "wires-cross",
        (300.0, 45): "off-lot",
        (300.0, 0): "off-lot; wires-cross",
    }
    full = _study("site: ground = moist loam", "Beverage toward Europe: length = 300 m")
    assert not full.fast
    rows = sw.run_designs(full, list(enumerate(sw.designs(full.varies))))
    by = {r["antenna"]: r["placement_warnings"] for r in rows}
    assert by == {"Beverage toward Europe": "off-lot"}


def test_a_listed_quantity_is_a_number_with_its_unit_in_the_header(tmp_path):
    # A reviewer's sweep wrote the range-swept length as "...: length [m]" with numbers, the list-swept height as
    # "...: height" with text cells ("1 m"), which a spreadsheet cannot plot.  Both are numbers now, the unit in the
    # header; values that are not quantities stay text.
    v = sw.parse_vary("Beverage toward Europe: height = 1 m, 2 m, 3 m")
    assert v.column == "Beverage toward Europe: height [m]" and v.column_values == [1.0, 2.0, 3.0]
    assert v.values == ["1 m", "2 m", "3 m"]  # the scenario still reads them as written
    mixed = sw.parse_vary("x: height = 2 m, 10 ft")  # units of one kind mixed: the SI unit
    assert mixed.column == "x: height [m]" and mixed.column_values == pytest.approx([2.0, 3.048])
    assert sw.parse_vary("x: bearing = 10 deg, 0.5 rad").column_values == pytest.approx([10.0, 28.6478898])
    texts = ("x: termination = auto, 100 ohm", "x: family = bog, beverage", "site: name = 5 Oaks Farm, 7 Oaks")
    for text, cells in zip(texts, (["auto", "100 ohm"], None, ["5 Oaks Farm", "7 Oaks"])):
        t = sw.parse_vary(text)
        assert "[" not in t.column and t.column_values == (cells or t.values)
    out = tmp_path / "s.csv"
    args = ["sweep", str(DEMO), "-o", str(out), "--vary", "Beverage toward Europe: length = 150 m to 200 m by 50 m"]
    res = CliRunner().invoke(cli, [*args, "--vary", "Beverage toward Europe: height = 1 m, 2 m"])
    assert res.exit_code == 0, res.output
    rows = list(csv.DictReader(out.open()))
    assert [float(r["Beverage toward Europe: height [m]"]) for r in rows[::2]] == [1.0, 2.0, 1.0, 2.0]
    assert {float(r["Beverage toward Europe: length [m]"]) for r in rows} == {150.0, 200.0}
    # one key varied twice is refused though its two columns are named in two units
    twice = CliRunner().invoke(cli, [*args, "--overwrite", "--vary", "Beverage toward Europe: length = 600 ft, 700 ft"])
    assert twice.exit_code == 2 and "Beverage toward Europe: length is varied twice" in twice.stderr


# A list key (time.months, time.utc_hours) takes a bracketed list as one value: "months = [12, 1], [6, 7]" was each
# wrapped once more ([[12, 1]]) and refused as "time.months 1: expected a whole number; got [12, 1]".


def test_a_list_key_takes_bracketed_lists_as_values():
    v = sw.parse_vary("time: months = [12, 1], [6, 7]")
    assert v.values == [[12, 1], [6, 7]] and v.column == "time: months" and v.column_values == [[12, 1], [6, 7]]
    assert sw.parse_vary("time: utc_hours = [0, 2], [4, 6]").values == [[0, 2], [4, 6]]
    # a bare number beside a list is a list of one, and its cell says so
    mixed = sw.parse_vary("time: months = [12, 1], 6")
    assert mixed.values == [[12, 1], [6]] and mixed.column_values == [[12, 1], [6]]
    # bare numbers alone: one month a design, the column the numbers; a range's months whole, as a file writes them
    assert sw.parse_vary("time: months = 1, 7").column_values == [1, 7]
    ranged = sw.parse_vary("time: months = 1 to 3 by 1")
    assert ranged.values == [[1], [2], [3]] and all(type(m[0]) is int for m in ranged.values)
    data = sw.apply({"time": {"months": [1]}}, [v], [[12, 1]])
    assert data["time"]["months"] == [12, 1]


@pytest.mark.parametrize(
    "text, says",
    [
        ("time: months = dec, jan", "time.months takes a list of months, and 'dec' is neither one month nor a list"),
        ("time: utc_hours = 0 2, [4, 6]", "write one hour a design (0, 12) or each design's hours in brackets"),
        ("time: months = [12 1]", "cannot read '[12 1]' as a list: write it as in the scenario, e.g. [12, 1]"),
    ],
)
def test_a_list_key_given_what_is_no_list_is_told_both_forms(text, says):
    with pytest.raises(sw.VaryError) as info:
        sw.parse_vary(text)
    assert says in str(info.value) and text in str(info.value)


def test_a_sweep_of_month_lists_writes_them_as_the_scenario_does(tmp_path):
    out = tmp_path / "m.csv"
    res = CliRunner().invoke(cli, ["sweep", str(DEMO), "--vary", "time: months = [12, 1], [6, 7]", "-o", str(out)])
    assert res.exit_code == 0, res.output
    rows = list(csv.DictReader(out.open()))
    assert [r["time: months"] for r in rows if r["design"] == "0"][0] == "[12, 1]"
    assert {r["time: months"] for r in rows} == {"[12, 1]", "[6, 7]"}
    # a position of lengths is written as the scenario writes it, not as Python's repr (['0 m', ...])
    assert sw.csv_cell(["0 m", "150 m"]) == '["0 m", "150 m"]' and sw.csv_cell([0, 40]) == "[0, 40]"
