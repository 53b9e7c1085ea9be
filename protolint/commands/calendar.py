"""``protolint calendar``: the plan's training, certification, monitoring and SOP review dates."""

from __future__ import annotations

from datetime import date

import click

from protolint.commands._shared import check_options
from protolint.commands.base import ProtolintCommand


@click.command("calendar", cls=ProtolintCommand)
@click.argument("plan", metavar="PLAN")
@click.option("--output", "-o", type=click.Path(dir_okay=False, allow_dash=True),
              help="iCalendar file to write (default: standard output).")
@check_options("Date the rules compare with, and the calendar's time stamp (default: the plan's plan_date; "
               "SOURCE_DATE_EPOCH then dates the file when set).")
def command(plan: str, output: str | None, policy: str | None, as_of: date | None) -> None:
    """Export every training deadline, certification and recertification date, monitoring
    round and SOP review date of PLAN as iCalendar (RFC 5545) all-day events.

    The plan is checked as `protolint check` checks it with the same --policy and --as-of;
    the calendar's description records both, and whether the plan has open errors.

    Event UIDs are stable: importing a re-export of the same plan updates the events
    instead of duplicating them.

    \b
    Examples:
      protolint calendar demo_protocol/plan.yaml --output out/demo.ics
      protolint calendar plan.yaml > duties.ics
    """
    from protolint.plan import read_plan_file
    from protolint.render.calendar import render_calendar
    from protolint.render.document import document_check

    loaded = read_plan_file(plan)
    data = render_calendar(loaded, document_check(loaded, policy, as_of))
    from protolint.commands._shared import emit

    emit(data, output, "calendar")
