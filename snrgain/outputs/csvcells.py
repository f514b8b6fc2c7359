"""CSV cells that a spreadsheet opens as the text they are: the one writer of every CSV output (rank, sweep).

A spreadsheet reads a cell that begins with ``=``, ``+``, ``-`` or ``@`` (or a tab or a carriage return before one)
as a formula, so a user-given name such as ``=1+2`` would be computed, or worse, when the file is opened.  Such a
text cell is written with a leading apostrophe, the usual spreadsheet-safe form (shown as the text, without the
apostrophe); a number, even written as text (``-3.200``, ``-1e-05``), is left as it is.

>>> [safe_cell(v) for v in ("=1+2", "@SUM(A1)", "-ref", "-3.200", "+2", -3.2, "Beverage", "")]
["'=1+2", "'@SUM(A1)", "'-ref", '-3.200', '+2', -3.2, 'Beverage', '']
"""

from __future__ import annotations

import csv

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")
"""What a cell begins with that a spreadsheet may read as a formula."""


def safe_cell(value):
    """``value`` as a CSV cell: text that begins like a formula and is not a number, behind an apostrophe."""
    if isinstance(value, str) and value.startswith(FORMULA_STARTS) and not _number(value):
        return "'" + value
    return value


def _number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return not text[:1].isspace()  # a tab or carriage return before a number is not a number's text


class SafeWriter:
    """``csv.writer`` (lines ended by "\\n") whose every cell passes :func:`safe_cell`."""

    def __init__(self, stream):
        self._w = csv.writer(stream, lineterminator="\n")

    def writerow(self, row) -> None:
        self._w.writerow([safe_cell(v) for v in row])


def csv_writer(stream) -> SafeWriter:
    """The writer of every CSV the tool writes (rank --format csv, sweep -o x.csv)."""
    return SafeWriter(stream)
