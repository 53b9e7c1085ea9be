"""The binder's sample-size appendix: the plan's own point and the point its evidence supports."""

from __future__ import annotations

from protolint.plan import read_plan_file
from protolint.render.binder import sample_size_appendix
from protolint.rules.engine import check_loaded
from tests.conftest import write_demo_plan


def facts(appendix) -> dict[str, str]:
    return {fact.label: fact.value for fact in appendix.inputs + appendix.results}


def test_demo_appendix_recomputes_the_plan_and_the_evidence_point(demo_plan):
    loaded = read_plan_file(str(demo_plan))
    appendix = sample_size_appendix(loaded.plan)
    table = facts(appendix)
    # The plan's own assumption (reliability 1): d = 0.45, alpha .05 two-sided, power .90 gives
    # 105 per group by exact noncentral t (statsmodels' TTestIndPower agrees), 248 to enrol at
    # 15 % dropout (210 / 0.85 = 247.06, rounded up).
    assert table["Analysable N per group"] == "105 / 105"
    assert table["To enrol, allowing for dropout"] == "248"
    # The evidence (ICC(2,k) = 0.88 for the mean of 2) supports 0.88 / (2 - 0.88) = 0.786 for one
    # rating; the same comparison then needs 316 to enrol: the figure the sample-size rule reports.
    assert table["Reliability the evidence supports"].startswith("0.786 (one rating")
    assert table["To enrol at that reliability"].startswith("316 ")
    rule = next(f for f in check_loaded(loaded).findings if f.rule == "power/unadjusted-for-reliability")
    assert rule.facts["n_total_needed"] == 316
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
    # true-score scale: the demo's own effect, so the evidence point needs the same 316.
    text = demo_plan.read_text(encoding="utf-8")
    edited = text.replace("  effect_size: 0.45\n  effect_basis: true-score\n",
                          "  effect_size: 0.36\n  effect_basis: observed\n  source_reliability: 0.64\n")
    assert edited != text
    plan_file = write_demo_plan(tmp_path / "plan.yaml", edited)
    loaded = read_plan_file(str(plan_file))
    table = facts(sample_size_appendix(loaded.plan))
    assert table["Standardised effect as stated"].startswith("0.360 (observed with reliability 0.64")
    assert table["Standardised effect (true score)"] == "0.450"
    assert table["To enrol at that reliability"].startswith("316 ")
    rule = next(f for f in check_loaded(loaded).findings if f.rule == "power/unadjusted-for-reliability")
    assert rule.facts["effect_size_true"] == 0.45 and rule.facts["n_total_needed"] == 316
