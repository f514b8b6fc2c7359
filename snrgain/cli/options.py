"""Options and error handling shared by the subcommands.

Diagnostics go to stderr, results to stdout.  Exit codes: 2 for bad input
(an invalid scenario, a file that would be overwritten), 1 for failures.
"""

from __future__ import annotations

import contextlib
import functools
import json
import sys
from collections.abc import Iterator
from pathlib import Path

import click

from snrgain.errors import BandNeededError, ReadingsError, ScenarioError, SpecError
from snrgain.files import OutputExistsError, OutputWriteError
from snrgain.units import QuantityError

EXIT_BAD_INPUT = 2
EXIT_FAILURE = 1


class FiniteRange(click.FloatRange):
    """A number option within a range that also refuses nan and inf (click's FloatRange lets nan through: every
    comparison with nan is false), and reads the digits of any script as the number they show."""

    name = "number"

    def convert(self, value, param, ctx):
        import math

        if isinstance(value, str):
            from snrgain.units import QuantityError, normalise_text

            try:
                value = normalise_text(value).strip()
            except QuantityError as exc:
                self.fail(str(exc), param, ctx)
        try:
            x = float(value)
        except (TypeError, ValueError):
            self.fail(f"{value!r} is not a number", param, ctx)
        if not math.isfinite(x):
            self.fail(f"{value!r} is not a finite number; give a number within {self._describe_range()}", param, ctx)
        return super().convert(x, param, ctx)


scenario_argument = click.argument("scenario", type=click.Path(path_type=Path))  # a folder: read_limited says so
overwrite_option = click.option("--overwrite", is_flag=True, help="Replace an existing output file.")
allow_long_option = click.option(
    "--allow-long",
    is_flag=True,
    help="Run a scenario whose estimated cost passes the limits (300 s or 4 GB); without it such a scenario is "
    "refused before any work, with the estimate and what would fit.",
)
report_allow_long_option = click.option(
    "--allow-long",
    is_flag=True,
    help="Make a report whose estimated cost passes the limits: the evaluation's (300 s or 4 GB) or the figures' "
    "(60 s of drawing or a 30 MB page, counted from the targets and antennas each figure shows); without it such a "
    "report is refused before any work, with the estimate and what would fit.",
)
nside_option = click.option(
    "--nside",
    type=click.Choice(["8", "16", "32", "64", "128"]),
    default=None,
    help="HEALPix resolution of the sky (overrides the scenario; default 32, about 1.8 deg).",
)


def composed_name(ctx, param, value):
    """A name given on the command line in Unicode's composed form (snrgain.fields.nfc), as the scenario's names are:
    an accent typed as a separate mark names the same antenna."""
    if value is None:
        return None
    from snrgain.fields import nfc

    return nfc(value)


reference_option = click.option(
    "--reference",
    "reference",
    default=None,
    metavar="NAME",
    callback=composed_name,
    help="Rank against this antenna of the scenario instead of its [reference] (the file's reference then stands "
    "among the candidates); local levels stay read on the antenna the file says (read_on, default the file's "
    "reference), so the noise does not change.",
)


band_option = click.option(
    "--band",
    "band",
    default=None,
    metavar="NAME",
    help="In a scenario of several bands ([[band]]), the one to use (its name, or its frequency as written when "
    "it has none).",
)


def load_scenario(scenario, *, nside=None, p372_dir=None, reference=None, band=None):
    """The scenario a command runs: loaded with the command line's --nside, --p372-dir, --reference and --band."""
    from snrgain.scenario import load

    return load(scenario, nside=int(nside) if nside else None, p372_dir=p372_dir, reference=reference, band=band)


def band_names(scenario) -> list[str] | None:
    """The band names of a scenario file of several bands; None for one band (or a file that cannot be read:
    loading it then says why)."""
    from snrgain.errors import ScenarioError
    from snrgain.scenario import read_source
    from snrgain.scenario.bands import split_bands

    try:
        data, label, _ = read_source(scenario)
    except (OSError, ValueError):
        return None
    if not isinstance(data.get("band"), list):
        return None
    try:
        return [name for name, _ in split_bands(data, label)]
    except ScenarioError:
        return None


def _figure_path(ctx, param, value):
    """--plot's file, refused before any work unless it ends in .png or .svg (a figure is a file, not text for '-')."""
    if value is not None and Path(value).suffix.lower() not in (".png", ".svg"):
        raise click.BadParameter(f"{value!r}: a figure is written to a file named .png or .svg")
    return value


def plot_option(what: str):
    """--plot FILE: save ``what`` as a figure (PNG or SVG, by the suffix)."""
    return click.option(
        "--plot",
        type=click.Path(dir_okay=False, path_type=str),
        default=None,
        callback=_figure_path,
        help=f"Save {what} (PNG or SVG).",
    )


