"""Helpers shared by the commands: the check options, JSON without NaN, atomic output (and the
old name of the command class)."""

from __future__ import annotations

import json
import math
from datetime import date
from typing import Any, Callable, TypeVar

import click

from protolint.commands.base import ProtolintCommand


F = TypeVar("F", bound=Callable[..., Any])


def parse_as_of(ctx: click.Context, param: click.Parameter, value: str | None) -> date | None:
    if value is None:
        return None
    try:
        return date.fromisoformat(value)
    except ValueError:
        raise click.BadParameter(f"{value!r} is not a date written YYYY-MM-DD") from None


def check_options(as_of_help: str = "Date the date rules compare with (default: each plan's plan_date).") -> Callable[[F], F]:
    """``--policy FILE`` and ``--as-of YYYY-MM-DD``, the same for every command that checks a plan
    (check, render, calendar, diff), so a document or a comparison is made under exactly the
    policy and date a CI check used."""
    def decorate(command: F) -> F:
        command = click.option("--as-of", callback=parse_as_of, metavar="YYYY-MM-DD", help=as_of_help)(command)
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


# The one command class lives in ``protolint.commands.base``; this name is kept for commands
# written before it existed.
OneLineCommand = ProtolintCommand


def emit(text: str, output: str | None, what: str) -> None:
    """Write ``text`` to stdout, or atomically to ``output`` with a note on stderr."""
    if output:
        from protolint.atomic import write_atomic

        write_atomic(output, text)
        click.echo(f"protolint: wrote {what} to {output}", err=True)
    else:
        click.echo(text, nl=False)
