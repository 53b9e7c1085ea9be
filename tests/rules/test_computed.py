"""The formulas behind the computed rules, against hand-worked and published values.

The rules take Spearman–Brown, Bonett's width and the SEM from the statistics core's
closed-form modules, and compute the two-group sample size themselves with Guenther's
correction (``protolint/rules/_working.py``; the core's exact solver needs scipy, which
``protolint check`` must not load). That approximation is compared here with the exact core. Published values come from shared/REFERENCE_CHECKS.md,
which names where each was seen; values recalled from memory say so.
"""

from __future__ import annotations

import math

import pytest

from protolint.rules import _working as w
from tests.rules._cases import BASE, build_case, run_text, CASES


# ---------------------------------------------------------------- normal quantile

def test_z_quantile() -> None:
    # z(0.975) = 1.959964 and z(0.80) = 0.841621 (standard normal table).
    assert w.z_quantile(0.975) == pytest.approx(1.959964, abs=1e-6)
    assert w.z_quantile(0.80) == pytest.approx(0.841621, abs=1e-6)


# ---------------------------------------------------------------- two-group sample size

@pytest.mark.parametrize("d,power,n_exact_t", [
    # Exact noncentral-t n per group (REFERENCE_CHECKS A6: statsmodels = pingouin = R pwr),
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
    # REFERENCE_CHECKS A6, convention d*sqrt(rho), exact-t totals 128 / 160 / 212 / 316.
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
    # Normal-approximation power at n = 64 per group, d = 0.5: 0.8074304 (REFERENCE_CHECKS A6);
    # by hand: 0.5 sqrt(32) - 1.959964 = 0.868463, Phi(0.868463) = 0.80743.
    assert w.approximate_power(0.5, 64, 64, 0.05) == pytest.approx(0.8074304, abs=1e-5)


def test_enrolled_after_dropout() -> None:
    # 75 analysable with 10 % dropout: 75 / 0.9 = 83.33 -> 84; 80 / 0.8 must stay 100, not 101.
    assert w.enrolled(75, 0.1) == 84
    assert w.enrolled(80, 0.2) == 100


# ---------------------------------------------------------------- Spearman-Brown

def test_spearman_brown_published() -> None:
    # REFERENCE_CHECKS A1: stepping up ICC(2,1) = 0.2897638 of Shrout & Fleiss (1979) to 4
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
    (0.2897638, 0.80, 10),  # 9.8043 -> 10 (REFERENCE_CHECKS A1)
    (0.2897638, 0.90, 23),  # 22.0598 -> 23
    (0.6, 0.9, 6),  # exactly 6: float noise must not make it 7
    (0.5, 0.8, 4),  # exactly 4
    (0.60, 0.80, 3),  # BRIEF 2.2 example
    (0.70, 0.80, 2),  # BRIEF 2.2 example
    (0.85, 0.80, 1),  # already there
])
def test_raters_needed(single: float, target: float, k: int) -> None:
    assert w.raters_needed(single, target) == k


# ---------------------------------------------------------------- Bonett (2002)

def test_bonett_published_example() -> None:
    # Bonett (2002) worked example (REFERENCE_CHECKS A7): rho .85, k 4, w .20 -> 19.2 -> 20
    # subjects; the width at 20 subjects is 0.1954993.
    assert w.bonett_subjects(0.85, 4, 0.20) == 20
    assert w.bonett_width(0.85, 4, 20) == pytest.approx(0.1954993, abs=1e-6)


