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


def _end_cleanly_on_sigterm() -> None:
    """A SIGTERM (kill) ends the command as Ctrl-C does, so that files being written are cleaned up."""
    import signal

    def handler(signum, frame):
        raise KeyboardInterrupt

    try:
        signal.signal(signal.SIGTERM, handler)
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
    _end_cleanly_on_sigterm()
    # The command line owns its process: keep freed memory for the next array (snrgain.allocator).
    from snrgain.allocator import tune

    tune()
    cli()


if __name__ == "__main__":  # pragma: no cover
    main()
