"""Krippendorff's alpha for nominal, ordinal, interval and ratio data with missing values."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from protolint.stats import _checks
from protolint.stats._results import ConfidenceInterval

LEVELS: tuple[str, ...] = ("nominal", "ordinal", "interval", "ratio")


@dataclass(frozen=True, slots=True)
class KrippendorffAlphaResult:
    """Krippendorff's alpha.

    Attributes
    ----------
    value : float
        Alpha.
    ci : ConfidenceInterval or None
        Percentile interval from a bootstrap over units (None when ``n_boot`` is 0).
    level : str
        The metric: nominal, ordinal, interval or ratio.
    observed_disagreement, expected_disagreement : float
        D_o and D_e; alpha = 1 - D_o / D_e.
    n_units : int
        Units with at least two values (pairable units).
    n_values : int
        Pairable values, Krippendorff's n.
    n_boot : int
        Bootstrap replicates behind ``ci``.
    method : str
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


@dataclass(frozen=True, slots=True)
class _Units:
    """Per-unit sufficient statistics of the pairable units."""

    m: NDArray[np.float64]  # values per unit
    counts: NDArray[np.float64]  # units x distinct values
    values: NDArray[np.float64]  # the distinct values, sorted


def _units(data: NDArray[np.float64]) -> _Units:
    present = ~np.isnan(data)
    m = present.sum(axis=1)
    pairable = m >= 2
    x = data[pairable]
    m = m[pairable].astype(float)
    if x.shape[0] == 0:
        raise ValueError("ratings has no unit (subject) with two or more values; alpha is undefined")
    mask = ~np.isnan(x)
    pooled = x[mask]
    low, high = float(pooled.min()), float(pooled.max())
    if high - low < 100_000 and np.array_equal(pooled, np.round(pooled)):
        # Whole-number ratings (the usual case): code by offset, avoiding a sort of every value.
        offsets = (pooled - low).astype(np.intp)
        used = np.bincount(offsets) > 0
        values = low + np.flatnonzero(used).astype(float)
        inverse = (np.cumsum(used) - 1)[offsets]
    else:
        values, inverse = np.unique(pooled, return_inverse=True)
    rows = np.nonzero(mask)[0]
    v = values.size
    counts = np.bincount(rows * v + inverse, minlength=x.shape[0] * v).reshape(x.shape[0], v).astype(float)
    return _Units(m=m, counts=counts, values=values)


def _midranks(n_c: NDArray[np.float64]) -> NDArray[np.float64]:
    # Krippendorff's ordinal metric delta_ck = (sum_{g=c..k} n_g - (n_c + n_k)/2)^2 equals the
    # squared difference of the midranks cum_c - n_c/2, so ordinal alpha is interval alpha on
    # midranks of the pooled pairable values. Works row-wise for bootstrap margins.
    return np.cumsum(n_c, axis=-1) - n_c / 2.0


def _alpha_moments(
    weights: NDArray[np.float64], counts: NDArray[np.float64], m: NDArray[np.float64], scores: NDArray[np.float64]
) -> NDArray[np.float64]:
    """Alpha for squared-difference metrics from unit weights (B x units) and scores (B x V).

    Within a unit, the sum over ordered pairs of (x_i - x_j)^2 is 2 (m S2 - S1^2), where S1 and
    S2 are the sums of values and of squared values; the same identity over all pairable
    values gives the expected disagreement. This keeps interval alpha linear in the data.
    """
    s1 = counts @ scores.T  # units x B
    s2 = counts @ np.square(scores).T
    d_unit = 2.0 * (m[:, None] * s2 - np.square(s1)) / (m[:, None] - 1.0)
    observed = np.einsum("bu,ub->b", weights, d_unit)
    n = weights @ m
    tot1 = np.einsum("bu,ub->b", weights, s1)
    tot2 = np.einsum("bu,ub->b", weights, s2)
    expected = 2.0 * (n * tot2 - np.square(tot1))
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.asarray(1.0 - (n - 1.0) * observed / expected, dtype=float)


def _delta_matrix(values: NDArray[np.float64], level: str) -> NDArray[np.float64]:
    if level == "nominal":
        return 1.0 - np.eye(values.size)
    total = values[:, None] + values[None, :]
    with np.errstate(divide="ignore", invalid="ignore"):
        delta = np.square((values[:, None] - values[None, :]) / total)
    return np.where(total == 0.0, 0.0, delta)


def _alpha_matrix(
    weights: NDArray[np.float64], counts: NDArray[np.float64], m: NDArray[np.float64], delta: NDArray[np.float64]
) -> NDArray[np.float64]:
    """Alpha from the coincidence form with a fixed metric matrix (nominal, ratio)."""
    d_unit = ((counts @ delta) * counts).sum(axis=1) / (m - 1.0)
    observed = weights @ d_unit
    n = weights @ m
    n_c = weights @ counts  # B x V
    expected = np.einsum("bc,cd,bd->b", n_c, delta, n_c)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.asarray(1.0 - (n - 1.0) * observed / expected, dtype=float)