def test_bonett_hand_worked() -> None:
    # 10 raters on 3 cases at rho .80 (BRIEF 2.3): 2 x 1.959964 x 0.2 x 8.2 x sqrt(2 / (90 x 2))
    # = 6.428682 x 0.105409 = 0.6776.
    assert w.bonett_width(0.80, 10, 3) == pytest.approx(0.6776, abs=1e-4)
    # One rater against the reference (k = 2) on 4 cases at .80: 1.411174 x sqrt(1/3) = 0.814742.
    assert w.bonett_width(0.80, 2, 4) == pytest.approx(0.814742, abs=1e-6)
    # Cases for width .40 at k = 2, rho .80: 1 + 8 x 3.841459 x 0.04 x 3.24 / (2 x 0.16) = 13.446,
    # plus 5 x 0.8 for k = 2 and rho >= .7 (Bonett's adjustment as in R presize) = 17.446 -> 18.
    assert w.bonett_subjects(0.80, 2, 0.40) == 18
    # Without the k = 2 adjustment the formula gives 50.79 for w = .20 (BRIEF: "n about 51");
    # with it, 54.79 -> 55.
    assert w.bonett_subjects(0.80, 2, 0.20) == 55


# ---------------------------------------------------------------- measurement error

def test_sem_and_sdc_published() -> None:
    # REFERENCE_CHECKS A1: SD 2.7103532 with ICC(2,1) .2897638 -> SEM 2.2841641;
    # SEM 1.0096754 -> MDC95 = 1.96 sqrt(2) SEM = 2.7986775.
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


# ---------------------------------------------------------------- the rules' own arithmetic

def _findings(text: str, rule_id: str):
    return [f for f in run_text(text).findings if f.rule == rule_id]


def _base() -> str:
    return BASE.read_text(encoding="utf-8")


def test_power_rule_working() -> None:
    """Base plan with 150 stated. Hand working: d = 0.5 on the true-score scale, reliability
    0.85 (ICC(2,1), one rater): d_obs = 0.5 sqrt(0.85) = 0.460977; n1 = 7.848879 x 2 / 0.2125
    + 0.960365 = 74.832 -> 75 per group; 75 / 0.9 = 83.3 -> 84 enrolled per group; 168 in all,
    18 more than stated. At perfect reliability: 64 -> 72 per group, 144."""
    case = build_case("power/unadjusted-for-reliability", CASES / "power" / "unadjusted-for-reliability" / "fail.yaml")
    (finding,) = _findings(case.text, "power/unadjusted-for-reliability")
    facts = finding.facts
    assert facts["effect_size_observed"] == pytest.approx(0.461, abs=1e-3)
    assert facts["n_per_group"] == [75, 75]
    assert facts["n_total_needed"] == 168
    assert facts["n_total_needed_at_perfect_reliability"] == 144
    assert facts["shortfall"] == 18
    assert "planning aid; confirm with the trial statistician" in finding.message
    # Stated 150 with 10 % dropout: 67 analysable per group (67.5 rounded down);
    # 0.460977 x sqrt(67 x 67 / 134) = 0.460977 x 5.787918 = 2.668096; Phi(2.668096 - 1.959964) = Phi(0.708132) = 0.7606.
    assert facts["power_at_stated_n"] == pytest.approx(0.761, abs=0.001)


def test_power_rule_does_not_penalise_twice() -> None:
    """An effect observed with a measure as reliable as the trial's (0.85) already carries the
    attenuation: the true effect is 0.5 / sqrt(0.85), attenuated back to 0.5, so 64 per group,
    72 enrolled per group, 144 in all; 150 stated is enough."""
    text = _base().replace("  effect_basis: true-score\n", "  effect_basis: observed\n  source_reliability: 0.85\n")
    text = text.replace("  stated_n_total: 180\n", "  stated_n_total: 150\n")
    assert _findings(text, "power/unadjusted-for-reliability") == []
    # Observed with a perfectly reliable measure: the full adjustment applies again (168 needed).
    text = text.replace("  source_reliability: 0.85\n", "  source_reliability: 1.0\n")
    (finding,) = _findings(text, "power/unadjusted-for-reliability")
    assert finding.facts["n_total_needed"] == 168


def test_power_rule_uses_the_mean_of_the_trial_raters() -> None:
    """Two independent raters per assessment: 0.85 -> 2 x 0.85 / 1.85 = 0.918919;
    n1 = 15.697758 / (0.25 x 0.918919) + 0.960365 = 69.292 -> 70; 70 / 0.9 = 77.8 -> 78; 156."""
    text = _base().replace("    raters_per_assessment: 1\n", "    raters_per_assessment: 2\n    combination: independent-mean\n")
    text = text.replace("  stated_n_total: 180\n", "  stated_n_total: 150\n")
    (finding,) = _findings(text, "power/unadjusted-for-reliability")
    assert finding.facts["reliability"] == pytest.approx(0.9189, abs=1e-4)
    assert finding.facts["n_total_needed"] == 156


