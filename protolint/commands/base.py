"""The one command class every ``protolint`` command uses.

Bad input ends a command the same way everywhere: one line ``protolint: <message>`` on
stderr and exit code 2 (see :mod:`protolint.errors`). click's own usage errors would print the
usage block and a "Try --help" hint as well; scripts, pre-commit hooks and CI logs read better
with the one line, and the same line whichever command was mistyped.
"""

from __future__ import annotations

import os
import signal
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from datetime import date
from typing import Any

import click

from protolint.errors import ProtolintError

# Parameters that name a file the command writes; every other parameter whose value names an
# existing file is an input of the run, which the output may not overwrite.
OUTPUT_PARAMETERS = ("output",)

# Exit codes of a run ended by a signal: 128 + the signal's number, as shells report them.
EXIT_INTERRUPTED = 128 + signal.SIGINT
EXIT_TERMINATED = 128 + signal.SIGTERM

def parse_date_option(ctx: click.Context | None, param: click.Parameter | None, value: str | None) -> date | None:
    """A click callback for date options: exactly ``YYYY-MM-DD`` (not ``20260715``, not
    ``2026-W01-1``, which Python's ``date.fromisoformat`` also accepts), a real date."""
    from protolint.dates import parse_date

    if value is None:
        return None
    try:
        return parse_date(value)
    except ValueError as error:
        raise click.BadParameter(str(error), ctx, param) from None


class Interrupted(ProtolintError):
    """Ctrl-C: one line, exit code 130, and (through the exception) every temporary file removed."""

    exit_code = EXIT_INTERRUPTED


class Terminated(BaseException):
    """Raised by the SIGTERM handler. A BaseException, like KeyboardInterrupt, so that no
    ``except Exception`` in a library swallows it and every ``finally`` runs."""


class TerminatedError(ProtolintError):
    exit_code = EXIT_TERMINATED


def _raise_terminated(signum: int, frame: Any) -> None:
    raise Terminated()


@contextmanager
def signals_as_exceptions() -> Iterator[None]:
    """SIGINT and SIGTERM end the run with one line and their exit code, after clean-up.

    SIGINT already arrives as KeyboardInterrupt; SIGTERM is made to arrive as
    :class:`Terminated`. Only the main thread can install handlers (tests may run commands
    elsewhere); the previous handler is put back afterwards.
    """
    installed = threading.current_thread() is threading.main_thread()
    previous = signal.signal(signal.SIGTERM, _raise_terminated) if installed else None
    try:
        yield
    except KeyboardInterrupt:
        raise Interrupted("interrupted; no output was written") from None
    except Terminated:
        raise TerminatedError("terminated; no output was written") from None
    finally:
        if installed:
            signal.signal(signal.SIGTERM, previous)


def _named_files(value: Any) -> Iterator[str]:
    if isinstance(value, (str, os.PathLike)):
        text = os.fspath(value)
        if text and text != "-" and os.path.exists(text):
            yield str(text)
    elif isinstance(value, (tuple, list)):
        for item in value:
            yield from _named_files(item)


def record_inputs(ctx: click.Context) -> None:
    """Note the run's input files in the context and refuse a bad ``--output`` before any work.

    Refusing first means a long render or analysis never runs only to find it cannot write.
    """
    from protolint.atomic import STDOUT, check_output

    inputs = [path for name, value in ctx.params.items() if name not in OUTPUT_PARAMETERS
              for path in _named_files(value)]
    ctx.meta["protolint.inputs"] = tuple(inputs)
    for name in OUTPUT_PARAMETERS:
        output = ctx.params.get(name)
        if isinstance(output, str) and output and output != STDOUT:
            check_output(output, inputs)


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
            record_inputs(ctx)
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

    def invoke(self, ctx: click.Context) -> Any:
        # Inside click's own main loop, so the one-line error replaces click's "Aborted!".
        with signals_as_exceptions():
            return super().invoke(ctx)

    def resolve_command(self, ctx: click.Context, args: list[str]) -> tuple[str | None, click.Command | None, list[str]]:
        try:
            return super().resolve_command(ctx, args)
        except click.UsageError as error:
            raise _one_line(None, error) from None
