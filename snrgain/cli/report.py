"""``snrgain report`` and ``snrgain figures``: an HTML report, and the figures as files."""

from __future__ import annotations

from pathlib import Path

import click

from snrgain.cli.options import (
    allow_long_option,
    band_option,
    check_output,
    handle_errors,
    nside_option,
    overwrite_option,
    p372_dir_option,
    progress,
    reference_option,
    report_allow_long_option,
    scenario_argument,
    write_output,
)


@click.command("report")
@scenario_argument
@click.option(
    "--output",
    "-o",
    type=click.Path(dir_okay=False, path_type=str),
    required=True,
    help="The HTML file to write (whole or not at all).",
)
@overwrite_option
@report_allow_long_option
@nside_option
@p372_dir_option
@reference_option
@band_option
@handle_errors
def report(scenario, output, overwrite, allow_long, nside, p372_dir, reference, band):
    """Write one self-contained HTML report for SCENARIO: summary, ranking, figures, models, safety.

    The file has no scripts and loads nothing from the network; it prints cleanly.  Each figure is kept in the
    cache folder and reused by a later run while what it shows is unchanged (SNRGAIN_NO_FIGURE_CACHE=1 draws
    every figure afresh).
    """
    from snrgain.outputs import plots
    from snrgain.outputs import report as rep
    from snrgain.outputs.drawing import Drawer
    from snrgain.outputs.messages import apart_text

    check_output(output, overwrite=overwrite)
    if output not in (None, "-") and Path(output).suffix.lower() not in (".html", ".htm", ""):
        raise click.BadParameter(f"{output}: the report is one HTML page; name it .html", param_hint="--output")
    # The figures' process starts now and readies matplotlib while this one evaluates (snrgain.outputs.drawing).
    with Drawer("svg", modules=_RESULT_MODULES, keep=True) as drawer:
        with progress(None, f"report: evaluating {scenario}"):
            sc, plan = _load(scenario, nside=nside, p372_dir=p372_dir, reference=reference, band=band)
            _sized(sc, plan, allow_long)
            early = _Ahead(drawer, "svg", rep.SVG_OPTIONS, plots.FIGURES, sc, plan)
            results = _evaluated(sc, allow_long, observe=early)
        said, apart = results.warnings_apart()
        for w in said:
            click.echo(f"warning: {w}", err=True)
        if apart:
            click.echo(f"note: {apart_text(apart, 'the report says them under its rankings')}", err=True)

        light = plots.for_drawing(results)  # what the figures' process needs of the results (a tenth of them)

        def draw(jobs, **kw):
            jobs = [(_on(make, results, light), fmt, opts) for make, fmt, opts in jobs]
            return drawer.draw(jobs, ahead=early.drawn(jobs, results), **kw)

        with progress(None, "report: drawing the figures"):
            html = rep.render(results, plan=plan, draw=draw)
    write_output(output, html, overwrite=overwrite)


def _sized(sc, plan, allow_long: bool) -> None:
    """Refuse a report past its limits unless ``allow_long`` (snrgain.outputs.reportsize), before any work; say on
    stderr what a long one will draw."""
    from snrgain.outputs import plots
    from snrgain.outputs.reportsize import NOTE_SECONDS, check_report_size, size_words

    s = check_report_size(sc, plots.has_site_plan(None, plan=plan), allow_long=allow_long)
    if s.seconds >= NOTE_SECONDS:
        click.echo(
            f"report: {s.figures} figures to draw ({size_words(s)}), about {s.seconds:.0f} s and "
            f"{s.page_bytes / 1e6:.0f} MB of page",
            err=True,
        )


_RESULT_MODULES = (
    "snrgain.outputs.report",
    "snrgain.model.results",
    "snrgain.decide.plan",
    "noisemodels.sky",
    "noisemodels.sphere",
    "noisemodels.p372",
)
"""What the figures' process imports before the results reach it: the figure functions and the modules of the
objects the results hold (unpickling them would import them then)."""


def _on(make, results, light):
    """A figure job's function (a partial of a figure function of ``results``) on ``light`` in their place
    (:func:`snrgain.outputs.plots.for_drawing`); any other as it is."""
    from functools import partial

    if isinstance(make, partial) and make.args and make.args[0] is results:
        return partial(make.func, light, *make.args[1:], **make.keywords)
    return make


