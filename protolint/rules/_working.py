"""Message helpers of the computed rules: how a rule shows its working in words.

The formulas themselves are derived facts of the plan (``protolint.plan.formulas`` and
``protolint.plan.reliability``); what is here only shapes findings and their text.
"""

from __future__ import annotations

from typing import Iterable, Iterator

from protolint.rules.registry import Hit

PLANNING_AID = "a planning aid; confirm with the trial statistician"


def fmt(value: float, digits: int = 3) -> str:
    """A number for a message: at most ``digits`` decimals, no trailing zeros."""
    text = f"{value:.{digits}f}".rstrip("0").rstrip(".")
    return text if text not in ("-0", "") else "0"


def unique(hits: Iterable[Hit]) -> Iterator[Hit]:
    """Drop repeated hits at the same place (two endpoints sharing one instrument)."""
    seen: set[tuple[object, ...]] = set()
    for hit in hits:
        if hit.path not in seen:
            seen.add(hit.path)
            yield hit


def same_text(a: str, b: str) -> bool:
    return " ".join(a.lower().split()) == " ".join(b.lower().split())
