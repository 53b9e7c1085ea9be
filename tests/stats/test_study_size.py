"""Precision of reliability studies: Bonett (2002) and Walter, Eliasziw & Donner (1998)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats as sps

from protolint.stats import icc, icc_ci_width_bonett, subjects_for_icc_test_walter, subjects_for_icc_width_bonett


def test_bonett_2002_worked_example() -> None:
    # Bonett (2002): rho .85, k 4, width .20, 95 % -> "a sample size of 19.2" (as quoted in the
    # R presize documentation) -> 20 subjects.
    r = subjects_for_icc_width_bonett(0.85, 4, 0.2)
    assert round(r.n_exact, 1) == 19.2
    assert r.n_exact == pytest.approx(19.1545, abs=1e-4)
    assert r.n == 20 and isinstance(r.n, int)
    assert not r.adjusted_for_two_raters
    # Width at n = 20: 0.1954993, "close to 0.2" (presize documentation of Bonett's example).
    assert r.achieved_width == pytest.approx(0.1954993, abs=1e-6)
    assert icc_ci_width_bonett(0.85, 4, 20).width == pytest.approx(0.1954993, abs=1e-6)


def test_bonett_two_rater_adjustment() -> None:
    # Bonett (2002) suggests adding 5 rho for k = 2 and rho >= .7 (rule as in R presize).
    plain = 1 + 8 * 1.959964**2 * 0.2**2 * 1.8**2 / (2 * 0.2**2)
    r = subjects_for_icc_width_bonett(0.8, 2, 0.2)
    assert r.adjusted_for_two_raters
    assert r.n_exact == pytest.approx(plain + 4.0, abs=1e-4)
    assert not subjects_for_icc_width_bonett(0.6, 2, 0.2).adjusted_for_two_raters


def test_bonett_width_is_close_to_simulated_width() -> None:
    # Independent check by simulation (one-way model, 400 seeded studies): the average width
    # of the exact F interval at Bonett's n should be near the target.
    rng = np.random.default_rng(5)
    rho, k, n = 0.7, 3, subjects_for_icc_width_bonett(0.7, 3, 0.3).n
    widths = []
    for _ in range(400):
        x = rng.normal(size=(n, 1)) * np.sqrt(rho) + rng.normal(size=(n, k)) * np.sqrt(1 - rho)
        ci = icc(x)["ICC(1,1)"].ci
        widths.append(ci.high - ci.low)
    assert float(np.mean(widths)) == pytest.approx(0.3, abs=0.03)


@pytest.mark.parametrize("k,n_exact,n,power", [(3, 23.0914, 24, 0.8192), (2, 35.4474, 36, 0.8026)])
def test_walter_1998_formula(k: int, n_exact: float, n: int, power: float) -> None:
    # Walter, Eliasziw & Donner (1998) formula, rho0 .5 vs rho1 .75, one-sided .05, power .80
    # (the R package ICC.Sample.Size result 24 for k = 3 is quoted in public material).
    r = subjects_for_icc_test_walter(0.5, 0.75, k)
    assert r.n_exact == pytest.approx(n_exact, abs=1e-4)
    assert r.n == n
    assert r.achieved_power == pytest.approx(power, abs=1e-4)


def test_walter_exact_power_against_scipy_f() -> None:
    # Exact one-way ANOVA power through scipy.stats.f, independently of scipy.special:
    # MSB/MSW / (1 + k rho / (1 - rho)) ~ F(n - 1, n(k - 1)).
    r = subjects_for_icc_test_walter(0.4, 0.7, 4, alpha=0.01, power=0.9, sides=2)
    n, k = r.n, 4
    c0, c1 = 1 + k * 0.4 / 0.6, 1 + k * 0.7 / 0.3
    df1, df2 = n - 1, n * (k - 1)
    expected = sps.f.sf(c0 / c1 * sps.f.ppf(0.995, df1, df2), df1, df2) + sps.f.cdf(c0 / c1 * sps.f.ppf(0.005, df1, df2), df1, df2)
    assert r.achieved_power == pytest.approx(expected, abs=1e-10)
    assert r.achieved_power >= 0.85


@pytest.mark.parametrize(
    "call,message",
    [
        (lambda: subjects_for_icc_width_bonett(1.0, 3, 0.2), r"rho must be in \[0, 1\)"),
        (lambda: subjects_for_icc_width_bonett(0.8, 1, 0.2), "k must be an integer >= 2"),
        (lambda: subjects_for_icc_width_bonett(0.8, 3, 0.0), "width must be in"),
        (lambda: subjects_for_icc_test_walter(0.8, 0.6, 3), "rho1 must be greater than rho0"),
        (lambda: icc_ci_width_bonett(0.8, 3, 1), "n must be an integer >= 2"),
    ],
)
def test_errors(call: object, message: str) -> None:
    with pytest.raises(ValueError, match=message):
        call()  # type: ignore[operator]
