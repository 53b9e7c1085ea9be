"""Gwet's AC1 (nominal) and AC2 (weighted) agreement coefficients for any number of raters.

The same per-subject machinery gives Gwet's (2014) variance for Fleiss' kappa, which
:func:`protolint.stats.fleiss_kappa` uses for its confidence interval.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from protolint.stats import _checks
from protolint.stats._results import ConfidenceInterval


@dataclass(frozen=True, slots=True)
class GwetResult:
    """Gwet's AC1 or AC2.

    Attributes
    ----------
    value : float
        The coefficient.
    se : float
        Gwet's (2008, 2014) standard error (no finite-population correction).
    ci : ConfidenceInterval
        ``value -/+ t(n-1) * se``, Gwet's (2014) t-based interval, clipped to [-1, 1].
    pa, pe : float
        Percent agreement and chance agreement.
    weights : str
        ``unweighted`` for AC1, else the AC2 weights.
    n_subjects : int
        Subjects rated by at least one rater.
    n_categories : int
        Number of categories q.
    method : str
    categories : tuple of float
        The category set used (declared, or the observed values).
    unused_categories : tuple of float
        Declared categories nobody used (they still count in q and in the weights).
    n_ratings : int
        Ratings used.
    warnings : tuple of str
        Caveats in plain words (a constant rater, few subjects, no interval: its bounds are
        then NaN).
    """

    value: float
    se: float
    ci: ConfidenceInterval
    pa: float
    pe: float
    weights: str
    n_subjects: int
    n_categories: int
    method: str
    categories: tuple[float, ...] = ()
    unused_categories: tuple[float, ...] = ()
    n_ratings: int = 0
    warnings: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class _Terms:
    value: float
    se: float
    pa: float
    pe: float
    n: int


def _gwet_terms(counts: NDArray[np.float64], w: NDArray[np.float64], chance: str) -> _Terms:
    """Coefficient and variance from subject x category counts (Gwet 2014, ch. 2-5).

    ``chance`` is ``"ac"`` for AC1/AC2 or ``"fleiss"`` for Fleiss' kappa (generalised to
    unequal numbers of raters per subject).
    """
    counts = counts[counts.sum(axis=1) > 0]  # subjects nobody rated carry no information
    n, q = counts.shape
    r_i = counts.sum(axis=1)
    counts_w = counts @ w.T  # r*_ik = sum_l w_kl r_il
    sum_q = (counts * (counts_w - 1.0)).sum(axis=1)
    pairable = r_i >= 2
    n2more = int(pairable.sum())
    if n2more == 0:
        raise ValueError("ratings has no subject rated by two or more raters; agreement is undefined")
    den = r_i * (r_i - 1.0)
    pa_i = np.where(pairable, sum_q / np.where(pairable, den, 1.0), 0.0)
    pa = float(pa_i[pairable].mean())
    pi_k = (counts / r_i[:, None]).mean(axis=0)
    if chance == "ac":
        t_w = float(w.sum())
        pe = t_w * float((pi_k * (1.0 - pi_k)).sum()) / (q * (q - 1)) if q >= 2 else 0.0
        pe_i = (t_w / (q * (q - 1))) * (counts @ (1.0 - pi_k)) / r_i if q >= 2 else np.zeros(n)
    else:
        pe = float(pi_k @ w @ pi_k)
        pi_w = (w @ pi_k + w.T @ pi_k) / 2.0
        pe_i = (counts @ pi_w) / r_i
    if pe >= 1.0:
        raise ValueError("chance agreement is 1 (a single category is used throughout); the coefficient is undefined")
    value = (pa - pe) / (1.0 - pe)
    # Linearised per-subject contributions (Gwet 2014, eq. 5.x); their spread gives the variance.
    coef_i = (n / n2more) * (pa_i - pe * pairable) / (1.0 - pe)
    coef_i_x = coef_i - 2.0 * (1.0 - value) * (pe_i - pe) / (1.0 - pe)
    var = float(np.square(coef_i_x - value).sum()) / (n * (n - 1)) if n > 1 else float("nan")
    return _Terms(float(value), float(np.sqrt(var)), pa, pe, n)


def interval_warning(se: float, n: int) -> str | None:
    """Why no t interval can be computed from ``se`` on ``n`` subjects, or None."""
    if n < 2:
        return f"no interval: it needs at least 2 subjects, got {n}"
    if not se > 0.0:
        return (
            f"no interval: the standard error is {'0' if se == 0.0 else 'undefined'} on {n} subjects "
            "(every subject contributes the same agreement), so the interval would have no width"
        )
    return None


def _t_interval(value: float, se: float, n: int, level: float) -> ConfidenceInterval:
    """Gwet's t interval, or NaN bounds when none can be computed (see interval_warning)."""
    from scipy import special

    if interval_warning(se, n) is not None:
        return ConfidenceInterval(float("nan"), float("nan"), level)
    t = float(special.stdtrit(n - 1, 1.0 - (1.0 - level) / 2.0))
    # Clipped to the coefficient's range [-1, 1], as Gwet's own software does for the upper bound.
    return ConfidenceInterval(max(value - t * se, -1.0), min(value + t * se, 1.0), level)


