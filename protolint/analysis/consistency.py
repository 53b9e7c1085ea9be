"""Internal consistency of item data, as one report.

Cronbach's alpha with Feldt's interval, item statistics, and the SEM and smallest detectable
change that rest on alpha. The report says which reliability its SEM rests on: an alpha-based
SEM counts the disagreement among items at one sitting, not the disagreement between raters or
occasions that a test-retest or inter-rater SEM (the one a plan's measurement-error rules use)
counts, so the two differ and are not interchangeable.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from protolint import CAUTION
from protolint.errors import ProtolintError
from protolint.wording import plural

if TYPE_CHECKING:
    from protolint.data import RatingTable, ReadOptions

FEW_RESPONDENTS = 30

SEM_BASIS = (
    "Cronbach's alpha (internal consistency: agreement among the items at one sitting). It is not "
    "the test-retest or inter-rater SEM, which rests on an ICC between occasions or raters and is what "
    "`protolint check` uses for a plan's measurement-error rules; the two usually differ."
)


@dataclass(frozen=True)
class ItemRow:
    item: str
    mean: float
    sd: float
    corrected_item_total_r: float | None
    alpha_if_deleted: float | None

    def to_json(self) -> dict[str, Any]:
        return {"item": self.item, "mean": self.mean, "sd": self.sd,
                "corrected_item_total_r": self.corrected_item_total_r, "alpha_if_deleted": self.alpha_if_deleted}


@dataclass(frozen=True)
class ConsistencyReport:
    file: str
    respondents: int
    items: int
    dropped: int
    confidence: float
    alpha: float
    ci_low: float
    ci_high: float
    sd_total: float
    sem: float
    mdc95: float
    item_statistics: tuple[ItemRow, ...]
    notes: tuple[str, ...]
    warnings: tuple[str, ...]
    input: dict[str, Any] | None = None
    """Where the table came from (the reader's provenance summary), when known."""

    def to_json(self) -> dict[str, Any]:
        return {
            "file": self.file,
            "respondents": self.respondents,
            "items": self.items,
            "dropped": self.dropped,
            "confidence": self.confidence,
            "cronbach_alpha": {"value": self.alpha, "ci": [self.ci_low, self.ci_high], "ci_method": "Feldt (1965)"},
            "sd_total": self.sd_total,
            "sem": self.sem,
            "mdc95": self.mdc95,
            "sem_definition": "SD of the total score * sqrt(1 - alpha); MDC95 = 1.96 * sqrt(2) * SEM",
            "sem_reliability": {"coefficient": "cronbach_alpha", "kind": "internal consistency", "value": self.alpha,
                                "note": SEM_BASIS.replace("`", "")},
            "item_statistics": [item.to_json() for item in self.item_statistics],
            "notes": list(self.notes),
            "warnings": list(self.warnings),
            "input": self.input,
            "caution": CAUTION,
        }


def analyse_file(path: str, confidence: float = 0.95, read_options: ReadOptions | None = None) -> ConsistencyReport:
    """Read an items file (any format the shared reader takes) and analyse it."""
    from protolint.data import read_rating_table

    if not 0.0 < confidence < 1.0:
        raise ProtolintError(f"--confidence must be between 0 and 1, got {confidence}")
    table = read_rating_table(path, read_options, numeric=True, kind="item", number_reason="item scores must be numbers", allow_constant=True)
    return analyse(table, confidence)


def analyse(table: RatingTable, confidence: float = 0.95) -> ConsistencyReport:
    """Cronbach's alpha, item statistics, SEM and MDC95 of a respondents x items table."""
    import numpy as np

    from protolint import stats

    warnings: list[str] = []
    values = table.values
    for j, name in enumerate(table.columns):
        present = values[~np.isnan(values[:, j]), j]
        if present.size >= 2 and np.all(present == present[0]):
            warnings.append(
                f"Item {name!r} has the same score ({present[0]:g}) for every respondent (a floor or ceiling); alpha "
                "is computed, but the item adds nothing to the total and its correlation with the rest is undefined."
            )
    try:
        result = stats.cronbach_alpha(values, confidence=confidence)
    except ValueError as error:
        raise ProtolintError(f"{table.path}: {error}") from None
    if result.n_respondents < FEW_RESPONDENTS:
        warnings.append(
            f"Alpha rests on {result.n_respondents} respondents; with fewer than {FEW_RESPONDENTS} its interval is wide "
            "and the item statistics are unstable (common practice)."
        )
    items = tuple(
        ItemRow(table.columns[item.index], item.mean, item.sd, _defined(item.corrected_item_total_r), _defined(item.alpha_if_deleted))
        for item in result.items
    )
    notes = []
    if result.n_dropped:
        notes.append(
            f"{plural(result.n_dropped, 'respondent')} with a missing item dropped; "
            f"{result.n_respondents} used."
        )
    return ConsistencyReport(
        file=table.path, respondents=result.n_respondents, items=result.n_items, dropped=result.n_dropped,
        confidence=confidence, alpha=result.value, ci_low=result.ci.low, ci_high=result.ci.high,
        sd_total=result.sd_total, sem=result.sem, mdc95=result.mdc95, item_statistics=items,
        notes=tuple(notes), warnings=tuple(warnings),
        input=table.provenance.to_json() if table.provenance is not None else None,
    )


def _defined(x: float | None) -> float | None:
    return None if x is None or not math.isfinite(x) else x


def _num(x: float | None) -> str:
    return "     -" if x is None else f"{x:6.3f}"


def format_text(report: ConsistencyReport, width: int = 100) -> str:
    import textwrap

    from protolint.data.provenance import provenance_lines

    def wrap(text: str, indent: str = "") -> list[str]:
        return textwrap.wrap(text, width=width, initial_indent=indent, subsequent_indent=indent + "  " if indent else "")

    level = round(report.confidence * 100, 4)
    lines = [
        f"Internal consistency of {report.file}",
        f"{report.respondents} respondents x {report.items} items",
        *provenance_lines(report.input),
        "",
        f"Cronbach's alpha     {report.alpha:.3f}   {level:g}% CI [{report.ci_low:.3f}, {report.ci_high:.3f}] (Feldt 1965)",
        f"SD of total score    {report.sd_total:.3f}",
        f"SEM                  {report.sem:.3f}   = SD * sqrt(1 - alpha), in total-score units",
        f"MDC95                {report.mdc95:.3f}   = 1.96 * sqrt(2) * SEM",
        "",
    ]
    lines += wrap(f"Which reliability the SEM rests on: {SEM_BASIS.replace('`', '')}")
    lines.append("")
    width_item = max(4, *(len(item.item) for item in report.item_statistics))
    header = f"{'Item':<{width_item}}    Mean      SD  r(item, rest)  alpha if deleted"
    lines += [header, "-" * len(header)]
    for item in report.item_statistics:
        lines.append(
            f"{item.item:<{width_item}}  {item.mean:6.3f}  {item.sd:6.3f}  {_num(item.corrected_item_total_r):>13}"
            f"  {_num(item.alpha_if_deleted):>16}"
        )
    lines += ["", "r(item, rest): correlation of the item with the total of the other items (corrected item-total)."]
    if report.warnings:
        lines += ["", "Warnings:"]
        for warning in report.warnings:
            lines += wrap(f"- {warning}", "  ")
    if report.notes:
        lines += ["", "Notes:"] + [f"  - {note}" for note in report.notes]
    lines += [""] + textwrap.wrap(CAUTION, width=width)
    return "\n".join(lines) + "\n"
