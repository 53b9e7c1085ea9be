"""Small wording helpers so that every message (rules, reports, analyses) counts the same way.

Style (see DEVELOPERS.md "Messages"): "1 rating", "3 ratings", never "rating(s)"; a number
carries its unit and what it is compared with; percentages are written "95%".
"""

from __future__ import annotations


def plural(count: int | float, noun: str, plural_form: str | None = None) -> str:
    """``plural(1, "case")`` is "1 case", ``plural(3, "case")`` is "3 cases"."""
    word = noun if count == 1 else (plural_form or noun + "s")
    shown = f"{count:g}" if isinstance(count, float) else str(count)
    return f"{shown} {word}"
