"""``snrgain calibrate``: line constants and ground from antenna-analyser readings of a laid wire."""

from __future__ import annotations

import json
import re
import tomllib
from pathlib import Path

import click
import numpy as np

from snrgain.cli.options import handle_errors, read_toml, readings_preamble, scenario_copy_options

EXAMPLE = """\
# Readings of a laid wire, taken at its feed end with an antenna analyser.
[wire]                      # the wire as built: any keys of its family
family = "bog"
length = "250 ft"
gauge = 16

[[open_short]]              # far end open, then shorted to its ground rod
frequency = "1.83 MHz"
open = [95.0, -210.0]       # R, X in ohm (or "95-210j")
short = [160.0, 240.0]

[[resonance]]               # optional: first quarter-wave resonance, far end open
frequency = "0.72 MHz"
"""


def parse_impedance(value, where: str) -> complex:
    """An impedance as [R, X] or a string such as '95-210j', '95 - j210'."""
    if isinstance(value, list) and len(value) == 2 and all(isinstance(v, (int, float)) and not isinstance(v, bool)
                                                           for v in value):
        return complex(value[0], value[1])
    if isinstance(value, str):
        text = value.replace(" ", "")
        text = re.sub(r"([+-])j([0-9.]+)", r"\g<1>\g<2>j", text)
        try:
            return complex(text)
        except ValueError:
            pass
    raise ValueError(f"{where}: expected an impedance as [R, X] in ohm or a string like '95-210j', got {value!r}")


@click.command("calibrate")
@click.argument("readings", type=click.Path(dir_okay=False, path_type=str), required=False)
@click.option("--example", is_flag=True, help="Print an example readings file and exit.")
@click.option("--expected-vf", type=click.FloatRange(0.05, 1.0), default=0.8, show_default=True,
              help="Velocity factor expected, to pick the branch of a long wire's phase (ignored when the wire is "
                   "shorter than a quarter wave).")
@click.option("--permittivity", type=click.FloatRange(1, 100), default=None,
              help="Fix the soil's relative permittivity and fit only its conductivity.")
