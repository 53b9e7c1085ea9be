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


def print_table(title: str, rows: Sequence[Sequence[str]], met: bool, strict: bool) -> int:
    """Print one script's table under ``title`` (with the core count) and its verdict; the exit
    code is 1 only with ``--strict`` and a missed target."""
    import os

    print(f"{title}, {os.cpu_count()} cores")
    print(format_table(rows))
    print("every target met" if met else "some targets missed")
    return 1 if strict and not met else 0
