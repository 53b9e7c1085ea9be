"""What a reader did with a file: rows read, used, and skipped with the reason."""

from __future__ import annotations

import textwrap
from protolint.wording import plural
from dataclasses import dataclass
from typing import Any


@dataclass(frozen=True)
class Provenance:
    """The account of one read, shown by every analysis command.

    Attributes
    ----------
    file, format, detail : str
        The file, its format ("csv", "xlsx", …) and what was read in it (sheet, dataset).
    layout : str
        "wide" (one row per subject, one column per rater or item) or "long" (one row per
        rating, columns mapped to roles).
    rows_read, rows_used : int
        Data rows in the file, and rows that went into the analysis.
    skipped : tuple of (reason, count)
        Rows left out, by reason, in the order the reasons were applied.
    columns : tuple of (role, column)
        The role of each column used (long layout).
    notes : tuple of str
        Anything else the reader did that a reviewer should know (formula values used).
    """

    file: str
    format: str
    detail: str
    layout: str
    rows_read: int
    rows_used: int
    skipped: tuple[tuple[str, int], ...] = ()
    columns: tuple[tuple[str, str], ...] = ()
    notes: tuple[str, ...] = ()

    def to_json(self) -> dict[str, Any]:
        return {
            "file": self.file,
            "format": self.format,
            "detail": self.detail,
            "layout": self.layout,
            "rows_read": self.rows_read,
            "rows_used": self.rows_used,
            "rows_skipped": {reason: count for reason, count in self.skipped},
            "columns": {role: column for role, column in self.columns},
            "notes": list(self.notes),
        }

    def text_lines(self) -> list[str]:
        """Two or three lines for a text report."""
        return provenance_lines(self.to_json())


def provenance_lines(summary: dict[str, Any] | None) -> list[str]:
    """Text lines of a :meth:`Provenance.to_json` summary (none for None)."""
    if not summary:
        return []
    lines = [f"Input: {summary['format']} ({summary['detail']}), {summary['layout']} layout: "
             f"{plural(summary['rows_read'], 'row')} read, {summary['rows_used']} used"]
    if summary["rows_skipped"]:
        lines[0] += "; skipped: " + ", ".join(f"{count} {reason}" for reason, count in summary["rows_skipped"].items())
    if summary["columns"]:
        lines.append("Columns: " + ", ".join(f"{role}={column}" for role, column in summary["columns"].items()))
    lines += [f"Note: {note}" for note in summary["notes"]]
    # Wrapped like the rest of the text reports (100 columns), continuation lines indented.
    return [wrapped for line in lines for wrapped in textwrap.wrap(line, width=100, subsequent_indent="  ",
                                                                    break_on_hyphens=False)]
