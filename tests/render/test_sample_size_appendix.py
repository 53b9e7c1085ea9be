"""The binder's sample-size appendix: the plan's own point and the point its evidence supports."""

from __future__ import annotations

import math

from statsmodels.stats.power import TTestIndPower

from protolint.plan import read_plan_file
from protolint.render.binder import sample_size_appendix
from protolint.rules.engine import check_loaded
from tests.conftest import write_demo_plan


def enrolled(effect: float, reliability: float = 1.0, alpha: float = 0.05, power: float = 0.9,
             dropout: float = 0.15) -> tuple[int, int]:
    """(per group, to enrol) by statsmodels' exact noncentral-t power, the effect attenuated by
    sqrt(reliability) of the outcome (Hunter & Schmidt 1990, Methods of Meta-Analysis, the correction
    of d for measurement error read backwards), both arms equal, rounded up."""
    per_group = math.ceil(TTestIndPower().solve_power(effect_size=effect * math.sqrt(reliability), alpha=alpha,
                                                       power=power, ratio=1.0, alternative="two-sided"))
    return per_group, math.ceil(2 * per_group / (1 - dropout))


def facts(appendix) -> dict[str, str]:
    return {fact.label: fact.value for fact in appendix.inputs + appendix.results}


def test_demo_appendix_recomputes_the_plan_and_the_evidence_point(demo_plan):
    loaded = read_plan_file(str(demo_plan))
    appendix = sample_size_appendix(loaded.plan)
    table = facts(appendix)
    # The plan's own assumption (reliability 1): d = 0.45, alpha .05 two-sided, power .90, 15 %
    # dropout; statsmodels' TTestIndPower gives 105 per group, 248 to enrol (210 / 0.85, rounded up).
    per_group, to_enrol = enrolled(0.45)
    assert (per_group, to_enrol) == (105, 248)
    assert table["Analysable N per group"] == f"{per_group} / {per_group}"
    assert table["To enrol, allowing for dropout"] == str(to_enrol)
    # The evidence (ICC(2,k) = 0.88 for the mean of 2) supports 0.88 / (2 - 0.88) = 0.786 for one
    # rating by Spearman-Brown; the same comparison then needs (statsmodels) 316 to enrol: the
    # figure the sample-size rule reports.
    one_rating = 0.88 / (2 - 0.88)
    at_evidence = enrolled(0.45, one_rating)[1]
    assert at_evidence == 316
    assert table["Reliability the evidence supports"].startswith("0.786 (one rating")
    assert table["To enrol at that reliability"].startswith(f"{at_evidence} ")
    rule = next(f for f in check_loaded(loaded).findings if f.rule == "power/unadjusted-for-reliability")
    assert rule.facts["n_total_needed"] == at_evidence
    # Both points are drawn on the chart.
    assert appendix.chart_svg.count("<svg") == 1 and "evidence supports" in appendix.chart_svg


def test_no_evidence_point_without_fitting_evidence(starter_text, tmp_path):
    # A plan whose only evidence is internal consistency offers nothing to recompute with.
    text = starter_text.replace("        type: inter-rater        # inter-rater | intra-rater | test-retest | internal-consistency\n        coefficient: ICC(2,1)",
                                "        type: internal-consistency\n        coefficient: cronbach-alpha")
    assert text != starter_text
    plan_file = tmp_path / "plan.yaml"
    plan_file.write_text(text, encoding="utf-8")
    appendix = sample_size_appendix(read_plan_file(str(plan_file)).plan)
    assert "Reliability the evidence supports" not in facts(appendix)


def test_an_observed_effect_is_brought_to_the_true_score_scale_as_the_rule_does(demo_plan, tmp_path):
    # An effect of 0.36 observed with reliability 0.64 is 0.36 / sqrt(0.64) = 0.45 on the
    # true-score scale: the demo's own effect, so the evidence point needs the same number.
    text = demo_plan.read_text(encoding="utf-8")
    edited = text.replace("  effect_size: 0.45\n  effect_basis: true-score\n",
                          "  effect_size: 0.36\n  effect_basis: observed\n  source_reliability: 0.64\n")
    assert edited != text
    plan_file = write_demo_plan(tmp_path / "plan.yaml", edited)
    loaded = read_plan_file(str(plan_file))
    table = facts(sample_size_appendix(loaded.plan))
    assert table["Standardised effect as stated"].startswith("0.360 (observed with reliability 0.64")
    assert table["Standardised effect (true score)"] == "0.450"
    at_evidence = enrolled(0.45, 0.88 / (2 - 0.88))[1]
    assert table["To enrol at that reliability"].startswith(f"{at_evidence} ")
    rule = next(f for f in check_loaded(loaded).findings if f.rule == "power/unadjusted-for-reliability")
    assert rule.facts["effect_size_true"] == 0.45 and rule.facts["n_total_needed"] == at_evidence
