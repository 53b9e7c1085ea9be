"""``protolint check``: validate plans, run the rules, report."""

from __future__ import annotations

import os
import sys
from datetime import date

import click

from protolint.commands._shared import check_options
from protolint.commands.base import ProtolintCommand
from protolint.errors import ProtolintError
from protolint.findings import Severity
from protolint.report import FORMATS


@click.command("check", cls=ProtolintCommand)
@click.argument("plans", nargs=-1, required=True, metavar="PLAN...")
@click.option("--format", "fmt", type=click.Choice(FORMATS), default="text", show_default=True,
              help="Report format.")
@click.option("--output", "-o", type=click.Path(dir_okay=False), help="Write the report to this file instead of standard output.")
@click.option("--fail-on", type=click.Choice(["error", "warning", "note", "never"]), default="error", show_default=True,
              help="Lowest severity that makes the exit code 1.")
@check_options()
@click.option("--color/--no-color", default=None, help="Colour the text report (default: on a terminal, unless NO_COLOR is set).")
def command(plans: tuple[str, ...], fmt: str, output: str | None, policy: str | None, fail_on: str,
            as_of: date | None, color: bool | None) -> None:
    """Check measurement plans against the schema and the rules.

    Exit code 0 when nothing at or above --fail-on was found, 1 when something was,
    2 when a plan or the policy could not be read: then json, sarif, junit and github still
    write a report (to --output or standard output) that says the check failed, and every
    format prints the located lines on standard error.

    \b
    Examples:
      protolint check demo_protocol/plan.yaml
      protolint check plans/*.yaml --format sarif --output protolint.sarif
      protolint check plan.yaml --as-of 2027-01-01 --fail-on warning
    """
    from protolint.pipeline import check_files, rules_run
    from protolint.report import render_report

    # An unreadable plan or policy raises before any rule runs; the located lines go to stderr
    # and the exit code is 2. A format a tool reads still gets a report, one that says the
    # check failed (_report_failure), so an upload never shows an unchecked plan as clean.
    try:
        result = check_files(plans, policy, as_of)
    except ProtolintError as error:
        _report_failure(fmt, output, plans, error)
        raise
    if color is None:
        color = output is None and sys.stdout.isatty() and not os.environ.get("NO_COLOR")
    report = render_report(fmt, result, rules_run(result), color=color)
    if output:
        from protolint.commands._shared import emit
        from protolint.report._common import counts_phrase

        emit(report, output, f"{fmt} report ({counts_phrase(result.counts())})")
    else:
        click.echo(report, nl=not report.endswith("\n"), color=color)

    if fail_on != "never":
        level = Severity.parse(fail_on)
        if any(f.severity >= level and not f.waived for plan in result.plans for f in plan.findings):
            sys.exit(1)


def _report_failure(fmt: str, output: str | None, plans: tuple[str, ...], error: ProtolintError) -> None:
    """Write the failure report of a format a tool reads; people's formats get none (an existing
    --output file is then left as it was). Written quietly: on exit 2 standard error carries only
    the located lines."""
    from protolint.pipeline import failure_of
    from protolint.report import render_failure_report

    report = render_failure_report(fmt, failure_of(plans, error))
    if report is None:
        return
    if output and output != "-":
        from protolint.atomic import write_atomic

        try:
            write_atomic(output, report)
        except ProtolintError as write_error:  # say why the report is missing, then why the check failed
            write_error.show()
    else:
        click.echo(report, nl=False)
