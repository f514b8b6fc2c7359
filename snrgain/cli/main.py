"""Entry point of the ``snrgain`` command."""

from __future__ import annotations

import click

from snrgain import __version__
from snrgain.errors import RECEIVED as _received  # the stop signals received (the first decides the exit code)
from snrgain.errors import Interrupted

# Each subcommand's module, imported when the command line names it (or when --help lists them all): a `rank`
# loads none of the others' modules.
COMMANDS = {
    "calibrate": ("snrgain.cli.calibrate", "calibrate"),
    "check": ("snrgain.cli.check", "check"),
    "figures": ("snrgain.cli.report", "figures"),
    "layout": ("snrgain.cli.layout", "layout"),
    "locate": ("snrgain.cli.locate", "locate"),
    "new": ("snrgain.cli.new", "new"),
    "noise": ("snrgain.cli.noise", "noise"),
    "noise-readings": ("snrgain.cli.noisereadings", "noise_readings"),
    "rank": ("snrgain.cli.rank", "rank"),
    "report": ("snrgain.cli.report", "report"),
    "sweep": ("snrgain.cli.sweep", "sweep"),
    "verify": ("snrgain.cli.verify", "verify"),
    "wire": ("snrgain.cli.wire", "wire"),
}


class _Commands(click.Group):
    """The subcommands of :data:`COMMANDS`, each module imported on first use."""

    def list_commands(self, ctx):
        return sorted({*COMMANDS, *self.commands})

    def get_command(self, ctx, cmd_name):
        if cmd_name not in self.commands and cmd_name in COMMANDS:
            import importlib

            module, name = COMMANDS[cmd_name]
            self.add_command(getattr(importlib.import_module(module), name), cmd_name)
        return self.commands.get(cmd_name)


@click.group(cls=_Commands, context_settings={"help_option_names": ["-h", "--help"]})
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


def _interrupt_on_signals() -> None:
    """Ctrl-C (SIGINT) and SIGTERM raise :class:`Interrupted`; a second signal while the first unwinds is ignored.

    Python runs a signal handler wherever the main thread is; if that is a finaliser (an object's ``__del__``, a
    weakref callback, which matplotlib has), the exception cannot propagate: Python would print "Exception
    ignored" with a traceback and carry on.  The unraisable hook catches that case quietly and a helper thread
    sends the signal again until it lands in ordinary code (not in the hook itself, which a loaded machine can
    let happen); and :func:`main` exits with the
    signal's code even if the work finished meanwhile."""
    import os
    import signal
    import sys
    import threading

    resend = []  # the unraisable hook's own signal, sent again after a finaliser swallowed the first
    hooking = []  # set while the unraisable hook runs: a signal landing there is dropped (and sent again)
    landed = threading.Event()  # set once Interrupted is raised in ordinary code's reach

    def pester(signum):
        # send the signal until it is raised outside the hook: on a loaded machine the first resend can land
        # before the hook returns (up to 10 s, then the work carries on and main() still exits with its code)
        for _ in range(200):
            os.kill(os.getpid(), signum)
            if landed.wait(0.05):
                return

    def handler(signum, frame):
        if hooking:  # inside the hook the exception could not propagate either: the helper thread sends it again
            return
        if resend:
            resend.clear()
        elif _received:  # a second signal (or both tripped at once) while the first unwinds
            return
        else:
            _received.append(signum)
        for sig in (signal.SIGINT, signal.SIGTERM):
            signal.signal(sig, signal.SIG_IGN)
        landed.set()
        raise Interrupted(signum)

    previous_hook = sys.unraisablehook

    def unraisable(args):
        if not isinstance(args.exc_value, Interrupted):
            previous_hook(args)
            return
        hooking.append(True)
        try:
            for sig in (signal.SIGINT, signal.SIGTERM):
                signal.signal(sig, handler)
            resend.append(args.exc_value.signum)
            landed.clear()
            threading.Thread(target=pester, args=(args.exc_value.signum,), daemon=True).start()
        finally:
            hooking.clear()

    for sig in (signal.SIGINT, signal.SIGTERM):
        try:
            signal.signal(sig, handler)
        except ValueError:  # not the main thread (e.g. under a test runner's thread)
            return
    sys.unraisablehook = unraisable


def _stopped(signum: int) -> None:
    import signal
    import sys

    name = "SIGTERM" if signum == signal.SIGTERM else "Ctrl-C"
    try:
        sys.stderr.write(f"\nsnrgain: stopped by {name}; no output was left half-written\n")
        sys.stderr.flush()
    except (OSError, ValueError):
        pass
    # The shell's convention: 128 + the signal's number (130 for Ctrl-C, 143 for SIGTERM).
    sys.exit(128 + int(signum))


def _warning_line(message, category, filename, lineno, line=None) -> str:
    """A library's warning as the command line prints it: one line, without the source line.  matplotlib's missing
    glyph (a name in a script the figures' font lacks) is said in the builder's words."""
    import re

    text = str(message)
    glyph = re.match(r"Glyph (\d+) \((.*)\) missing from font\(s\) (.+?)\.?$", text)
    if glyph:
        char = chr(int(glyph.group(1)))
        return (
            f"warning: the figures' font ({glyph.group(3)}) has no letter {char!r} (U+{ord(char):04X}); it is drawn "
            "as an empty box. Use letters the font has in the names, or install a font that has them\n"
        )
    return f"warning: {text}\n"


def main() -> None:
    """The ``snrgain`` command.

    A stop signal may arrive at any moment, also while the command is already leaving (an error exit, or the
    result written a moment before): wherever it lands, the command ends with the signal's code and one line, never
    a traceback.  The work runs inside two nested ``try`` blocks; the inner one's ``finally`` blocks both signals
    (they stay pending and die with the process) and ignores them, so a handler can only run inside the outer block,
    which catches its exception."""
    import os
    import signal
    import sys
    import warnings

    os.environ.setdefault("PYDANTIC_DISABLE_PLUGINS", "__all__")  # the command uses none (snrgain.cli's notes)
    status: object = 0
    try:
        try:
            # Floating-point warnings name source lines, which say nothing to a user; results carry their own checks.
            warnings.filterwarnings("ignore", category=RuntimeWarning)
            # Any other warning a library gives (the figures' processes inherit this) as one line, without the
            # source line it came from
            warnings.formatwarning = _warning_line
            _interrupt_on_signals()
            # The command line owns its process: keep freed memory for the next array (snrgain.allocator).
            from snrgain.allocator import tune

            tune()
            cli()
        except SystemExit as exc:
            status = exc.code
        except Exception:
            if not _received:
                raise
            # else a stop whose exception was lost left the work in a state it could not finish from
        finally:
            # Blocked in this thread and ignored in the others (numerical libraries start threads of their own, and
            # at exit Python would hand a caught signal back to the default action, killing the process).
            signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT, signal.SIGTERM})
            for sig in (signal.SIGINT, signal.SIGTERM):
                signal.signal(sig, signal.SIG_IGN)
    except Interrupted:
        pass
    # Leaving, Python collects the whole heap once more (the modules, the results): moved out of the collector's
    # reach, the objects are only freed (a tenth of a second of a `figures` of the realistic site).
    import gc

    gc.freeze()
    if _received:  # also a signal caught where it could not stop the work (see _interrupt_on_signals)
        _stopped(_received[0])
    sys.exit(status)


if __name__ == "__main__":  # pragma: no cover
    main()
