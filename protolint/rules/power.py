"""Power rules: the sample size accounts for the reliability the trial will actually have.

Random measurement error leaves the difference between arms unbiased but inflates the
observed standard deviation by 1/sqrt(reliability), so the observed standardised effect is
d sqrt(rho) and the required N grows as 1/rho (classical test theory; the statistics core's
"variance-ratio" convention, which is the default of ``protolint size``).
"""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Plan, SampleSize
from protolint.plan.reliability import TrialReliability, individual_use, trial_reliability, true_effect_size
from protolint.rules._working import PLANNING_AID, fmt
from protolint.rules import sources as S
from protolint.rules.sources import cite
from protolint.wording import plural
from protolint.rules.registry import Hit, RuleContext, Threshold, rule

_RECOMPUTED = ("two-group-difference",)


@rule("power/reliability-not-stated", "warning",
      source=cite(f"{S.LACHIN_2004} (report the reliability of the outcome as the power is reported)", f"{S.MULLER_SZEGEDI_2002} (use empirical reliability, not an assumed perfect one)"))
def reliability_not_stated(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The sample-size calculation does not state the reliability it assumed or where its effect size comes from.

    Power depends on the outcome's reliability as much as on N. The calculation should state
    `assumed_reliability` and `effect_basis`: `true-score` for an effect on the error-free
    scale, `observed` for one measured in a previous trial (whose reliability goes in
    `source_reliability`), so that the adjustment can be checked.

    **Passes**: `assumed_reliability: 0.80`, `effect_basis: true-score`.

    **Fails**: no `assumed_reliability`, or `effect_basis: observed` without `source_reliability`.
    """
    size = plan.sample_size
    if size is None:
        return
    if size.assumed_reliability is None:
        yield Hit(size.path + ("endpoint",), f"the sample size for {size.endpoint} does not state the reliability it assumes; "
                                             "add assumed_reliability")
    if size.effect_basis is None:
        yield Hit(size.path + ("effect_size",) if size.effect_size is not None else size.path + ("endpoint",),
                  "the sample size does not say whether its effect size is error-free (true-score) or was measured "
                  "in a previous trial (observed); add effect_basis")
    elif size.effect_basis == "observed" and size.source_reliability is None:
        yield Hit(size.path + ("effect_basis",), "the effect size comes from a previous trial whose "
                                                 "reliability is not given; add source_reliability")


@rule("power/unadjusted-for-reliability", "error", computed=True,
      thresholds=[Threshold("tolerance", 0, "Participants by which the stated total may fall short before this is reported.", 0, 1000)],
      source=cite(f"{S.LACHIN_2004}", f"{S.MULLER_SZEGEDI_2002}", f"{S.GUENTHER_1981} (the small-sample correction of the normal-approximation N)"))
def unadjusted_for_reliability(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The stated sample size is too small for the reliability the evidence supports.

    The rule recomputes the N the plan needs with its own effect size, alpha, sidedness,
    power, allocation ratio (from the arms) and dropout, at the reliability the evidence
    supports for the way the endpoint is rated (the single-rating value, stepped up by
    Spearman–Brown to the trial's independent raters per assessment; see
    `evidence/below-group-threshold`), and compares it with `stated_n_total`.

    - Effect on the true-score scale: observed effect d √ρ, so N grows as 1/ρ.
    - Effect observed in an earlier study with reliability ρ_src: the true effect is
      d / √ρ_src, so N = N(d) × ρ_src / ρ; an effect observed with the same reliability as the
      trial's needs no adjustment (the error is not counted twice). Without `source_reliability`
      the source is assumed as reliable as the trial.
    - N per group from the normal approximation with Guenther's (1981) correction
      n₁ = (z₁₋α/s + z₁₋β)² (1 + 1/r) / d² + z²/4, within a participant of the exact
      noncentral-t answer (`protolint size` gives the exact one); then divided by (1 − dropout).

    - A reliability of zero or below means the scores carry no signal: no N gives the power
      (the attenuated effect is zero) and averaging raters does not help, which is reported
      as such; so is an effect said to be observed with a measure of reliability zero or
      below (`source_reliability`), from which no error-free effect follows.

    Only two-group comparisons of means are recomputed (`power/analysis-not-recomputed`).

    **Passes**: d = 0.5 (true score), α = .05 two-sided, power .80, reliability 0.80, dropout 0 and 160 stated.

    **Fails**: the same with 128 stated (enough only at perfect reliability; 160 needed).
    """
    from protolint.plan.formulas import approximate_power, enrolled, n_per_group

    size = plan.sample_size
    if size is None:
        return
    endpoint = plan.endpoint(size.endpoint)
    d = size.standardised_effect
    found = trial_reliability(plan, endpoint)
    if endpoint.analysis not in _RECOMPUTED or d is None or found is None or len(plan.study.arms) != 2:
        return
    rho = found.reliability
    if rho <= 0.0:
        yield _no_signal(size, endpoint.id, found)
        return
    if size.effect_basis == "observed" and size.source_reliability is not None and size.source_reliability <= 0.0:
        yield Hit(size.path + ("source_reliability",),
                  f"the effect size {fmt(d)} is said to be observed with a measure of reliability "
                  f"{fmt(size.source_reliability)}, which carries no signal and so cannot have shown an effect: the "
                  f"error-free effect, and the N it needs, cannot be worked out; correct source_reliability or "
                  f"effect_basis — {PLANNING_AID}",
                  {"endpoint": endpoint.id, "effect_size": d, "effect_basis": size.effect_basis,
                   "source_reliability": size.source_reliability, "n_total_stated": size.stated_n_total})
        return
    effect = true_effect_size(size, rho)
    if effect is None:
        return
    d_true, basis = effect.value, effect.basis
    d_obs = d_true * rho ** 0.5
    sides = size.sides or 2
    arms = plan.study.arms
    ratio = plan.study.allocation_ratio
    dropout = size.dropout or 0.0
    groups = n_per_group(d_obs, size.alpha, size.power, sides, ratio)
    needed = enrolled(groups.n1, dropout) + enrolled(groups.n2, dropout)
    perfect = n_per_group(d_true, size.alpha, size.power, sides, ratio)
    needed_perfect = enrolled(perfect.n1, dropout) + enrolled(perfect.n2, dropout)
    shortfall = needed - size.stated_n_total
    if shortfall <= int(ctx.thresholds["tolerance"]):
        return
    # Power the stated enrolment gives at the trial's reliability, after dropout.
    share = arms[0].ratio / (arms[0].ratio + arms[1].ratio)
    n1_stated = max(2, int(size.stated_n_total * share * (1 - dropout)))
    n2_stated = max(2, int(size.stated_n_total * (1 - share) * (1 - dropout)))
    power_stated = approximate_power(d_obs, n1_stated, n2_stated, size.alpha, sides)
    facts = {
        "endpoint": endpoint.id, "effect_size": d, "effect_basis": size.effect_basis, "effect_size_true": round(d_true, 4),
        "alpha": size.alpha, "sides": sides, "power": size.power, "allocation_ratio": ratio, "dropout": dropout,
        "evidence": found.evidence.id, "single_rating_reliability": round(found.single, 4),
        "ratings_averaged": found.ratings, "reliability": round(rho, 6), "assumed_reliability": size.assumed_reliability,
        "effect_size_observed": round(d_obs, 4),
        "formula": "n1 = (z(1-alpha/sides) + z(power))^2 (1 + 1/ratio) / d_obs^2 + z(1-alpha/sides)^2 / 4 (Guenther 1981); "
                   "d_obs = d_true sqrt(reliability); enrolled = ceil(n / (1 - dropout))",
        "n_per_group": [groups.n1, groups.n2], "n_total_needed": needed, "n_total_needed_at_perfect_reliability": needed_perfect,
        "n_total_stated": size.stated_n_total, "shortfall": shortfall, "power_at_stated_n": round(power_stated, 3),
    }
    yield Hit(size.path + ("stated_n_total",),
              # Six significant figures: the N below is computed from this value, and a reader who re-runs
              # `protolint size` with a 3-decimal rounding can land a few participants away from it.
              f"endpoint {endpoint.id} is rated with reliability {rho:.6g} (evidence {found.evidence.id}, "
              f"{plural(found.ratings, 'rating')} per assessment); with d = {fmt(d)} {basis}, the observed effect is "
              f"{fmt(d_obs)} and {needed} participants are needed ({groups.n1} + {groups.n2} analysable, {fmt(dropout)} "
              f"dropout), not {size.stated_n_total}: {shortfall} short, and the stated N gives about {power_stated:.0%} "
              f"power instead of {size.power:.0%}; enrol more, average more raters, or raise reliability — {PLANNING_AID}",
              facts)


def _no_signal(size: SampleSize, endpoint_id: str, found: TrialReliability) -> Hit:
    """Reliability of zero or below: the scores carry no signal, so no N gives the power.

    The attenuated effect d √ρ is zero (the formula's N grows as 1/ρ without bound), and the
    mean of any number of such ratings is no more reliable (Spearman–Brown of 0 is 0)."""
    below = " (below zero: no better than chance)" if found.reliability < 0 else ""
    return Hit(size.path + ("stated_n_total",),
               f"endpoint {endpoint_id} is rated with reliability {fmt(found.reliability)}{below} (evidence "
               f"{found.evidence.id}, {plural(found.ratings, 'rating')} per assessment): its scores carry no signal of the "
               f"true differences between participants, so no number of participants gives the planned "
               f"{size.power:.0%} power, the stated {size.stated_n_total} included, and averaging more raters "
               f"does not help — raise the reliability (rater training, a better-suited instrument) or cite evidence "
               f"that fits the trial, then size it again — {PLANNING_AID}",
               {"endpoint": endpoint_id, "evidence": found.evidence.id, "single_rating_reliability": round(found.single, 4),
                "ratings_averaged": found.ratings, "reliability": round(found.reliability, 6),
                "n_total_stated": size.stated_n_total, "n_total_needed": None})


@rule("power/fewer-raters-than-needed", "warning", computed=True,
      thresholds=[Threshold("target_reliability", 0.80, "Reliability an endpoint that compares groups should reach.", 0.5, 0.99),
                  Threshold("individual_target", 0.90, "Reliability an endpoint that decides about individuals should reach.", 0.5, 0.99)],
      source=f"{S.SHROUT_FLEISS_1979} (the mean of k raters has the Spearman-Brown step-up of the single-rating ICC)")
def fewer_raters_than_needed(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Fewer independent raters per assessment than Spearman–Brown says the target reliability needs.

    If a single rating falls short of the endpoint's target, the mean of several independent
    ratings may still reach it. With single-rating reliability r₁ and target R*, the ratings needed are
    k = ⌈R* (1 − r₁) / (r₁ (1 − R*))⌉, and the mean of k ratings reaches k r₁ / (1 + (k − 1) r₁).
    The target is `individual_target` when scores decide about individuals, otherwise
    `target_reliability`.

    **Passes**: r₁ = 0.85, one rater, target 0.80.

    **Fails**: r₁ = 0.60, one rater, target 0.80 → 3 raters needed (reaching 0.818).
    """
    from protolint.plan.formulas import raters_needed, spearman_brown

    for endpoint in plan.endpoints:
        found = trial_reliability(plan, endpoint)
        if found is None or not plan.instrument(endpoint.instrument).is_rated_by_people:
            continue
        target = float(ctx.thresholds["individual_target" if individual_use(endpoint) else "target_reliability"])
        if found.single <= 0.0:
            # No number of raters lifts a reliability of zero; the evidence rules report that.
            continue
        k = raters_needed(found.single, target)
        if found.ratings >= k:
            continue
        reached = spearman_brown(found.single, k)
        yield Hit(endpoint.path + ("raters_per_assessment",),
                  f"endpoint {endpoint.id} averages {plural(found.ratings, 'rating')} reaching {fmt(found.reliability)} (single-rating "
                  f"{fmt(found.single)}, evidence {found.evidence.id}); Spearman–Brown needs {k} independent raters to reach "
                  f"{fmt(target)} (they would reach {fmt(reached)}) — {PLANNING_AID}",
                  {"endpoint": endpoint.id, "evidence": found.evidence.id, "single_rating_reliability": round(found.single, 4),
                   "ratings_averaged": found.ratings, "reliability_now": round(found.reliability, 4), "target": target,
                   "formula": "k = ceil(R* (1 - r1) / (r1 (1 - R*))); R_k = k r1 / (1 + (k - 1) r1)",
                   "raters_needed": k, "reliability_with_needed": round(reached, 4)})


@rule("power/non-independent-averaging", "warning",
      source=cite(f"{S.GRRAS_2011}, item 9 (whether ratings were made independently)", f"{S.COSMIN_RISK_OF_BIAS_2020}, design standards 4 and 5"))
def non_independent_averaging(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Several raters per assessment are planned, but their ratings are not independent.

    The Spearman–Brown gain from averaging assumes each rater's error is independent. A
    consensus score, or a later rater who already knows the earlier score, inherits the earlier
    rater's error; the plan earns (at most) the reliability of one rating, and the other
    rules credit it with no more.

    **Passes**: `raters_per_assessment: 2`, `combination: independent-mean`.

    **Fails**: `raters_per_assessment: 2`, `combination: consensus`.
    """
    for endpoint in plan.endpoints:
        if endpoint.raters_per_assessment > 1 and endpoint.combination in ("consensus", "sequential"):
            yield Hit(endpoint.path + ("combination",),
                      f"endpoint {endpoint.id} uses {endpoint.raters_per_assessment} raters combined by {endpoint.combination}; "
                      "their errors are shared, so the averaging gain does not apply — rate independently and average")


@rule("power/analysis-not-recomputed", "note",
      source=cite(f"{S.LACHIN_2004}", "referring other analyses to the trial statistician: common practice"))
def analysis_not_recomputed(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The sample size is for an analysis whose reliability adjustment the rules do not recompute.

    Responder proportions, time to event, ANCOVA on baseline and change scores react to
    measurement error in ways the simple attenuation formula does not capture (dichotomising
    an unreliable score, for instance, loses more than the formula says). The statistician
    should show the adjustment.

    **Passes**: a sample size for an endpoint with `analysis: two-group-difference`.

    **Fails**: a sample size for an endpoint with `analysis: responder`.
    """
    size = plan.sample_size
    if size is None:
        return
    endpoint = plan.endpoint(size.endpoint)
    if endpoint.analysis not in _RECOMPUTED:
        yield Hit(size.path + ("endpoint",),
                  f"the sample size is for {endpoint.id}, analysed as {endpoint.analysis}; its reliability adjustment is not "
                  "recomputed here — ask the trial statistician to show how measurement error was allowed for")


@rule("power/assumed-above-evidence", "warning", computed=True,
      thresholds=[Threshold("tolerance", 0.02, "Amount by which the assumed reliability may exceed what the evidence supports before this is reported.", 0.0, 0.5)],
      source=cite("common practice (plan on the reliability the evidence supports for the trial's way of rating)", f"{S.LACHIN_2004} (power declines with reliability)"))
def assumed_above_evidence(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The sample size assumes a higher reliability than the plan's own evidence supports.

    The reliability written into the sample-size calculation (`assumed_reliability`) is the
    figure reviewers and the documents quote. When it is above what the cited evidence
    supports for the way the endpoint is rated (the least favourable fitting record, single-
    rating value stepped up to the trial's raters, as in `evidence/below-group-threshold`) by
    more than `tolerance`, the calculation is optimistic: the trial will see less
    reliability, and so less power, than it claims. Whether the stated N is still enough is
    `power/unadjusted-for-reliability`.

    **Passes**: assumed 0.85, evidence ICC(2,1) 0.85 with one rater per assessment.

    **Fails**: assumed 0.95, evidence ICC(2,1) 0.85 with one rater per assessment.
    """
    size = plan.sample_size
    if size is None or size.assumed_reliability is None:
        return
    endpoint = plan.endpoint(size.endpoint)
    found = trial_reliability(plan, endpoint)
    if found is None:
        return
    tolerance = float(ctx.thresholds["tolerance"])
    excess = size.assumed_reliability - found.reliability
    if excess <= tolerance:
        return
    ratings = "one rating" if found.ratings == 1 else f"the mean of {found.ratings} ratings"
    yield Hit(size.path + ("assumed_reliability",),
              f"the sample size assumes a reliability of {fmt(size.assumed_reliability)}, but evidence {found.evidence.id} "
              f"supports {fmt(found.reliability)} for {ratings} per assessment of endpoint {endpoint.id}; plan on the "
              f"supported value, or cite evidence for the higher one — {PLANNING_AID}",
              {"endpoint": endpoint.id, "assumed_reliability": size.assumed_reliability, "evidence": found.evidence.id,
               "reliability": round(found.reliability, 4), "ratings_averaged": found.ratings,
               "formula": "least favourable fitting evidence, single-rating value, Spearman-Brown to the trial's ratings",
               "excess": round(excess, 4), "tolerance": tolerance})
