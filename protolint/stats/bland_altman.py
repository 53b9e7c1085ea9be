"""Bland–Altman bias and limits of agreement, with confidence intervals.

For paired measurements (here a rater's scores and the reference scores of the same cases) with
differences ``d = rater − reference``: the bias ``d̄`` and the 95 % limits of agreement
``d̄ ± z·s`` (Bland & Altman 1986, "Statistical methods for assessing agreement between two
methods of clinical measurement", Lancet i:307–310), with ``z = Φ⁻¹(0.975) = 1.96``.

Intervals:

* bias: ``d̄ ± t(n−1) · s/√n`` (Bland & Altman 1986);
* each limit, **exact** (the one reported as ``ci``): the limit is a normal quantile
  ``μ + zσ``, and ``√n (d̄ − (μ + zσ)) / s`` follows a noncentral t with ``n − 1`` degrees
  of freedom and noncentrality ``−z√n``. Inverting it gives the interval
  ``(d̄ + s·t'_{α/2}/√n, d̄ + s·t'_{1−α/2}/√n)`` for the upper limit, where ``t'_q`` is the
  q-quantile of the noncentral t with noncentrality ``z√n`` (Carkeet 2015, "Exact parametric
  confidence intervals for Bland–Altman limits of agreement", Optom Vis Sci 92:e71–e80), and
  the mirror image for the lower limit;
* each limit, approximate, for comparison with older reports: ``SE = √(3s²/n)`` (Bland &
  Altman 1986) and ``SE = s √(1/n + z²/(2(n−1)))`` (Bland & Altman 1999, Stat Methods Med Res
  8:135–160), each with ``t(n−1)``. Carkeet & Goh (2018) found both too narrow for small n.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from numpy.typing import ArrayLike

from protolint.stats import _checks
from protolint.stats._results import ConfidenceInterval


@dataclass(frozen=True, slots=True)
class LimitOfAgreement:
    """One limit of agreement with its exact and approximate intervals.

    Attributes
    ----------
    value : float
        ``d̄ − z·s`` (lower) or ``d̄ + z·s`` (upper).
    ci : ConfidenceInterval
        Exact interval (Carkeet 2015, noncentral t).
    ci_1986, ci_1999 : ConfidenceInterval
        Approximate intervals with the 1986 and 1999 standard errors.
    """

    value: float
    ci: ConfidenceInterval
    ci_1986: ConfidenceInterval
    ci_1999: ConfidenceInterval


@dataclass(frozen=True, slots=True)
class BlandAltmanResult:
    """Bias and limits of agreement of paired measurements.

    Attributes
    ----------
    n : int
        Number of pairs used.
    bias : float
        Mean difference ``d̄``.
    bias_ci : ConfidenceInterval
        t interval of the bias.
    sd : float
        SD of the differences (``n − 1`` denominator).
    z : float
        Multiplier of the limits (1.96 for 95 % limits).
    lower, upper : LimitOfAgreement
    confidence : float
        Level of the intervals.
    method : str
    """

    n: int
    bias: float
    bias_ci: ConfidenceInterval
    sd: float
    z: float
    lower: LimitOfAgreement
    upper: LimitOfAgreement
    confidence: float
    method: str = ("Bland & Altman (1986) limits of agreement; exact interval of each limit by the "
                   "noncentral t (Carkeet 2015)")


@lru_cache(maxsize=1024)
def _carkeet_factors(n: int, z: float, tail: float) -> tuple[float, float]:
    """Quantiles ``tail`` and ``1 − tail`` of the noncentral t (n − 1 df, noncentrality z√n), over √n."""
    from scipy import stats as sps

    root_n = math.sqrt(n)
    # Boost's noncentral-t quantile raises a spurious divide-by-zero flag for some small df
    # (the value it returns is right); the flag is silenced and the result checked instead.
    with np.errstate(divide="ignore", invalid="ignore"):
        low = float(sps.nct.ppf(tail, n - 1, z * root_n))
        high = float(sps.nct.ppf(1.0 - tail, n - 1, z * root_n))
    if not (math.isfinite(low) and math.isfinite(high)):
        raise ArithmeticError(f"noncentral t quantiles not finite for n = {n}, z = {z}")
    return low / root_n, high / root_n


def bland_altman(
    measured: ArrayLike,
    reference: ArrayLike,
    limits: float = 0.95,
    confidence: float = 0.95,
    z: float | None = None,
) -> BlandAltmanResult:
    """Bias and limits of agreement of ``measured − reference``.

    Parameters
    ----------
    measured, reference : array_like, shape (n,)
        Paired measurements; pairs with a NaN in either are dropped.
    limits : float, default 0.95
        Coverage of the limits of agreement (``z = Φ⁻¹((1 + limits)/2)``).
    confidence : float, default 0.95
        Level of the confidence intervals.
    z : float, optional
        The multiplier itself (e.g. 1.96 or 2, as printed in older papers); overrides ``limits``.
    """
    from scipy import special

    level = _checks.confidence(confidence)
    a = np.asarray(measured, dtype=float).ravel()
    b = np.asarray(reference, dtype=float).ravel()
    if a.shape != b.shape:
        raise ValueError(f"measured and reference must have the same length, got {a.size} and {b.size}")
    keep = np.isfinite(a) & np.isfinite(b)
    diff = a[keep] - b[keep]
    n = int(diff.size)
    if n < 3:
        raise ValueError(f"Bland-Altman limits need at least 3 complete pairs, got {n}")
    if z is None:
        coverage = _checks.probability_open("limits", limits)
        z = float(special.ndtri((1.0 + coverage) / 2.0))
    else:
        z = _checks.positive("z", z)
    bias = float(diff.mean())
    sd = float(diff.std(ddof=1))
    df = n - 1
    tail = (1.0 - level) / 2.0
    t_crit = float(special.stdtrit(df, 1.0 - tail))
    se_bias = sd / math.sqrt(n)
    bias_ci = ConfidenceInterval(bias - t_crit * se_bias, bias + t_crit * se_bias, level)

    if sd > 0:
        # Quantiles of the noncentral t with noncentrality z√n (Carkeet 2015); factors multiply s.
        near, far = _carkeet_factors(n, z, tail)
    else:
        near = far = z
    se_1986 = math.sqrt(3.0 * sd * sd / n)
    se_1999 = sd * math.sqrt(1.0 / n + z * z / (2.0 * df))

    def limit(sign: float) -> LimitOfAgreement:
        value = bias + sign * z * sd
        exact = sorted((bias + sign * near * sd, bias + sign * far * sd))
        return LimitOfAgreement(
            value,
            ConfidenceInterval(exact[0], exact[1], level),
            ConfidenceInterval(value - t_crit * se_1986, value + t_crit * se_1986, level),
            ConfidenceInterval(value - t_crit * se_1999, value + t_crit * se_1999, level),
        )

    return BlandAltmanResult(n, bias, bias_ci, sd, z, limit(-1.0), limit(1.0), level)
