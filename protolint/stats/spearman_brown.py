"""Spearman-Brown prophecy: reliability of the mean of k ratings, and its inverses."""

from __future__ import annotations

import math
from dataclasses import dataclass

from protolint.stats import _checks


@dataclass(frozen=True, slots=True)
class SpearmanBrownResult:
    """Reliability of the mean of ``k`` parallel ratings.

    Behaves as a float (``float(result)``) equal to ``reliability``.

    Attributes
    ----------
    single : float
        Reliability of one rating.
    k : float
        Number of ratings averaged (may be fractional, e.g. 0.5 to shorten a test).
    reliability : float
        ``k * single / (1 + (k - 1) * single)``.
    """

    single: float
    k: float
    reliability: float

    def __float__(self) -> float:
        return self.reliability


@dataclass(frozen=True, slots=True)
class RatersNeededResult:
    """Number of ratings whose mean reaches a target reliability.

    Attributes
    ----------
    single, target : float
    k_exact : float
        ``target (1 - single) / (single (1 - target))``.
    k : int
        ``k_exact`` rounded up (at least 1).
    achieved : float
        The reliability that ``k`` ratings give (>= target).
    """

    single: float
    target: float
    k_exact: float
    k: int
    achieved: float


def _sb(single: float, k: float) -> float:
    return k * single / (1.0 + (k - 1.0) * single)


def spearman_brown(single: float, k: float) -> SpearmanBrownResult:
    """Reliability of the mean of ``k`` ratings from the reliability of one.

    Parameters
    ----------
    single : float
        Single-rating reliability, in [0, 1].
    k : float
        Number of ratings averaged, > 0.

    Returns
    -------
    SpearmanBrownResult

    Notes
    -----
    ``rho_k = k rho / (1 + (k - 1) rho)``. Assumes parallel ratings (equal true-score
    variance and error variance); applied to ICC(1,1), ICC(2,1) or ICC(3,1) it gives the
    matching k-form of Shrout & Fleiss (1979).

    References
    ----------
    Spearman, C. (1910). Correlation calculated from faulty data. British Journal of
    Psychology, 3, 271-295.
    Brown, W. (1910). Some experimental results in the correlation of mental abilities.
    British Journal of Psychology, 3, 296-322.
    """
    rho = _checks.in_range("single", single, 0.0, 1.0)
    kk = _checks.positive("k", k)
    return SpearmanBrownResult(single=rho, k=kk, reliability=_sb(rho, kk))


def raters_needed(single: float, target: float) -> RatersNeededResult:
    """Number of ratings to average to reach a target reliability (inverse Spearman-Brown).

    Parameters
    ----------
    single : float
        Single-rating reliability, in (0, 1).
    target : float
        Target reliability of the mean, in (0, 1).

    Returns
    -------
    RatersNeededResult
        ``k`` rounded up, and the reliability it achieves.

    Notes
    -----
    ``k = rho* (1 - rho) / (rho (1 - rho*))``.

    References
    ----------
    Spearman (1910); Brown (1910); see :func:`spearman_brown`.
    """
    rho = _checks.probability_open("single", single)
    goal = _checks.probability_open("target", target)
    k_exact = goal * (1.0 - rho) / (rho * (1.0 - goal))
    # Rounding to 9 places first keeps an exact answer (e.g. 6.0000000001 from float error) at 6.
    k = max(1, math.ceil(round(k_exact, 9)))
    return RatersNeededResult(single=rho, target=goal, k_exact=k_exact, k=k, achieved=_sb(rho, k))


def single_from_average(r_k: float, k: float) -> float:
    """Single-rating reliability from the reliability of a mean of ``k`` ratings.

    Parameters
    ----------
    r_k : float
        Reliability of the mean of ``k`` ratings, in [0, 1].
    k : float
        Number of ratings that were averaged, > 0.

    Returns
    -------
    float
        ``r_k / (k - (k - 1) r_k)``, the inverse of :func:`spearman_brown`.

    References
    ----------
    Spearman (1910); Brown (1910); see :func:`spearman_brown`.
    """
    r = _checks.in_range("r_k", r_k, 0.0, 1.0)
    kk = _checks.positive("k", k)
    return r / (kk - (kk - 1.0) * r)
