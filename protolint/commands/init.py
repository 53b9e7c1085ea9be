"""``protolint init``: write a commented starter plan."""

from __future__ import annotations

from pathlib import Path

import click

from protolint.commands.base import ProtolintCommand
from protolint.errors import ProtolintError


@click.command("init", cls=ProtolintCommand)
@click.argument("path", default="plan.yaml", type=click.Path(dir_okay=False))
@click.option("--force", is_flag=True, help="Overwrite PATH if it exists.")
def command(path: str, force: bool) -> None:
    """Write a commented starter measurement plan to PATH (default plan.yaml).

    The starter plan is valid against the plan schema, and 'protolint check' on it lists, section
    by section, every placeholder still to replace (it fails until none is left).

    \b
    Example:
      protolint init plans/my-trial.yaml && protolint check plans/my-trial.yaml
    """
    from protolint.atomic import write_atomic
    from protolint.resources import templates_dir

    target = Path(path)
    if target.exists() and not force:
        raise ProtolintError(f"{path}: already exists; use --force to overwrite it")
    starter = (templates_dir() / "starter-plan.yaml").read_text(encoding="utf-8")
    write_atomic(target, starter)
    click.echo(f"protolint: wrote a starter plan to {path}; 'protolint check {path}' "
               "lists the placeholders still to replace", err=True)