def _load(scenario, *, nside, p372_dir, reference=None, band=None):
    """The loaded scenario and its site plan (:func:`snrgain.outputs.siteplan.plan_of`)."""
    from snrgain.outputs.siteplan import plan_of
    from snrgain.scenario import load, read_source
    from snrgain.scenario.bands import one_band

    data, label, base_dir = read_source(scenario)
    data = one_band(data, band, label)
    sc = load(
        data,
        nside=int(nside) if nside else None,
        p372_dir=p372_dir,
        base_dir=base_dir,
        label=label,
        reference=reference,
    )
    return sc, plan_of(sc, data=data)


def _evaluated(sc, allow_long, observe=None):
    from snrgain.model.pipeline import evaluate

    return evaluate(sc, allow_long=allow_long, observe=observe)


class _Ahead:
    """Hands the figures' process (``drawer``, :class:`snrgain.outputs.drawing.Drawer`) the work that can be done
    before the results: made now, the figures' empty axes and the site plan (:func:`_plan_ahead`, from the scenario's
    ``plan``); as the pipeline makes what they need (:func:`snrgain.model.pipeline.evaluate`'s ``observe``), the
    noise sky once the sky is built and each target's azimuth and elevation patterns once the antennas are steered,
    each from a Preview of the results (:func:`snrgain.decide.decisions.preview`).  The figures' process draws them
    while this one goes on evaluating.  :meth:`drawn` then names the jobs whose figure was handed ahead from what
    the results show too (:func:`snrgain.outputs.plots.drawn_alike`, :func:`_same_looks` for the plan); any other is
    drawn from the results.  ``names``: the figures asked for (short names, :data:`snrgain.outputs.plots.FIGURES`)."""

    def __init__(self, drawer, fmt: str, savefig: dict, names, sc, plan):
        self._drawer = drawer
        self._fmt = fmt
        self._savefig = savefig
        self._names = set(names)
        self._sent: dict = {}  # (figure function, its keywords) -> (key, the preview it is drawn from)
        self._plan = plan if "plan" in self._names else None
        self._plan_key = _plan_ahead(drawer, self._plan, fmt, savefig, sc)

    def __call__(self, stage: str, sc, made) -> None:
        from snrgain.decide.decisions import preview
        from snrgain.outputs import plots

        if not self._drawer.active:
            return
        if stage == "sky" and "sky" in self._names and made.maps:
            early = plots.for_drawing(preview(sc, skies=made))  # the sky at the figure's moment only
            self._hand(early, [(plots.noise_sky, {})])
        elif stage == "cuts":
            early = preview(sc, cuts=made)
            self._hand(
                early,
                [
                    (fn, {"target_index": i})
                    for name, fn in (("azimuth", plots.azimuth_pattern), ("elevation", plots.elevation_pattern))
                    if name in self._names
                    for i in range(len(sc.targets))
                ],
            )

    def _hand(self, early, figures) -> None:
        """Hand the figures' process ``figures`` ((figure function, keywords) each) drawn from ``early``, in one
        message."""
        from functools import partial

        pairs = []
        for fn, keywords in figures:
            key = f"{fn.__name__}-{len(self._sent)}"
            self._sent[(fn, tuple(sorted(keywords.items())))] = (key, early)
            pairs.append((key, (partial(fn, early, **keywords), self._fmt, self._savefig)))
        if pairs:
            self._drawer.ahead(*pairs[0], *pairs[1:])

    def drawn(self, jobs, results) -> dict[int, str]:
        """Job index -> the key of the figure handed ahead for it (:meth:`snrgain.outputs.drawing.Drawer.draw`'s
        ``ahead``): the sky and the patterns (:meth:`matching`), and the site plan where the results' antennas look as
        the plan's (:func:`_same_looks`)."""
        from snrgain.outputs import plots

        out = self.matching(jobs, results)
        if self._plan_key is not None and _same_looks(results, self._plan):
            out.update(
                {
                    k: self._plan_key
                    for k, (make, _, _) in enumerate(jobs)
                    if getattr(make, "func", None) is plots.site_plan
                }
            )
        return out

    def matching(self, jobs, results) -> dict[int, str]:
        """Job index -> the key of the sky or pattern figure handed ahead for it, for each job that draws one handed
        ahead from a preview, in the same format and options, from results that show what its preview showed."""
        from snrgain.outputs import plots

        out = {}
        alike: dict[int, bool] = {}  # by preview: compared once
        for k, (make, fmt, savefig) in enumerate(jobs):
            try:
                found = self._sent.get((make.func, tuple(sorted(make.keywords.items()))))
            except (AttributeError, TypeError):  # not a figure function's partial, or keywords that do not hash
                continue
            if found is None or fmt != self._fmt or savefig != self._savefig:
                continue
            key, early = found
            if id(early) not in alike:
                alike[id(early)] = plots.drawn_alike(early, results)
            if alike[id(early)]:
                out[k] = key
        return out