def show_progress() -> bool:
    """Whether to draw progress: only when stderr is a terminal (never into a pipe, a log or a test's capture)."""
    try:
        return sys.stderr.isatty()
    except (AttributeError, ValueError):
        return False


class Progress:
    """What :func:`progress` yields: ``step(n=1)`` as work is done, or ``step.update(done, total)``."""

    def __init__(self, bar=None, task=None):
        self._bar, self._task = bar, task

    def __call__(self, n: int = 1) -> None:
        if self._bar is not None:
            self._bar.advance(self._task, n)

    def update(self, done: int, total: int | None = None) -> None:
        if self._bar is not None:
            self._bar.update(self._task, completed=done, **({} if total is None else {"total": total}))


@contextlib.contextmanager
def progress(total: int | None, what: str) -> Iterator[Progress]:
    """Progress of a step that can take over a second, drawn with rich on stderr when it is a terminal.

    ``total``: the count of work announced up front (designs, readings, figures), or None for a step whose size
    is not known (a spinner with the time taken).  Yields a :class:`Progress` to call as work is done; with no
    terminal it draws nothing (nothing reaches a pipe, a log or a test's captured output).

        with progress(len(jobs), "figures") as step:
            for job in jobs:
                ...
                step()
    """
    if not show_progress():
        yield Progress()
        return
    from rich.console import Console
    from rich.progress import BarColumn, MofNCompleteColumn, SpinnerColumn, TextColumn, TimeElapsedColumn
    from rich.progress import Progress as Bar

    columns = [SpinnerColumn(), TextColumn("{task.description}")]
    if total is not None:
        columns += [BarColumn(), MofNCompleteColumn()]
    columns.append(TimeElapsedColumn())
    with Bar(*columns, console=Console(stderr=True), transient=True) as bar:
        label = f"{what} ({total:,})" if total is not None else what
        yield Progress(bar, bar.add_task(label, total=total))


def fail(message: str, code: int) -> None:
    click.echo(f"snrgain: {shown(message)}", err=True)
    sys.exit(code)


def shown(text: str) -> str:
    """``text`` as a terminal shows it safely: control characters but the line break and tab, and invisible format
    characters (a direction override reverses the rest of the line, a zero-width space hides), written as escapes
    (``\\x00``, ``\\u202e``): a refused value is quoted as it was written, not acted on by the terminal."""
    import unicodedata

    def one(ch: str) -> str:
        if ch in "\n\t" or unicodedata.category(ch) not in ("Cc", "Cf", "Zl", "Zp"):
            return ch
        code = ord(ch)
        return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}" if code < 0x10000 else f"\\U{code:08x}"

    return "".join(map(one, text))


def handle_errors(fn):
    """Turn library exceptions into messages on stderr and exit codes."""

    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        from snrgain.files import command_inputs

        try:
            with command_inputs():  # no output written over a file the command read
                return fn(*args, **kwargs)
        except BrokenPipeError:  # output piped into a reader that stopped early (e.g. head): leave quietly
            import os

            os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
            sys.exit(EXIT_FAILURE)
        except KeyboardInterrupt:  # Ctrl-C outside the `snrgain` entry point (which raises its own Interrupted)
            fail("interrupted; no output was left half-written", 130)
        except OutputExistsError as exc:
            fail(f"{exc.path} exists; pass --overwrite to replace it", EXIT_BAD_INPUT)
        except OutputWriteError as exc:
            fail(str(exc), EXIT_BAD_INPUT if exc.refused else EXIT_FAILURE)
        except BandNeededError as exc:  # a valid file of several bands
            fail(f"one band at a time here:\n{exc}", EXIT_BAD_INPUT)
        except ReadingsError as exc:
            n = len(exc.problems)
            fail(f"invalid readings ({n} problem{'s' if n != 1 else ''}):\n{exc}", EXIT_BAD_INPUT)
        except ScenarioError as exc:
            n = len(exc.problems)
            fail(f"invalid scenario ({n} problem{'s' if n != 1 else ''}):\n{exc}", EXIT_BAD_INPUT)
        except (SpecError, QuantityError, FileExistsError, FileNotFoundError) as exc:
            fail(str(exc), EXIT_BAD_INPUT)
        except ValueError as exc:
            fail(str(exc), EXIT_BAD_INPUT)
        except OverflowError:  # a number of the input (a level of 1e308 dB, say) too large to compute with
            fail(
                "the input leads to a number too large to compute with (an overflow); check its values and the "
                "options for one far outside what a station gives (a level of 1e308 dB, an extreme combination)",
                EXIT_BAD_INPUT,
            )
        except (OSError, RuntimeError, ArithmeticError) as exc:
            fail(f"failed: {exc}", EXIT_FAILURE)

    return wrapper


