"""Helpers shared by the commands: JSON without NaN, atomic output (and the old name of the command class)."""

from __future__ import annotations

import json
import math
from typing import Any

import click

from protolint.commands.base import ProtolintCommand


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
