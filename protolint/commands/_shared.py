"""Helpers shared by the commands: one-line usage errors, JSON without NaN, atomic output."""

from __future__ import annotations

import json
import math
from typing import Any

import click

from protolint.errors import ProtolintError


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


class OneLineCommand(click.Command):
    """A click command whose usage errors are one line on stderr with exit code 2.

    click's own usage errors print the usage block as well; scripts and CI logs are easier
    to read with just ``protolint: <message>``.
    """

    def parse_args(self, ctx: click.Context, args: list[str]) -> list[str]:
        try:
            return super().parse_args(ctx, args)
        except click.UsageError as error:
            raise ProtolintError(f"{self.name}: {error.format_message()}") from None


def emit(text: str, output: str | None, what: str) -> None:
    """Write ``text`` to stdout, or atomically to ``output`` with a note on stderr."""
    if output:
        from protolint.atomic import write_atomic

        write_atomic(output, text)
        click.echo(f"protolint: wrote {what} to {output}", err=True)
    else:
        click.echo(text, nl=False)
