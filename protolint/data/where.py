"""Where a value sits in a data file, and the one-line error that points there."""

from __future__ import annotations

import re
from dataclasses import dataclass

from protolint.errors import LocatedError, ProtolintError, one_line


@dataclass(frozen=True)
class Where:
    """A place in a data file: ``file:line:0`` (a line of text; column 0 = the whole line, as
    in every located message), ``file:Sheet!C4`` (workbook) or ``file:row 12`` (a record of a
    Dataset-JSON or SAS transport file); ``file:0:0`` is the file as a whole."""

    file: str
    place: str = ""

    def __str__(self) -> str:
        if not self.place:
            return f"{self.file}:0:0"
        return f"{self.file}:{self.place}:0" if self.place.isdigit() else f"{self.file}:{self.place}"

    @property
    def line(self) -> int:
        """The line of a text place (``12`` or ``12:5``), else 0."""
        found = _LINE_COLUMN.fullmatch(self.place)
        return int(found.group(1)) if found else 0

    @property
    def column(self) -> int:
        """The column of a text place written ``12:5``, else 0 (the whole line, or not text)."""
        found = _LINE_COLUMN.fullmatch(self.place)
        return int(found.group(2)) if found and found.group(2) else 0


# A text place: a line, or a line and a 1-based column.
_LINE_COLUMN = re.compile(r"([0-9]+)(?::([0-9]+))?")


class DataError(LocatedError):
    """Bad input data: ``<where>: <message>``, exit code 2, no traceback."""

    def __init__(self, where: Where, message: str) -> None:
        self.file = where.file
        self.line = where.line
        self.column = where.column
        self.reason = one_line(message)
        self.where = where
        ProtolintError.__init__(self, f"{where}: {message}")


def file_error(path: str, error: OSError | UnicodeDecodeError) -> DataError:
    """The one-line error for a data file that cannot be opened or decoded as UTF-8 text."""
    if isinstance(error, UnicodeDecodeError):
        return DataError(Where(path), f"not UTF-8 text ({error.reason} at byte {error.start})")
    if isinstance(error, FileNotFoundError):
        return DataError(Where(path), "no such file")
    if isinstance(error, IsADirectoryError):
        return DataError(Where(path), "is a directory, expected a data file")
    return DataError(Where(path), f"cannot read: {error.strerror}")
