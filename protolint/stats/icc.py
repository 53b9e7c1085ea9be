"""Intraclass correlation coefficients: the six Shrout & Fleiss (1979) forms.

Each form is also labelled with its McGraw & Wong (1996) model, type and unit, carries the
F test of H0: ICC = 0 and the exact confidence interval of McGraw & Wong (1996).
"""

from __future__ import annotations

import math

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from protolint.stats import _checks
from protolint.stats._results import ConfidenceInterval, FTest

ICC_NAMES: tuple[str, ...] = ("ICC(1,1)", "ICC(2,1)", "ICC(3,1)", "ICC(1,k)", "ICC(2,k)", "ICC(3,k)")

# Shrout & Fleiss name -> (McGraw & Wong name, model, type, unit). McGraw & Wong (1996, Table 4)
# show that the two-way random and two-way mixed models share one formula per type, so the model
# label names the usual reading first and the other in brackets.
_LABELS: dict[str, tuple[str, str, str, str]] = {
    "ICC(1,1)": ("ICC(1)", "one-way random", "absolute agreement", "single rater"),
    "ICC(2,1)": ("ICC(A,1)", "two-way random (same formula: two-way mixed)", "absolute agreement", "single rater"),
    "ICC(3,1)": ("ICC(C,1)", "two-way mixed (same formula: two-way random)", "consistency", "single rater"),
    "ICC(1,k)": ("ICC(k)", "one-way random", "absolute agreement", "mean of k raters"),
    "ICC(2,k)": ("ICC(A,k)", "two-way random (same formula: two-way mixed)", "absolute agreement", "mean of k raters"),
    "ICC(3,k)": ("ICC(C,k)", "two-way mixed (same formula: two-way random)", "consistency", "mean of k raters"),
}


@dataclass(frozen=True, slots=True)
class IccForm:
    """One intraclass correlation form.

    Attributes
    ----------
    name : str
        Shrout & Fleiss (1979) name, e.g. ``"ICC(2,1)"``; ``k`` stays literal in the k-forms.
    mcgraw_wong : str
        McGraw & Wong (1996) name, e.g. ``"ICC(A,1)"``.
    model, type, unit : str
        McGraw & Wong model (one-way / two-way random / two-way mixed), type (consistency or
        absolute agreement) and unit (single rater or mean of k raters).
    value : float
        The estimate.
    ci : ConfidenceInterval
        McGraw & Wong (1996) exact (F-based) interval; Satterthwaite-approximate for the
        absolute-agreement forms.
    f_test : FTest
        F test of H0: ICC = 0.
    """

    name: str
    mcgraw_wong: str
    model: str
    type: str
    unit: str
    value: float
    ci: ConfidenceInterval
    f_test: FTest


@dataclass(frozen=True, slots=True)
class IccResult:
    """All six intraclass correlation forms for one subjects x raters matrix.

    Attributes
    ----------
    forms : tuple of IccForm
        In the order ICC(1,1), ICC(2,1), ICC(3,1), ICC(1,k), ICC(2,k), ICC(3,k).
    n_subjects, n_raters : int
        Size of the complete-case matrix used.
    n_dropped : int
        Subjects dropped because at least one of their cells was missing.
    msr, msw, msc, mse : float
        Mean squares: between subjects (rows), within subjects (one-way), between raters
        (columns) and residual (Shrout & Fleiss's BMS, WMS, JMS, EMS).
    confidence : float
        Level of the intervals.
    method : str
        The method's name.
    warnings : tuple of str
        Caveats in plain words: few subjects, a rater who gave every subject the same score.
    """

    forms: tuple[IccForm, ...]
    n_subjects: int
    n_raters: int
    n_dropped: int
    msr: float
    msw: float
    msc: float
    mse: float
    confidence: float
    method: str = "Intraclass correlation, Shrout & Fleiss (1979) / McGraw & Wong (1996)"
    warnings: tuple[str, ...] = ()

    def __getitem__(self, name: str) -> IccForm:
        for form in self.forms:
            if name in (form.name, form.mcgraw_wong):
                return form
        raise KeyError(f"no ICC form named {name!r}; expected one of {', '.join(ICC_NAMES)}")


