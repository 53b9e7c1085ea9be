"""Power and sample size: Cohen (1988) tables, attenuated sample sizes, statsmodels, pingouin."""

from __future__ import annotations

import math

import pingouin as pg
import pytest
from statsmodels.stats.power import TTestIndPower

from protolint.stats import (
    convention_name,
    SolverError,
    attenuated_effect_size,
    power_correlation,
    power_two_group,
    reliability_of_mean,
    sample_size_correlation,
    sample_size_two_group,
)

# Cohen (1988) Table 2.4.1, two-sided alpha .05, n per group: (d, power) -> printed n.
# Cohen's tables used approximations and are within 1 of the exact noncentral-t answer.
COHEN_1988 = {(0.2, 0.8): 393, (0.5, 0.8): 64, (0.8, 0.8): 26, (0.2, 0.9): 526, (0.5, 0.9): 85, (0.8, 0.9): 34}
# Exact noncentral t, n per group before rounding: statsmodels TTestIndPower, pingouin
# power_ttest and R pwr.t.test agree, e.g. TTestIndPower().solve_power(0.5, alpha=0.05, power=0.8)
# = 63.76561.
EXACT = {(0.2, 0.8): 393.4057, (0.5, 0.8): 63.76561, (0.8, 0.8): 25.52458, (0.2, 0.9): 526.3332, (0.5, 0.9): 85.0313, (0.8, 0.9): 33.8255}


@pytest.mark.parametrize("d,power", list(COHEN_1988))
def test_cohen_1988_table(d: float, power: float) -> None:
    r = sample_size_two_group(d, power=power)
    n = r.n_per_group[0]
    assert abs(n - COHEN_1988[(d, power)]) <= 1
    assert n == math.ceil(EXACT[(d, power)])
    assert r.n_exact == pytest.approx(EXACT[(d, power)], abs=1e-4)
    assert r.n_per_group == (n, n) and r.n_total == 2 * n
    assert isinstance(n, int)
    assert r.achieved_power >= power
    assert power_two_group(n - 1, d).power < power


def test_power_at_64_per_group() -> None:
    # Exact noncentral t 0.8014596 (statsmodels / pingouin / pwr agree).
    assert power_two_group(64, 0.5).power == pytest.approx(0.8014596, abs=1e-6)


# d = 0.5, two-sided .05, power .80, N total (exact t): classical test theory gives d·√ρ, the
# true-score correlation convention d·ρ. Each is statsmodels TTestIndPower().solve_power(d_obs,
# alpha=0.05, power=0.8) per group, rounded up and doubled (pingouin power_ttest agrees).
ATTENUATED_TOTALS = [
    ("ctt", 1.0, 128, 0.5),
    ("ctt", 0.8, 160, 0.447214),
    ("ctt", 0.6, 212, 0.387298),
    ("ctt", 0.4, 316, 0.316228),
    ("true-score", 1.0, 128, 0.5),
    ("true-score", 0.8, 200, 0.4),
    ("true-score", 0.6, 352, 0.3),
    ("true-score", 0.4, 788, 0.2),
    ("variance-ratio", 0.8, 160, 0.447214),
    ("observed-true-correlation", 0.8, 200, 0.4),
]


@pytest.mark.parametrize("convention,rho,n_total,d_obs", ATTENUATED_TOTALS)
def test_attenuated_sample_size_both_conventions(convention: str, rho: float, n_total: int, d_obs: float) -> None:
    r = sample_size_two_group(0.5, reliability=rho, convention=convention)
    assert r.n_total == n_total
    assert r.effect_size_observed == pytest.approx(d_obs, abs=1e-6)
    assert r.n_total_perfect_reliability == 128
    assert r.inflation == pytest.approx(n_total / 128)
    assert r.convention == convention_name(convention)
    # The old names are aliases of the names that say what each convention assumes.
    assert convention_name(convention) == {"ctt": "variance-ratio", "true-score": "observed-true-correlation"}.get(convention, convention)


def test_default_convention_is_classical_test_theory() -> None:
    r = sample_size_two_group(0.5, reliability=0.8)
    assert (r.convention, r.n_per_group, r.inflation) == ("variance-ratio", (80, 80), 1.25)


@pytest.mark.parametrize("ratio,sides", [(2.0, 2), (0.5, 2), (1.5, 1), (1.0, 1), (3.0, 1)])
def test_allocation_and_sides_against_statsmodels(ratio: float, sides: int) -> None:
    r = sample_size_two_group(0.4, ratio=ratio, sides=sides, reliability=0.7, power=0.85)
    d_obs = 0.4 * math.sqrt(0.7)
    alternative = "two-sided" if sides == 2 else "larger"
    solver = TTestIndPower()
    exact = solver.solve_power(effect_size=d_obs, alpha=0.05, power=0.85, ratio=ratio, alternative=alternative)
    assert r.n_exact == pytest.approx(exact, abs=1e-4)
    n1, n2 = r.n_per_group
    assert n2 == math.ceil(ratio * n1 - 1e-9)
    theirs = solver.power(effect_size=d_obs, nobs1=n1, alpha=0.05, ratio=n2 / n1, alternative=alternative)
    assert r.achieved_power == pytest.approx(theirs, abs=1e-8)
    assert r.achieved_power >= 0.85
    smaller = power_two_group((n1 - 1, math.ceil(ratio * (n1 - 1) - 1e-9)), 0.4, sides=sides, reliability=0.7)
    assert smaller.power < 0.85


