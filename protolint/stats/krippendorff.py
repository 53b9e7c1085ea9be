"""Krippendorff's alpha for nominal, ordinal, interval and ratio data with missing values.

Every level is computed without the units x distinct-values coincidence table, so the cost
grows with the number of ratings, not with the number of distinct values:

* interval: the exact pairwise sums from per-unit sums of squares (linear);
* ordinal: the same sums on midranks, whose table is over the distinct values only (linear);
* nominal: per-unit counts of equal pairs and the category margins (n log n for the sort);
* ratio: within-unit pairs directly (linear in units); the expected disagreement is a double
  sum over distinct values, which has no separable form (quadratic in the distinct values).

The bootstrap runs in chunks of replicates whose size keeps every working array at about
``_CHUNK_CELLS`` numbers, so memory is bounded whatever the replicate count.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from protolint.stats import _checks
from protolint.stats._results import ConfidenceInterval

LEVELS: tuple[str, ...] = ("nominal", "ordinal", "interval", "ratio")
DEFAULT_BOOTSTRAP = 1000

# Upper bound on the numbers held by one bootstrap chunk (replicates x cells): 2 M doubles is
# 16 MB per working array. The chunk size depends only on the data's shape, so a seeded run is
# reproducible (and equal to drawing all replicates at once: the generator's stream is the same).
_CHUNK_CELLS = 2_000_000
# Ratio level, expected disagreement: rows of the distinct-value difference matrix per block.
_DELTA_BLOCK = 2_000_000
# Up to this many distinct values (or one per coder, if more) the units x values counts are
# kept: for category data they are as small as the data and give the fastest bootstrap.
_FEW_VALUES = 32


@dataclass(frozen=True, slots=True)
class KrippendorffAlphaResult:
    """Krippendorff's alpha.

    Attributes
    ----------
    value : float
        Alpha.
    ci : ConfidenceInterval or None
        Percentile interval from a bootstrap over units (None when the replicate count is 0, or
        when no interval can be computed; ``warnings`` then says why).
    level : str
        The metric: nominal, ordinal, interval or ratio.
    observed_disagreement, expected_disagreement : float
        D_o and D_e; alpha = 1 - D_o / D_e.
    n_units : int
        Units with at least two values (pairable units).
    n_values : int
        Pairable values, Krippendorff's n.
    n_boot : int
        Bootstrap replicates requested for ``ci`` (0: no interval).
    method : str
    warnings : tuple of str
        Caveats a reader needs (few units, no interval), in plain words.
    """

    value: float
    ci: ConfidenceInterval | None
    level: str
    observed_disagreement: float
    expected_disagreement: float
    n_units: int
    n_values: int
    n_boot: int
    method: str
    warnings: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class _Units:
    """The pairable units, as a dense units x coders block."""

    x: NDArray[np.float64]  # values, 0 where missing (so sums ignore them)
    present: NDArray[np.bool_]
    m: NDArray[np.float64]  # values per unit
    codes: NDArray[np.intp] | None  # index into ``values`` (missing: 0, masked by ``present``)
    values: NDArray[np.float64] | None  # distinct values, sorted (coded levels only)
    counts: NDArray[np.float64] | None  # units x values, only when there are few values


def _code(pooled: NDArray[np.float64]) -> tuple[NDArray[np.float64], NDArray[np.intp]]:
    """Distinct values and each value's index among them."""
    low, high = float(pooled.min()), float(pooled.max())
    if high - low < 100_000 and np.array_equal(pooled, np.round(pooled)):
        # Whole-number ratings (the usual case): code by offset, avoiding a sort of every value.
        offsets = (pooled - low).astype(np.intp)
        used = np.bincount(offsets) > 0
        values = low + np.flatnonzero(used).astype(float)
        inverse = (np.cumsum(used) - 1)[offsets]
        return values, inverse.astype(np.intp)
    values, inverse = np.unique(pooled, return_inverse=True)
    return values, inverse.astype(np.intp).ravel()


