"""``snrgain locate``: fit the bearing and strength of a local noise source to readings."""

from __future__ import annotations

import json
from pathlib import Path

import click
import numpy as np

from snrgain.cli.options import handle_errors, read_toml, readings_preamble, scenario_copy_options

EXAMPLE = """\
# Noise readings for snrgain locate: the same noise read on known antennas.
frequency = "1.83 MHz"
bandwidth = "500 Hz"
ground = "average"

[antenna.loop]               # a small loop turned by hand between readings
family = "small-loop"
width = "1 m"
loop_height = "1 m"
height = "1.5 m"

[antenna.vertical]
family = "vertical"
height = "18 m"

[[reading]]                  # invented readings, made for this example
antenna = "loop"
bearing = 0                  # the loop's plane points this way for this reading
level = "-118.8 dBm"         # or S-units: "S7"
[[reading]]
antenna = "loop"
bearing = 30
level = "-115.4 dBm"
[[reading]]
antenna = "loop"
bearing = 60
level = "-111.9 dBm"
[[reading]]
antenna = "loop"
bearing = 90
level = "-112.8 dBm"
[[reading]]
antenna = "loop"
bearing = 120
level = "-115.7 dBm"
[[reading]]
antenna = "loop"
bearing = 150
level = "-122.9 dBm"
[[reading]]
antenna = "vertical"
level = "S7"
"""


def load_readings(path: Path):
    from snrgain.antennas import from_spec
    from snrgain.locate import Reading
    from snrgain.units import parse_power_dbm, parse_quantity

    data = read_toml(path, allowed={"frequency", "bandwidth", "ground", "antenna", "reading"})
    for key in ("frequency", "bandwidth", "antenna", "reading"):
        if key not in data:
            raise ValueError(f"{path}: {key} is missing (see --example)")
    f = parse_quantity(data["frequency"], "frequency")
    b = parse_quantity(data["bandwidth"], "frequency")
    ground = data.get("ground", "average")
    antennas = data["antenna"]
    readings = []
    for i, r in enumerate(data["reading"]):
        where = f"{path}: reading[{i}]"
        extra = set(r) - {"antenna", "bearing", "level"}
        if extra:
            raise ValueError(f"{where}: unknown key(s) {sorted(extra)}; allowed: antenna, bearing, level")
        name = r.get("antenna")
        if name not in antennas:
            raise ValueError(f"{where}.antenna: {name!r} is not one of the [antenna.*] tables {sorted(antennas)}")
        spec = {"ground": ground, **antennas[name]}
        if "bearing" in r:
            spec["bearing"] = r["bearing"]
        try:
            level = parse_power_dbm(r.get("level"))
        except ValueError as exc:
            raise ValueError(f"{where}.level: {exc}") from None
        ant = from_spec(spec)
        ant.check_frequency(f)
        label = name + (f" {r['bearing']}" if "bearing" in r else "")
        readings.append(Reading(ant, level, label))
    return f, b, readings


@click.command("locate")
@click.argument("readings", type=click.Path(dir_okay=False, path_type=str), required=False)
@click.option("--example", is_flag=True, help="Print an example readings file and exit.")
@click.option("--sources", type=click.IntRange(1, 3), default=1, show_default=True, help="Number of sources to fit.")
@click.option("--fit-elevation", is_flag=True, help="Fit each source's elevation too (default: held at --elevation).")
@click.option("--elevation", type=click.FloatRange(0, 85), default=5.0, show_default=True,
              help="Source elevation [deg] when not fitted.")
@click.option("--plot", type=click.Path(dir_okay=False, path_type=str), default=None,
              help="Save a polar plot of the fitted direction (PNG or SVG).")
