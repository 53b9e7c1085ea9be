"""What ``protolint design --plan`` takes from a plan: the comparison, the coefficient, the design.

Kept apart from ``analysis.design`` so that a run without a plan never loads the plan and rule
machinery.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from protolint.analysis.design import Comparison
from protolint.errors import ProtolintError
from protolint.plan.model import Endpoint, Plan

# Plan facts (the reliability the plan's evidence supports, the true-score effect, individual use)
# come from this one import; when they move into protolint.plan only this line changes.
from protolint.plan.reliability import individual_use, trial_reliability, true_effect_size
from protolint.wording import plural


@dataclass(frozen=True)
class PlanInputs:
    """What ``--plan`` contributes: the comparison, the coefficient and the plan's own design."""

    file: str
    sha256: str
    study_id: str
    study_title: str
    sponsor: str | None
    plan_date: Any
    endpoint_id: str
    endpoint_label: str
    comparison: Comparison
    effect_basis: str
    coefficient: str
    coefficient_reason: str
    raters: int
    occasions: int
    design_note: str | None
    evidence_reliability: float | None
    stated_n_total: int


def coefficient_for_endpoint(plan: Plan, endpoint: Endpoint) -> tuple[str, str]:
    """``"g"`` only when the same raters rate every participant and no individual decision rests on the score."""
    if individual_use(endpoint):
        return "phi", "the score decides about individual participants (absolute error counts)"
    if endpoint.rater_assignment == "rotating":
        return "phi", "raters rotate between participants (rater differences are error)"
    if endpoint.rater_assignment == "fixed-per-participant":
        return "phi", "each participant has a rater of their own (raters nested in participants)"
    if endpoint.rater_assignment == "any-certified":
        return "phi", "any certified rater may rate a participant (raters differ between participants)"
    pool = plan.pool(endpoint.rater_pool)
    if pool.is_central and pool.raters_per_site == endpoint.raters_per_assessment:
        return "g", (f"the same {plural(pool.raters_per_site, 'central rater')} "
                     f"{'rates' if pool.raters_per_site == 1 else 'rate'} every participant (relative error only)")
    if pool.location == "site":
        return "phi", "raters work at the sites, so they differ between participants"
    return "phi", "the plan does not say that the same raters rate every participant"


def plan_inputs(plan_file: str) -> PlanInputs:
    """Read a plan and take its sample-size comparison, rating arrangement and design."""
    from protolint.plan import read_plan_file

    loaded = read_plan_file(plan_file)
    plan = loaded.plan
    assert plan is not None  # read_plan_file raises on any problem
    spec = plan.sample_size
    if spec is None:
        raise ProtolintError(f"{plan_file}: the plan has no sample_size section; give --effect-size instead of --plan")
    endpoint = plan.endpoint(spec.endpoint)
    expected = trial_reliability(plan, endpoint)
    fallback = spec.assumed_reliability if spec.assumed_reliability is not None else 1.0
    effect = true_effect_size(spec, expected.reliability if expected else fallback)
    if effect is None:
        raise ProtolintError(f"{plan_file}: sample_size states no effect size (effect_size, or difference and sd)")
    coefficient, reason = coefficient_for_endpoint(plan, endpoint)
    raters = endpoint.raters_per_assessment
    note = None
    if endpoint.combination in ("consensus", "sequential"):
        # Not independent ratings (as in the evidence rules): they count as one rating.
        note = f"{raters} raters combined by {endpoint.combination} count as one independent rating"
        raters = 1
    comparison = Comparison(effect.value, alpha=spec.alpha, power=spec.power, sides=spec.sides or 2,
                            ratio=plan.study.allocation_ratio, dropout=spec.dropout or 0.0)
    return PlanInputs(
        file=plan_file, sha256=loaded.source.sha256, study_id=plan.study.id, study_title=plan.study.title,
        sponsor=plan.study.sponsor, plan_date=plan.plan_date, endpoint_id=endpoint.id, endpoint_label=endpoint.label,
        comparison=comparison, effect_basis=effect.basis, coefficient=coefficient, coefficient_reason=reason,
        raters=raters, occasions=endpoint.occasions_per_assessment or 1, design_note=note,
        evidence_reliability=expected.reliability if expected else None, stated_n_total=spec.stated_n_total)
