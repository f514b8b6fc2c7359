"""``snrgain locate``: fit the bearing and strength of a local noise source to readings."""

from __future__ import annotations

import math
from pathlib import Path

import click

from snrgain.cli.options import (
    EXIT_FAILURE,
    FiniteRange,
    check_output,
    copy_refused,
    emit_json,
    fail,
    handle_errors,
    plot_option,
    progress,
    read_scenario_text,
    readings_preamble,
    scenario_copy_options,
    write_output,
)


@click.command("locate")
@click.argument("readings", type=click.Path(dir_okay=False, path_type=str), required=False)
@click.option("--example", is_flag=True, help="Print an example readings file and exit.")
@click.option("--sources", type=click.IntRange(1, 3), default=1, show_default=True, help="Number of sources to fit.")
@click.option(
    "--fit-elevation",
    is_flag=True,
    help="Fit each source's elevation too (default: held at --elevation); not for sources placed at a distance.",
)
@click.option(
    "--elevation",
    type=FiniteRange(0, 85),
    default=5.0,
    show_default=True,
    help="Source elevation [deg] when not fitted.",
)
@plot_option("a polar plot of the fitted direction")
@click.option(
    "--name",
    default="located source",
    show_default=True,
    help="Name of the source written to the scenario (numbered when several); one of that name is replaced.",
)
@click.option(
    "--side",
    type=FiniteRange(0, 360),
    default=None,
    metavar="DEG",
    help="Where a bearing cannot be told from its opposite (180 deg ambiguity): a rough bearing [deg] of the side "
    "the source lies on (from a walk with a portable receiver, or where the suspect stands); the one of the two "
    "within 90 deg of it is printed, plotted and written (one square to both, 90 deg from each, is refused).  "
    "Default: the side of a [[noise.local]] of the same name in the scenario copied (--scenario with --write), "
    "else the side the fit happened to find.  A source whose readings tell its side (directional antennas) keeps "
    "it, and the output says --side was not used for it.",
)
@scenario_copy_options("the fitted sources added as [[noise.local]]")
@handle_errors
def locate(readings, example, sources, fit_elevation, elevation, plot, name, side, scenario, write_to, overwrite, fmt):
    """Fit local noise sources (bearing, level) and a diffuse background to READINGS.

    Each reading is the noise level on a known antenna in a known orientation: a small loop turned in
    steps, fixed directional antennas, the vertical.  The fit uses the antennas' modelled patterns;
    the result gives each bearing with its uncertainty (and the 180 deg ambiguity where the antennas
    cannot tell front from back) and the level as Fa.  A reading the fit misses by more than its
    uncertainty (default 2 dB) is named.  A diffuse background the sources outweigh in every reading is said
    to be not determined; one far quieter than any site is said too.  With at = [east, north] (where the
    readings were taken) and distance in the file (one per source, in the order the fit numbers them), each source
    is fitted and written to the scenario as a placed one, heard as rank hears it (a short vertical dipole near the
    ground; its elevation held), and the output says which distance each got; without, as a point at its bearing.
    Readings off every band of the scenario (outside its amateur band and more than 5 % from its frequency) are not
    copied.  The copy is loaded as check loads it before it is written: one check refuses (a source within 1 m of an
    antenna) is not written, nor the plot, and the command exits 1 with the reason.  The copy is read back as rank
    reads it, and a reading it gives more than 1 dB off the fit is said.  A fit
    that finds no direction is reported with its cause and exits 1, writing no file (no plot, no copy).  See
    --example for the file.
    """
    from snrgain.tools import locate as loc

    if readings_preamble(
        example_text=loc.EXAMPLE, example=example, readings=readings, scenario=scenario, write_to=write_to
    ):
        return
    from snrgain.fields import check_name, sky_component_name

    try:  # the name it writes must be one the scenario takes (numbered "name 2" when several)
        check_name(name if sources == 1 else f"{name} {sources}")
        if sky_component_name(name):
            raise ValueError(f"{name!r} names one of the sky's own noise components; give the source its own name")
    except ValueError as exc:
        raise click.BadParameter(str(exc), param_hint="--name") from None
    check_output(plot, overwrite=overwrite)
    check_output(write_to, overwrite=overwrite, replaces=scenario)
    data = loc.load_readings(Path(readings))
    loc.check_distances(data, sources, readings)
    if scenario is not None:  # readings of another band cannot be copied into this one: said before the fit
        from snrgain.tools.locatecheck import off_every_band

        off = off_every_band(read_scenario_text(scenario), data.freq_hz)
        if off is not None:
            raise ValueError(f"--write: {readings} into {scenario}: {off}; no copy written")
    if fit_elevation and data.near is not None:
        raise click.BadParameter(f"{readings}: {loc.NEAR_ELEVATION_HELD}", param_hint="--fit-elevation")
    try:
        with progress(None, f"locate: fitting {sources} source(s) to {len(data.readings)} reading(s)"):
            res = loc.locate(
                data.readings,
                freq_hz=data.freq_hz,
                bandwidth_hz=data.bandwidth_hz,
                n_sources=sources,
                fit_elevation=fit_elevation,
                elevation_deg=elevation,
                near=data.near,
            )
    except loc.LocateError as exc:  # the readings cannot answer: say which file
        raise ValueError(f"{readings}: {exc}") from None
    if side is not None:
        try:
            res = loc.on_side(res, side)
        except loc.LocateError as exc:
            raise click.BadParameter(str(exc), param_hint="--side") from None
    elif scenario is not None and res.ok:  # printed and plotted on the side it is written on
        res = loc.sided(res, read_scenario_text(scenario), at_m=data.at_m, name=name)
    out = loc.as_dict(res, freq_hz=data.freq_hz, bandwidth_hz=data.bandwidth_hz)
    if res.ok:  # a failed fit writes nothing; a good one writes every output asked for, or none
        copy = _write_outputs(
            res, data, plot=plot, scenario=scenario, write_to=write_to, name=name, overwrite=overwrite, side=side
        )
        if copy is not None:
            out.update(copy)
        if plot is not None and not out.get("not_written_because"):
            out["plot"] = plot
        if scenario is not None and not out.get("not_written_because"):
            out["written"] = write_to
            out["written_sources"] = [
                vars(p) for p in loc.placements(res, at_m=data.at_m, distances_m=data.distances_m, name=name)
            ]
    if fmt == "json":
        emit_json(out)
    else:
        click.echo("\n".join(_lines(res, out, side, data.length_unit)))
    if not res.ok:
        fail("the fit failed (" + res.message.split(";")[0] + "); no file written", EXIT_FAILURE)
    if out.get("not_written_because"):  # the fit is said; the copy asked for (and the plot) is not written
        nor = ", nor the plot" if plot else ""
        fail(f"--write: {out['not_written_because']}\nno copy written{nor}", EXIT_FAILURE)


