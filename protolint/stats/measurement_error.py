"""Measurement error in score units: the standard error of measurement and the smallest
change an individual must show to exceed it.

Plain floats and the standard library only, so that the rules of ``protolint check`` can use
these without loading numpy.
"""

from __future__ import annotations

import math

from protolint.stats import _checks

# The conventional rounded normal quantile in the MDC95 definition (Weir 2005; de Vet et al. 2006).
Z95 = 1.96


def sem(sd: float, reliability: float) -> float:
    """Standard error of measurement, ``SEM = SD * sqrt(1 - r)``.

    Parameters
    ----------
    sd : float
        Standard deviation of the scores (>= 0), in the population the reliability refers to.
    reliability : float
        Reliability coefficient in [0, 1]. The answer depends on which coefficient is used
        (e.g. ICC(2,1) vs ICC(3,1)); state it beside the SEM.

    Returns
    -------
    float

    References
    ----------
    Weir, J. P. (2005). Quantifying test-retest reliability using the intraclass correlation
    coefficient and the SEM. Journal of Strength and Conditioning Research, 19, 231-240.
    """
    s = _checks.real("sd", sd)
    if s < 0:
        raise ValueError(f"sd must be >= 0, got {sd!r}")
    r = _checks.in_range("reliability", reliability, 0.0, 1.0)
    return s * math.sqrt(1.0 - r)


def mdc95(sem_value: float) -> float:
    """Minimal detectable change at 95 % confidence, ``MDC95 = 1.96 * sqrt(2) * SEM``.

    The factor sqrt(2) accounts for measurement error at both of two occasions; 1.96 is the
    conventional rounded normal quantile used in the definition.

    Parameters
    ----------
    sem_value : float
        Standard error of measurement (>= 0).

    Returns
    -------
    float

    References
    ----------
    Weir, J. P. (2005). Journal of Strength and Conditioning Research, 19, 231-240.
    de Vet, H. C. W., Terwee, C. B., Ostelo, R. W. J. G. et al. (2006). Minimal changes in
    health status questionnaires: distinction between minimally detectable change and
    minimally important change. Health and Quality of Life Outcomes, 4, 54.
    """
    s = _checks.real("sem_value", sem_value)
    if s < 0:
        raise ValueError(f"sem_value must be >= 0, got {sem_value!r}")
    return Z95 * math.sqrt(2.0) * s
