"""Precision of a reliability study: how many subjects an ICC study needs."""

from __future__ import annotations

import math
from dataclasses import dataclass
from statistics import NormalDist

from protolint.stats import _checks


@dataclass(frozen=True, slots=True)
class IccWidthResult:
    """Expected width of an ICC confidence interval (Bonett 2002).

    Attributes
    ----------
    width : float
        Expected full width of the interval.
    rho, confidence : float
    k, n : int
    method : str
    """

    width: float
    rho: float
    k: int
    n: int
    confidence: float
    method: str


@dataclass(frozen=True, slots=True)
class IccWidthSampleSize:
    """Subjects for an ICC confidence interval of a desired width (Bonett 2002).

    Attributes
    ----------
    n : int
        Subjects, rounded up.
    n_exact : float
        Bonett's formula before rounding, including the k = 2 adjustment when it applies.
    achieved_width : float
        Expected width at ``n`` (Bonett's formula, without the adjustment).
    adjusted_for_two_raters : bool
        True when 5 * rho was added because k = 2 and rho >= 0.7.
    rho, width, confidence : float
    k : int
    method : str
    """

    n: int
    n_exact: float
    achieved_width: float
    adjusted_for_two_raters: bool
    rho: float
    width: float
    k: int
    confidence: float
    method: str


@dataclass(frozen=True, slots=True)
class IccTestSampleSize:
    """Subjects to test H0: ICC = rho0 against rho1 (Walter, Eliasziw & Donner 1998).

    Attributes
    ----------
    n : int
        Subjects, rounded up from the approximation.
    n_exact : float
        Walter et al.'s approximation before rounding.
    achieved_power : float
        Exact power at ``n`` from the F distribution of the one-way ANOVA ratio.
    rho0, rho1, alpha, power : float
    k, sides : int
    method : str
    """

    n: int
    n_exact: float
    achieved_power: float
    rho0: float
    rho1: float
    k: int
    alpha: float
    power: float
    sides: int
    method: str


def _z(p: float) -> float:
    # The standard library's normal quantile (Wichura's AS 241, accurate to about 1e-16) keeps
    # Bonett's closed forms free of scipy, so `protolint check` can use them.
    return NormalDist().inv_cdf(p)


def _bonett_width(rho: float, k: int, n: float, z: float) -> float:
    return 2.0 * z * (1.0 - rho) * (1.0 + (k - 1) * rho) * math.sqrt(2.0 / (k * (k - 1) * (n - 1.0)))


def icc_ci_width_bonett(rho: float, k: int, n: int, confidence: float = 0.95) -> IccWidthResult:
    """Expected width of the confidence interval of an ICC with n subjects and k raters.

    Parameters
    ----------
    rho : float
        Planning value of the ICC, in [0, 1).
    k : int
        Raters (ratings per subject), >= 2.
    n : int
        Subjects, >= 2.
    confidence : float, default 0.95

    Returns
    -------
    IccWidthResult

    Notes
    -----
    ``w = 2 z (1 - rho)(1 + (k - 1) rho) sqrt(2 / (k (k - 1)(n - 1)))``, from Bonett's (2002)
    large-sample variance of the ICC; the same approximation serves the one-way and two-way
    forms. Bonett's example: rho = .85, k = 4, n = 20 gives about 0.195.

    References
    ----------
    Bonett, D. G. (2002). Sample size requirements for estimating intraclass correlations
    with desired precision. Statistics in Medicine, 21, 1331-1335.
    """
    r = _checks.in_range("rho", rho, 0.0, 1.0, high_open=True)
    kk = _checks.integer("k", k, 2)
    nn = _checks.integer("n", n, 2)
    level = _checks.confidence(confidence)
    z = _z(1.0 - (1.0 - level) / 2.0)
    return IccWidthResult(
        width=_bonett_width(r, kk, nn, z),
        rho=r,
        k=kk,
        n=nn,
        confidence=level,
        method="Bonett (2002) large-sample ICC interval width",
    )


