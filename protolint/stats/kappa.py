"""Cohen's kappa for two raters and Fleiss' kappa for many raters."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from protolint.stats import _checks
from protolint.stats._results import ConfidenceInterval
from protolint.stats.gwet import _gwet_terms, _t_interval, interval_warning
from protolint.wording import plural

MISSING = ("available", "complete")


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
        The category set used (declared, or the observed values).
    method : str
    unused_categories : tuple of float
        Declared categories that neither rater used (they still count in the weights).
    warnings : tuple of str
        Caveats in plain words: a constant rater, few subjects, no interval (its bounds are
        then NaN).
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
    unused_categories: tuple[float, ...] = ()
    warnings: tuple[str, ...] = ()


def cohen_kappa(
    ratings: ArrayLike,
    weights: str = "unweighted",
    confidence: float = 0.95,
    categories: Sequence[float] | ArrayLike | None = None,
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
    categories : sequence of float, optional
        The declared category set (e.g. every score of the scale); by default the observed
        values. Unused categories change nothing in unweighted kappa but widen the range of
        linear and quadratic weights, as in Gwet's irrCAC (``categ.labels``) and
        scikit-learn (``labels``).

    Returns
    -------
    CohenKappaResult

    A rater who gives every subject the same category makes kappa 0 exactly (observed and
    chance agreement coincide); it is computed, with a warning. When the standard error is 0
    (perfect agreement on very few subjects) no interval is given: its bounds are NaN.

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
    warnings = _checks.constant_column_warnings(x)
    constant = bool(warnings)
    if constant:
        warnings.append("with a rater who never varies, observed and chance agreement coincide: kappa is 0")
    warnings += _checks.few_subjects_warning("Cohen's kappa", n)
    kappa = (po - pe) / (1.0 - pe)
    wbar_row = w @ p_col  # wbar_i.
    wbar_col = p_row @ w  # wbar_.j
    wsum = wbar_row[:, None] + wbar_col[None, :]
    var = ((p * np.square(w - wsum * (1.0 - kappa))).sum() - (kappa - pe * (1.0 - kappa)) ** 2) / (n * (1.0 - pe) ** 2)
    var0 = ((np.outer(p_row, p_col) * np.square(w - wsum)).sum() - pe**2) / (n * (1.0 - pe) ** 2)
    se = float(np.sqrt(max(var, 0.0)))
    se0 = float(np.sqrt(max(var0, 0.0)))
    if constant:
        # Kappa is 0 identically here and both variances are 0; drop the rounding residue.
        kappa, se, se0 = 0.0, 0.0, 0.0
    zq = float(special.ndtri(1.0 - (1.0 - level) / 2.0))
    # A zero null SE comes with a constant rater, where kappa is 0 identically: no test.
    z = kappa / se0 if se0 > 0 else float("nan")
    p_value = float(2.0 * special.ndtr(-abs(z)))
    label = "Cohen's kappa" if weights == "unweighted" else f"Cohen's weighted kappa ({weights} weights)"
    if se > 0.0:
        ci = ConfidenceInterval(max(kappa - zq * se, -1.0), min(kappa + zq * se, 1.0), level)
    elif constant:
        ci = _no_interval(level)
        warnings.append("no interval: kappa is 0 whatever the other rater does, so it has no sampling spread")
    else:
        ci = _no_interval(level)
        warnings.append(f"no interval: the standard error is 0 on {n} subjects, so the normal-theory interval has no width")
    used = np.union1d(np.flatnonzero(p_row), np.flatnonzero(p_col))
    return CohenKappaResult(
        value=float(kappa),
        se=se,
        ci=ci,
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
        unused_categories=tuple(float(v) for v in np.delete(values, used)),
        warnings=tuple(warnings),
    )


def _no_interval(level: float) -> ConfidenceInterval:
    return ConfidenceInterval(float("nan"), float("nan"), level)


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
        ``value -/+ t(n-1) * se`` (Gwet 2014), clipped to [-1, 1]; NaN bounds when none can
        be computed (``warnings`` says why).
    se0 : float
        Standard error under H0: kappa = 0 (Fleiss, Nee & Landis 1979), used for ``z``. It
        assumes the same number of ratings per subject: NaN when that number varies.
    z, p_value : float
        ``value / se0`` and its two-sided normal p-value (NaN with ``se0``).
    p_bar, p_bar_e : float
        Mean observed agreement and chance agreement (Fleiss 1971's P-bar and P-bar_e;
        Gwet's p_a and p_e when the number of ratings varies).
    categories : tuple of CategoryKappa
    n_subjects : int
        Subjects used: every subject with at least one rating (those rated once inform the
        category proportions only), or the complete subjects with ``missing="complete"``.
    n_raters : int
        Raters (columns), i.e. the most ratings a subject can have.
    n_dropped : int
        Subjects left out: with no rating at all, or, with ``missing="complete"``, with any
        missing rating.
    method : str
    n_ratings : int
        Ratings used.
    n_pairable : int
        Subjects with at least two ratings (the ones whose agreement is observed).
    unused_categories : tuple of float
        Declared categories nobody used (their kappa is NaN).
    warnings : tuple of str
        Caveats in plain words (a constant rater, few subjects, no interval or null test).
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
    n_ratings: int = 0
    n_pairable: int = 0
    unused_categories: tuple[float, ...] = ()
    warnings: tuple[str, ...] = ()


def fleiss_kappa(
    ratings: ArrayLike,
    confidence: float = 0.95,
    categories: Sequence[float] | ArrayLike | None = None,
    *,
    missing: str = "available",
) -> FleissKappaResult:
    """Fleiss' kappa on a nominal scale, for a fixed or a varying number of ratings per subject.

    Parameters
    ----------
    ratings : array_like, shape (n_subjects, n_raters)
        Category codes, NaN = missing rating; the raters need not be the same persons for
        every subject.
    confidence : float, default 0.95
    categories : sequence of float, optional
        The declared category set; by default the observed values. A declared category
        nobody used adds nothing to chance agreement and has no category kappa (NaN).
    missing : {"available", "complete"}, default "available"
        ``available`` uses every rating: Gwet's (2014, ch. 5) generalisation of Fleiss'
        kappa to a number of ratings that varies between subjects, which equals Fleiss
        (1971) when every subject has the same number. ``complete`` keeps only subjects
        with every rating (listwise deletion, the behaviour before this option), counted in
        ``n_dropped``. Keyword only.

    Returns
    -------
    FleissKappaResult

    Notes
    -----
    With r_ik the number of ratings of subject i in category k and r_i their sum::

        p_a = mean over subjects with r_i >= 2 of sum_k r_ik (r_ik - 1) / (r_i (r_i - 1))
        pi_k = mean over subjects with r_i >= 1 of r_ik / r_i,   p_e = sum_k pi_k^2
        kappa = (p_a - p_e) / (1 - p_e)

    With r_i = m for every subject this is Fleiss (1971): p_a = P-bar, pi_k = p_j. The
    category kappa kappa_k is the same coefficient on the table "k against the rest" (Fleiss
    1971). ``se0`` is the corrected null variance of Fleiss, Nee & Landis (1979), which
    replaced the one printed in Fleiss (1971) and needs a constant m::

        se0 = sqrt(2) / (sum p_j q_j sqrt(N m (m - 1))) * sqrt((sum p_j q_j)^2 - sum p_j q_j (q_j - p_j))

    The interval uses Gwet's (2014) non-null variance (the linearised per-subject terms, on
    n - 1 degrees of freedom), because a null standard error does not describe the spread
    of kappa away from zero. Gwet's irrCAC implements the same estimator (``fleiss``).

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
    _checks.choice("missing", missing, MISSING)
    arr = _checks.matrix("ratings", ratings)
    if missing == "complete":
        x, n_dropped = _checks.complete_rows("ratings", arr)
    else:
        rated = ~np.isnan(arr).all(axis=1)
        x, n_dropped = arr[rated], int(arr.shape[0] - rated.sum())
    values, codes = _checks.encode("ratings", x, categories)
    counts = _checks.category_counts(codes, values.size)
    q = values.size
    r_i = counts.sum(axis=1)
    big_n, n_raters = x.shape[0], x.shape[1]
    pairable = r_i >= 2
    n_pairable = int(pairable.sum())
    if n_pairable == 0:
        raise ValueError("ratings has no subject rated by two or more raters; Fleiss' kappa is undefined")
    p_j = (counts / r_i[:, None]).mean(axis=0)
    q_j = 1.0 - p_j
    if float(np.square(p_j).sum()) >= 1.0:
        raise ValueError("every rating is in one category; Fleiss' kappa is undefined")
    gwet = _gwet_terms(counts, np.eye(q), "fleiss")
    p_bar, p_bar_e = gwet.pa, gwet.pe
    kappa = gwet.value
    pq = p_j * q_j
    # Category kappas: the same coefficient on "j against the rest", all categories at once.
    den = np.where(pairable, r_i * (r_i - 1.0), 1.0)[:, None]
    rest = r_i[:, None] - counts
    pa_j = ((counts * (counts - 1.0) + rest * (rest - 1.0)) / den)[pairable].mean(axis=0)
    pe_j = np.square(p_j) + np.square(q_j)
    with np.errstate(divide="ignore", invalid="ignore"):
        kappa_j = np.where(pq > 0, (pa_j - pe_j) / (1.0 - pe_j), np.nan)
    warnings = _checks.constant_column_warnings(x)
    warnings += _checks.few_subjects_warning("Fleiss' kappa", n_pairable)
    constant_m = bool((r_i == r_i[0]).all()) and r_i[0] >= 2
    if constant_m:
        m = float(r_i[0])
        spq = float(pq.sum())
        se0 = float(
            np.sqrt(2.0) / (spq * np.sqrt(big_n * m * (m - 1))) * np.sqrt(max(spq**2 - float((pq * (q_j - p_j)).sum()), 0.0))
        )
        se0_j = float(np.sqrt(2.0 / (big_n * m * (m - 1))))
        z = kappa / se0 if se0 > 0 else float("nan")
        p_value = float(2.0 * special.ndtr(-abs(z)))
    else:
        se0 = se0_j = z = p_value = float("nan")
        single = int((r_i == 1).sum())
        warnings.append(
            "the number of ratings varies between subjects"
            + (f" ({plural(single, 'subject')} rated once inform the category proportions only)" if single else "")
            + "; the null-hypothesis test of Fleiss, Nee & Landis (1979) needs a constant number and is not given"
        )
    per_category = tuple(
        CategoryKappa(float(value), float(kappa_j[j]), se0_j, float(kappa_j[j]) / se0_j, float(p_j[j]))
        for j, value in enumerate(values)
    )
    ci, reason = _t_interval(kappa, gwet.se, gwet.n, level), interval_warning(gwet.se, gwet.n)
    if reason:
        warnings.append(reason)
    form = "Fleiss' kappa (Fleiss 1971)" if constant_m else "Fleiss' kappa for varying numbers of ratings per subject (Gwet 2014)"
    return FleissKappaResult(
        value=float(kappa),
        se=gwet.se,
        ci=ci,
        se0=se0,
        z=float(z),
        p_value=p_value,
        p_bar=p_bar,
        p_bar_e=p_bar_e,
        categories=per_category,
        n_subjects=int(big_n),
        n_raters=int(n_raters),
        n_dropped=n_dropped,
        method=form + ("; null SE of Fleiss, Nee & Landis (1979)" if constant_m else "") + "; interval from Gwet's (2014) variance",
        n_ratings=int(r_i.sum()),
        n_pairable=n_pairable,
        unused_categories=tuple(float(v) for v in values[p_j == 0]),
        warnings=tuple(warnings),
    )
