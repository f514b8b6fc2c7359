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