p372_dir_option = click.option(
    "--p372-dir",
    type=click.Path(file_okay=False, path_type=str),
    default=None,
    help="Folder of the ITU-R P.372 coefficient files COEFF01W.txt ... COEFF12W.txt.  It wins over the scenario key "
    "noise.atmospheric.data_dir, which wins over the environment variable SNRGAIN_P372_DIR.",
)


def scenario_copy_options(what: str):
    """--scenario, --write, --overwrite and --format shared by the commands that read readings files."""

    def deco(fn):
        fn = click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table", show_default=True)(
            fn
        )
        fn = overwrite_option(fn)
        fn = click.option(
            "--write",
            "write_to",
            type=click.Path(dir_okay=False, path_type=str),
            default=None,
            help="Where to write that copy (with --scenario).",
        )(fn)
        fn = click.option(
            "--scenario",
            type=click.Path(exists=True, dir_okay=False, path_type=str),
            default=None,
            help=f"A scenario to copy with {what}.",
        )(fn)
        return fn

    return deco


def readings_preamble(*, example_text: str, example: bool, readings, scenario, write_to) -> bool:
    """Common start of the readings commands: print the example (True: done) or check the arguments."""
    if example:
        click.echo(example_text, nl=False)
        return True
    if readings is None:
        raise click.UsageError("give a READINGS file (see --example)")
    if (scenario is None) != (write_to is None):
        raise click.UsageError("--scenario and --write go together")
    if scenario is not None:  # a copy of a scenario that does not load would not load either: said before any work
        from snrgain.scenario import read_source

        data, label, base_dir = read_source(Path(scenario))
        loads_as_checked(data, base_dir=base_dir, label=label)
    return False


def loads_as_checked(data: dict, *, base_dir, label: str) -> None:
    """Load a scenario's tables as ``check`` does, each band of a file of several; ScenarioError naming every
    problem but a missing P.372 data folder (a scenario copy does not touch it, and the data may be fetched later)."""
    import copy

    from snrgain.errors import ScenarioError
    from snrgain.scenario import load, split_bands
    from snrgain.scenario.bands import band_problems
    from snrgain.scenario.p372dir import NO_FOLDER_TEXT

    names = [name for name, _ in split_bands(data, label)] if isinstance(data.get("band"), list) else [None]
    found = {}
    for band in names:
        try:
            load(copy.deepcopy(data), base_dir=base_dir, label=label, band=band)
        except ScenarioError as exc:
            rest = [(p, m) for p, m in exc.problems if not m.startswith(NO_FOLDER_TEXT)]
            if rest:
                found[band] = rest
    if found:
        problems = found[None] if names == [None] else band_problems(found, len(names))
        raise ScenarioError(label, problems)


def copy_refused(text: str, *, scenario, write_to):
    """The ScenarioError ``check`` would give the scenario copy ``text`` written at ``write_to`` (its paths made
    relative to that folder, as :func:`write_output` writes them), or None where it loads: a copy is loaded before
    it is written, so no command writes one that ``check`` and ``rank`` refuse."""
    from snrgain.errors import ScenarioError
    from snrgain.scenario import parse_toml

    content, _ = rebased_paths(text, scenario, write_to)
    try:
        loads_as_checked(parse_toml(content, str(write_to)), base_dir=Path(write_to).resolve().parent, label=write_to)
    except ScenarioError as exc:
        return exc
    return None


def read_scenario_text(path) -> str:
    """A scenario's text to copy (calibrate, locate, layout --write): a regular UTF-8 file within the size limit."""
    from snrgain.errors import ScenarioError
    from snrgain.scenario import read_text_file
    from snrgain.scenario.files import is_stdin

    if is_stdin(path):  # a copy keeps the scenario's own folder for its relative paths: it needs the file
        raise ScenarioError(str(path), [("", "a scenario copy is made from a file: give the scenario's path, not '-'")])
    return read_text_file(Path(path))


def emit_json(data) -> None:
    """Print a JSON-ready structure (numpy values converted, sorted keys, non-finite numbers as null)."""
    click.echo(json_text(data), nl=False)


def json_text(data) -> str:
    from snrgain.model.results import jsonable

    return json.dumps(jsonable(data), sort_keys=True, indent=2, allow_nan=False) + "\n"


