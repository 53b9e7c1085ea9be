"""Reliability-adjusted power and sample size.

Two designs: a two-group comparison of means (exact power from the noncentral t
distribution) and a correlation between two measures that each carry their own reliability
(Fisher z). Measurement error attenuates the effect; two conventions are offered, each named
by what it assumes the reliability coefficient rho to be:

``"variance-ratio"`` (default; old name ``"ctt"``)
    Classical test theory: rho is the ratio of true-score to observed-score variance, the
    observed SD grows by 1/sqrt(rho), so the observed standardised difference is
    ``d * sqrt(rho)`` and the required N grows as 1/rho. A plan's sample-size rules use this.
``"observed-true-correlation"`` (old name ``"true-score"``)
    rho is read as the correlation of observed with true score, giving ``d * rho`` and N
    growing as 1/rho^2 -- the same as a correlation between two measures that each have
    reliability rho.

The old names stay accepted. ``"true-score"`` was renamed because a plan's ``effect_basis:
true-score`` means something else: that the effect is stated on the error-free scale.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

from protolint.stats import _checks
from protolint.stats._results import SolverError

CONVENTIONS: tuple[str, ...] = ("variance-ratio", "observed-true-correlation")
# Earlier names, still accepted.
CONVENTION_ALIASES: dict[str, str] = {"ctt": "variance-ratio", "true-score": "observed-true-correlation"}


def convention_name(convention: str) -> str:
    """The current name of an attenuation convention (old names map to new ones)."""
    name = CONVENTION_ALIASES.get(convention, convention)
    _checks.choice("convention", name, CONVENTIONS + tuple(CONVENTION_ALIASES))
    return name

# A study larger than this per group is treated as "no feasible answer" rather than searched for.
_MAX_N = 10_000_000


def reliability_of_mean(single: float, raters: int = 1, occasions: int = 1) -> float:
    """Reliability of the mean of ``raters * occasions`` ratings (Spearman-Brown).

    Parameters
    ----------
    single : float
        Reliability of one rating by one rater on one occasion, in [0, 1].
    raters, occasions : int, default 1
        Raters per assessment and occasions averaged.

    Returns
    -------
    float

    Notes
    -----
    Treats all ``raters * occasions`` ratings as parallel, which is what a single-rating
    coefficient allows; separating rater and occasion variance needs a generalizability
    study.

    References
    ----------
    Spearman (1910); Brown (1910).
    """
    rho = _checks.in_range("single", single, 0.0, 1.0)
    m = _checks.integer("raters", raters, 1) * _checks.integer("occasions", occasions, 1)
    return m * rho / (1.0 + (m - 1) * rho)


def attenuated_effect_size(effect_size: float, reliability: float, convention: str = "variance-ratio") -> float:
    """Observed standardised effect under imperfect reliability.

    Parameters
    ----------
    effect_size : float
        True-score standardised difference d.
    reliability : float
        Reliability of the outcome, in (0, 1].
    convention : {"variance-ratio", "observed-true-correlation"}
        ``d * sqrt(rho)`` or ``d * rho`` (see the module docstring; old names accepted).

    Returns
    -------
    float

    References
    ----------
    Lord, F. M. & Novick, M. R. (1968). Statistical Theories of Mental Test Scores.
    Addison-Wesley (observed variance = true variance / reliability).
    """
    d = _checks.real("effect_size", effect_size)
    rho = _checks.in_range("reliability", reliability, 0.0, 1.0, low_open=True)
    return d * math.sqrt(rho) if convention_name(convention) == "variance-ratio" else d * rho


def true_effect_size(observed: float, source_reliability: float, convention: str = "variance-ratio") -> float:
    """The true-score effect behind an effect observed with reliability ``source_reliability``.

    The inverse of :func:`attenuated_effect_size`: ``d_obs / sqrt(rho_src)`` under the variance
    ratio, ``d_obs / rho_src`` under the observed-true correlation. This is what a plan's
    ``effect_basis: observed`` with ``source_reliability`` means (under the variance ratio).
    """
    d = _checks.real("observed", observed)
    rho = _checks.in_range("source_reliability", source_reliability, 0.0, 1.0, low_open=True)
    return d / math.sqrt(rho) if convention_name(convention) == "variance-ratio" else d / rho


@dataclass(frozen=True, slots=True)
class PowerResult:
    """Power of a two-group comparison of means.

    Attributes
    ----------
    power : float
    n_per_group : tuple of int
    effect_size_observed : float
        The attenuated standardised difference that enters the test.
    df : int
        Degrees of freedom, n1 + n2 - 2.
    noncentrality : float
        ``d_obs * sqrt(n1 n2 / (n1 + n2))``.
    method : str
    """

    power: float
    n_per_group: tuple[int, int]
    effect_size_observed: float
    df: int
    noncentrality: float
    method: str


def _t_power(n1: float, n2: float, d: float, alpha: float, sides: int) -> float:
    from scipy import special

    df = n1 + n2 - 2.0
    nc = abs(d) * math.sqrt(n1 * n2 / (n1 + n2))
    t_crit = float(special.stdtrit(df, 1.0 - alpha / sides))
    power = 1.0 - float(special.nctdtr(df, nc, t_crit))
    if sides == 2:
        power += float(special.nctdtr(df, nc, -t_crit))
    return min(max(power, 0.0), 1.0)


def _n2(n1: int, ratio: float) -> int:
    # Rounding to 9 places first stops float error (1.1 * 10 = 11.000000000000002) adding a subject.
    return max(2, math.ceil(round(ratio * n1, 9)))


def power_two_group(
    n_per_group: int | tuple[int, int],
    effect_size: float,
    alpha: float = 0.05,
    sides: int = 2,
    reliability: float = 1.0,
    convention: str = "variance-ratio",
) -> PowerResult:
    """Exact power of the two-sample t test under imperfect reliability.

    Parameters
    ----------
    n_per_group : int or (int, int)
        Analysable participants per group (equal groups if one int), each >= 2.
    effect_size : float
        True-score standardised difference d (non-zero).
    alpha : float, default 0.05
    sides : {1, 2}, default 2
    reliability : float, default 1.0
        Reliability of the outcome, in (0, 1].
    convention : {"variance-ratio", "observed-true-correlation"}, default "variance-ratio"

    Returns
    -------
    PowerResult

    Notes
    -----
    Power from the noncentral t distribution with df = n1 + n2 - 2 and noncentrality
    ``d_obs sqrt(n1 n2 / (n1 + n2))``; the two-sided power includes the opposite tail.

    References
    ----------
    Cohen, J. (1988). Statistical Power Analysis for the Behavioral Sciences, 2nd ed.
    Erlbaum, ch. 2.
    """
    if isinstance(n_per_group, tuple):
        if len(n_per_group) != 2:
            raise ValueError(f"n_per_group must be an int or a pair of ints, got {n_per_group!r}")
        n1 = _checks.integer("n_per_group[0]", n_per_group[0], 2)
        n2 = _checks.integer("n_per_group[1]", n_per_group[1], 2)
    else:
        n1 = n2 = _checks.integer("n_per_group", n_per_group, 2)
    a = _checks.probability_open("alpha", alpha)
    s = _checks.sides(sides)
    d_obs = attenuated_effect_size(effect_size, reliability, convention)
    if d_obs == 0.0:
        raise ValueError(f"effect_size must be non-zero, got {effect_size!r}")
    return PowerResult(
        power=_t_power(n1, n2, d_obs, a, s),
        n_per_group=(n1, n2),
        effect_size_observed=d_obs,
        df=n1 + n2 - 2,
        noncentrality=abs(d_obs) * math.sqrt(n1 * n2 / (n1 + n2)),
        method="two-sample t test, exact noncentral t power",
    )


@dataclass(frozen=True, slots=True)
class SampleSizeResult:
    """Reliability-adjusted sample size for a two-group comparison of means.

    Attributes
    ----------
    effect_size, effect_size_observed : float
        True-score d and the attenuated d that the test sees.
    alpha, power : float
        Significance level and target power.
    sides : int
    ratio : float
        Allocation ratio n2 / n1.
    dropout : float
        Expected proportion lost; enrolled numbers are inflated by 1 / (1 - dropout).
    reliability : float
    convention : str
    n_per_group : tuple of int
        Analysable participants per group (rounded up).
    n_total : int
    achieved_power : float
        Power of ``n_per_group`` (>= ``power``).
    n_exact : float
        Continuous solution for group 1, before rounding.
    n_per_group_perfect_reliability : tuple of int
    n_total_perfect_reliability : int
        The same design at reliability 1.
    inflation : float
        ``n_total / n_total_perfect_reliability``.
    n_per_group_enrolled : tuple of int
    n_total_enrolled : int
        Participants to enrol so that ``n_per_group`` remain after dropout.
    method : str
    """

    effect_size: float
    effect_size_observed: float
    alpha: float
    power: float
    sides: int
    ratio: float
    dropout: float
    reliability: float
    convention: str
    n_per_group: tuple[int, int]
    n_total: int
    achieved_power: float
    n_exact: float
    n_per_group_perfect_reliability: tuple[int, int]
    n_total_perfect_reliability: int
    inflation: float
    n_per_group_enrolled: tuple[int, int]
    n_total_enrolled: int
    method: str


def _smallest_n(power_of: Callable[[float], float], target: float, start: float, low: int) -> tuple[int, float]:
    """Smallest whole n >= low with power_of(n) >= target, and the continuous solution.

    ``start`` is a normal-approximation guess; the exact power is monotone in n, so a short
    walk from it finds the whole number and a bisection on the last unit interval finds the
    continuous root (no general-purpose optimiser is imported).
    """
    if start > _MAX_N:
        raise SolverError(f"the target power needs more than {_MAX_N:,} per group; the effect is too small to detect")
    n = max(low, math.floor(start))
    while n > low and power_of(n - 1) >= target:
        n -= 1
    while power_of(n) < target:
        n += 1
        if n > _MAX_N:
            raise SolverError(f"the target power needs more than {_MAX_N:,} per group; the effect is too small to detect")
    if n == low:
        return n, float(low)
    lo, hi = float(n - 1), float(n)
    for _ in range(60):  # 2**-60 of one subject: well below any printed digit
        mid = (lo + hi) / 2.0
        if power_of(mid) >= target:
            hi = mid
        else:
            lo = mid
    exact = (lo + hi) / 2.0
    if not math.isfinite(exact):
        raise SolverError("the sample-size solver did not converge")
    return n, exact


def sample_size_two_group(
    effect_size: float,
    alpha: float = 0.05,
    power: float = 0.8,
    sides: int = 2,
    ratio: float = 1.0,
    dropout: float = 0.0,
    reliability: float = 1.0,
    convention: str = "variance-ratio",
) -> SampleSizeResult:
    """Reliability-adjusted sample size for comparing two group means.

    Parameters
    ----------
    effect_size : float
        True-score standardised difference d (difference / SD), non-zero.
    alpha : float, default 0.05
    power : float, default 0.8
        Target power.
    sides : {1, 2}, default 2
    ratio : float, default 1.0
        Allocation ratio n2 / n1 (> 0); group 2 is rounded up.
    dropout : float, default 0.0
        Expected proportion lost to follow-up, in [0, 1).
    reliability : float, default 1.0
        Reliability of the outcome as analysed, in (0, 1]; for a mean of several ratings
        use :func:`reliability_of_mean` first.
    convention : {"variance-ratio", "observed-true-correlation"}, default "variance-ratio"
        Attenuation convention (see the module docstring).

    Returns
    -------
    SampleSizeResult
        Whole numbers rounded up, with the power they achieve.

    Raises
    ------
    SolverError
        If no feasible sample size is found.

    Notes
    -----
    Smallest n1 such that the exact noncentral-t power with n2 = ceil(ratio n1) reaches the
    target; ``n_exact`` is the continuous n1 with n2 = ratio n1. d = 0.5, two-sided alpha .05, power .80 gives 64 per group at reliability 1
    (Cohen 1988, Table 2.4.1); under "variance-ratio" 80 per group at rho = .8.

    References
    ----------
    Cohen, J. (1988). Statistical Power Analysis for the Behavioral Sciences, 2nd ed.
    Erlbaum, Table 2.4.1.
    Lord, F. M. & Novick, M. R. (1968). Statistical Theories of Mental Test Scores.
    """
    a = _checks.probability_open("alpha", alpha)
    target = _checks.probability_open("power", power)
    s = _checks.sides(sides)
    r = _checks.positive("ratio", ratio)
    loss = _checks.in_range("dropout", dropout, 0.0, 1.0, high_open=True)
    rho = _checks.in_range("reliability", reliability, 0.0, 1.0, low_open=True)
    d_obs = attenuated_effect_size(effect_size, rho, convention)
    d_true = _checks.real("effect_size", effect_size)
    if d_obs == 0.0:
        raise ValueError(f"effect_size must be non-zero, got {effect_size!r}")
    if target <= a / s:
        raise ValueError(f"power must exceed alpha/sides ({a / s:g}) to be reachable, got {power!r}")

    def solve(d: float) -> tuple[int, float]:
        from scipy import special

        # Normal approximation n1 = (z_a + z_b)^2 (1 + 1/ratio) / d^2 as the starting point.
        z_sum = float(special.ndtri(1.0 - a / s)) + float(special.ndtri(target))
        # An observed effect so small that d**2 underflows (d = 0.5 at reliability 5e-324) needs
        # more participants than any trial: the same answer as a start beyond _MAX_N.
        start = z_sum**2 * (1.0 + 1.0 / r) / d**2 if d * d > 0.0 else math.inf
        whole, exact = _smallest_n(lambda v: _t_power(v, max(r * v, 2.0), d, a, s), target, start, 2)
        # The whole-number search above uses the continuous n2 = ratio * n1; with n2 rounded up the
        # power can only be higher, so step down while the rounded design still reaches the target.
        while whole > 2 and _t_power(whole - 1, _n2(whole - 1, r), d, a, s) >= target:
            whole -= 1
        return whole, exact

    n1, exact = solve(d_obs)
    n1_perfect, _ = solve(d_true)
    groups = (n1, _n2(n1, r))
    perfect = (n1_perfect, _n2(n1_perfect, r))
    # Rounding to 9 places stops float error adding a participant (e.g. 80 / 0.9).
    enrolled = tuple(math.ceil(round(g / (1.0 - loss), 9)) for g in groups)
    return SampleSizeResult(
        effect_size=d_true,
        effect_size_observed=d_obs,
        alpha=a,
        power=target,
        sides=s,
        ratio=r,
        dropout=loss,
        reliability=rho,
        convention=convention_name(convention),
        n_per_group=groups,
        n_total=sum(groups),
        achieved_power=_t_power(groups[0], groups[1], d_obs, a, s),
        n_exact=exact,
        n_per_group_perfect_reliability=perfect,
        n_total_perfect_reliability=sum(perfect),
        inflation=sum(groups) / sum(perfect),
        n_per_group_enrolled=(enrolled[0], enrolled[1]),
        n_total_enrolled=enrolled[0] + enrolled[1],
        method=f"two-sample t test, exact noncentral t; attenuation convention {convention_name(convention)!r}",
    )


@dataclass(frozen=True, slots=True)
class CorrelationPowerResult:
    """Power to detect a correlation between two imperfectly reliable measures.

    Attributes
    ----------
    power : float
    n : int
    r_observed : float
        ``r * sqrt(reliability_x * reliability_y)``.
    method : str
    """

    power: float
    n: int
    r_observed: float
    method: str


@dataclass(frozen=True, slots=True)
class CorrelationSampleSizeResult:
    """Sample size to detect a correlation between two imperfectly reliable measures.

    Attributes
    ----------
    r, r_observed : float
        True-score correlation and the attenuated ``r sqrt(rho_x rho_y)``.
    alpha, power : float
    sides : int
    reliability_x, reliability_y : float
    dropout : float
    n : int
        Analysable participants (rounded up).
    achieved_power : float
    n_exact : float
        ``((z_{1-alpha/sides} + z_power) / atanh(r_observed))^2 + 3``.
    n_perfect_reliability : int
    inflation : float
        ``n / n_perfect_reliability``.
    n_enrolled : int
        Participants to enrol so that ``n`` remain after dropout.
    method : str
    """

    r: float
    r_observed: float
    alpha: float
    power: float
    sides: int
    reliability_x: float
    reliability_y: float
    dropout: float
    n: int
    achieved_power: float
    n_exact: float
    n_perfect_reliability: int
    inflation: float
    n_enrolled: int
    method: str


def _z_power(n: float, r: float, alpha: float, sides: int) -> float:
    from scipy import special

    z_crit = float(special.ndtri(1.0 - alpha / sides))
    shift = math.atanh(abs(r)) * math.sqrt(n - 3.0)
    power = float(special.ndtr(shift - z_crit))
    if sides == 2:
        power += float(special.ndtr(-shift - z_crit))
    return power


def _check_r(r: float) -> float:
    value = _checks.in_range("r", r, -1.0, 1.0, low_open=True, high_open=True)
    if value == 0.0:
        raise ValueError("r must be non-zero, got 0")
    return value


def power_correlation(
    n: int,
    r: float,
    alpha: float = 0.05,
    sides: int = 2,
    reliability_x: float = 1.0,
    reliability_y: float = 1.0,
) -> CorrelationPowerResult:
    """Power of the Fisher-z test of a correlation between two imperfectly reliable measures.

    Parameters
    ----------
    n : int
        Participants (>= 4).
    r : float
        True-score correlation, in (-1, 1), non-zero.
    alpha : float, default 0.05
    sides : {1, 2}, default 2
    reliability_x, reliability_y : float, default 1.0
        Reliabilities of the two measures, in (0, 1].

    Returns
    -------
    CorrelationPowerResult

    Notes
    -----
    The observed correlation is ``r sqrt(rho_x rho_y)`` (Spearman 1904's attenuation);
    power ``Phi(atanh(r_obs) sqrt(n - 3) - z_{1-alpha/sides})`` plus the opposite tail when
    two-sided.

    References
    ----------
    Spearman, C. (1904). The proof and measurement of association between two things.
    American Journal of Psychology, 15, 72-101.
    Cohen, J. (1988). Statistical Power Analysis for the Behavioral Sciences, 2nd ed., ch. 3.
    """
    size = _checks.integer("n", n, 4)
    true_r = _check_r(r)
    a = _checks.probability_open("alpha", alpha)
    s = _checks.sides(sides)
    rx = _checks.in_range("reliability_x", reliability_x, 0.0, 1.0, low_open=True)
    ry = _checks.in_range("reliability_y", reliability_y, 0.0, 1.0, low_open=True)
    r_obs = true_r * math.sqrt(rx * ry)
    return CorrelationPowerResult(
        power=_z_power(size, r_obs, a, s),
        n=size,
        r_observed=r_obs,
        method="Fisher z test of a correlation, attenuated by r*sqrt(rho_x*rho_y)",
    )


def sample_size_correlation(
    r: float,
    alpha: float = 0.05,
    power: float = 0.8,
    sides: int = 2,
    reliability_x: float = 1.0,
    reliability_y: float = 1.0,
    dropout: float = 0.0,
) -> CorrelationSampleSizeResult:
    """Sample size to detect a correlation when both measures carry measurement error.

    Parameters
    ----------
    r : float
        True-score correlation, in (-1, 1), non-zero.
    alpha : float, default 0.05
    power : float, default 0.8
    sides : {1, 2}, default 2
    reliability_x, reliability_y : float, default 1.0
        Reliabilities of the two measures, in (0, 1].
    dropout : float, default 0.0
        Expected proportion lost, in [0, 1).

    Returns
    -------
    CorrelationSampleSizeResult

    Notes
    -----
    ``n = ((z_{1-alpha/sides} + z_power) / atanh(r sqrt(rho_x rho_y)))^2 + 3`` rounded up
    (then lowered while a smaller n still reaches the target with both tails counted).
    With both reliabilities equal to rho the required n grows about as 1/rho^2.

    References
    ----------
    Spearman (1904); Cohen (1988), ch. 3; Cohen, J. (1992). A power primer. Psychological
    Bulletin, 112, 155-159, Table 2.
    """
    from scipy import special

    true_r = _check_r(r)
    a = _checks.probability_open("alpha", alpha)
    target = _checks.probability_open("power", power)
    s = _checks.sides(sides)
    rx = _checks.in_range("reliability_x", reliability_x, 0.0, 1.0, low_open=True)
    ry = _checks.in_range("reliability_y", reliability_y, 0.0, 1.0, low_open=True)
    loss = _checks.in_range("dropout", dropout, 0.0, 1.0, high_open=True)
    if target <= a / s:
        raise ValueError(f"power must exceed alpha/sides ({a / s:g}) to be reachable, got {power!r}")
    r_obs = true_r * math.sqrt(rx * ry)
    z_sum = float(special.ndtri(1.0 - a / s)) + float(special.ndtri(target))

    def solve(rr: float) -> tuple[int, float]:
        z_r = math.atanh(abs(rr))
        # A correlation that underflows to 0 (or nearly) would divide by zero or overflow the square.
        exact = (z_sum / z_r) ** 2 + 3.0 if z_r > 1e-100 else math.inf
        if exact > _MAX_N:
            raise SolverError(f"the target power needs more than {_MAX_N:,} participants; the correlation is too weak")
        n = max(4, math.ceil(round(exact, 9)))
        while n > 4 and _z_power(n - 1, rr, a, s) >= target:
            n -= 1
        return n, exact

    n, exact = solve(r_obs)
    n_perfect, _ = solve(true_r)
    return CorrelationSampleSizeResult(
        r=true_r,
        r_observed=r_obs,
        alpha=a,
        power=target,
        sides=s,
        reliability_x=rx,
        reliability_y=ry,
        dropout=loss,
        n=n,
        achieved_power=_z_power(n, r_obs, a, s),
        n_exact=exact,
        n_perfect_reliability=n_perfect,
        inflation=n / n_perfect,
        n_enrolled=math.ceil(round(n / (1.0 - loss), 9)),
        method="Fisher z test of a correlation, attenuated by r*sqrt(rho_x*rho_y)",
    )


def reliability_for_power(
    n_per_group: int | tuple[int, int],
    effect_size: float,
    alpha: float = 0.05,
    power: float = 0.8,
    sides: int = 2,
    convention: str = "variance-ratio",
) -> float | None:
    """The lowest reliability at which ``n_per_group`` reaches ``power`` (two-group design).

    Returns None when even reliability 1 falls short. Solved on the observed effect with the
    exact noncentral t power, then converted back through the convention (rho = (d_obs/d)^2
    for the variance ratio, d_obs/d for the observed-true correlation).
    """
    from scipy import optimize

    target = _checks.probability_open("power", power)
    name = convention_name(convention)
    d = abs(_checks.real("effect_size", effect_size))
    if d == 0.0:
        raise ValueError("effect_size must be non-zero")
    full = power_two_group(n_per_group, d, alpha=alpha, sides=sides, reliability=1.0).power
    if full < target:
        return None

    def shortfall(rho: float) -> float:
        return power_two_group(n_per_group, d, alpha=alpha, sides=sides, reliability=rho, convention=name).power - target

    low = 1e-9
    if shortfall(low) >= 0:
        return low
    return float(optimize.brentq(shortfall, low, 1.0, xtol=1e-12))


def reliability_for_power_correlation(
    n: int, r: float, alpha: float = 0.05, power: float = 0.8, sides: int = 2, reliability_y: float = 1.0
) -> float | None:
    """The lowest reliability of the first measure at which ``n`` reaches ``power``; None if none does."""
    from scipy import optimize

    target = _checks.probability_open("power", power)
    if power_correlation(n, r, alpha=alpha, sides=sides, reliability_x=1.0, reliability_y=reliability_y).power < target:
        return None

    def shortfall(rho: float) -> float:
        return power_correlation(n, r, alpha=alpha, sides=sides, reliability_x=rho, reliability_y=reliability_y).power - target

    low = 1e-9
    if shortfall(low) >= 0:
        return low
    return float(optimize.brentq(shortfall, low, 1.0, xtol=1e-12))
