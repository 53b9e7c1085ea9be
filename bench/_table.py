"""The benchmark table's layout, shared by bench/run_all.py and the scripts that print their own."""

from __future__ import annotations

from typing import Sequence


def format_table(rows: Sequence[Sequence[str]]) -> str:
    """``measure | result | target | met`` rows as aligned text with a header and a rule."""
    header = ("measure", "result", "target", "met")
    every = [header, *rows]
    widths = [max(len(row[i]) for row in every) for i in range(4)]
    lines = [" | ".join(row[i].ljust(widths[i]) for i in range(4)).rstrip() for row in every]
    lines.insert(1, "-|-".join("-" * width for width in widths))
    return "\n".join(lines)
