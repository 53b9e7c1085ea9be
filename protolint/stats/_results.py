"""Small frozen result types shared by the statistics modules."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True, slots=True)
class ConfidenceInterval:
    """A two-sided confidence interval.

    Attributes
    ----------
    low, high : float
        The bounds.
    level : float
        The confidence level, e.g. 0.95.
    """

    low: float
    high: float
    level: float


@dataclass(frozen=True, slots=True)
class FTest:
    """An F test of H0: the coefficient is zero.

    Attributes
    ----------
    f : float
        The F statistic.
    df1, df2 : float
        Numerator and denominator degrees of freedom.
    p_value : float
        Upper-tail p-value.
    """

    f: float
    df1: float
    df2: float
    p_value: float


class SolverError(ArithmeticError):
    """A numerical solver found no answer (raised instead of returning NaN)."""
