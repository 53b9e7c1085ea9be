"""Helpers shared by the commands: the check options, JSON without NaN, atomic output."""

from __future__ import annotations

import json
import math
import sys
from typing import Any, Callable, TypeVar

import click

from protolint.commands.base import parse_date_option
from protolint.errors import ProtolintError


F = TypeVar("F", bound=Callable[..., Any])


def check_options(as_of_help: str = "Date the date rules compare with (default: each plan's plan_date).") -> Callable[[F], F]:
    """``--policy FILE`` and ``--as-of YYYY-MM-DD``, the same for every command that checks a plan
    (check, render, calendar, diff), so a document or a comparison is made under exactly the
    policy and date a CI check used."""
    def decorate(command: F) -> F:
        command = click.option("--as-of", callback=parse_date_option, metavar="YYYY-MM-DD", help=as_of_help)(command)
        return click.option("--policy", type=click.Path(dir_okay=False),
                            help="Policy file that switches rules off or changes severities and thresholds.")(command)
    return decorate


def _finite(value: Any) -> Any:
    # JSON has no NaN or Infinity; an undefined number (a degenerate interval) becomes null.
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {key: _finite(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [_finite(item) for item in value]
    return value


def to_json(report: dict[str, Any]) -> str:
    """The report as indented JSON; non-finite numbers are written as null."""
    return json.dumps(_finite(report), indent=2, allow_nan=False) + "\n"


def emit(content: str | bytes, output: str | None, what: str, *, binary: bool = False) -> None:
    """Write ``content`` to standard output (``output`` None or ``-``), or atomically to the
    file ``output`` with a note on stderr.

    ``binary`` content (a PDF) is refused on a terminal, where it would only garble the
    screen; redirected or piped standard output takes it.
    """
    from protolint.atomic import STDOUT

    if output and output != STDOUT:
        from protolint.atomic import write_atomic

        kept = write_atomic(output, content)
        note = f"wrote {what} to {output}" if kept else f"discarded {what} ({output} is the null device)"
        click.echo(f"protolint: {note}", err=True)
        return
    if isinstance(content, bytes):
        if binary and sys.stdout.isatty():
            raise ProtolintError(f"refusing to write the {what} to a terminal; give --output FILE or redirect "
                                 "standard output to a file")
        sys.stdout.buffer.write(content)
        sys.stdout.buffer.flush()
    else:
        click.echo(content, nl=False)
