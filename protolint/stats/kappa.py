"""Cohen's kappa for two raters and Fleiss' kappa for many raters."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from protolint.stats import _checks
from protolint.stats._results import ConfidenceInterval
from protolint.stats.gwet import _gwet_terms, _t_interval


@dataclass(frozen=True, slots=True)
class CohenKappaResult:
    """Cohen's kappa, unweighted or weighted.

    Attributes
    ----------
    value : float
        Kappa.
    se : float
        Asymptotic (non-null) standard error of Fleiss, Cohen & Everitt (1969).
    ci : ConfidenceInterval
        ``value -/+ z * se`` (normal theory, as SAS PROC FREQ), clipped to [-1, 1].
    se0 : float
        Standard error under H0: kappa = 0 (Fleiss, Cohen & Everitt 1969).
    z, p_value : float
        ``value / se0`` and its two-sided normal p-value.
    weights : str
        ``unweighted``, ``linear`` or ``quadratic``.
    po, pe : float
        Observed and chance (weighted) agreement.
    n_subjects, n_dropped : int
        Subjects used, and subjects dropped for a missing rating.
    categories : tuple of float
    method : str
    """

    value: float
    se: float
    ci: ConfidenceInterval
    se0: float
    z: float
    p_value: float
    weights: str
    po: float
    pe: float
    n_subjects: int
    n_dropped: int
    categories: tuple[float, ...]
    method: str


def cohen_kappa(
    ratings: ArrayLike,
    weights: str = "unweighted",
    confidence: float = 0.95,
    categories: ArrayLike | None = None,
) -> CohenKappaResult:
    """Cohen's kappa for two raters, with the Fleiss, Cohen & Everitt (1969) standard errors.

    Parameters
    ----------
    ratings : array_like, shape (n_subjects, 2)
        Numeric category codes of rater 1 and rater 2; NaN = missing. Subjects missing either
        rating are dropped and counted.
    weights : {"unweighted", "linear", "quadratic"}, default "unweighted"
        Agreement weights on the category values: linear (Cicchetti & Allison 1971) or
        quadratic (Fleiss & Cohen 1973). For equally spaced codes these equal the
        index-based weights of scikit-learn and statsmodels.
    confidence : float, default 0.95
    categories : array_like, optional
        All possible categories; by default those observed.

    Returns
    -------
    CohenKappaResult

    Notes
    -----
    With cell proportions p_ij, margins p_i. and p_.j and agreement weights w_ij::

        po = sum w_ij p_ij,  pe = sum w_ij p_i. p_.j,  kappa = (po - pe) / (1 - pe)
        wbar_i. = sum_j p_.j w_ij,  wbar_.j = sum_i p_i. w_ij
        var  = [sum p_ij (w_ij - (wbar_i. + wbar_.j)(1 - kappa))^2 - (kappa - pe (1 - kappa))^2] / (n (1 - pe)^2)
        var0 = [sum p_i. p_.j (w_ij - (wbar_i. + wbar_.j))^2 - pe^2] / (n (1 - pe)^2)

    References
    ----------
    Cohen, J. (1960). A coefficient of agreement for nominal scales. Educational and
    Psychological Measurement, 20, 37-46.
    Cohen, J. (1968). Weighted kappa. Psychological Bulletin, 70, 213-220.
    Fleiss, J. L., Cohen, J. & Everitt, B. S. (1969). Large sample standard errors of kappa
    and weighted kappa. Psychological Bulletin, 72, 323-327.
    """
    from scipy import special

    level = _checks.confidence(confidence)
    _checks.choice("weights", weights, ("unweighted", "linear", "quadratic"))
    arr = _checks.matrix("ratings", ratings, min_rows=1)
    if arr.shape[1] != 2:
        raise ValueError(f"ratings must have exactly 2 columns (raters) for Cohen's kappa, got {arr.shape[1]}")
    x, n_dropped = _checks.complete_rows("ratings", arr)
    values, codes = _checks.encode("ratings", x, categories)
    q = values.size
    n = x.shape[0]
    p = np.bincount(codes[:, 0] * q + codes[:, 1], minlength=q * q).reshape(q, q) / n
    w = _checks.agreement_weights(values, weights)
    p_row = p.sum(axis=1)
    p_col = p.sum(axis=0)
    po = float((w * p).sum())
    pe = float(p_row @ w @ p_col)
    if pe >= 1.0:
        raise ValueError("both raters used one and the same category throughout; kappa is undefined")
    kappa = (po - pe) / (1.0 - pe)
    wbar_row = w @ p_col  # wbar_i.
    wbar_col = p_row @ w  # wbar_.j
    wsum = wbar_row[:, None] + wbar_col[None, :]
    var = ((p * np.square(w - wsum * (1.0 - kappa))).sum() - (kappa - pe * (1.0 - kappa)) ** 2) / (n * (1.0 - pe) ** 2)
    var0 = ((np.outer(p_row, p_col) * np.square(w - wsum)).sum() - pe**2) / (n * (1.0 - pe) ** 2)
    se = float(np.sqrt(max(var, 0.0)))
    se0 = float(np.sqrt(max(var0, 0.0)))
    zq = float(special.ndtri(1.0 - (1.0 - level) / 2.0))
    z = kappa / se0 if se0 > 0 else float("inf")
    p_value = float(2.0 * special.ndtr(-abs(z)))
    label = "Cohen's kappa" if weights == "unweighted" else f"Cohen's weighted kappa ({weights} weights)"
    return CohenKappaResult(
        value=float(kappa),
        se=se,
        ci=ConfidenceInterval(max(kappa - zq * se, -1.0), min(kappa + zq * se, 1.0), level),
        se0=se0,
        z=float(z),
        p_value=p_value,
        weights=weights,
        po=po,
        pe=pe,
        n_subjects=int(n),
        n_dropped=n_dropped,
        categories=tuple(float(v) for v in values),
        method=f"{label}; standard errors of Fleiss, Cohen & Everitt (1969)",
    )


@dataclass(frozen=True, slots=True)
class CategoryKappa:
    """Fleiss' (1971) kappa for one category against all others.

    Attributes
    ----------
    category : float
    value : float
    se0 : float
        Standard error under H0 (Fleiss, Nee & Landis 1979): sqrt(2 / (N m (m - 1))).
    z : float
    proportion : float
        Share of all ratings in this category (p_j).
    """

    category: float
    value: float
    se0: float
    z: float
    proportion: float


@dataclass(frozen=True, slots=True)
class FleissKappaResult:
    """Fleiss' kappa for many raters on a nominal scale.

    Attributes
    ----------
    value : float
    se : float
        Gwet's (2014) non-null standard error, used for the interval.
    ci : ConfidenceInterval
        ``value -/+ t(N-1) * se`` (Gwet 2014), clipped to [-1, 1].
    se0 : float
        Standard error under H0: kappa = 0 (Fleiss, Nee & Landis 1979), used for ``z``.
    z, p_value : float
        ``value / se0`` and its two-sided normal p-value.
    p_bar, p_bar_e : float
        Mean observed agreement and chance agreement (Fleiss 1971's P-bar and P-bar_e).
    categories : tuple of CategoryKappa
    n_subjects, n_raters, n_dropped : int
        Subjects used, ratings per subject, subjects dropped for a missing rating.
    method : str
    """

    value: float
    se: float
    ci: ConfidenceInterval
    se0: float
    z: float
    p_value: float
    p_bar: float
    p_bar_e: float
    categories: tuple[CategoryKappa, ...]
    n_subjects: int
    n_raters: int
    n_dropped: int
    method: str


def fleiss_kappa(
    ratings: ArrayLike, confidence: float = 0.95, categories: ArrayLike | None = None
) -> FleissKappaResult:
    """Fleiss' kappa for a fixed number of ratings per subject on a nominal scale.

    Parameters
    ----------
    ratings : array_like, shape (n_subjects, n_raters)
        Category codes; the raters need not be the same persons for every subject. Subjects
        with a missing rating are dropped (Fleiss 1971 needs the same number of ratings per
        subject) and counted in ``n_dropped``.
    confidence : float, default 0.95
    categories : array_like, optional
        All possible categories; by default those observed.

    Returns
    -------
    FleissKappaResult

    Notes
    -----
    With n_ij the number of raters putting subject i in category j, N subjects, m ratings
    each, p_j = sum_i n_ij / (N m), P_i = (sum_j n_ij^2 - m) / (m (m - 1))::

        kappa = (P-bar - P-bar_e) / (1 - P-bar_e),  P-bar_e = sum_j p_j^2
        kappa_j = 1 - sum_i n_ij (m - n_ij) / (N m (m - 1) p_j q_j)
        se0 = sqrt(2) / (sum p_j q_j sqrt(N m (m - 1))) * sqrt((sum p_j q_j)^2 - sum p_j q_j (q_j - p_j))

    ``se0`` is the corrected null variance of Fleiss, Nee & Landis (1979), which replaced the
    one printed in Fleiss (1971); the interval uses Gwet's (2014) non-null variance instead,
    because a null standard error does not describe the spread of kappa away from zero.

    References
    ----------
    Fleiss, J. L. (1971). Measuring nominal scale agreement among many raters. Psychological
    Bulletin, 76, 378-382.
    Fleiss, J. L., Nee, J. C. M. & Landis, J. R. (1979). Large sample variance of kappa in the
    case of different sets of raters. Psychological Bulletin, 86, 974-977.
    Gwet, K. L. (2014). Handbook of Inter-Rater Reliability, 4th ed. Advanced Analytics.
    """
    from scipy import special

    level = _checks.confidence(confidence)
    arr = _checks.matrix("ratings", ratings)
    x, n_dropped = _checks.complete_rows("ratings", arr)
    values, codes = _checks.encode("ratings", x, categories)
    counts = _checks.category_counts(codes, values.size)
    big_n, m = x.shape
    p_j = counts.sum(axis=0) / (big_n * m)
    q_j = 1.0 - p_j
    p_i = (np.square(counts).sum(axis=1) - m) / (m * (m - 1))
    p_bar = float(p_i.mean())
    p_bar_e = float(np.square(p_j).sum())
    if p_bar_e >= 1.0:
        raise ValueError("every rating is in one category; Fleiss' kappa is undefined")
    kappa = (p_bar - p_bar_e) / (1.0 - p_bar_e)
    pq = p_j * q_j
    spq = float(pq.sum())
    se0 = float(
        np.sqrt(2.0) / (spq * np.sqrt(big_n * m * (m - 1))) * np.sqrt(max(spq**2 - float((pq * (q_j - p_j)).sum()), 0.0))
    )
    z = kappa / se0 if se0 > 0 else float("inf")
    se0_j = float(np.sqrt(2.0 / (big_n * m * (m - 1))))
    per_category = []
    for j, value in enumerate(values):
        if pq[j] > 0:
            kj = 1.0 - float((counts[:, j] * (m - counts[:, j])).sum()) / (big_n * m * (m - 1) * pq[j])
        else:
            kj = float("nan")  # a category nobody used (given in ``categories``) has no kappa
        per_category.append(CategoryKappa(float(value), kj, se0_j, kj / se0_j, float(p_j[j])))
    gwet = _gwet_terms(counts, np.eye(values.size), "fleiss")
    return FleissKappaResult(
        value=float(kappa),
        se=gwet.se,
        ci=_t_interval(float(kappa), gwet.se, big_n, level),
        se0=se0,
        z=float(z),
        p_value=float(2.0 * special.ndtr(-abs(z))),
        p_bar=p_bar,
        p_bar_e=p_bar_e,
        categories=tuple(per_category),
        n_subjects=int(big_n),
        n_raters=int(m),
        n_dropped=n_dropped,
        method="Fleiss' kappa (Fleiss 1971); null SE of Fleiss, Nee & Landis (1979); interval from Gwet's (2014) variance",
    )
