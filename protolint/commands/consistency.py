"""``protolint consistency``: internal consistency of item data."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import click

from protolint import CAUTION
from protolint.commands.base import ProtolintCommand
from protolint.errors import ProtolintError

if TYPE_CHECKING:
    from protolint.data import ReadOptions


def analyse(path: str, confidence: float, read_options: ReadOptions | None = None) -> dict[str, Any]:
    """Cronbach's alpha, item statistics, SEM and MDC95 for an items file."""
    from protolint import stats
    from protolint.data import read_rating_table

    table = read_rating_table(path, read_options, numeric=True, kind="item", scale="item scores")
    try:
        result = stats.cronbach_alpha(table.values, confidence=confidence)
    except ValueError as error:
        raise ProtolintError(f"{path}: {error}") from None
    items = [
        {
            "item": table.columns[item.index],
            "mean": item.mean,
            "sd": item.sd,
            "corrected_item_total_r": item.corrected_item_total_r,
            "alpha_if_deleted": item.alpha_if_deleted,
        }
        for item in result.items
    ]
    notes = []
    if result.n_dropped:
        notes.append(f"{result.n_dropped} respondent(s) with a missing item dropped; {result.n_respondents} used")
    return {
        "file": path,
        "respondents": result.n_respondents,
        "items": result.n_items,
        "dropped": result.n_dropped,
        "confidence": confidence,
        "cronbach_alpha": {"value": result.value, "ci": [result.ci.low, result.ci.high], "ci_method": "Feldt (1965)"},
        "sd_total": result.sd_total,
        "sem": result.sem,
        "mdc95": result.mdc95,
        "sem_definition": "SD of the total score * sqrt(1 - alpha); MDC95 = 1.96 * sqrt(2) * SEM",
        "item_statistics": items,
        "notes": notes,
        "input": table.provenance.to_json() if table.provenance else None,
        "caution": CAUTION,
    }


def _num(x: float | None) -> str:
    return "     -" if x is None else f"{x:6.3f}"


def render_text(report: dict[str, Any]) -> str:
    level = round(report["confidence"] * 100, 4)
    alpha = report["cronbach_alpha"]
    lines = [
        f"Internal consistency of {report['file']}",
        f"{report['respondents']} respondents x {report['items']} items",
        *provenance_lines(report.get("input")),
        "",
        f"Cronbach's alpha     {alpha['value']:.3f}   {level:g}% CI [{alpha['ci'][0]:.3f}, {alpha['ci'][1]:.3f}] (Feldt 1965)",
        f"SD of total score    {report['sd_total']:.3f}",
        f"SEM                  {report['sem']:.3f}   = SD * sqrt(1 - alpha), in total-score units",
        f"MDC95                {report['mdc95']:.3f}   = 1.96 * sqrt(2) * SEM",
        "",
    ]
    width = max(4, *(len(item["item"]) for item in report["item_statistics"]))
    header = f"{'Item':<{width}}    Mean      SD  r(item, rest)  alpha if deleted"
    lines += [header, "-" * len(header)]
    for item in report["item_statistics"]:
        lines.append(
            f"{item['item']:<{width}}  {item['mean']:6.3f}  {item['sd']:6.3f}  {_num(item['corrected_item_total_r']):>13}"
            f"  {_num(item['alpha_if_deleted']):>16}"
        )
    lines += ["", "r(item, rest): correlation of the item with the total of the other items (corrected item-total)."]
    if report["notes"]:
        lines += ["", "Notes:"] + [f"  - {note}" for note in report["notes"]]
    lines += ["", click.wrap_text(CAUTION, width=100)]
    return "\n".join(lines) + "\n"


@click.command("consistency", cls=ProtolintCommand)
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

    \b
    Example:
      protolint consistency severity_items.csv --format json --output alpha.json
    """
    from protolint.commands._shared import emit, to_json

    if not 0.0 < confidence < 1.0:
        raise ProtolintError(f"--confidence must be between 0 and 1, got {confidence}")
    report = analyse(items, confidence, read_options)
    text = to_json(report) if fmt == "json" else render_text(report)
    emit(text, output, f"{fmt} consistency report")
