"""The closed-form formulas applied to plan numbers, against hand-worked and published values.

Spearman–Brown, Bonett's width and the SEM come from the statistics core's closed-form
modules; the two-group sample size is computed in ``protolint/plan/formulas.py`` with
Guenther's correction (the core's exact solver needs scipy, which ``protolint check`` must not
load). That approximation is compared here with the exact core. Each published value names
its source beside it; a value not re-read at its source says so.
"""

from __future__ import annotations

import math

import pytest

from protolint.plan import formulas as w


# ---------------------------------------------------------------- normal quantile

def test_z_quantile() -> None:
    # z(0.975) = 1.959964 and z(0.80) = 0.841621 (standard normal table).
    assert w.z_quantile(0.975) == pytest.approx(1.959964, abs=1e-6)
    assert w.z_quantile(0.80) == pytest.approx(0.841621, abs=1e-6)


# ---------------------------------------------------------------- two-group sample size

@pytest.mark.parametrize("d,power,n_exact_t", [
    # Exact noncentral-t n per group (statsmodels TTestIndPower = pingouin power_ttest = R pwr.t.test),
    # Cohen 1988 Table 2.4.1 prints 393 / 64 / 26 and 526 / 85 / 34 (within 1).
    (0.2, 0.80, 394), (0.5, 0.80, 64), (0.8, 0.80, 26),
    (0.2, 0.90, 527), (0.5, 0.90, 86), (0.8, 0.90, 34),
])
def test_n_per_group_matches_exact_t_at_published_points(d: float, power: float, n_exact_t: int) -> None:
    assert w.n_per_group(d, 0.05, power).n1 == n_exact_t


def test_n_per_group_hand_worked() -> None:
    # d = 0.5, alpha .05 two-sided, power .80:
    # (1.959964 + 0.841621)^2 = 7.848879; x (1 + 1/1) / 0.25 = 62.79103;
    # Guenther's correction 1.959964^2 / 4 = 0.960365; 63.7514 -> 64 per group.
    sizes = w.n_per_group(0.5, 0.05, 0.80)
    assert sizes.n1_exact == pytest.approx(62.79103 + 0.960365, abs=1e-4)
    assert (sizes.n1, sizes.n2, sizes.total) == (64, 64, 128)


@pytest.mark.parametrize("rho,total", [(1.0, 128), (0.8, 160), (0.6, 212), (0.4, 316)])
def test_attenuated_totals_match_reference_table(rho: float, total: int) -> None:
    # Convention d*sqrt(rho), exact-t totals 128 / 160 / 212 / 316 (statsmodels TTestIndPower
    # solve_power at d = 0.5 sqrt(rho), per group rounded up, doubled).
    assert w.n_per_group(0.5 * math.sqrt(rho), 0.05, 0.80).total == total


def test_n_per_group_within_one_of_the_statistics_core() -> None:
    """The approximation is never more than one participant per group from the exact
    noncentral-t solution of the statistics core, across a grid of designs."""
    from protolint.stats import sample_size_two_group

    worst = 0
    for d in (0.2, 0.35, 0.5, 0.8, 1.2):
        for power in (0.8, 0.9):
            for sides in (1, 2):
                for ratio in (1.0, 2.0):
                    exact = sample_size_two_group(d, 0.05, power, sides=sides, ratio=ratio).n_per_group[0]
                    approx = w.n_per_group(d, 0.05, power, sides, ratio).n1
                    worst = max(worst, abs(exact - approx))
    assert worst <= 1


def test_approximate_power() -> None:
    # Normal-approximation power at n = 64 per group, d = 0.5: 0.8074304 (statsmodels
    # NormalIndPower().power(0.5, 64, 0.05));
    # by hand: 0.5 sqrt(32) - 1.959964 = 0.868463, Phi(0.868463) = 0.80743.
    assert w.approximate_power(0.5, 64, 64, 0.05) == pytest.approx(0.8074304, abs=1e-5)


def test_enrolled_after_dropout() -> None:
    # 75 analysable with 10 % dropout: 75 / 0.9 = 83.33 -> 84; 80 / 0.8 must stay 100, not 101.
    assert w.enrolled(75, 0.1) == 84
    assert w.enrolled(80, 0.2) == 100


# ---------------------------------------------------------------- Spearman-Brown

def test_spearman_brown_published() -> None:
    # Shrout & Fleiss (1979) Table 4: stepping up ICC(2,1) = 0.2897638 to 4
    # judges gives ICC(2,4) = 0.6200505; generic checks .5,2 -> .6666667 and .6,3 -> .8181818.
    assert w.spearman_brown(0.2897638, 4) == pytest.approx(0.6200505, abs=1e-6)
    assert w.spearman_brown(0.5, 2) == pytest.approx(0.6666667, abs=1e-7)
    assert w.spearman_brown(0.6, 3) == pytest.approx(0.8181818, abs=1e-7)


