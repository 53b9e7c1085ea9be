"""A data file as a header and rows of cells, whatever its format.

Every reader in this package returns a :class:`SourceTable`: the header, the rows as given
(a cell is text, a number or ``None`` for empty; nothing is converted yet) and the place of
each row in the file, so later steps can locate every error.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Union

from protolint.data.where import Where

# A cell as stored in the file: text (stripped), a number, or None for an empty cell.
Cell = Union[str, float, None]

FORMATS = ("csv", "tsv", "xlsx", "dataset-json", "xpt")

# Place styles: how a row (and a cell) is named in an error.
LINE = "line"        # text files: file:LINE
SHEET = "sheet"      # workbooks: file:Sheet!C4
RECORD = "record"    # Dataset-JSON (.json) and SAS transport: file:row N


def column_letter(index: int) -> str:
    """Spreadsheet column letters of 0-based ``index`` (0 -> A, 26 -> AA)."""
    letters = ""
    index += 1
    while index:
        index, remainder = divmod(index - 1, 26)
        letters = chr(65 + remainder) + letters
    return letters


@dataclass(frozen=True)
class SourceTable:
    """The raw table of one data file.

    ``row_numbers`` are the file's own numbers of the data rows: text lines, worksheet rows,
    NDJSON lines, or 1-based record numbers. ``header_number`` is that of the header.
    """

    path: str
    format: str
    detail: str
    header: tuple[str, ...]
    rows: tuple[tuple[Cell, ...], ...]
    row_numbers: tuple[int, ...]
    header_number: int
    style: str = LINE
    sheet: str = ""
    stored_formula_values: int = 0

    def _place(self, number: int, column: int | None) -> str:
        if self.style == SHEET:
            return f"{self.sheet}!{column_letter(column)}{number}" if column is not None else f"{self.sheet}!{number}:{number}"
        if self.style == RECORD:
            return f"row {number}"
        return str(number)

    def header_where(self, column: int | None = None) -> Where:
        """The header (or one header cell)."""
        if self.style == RECORD:
            return Where(self.path, "columns" if column is None else f"columns[{column}]")
        return Where(self.path, self._place(self.header_number, column))

    def where(self, row: int, column: int | None = None) -> Where:
        """Data row ``row`` (0-based), or one of its cells."""
        return Where(self.path, self._place(self.row_numbers[row], column))

    def where_number(self, number: int) -> Where:
        """A row given by its file number (e.g. the last line)."""
        return Where(self.path, self._place(number, None))


def cell_text(cell: Cell) -> str:
    """A cell as text: numbers as written by Python's shortest repr (2.0 -> '2')."""
    if cell is None:
        return ""
    if isinstance(cell, float):
        return str(int(cell)) if cell.is_integer() else repr(cell)
    return cell


# The one grammar of a number in a data file: ASCII digits, an optional sign, decimal point
# and exponent. Python's float() would also take "1_00", full-width digits, "nan", "inf" and
# "infinity", none of which an export means as a rating.
_NUMBER = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?", re.ASCII)

# Larger magnitudes are refused: no rating scale, count or laboratory value in a rated outcome
# comes near, and the statistics square their mean squares (an ICC interval's Satterthwaite
# degrees of freedom hold fourth powers of the scores), which overflows long before the
# largest float: 1e99 already gives infinity there. 1e15 keeps fourth powers near 1e60.
MAX_MAGNITUDE = 1e15


def shown_text(text: str, most: int = 40) -> str:
    """``text`` quoted for a message, shortened when long (a 5,000-digit cell stays one short line)."""
    if len(text) <= most:
        return repr(text)
    return f"{text[:most]!r}… ({len(text):,} characters)"


def is_number_text(text: str) -> bool:
    """True when ``text`` is written as a number (finite or not, in range or not)."""
    return _NUMBER.fullmatch(text) is not None


def parse_number(cell: Cell) -> float:
    """The number in ``cell`` (text by the strict grammar, or a number a binary format stored).

    Raises
    ------
    ValueError
        With the reason in words: not a number, or beyond ±1e15.
    """
    if cell is None:
        raise ValueError("empty")
    if isinstance(cell, float):
        value = cell
    else:
        if not _NUMBER.fullmatch(cell):
            lowered = cell.strip().lower()
            if lowered in ("nan", "+nan", "-nan", "inf", "+inf", "-inf", "infinity", "+infinity", "-infinity"):
                raise ValueError(f"{shown_text(cell)} is not a finite number")
            raise ValueError(f"{shown_text(cell)} is not a number")
        value = float(cell)
    if not math.isfinite(value) or abs(value) > MAX_MAGNITUDE:
        shown = f"{value:g}" if isinstance(cell, float) else shown_text(cell)
        raise ValueError(f"{shown} is beyond ±1e15, outside any rating scale")
    return value