def _plan_ahead(drawer, plan, fmt: str, savefig: dict, sc) -> str | None:
    """Have the figures' process make the figures' empty axes (:func:`snrgain.outputs.plots.blank_steps`) and
    draw the site plan (it needs no results: :func:`snrgain.outputs.plots.scenario_plan`) while the scenario is
    evaluated; the key the plan is drawn under, None where there is no plan (or none is asked for)."""
    from functools import partial

    from snrgain.outputs import plots

    noise = sc.noise  # the sky's diffuse components: man-made, atmospheric, galactic (snrgain.sky.noise)
    diffuse = sum(getattr(noise, k, None) is not None for k in ("man_made", "atmospheric", "galactic"))
    drawer.prepare(plots.blank_steps, plots.blank_kinds(len(sc.targets), len(sc.candidates), diffuse))
    if diffuse and sc.nside:
        drawer.prepare(plots.prepare_sky, int(sc.nside))  # the sky figure's interpolation weights
    if plan is None or not plots.has_site_plan(None, plan=plan):
        return None
    drawer.ahead("plan", (partial(plots.scenario_plan, plan), fmt, savefig))
    return "plan"


def _same_looks(results, plan) -> bool:
    """Whether the plan drawn ahead looks as the results' would (the same antennas, families and order)."""
    from snrgain.outputs import plots

    return plots.plan_looks(plan) == plots.looks_of(results)


@click.command("figures")
@scenario_argument
@click.option(
    "--dir",
    "out_dir",
    type=click.Path(file_okay=False, path_type=str),
    required=True,
    help="Folder to write the figures into (it must exist).",
)
@click.option("--format", "fmt", type=click.Choice(["png", "svg"]), default="png", show_default=True)
@click.option(
    "--only",
    type=click.Choice(["azimuth", "elevation", "sky", "hours", "ranking", "plan"]),
    multiple=True,
    help="Only these figures (repeatable); default all that apply.",
)
@overwrite_option
@allow_long_option
@nside_option
@p372_dir_option
@reference_option
@band_option
@handle_errors
def figures(scenario, out_dir, fmt, only, overwrite, allow_long, nside, p372_dir, reference, band):
    """Write the figures for SCENARIO as PNG or SVG files into --dir.

    Each figure is kept in the cache folder and reused by a later run while what it shows is unchanged
    (SNRGAIN_NO_FIGURE_CACHE=1 draws every figure afresh).
    """
    from snrgain.files import missing_folder
    from snrgain.outputs import plots
    from snrgain.outputs.drawing import Drawer

    d = Path(out_dir)
    if not d.is_dir():
        raise missing_folder(d)
    names = list(only) or list(plots.FIGURES)
    # The figures' process starts now and readies matplotlib while this one evaluates (snrgain.outputs.drawing).
    with Drawer(fmt, modules=_RESULT_MODULES, keep=True) as drawer:
        with progress(None, f"figures: evaluating {scenario}"):
            sc, plan = _load(scenario, nside=nside, p372_dir=p372_dir, reference=reference, band=band)
            jobs = _figure_jobs(sc, plan, names, d, fmt, only=bool(only), overwrite=overwrite)
            early = _Ahead(drawer, fmt, plots.SAVE_OPTIONS, names, sc, plan)
            results = _evaluated(sc, allow_long, observe=early)
        from functools import partial

        from snrgain.files import write_set

        drawn: list[bytes] = []
        light = plots.for_drawing(results)  # what the figures' process needs of the results (a tenth of them)

        def writer(k):
            def write(tmp_path):
                if not drawn:  # the first file draws them all, side by side, inside the set's temporary folder
                    figs = [(partial(plots.FIGURES[n], light, **kw), fmt, plots.SAVE_OPTIONS) for _, n, kw in jobs]
                    cost = [plots.FIGURE_COST[n] for _, n, _ in jobs]
                    drawn.extend(drawer.draw(figs, done=step, cost=cost, ahead=early.drawn(figs, results)))
                Path(tmp_path).write_bytes(drawn[k])

            return write

        # The set is drawn into a temporary folder in --dir and moved into place whole (snrgain.files.write_set).
        with progress(len(jobs), "figures") as step:
            written = write_set(d, {p.name: writer(k) for k, (p, _, _) in enumerate(jobs)}, overwrite=overwrite)
    for path in written:
        click.echo(f"wrote {path}", err=True)