def _alpha(units: _Units, level: str, weights: NDArray[np.float64]) -> NDArray[np.float64]:
    if level == "interval":
        scores = np.broadcast_to(units.values, (weights.shape[0], units.values.size))
        return _alpha_moments(weights, units.counts, units.m, scores)
    if level == "ordinal":
        return _alpha_moments(weights, units.counts, units.m, _midranks(weights @ units.counts))
    return _alpha_matrix(weights, units.counts, units.m, _delta_matrix(units.values, level))


def krippendorff_alpha(
    ratings: ArrayLike,
    level: str = "nominal",
    confidence: float = 0.95,
    n_boot: int = 1000,
    seed: int = 0,
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
    n_boot : int, default 1000
        Bootstrap replicates; 0 skips the interval (``ci`` is None).
    seed : int, default 0
        Seed of the bootstrap, so that a report is reproducible.

    Returns
    -------
    KrippendorffAlphaResult

    Notes
    -----
    ``alpha = 1 - D_o / D_e = 1 - (n - 1) sum_ck o_ck delta_ck / sum_ck n_c n_k delta_ck`` with
    the coincidence matrix ``o_ck = sum_u (pairs c-k in unit u) / (m_u - 1)``, marginals n_c
    and n pairable values. Differences: nominal ``[c != k]``; ordinal
    ``(sum_{g=c..k} n_g - (n_c + n_k)/2)^2``; interval ``(c - k)^2``; ratio
    ``((c - k)/(c + k))^2`` (Krippendorff 2011).

    The interval resamples units with replacement and takes percentiles of alpha. It is a
    cluster bootstrap over subjects, not the coincidence-level bootstrap of Hayes &
    Krippendorff (2007); replicates in which alpha is undefined are ignored.

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
    boot = _checks.integer("n_boot", n_boot, 0)
    rng_seed = _checks.integer("seed", seed, 0)
    arr = _checks.matrix("ratings", ratings, min_rows=1)
    if level == "ratio" and (arr[~np.isnan(arr)] < 0).any():
        raise ValueError("ratings must not contain negative values at the ratio level")
    units = _units(arr)
    d_o, d_e = _disagreements(units, level)
    if not d_e > 0.0:
        raise ValueError("ratings has no variation among pairable values; alpha is undefined")
    value = 1.0 - d_o / d_e
    n_values = float(units.m.sum())
    ci: ConfidenceInterval | None = None
    if boot > 0:
        rng = np.random.default_rng(rng_seed)
        n_units = units.m.size
        draws = rng.integers(0, n_units, size=(boot, n_units))
        offsets = (np.arange(boot) * n_units)[:, None]
        weights = np.bincount((draws + offsets).ravel(), minlength=boot * n_units).reshape(boot, n_units)
        reps = _alpha(units, level, weights.astype(float))
        reps = reps[np.isfinite(reps)]
        if reps.size:
            half = (1.0 - lvl) / 2.0
            lo, hi = np.quantile(reps, [half, 1.0 - half])
            ci = ConfidenceInterval(float(lo), float(hi), lvl)
    return KrippendorffAlphaResult(
        value=value,
        ci=ci,
        level=level,
        observed_disagreement=d_o,
        expected_disagreement=d_e,
        n_units=int(units.m.size),
        n_values=int(n_values),
        n_boot=boot,
        method=f"Krippendorff's alpha, {level} metric (Krippendorff 2011); unit bootstrap interval",
    )


def _disagreements(units: _Units, level: str) -> tuple[float, float]:
    """Observed and expected disagreement D_o and D_e of the pairable values."""
    n_c = units.counts.sum(axis=0)
    n = float(units.m.sum())
    m = units.m
    if level in ("interval", "ordinal"):
        # Squared differences of values (interval) or of midranks (ordinal): pair sums from the
        # per-unit moments, linear in the data (see _alpha_moments).
        scores = units.values if level == "interval" else _midranks(n_c)
        s1 = units.counts @ scores
        s2 = units.counts @ np.square(scores)
        observed = float((2.0 * (m * s2 - np.square(s1)) / (m - 1.0)).sum())
        expected = 2.0 * (n * float(s2.sum()) - float(s1.sum()) ** 2)
    elif level == "nominal":
        # Ordered pairs that disagree within a unit: m^2 - sum_c n_uc^2.
        observed = float(((np.square(m) - np.square(units.counts).sum(axis=1)) / (m - 1.0)).sum())
        expected = n**2 - float(np.square(n_c).sum())
    else:
        delta = _delta_matrix(units.values, level)
        observed = float((((units.counts @ delta) * units.counts).sum(axis=1) / (m - 1.0)).sum())
        expected = float(n_c @ delta @ n_c)
    return observed / n, expected / (n * (n - 1.0))