def subjects_for_icc_width_bonett(rho: float, k: int, width: float, confidence: float = 0.95) -> IccWidthSampleSize:
    """Subjects needed for an ICC confidence interval of a given full width.

    Parameters
    ----------
    rho : float
        Planning value of the ICC, in [0, 1).
    k : int
        Raters, >= 2.
    width : float
        Desired full width of the interval, in (0, 2).
    confidence : float, default 0.95

    Returns
    -------
    IccWidthSampleSize

    Notes
    -----
    ``n = 1 + 8 z^2 (1 - rho)^2 (1 + (k - 1) rho)^2 / (k (k - 1) w^2)`` (Bonett 2002, eq. 3),
    plus 5 rho when k = 2 and rho >= 0.7, as Bonett recommends for that case (the rule as
    implemented in the R package presize). Bonett's example: rho = .85, k = 4, w = .2 ->
    19.2 -> 20 subjects.

    References
    ----------
    Bonett, D. G. (2002). Statistics in Medicine, 21, 1331-1335.
    """
    r = _checks.in_range("rho", rho, 0.0, 1.0, high_open=True)
    kk = _checks.integer("k", k, 2)
    w = _checks.in_range("width", width, 0.0, 2.0, low_open=True, high_open=True)
    level = _checks.confidence(confidence)
    z = _z(1.0 - (1.0 - level) / 2.0)
    n_exact = 1.0 + 8.0 * z**2 * (1.0 - r) ** 2 * (1.0 + (kk - 1) * r) ** 2 / (kk * (kk - 1) * w**2)
    adjusted = kk == 2 and r >= 0.7
    if adjusted:
        n_exact += 5.0 * r
    n = max(2, math.ceil(round(n_exact, 9)))
    return IccWidthSampleSize(
        n=n,
        n_exact=n_exact,
        achieved_width=_bonett_width(r, kk, n, z),
        adjusted_for_two_raters=adjusted,
        rho=r,
        width=w,
        k=kk,
        confidence=level,
        method="Bonett (2002) sample size for ICC interval width",
    )


def _anova_power(n: int, k: int, rho0: float, rho1: float, alpha: float, sides: int) -> float:
    """Exact power of the one-way ANOVA F test of H0: ICC = rho0 when the ICC is rho1.

    MSB/MSW divided by c(rho) = 1 + k rho / (1 - rho) follows F(n - 1, n (k - 1)).
    """
    from scipy import special

    df1, df2 = n - 1, n * (k - 1)
    c0 = 1.0 + k * rho0 / (1.0 - rho0)
    c1 = 1.0 + k * rho1 / (1.0 - rho1)
    upper = float(special.fdtri(df1, df2, 1.0 - alpha / sides))
    power = float(special.fdtrc(df1, df2, c0 / c1 * upper))
    if sides == 2:
        lower = float(special.fdtri(df1, df2, alpha / 2.0))
        power += float(special.fdtr(df1, df2, c0 / c1 * lower))
    return power


def subjects_for_icc_test_walter(
    rho0: float, rho1: float, k: int, alpha: float = 0.05, power: float = 0.8, sides: int = 1
) -> IccTestSampleSize:
    """Subjects needed to test H0: ICC = rho0 against the alternative ICC = rho1.

    Parameters
    ----------
    rho0 : float
        Null (minimally acceptable) ICC, in [0, 1).
    rho1 : float
        Expected ICC, in (rho0, 1).
    k : int
        Raters (ratings per subject), >= 2.
    alpha : float, default 0.05
    power : float, default 0.8
    sides : {1, 2}, default 1

    Returns
    -------
    IccTestSampleSize

    Notes
    -----
    ``n = 1 + 2 k (z_{1-alpha/sides} + z_power)^2 / ((k - 1) (ln C0)^2)`` with
    ``C0 = (1 + k rho0 / (1 - rho0)) / (1 + k rho1 / (1 - rho1))`` (Walter, Eliasziw & Donner
    1998), rounded up; the power reported is the exact F-test power at that n. Example:
    rho0 = .5, rho1 = .75, k = 3, one-sided .05, power .80 -> 23.09 -> 24.

    References
    ----------
    Walter, S. D., Eliasziw, M. & Donner, A. (1998). Sample size and optimal designs for
    reliability studies. Statistics in Medicine, 17, 101-110.
    """
    r0 = _checks.in_range("rho0", rho0, 0.0, 1.0, high_open=True)
    r1 = _checks.in_range("rho1", rho1, 0.0, 1.0, high_open=True)
    if r1 <= r0:
        raise ValueError(f"rho1 must be greater than rho0 ({r0:g}), got {rho1!r}")
    kk = _checks.integer("k", k, 2)
    a = _checks.probability_open("alpha", alpha)
    target = _checks.probability_open("power", power)
    s = _checks.sides(sides)
    c0 = (1.0 + kk * r0 / (1.0 - r0)) / (1.0 + kk * r1 / (1.0 - r1))
    n_exact = 1.0 + 2.0 * kk * (_z(1.0 - a / s) + _z(target)) ** 2 / ((kk - 1) * math.log(c0) ** 2)
    n = max(2, math.ceil(round(n_exact, 9)))
    return IccTestSampleSize(
        n=n,
        n_exact=n_exact,
        achieved_power=_anova_power(n, kk, r0, r1, a, s),
        rho0=r0,
        rho1=r1,
        k=kk,
        alpha=a,
        power=target,
        sides=s,
        method="Walter, Eliasziw & Donner (1998) sample size for testing an ICC",
    )
