"""The one command class every ``protolint`` command uses.

Bad input ends a command the same way everywhere: one line ``protolint: <message>`` on
stderr and exit code 2 (see :mod:`protolint.errors`). click's own usage errors would print the
usage block and a "Try --help" hint as well; scripts, pre-commit hooks and CI logs read better
with the one line, and the same line whichever command was mistyped.
"""

from __future__ import annotations

from typing import Any

import click

from protolint.errors import ProtolintError


# click 8.2+ signals "no arguments, so print the help" with a UsageError subclass; that one
# keeps click's behaviour (the help text, not an error line).
_HELP_REQUEST: tuple[type[BaseException], ...] = tuple(
    cls for cls in (getattr(click.exceptions, "NoArgsIsHelpError", None),) if cls is not None
)


def _one_line(command: str | None, error: click.UsageError) -> click.UsageError | ProtolintError:
    if isinstance(error, _HELP_REQUEST):
        return error
    message = " ".join(error.format_message().split())
    return ProtolintError(f"{command}: {message}" if command else message)


class ProtolintCommand(click.Command):
    """A click command whose usage errors (unknown option, bad choice, missing argument) are
    one line on stderr with exit code 2, like every other input error."""

    def parse_args(self, ctx: click.Context, args: list[str]) -> list[str]:
        try:
            return super().parse_args(ctx, args)
        except click.UsageError as error:
            raise _one_line(self.name, error) from None

    def invoke(self, ctx: click.Context) -> Any:
        try:
            return super().invoke(ctx)
        except click.UsageError as error:
            # A BadParameter raised by a command's own callback.
            raise _one_line(self.name, error) from None


class ProtolintGroup(click.Group):
    """The same one-line behaviour for the top level (an unknown command or option)."""

    def parse_args(self, ctx: click.Context, args: list[str]) -> list[str]:
        try:
            return super().parse_args(ctx, args)
        except click.UsageError as error:
            raise _one_line(None, error) from None

    def resolve_command(self, ctx: click.Context, args: list[str]) -> tuple[str | None, click.Command | None, list[str]]:
        try:
            return super().resolve_command(ctx, args)
        except click.UsageError as error:
            raise _one_line(None, error) from None
