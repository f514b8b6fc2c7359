"""Entry point of the ``snrgain`` command."""

from __future__ import annotations

import click

from snrgain import __version__
from snrgain.cli.calibrate import calibrate
from snrgain.cli.check import check
from snrgain.cli.layout import layout
from snrgain.cli.locate import locate
from snrgain.cli.new import new
from snrgain.cli.noise import noise
from snrgain.cli.rank import rank
from snrgain.cli.report import figures, report
from snrgain.cli.sweep import sweep
from snrgain.cli.wire import wire


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="snrgain")
def cli():
    """How many dB of signal-to-noise ratio would a receiving antenna gain over
    the one you have, at your site, for the stations you want, at your hours?

    Describe the site in a scenario file (start with 'snrgain new'), check it
    with 'snrgain check', and rank the candidates with 'snrgain rank'.

    Arrays: a delay is positive when an element's signal comes later; phases
    need phase_sense = 'lag' (delayed by the phase, as by a longer cable) or
    'lead'.  The front element lagging beams forward.
    """


class Interrupted(BaseException):
    """Ctrl-C or SIGTERM: raised in the main thread by the handlers :func:`main` installs, caught there only.

    A BaseException that is not a KeyboardInterrupt, so neither library code (``except Exception``) nor click
    (which turns a KeyboardInterrupt into "Aborted!" and exit 1) swallows it on the way out; ``finally`` blocks and
    the file writers' clean-up still run."""

    def __init__(self, signum: int):
        super().__init__(signum)
        self.signum = signum


def _interrupt_on_signals() -> None:
    """Ctrl-C (SIGINT) and SIGTERM raise :class:`Interrupted`; a second signal while the first unwinds is ignored."""
    import signal

    def handler(signum, frame):
        for sig in (signal.SIGINT, signal.SIGTERM):
            signal.signal(sig, signal.SIG_IGN)
        raise Interrupted(signum)

    for sig in (signal.SIGINT, signal.SIGTERM):
        try:
            signal.signal(sig, handler)
        except ValueError:  # not the main thread (e.g. under a test runner's thread)
            pass


cli.add_command(rank)
cli.add_command(check)
cli.add_command(new)
cli.add_command(noise)
cli.add_command(wire)
cli.add_command(calibrate)
cli.add_command(locate)
cli.add_command(report)
cli.add_command(figures)
cli.add_command(sweep)
cli.add_command(layout)


def main() -> None:
    """The ``snrgain`` command."""
    import warnings

    # Floating-point warnings name source lines, which say nothing to a user; results carry their own checks.
    warnings.filterwarnings("ignore", category=RuntimeWarning)
    _interrupt_on_signals()
    try:
        cli()
    except Interrupted as exc:
        import signal
        import sys

        name = "SIGTERM" if exc.signum == signal.SIGTERM else "Ctrl-C"
        try:
            sys.stderr.write(f"\nsnrgain: stopped by {name}; no output was left half-written\n")
            sys.stderr.flush()
        except (OSError, ValueError):
            pass
        # The shell's convention: 128 + the signal's number (130 for Ctrl-C, 143 for SIGTERM).
        sys.exit(128 + int(exc.signum))


if __name__ == "__main__":  # pragma: no cover
    main()
