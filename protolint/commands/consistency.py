"""``protolint consistency``: internal consistency of item data."""

from __future__ import annotations

from typing import TYPE_CHECKING

import click

from protolint.data.rawfile import LIMITS_HELP as DATA_LIMITS

from protolint.commands._shared import emit, to_json
from protolint.commands.base import ProtolintCommand
from protolint.data.options import TABLE_ROLES, reader_options

if TYPE_CHECKING:
    from protolint.data import ReadOptions


@click.command("consistency", cls=ProtolintCommand, epilog=DATA_LIMITS)
@click.argument("items", metavar="ITEMS.csv", type=click.Path(dir_okay=False))
@click.option("--confidence", type=float, default=0.95, show_default=True, help="Confidence level of the interval.")
@click.option("--format", "fmt", type=click.Choice(("text", "json")), default="text", show_default=True, help="Output format.")
@click.option("--output", "-o", type=click.Path(dir_okay=False), help="Write to this file instead of standard output.")
@reader_options(roles=TABLE_ROLES)
def command(items: str, confidence: float, fmt: str, output: str | None, read_options: ReadOptions) -> None:
    """Internal consistency of item data: Cronbach's alpha, item statistics, SEM, MDC.

    ITEMS.csv has a header row, one row per respondent with an id in the first column, and one
    column per item; respondents with an empty cell are left out and counted. Other formats and
    long data (one row per item score) as for `agreement` (--item, --score, --columns sdtm-qs).
    The SEM and MDC
    rest on alpha (internal consistency), not on the test-retest or inter-rater reliability
    that `protolint check` uses for a plan's SEM.

    \b
    Example:
      protolint consistency severity_items.csv --format json --output alpha.json
    """
    from protolint.analysis import consistency

    report = consistency.analyse_file(items, confidence, read_options)
    text = to_json(report.to_json()) if fmt == "json" else consistency.format_text(report)
    emit(text, output, f"{fmt} consistency report")
