"""Errors that end a command with a one-line message and exit code 2, never a traceback."""

from __future__ import annotations

from typing import IO, Any

import click


class ProtolintError(click.ClickException):
    """Input that could not be checked: exit code 2 with a one-line message on stderr."""

    exit_code = 2

    def show(self, file: IO[Any] | None = None) -> None:
        click.echo(f"protolint: {self.format_message()}", err=True)


class LocatedError(ProtolintError):
    """An error that points at a place in an input file (``file:line:column: message``).

    ``line`` and ``column`` are 1-based; ``column`` may be omitted for line-oriented
    inputs such as CSV files.
    """

    def __init__(self, file: str, line: int | None, column: int | None, message: str) -> None:
        self.file = file
        self.line = line
        self.column = column
        self.reason = message
        where = file
        if line is not None:
            where += f":{line}"
            if column is not None:
                where += f":{column}"
        super().__init__(f"{where}: {message}")

    def show(self, file: IO[Any] | None = None) -> None:
        # The location comes first so editors and CI logs can jump to it.
        click.echo(self.format_message(), err=True)
