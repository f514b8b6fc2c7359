"""The library's input errors, importable without the rest of the package (the command line's error handling
needs them before any real work starts)."""

from __future__ import annotations


class ScenarioError(ValueError):
    """An invalid scenario: ``problems`` is a list of (field path, message)."""

    def __init__(self, source: str, problems: list[tuple[str, str]]):
        self.source = source
        self.problems = problems
        lines = [f"{source}: {path}: {msg}" if path else f"{source}: {msg}" for path, msg in problems]
        super().__init__("\n".join(lines))


class BandNeededError(ScenarioError):
    """A file of several bands given to a command that answers one band (``--band NAME``): not an invalid file."""


class SpecError(ValueError):
    """An antenna spec that cannot be built; ``problems`` lists (field path, message)."""

    def __init__(self, problems: list[tuple[str, str]]):
        self.problems = problems
        super().__init__("; ".join(f"{p}: {m}" if p else m for p, m in problems))


class ReadingsError(ScenarioError):
    """An invalid readings file (calibrate, locate): ``problems`` is a list of (field path, message)."""


class TooLargeError(ValueError):
    """A scenario whose evaluation would take longer or more memory than the stated limits allow, refused before
    any work with the estimate; ``field`` names the key that sizes it."""

    def __init__(self, message: str, field: str = "uncertainty.samples"):
        self.field = field
        super().__init__(message)


class Interrupted(BaseException):
    """Ctrl-C or SIGTERM: raised in the main thread by the handlers the command line installs, caught there only.

    A BaseException that is not a KeyboardInterrupt, so neither library code (``except Exception``) nor click
    (which turns a KeyboardInterrupt into "Aborted!" and exit 1) swallows it on the way out; ``finally`` blocks and
    the file writers' clean-up still run."""

    def __init__(self, signum: int):
        super().__init__(signum)
        self.signum = signum


RECEIVED: list[int] = []
"""The stop signals the command line's handlers have received (the first decides the exit code).  A handler's
exception can be lost where Python cannot raise it (a finaliser; the compiler while a module is imported); the
writers look here before putting an output in place, so a stop asked for is never followed by a new output."""


def stop_if_asked() -> None:
    """Raise :class:`Interrupted` if the command line has received a stop signal."""
    if RECEIVED:
        raise Interrupted(RECEIVED[0])
