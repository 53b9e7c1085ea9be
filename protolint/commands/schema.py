"""``protolint schema``: print the plan (or policy) JSON Schema."""

from __future__ import annotations

import json

import click

from protolint.commands.base import ProtolintCommand


@click.command("schema", cls=ProtolintCommand)
@click.option("--policy", "which", flag_value="policy.schema.json", help="Print the policy-file schema instead.")
@click.option("--plan", "which", flag_value="plan.schema.json", default=True, help="Print the plan schema (default).")
def command(which: str) -> None:
    """Print the JSON Schema (draft 2020-12) of the plan format, for editors and other tools.

    \b
    Examples:
      protolint schema > plan.schema.json
      protolint schema --policy
    """
    from protolint.resources import load_schema

    click.echo(json.dumps(load_schema(which), indent=2, ensure_ascii=False))