def _gwet(
    ratings: ArrayLike, weights: str, confidence: float, categories: ArrayLike | None, label: str, name: str
) -> GwetResult:
    level = _checks.confidence(confidence)
    arr = _checks.matrix("ratings", ratings)
    values, codes = _checks.encode("ratings", arr, categories)
    w = _checks.agreement_weights(values, weights)
    counts = _checks.category_counts(codes, values.size)
    terms = _gwet_terms(counts, w, "ac")
    warnings = _checks.constant_column_warnings(arr)
    warnings += _checks.few_subjects_warning(label, int((counts.sum(axis=1) >= 2).sum()))
    reason = interval_warning(terms.se, terms.n)
    if reason:
        warnings.append(reason)
    used = counts.sum(axis=0) > 0
    return GwetResult(
        value=terms.value,
        se=terms.se,
        ci=_t_interval(terms.value, terms.se, terms.n, level),
        pa=terms.pa,
        pe=terms.pe,
        weights=weights,
        n_subjects=terms.n,
        n_categories=int(values.size),
        method=name,
        categories=tuple(float(v) for v in values),
        unused_categories=tuple(float(v) for v in values[~used]),
        n_ratings=int(counts.sum()),
        warnings=tuple(warnings),
    )


def gwet_ac1(
    ratings: ArrayLike, confidence: float = 0.95, categories: Sequence[float] | ArrayLike | None = None
) -> GwetResult:
    """Gwet's first-order agreement coefficient AC1 for nominal ratings.

    Parameters
    ----------
    ratings : array_like, shape (n_subjects, n_raters)
        Category codes (numbers), NaN = missing. Any number of raters; subjects may be rated
        by different numbers of raters.
    confidence : float, default 0.95
    categories : sequence of float, optional
        The declared category set; by default the observed values. The number of categories
        q enters the chance agreement, so an unused category counts (irrCAC's ``categ``).

    Returns
    -------
    GwetResult

    Notes
    -----
    ``AC1 = (pa - pe) / (1 - pe)`` with ``pe = sum_k pi_k (1 - pi_k) / (q - 1)``; pa averages
    each subject's pairwise agreement over subjects rated at least twice. The variance is
    Gwet's linearisation (no finite-population correction) and the interval uses a t
    quantile with n - 1 degrees of freedom, as in Gwet (2014).

    References
    ----------
    Gwet, K. L. (2008). Computing inter-rater reliability and its variance in the presence of
    high agreement. British Journal of Mathematical and Statistical Psychology, 61, 29-48.
    Gwet, K. L. (2014). Handbook of Inter-Rater Reliability, 4th ed. Advanced Analytics.
    """
    return _gwet(ratings, "unweighted", confidence, categories, "Gwet's AC1", "Gwet's AC1 (Gwet 2008)")


def gwet_ac2(
    ratings: ArrayLike,
    weights: str = "quadratic",
    confidence: float = 0.95,
    categories: Sequence[float] | ArrayLike | None = None,
) -> GwetResult:
    """Gwet's weighted agreement coefficient AC2 for ordered ratings.

    Parameters
    ----------
    ratings : array_like, shape (n_subjects, n_raters)
        Numeric ratings, NaN = missing.
    weights : {"quadratic", "linear", "unweighted"}, default "quadratic"
        Agreement weights computed on the category values (``unweighted`` gives AC1).
    confidence : float, default 0.95
    categories : sequence of float, optional
        The declared category set; by default the observed values. Unused categories count
        in q and in the range of the weights (irrCAC's ``categ``).

    Returns
    -------
    GwetResult

    Notes
    -----
    ``pe = T_w / (q (q - 1)) * sum_k pi_k (1 - pi_k)`` where ``T_w`` is the sum of all
    weights (Gwet 2014, ch. 3); pa uses weighted agreement between each pair of ratings.

    References
    ----------
    Gwet, K. L. (2014). Handbook of Inter-Rater Reliability, 4th ed. Advanced Analytics.
    """
    _checks.choice("weights", weights, ("quadratic", "linear", "unweighted"))
    return _gwet(ratings, weights, confidence, categories, "Gwet's AC2", f"Gwet's AC2, {weights} weights (Gwet 2014)")