def test_raters_rule_working() -> None:
    # r1 = 0.62, target 0.80: k = 0.8 x 0.38 / (0.62 x 0.2) = 2.4516 -> 3; 3 x 0.62 / 2.24 = 0.830357.
    case = build_case("power/fewer-raters-than-needed", CASES / "power" / "fewer-raters-than-needed" / "fail.yaml")
    (finding,) = _findings(case.text, "power/fewer-raters-than-needed")
    assert finding.facts["raters_needed"] == 3
    assert finding.facts["reliability_with_needed"] == pytest.approx(0.8304, abs=1e-4)


def test_average_icc_rule_working() -> None:
    # ICC(2,k) = 0.85 over 2 raters: 0.85 / (2 - 0.85) = 0.739130 for one rater.
    case = build_case("evidence/average-icc-for-single-rating", CASES / "evidence" / "average-icc-for-single-rating" / "fail.yaml")
    (finding,) = _findings(case.text, "evidence/average-icc-for-single-rating")
    assert finding.facts["single_rating"] == pytest.approx(0.7391, abs=1e-4)
    assert "0.739" in finding.message


def test_study_size_rule_working() -> None:
    # 12 subjects, 2 raters, r = 0.85: 3.919928 x 0.15 x 1.85 = 1.087780; x sqrt(2 / 22) = 0.301511
    # gives 0.327978;
    # subjects for 0.30: 1 + 30.731675 x 0.0225 x 3.4225 / 0.18 + 4.25 = 18.40 -> 19.
    case = build_case("evidence/study-too-small", CASES / "evidence" / "study-too-small" / "fail.yaml")
    (finding,) = _findings(case.text, "evidence/study-too-small")
    assert finding.facts["ci_width"] == pytest.approx(0.3280, abs=1e-4)
    assert finding.facts["subjects_for_max_width"] == 19


def test_measurement_error_rule_working() -> None:
    # SD 6, reliability 0.85: SEM = 6 sqrt(0.15) = 2.32379; SDC = 1.96 sqrt(2) x 2.32379 = 6.4413.
    case = build_case("evidence/error-exceeds-threshold", CASES / "evidence" / "error-exceeds-threshold" / "fail.yaml")
    (finding,) = _findings(case.text, "evidence/error-exceeds-threshold")
    assert finding.facts["sem"] == pytest.approx(2.324, abs=1e-3)
    assert finding.facts["sdc"] == pytest.approx(6.441, abs=1e-3)


def test_certification_rule_working() -> None:
    case = build_case("training/certification-too-small", CASES / "training" / "certification-too-small" / "fail.yaml")
    (finding,) = _findings(case.text, "training/certification-too-small")
    assert finding.facts["ci_width"] == pytest.approx(0.8147, abs=1e-4)
    assert finding.facts["cases_for_max_width"] == 18


def test_monitoring_rounds_working() -> None:
    # Rating period: 52 weeks of enrolment (364 days) + a participant's span, max(85 - 1, 26 x 7)
    # = 182 days -> 546 days; every 80 weeks (560 days) no regular round falls inside it, so
    # each of the two sites has only its close-out round on the last rating day: 2 rounds, the
    # rows the checklist prints (tests/rules/test_round_agreement.py), none while rating.
    case = build_case("monitoring/no-rounds-in-rating-period", CASES / "monitoring" / "no-rounds-in-rating-period" / "fail.yaml")
    (finding,) = _findings(case.text, "monitoring/no-rounds-in-rating-period")
    assert finding.facts["rating_period_days"] == 546
    assert finding.facts["rounds_while_rating"] == 0
    assert finding.facts["rounds"] == 2
    assert finding.facts["sites"] == ["S01", "S02"]
