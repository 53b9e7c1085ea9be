"""Where a value sits in a data file, and the one-line error that points there."""

from __future__ import annotations

from dataclasses import dataclass

from protolint.errors import LocatedError, ProtolintError


@dataclass(frozen=True)
class Where:
    """A place in a data file: ``file:line`` (text), ``file:Sheet!C4`` (workbook) or
    ``file:row 12`` (a record of a Dataset-JSON or SAS transport file)."""

    file: str
    place: str = ""

    def __str__(self) -> str:
        return f"{self.file}:{self.place}" if self.place else self.file


class DataError(LocatedError):
    """Bad input data: ``<where>: <message>``, exit code 2, no traceback."""

    def __init__(self, where: Where, message: str) -> None:
        self.file = where.file
        self.line = None
        self.column = None
        self.reason = message
        self.where = where
        ProtolintError.__init__(self, f"{where}: {message}")
