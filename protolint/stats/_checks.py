"""Argument validation helpers.

Every message names the parameter, the value received and what was expected, so that a
command-line layer can pass it to the user unchanged. Validation never uses ``assert``.
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Sequence
from typing import TYPE_CHECKING

from protolint.wording import plural

# numpy is imported inside the array helpers only: the scalar checks serve the closed-form
# formulas (Spearman-Brown, Bonett, SEM) that `protolint check` uses without loading numpy.
if TYPE_CHECKING:
    import numpy as np
    from numpy.typing import ArrayLike, NDArray


def real(name: str, value: object) -> float:
    """Return ``value`` as a finite float, or raise naming ``name``."""
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise TypeError(f"{name} must be a real number, got {value!r}")
    out = float(value)
    if not math.isfinite(out):
        raise ValueError(f"{name} must be a finite number, got {value!r}")
    return out


def in_range(
    name: str,
    value: object,
    low: float,
    high: float,
    *,
    low_open: bool = False,
    high_open: bool = False,
) -> float:
    """Return ``value`` as a float inside the interval, or raise naming ``name``."""
    out = real(name, value)
    too_low = out <= low if low_open else out < low
    too_high = out >= high if high_open else out > high
    if too_low or too_high:
        left = "(" if low_open else "["
        right = ")" if high_open else "]"
        raise ValueError(f"{name} must be in {left}{low:g}, {high:g}{right}, got {value!r}")
    return out


def probability_open(name: str, value: object) -> float:
    """A probability strictly between 0 and 1 (a level, an alpha, a power)."""
    return in_range(name, value, 0.0, 1.0, low_open=True, high_open=True)


def confidence(value: object) -> float:
    """A confidence level strictly between 0 and 1."""
    return probability_open("confidence", value)


def positive(name: str, value: object) -> float:
    """A strictly positive finite number."""
    out = real(name, value)
    if out <= 0:
        raise ValueError(f"{name} must be greater than 0, got {value!r}")
    return out


def integer(name: str, value: object, minimum: int) -> int:
    """An integer at least ``minimum`` (bools are refused)."""
    if isinstance(value, bool) or not isinstance(value, numbers.Integral):
        raise TypeError(f"{name} must be an integer, got {value!r}")
    out = int(value)
    if out < minimum:
        raise ValueError(f"{name} must be an integer >= {minimum}, got {value!r}")
    return out


def choice(name: str, value: object, allowed: Sequence[str]) -> str:
    """One of a fixed set of strings."""
    if not isinstance(value, str) or value not in allowed:
        options = ", ".join(repr(a) for a in allowed)
        raise ValueError(f"{name} must be one of {options}, got {value!r}")
    return value


def sides(value: object) -> int:
    """1 (one-sided) or 2 (two-sided)."""
    if isinstance(value, bool) or value not in (1, 2):
        raise ValueError(f"sides must be 1 or 2, got {value!r}")
    return 1 if value == 1 else 2


def matrix(name: str, data: ArrayLike, *, min_rows: int = 2, min_cols: int = 2) -> NDArray[np.float64]:
    """A 2-D float matrix (subjects x raters); NaN marks a missing cell.

    Infinite values are refused: they are never a rating.
    """
    import numpy as np

    try:
        arr = np.asarray(data, dtype=float)
    except (TypeError, ValueError) as exc:
        raise TypeError(f"{name} must be a numeric 2-D array (NaN = missing): {exc}") from None
    if arr.ndim != 2:
        raise ValueError(f"{name} must be a 2-D array (subjects x raters), got {plural(arr.ndim, 'dimension')}")
    if np.isinf(arr).any():
        raise ValueError(f"{name} must not contain infinite values")
    if arr.shape[1] < min_cols:
        raise ValueError(f"{name} must have at least {min_cols} columns (raters), got {arr.shape[1]}")
    if arr.shape[0] < min_rows:
        raise ValueError(f"{name} must have at least {min_rows} rows (subjects), got {arr.shape[0]}")
    return arr


def complete_rows(name: str, arr: NDArray[np.float64], *, min_rows: int = 2) -> tuple[NDArray[np.float64], int]:
    """Keep only rows without a missing cell; return them and how many were dropped."""
    import numpy as np

    if not math.isnan(float(arr.sum())):  # no missing cell (matrix() refuses infinities)
        if arr.shape[0] < min_rows:
            raise ValueError(f"{name} has {plural(arr.shape[0], 'complete row')}; at least {min_rows} are needed")
        return arr, 0
    keep = ~np.isnan(arr).any(axis=1)
    kept = arr[keep]
    dropped = int(arr.shape[0] - kept.shape[0])
    if kept.shape[0] < min_rows:
        raise ValueError(
            f"{name} has {plural(kept.shape[0], 'complete row')} after dropping {dropped} with missing cells; "
            f"at least {min_rows} are needed"
        )
    return kept, dropped


def encode(
    name: str, arr: NDArray[np.float64], categories: ArrayLike | None
) -> tuple[NDArray[np.float64], NDArray[np.intp]]:
    """Map rating values to category indices.

    Returns the sorted category values and an integer matrix of the same shape as ``arr``
    holding each cell's category index, -1 for a missing cell. Without ``categories`` the
    categories are the distinct observed values; with them, every observed value must be
    one of them (unobserved categories still count, e.g. for weights and Gwet's q).
    """
    import numpy as np

    present = ~np.isnan(arr)
    pooled = arr[present]
    codes = np.full(arr.shape, -1, dtype=np.intp)
    if categories is None:
        if pooled.size == 0:
            return np.empty(0), codes
        low, high = float(pooled.min()), float(pooled.max())
        if high - low < 100_000 and np.array_equal(pooled, np.round(pooled)):
            # Whole-number codes (the usual case): a lookup by offset instead of sorting every cell.
            offsets = (pooled - low).astype(np.intp)
            used = np.bincount(offsets) > 0
            cats = low + np.flatnonzero(used).astype(float)
            codes[present] = (np.cumsum(used) - 1)[offsets]
        else:
            cats, inverse = np.unique(pooled, return_inverse=True)
            codes[present] = inverse.ravel()
        return cats, codes
    cats = np.unique(np.asarray(categories, dtype=float))
    if np.isnan(cats).any():
        raise ValueError("categories must not contain NaN")
    if cats.size == 0:
        raise ValueError("categories must not be empty")
    index = np.minimum(np.searchsorted(cats, pooled), cats.size - 1)
    unknown = cats[index] != pooled
    if unknown.any():
        shown = np.unique(pooled[unknown])[:5]
        raise ValueError(
            f"{name} contains {'a value' if shown.size == 1 else 'values'} {', '.join(f'{u:g}' for u in shown)} "
            f"that {'is' if shown.size == 1 else 'are'} not in categories {[float(c) for c in cats]}"
        )
    codes[present] = index
    return cats, codes


def constant_column_warnings(arr: NDArray[np.float64], noun: str = "rater") -> list[str]:
    """One sentence per column whose ratings (at least two) are all the same value."""
    import numpy as np

    out = []
    low = np.fmin.reduce(arr, axis=0)  # fmin/fmax skip NaN without a copy of the data
    high = np.fmax.reduce(arr, axis=0)
    candidates = np.flatnonzero(low == high)
    counts = (~np.isnan(arr[:, candidates])).sum(axis=0) if candidates.size else np.zeros(0, dtype=int)
    for j in candidates[counts >= 2]:
        out.append(f"{noun} {j + 1} gave the same rating ({low[j]:g}) every time")
    return out


def category_counts(codes: NDArray[np.intp], n_categories: int) -> NDArray[np.float64]:
    """Per-subject counts of each category (subjects x categories), ignoring -1 cells."""
    import numpy as np

    n = codes.shape[0]
    rows = np.broadcast_to(np.arange(n)[:, None], codes.shape)
    valid = codes >= 0
    flat = rows[valid] * n_categories + codes[valid]
    return np.bincount(flat, minlength=n * n_categories).reshape(n, n_categories).astype(float)


def agreement_weights(values: NDArray[np.float64], kind: str) -> NDArray[np.float64]:
    """Agreement weights between categories, 1 on the diagonal.

    ``unweighted`` is the identity; ``linear`` is 1 - |x_k - x_l| / (max - min) and
    ``quadratic`` 1 - (x_k - x_l)^2 / (max - min)^2, computed on the category *values*
    (Cicchetti & Allison 1971; Fleiss & Cohen 1973; Gwet 2014, ch. 3).
    """
    import numpy as np

    choice("weights", kind, ("unweighted", "linear", "quadratic"))
    q = values.size
    if kind == "unweighted" or q < 2:
        return np.eye(q)
    diff = np.abs(values[:, None] - values[None, :]) / (values[-1] - values[0])
    weights = 1.0 - diff if kind == "linear" else 1.0 - diff**2
    return np.asarray(weights, dtype=float)


# Fewer subjects than this and a coefficient's estimate and interval carry little information.
# Common practice (no single source; sample-size methods such as Walter, Eliasziw & Donner 1998
# ask for far more): the warning is a prompt to look, not a rule.
FEW_SUBJECTS = 10


def few_subjects_warning(coefficient: str, n: int, noun: str = "subject") -> tuple[str, ...]:
    """A one-sentence warning when ``coefficient`` rests on fewer than FEW_SUBJECTS ``noun``s."""
    if n >= FEW_SUBJECTS:
        return ()
    counted = f"{n} {noun}" if n == 1 else f"{n} {noun}s"
    return (f"{coefficient} rests on {counted} only; with fewer than {FEW_SUBJECTS} the estimate and its interval mean little",)