@scenario_copy_options("the fitted sources added as [[noise.local]]")
@handle_errors
def locate(readings, example, sources, fit_elevation, elevation, plot, scenario, write_to, overwrite, fmt):
    """Fit local noise sources (bearing, level) and a diffuse background to READINGS.

    Each reading is the noise level on a known antenna in a known orientation: a small loop turned in
    steps, fixed directional antennas, the vertical.  The fit uses the antennas' modelled patterns;
    the result gives each bearing with its uncertainty (and the 180 deg ambiguity where the antennas
    cannot tell front from back) and the level as Fa.  See --example for the file.
    """
    from snrgain import locate as loc
    from snrgain.output import check_writable, write_whole

    if readings_preamble(example_text=EXAMPLE, example=example, readings=readings, scenario=scenario,
                         write_to=write_to):
        return
    for target in (plot, write_to):
        if target is not None:
            check_writable(target, overwrite=overwrite)
    f, b, reads = load_readings(Path(readings))
    res = loc.locate(reads, freq_hz=f, bandwidth_hz=b, n_sources=sources, fit_elevation=fit_elevation,
                     elevation_deg=elevation)
    out = {"ok": res.ok, "message": res.message, "frequency_hz": f, "bandwidth_hz": b,
           "background_fa_db": res.background_fa_db, "residual_rms_db": res.residual_rms_db,
           "sources": [vars(s) for s in res.sources],
           "readings": [{"label": lab, "level_dbm": lv, "fitted_dbm": p}
                        for lab, lv, p in zip(res.labels, res.readings_dbm, res.predicted_dbm)]}
    if plot is not None:
        _plot(res, plot, overwrite=overwrite)
        out["plot"] = plot
    if scenario is not None:
        if not res.ok:
            raise RuntimeError("the fit failed, so no sources were written: " + res.message)
        text = Path(scenario).read_text(encoding="utf-8")
        write_whole(write_to, text.rstrip("\n") + "\n" + scenario_blocks(res), overwrite=overwrite)
        out["written"] = write_to
    if fmt == "json":
        from snrgain.evaluate import _jsonable

        click.echo(json.dumps(_jsonable(out), sort_keys=True, indent=2))
        return
    lines = [("fit: " if res.ok else "FIT FAILED: ") + res.message]
    for i, s in enumerate(res.sources):
        amb = f" (or {(s.bearing_deg + 180) % 360:.0f} deg)" if s.ambiguous_180 else ""
        lines.append(f"  source {i + 1}: bearing {s.bearing_deg:.0f} +- {s.bearing_sigma_deg:.0f} deg{amb}, "
                     f"elevation {s.elevation_deg:.0f} deg, Fa {s.fa_db:.1f} dB on P.372's reference monopole")
    lines.append(f"  diffuse background: Fa {res.background_fa_db:.1f} dB; residual rms {res.residual_rms_db:.2f} dB "
                 f"over {len(res.readings_dbm)} readings")
    for entry in out["readings"]:
        lines.append(f"    {entry['label']:<16} read {entry['level_dbm']:7.1f} dBm, fitted {entry['fitted_dbm']:7.1f} dBm")
    if plot:
        lines.append(f"  wrote {plot}")
    if scenario:
        lines.append(f"  wrote {write_to}")
    click.echo("\n".join(lines))


def scenario_blocks(res) -> str:
    blocks = []
    for i, s in enumerate(res.sources):
        note = f" (or {(s.bearing_deg + 180) % 360:.0f} deg: the readings cannot tell)" if s.ambiguous_180 else ""
        blocks.append(
            f'\n[[noise.local]]   # fitted by snrgain locate, bearing +- {s.bearing_sigma_deg:.0f} deg{note}\n'
            f'name = "located source {i + 1}"\n'
            f"bearing = {s.bearing_deg:.1f}\nelevation = {s.elevation_deg:.1f}\nspread = 5\nfa = {s.fa_db:.1f}\n")
    return "".join(blocks)


def _plot(res, path, *, overwrite):
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig = plt.figure(figsize=(6, 6))
    ax = fig.add_subplot(projection="polar")
    ax.set_theta_zero_location("N")
    ax.set_theta_direction(-1)
    ax.set_rlim(0, 1.05)
    ax.set_yticklabels([])
    for i, s in enumerate(res.sources):
        th = np.radians(s.bearing_deg)
        sig = np.radians(min(s.bearing_sigma_deg, 90))
        ax.fill_between(np.linspace(th - sig, th + sig, 30), 0, 1, alpha=0.25, color=f"C{i}",
                        label=f"source {i + 1}: {s.bearing_deg:.0f} +- {s.bearing_sigma_deg:.0f} deg")
        ax.plot([th, th], [0, 1], color=f"C{i}", lw=2.5)
        if s.ambiguous_180:
            ax.plot([th + np.pi, th + np.pi], [0, 1], color=f"C{i}", lw=1.5, ls="--", label="180 deg ambiguity")
    ax.set_title(("Fitted noise direction" if res.ok else "Fit failed: direction not constrained")
                 + f"\n(background Fa {res.background_fa_db:.0f} dB, residual {res.residual_rms_db:.1f} dB)", pad=18)
    ax.legend(loc="lower left", bbox_to_anchor=(-0.1, -0.15), fontsize=9)
    fig.tight_layout()
    from snrgain.plots import save

    try:
        save(fig, path, overwrite=overwrite)
    finally:
        plt.close(fig)
