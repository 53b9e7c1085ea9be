"""The closest-name suggestion that every "unknown name" message uses (keys, ids, rule ids)."""

from __future__ import annotations

import difflib
from typing import Iterable

CUTOFF = 0.6
"""Similarity (difflib's ratio) below which a name is not offered: 'dya' -> 'day' passes."""


def closest(value: str, options: Iterable[str], *, n: int = 1, cutoff: float = CUTOFF) -> list[str]:
    """Up to ``n`` of ``options`` most like ``value``, best first."""
    return difflib.get_close_matches(value, list(options), n=n, cutoff=cutoff)


def did_you_mean(value: str, options: Iterable[str]) -> str:
    """`` (did you mean 'x'?)`` for the closest option, or an empty string."""
    close = closest(value, options)
    return f" (did you mean {close[0]!r}?)" if close else ""
