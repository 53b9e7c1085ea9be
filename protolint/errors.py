"""Errors that end a command with a one-line message and exit code 2, never a traceback.

Every message is one line: control characters in it (a line break or an escape sequence that
came from a plan, a data file or a library's message) are shown as escapes such as ``\\n``
and ``\\x1b``. A located message has the form ``file:line:column: message``; an error about
the file as a whole (missing, unreadable) is at line 0, column 0, and a line-oriented input
(a CSV row) gives column 0 for the whole line, so one pattern parses every message.
"""

from __future__ import annotations

import re
from typing import IO, Any, Sequence

import click

# C0/C1 controls, DEL and the Unicode line/paragraph separators. Printed raw they could move
# the cursor, recolour a terminal or split a CI log line.
_CONTROL = re.compile(r"[\x00-\x1f\x7f-\x9f\u2028\u2029]")

# Control characters refused in input text, the plan's quoted values and SOP texts as much as
# data files: C0 controls other than tab, line feed and carriage return; DEL; C1 controls.
# One definition for the plan and data readers (data/ does not import plan/). Every one of
# them is also escaped by one_line above, so a message can quote the text that holds one.
CONTROL_CHARACTERS = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f]")


def one_line(text: str) -> str:
    """Text safe to print on a single line: control characters shown as escapes."""
    return _CONTROL.sub(escape_control, text)


def escape_control(match: re.Match[str]) -> str:
    char = match.group(0)
    if char == "\n":
        return "\\n"
    if char == "\t":
        return "\\t"
    code = ord(char)
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"


def line_column(text_before: str) -> tuple[int, int]:
    """The 1-based line and column just after ``text_before``, the text up to a problem."""
    line = text_before.count("\n") + 1
    return line, len(text_before) - (text_before.rfind("\n") + 1) + 1


class ProtolintError(click.ClickException):
    """Input that could not be checked: exit code 2 with a one-line message on stderr."""

    exit_code = 2

    def __init__(self, message: str) -> None:
        super().__init__(one_line(message))

    def show(self, file: IO[Any] | None = None) -> None:
        click.echo(f"protolint: {self.format_message()}", err=True)


class LocatedError(ProtolintError):
    """An error that points at a place in an input file (``file:line:column: message``).

    ``line`` and ``column`` are 1-based; 0 (or None) stands for "the whole file" (line) or
    "the whole line" (column), and is printed as 0 so the form never changes.
    """

    def __init__(self, file: str, line: int | None, column: int | None, message: str) -> None:
        self.file = file
        self.line = line or 0
        self.column = (column or 0) if line else 0
        self.reason = one_line(message)
        super().__init__(f"{file}:{self.line}:{self.column}: {self.reason}")

    def show(self, file: IO[Any] | None = None) -> None:
        # The location comes first so editors and CI logs can jump to it.
        click.echo(self.format_message(), err=True)


class InputErrors(ProtolintError):
    """Several inputs that could not be read: one located line each, then exit code 2."""

    def __init__(self, errors: Sequence[LocatedError]) -> None:
        self.errors = tuple(errors)
        super().__init__(self.errors[0].format_message() if self.errors else "no input could be read")

    def show(self, file: IO[Any] | None = None) -> None:
        for error in self.errors:
            error.show(file)