def _units(data: NDArray[np.float64], level: str) -> _Units:
    present = ~np.isnan(data)
    m = present.sum(axis=1)
    pairable = m >= 2
    if not pairable.any():
        raise ValueError("ratings has no unit (subject) with two or more values; alpha is undefined")
    x = data[pairable]
    present = present[pairable]
    codes = values = counts = None
    if level != "interval":
        values, inverse = _code(x[present])
        codes = np.zeros(x.shape, dtype=np.intp)
        codes[present] = inverse
        if values.size <= max(x.shape[1], _FEW_VALUES):
            # Category data: the units x categories counts are no bigger than the data (or a
            # small multiple of it), and matrix products on them are the fastest route.
            rows = np.nonzero(present)[0]
            v = values.size
            counts = np.bincount(rows * v + inverse, minlength=x.shape[0] * v).reshape(x.shape[0], v).astype(float)
    return _Units(
        x=np.where(present, x, 0.0), present=present, m=m[pairable].astype(float), codes=codes, values=values, counts=counts
    )


def _pairs_sum_sq(scores: NDArray[np.float64], present: NDArray[np.bool_], m: NDArray[np.float64]) -> NDArray[np.float64]:
    """Sum over ordered pairs of (s_i - s_j)^2 within each unit, divided by m_u - 1.

    ``scores`` is (..., units, coders) with 0 at missing cells. The pair sum is 2 m SS, SS the
    sum of squared deviations from the unit mean (centred first, so no cancellation).
    """
    mean = scores.sum(axis=-1) / m
    dev = np.where(present, scores - mean[..., None], 0.0)
    return 2.0 * m * np.square(dev).sum(axis=-1) / (m - 1.0)


def _spread(weights: NDArray[np.float64], scores: NDArray[np.float64]) -> NDArray[np.float64]:
    """Sum over ordered pairs of all pooled values of (s_c - s_k)^2: 2 n sum_c n_c (s_c - mean)^2.

    ``weights`` (B x V) are value counts n_c, ``scores`` (B x V) or (V,) their scores.
    """
    n = weights.sum(axis=-1)
    mean = (weights * scores).sum(axis=-1) / n
    return 2.0 * n * (weights * np.square(scores - mean[..., None])).sum(axis=-1)


def _midranks(n_c: NDArray[np.float64]) -> NDArray[np.float64]:
    # Krippendorff's ordinal metric delta_ck = (sum_{g=c..k} n_g - (n_c + n_k)/2)^2 equals the
    # squared difference of the midranks cum_c - n_c/2, so ordinal alpha is interval alpha on
    # midranks of the pooled pairable values. Works row-wise for bootstrap margins.
    return np.cumsum(n_c, axis=-1) - n_c / 2.0


def _ratio_delta(a: NDArray[np.float64], b: NDArray[np.float64]) -> NDArray[np.float64]:
    total = a + b
    with np.errstate(divide="ignore", invalid="ignore"):
        delta = np.square((a - b) / total)
    return np.where(total == 0.0, 0.0, delta)


def _ratio_within(units: _Units) -> NDArray[np.float64]:
    """Per unit: sum over ordered pairs of the ratio difference, divided by m_u - 1."""
    if units.counts is not None:
        assert units.values is not None
        delta = _ratio_delta(units.values[:, None], units.values[None, :])
        return ((units.counts @ delta) * units.counts).sum(axis=1) / (units.m - 1.0)
    x, present = units.x, units.present
    total = np.zeros(x.shape[0])
    k = x.shape[1]
    for i in range(k - 1):
        d = _ratio_delta(x[:, i : i + 1], x[:, i + 1 :])
        total += np.where(present[:, i : i + 1] & present[:, i + 1 :], d, 0.0).sum(axis=1)
    return 2.0 * total / (units.m - 1.0)


