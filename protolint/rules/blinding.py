"""Blinding rules: raters must not know what could bias their ratings."""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Plan
from protolint.rules.registry import Hit, RuleContext, rule


@rule("blinding/rater-knows-treatment", "error",
      source="Hróbjartsson et al. 2013 (CMAJ 185:E201; non-blinded assessors exaggerated effects); ICH E9 2.3.1")
def rater_knows_treatment(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Raters of an endpoint are not blinded to treatment and nothing mitigates it.

    Assessors who know the treatment rate subjective outcomes more favourably for the
    treatment they expect to work: a meta-analysis of trials with both blinded and
    non-blinded assessors found effect sizes exaggerated by about two thirds. An endpoint
    rated by people must list `treatment` in `blinded_to`, or say in `unblinding_mitigation`
    how bias is kept out (an independent blinded rater, central rating of recordings).

    **Passes**: `blinded_to: [treatment, prior-scores]`.

    **Fails**: `blinded_to: [prior-scores]` with no `unblinding_mitigation`.
    """
    for endpoint in plan.endpoints:
        if not plan.instrument(endpoint.instrument).is_rated_by_people:
            continue
        if endpoint.blinded_to is not None and "treatment" in endpoint.blinded_to:
            continue
        if endpoint.unblinding_mitigation:
            continue
        where = endpoint.path + ("blinded_to",) if endpoint.blinded_to is not None else endpoint.path + ("id",)
        stated = "does not say whether its raters are blinded" if endpoint.blinded_to is None else "has raters who are not blinded"
        yield Hit(where, f"endpoint {endpoint.id} {stated} to treatment, and no mitigation is described")


@rule("blinding/prior-scores-visible", "warning",
      source="COSMIN Risk of Bias checklist, reliability standards 4-5 (Mokkink et al. 2020); common practice in trial data capture")
def prior_scores_visible(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Raters of a repeated rating may see the participant's earlier scores.

    A rater who sees last visit's score anchors on it: changes shrink and drift goes unseen.
    When an endpoint is rated at more than one visit by people, it should list `prior-scores`
    in `blinded_to` or describe a `prior_scores_safeguard` (hidden fields in data capture,
    worksheets kept away from the rater).

    **Passes**: `blinded_to: [treatment, prior-scores]`.

    **Fails**: rated at baseline, week 4 and week 12 with `blinded_to: [treatment]` only.
    """
    for endpoint in plan.endpoints:
        if len(endpoint.visits) < 2 or not plan.instrument(endpoint.instrument).is_rated_by_people:
            continue
        if endpoint.blinded_to and "prior-scores" in endpoint.blinded_to or endpoint.prior_scores_safeguard:
            continue
        where = endpoint.path + ("blinded_to",) if endpoint.blinded_to is not None else endpoint.path + ("visits",)
        yield Hit(where, f"endpoint {endpoint.id} is rated at {len(endpoint.visits)} visits but nothing keeps the "
                         "participant's earlier scores from its raters")