def test_dropout_inflates_enrolment() -> None:
    r = sample_size_two_group(0.5, reliability=0.8, dropout=0.15)
    assert r.n_per_group == (80, 80)
    assert r.n_per_group_enrolled == (95, 95)  # ceil(80 / 0.85) = ceil(94.1)
    assert r.n_total_enrolled == 190
    exact = sample_size_two_group(0.5, dropout=0.2)
    assert exact.n_per_group_enrolled == (80, 80)  # 64 / 0.8 is exactly 80, not 81


def test_power_function_against_statsmodels() -> None:
    ours = power_two_group((30, 45), 0.6, alpha=0.01, sides=2, reliability=0.75, convention="true-score")
    theirs = TTestIndPower().power(effect_size=0.6 * 0.75, nobs1=30, alpha=0.01, ratio=1.5)
    assert ours.power == pytest.approx(theirs, abs=1e-9)
    assert ours.df == 73 and ours.effect_size_observed == pytest.approx(0.45)


def test_reliability_of_mean_is_spearman_brown() -> None:
    # Spearman-Brown with 2 x 2 = 4 ratings of reliability .5: 4(.5)/(1 + 3(.5)) = .8 (formula).
    assert reliability_of_mean(0.5, raters=2, occasions=2) == pytest.approx(0.8)
    assert reliability_of_mean(0.6, raters=2) == pytest.approx(0.75)
    assert attenuated_effect_size(0.5, 0.81) == pytest.approx(0.45)
    assert attenuated_effect_size(0.5, 0.81, "true-score") == pytest.approx(0.405)


# Correlation design (Cohen 1992 Table 2, recalled, not seen: 783 / 85 / 28; Fisher z formula
# n = ((z.975 + z.80) / atanh r)^2 + 3 gives 782.65 / 84.93 / 29.01 -> 783 / 85 / 30).
@pytest.mark.parametrize("r,cohen,fisher", [(0.1, 783, 783), (0.3, 85, 85), (0.5, 28, 30)])
def test_correlation_sample_size(r: float, cohen: int, fisher: int) -> None:
    result = sample_size_correlation(r)
    assert result.n == fisher
    assert abs(result.n - cohen) <= 2
    # pingouin.power_corr (same as R pwr.r.test) uses a slightly different approximation;
    # its power at our n agrees to within 0.02.
    assert pg.power_corr(r=r, n=result.n) == pytest.approx(result.achieved_power, abs=0.02)


def test_correlation_attenuated_by_both_reliabilities() -> None:
    both = sample_size_correlation(0.3, reliability_x=0.8, reliability_y=0.8)
    # r * sqrt(.8 * .8) = .24: the same n as an error-free .24 correlation (formula identity).
    assert both.r_observed == pytest.approx(0.24)
    assert both.n == sample_size_correlation(0.24).n
    assert both.n_perfect_reliability == 85
    assert both.inflation == pytest.approx(both.n / 85)
    # pingouin's power for the attenuated correlation at that n.
    assert pg.power_corr(r=0.24, n=both.n) == pytest.approx(both.achieved_power, abs=0.02)
    assert power_correlation(both.n, 0.3, reliability_x=0.8, reliability_y=0.8).power == pytest.approx(both.achieved_power)
    assert sample_size_correlation(0.3, dropout=0.2).n_enrolled == math.ceil(85 / 0.8)


def test_solver_failure_raises_instead_of_nan() -> None:
    with pytest.raises(SolverError, match="too small"):
        sample_size_two_group(1e-5)
    with pytest.raises(SolverError):
        sample_size_correlation(1e-5)


@pytest.mark.parametrize(
    "kwargs,message",
    [
        ({"effect_size": 0.0}, "effect_size must be non-zero"),
        ({"effect_size": 0.5, "reliability": 0.0}, r"reliability must be in \(0, 1\], got 0.0"),
        ({"effect_size": 0.5, "alpha": 1.2}, r"alpha must be in \(0, 1\), got 1.2"),
        ({"effect_size": 0.5, "sides": 3}, "sides must be 1 or 2, got 3"),
        ({"effect_size": 0.5, "dropout": 1.0}, r"dropout must be in \[0, 1\)"),
        ({"effect_size": 0.5, "ratio": -1.0}, "ratio must be greater than 0"),
        ({"effect_size": 0.5, "convention": "classical"}, "convention must be one of 'variance-ratio', 'observed-true-correlation'"),
        ({"effect_size": 0.5, "power": 0.01}, "power must exceed alpha/sides"),
    ],
)
def test_argument_errors(kwargs: dict[str, object], message: str) -> None:
    with pytest.raises(ValueError, match=message):
        sample_size_two_group(**kwargs)  # type: ignore[arg-type]


def test_power_argument_errors() -> None:
    with pytest.raises(ValueError, match="n_per_group must be an integer >= 2"):
        power_two_group(1, 0.5)
    with pytest.raises(TypeError, match="n_per_group must be an integer"):
        power_two_group(10.5, 0.5)  # type: ignore[arg-type]
    with pytest.raises(ValueError, match="r must be in"):
        sample_size_correlation(1.0)


@pytest.mark.parametrize("convention", ["variance-ratio", "observed-true-correlation"])
def test_reliability_for_power_inverts_the_sample_size(convention: str) -> None:
    from protolint.stats import power_two_group, reliability_for_power

    # 80 per group reach 80 % power at d = 0.5 and reliability 0.8 under the variance ratio
    # (d_obs = 0.447; Cohen 1988 Table 2.4.1 gives 64 per group at d = 0.5 and perfect reliability).
    rho = reliability_for_power(80, 0.5, convention=convention)
    assert rho is not None
    assert power_two_group(80, 0.5, reliability=rho, convention=convention).power == pytest.approx(0.8, abs=1e-9)
    if convention == "variance-ratio":
        assert 0.78 < rho <= 0.8
    assert reliability_for_power(20, 0.5, convention=convention) is None  # 20 per group fall short even at rho = 1
