"""The computed rules' own arithmetic on their rule cases, against hand-worked values.

The formulas the rules call are tested in ``tests/plan/test_formulas.py``; here each computed
rule's facts on its failing case are compared with working done by hand beside the test.
"""

from __future__ import annotations

import math

import pytest

from tests.rules._cases import BASE, CASES, build_case, run_text


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


@pytest.mark.parametrize("value, shown", [("0.0", "0"), ("-0.1", "-0.1 (below zero: no better than chance)")])
def test_power_rule_says_a_reliability_of_zero_carries_no_signal(value: str, shown: str) -> None:
    """Reliability 0 (or below): the observed effect d sqrt(0) is 0, so no N reaches the power
    and the rule says so instead of staying silent; a reliability just above zero gives an
    enormous N from the same rule."""
    text = _base().replace("        value: 0.85\n", f"        value: {value}\n").replace("        ci: [0.78, 0.90]\n", "")
    (finding,) = _findings(text, "power/unadjusted-for-reliability")
    assert finding.severity.name == "ERROR"
    assert finding.message.startswith(f"endpoint EP-1 is rated with reliability {shown} (evidence EV-A, 1 rating per "
                                      "assessment): its scores carry no signal")
    assert "no number of participants gives the planned 80% power, the stated 180 included" in finding.message
    assert finding.facts["n_total_needed"] is None and finding.facts["reliability"] == float(value)
    # Two raters averaged do not help: Spearman-Brown of 0 is 0.
    averaged = text.replace("    raters_per_assessment: 1\n", "    raters_per_assessment: 2\n    combination: independent-mean\n")
    (finding,) = _findings(averaged, "power/unadjusted-for-reliability")
    assert "averaging more raters does not help" in finding.message and finding.facts["ratings_averaged"] == 2
    # Continuity with a small positive reliability 0.01: d_obs = 0.5 x 0.1 = 0.05;
    # 7.848880 x 2 / 0.0025 + 0.960365 = 6280.06 -> 6281 per group; 6281 / 0.9 = 6978.9 -> 6979 enrolled per group.
    (small,) = _findings(_base().replace("        value: 0.85\n", "        value: 0.01\n").replace("        ci: [0.78, 0.90]\n", ""),
                         "power/unadjusted-for-reliability")
    assert small.facts["n_per_group"] == [6281, 6281] and small.facts["n_total_needed"] == 2 * 6979
    # The exact noncentral-t answer (statsmodels' TTestIndPower) is within one participant of
    # the closed form, as Guenther (1981) reports for it.
    from statsmodels.stats.power import TTestIndPower

    exact = math.ceil(TTestIndPower().solve_power(effect_size=0.05, alpha=0.05, power=0.8, ratio=1.0))
    assert abs(exact - 6281) <= 1


def test_power_rule_says_an_effect_observed_with_no_reliability_cannot_be_used() -> None:
    text = _base().replace("  effect_basis: true-score\n", "  effect_basis: observed\n  source_reliability: 0\n")
    (finding,) = _findings(text, "power/unadjusted-for-reliability")
    assert finding.pointer == "/sample_size/source_reliability"
    assert "observed with a measure of reliability 0, which carries no signal" in finding.message


def test_check_reports_a_reliability_of_zero_from_the_command_line(tmp_path) -> None:
    from tests.conftest import run_protolint

    plan = tmp_path / "plan.yaml"
    plan.write_text(_base().replace("        value: 0.85\n", "        value: 0\n").replace("        ci: [0.78, 0.90]\n", ""),
                    encoding="utf-8")
    result = run_protolint("check", plan, "--format", "text")
    assert result.returncode == 1, result.stderr
    (line,) = [line for line in result.stdout.splitlines() if "power/unadjusted-for-reliability" in line]
    assert line.startswith(f"{plan}:") and " error power/unadjusted-for-reliability endpoint EP-1 is rated with reliability 0 " in line


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