def test_single_from_average_published() -> None:
    # Shrout & Fleiss (1979) Table 4: ICC(2,4) .6200505 -> ICC(2,1) .2897638; ICC(3,4) .9093155 -> ICC(3,1) .7148407.
    assert w.single_from_average(0.6200505, 4) == pytest.approx(0.2897638, abs=1e-6)
    assert w.single_from_average(0.9093155, 4) == pytest.approx(0.7148407, abs=1e-6)
    # Demo-style hand working: 0.88 over 2 raters -> 0.88 / (2 - 0.88) = 0.785714.
    assert w.single_from_average(0.88, 2) == pytest.approx(0.785714, abs=1e-6)


@pytest.mark.parametrize("single,target,k", [
    (0.2897638, 0.80, 10),  # 0.8 x 0.7102362 / (0.2897638 x 0.2) = 9.8043 -> 10
    (0.2897638, 0.90, 23),  # 22.0598 -> 23
    (0.6, 0.9, 6),  # exactly 6: float noise must not make it 7
    (0.5, 0.8, 4),  # exactly 4
    (0.60, 0.80, 3),  # 0.8 x 0.4 / (0.6 x 0.2) = 2.67 -> 3 (by hand)
    (0.70, 0.80, 2),  # 0.8 x 0.3 / (0.7 x 0.2) = 1.71 -> 2 (by hand)
    (0.85, 0.80, 1),  # already there
])
def test_raters_needed(single: float, target: float, k: int) -> None:
    assert w.raters_needed(single, target) == k


# ---------------------------------------------------------------- Bonett (2002)

def test_bonett_published_example() -> None:
    # Bonett (2002, Stat Med 21:1331) worked example: rho .85, k 4, w .20 -> 19.2 -> 20
    # subjects; the width at 20 subjects is 0.1954993.
    assert w.bonett_subjects(0.85, 4, 0.20) == 20
    assert w.bonett_width(0.85, 4, 20) == pytest.approx(0.1954993, abs=1e-6)


def test_bonett_hand_worked() -> None:
    # 10 raters on 3 cases at rho .80 (by hand): 2 x 1.959964 x 0.2 x 8.2 x sqrt(2 / (90 x 2))
    # = 6.428682 x 0.105409 = 0.6776.
    assert w.bonett_width(0.80, 10, 3) == pytest.approx(0.6776, abs=1e-4)
    # One rater against the reference (k = 2) on 4 cases at .80: 1.411174 x sqrt(1/3) = 0.814742.
    assert w.bonett_width(0.80, 2, 4) == pytest.approx(0.814742, abs=1e-6)
    # Cases for width .40 at k = 2, rho .80: 1 + 8 x 3.841459 x 0.04 x 3.24 / (2 x 0.16) = 13.446,
    # plus 5 x 0.8 for k = 2 and rho >= .7 (Bonett's adjustment as in R presize) = 17.446 -> 18.
    assert w.bonett_subjects(0.80, 2, 0.40) == 18
    # Without the k = 2 adjustment the formula gives 50.79 for w = .20 (by hand: 1 + 8 x 3.841459
    # x 0.04 x 3.24 / (2 x 0.04) = 50.79);
    # with it, 54.79 -> 55.
    assert w.bonett_subjects(0.80, 2, 0.20) == 55


# ---------------------------------------------------------------- measurement error

def test_sem_and_sdc_published() -> None:
    # Shrout & Fleiss (1979) data: SD of all 24 ratings 2.7103532 with ICC(2,1) .2897638 ->
    # SEM 2.2841641; SEM = sqrt(EMS of Table 3) = 1.0096754 -> MDC95 = 1.96 sqrt(2) SEM = 2.7986775.
    assert w.sem(2.7103532, 0.2897638) == pytest.approx(2.2841641, abs=1e-6)
    assert w.smallest_detectable_change(1.0096754) == pytest.approx(2.7986775, abs=1e-6)


# ---------------------------------------------------------------- edges of the domains
# Spearman-Brown, Bonett and SEM come from the statistics core (tested against published values
# there and above); what the rule adapters add is what a plan may state at the edges.

def test_adapters_at_the_edges_of_the_domains() -> None:
    # A coefficient of 1 (a plan may state it) needs no averaging and gives an interval of width 0.
    assert w.raters_needed(1.0, 0.9) == 1
    assert w.bonett_width(1.0, 2, 10) == 0.0 and w.bonett_subjects(1.0, 2, 0.2) == 2
    # A negative coefficient means no reliability: SEM is then the whole SD, and stepping it
    # up or down stays at 0.
    assert w.sem(7.5, -0.2) == pytest.approx(7.5)
    assert w.spearman_brown(-0.2, 3) == 0.0 and w.single_from_average(-0.1, 2) == 0.0
    # No number of raters lifts a reliability of zero: the adapter refuses rather than divide by 0.
    with pytest.raises(ValueError, match="must be > 0"):
        w.raters_needed(0.0, 0.8)
