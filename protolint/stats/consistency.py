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


def _alpha(x: NDArray[np.float64]) -> float:
    k = x.shape[1]
    total_var = float(x.sum(axis=1).var(ddof=1))
    if total_var == 0.0:
        return float("nan")
    return k / (k - 1) * (1.0 - float(x.var(axis=0, ddof=1).sum()) / total_var)


def _corr(a: NDArray[np.float64], b: NDArray[np.float64]) -> float | None:
    sa, sb = a.std(), b.std()
    if sa == 0.0 or sb == 0.0:
        return None
    return float(np.mean((a - a.mean()) * (b - b.mean())) / (sa * sb))


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
    alpha = _alpha(x)
    if math.isnan(alpha):
        raise ValueError("items has a constant total score; Cronbach's alpha is undefined")
    half = (1.0 - level) / 2.0
    df1, df2 = n - 1, (n - 1) * (k - 1)
    low = 1.0 - (1.0 - alpha) * float(special.fdtri(df1, df2, 1.0 - half))
    high = 1.0 - (1.0 - alpha) * float(special.fdtri(df1, df2, half))
    total = x.sum(axis=1)
    stats = []
    for j in range(k):
        rest = np.delete(x, j, axis=1)
        if k > 2:
            a_del = _alpha(rest)
            alpha_if_deleted: float | None = None if math.isnan(a_del) else a_del
        else:
            alpha_if_deleted = None
        stats.append(
            ItemStatistics(
                index=j,
                mean=float(x[:, j].mean()),
                sd=float(x[:, j].std(ddof=1)),
                corrected_item_total_r=_corr(x[:, j], total - x[:, j]),
                alpha_if_deleted=alpha_if_deleted,
            )
        )
    sd_total = float(total.std(ddof=1))
    sem_total = sem(sd_total, min(max(alpha, 0.0), 1.0))
    return CronbachAlphaResult(
        value=float(alpha),
        ci=ConfidenceInterval(low, high, level),
        n_respondents=int(n),
        n_items=int(k),
        n_dropped=n_dropped,
        items=tuple(stats),
        sd_total=sd_total,
        sem=sem_total,
        mdc95=mdc95(sem_total),
        method="Cronbach's alpha (Cronbach 1951) with Feldt (1965) interval",
    )