def _ratio_expected(values: NDArray[np.float64], n_c: NDArray[np.float64]) -> NDArray[np.float64]:
    """sum_ck n_c n_k delta_ck for margins ``n_c`` (B x V), in blocks of rows of delta."""
    v = values.size
    rows = max(1, _DELTA_BLOCK // max(v, 1))
    out = np.zeros(n_c.shape[0])
    for start in range(0, v, rows):
        block = _ratio_delta(values[start : start + rows, None], values[None, :])  # r x V
        out += ((n_c[:, start : start + rows] @ block) * n_c).sum(axis=1)
    return out


def _nominal_within(units: _Units) -> NDArray[np.float64]:
    """Per unit: ordered pairs that disagree, m^2 - sum_c n_uc^2, divided by m_u - 1."""
    assert units.codes is not None and units.values is not None
    if units.counts is not None:
        return (np.square(units.m) - np.square(units.counts).sum(axis=1)) / (units.m - 1.0)
    n_units, v = units.x.shape[0], units.values.size
    rows = np.broadcast_to(np.arange(n_units)[:, None], units.codes.shape)[units.present]
    keys = rows.astype(np.int64) * v + units.codes[units.present]
    keys.sort()
    starts = np.flatnonzero(np.r_[True, keys[1:] != keys[:-1]])
    run = np.diff(np.r_[starts, keys.size]).astype(float)
    same = np.bincount(keys[starts] // v, weights=np.square(run), minlength=n_units)
    return (np.square(units.m) - same) / (units.m - 1.0)


def _ordinal_within(units: _Units, scores: NDArray[np.float64]) -> NDArray[np.float64]:
    """Per unit and replicate (units x B): ordered-pair squared midrank differences / (m_u - 1).

    ``scores`` (B x V) are each replicate's midranks. With the counts, the pair sums come from
    per-unit sums of (centred) scores; without them, from the scores gathered cell by cell.
    """
    assert units.codes is not None
    if units.counts is not None:
        centred = scores - scores.mean(axis=1, keepdims=True)  # smaller numbers, less cancellation
        s1 = units.counts @ centred.T
        s2 = units.counts @ np.square(centred).T
        m = units.m[:, None]
        return np.maximum(2.0 * (m * s2 - np.square(s1)) / (m - 1.0), 0.0)
    cell_scores = scores[:, units.codes] * units.present  # B x units x coders
    return _pairs_sum_sq(cell_scores, units.present, units.m).T


def _margins(units: _Units, weights: NDArray[np.float64] | None) -> NDArray[np.float64]:
    """Value counts n_c (V,), or bootstrap-weighted ones (B x V) for unit weights (B x units)."""
    assert units.codes is not None and units.values is not None
    v = units.values.size
    if units.counts is not None:
        return units.counts.sum(axis=0) if weights is None else weights @ units.counts
    codes = units.codes[units.present]
    if weights is None:
        return np.bincount(codes, minlength=v).astype(float)
    rows = np.broadcast_to(np.arange(units.x.shape[0])[:, None], units.codes.shape)[units.present]
    b = weights.shape[0]
    flat = (np.arange(b)[:, None] * v + codes[None, :]).ravel()
    margins = np.bincount(flat, weights=weights[:, rows].ravel(), minlength=b * v).reshape(b, v)
    return np.asarray(margins, dtype=float)


def _point(units: _Units, level: str) -> tuple[float, float]:
    """Observed and expected disagreement D_o and D_e of the pairable values."""
    n = float(units.m.sum())
    if level == "interval":
        observed = float(_pairs_sum_sq(units.x, units.present, units.m).sum())
        pooled = units.x[units.present]
        expected = 2.0 * n * float(np.square(pooled - pooled.mean()).sum())
    else:
        assert units.codes is not None and units.values is not None
        n_c = _margins(units, None)
        if level == "ordinal":
            scores = _midranks(n_c)
            observed = float(_ordinal_within(units, scores[None, :])[:, 0].sum())
            expected = float(_spread(n_c, scores))
        elif level == "nominal":
            observed = float(_nominal_within(units).sum())
            expected = n**2 - float(np.square(n_c).sum())
        else:
            observed = float(_ratio_within(units).sum())
            expected = float(_ratio_expected(units.values, n_c[None, :])[0])
    return observed / n, expected / (n * (n - 1.0))


def _replicate_weights(
    rng: np.random.Generator, n_units: int, replicates: int, cells: int
) -> Iterator[NDArray[np.float64]]:
    """Unit weights (times each unit is drawn) of the bootstrap replicates, chunk by chunk.

    A chunk holds at most ``_CHUNK_CELLS // cells`` replicates, ``cells`` being the size of
    the largest per-replicate array the caller builds (units x coders).
    """
    chunk = max(1, min(replicates, _CHUNK_CELLS // max(cells, 1)))
    done = 0
    while done < replicates:
        b = min(chunk, replicates - done)
        draws = rng.integers(0, n_units, size=(b, n_units))
        offsets = (np.arange(b) * n_units)[:, None]
        yield np.bincount((draws + offsets).ravel(), minlength=b * n_units).reshape(b, n_units).astype(float)
        done += b


def _bootstrap(units: _Units, level: str, replicates: int, seed: int) -> NDArray[np.float64]:
    """Alpha of each bootstrap replicate (units resampled with replacement)."""
    rng = np.random.default_rng(seed)
    n_units = units.m.size
    out: list[NDArray[np.float64]] = []
    # Per-unit observed disagreement is fixed for every metric except ordinal (midranks move).
    if level == "interval":
        d_unit = _pairs_sum_sq(units.x, units.present, units.m)
        s1 = units.x.sum(axis=1)
        s2 = np.square(units.x).sum(axis=1)
        shift = float(units.x[units.present].mean())  # centre, so the expected sums do not cancel
        s1c = s1 - units.m * shift
        s2c = s2 - 2.0 * shift * s1 + units.m * shift**2
    elif level == "nominal":
        d_unit = _nominal_within(units)
    elif level == "ratio":
        d_unit = _ratio_within(units)
    per_replicate = max(units.x.size, 0 if units.counts is None else units.counts.size)
    for weights in _replicate_weights(rng, n_units, replicates, per_replicate):
        n = weights @ units.m
        if level == "interval":
            observed = weights @ d_unit
            t1, t2 = weights @ s1c, weights @ s2c
            expected = 2.0 * (n * t2 - np.square(t1))
        elif level == "ordinal":
            n_c = _margins(units, weights)
            scores = _midranks(n_c)  # replicates x V
            observed = np.einsum("bu,ub->b", weights, _ordinal_within(units, scores))
            expected = _spread(n_c, scores)
        else:
            observed = weights @ d_unit
            n_c = _margins(units, weights)
            if level == "nominal":
                expected = np.square(n) - np.square(n_c).sum(axis=1)
            else:
                assert units.values is not None
                expected = _ratio_expected(units.values, n_c)
        with np.errstate(divide="ignore", invalid="ignore"):
            out.append(1.0 - (n - 1.0) * observed / expected)
    return np.concatenate(out) if out else np.empty(0)


def krippendorff_alpha(
    ratings: ArrayLike,
    level: str = "nominal",
    confidence: float = 0.95,
    n_boot: int | None = None,
    seed: int = 0,
    *,
    bootstrap: int = DEFAULT_BOOTSTRAP,
) -> KrippendorffAlphaResult:
    """Krippendorff's alpha reliability coefficient.

    Parameters
    ----------
    ratings : array_like, shape (n_units, n_coders)
        One row per unit (subject), one column per coder (rater); NaN = not coded. (The
        ``krippendorff`` package takes the transpose.) Units with fewer than two values are not
        pairable and do not count.
    level : {"nominal", "ordinal", "interval", "ratio"}, default "nominal"
        Level of measurement, which selects the difference function delta.
    confidence : float, default 0.95
        Level of the bootstrap interval.
    n_boot : int, optional
        Former name of ``bootstrap``, kept for existing callers; when given it wins.
    seed : int, default 0
        Seed of the bootstrap, so that a report is reproducible.
    bootstrap : int, default 1000
        Bootstrap replicates behind the interval; 0 skips it (``ci`` is None). Keyword only.

    Returns
    -------
    KrippendorffAlphaResult

    Notes
    -----
    ``alpha = 1 - D_o / D_e = 1 - (n - 1) sum_ck o_ck delta_ck / sum_ck n_c n_k delta_ck`` with
    the coincidence matrix ``o_ck = sum_u (pairs c-k in unit u) / (m_u - 1)``, marginals n_c
    and n pairable values. Differences: nominal ``[c != k]``; ordinal
    ``(sum_{g=c..k} n_g - (n_c + n_k)/2)^2``; interval ``(c - k)^2``; ratio
    ``((c - k)/(c + k))^2`` (Krippendorff 2011). The sums are taken without building the
    coincidence matrix (see the module notes); the values are the same.

    The interval resamples units with replacement and takes percentiles of alpha. It is a
    cluster bootstrap over subjects, not the coincidence-level bootstrap of Hayes &
    Krippendorff (2007); replicates in which alpha is undefined are ignored. It runs in chunks
    of replicates, so memory stays bounded; the same seed gives the same interval.

    References
    ----------
    Krippendorff, K. (2011). Computing Krippendorff's alpha-reliability. Annenberg School for
    Communication, University of Pennsylvania.
    Krippendorff, K. (2004). Content Analysis: An Introduction to Its Methodology, 2nd ed. Sage.
    Hayes, A. F. & Krippendorff, K. (2007). Answering the call for a standard reliability
    measure for coding data. Communication Methods and Measures, 1, 77-89.
    """
    _checks.choice("level", level, LEVELS)
    lvl = _checks.confidence(confidence)
    boot = _checks.integer("n_boot", n_boot, 0) if n_boot is not None else _checks.integer("bootstrap", bootstrap, 0)
    rng_seed = _checks.integer("seed", seed, 0)
    arr = _checks.matrix("ratings", ratings, min_rows=1)
    if level == "ratio" and (arr[~np.isnan(arr)] < 0).any():
        raise ValueError("ratings must not contain negative values at the ratio level")
    units = _units(arr, level)
    d_o, d_e = _point(units, level)
    if not d_e > 0.0:
        raise ValueError("ratings has no variation among pairable values; alpha is undefined")
    value = 1.0 - d_o / d_e
    n_units = int(units.m.size)
    warnings = list(_checks.few_subjects_warning("Krippendorff's alpha", n_units, "unit"))
    ci: ConfidenceInterval | None = None
    if boot > 0:
        if n_units < 2:
            warnings.append("no bootstrap interval: it needs at least 2 pairable units")
        else:
            reps = _bootstrap(units, level, boot, rng_seed)
            reps = reps[np.isfinite(reps)]
            if reps.size:
                half = (1.0 - lvl) / 2.0
                lo, hi = np.quantile(reps, [half, 1.0 - half])
                ci = ConfidenceInterval(float(lo), float(hi), lvl)
            else:
                warnings.append("no bootstrap interval: alpha is undefined in every replicate")
    return KrippendorffAlphaResult(
        value=value,
        ci=ci,
        level=level,
        observed_disagreement=d_o,
        expected_disagreement=d_e,
        n_units=n_units,
        n_values=int(units.m.sum()),
        n_boot=boot,
        method=f"Krippendorff's alpha, {level} metric (Krippendorff 2011); unit bootstrap interval",
        warnings=tuple(warnings),
    )
