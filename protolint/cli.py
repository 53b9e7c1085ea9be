"""Command-line entry point.

Commands live in ``protolint.commands.<name>`` and are imported only when invoked, so
``protolint check`` never pays for the numerical or rendering stacks.
"""

from __future__ import annotations

import importlib
import importlib.util

import click

from protolint import __version__
from protolint.commands.base import ProtolintGroup

# name -> (module, one-line help). The help is repeated here so that ``protolint --help``
# can list every command without importing any of them.
COMMANDS: dict[str, tuple[str, str]] = {
    "check": ("protolint.commands.check", "Check measurement plans against the rules."),
    "rules": ("protolint.commands.rules", "List the rules, or explain one rule."),
    "schema": ("protolint.commands.schema", "Print the plan JSON Schema."),
    "init": ("protolint.commands.init", "Write a commented starter plan."),
    "size": ("protolint.commands.size", "Reliability-adjusted sample size and power."),
    "agreement": ("protolint.commands.agreement", "Reliability coefficients from rating data."),
    "consistency": ("protolint.commands.consistency", "Internal consistency of item data."),
    "render": ("protolint.commands.render", "Render controlled documents from a plan."),
    "calendar": ("protolint.commands.calendar", "Training, certification and monitoring dates as iCalendar."),
    "design": ("protolint.commands.design", "Variance components and the cheapest raters x occasions x N design."),
    "drift": ("protolint.commands.drift", "Rater certification, drift and the recertification due list."),
    "diff": ("protolint.commands.diff", "What changed between two versions of a plan, and in its findings."),
}


class LazyGroup(ProtolintGroup):
    """A click group that imports a command's module only when that command runs."""

    def list_commands(self, ctx: click.Context) -> list[str]:
        return sorted(name for name, (module, _) in COMMANDS.items() if _module_exists(module))

    def get_command(self, ctx: click.Context, cmd_name: str) -> click.Command | None:
        entry = COMMANDS.get(cmd_name)
        if entry is None:
            return None
        try:
            module = importlib.import_module(entry[0])
        except ModuleNotFoundError as error:
            raise _without_extra(cmd_name, error) from None
        return module.command

    def invoke(self, ctx: click.Context) -> object:
        try:
            return super().invoke(ctx)
        except ModuleNotFoundError as error:
            # Commands import their stacks lazily, so a missing extra shows up here.
            raise _without_extra(ctx.invoked_subcommand, error) from None

    def format_commands(self, ctx: click.Context, formatter: click.HelpFormatter) -> None:
        rows = [(name, COMMANDS[name][1]) for name in self.list_commands(ctx)]
        if rows:
            with formatter.section("Commands"):
                formatter.write_dl(rows)


def _without_extra(command: str | None, error: ModuleNotFoundError) -> Exception:
    from protolint.extras import missing_extra_error

    return missing_extra_error(command, error) or error


def _module_exists(module: str) -> bool:
    return importlib.util.find_spec(module) is not None


@click.group(cls=LazyGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="protolint")
def main() -> None:
    """Check measurement plans for rated trial outcomes, recompute their numbers and
    render the controlled documents QA needs.

    \b
    Example:
      protolint check demo_protocol/plan.yaml
    """