def _write_outputs(res, data, *, plot, scenario, write_to, name, overwrite, side=None) -> None:
    """The plot and the scenario copy: all that can fail on the inputs first, then the files; if the copy cannot
    be written, a plot this run created is taken away again."""
    from snrgain.tools import locate as loc

    text = unsaid = None
    if scenario is not None:
        from snrgain.tools.locatecheck import unsaid as unsaid_in

        base = read_scenario_text(scenario)
        unsaid = unsaid_in(base, res, data)
        text = loc.with_sources(
            base,
            res,
            at_m=data.at_m,
            distances_m=data.distances_m,
            name=name,
            side_deg=side,
            length_unit=data.length_unit,
            unsaid=unsaid,
        )
        refused = copy_refused(text, scenario=scenario, write_to=write_to)
        if refused is not None:  # a copy check and rank would refuse: no copy, and no plot either
            return {"written": None, "not_written_because": _refusal(refused, res, data, name)}
    created = None
    if plot is not None:
        from snrgain.outputs import plots

        existed = Path(plot).exists()
        plots.save(plots.located_sources(res), plot, overwrite=overwrite)
        created = None if existed else Path(plot)
    try:
        if text is not None:
            write_output(write_to, text, overwrite=overwrite, replaces=scenario)
    except BaseException:
        if created is not None:
            created.unlink(missing_ok=True)
        raise
    if text is None:
        return None
    for u in unsaid:
        click.echo(f"warning: the copy cannot tell rank of the located source(s): {u}", err=True)
    return _checked(text, res, data, scenario=scenario, write_to=write_to, name=name)


def _refusal(exc, res, data, name) -> str:
    """Why the copy is not written: the problems ``check`` finds in it, and where a located source is among them,
    where the fit put it (the readings file's reading point and distance)."""
    from snrgain.tools import locate as loc
    from snrgain.units import length_said

    out = f"the copy, loaded as check and rank load it, is refused:\n{exc}"
    for p in loc.placements(res, at_m=data.at_m, distances_m=data.distances_m, name=name):
        if p.distance_m is not None and any(f"({p.name!r})" in m or f'("{p.name}")' in w for w, m in exc.problems):
            e, n = data.at_m
            out += (
                f"\n{p.name!r} stands where the fit puts it: {length_said(p.distance_m, data.length_unit)} from the "
                f"reading point [{e:g} m, {n:g} m] toward {p.bearing_deg:.0f} deg (the readings file's at and "
                "distance); check those"
            )
    return out