def _single_bound(f: float, k: int) -> float:
    # (F - 1) / (F + k - 1) written so that an infinite F (no residual variance) gives 1.
    return 1.0 - k / (f + k - 1.0)


def _average_bound(f: float) -> float:
    return 1.0 - 1.0 / f


def icc(ratings: ArrayLike, confidence: float = 0.95) -> IccResult:
    """The six intraclass correlation coefficients of Shrout & Fleiss (1979).

    Parameters
    ----------
    ratings : array_like, shape (n_subjects, n_raters)
        One row per subject (target), one column per rater (judge); NaN marks a missing cell.
        Subjects with any missing cell are dropped (complete-case analysis) and counted in
        ``n_dropped``.
    confidence : float, default 0.95
        Level of the confidence intervals.

    Returns
    -------
    IccResult

    Notes
    -----
    With ``n`` subjects and ``k`` raters, from the two-way ANOVA mean squares (Shrout & Fleiss
    1979, Table 1; variable names as in McGraw & Wong 1996)::

        ICC(1,1) = (MSR - MSW) / (MSR + (k-1) MSW)
        ICC(2,1) = (MSR - MSE) / (MSR + (k-1) MSE + k (MSC - MSE) / n)
        ICC(3,1) = (MSR - MSE) / (MSR + (k-1) MSE)
        ICC(1,k) = (MSR - MSW) / MSR
        ICC(2,k) = (MSR - MSE) / (MSR + (MSC - MSE) / n)
        ICC(3,k) = (MSR - MSE) / MSR

    Confidence intervals are those of McGraw & Wong (1996, Table 7): exact F-based bounds for
    the one-way and consistency forms; for the absolute-agreement forms the Satterthwaite
    approximation of Fleiss & Shrout (1978). The ICC(2,k) bounds equal the Spearman-Brown
    step-up of the ICC(2,1) bounds (an algebraic identity of the Table 7 formulas).

    References
    ----------
    Shrout, P. E. & Fleiss, J. L. (1979). Intraclass correlations: uses in assessing rater
    reliability. Psychological Bulletin, 86, 420-428.
    McGraw, K. O. & Wong, S. P. (1996). Forming inferences about some intraclass correlation
    coefficients. Psychological Methods, 1, 30-46.
    Fleiss, J. L. & Shrout, P. E. (1978). Approximate interval estimation for a certain
    intraclass correlation coefficient. Psychometrika, 43, 259-262.
    """
    from scipy import special  # lazy: keep ``import protolint.stats`` light

    level = _checks.confidence(confidence)
    x, n_dropped = _checks.complete_rows("ratings", _checks.matrix("ratings", ratings))
    n, k = x.shape
    grand = x.mean()
    row_means = x.mean(axis=1)
    col_means = x.mean(axis=0)
    sst = float(np.square(x - grand).sum())
    ssr = float(k * np.square(row_means - grand).sum())
    ssc = float(n * np.square(col_means - grand).sum())
    sse = max(sst - ssr - ssc, 0.0)  # clip the rounding residue of an exact fit
    if sst == 0.0:
        raise ValueError("ratings has no variance (every value is the same); the ICC is undefined")
    df_r, df_c, df_e, df_w = n - 1, k - 1, (n - 1) * (k - 1), n * (k - 1)
    msr = ssr / df_r
    msc = ssc / df_c
    mse = sse / df_e
    msw = (ssc + sse) / df_w
    if msr == 0.0:
        raise ValueError("ratings has no variance between subjects; the ICC is undefined")

    half = (1.0 - level) / 2.0
    with np.errstate(divide="ignore", invalid="ignore"):
        # One-way (ICC(1,.)) and consistency (ICC(3,.)) forms: F0 = MSR/MSW or MSR/MSE.
        f1 = msr / msw if msw > 0 else np.inf
        f3 = msr / mse if mse > 0 else np.inf
    p1 = float(special.fdtrc(df_r, df_w, f1)) if np.isfinite(f1) else 0.0
    p3 = float(special.fdtrc(df_r, df_e, f3)) if np.isfinite(f3) else 0.0

    def exact_bounds(f0: float, dfn: float, dfd: float) -> tuple[float, float]:
        fl = f0 / float(special.fdtri(dfn, dfd, 1.0 - half))
        fu = f0 * float(special.fdtri(dfd, dfn, 1.0 - half))
        return fl, fu

    fl1, fu1 = exact_bounds(f1, df_r, df_w)
    fl3, fu3 = exact_bounds(f3, df_r, df_e)

    # The absolute-agreement denominators estimate a variance (subject + rater + error, per
    # rating or per mean of k) from mean squares with MSE subtracted, so on degenerate data they
    # can be zero or negative: the form is then undefined (NaN), never the huge number a rounding
    # residue gives or a "reliability" above 1 from a negative over a negative.
    size = msr + msc + mse

    def ratio(numerator: float, denominator: float) -> float:
        return numerator / denominator if denominator > 1e-12 * size else float("nan")

    icc1 = (msr - msw) / (msr + (k - 1) * msw)
    icc2 = ratio(msr - mse, msr + (k - 1) * mse + k * (msc - mse) / n)
    icc3 = (msr - mse) / (msr + (k - 1) * mse)
    icc1k = (msr - msw) / msr
    icc2k = ratio(msr - mse, msr + (msc - mse) / n)
    icc3k = (msr - mse) / msr

    # Absolute agreement: Satterthwaite degrees of freedom (McGraw & Wong 1996, Table 7, case A).
    if math.isnan(icc2):
        lo2, hi2 = float("nan"), float("nan")
    elif icc2 >= 1.0:
        lo2, hi2 = 1.0, 1.0
    else:
        a = k * icc2 / (n * (1.0 - icc2))
        b = 1.0 + k * icc2 * (n - 1) / (n * (1.0 - icc2))
        v = (a * msc + b * mse) ** 2 / ((a * msc) ** 2 / df_c + (b * mse) ** 2 / df_e)
        f_star = float(special.fdtri(df_r, v, 1.0 - half))
        f_star_u = float(special.fdtri(v, df_r, 1.0 - half))
        lo2 = n * (msr - f_star * mse) / (f_star * (k * msc + (k * n - k - n) * mse) + n * msr)
        hi2 = n * (f_star_u * msr - mse) / (k * msc + (k * n - k - n) * mse + n * f_star_u * msr)
    # ICC(A,k): McGraw & Wong's case-A k-form bounds, identical to the Spearman-Brown step-up.
    lo2k = k * lo2 / (1.0 + (k - 1) * lo2)
    hi2k = k * hi2 / (1.0 + (k - 1) * hi2)
    if math.isnan(icc2k):
        lo2k = hi2k = float("nan")

    test1 = FTest(float(f1), float(df_r), float(df_w), p1)
    test3 = FTest(float(f3), float(df_r), float(df_e), p3)
    values = {
        "ICC(1,1)": (icc1, _single_bound(fl1, k), _single_bound(fu1, k), test1),
        "ICC(2,1)": (icc2, lo2, hi2, test3),
        "ICC(3,1)": (icc3, _single_bound(fl3, k), _single_bound(fu3, k), test3),
        "ICC(1,k)": (icc1k, _average_bound(fl1), _average_bound(fu1), test1),
        "ICC(2,k)": (icc2k, lo2k, hi2k, test3),
        "ICC(3,k)": (icc3k, _average_bound(fl3), _average_bound(fu3), test3),
    }
    forms = tuple(
        IccForm(
            name=name,
            mcgraw_wong=_LABELS[name][0],
            model=_LABELS[name][1],
            type=_LABELS[name][2],
            unit=_LABELS[name][3],
            value=float(est),
            ci=ConfidenceInterval(float(lo), float(hi), level),
            f_test=test,
        )
        for name, (est, lo, hi, test) in values.items()
    )
    return IccResult(
        forms=forms,
        n_subjects=int(n),
        n_raters=int(k),
        n_dropped=n_dropped,
        msr=float(msr),
        msw=float(msw),
        msc=float(msc),
        mse=float(mse),
        confidence=level,
        warnings=tuple(_checks.constant_column_warnings(x) + list(_checks.few_subjects_warning("The ICC", n))),
    )
