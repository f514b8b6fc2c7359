"""The report's size foreseen: its figures counted before any work, a report past the limits refused unless asked.

A report of 64 targets and 64 candidates drew 131 figures with 65 antennas in each pattern and wrote an 86 MB page in
62-170 s with 1.3 GB of memory, with no word of it (rank of the same file: 7 s)."""

import pytest
from click.testing import CliRunner

import snrgain
from snrgain.cli.main import cli
from snrgain.outputs import plots, report, reportsize
from tests.conftest import SCENARIOS

ALDER = SCENARIOS / "alder-hollow.toml"


def _wide(targets: int, candidates: int) -> str:
    """A scenario of many targets by bearing and many small candidates (quick to load)."""
    parts = [
        '[site]\nname = "Wide Acre (invented)"\nlatitude = 44.2\nlongitude = -72.6\nground = "moist loam"\n',
        '[band]\nfrequency = "1.83 MHz"\nbandwidth = "500 Hz"\n',
        "[time]\nmonths = [1]\nutc_hours = [2]\n",
        '[noise.man_made]\nenvironment = "rural"\n',
    ]
    parts += [f'[[target]]\nname = "t{i}"\nbearing = {i * 5}\nelevation = [5, 20]\n' for i in range(targets)]
    parts.append('[reference]\nname = "TX vertical"\nfamily = "vertical"\nheight = "20 m"\n')
    parts += [f'[[candidate]]\nname = "c{i}"\nfamily = "isotropic"\n' for i in range(candidates)]
    return "\n".join(parts)


def test_the_estimate_counts_the_figures_the_report_draws():
    from snrgain.cli.report import _load

    sc, plan = _load(ALDER, nside=None, p372_dir=None)
    r = snrgain.evaluate(sc)
    makers = report.figure_makers(r, plan=plan)
    name_of = {fn: name for name, fn in plots.FIGURES.items()}
    drawn: dict[str, int] = {}
    for _, make, _ in makers:
        drawn[name_of[make.func]] = drawn.get(name_of[make.func], 0) + 1
    assert drawn == reportsize.figure_counts(len(r.targets), plots.has_site_plan(r, plan=plan))
    s = reportsize.report_size(len(r.targets), 1 + len(r.candidates), True)
    assert s.figures == len(makers) == 2 * 2 + 4


def test_the_estimate_of_the_measured_reports():
    # measured on this project's 2-core machine (snrgain.outputs.reportsize): pages of 7.1, 28.0 and 86.8 MB
    for targets, antennas, mb in ((4, 64, 7.1), (32, 33, 28.0), (64, 65, 86.8)):
        s = reportsize.report_size(targets, antennas, False)
        assert s.page_bytes / 1e6 == pytest.approx(mb, rel=0.1)
    big = reportsize.report_size(64, 65, False)
    assert big.figures == 131 and 60 < big.seconds < 100 and 1.2e9 < big.memory_bytes < 1.6e9
    assert not big.fits and reportsize.report_size(32, 33, False).fits


def test_a_report_past_the_limits_is_refused_before_any_work(tmp_path, monkeypatch):
    from snrgain.model import pipeline

    def never(*args, **kwargs):
        raise AssertionError("evaluated")

    monkeypatch.setattr(pipeline, "evaluate", never)
    path, out = tmp_path / "wide.toml", tmp_path / "wide.html"
    path.write_text(_wide(64, 64), encoding="utf-8")
    res = CliRunner().invoke(cli, ["report", str(path), "-o", str(out)])
    assert res.exit_code == 2 and "Traceback" not in res.output and not out.exists()
    text = " ".join(res.output.split())
    assert "this report would draw 131 figures (an azimuth and an elevation pattern for each of the 64 targets" in text
    assert "each showing the 65 antennas, and 3 over them all)" in text
    assert (
        "s of drawing, over the report's limit of 60 s and" in text
        and "MB of page, over the report's limit of 30 MB" in text
    )
    assert "with these 65 antennas a report fits" in text and "(--allow-long)" in text
    assert "--allow-long" in CliRunner().invoke(cli, ["report", "--help"]).output


def test_allow_long_makes_it_and_a_long_one_is_said(tmp_path, monkeypatch):
    monkeypatch.setattr(reportsize, "MAX_BYTES", 1.0)  # alder-hollow's report past a limit of one byte
    out = tmp_path / "r.html"
    res = CliRunner().invoke(cli, ["report", str(ALDER), "-o", str(out)])
    assert res.exit_code == 2 and not out.exists()
    said = " ".join(res.output.split())
    assert "MB of page, over the report's limit of 0 MB" in said and "s of drawing, over" not in said  # the one past
    monkeypatch.setattr(reportsize, "NOTE_SECONDS", 0.0)
    res = CliRunner().invoke(cli, ["report", str(ALDER), "-o", str(out), "--allow-long"])
    assert res.exit_code == 0, res.output
    assert "report: 8 figures to draw (an azimuth and an elevation pattern for each of the 2 targets" in res.stderr
    assert out.stat().st_size == pytest.approx(reportsize.report_size(2, 6, True).page_bytes, rel=0.3)