def _checked(text, res, data, *, scenario, write_to, name) -> dict:
    """The copy read back as rank reads it (snrgain.tools.locatecheck): each reading's level from it beside the
    fitted one, a warning on stderr where any lies further apart than CHECK_TOLERANCE_DB; JSON-ready."""
    from snrgain.errors import ScenarioError
    from snrgain.tools import locate as loc
    from snrgain.tools import locatecheck as chk

    names = loc.source_names(res, name)
    try:
        check = chk.copy_levels(text, res, data, names, base_dir=Path(scenario).resolve().parent, label=write_to)
    except (ScenarioError, ValueError) as exc:  # the copy loads (copy_refused) but not at the readings' frequency
        click.echo(f"warning: the copy could not be read back at {data.freq_hz / 1e6:g} MHz: {exc}", err=True)
        return {"copy_check": None, "copy_check_error": str(exc)}
    warning = chk.said(check, res.placed)
    if warning is not None:
        click.echo(f"warning: {warning}", err=True)
    return {
        "copy_check": [
            {"label": lv.label, "fitted_dbm": lv.fitted_dbm, "copy_dbm": lv.copy_dbm} for lv in check.levels
        ],
        "copy_check_worst_db": check.worst_db,
    }


def _lines(res, out, side=None, length_unit="m") -> list[str]:
    from snrgain.tools.locate import NO_BEARING_SIGMA_DEG, side_note
    from snrgain.units import length_said

    lines = [res.message if res.ok else "FIT FAILED: " + res.message]
    for i, s in enumerate(res.sources):
        nowhere = math.isfinite(s.bearing_sigma_deg) and s.bearing_sigma_deg > NO_BEARING_SIGMA_DEG
        amb = f" (or {(s.bearing_deg + 180) % 360:.0f} deg)" if s.ambiguous_180 and not nowhere else ""
        if nowhere:
            sig = f"deg with an uncertainty beyond {NO_BEARING_SIGMA_DEG:g} deg (no bearing at all)"
        else:
            sig = (
                f"+- {s.bearing_sigma_deg:.0f} deg"
                if math.isfinite(s.bearing_sigma_deg)
                else "deg, uncertainty unknown"
            )
        lines.append(
            f"  source {i + 1}: bearing {s.bearing_deg:.0f} {sig}{amb}, "
            f"elevation {s.elevation_deg:.0f} deg, Fa {s.fa_db:.1f} dB on P.372's reference monopole"
            + ("" if res.ok else " (the best fit, not a result)")
        )
    bg = f"Fa {res.background_fa_db:.1f} dB" if res.background_determined else "not determined"
    lines.append(
        f"  diffuse background: {bg}; residual rms {res.residual_rms_db:.2f} dB over {len(res.readings_dbm)} readings"
    )
    missed = {k: (m, u) for k, (_, m, u) in zip(res.outlier_readings, res.outliers)}
    for k, entry in enumerate(out["readings"]):
        miss = missed.get(k)
        flag = "" if miss is None else f"  missed by {miss[0]:+.1f} dB (over its {miss[1]:g} dB)"
        lines.append(
            f"    {entry['label']:<16} read {entry['level_dbm']:7.1f} dBm, fitted {entry['fitted_dbm']:7.1f} dBm{flag}"
        )
    lines += [f"  note: {n}" for n in res.notes]
    if side is None and res.ok:
        for i, s in enumerate(res.sources):
            if s.ambiguous_180:
                other = (s.bearing_deg + 180) % 360
                lines.append(
                    f"  note: source {i + 1}: {side_note(s)}; where it lies toward {other:.0f} deg (a walk with a "
                    f"portable receiver tells), give --side {other:.0f}"
                )
    if "plot" in out:
        lines.append(f"  wrote {out['plot']}")
    if out.get("written"):
        lines.append(f"  wrote {out['written']}")
        for i, p in enumerate(out["written_sources"]):
            if p["distance_m"] is None:
                how = "by its bearing (the readings file gives no distance)"
            else:
                e, n = p["position_m"]
                how = (
                    f"{length_said(p['distance_m'], length_unit)} from the readings (the file's distance {i + 1}; the "
                    f"bearing's uncertainty is +- {length_said(p['across_m'], length_unit, 0)} across it there), at "
                    f"[{e:.1f} m, {n:.1f} m]"
                )
            lines.append(f"    source {i + 1} as {p['name']!r}: bearing {p['bearing_deg']:.0f} deg, {how}")
        if out.get("copy_check"):
            from snrgain.tools.locatecheck import CHECK_TOLERANCE_DB

            worst = out["copy_check_worst_db"]
            lines.append(
                f"    read back as rank reads it, the copy gives each reading its fitted level within {worst:.1f} dB"
                + ("" if worst <= CHECK_TOLERANCE_DB else " (see the warnings)")
            )
    return lines