def _figure_jobs(sc, plan, names: list[str], d: Path, fmt: str, *, only: bool, overwrite: bool) -> list[tuple]:
    """(path, figure, options) of each figure to write, from the loaded scenario, before any work: ``names`` loses
    the site plan where there is none to draw (refused where --only asked for it); files already there are refused
    without ``overwrite``, and a long drawing is said on stderr (snrgain.outputs.reportsize)."""
    from collections import Counter

    from snrgain.outputs import plots
    from snrgain.outputs.reportsize import NOTE_SECONDS, drawing_seconds

    if "plan" in names and not plots.has_site_plan(None, plan=plan):
        if only:
            raise ValueError("--only plan: " + "the scenario gives no lot outline and no antenna positions")
        names.remove("plan")
    jobs = []
    tags = target_file_tags([t.name for t in sc.targets])
    for name in names:
        if name in ("azimuth", "elevation"):
            for i, tag in enumerate(tags):
                jobs.append((d / f"{name}-{tag}.{fmt}", name, {"target_index": i}))
        else:
            jobs.append((d / f"{name}.{fmt}", name, {"plan": plan} if name == "plan" else {}))
    existing = [str(p) for p, _, _ in jobs if p.exists()]
    if existing and not overwrite:
        raise ValueError(f"{', '.join(existing)} exist(s); pass --overwrite to replace")
    counts = Counter(name for _, name, _ in jobs)
    seconds = drawing_seconds(counts, len(sc.targets), 1 + len(sc.candidates))
    if seconds >= NOTE_SECONDS:
        many = f"{len(jobs)} figure{'' if len(jobs) == 1 else 's'}"
        click.echo(f"figures: {many} to draw, about {seconds:.0f} s of drawing", err=True)
    return jobs


def target_file_tags(names: list[str]) -> list[str]:
    """Each target's part of a figure's file name: its name in lower-case letters, digits and hyphens, accents taken
    off ("South America" -> "south-america", "Nordamérika" -> "nordamerika"), else (a name with none of those, or one
    another target's gives too) "target" and its number in the file, never one another target's tag is.

    >>> target_file_tags(["Europe", "South America", "Japan (long path)", "Nordamérika", "Europe!"])
    ['europe', 'south-america', 'japan-long-path', 'nordamerika', 'target5']
    >>> target_file_tags(["target3", "Europe", "日本"])
    ['target3', 'europe', 'target3-2']
    """
    import re
    import unicodedata

    def slug(name: str) -> str:
        ascii_ = unicodedata.normalize("NFKD", name).encode("ascii", "ignore").decode()
        return re.sub(r"[^a-z0-9]+", "-", ascii_.lower()).strip("-")[:40]

    slugs = [slug(n) for n in names]
    taken: set[str] = set()
    out = []
    for i, tag in enumerate(slugs):
        if not tag or tag in taken or slugs.count(tag) > 1 and slugs.index(tag) != i:
            tag = f"target{i + 1}"
        base, k = tag, 2
        while tag in taken or (tag != slugs[i] and tag in slugs):  # a number's tag another target has as its name
            tag, k = f"{base}-{k}", k + 1
        taken.add(tag)
        out.append(tag)
    return out
