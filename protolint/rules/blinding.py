"""Blinding rules: raters must not know what could bias their ratings."""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Plan
from protolint.rules import sources as S
from protolint.rules.sources import cite
from protolint.rules.registry import Hit, RuleContext, rule


@rule("blinding/rater-knows-treatment", "error",
      source=cite(f"{S.HROBJARTSSON_2013} (nonblinded assessors exaggerated the effect on measurement scales)", f"{S.HROBJARTSSON_2012} (the same for binary outcomes)"))
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
      source=cite(f"{S.COSMIN_RISK_OF_BIAS_2020}, design standards 4 and 5 (scores assigned without knowledge of the other repeated measurements)", "keeping earlier scores out of view in data capture: common practice"))
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


_CLINICAL_ROLES = ("treating-clinician", "investigator", "safety-assessor", "dispenser")


@rule("blinding/rater-has-clinical-role", "warning",
      source=cite(f"{S.HROBJARTSSON_2012} (observer bias)", f"{S.HROBJARTSSON_2013}", "separating the rating role from care: common practice"))
def rater_has_clinical_role(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Raters also treat, dispense to, or assess the safety of the participants they rate.

    A rater who sees adverse events, dosing or the participant's own account of treatment can
    guess the arm even when formally blinded. When `rater_roles` lists a clinical role, the
    endpoint needs an `unblinding_mitigation` (an independent rater, central rating of
    recordings).

    **Passes**: `rater_roles: [none]`.

    **Fails**: `rater_roles: [treating-clinician]` and no `unblinding_mitigation`.
    """
    for endpoint in plan.endpoints:
        roles = [r for r in endpoint.rater_roles if r in _CLINICAL_ROLES]
        if roles and not endpoint.unblinding_mitigation and plan.instrument(endpoint.instrument).is_rated_by_people:
            yield Hit(endpoint.path + ("rater_roles",),
                      f"raters of endpoint {endpoint.id} also act as {', '.join(roles)} for the same participants, which "
                      "can reveal treatment; separate the roles or describe an unblinding_mitigation")


@rule("blinding/no-unblinding-procedure", "warning",
      source=cite(f"{S.E6}, Annex 1 section 2.5.3 (deviations documented; important ones explained and their recurrence prevented)", "the unblinding procedure itself: common practice"))
def no_unblinding_procedure(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Nothing says what happens when a rater becomes unblinded.

    Accidental unblinding happens (a participant mentions side effects, a label is left on a
    tube). The plan should say how it is documented, how its impact is judged and whether a
    new rater takes over. Satisfied by the pool's `unblinding_procedure`, a `rater-unblinded`
    deviation, or an SOP covering `unblinding`.

    **Passes**: `unblinding_procedure:` described for the pool.

    **Fails**: no pool procedure, no `rater-unblinded` deviation and no SOP covering unblinding.
    """
    if any(d.kind == "rater-unblinded" for d in plan.deviations):
        return
    if any(sop.covers and "unblinding" in sop.covers.procedures for sop in plan.sops):
        return
    for pool in plan.rater_pools:
        if not any(plan.instrument(i).is_rated_by_people for i in pool.instruments) or pool.unblinding_procedure:
            continue
        yield Hit(pool.path + ("id",), f"rater pool {pool.id} has no procedure for a rater who learns a participant's "
                                       "treatment; say how it is documented and who rates afterwards")


@rule("blinding/eligibility-rated-unconfirmed", "note",
      source=cite(f"{S.KOBAK_2010} (site raters scored higher than central raters at entry; 35% of those entered on a site score were below the cut-off by the central score)", "confirming eligibility ratings: common practice"))
def eligibility_rated_unconfirmed(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Site raters who know the entry cut-off rate eligibility, with no independent confirmation.

    Under enrolment pressure, site raters tend to score borderline candidates just above the
    entry cut-off; baseline is inflated and the later improvement looks larger than it is.
    An eligibility cut-off rated at a site should be confirmed centrally or by an independent
    rater (`confirmation`), or raters should not know the cut-off (`eligibility-cutoff` in
    `blinded_to`).

    **Passes**: `{kind: eligibility, value: 16, confirmation: central}`.

    **Fails**: `{kind: eligibility, value: 16, confirmation: none}` rated by a site pool.
    """
    for endpoint in plan.endpoints:
        if endpoint.use is None or not plan.instrument(endpoint.instrument).is_rated_by_people:
            continue
        if plan.pool(endpoint.rater_pool).is_central:
            continue
        if endpoint.blinded_to and "eligibility-cutoff" in endpoint.blinded_to:
            continue
        for cutoff in endpoint.use.thresholds:
            if cutoff.kind == "eligibility" and cutoff.confirmation in (None, "none"):
                yield Hit(cutoff.path + (("confirmation",) if cutoff.confirmation else ("kind",)),
                          f"eligibility on endpoint {endpoint.id} (cut-off {cutoff.value:g}) is rated by site raters who know "
                          "the cut-off, with no independent confirmation; confirm centrally or hide the cut-off from raters")
