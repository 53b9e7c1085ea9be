"""Internal consistency of item data: Cronbach's alpha, item statistics, SEM and MDC."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from protolint.stats import _checks
from protolint.stats._results import ConfidenceInterval
from protolint.stats.measurement_error import mdc95, sem


@dataclass(frozen=True, slots=True)
class ItemStatistics:
    """Statistics of one item.

    Attributes
    ----------
    index : int
        Column index of the item (0-based).
    mean, sd : float
        Mean and standard deviation (n - 1 denominator).
    corrected_item_total_r : float or None
        Pearson correlation of the item with the total of the other items; None when the item
        or that total is constant.
    alpha_if_deleted : float or None
        Cronbach's alpha of the other items; None with only two items.
    """

    index: int
    mean: float
    sd: float
    corrected_item_total_r: float | None
    alpha_if_deleted: float | None


@dataclass(frozen=True, slots=True)
class CronbachAlphaResult:
    """Cronbach's alpha with the Feldt interval, item statistics, SEM and MDC95.

    Attributes
    ----------
    value : float
        Cronbach's alpha.
    ci : ConfidenceInterval
        Feldt (1965) interval.
    n_respondents, n_items, n_dropped : int
        Respondents used, items, respondents dropped for a missing answer.
    items : tuple of ItemStatistics
    sd_total : float
        Standard deviation of the total (sum) score.
    sem : float
        Standard error of measurement of the total score, ``sd_total * sqrt(1 - alpha)``
        (alpha clipped at 0 for this purpose).
    mdc95 : float
        Minimal detectable change, ``1.96 * sqrt(2) * sem``.
    method : str
    warnings : tuple of str
        Caveats in plain words: few respondents, a constant (e.g. ceiling) item.
    """

    value: float
    ci: ConfidenceInterval
    n_respondents: int
    n_items: int
    n_dropped: int
    items: tuple[ItemStatistics, ...]
    sd_total: float
    sem: float
    mdc95: float
    method: str
    warnings: tuple[str, ...] = ()


def _item_terms(
    x: NDArray[np.float64],
) -> tuple[float, NDArray[np.float64], NDArray[np.float64], NDArray[np.float64], NDArray[np.float64], NDArray[np.bool_]]:
    """Alpha, alpha-if-item-deleted and corrected item-total r, all from one covariance matrix.

    With C the item covariance matrix, S = sum C, T = trace C and r_j the j-th row sum, the
    rest total of item j has variance S - 2 r_j + C_jj and item variances T - C_jj, and its
    covariance with item j is r_j - C_jj. One pass over the data instead of k deletions.
    NaN marks an undefined value (a constant total, a constant item or rest). Also returns
    the item means, the item SDs and which items are constant.
    """
    n, k = x.shape
    means = x.mean(axis=0)
    centred = x - means
    cov = centred.T @ centred / (n - 1)
    diag = np.diag(cov).copy()
    total = float(cov.sum())
    trace = float(diag.sum())
    rows = cov.sum(axis=1)
    rest_var = total - 2.0 * rows + diag
    # Constancy is decided on the data, not on variances with rounding residue; the exact
    # test runs only where a variance is near zero.
    item_constant = (x == x[0]).all(axis=0)
    tiny = 1e-9 * max(float(diag.max()), float(np.finfo(float).tiny))
    rest_constant = np.zeros(k, dtype=bool)
    for j in np.flatnonzero(rest_var <= tiny):
        rest = x.sum(axis=1) - x[:, j]
        rest_constant[j] = bool((rest == rest[0]).all())
    total_constant = total <= tiny and bool(np.ptp(x.sum(axis=1)) == 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        alpha = float("nan") if total_constant else k / (k - 1) * (1.0 - trace / total)
        if k > 2:
            deleted = (k - 1) / (k - 2) * (1.0 - (trace - diag) / rest_var)
        else:
            deleted = np.full(k, np.nan)
        deleted = np.where(rest_constant, np.nan, deleted)
        r = (rows - diag) / np.sqrt(diag * rest_var)
    r = np.where(item_constant | rest_constant, np.nan, r)
    return float(alpha), deleted, r, means, np.sqrt(np.where(item_constant, 0.0, diag)), item_constant


def _optional(value: float) -> float | None:
    return None if math.isnan(value) else float(value)


def cronbach_alpha(items: ArrayLike, confidence: float = 0.95) -> CronbachAlphaResult:
    """Cronbach's alpha for item data, with the Feldt (1965) confidence interval.

    Parameters
    ----------
    items : array_like, shape (n_respondents, n_items)
        Item scores; NaN = missing. Respondents with any missing item are dropped
        (complete-case analysis) and counted in ``n_dropped``.
    confidence : float, default 0.95

    Returns
    -------
    CronbachAlphaResult

    Notes
    -----
    ``alpha = k / (k - 1) * (1 - sum s_i^2 / s_T^2)``. Feldt's interval, with
    F(n - 1, (n - 1)(k - 1)) quantiles: ``[1 - (1 - alpha) F_{1-a/2}, 1 - (1 - alpha) F_{a/2}]``.
    It equals the McGraw & Wong interval of ICC(C,k), as alpha equals ICC(C,k).
    SEM and MDC95 refer to the total (sum) score; see :func:`sem` and :func:`mdc95`.

    References
    ----------
    Cronbach, L. J. (1951). Coefficient alpha and the internal structure of tests.
    Psychometrika, 16, 297-334.
    Feldt, L. S. (1965). The approximate sampling distribution of Kuder-Richardson
    reliability coefficient twenty. Psychometrika, 30, 357-370.
    Feldt, L. S., Woodruff, D. J. & Salih, F. A. (1987). Statistical inference for coefficient
    alpha. Applied Psychological Measurement, 11, 93-103.
    """
    from scipy import special

    level = _checks.confidence(confidence)
    x, n_dropped = _checks.complete_rows("items", _checks.matrix("items", items))
    n, k = x.shape
    alpha, deleted, item_r, means, sds, item_constant = _item_terms(x)
    if math.isnan(alpha):
        raise ValueError("items has a constant total score; Cronbach's alpha is undefined")
    half = (1.0 - level) / 2.0
    df1, df2 = n - 1, (n - 1) * (k - 1)
    low = 1.0 - (1.0 - alpha) * float(special.fdtri(df1, df2, 1.0 - half))
    high = 1.0 - (1.0 - alpha) * float(special.fdtri(df1, df2, half))
    stats = tuple(
        ItemStatistics(
            index=j,
            mean=float(means[j]),
            sd=float(sds[j]),
            corrected_item_total_r=_optional(item_r[j]),
            alpha_if_deleted=_optional(deleted[j]),
        )
        for j in range(k)
    )
    warnings = list(_checks.few_subjects_warning("Cronbach's alpha", n, "respondent"))
    for j in np.flatnonzero(item_constant):
        warnings.append(
            f"item {j + 1} has the same score ({x[0, j]:g}) for every respondent: it adds nothing to the "
            "total's variance and has no item-total correlation; alpha is computed with it"
        )
    sd_total = float(x.sum(axis=1).std(ddof=1))
    sem_total = sem(sd_total, min(max(alpha, 0.0), 1.0))
    return CronbachAlphaResult(
        value=float(alpha),
        ci=ConfidenceInterval(low, high, level),
        n_respondents=int(n),
        n_items=int(k),
        n_dropped=n_dropped,
        items=stats,
        sd_total=sd_total,
        sem=sem_total,
        mdc95=mdc95(sem_total),
        method="Cronbach's alpha (Cronbach 1951) with Feldt (1965) interval",
        warnings=tuple(warnings),
    )