def write_output(path, content, *, overwrite: bool, replaces=None) -> None:
    """Write a file whole or not at all and say so on stderr; ``replaces``: the scenario a copy updates, which it
    may replace (with --overwrite), where no other file the command read may be written over."""
    if str(path) == "-":  # standard output, as 'new -' writes
        click.echo(content, nl=not str(content).endswith("\n"))
        return
    from snrgain.files import write_atomic

    moved = []
    if replaces is not None:
        content, moved = rebased_paths(content, replaces, path)
    write_atomic(path, content, overwrite=overwrite, replaces=replaces)
    click.echo(f"wrote {path}", err=True)
    for old, new in moved:
        click.echo(f"  (the copy names {old!r} from its own folder: {new!r})", err=True)


PATH_KEYS = ("file", "data_dir")
"""A scenario's keys that name a file or folder, relative to the scenario's own folder when not absolute."""


def rebased_paths(text: str, scenario, path) -> tuple[str, list[tuple[str, str]]]:
    """A scenario copy's text for a file in another folder than ``scenario``: each path the scenario names relative
    to its own folder (a pattern table's ``file``, P.372's ``data_dir``, written as a plain quoted string) written
    relative to the copy's folder, in one pass over those keys alone, so the copy finds what the scenario finds; and
    the (old, new) paths changed.  The text as it is in the same folder."""
    import os
    import re

    from snrgain.tools.tomltext import toml_string

    here, there = Path(scenario).resolve().parent, Path(path).resolve().parent
    if here == there:
        return text, []
    moved: dict[str, str] = {}
    keys = "|".join(PATH_KEYS)

    def rebase(m):
        old = m.group(3) if m.group(3) is not None else m.group(4)
        if os.path.isabs(os.path.expanduser(old)):
            return m.group(0)
        new = moved.setdefault(old, os.path.relpath(here / old, there))
        return m.group(1) + toml_string(new)

    pattern = rf"""((?<![\w-])(?:{keys})\s*=\s*)("([^"\\\n]*)"|'([^'\n]*)')"""
    text = re.sub(pattern, rebase, text)
    return text, list(moved.items())


def check_suffix(path, fmt: str, suffixes: dict[str, tuple[str, ...]], param: str = "fmt") -> str:
    """The format to write: the one the option (parameter ``param``) gives, or, where it was left to its default,
    the one the output's name says (``suffixes``: each format's names; "-o r.json" writes JSON); refused before any
    work when the two are given and disagree ("--format csv -o r.json" wrote CSV into it).  A name no format claims
    is the user's choice."""
    if path is None or str(path) == "-":
        return fmt
    suffix = Path(path).suffix.lower()
    said = next((f for f, names in suffixes.items() if suffix in names), None)
    if said is None or said == fmt:
        return fmt
    ctx = click.get_current_context(silent=True)
    if ctx is not None and ctx.get_parameter_source(param) == click.core.ParameterSource.DEFAULT:
        return said
    mine = suffixes.get(fmt) or ()
    instead = f"name it {mine[0]}, or " if mine else ""
    raise click.BadParameter(
        f"{path}: the name ends in {suffix}, a {said} file's, but --format is {fmt}; {instead}give --format {said}",
        param_hint="--output",
    )


def check_output(path, *, overwrite: bool, replaces=None) -> None:
    """Refuse, before any work, an output file that exists (without --overwrite), has no folder, is given for two
    outputs, or is one of the command's input files (its arguments, --scenario) but ``replaces``, the scenario a
    copy updates; "-" is standard output (write_output), not for a scenario copy (the command prints its own)."""
    if path is None:
        return
    if str(path) == "-":
        if replaces is not None:
            raise ValueError("a scenario copy is written to a file: '-' would mix it with the command's own output")
        return
    from snrgain.files import check_writable, claim_output

    claim_output(path)
    check_writable(path, overwrite=overwrite, replaces=replaces)
    _not_an_input(path, replaces)


def _not_an_input(path, replaces) -> None:
    """ValueError when ``path`` is the same file as one of the current command's arguments or its --scenario (the
    files it reads), other than ``replaces``; the write itself checks the files actually read (snrgain.files)."""
    import os

    ctx = click.get_current_context(silent=True)
    if ctx is None or not os.path.isfile(path):
        return
    if replaces is not None and os.path.isfile(replaces) and os.path.samefile(replaces, path):
        return
    for param in ctx.command.params:
        if not (isinstance(param, click.Argument) or param.name == "scenario"):
            continue
        value = ctx.params.get(param.name)
        for v in value if isinstance(value, (list, tuple)) else [value]:
            if isinstance(v, (str, os.PathLike)) and os.path.isfile(v) and os.path.samefile(v, path):
                raise ValueError(f"{path} is one of this command's inputs; give the output another name")
