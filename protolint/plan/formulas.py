"""The closed-form formulas applied to a plan's numbers (by rules, documents and analyses).

Spearman–Brown, Bonett's interval width and the measurement-error formulas come from the
statistics core's closed-form modules, which load neither numpy nor scipy (see
``protolint/stats/__init__.py``); the adapters here only decide what a rule does at the
edges of their domains. The two-group sample size is the one formula computed here: the
core's exact noncentral-t solver needs scipy, which ``protolint check`` must not load in a
pre-commit hook, so rules use the normal approximation with Guenther's correction, checked
in ``tests/rules/test_computed.py`` against published values and against the core itself.

Every result is a planning aid; the rules' messages say so (``rules/_working.py`` holds the
message helpers).
"""

from __future__ import annotations

import importlib
import math
from dataclasses import dataclass
from statistics import NormalDist

# By module path: ``protolint.stats.spearman_brown`` is also the name of a function that the
# package exports, so attribute-style imports could return the function.
_error = importlib.import_module("protolint.stats.measurement_error")
_sb = importlib.import_module("protolint.stats.spearman_brown")
_study = importlib.import_module("protolint.stats.study_size")

_NORMAL = NormalDist()

# The definition of the smallest detectable change uses the rounded quantile 1.96
# (Weir 2005; de Vet et al. 2006), as the statistics core's mdc95 does.
Z95_ROUNDED = _error.Z95


def z_quantile(p: float) -> float:
    """Standard normal quantile (inverse CDF)."""
    return _NORMAL.inv_cdf(p)


def ceil_clean(value: float) -> int:
    """Round up, ignoring float noise (80 / 0.8 must not become 101)."""
    return math.ceil(round(value, 9))


def _unit(value: float) -> float:
    # A coefficient below 0 means no reliability at all, and 1 is its ceiling; plans can
    # state either, and the formulas are only defined in between.
    return min(max(value, 0.0), 1.0)


# ---------------------------------------------------------------- Spearman-Brown

def spearman_brown(single: float, k: float) -> float:
    """Reliability of the mean of k parallel ratings: k r / (1 + (k - 1) r)."""
    return float(_sb.spearman_brown(_unit(single), k))


def single_from_average(average: float, k: float) -> float:
    """Inverse Spearman-Brown: the single-rating value behind a mean-of-k coefficient."""
    return _sb.single_from_average(_unit(average), k)


def raters_needed(single: float, target: float) -> int:
    """Smallest whole number of ratings whose mean reaches ``target`` (rounded up)."""
    if single >= target:
        return 1
    if single <= 0.0:
        raise ValueError(f"single-rating reliability must be > 0 to be stepped up, got {single!r}")
    return _sb.raters_needed(single, target).k


# ---------------------------------------------------------------- Bonett (2002)

def bonett_width(rho: float, k: int, n: int, confidence: float = 0.95) -> float:
    """Expected full width of an ICC confidence interval with n subjects and k raters."""
    if rho >= 1.0:
        return 0.0
    return _study.icc_ci_width_bonett(_unit(rho), k, n, confidence).width


def bonett_subjects(rho: float, k: int, width: float, confidence: float = 0.95) -> int:
    """Subjects needed for a full interval width ``width`` (Bonett 2002, eq. 3)."""
    if rho >= 1.0:
        return 2
    return _study.subjects_for_icc_width_bonett(_unit(rho), k, width, confidence).n


# ---------------------------------------------------------------- measurement error

def sem(sd: float, reliability: float) -> float:
    """Standard error of measurement, SD sqrt(1 - r)."""
    return _error.sem(sd, _unit(reliability))


def smallest_detectable_change(sem_value: float) -> float:
    """Smallest change an individual must show to exceed measurement error: 1.96 sqrt(2) SEM."""
    return _error.mdc95(sem_value)


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
