"""Small closed-form formulas the computed rules show their working with.

Why not call ``protolint.stats`` directly: importing any part of that package loads numpy
(its ``__init__`` imports every method), and its exact sample-size solver loads
``scipy.special`` and ``scipy.optimize``. ``protolint check`` runs in pre-commit hooks and
must not pay for that, so the rules use these standard-library versions. Each function is
checked in ``tests/rules/test_computed.py`` against hand-worked values, published values and
the statistics core itself on the same inputs.

Every result is a planning aid; the messages say so.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from statistics import NormalDist

PLANNING_AID = "a planning aid; confirm with the trial statistician"

_NORMAL = NormalDist()

# The definition of the smallest detectable change uses the rounded quantile 1.96
# (Weir 2005; de Vet et al. 2006), as the statistics core's mdc95 does.
Z95_ROUNDED = 1.96


def z_quantile(p: float) -> float:
    """Standard normal quantile (inverse CDF)."""
    return _NORMAL.inv_cdf(p)


def ceil_clean(value: float) -> int:
    """Round up, ignoring float noise (80 / 0.8 must not become 101)."""
    return math.ceil(round(value, 9))


# ---------------------------------------------------------------- Spearman-Brown

def spearman_brown(single: float, k: float) -> float:
    """Reliability of the mean of k parallel ratings: k r / (1 + (k - 1) r)."""
    return k * single / (1.0 + (k - 1.0) * single)


def single_from_average(average: float, k: float) -> float:
    """Inverse Spearman-Brown: the single-rating value behind a mean-of-k coefficient."""
    return average / (k - (k - 1.0) * average)


def raters_needed(single: float, target: float) -> int:
    """Smallest whole number of ratings whose mean reaches ``target``.

    k = target (1 - r) / (r (1 - target)), rounded up.
    """
    if single >= target:
        return 1
    if single <= 0.0:
        raise ValueError(f"single-rating reliability must be > 0 to be stepped up, got {single!r}")
    return max(1, ceil_clean(target * (1.0 - single) / (single * (1.0 - target))))


# ---------------------------------------------------------------- Bonett (2002)

def bonett_width(rho: float, k: int, n: int, confidence: float = 0.95) -> float:
    """Expected full width of an ICC confidence interval with n subjects and k raters.

    w = 2 z (1 - rho)(1 + (k - 1) rho) sqrt(2 / (k (k - 1)(n - 1)))  (Bonett 2002).
    """
    if k < 2 or n < 2:
        raise ValueError(f"Bonett's width needs k >= 2 raters and n >= 2 subjects, got k={k}, n={n}")
    z = z_quantile(1.0 - (1.0 - confidence) / 2.0)
    return 2.0 * z * (1.0 - rho) * (1.0 + (k - 1) * rho) * math.sqrt(2.0 / (k * (k - 1) * (n - 1.0)))


def bonett_subjects(rho: float, k: int, width: float, confidence: float = 0.95) -> int:
    """Subjects needed for a full interval width ``width`` (Bonett 2002, eq. 3).

    n = 1 + 8 z^2 (1 - rho)^2 (1 + (k - 1) rho)^2 / (k (k - 1) w^2), plus 5 rho when k = 2 and
    rho >= 0.7 as Bonett suggests for that case (the statistics core does the same).
    """
    z = z_quantile(1.0 - (1.0 - confidence) / 2.0)
    n = 1.0 + 8.0 * z**2 * (1.0 - rho) ** 2 * (1.0 + (k - 1) * rho) ** 2 / (k * (k - 1) * width**2)
    if k == 2 and rho >= 0.7:
        n += 5.0 * rho
    return max(2, ceil_clean(n))


# ---------------------------------------------------------------- measurement error

def sem(sd: float, reliability: float) -> float:
    """Standard error of measurement, SD sqrt(1 - r)."""
    return sd * math.sqrt(1.0 - reliability)


def smallest_detectable_change(sem_value: float) -> float:
    """Smallest change an individual must show to exceed measurement error: 1.96 sqrt(2) SEM."""
    return Z95_ROUNDED * math.sqrt(2.0) * sem_value


# ---------------------------------------------------------------- two-group sample size

@dataclass(frozen=True)
class GroupSizes:
    n1: int
    n2: int
    n1_exact: float

    @property
    def total(self) -> int:
        return self.n1 + self.n2


def n_per_group(effect: float, alpha: float, power: float, sides: int = 2, ratio: float = 1.0) -> GroupSizes:
    """Participants per group for a two-sample comparison of means.

    Normal approximation n1 = (z_a + z_b)^2 (1 + 1/ratio) / d^2 with Guenther's (1981)
    small-sample correction z_a^2 / 4, which brings it to within a participant of the exact
    noncentral-t answer (tested against the statistics core); n2 = ratio n1, rounded up.
    """
    if effect == 0.0:
        raise ValueError("effect size must be non-zero")
    z_a = z_quantile(1.0 - alpha / sides)
    z_b = z_quantile(power)
    exact = (z_a + z_b) ** 2 * (1.0 + 1.0 / ratio) / effect**2 + z_a**2 / 4.0
    n1 = max(2, ceil_clean(exact))
    return GroupSizes(n1, max(2, ceil_clean(ratio * n1)), exact)


def approximate_power(effect: float, n1: int, n2: int, alpha: float, sides: int = 2) -> float:
    """Normal-approximation power of a two-sample comparison (one tail; the other is negligible)."""
    z_a = z_quantile(1.0 - alpha / sides)
    return _NORMAL.cdf(abs(effect) * math.sqrt(n1 * n2 / (n1 + n2)) - z_a)


def enrolled(analysable: int, dropout: float) -> int:
    """Participants to enrol so that ``analysable`` remain after the expected dropout."""
    return ceil_clean(analysable / (1.0 - dropout))


def fmt(value: float, digits: int = 3) -> str:
    """A number for a message: at most ``digits`` decimals, no trailing zeros."""
    text = f"{value:.{digits}f}".rstrip("0").rstrip(".")
    return text if text not in ("-0", "") else "0"