@scenario_copy_options("the fitted ground written into its [site] section")
@handle_errors
def calibrate(readings, example, expected_vf, permittivity, scenario, write_to, overwrite, fmt):
    """Turn analyser READINGS of a laid wire into its line constants and the soil's constants.

    Open/short readings give Z0 = sqrt(Zoc Zsc) and tanh(gamma L) = sqrt(Zsc/Zoc): velocity factor,
    attenuation and Z0.  A quarter-wave resonance gives VF = 4 L f / c.  The ground's conductivity and
    permittivity are then fitted so that the wire model reproduces them, with uncertainties; the
    suggested termination and transformer follow from the measured Z0.  See --example for the file.
    """
    from snrgain import calibrate as cal
    from snrgain.antennas import from_spec
    from snrgain.units import parse_quantity

    if readings_preamble(example_text=EXAMPLE, example=example, readings=readings, scenario=scenario,
                         write_to=write_to):
        return
    path = Path(readings)
    data = read_toml(path, allowed={"wire", "open_short", "resonance"})
    if "wire" not in data:
        raise ValueError(f"{path}: section [wire] is missing (the wire as built; see --example)")
    spec = dict(data["wire"])
    spec.setdefault("family", "bog")
    ant = from_spec(spec)
    length = ant.length_m
    pairs = []
    for i, r in enumerate(data.get("open_short", [])):
        extra = set(r) - {"frequency", "open", "short"}
        if extra:
            raise ValueError(f"{path}: open_short[{i}]: unknown key(s) {sorted(extra)}")
        try:
            f = parse_quantity(r["frequency"], "frequency")
            pairs.append(cal.OpenShort(f, parse_impedance(r["open"], f"open_short[{i}].open"),
                                       parse_impedance(r["short"], f"open_short[{i}].short")))
        except KeyError as exc:
            raise ValueError(f"{path}: open_short[{i}]: key {exc.args[0]!r} is missing") from None
    measured = []
    constants = cal.line_from_open_short(pairs, length_m=length, expected_velocity_factor=expected_vf) if pairs else []
    for ln in constants:
        measured.append({"freq_hz": ln.freq_hz, "velocity_factor": ln.velocity_factor,
                         "attenuation_db_per_100m": ln.attenuation_db_per_100m})
    resonances = []
    for i, r in enumerate(data.get("resonance", [])):
        if set(r) != {"frequency"}:
            raise ValueError(f"{path}: resonance[{i}]: give only frequency")
        f = parse_quantity(r["frequency"], "frequency")
        vf = cal.vf_from_quarter_wave(length, f)
        resonances.append({"freq_hz": f, "velocity_factor": vf})
        measured.append({"freq_hz": f, "velocity_factor": vf})
    if not measured:
        raise ValueError(f"{path}: no readings; add [[open_short]] or [[resonance]] entries (see --example)")

    def model_line(freq_hz, ground):
        ant.ground = ground
        ant._cache.clear()
        return ant._computed_line(freq_hz)

    fit = cal.fit_ground(model_line, measured, permittivity=permittivity)
    out = {
        "wire": ant.describe(),
        "open_short": [ln.as_dict() for ln in constants],
        "resonance": resonances,
        "fitted_ground": {"conductivity_s_per_m": fit.conductivity_s_per_m,
                          "conductivity_uncertainty_factor": fit.conductivity_factor,
                          "permittivity": fit.permittivity, "permittivity_sigma": fit.permittivity_sigma,
                          "permittivity_fixed": fit.fixed_permittivity, "residual_rms": fit.residual_rms,
                          "scenario_value": fit.scenario_value()},
    }
    if constants:
        z0 = abs(constants[0].z0)
        far = getattr(ant.params, "far_ground", 0.0)
        coax = ant.params.coax
        out["suggested_termination_ohm"] = max(z0 - far, 0.0)
        out["suggested_turns_ratio"] = float(np.sqrt((z0 + ant.params.feed_ground) / coax))
    if scenario is not None:
        from snrgain.output import write_whole

        text = Path(scenario).read_text(encoding="utf-8")
        write_whole(write_to, with_ground(text, fit.scenario_value()), overwrite=overwrite)
        out["written"] = write_to
    if fmt == "json":
        from snrgain.evaluate import _jsonable

        click.echo(json.dumps(_jsonable(out), sort_keys=True, indent=2))
        return
    lines_out = [f"{ant.family} wire, {length:.1f} m"]
    for ln in constants:
        lines_out.append(f"  {ln.freq_hz / 1e6:g} MHz: velocity factor {ln.velocity_factor:.3f}, attenuation "
                         f"{ln.attenuation_db_per_100m:.2f} dB/100 m ({ln.attenuation_db_per_100ft:.2f} dB/100 ft), "
                         f"Z0 {ln.z0.real:.0f}{ln.z0.imag:+.0f}j ohm")
    for r in resonances:
        lines_out.append(f"  quarter-wave resonance at {r['freq_hz'] / 1e6:g} MHz: velocity factor {r['velocity_factor']:.3f}")
    g = out["fitted_ground"]
    eps_txt = (f"{g['permittivity']:.3g} (fixed)" if g["permittivity_fixed"]
               else f"{g['permittivity']:.3g} +- {g['permittivity_sigma']:.2g}")
    lines_out.append(f"  fitted ground: conductivity {g['conductivity_s_per_m'] * 1e3:.3g} mS/m (x/÷ "
                     f"{g['conductivity_uncertainty_factor']:.2f}), permittivity {eps_txt}; residual rms "
                     f"{g['residual_rms']:.2f} (in measurement uncertainties)")
    lines_out.append(f"  scenario: [site] ground = {fit.scenario_value()}")
    if "suggested_termination_ohm" in out:
        lines_out.append(f"  suggested termination {out['suggested_termination_ohm']:.0f} ohm (|Z0| less the far rod); "
                         f"transformer turns ratio {out['suggested_turns_ratio']:.2f} to {ant.params.coax} ohm coax")
    if scenario is not None:
        lines_out.append(f"  wrote {write_to}")
    click.echo("\n".join(lines_out))


def with_ground(text: str, value: str) -> str:
    """Scenario TOML text with [site]'s ground set to ``value`` (replacing a ground line or adding one)."""
    lines = text.splitlines(keepends=True)
    start = next((i for i, ln in enumerate(lines) if ln.strip() == "[site]"), None)
    if start is None:
        raise ValueError("the scenario has no [site] section")
    end = next((i for i in range(start + 1, len(lines)) if lines[i].lstrip().startswith("[")), len(lines))
    new = f"ground = {value}   # fitted by snrgain calibrate\n"
    for i in range(start + 1, end):
        if re.match(r"\s*ground\s*=", lines[i]):
            lines[i] = new
            break
    else:
        lines.insert(start + 1, new)
    out = "".join(lines)
    tomllib.loads(out)  # still valid TOML
    return out
