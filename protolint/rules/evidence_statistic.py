"""Evidence statistics: is the coefficient quoted the one that describes how the trial rates?

Kappa for a continuous total, Cronbach's alpha for rater agreement, a correlation for
agreement, an ICC without its form or in the wrong form: each makes a reliability figure
answer another question than the trial's. Their ids keep the released ``evidence/`` prefix.
"""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Plan
from protolint.plan.reliability import (
    CORRELATIONS,
    KAPPAS,
    REPEATED_TYPES,
    UNWEIGHTED_KAPPAS,
    evidence_pairs,
    fitting_type,
    icc_form,
    ratings_averaged,
    trial_ratings,
)
from protolint.rules._working import unique
from protolint.rules._working import PLANNING_AID, fmt
from protolint.rules import sources as S
from protolint.rules.sources import cite
from protolint.rules.registry import Hit, RuleContext, rule


@rule("evidence/kappa-for-interval-score", "error",
      source=f"{S.COSMIN_RISK_OF_BIAS_2020}, standards on the preferred statistical methods for reliability (an ICC for continuous scores)")
def kappa_for_interval_score(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A kappa statistic is offered as reliability evidence for a continuous score.

    Kappa treats scores as unordered categories: a total of 31 against 30 counts as the same
    disagreement as 31 against 5. For an interval score (a summed total) the evidence needs an
    ICC with its form stated, preferably with the standard error of measurement.

    **Passes**: an interval score with `coefficient: ICC(2,1)`.

    **Fails**: an interval score with `coefficient: cohen-kappa`.
    """
    for instrument, evidence, _ in evidence_pairs(plan):
        if instrument.scale.type == "interval" and evidence.coefficient in KAPPAS:
            yield Hit(evidence.path + ("coefficient",),
                      f"evidence {evidence.id} reports {evidence.coefficient} for {instrument.id}, whose score is a "
                      "continuous total; kappa discards how far apart scores are, so report an ICC (form stated) instead")


@rule("evidence/alpha-as-rater-evidence", "error",
      source=cite(f"{S.COSMIN_CHECKLIST_2010} (internal consistency and reliability are separate measurement properties)", f"{S.COSMIN_RISK_OF_BIAS_2020}"))
def alpha_as_rater_evidence(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Internal consistency (Cronbach's alpha) is offered where rater or retest agreement is needed.

    Cronbach's alpha measures how consistently the items of one scale rank respondents on a
    single occasion. Rater error and day-to-day change never enter it, so a high alpha is no
    evidence that different raters, or repeat visits, reproduce a score. It fails when a
    record labelled inter-rater, intra-rater or test-retest reports Cronbach's alpha, and when
    an instrument behind an endpoint has internal-consistency evidence only.

    **Passes**: an `internal-consistency` alpha record beside an `inter-rater` ICC record.

    **Fails**: `type: inter-rater` with `coefficient: cronbach-alpha`, or alpha as the only record.
    """
    for instrument, evidence, _ in evidence_pairs(plan):
        if evidence.coefficient == "cronbach-alpha" and evidence.type in REPEATED_TYPES:
            yield Hit(evidence.path + ("coefficient",),
                      f"evidence {evidence.id} of {instrument.id} is labelled {evidence.type} but reports Cronbach's "
                      "alpha, which measures item consistency within one rating; report an ICC or kappa between "
                      "raters or occasions")
    for instrument in plan.instruments:
        if not plan.endpoints_for(instrument.id) or not instrument.evidence:
            continue
        if all(e.type == "internal-consistency" for e in instrument.evidence):
            evidence = instrument.evidence[0]
            yield Hit(evidence.path + ("type",),
                      f"the only evidence for {instrument.id} is internal consistency ({evidence.id}); it does not show "
                      f"that {fitting_type(instrument)} scores agree, so add {fitting_type(instrument)} evidence")


@rule("evidence/correlation-as-agreement", "warning",
      source=cite(f"{S.BLAND_ALTMAN_1986} (correlation is not agreement)", f"{S.COSMIN_RISK_OF_BIAS_2020}, standards on the preferred statistical methods for reliability"))
def correlation_as_agreement(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A correlation is offered as agreement between raters or occasions.

    A correlation ignores constant offsets: a rater who adds five points to every score
    correlates perfectly with one who does not, yet the two never agree.
    A Pearson or Spearman correlation is acceptable only when the study also showed no
    systematic difference between raters or occasions (`no_systematic_difference: true`);
    otherwise report an absolute-agreement ICC or limits of agreement.

    **Passes**: `coefficient: pearson-r` with `no_systematic_difference: true`.

    **Fails**: `type: inter-rater`, `coefficient: pearson-r` and nothing about systematic differences.
    """
    for instrument, evidence, _ in evidence_pairs(plan):
        if evidence.coefficient in CORRELATIONS and evidence.type in REPEATED_TYPES and evidence.no_systematic_difference is not True:
            yield Hit(evidence.path + ("coefficient",),
                      f"evidence {evidence.id} of {instrument.id} offers a correlation ({evidence.coefficient} = "
                      f"{fmt(evidence.value)}) as {evidence.type} reliability without showing the absence of a systematic "
                      "offset; use an absolute-agreement ICC or limits of agreement")


@rule("evidence/unweighted-kappa-ordinal", "note",
      source=f"{S.COSMIN_RISK_OF_BIAS_2020}, standards on the preferred statistical methods for reliability (weighted kappa, with its weights stated, for ordinal scores)")
def unweighted_kappa_ordinal(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """An ordinal score is supported by unweighted kappa, or by weighted kappa with unstated weights.

    For ordered grades a one-step disagreement matters less than a four-step one; unweighted
    kappa counts them alike, and a weighted kappa's value depends on the weights (linear or
    quadratic), which must therefore be named.

    **Passes**: an ordinal grade with `coefficient: weighted-kappa-quadratic`.

    **Fails**: an ordinal grade with `coefficient: cohen-kappa` or `weighted-kappa`.
    """
    for instrument, evidence, _ in evidence_pairs(plan):
        if instrument.scale.type != "ordinal":
            continue
        if evidence.coefficient in UNWEIGHTED_KAPPAS:
            why = "ignores how far apart two grades are; report a weighted kappa and its weights"
        elif evidence.coefficient == "weighted-kappa":
            why = "does not say whether weights are linear or quadratic, and the value depends on it"
        else:
            continue
        yield Hit(evidence.path + ("coefficient",),
                  f"evidence {evidence.id} for the ordinal {instrument.id} reports {evidence.coefficient}, which {why}")


@rule("evidence/icc-form-unstated", "warning",
      source=cite(f"{S.KOO_LI_2016} (report the model, type and definition of an ICC)", f"{S.SHROUT_FLEISS_1979}"))
def icc_form_unstated(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """An ICC is quoted without its form.

    The same ratings give very different ICCs depending on the model (one-way, two-way), the
    type (one rating or the mean of k) and the definition (consistency or absolute agreement).
    Without the form nobody can tell whether the value applies to how the trial rates.

    **Passes**: `coefficient: ICC(2,1)` or `ICC(A,1)`.

    **Fails**: `coefficient: ICC`.
    """
    for instrument, evidence, _ in evidence_pairs(plan):
        if evidence.coefficient == "ICC":
            yield Hit(evidence.path + ("coefficient",),
                      f"evidence {evidence.id} for {instrument.id} quotes an ICC of {fmt(evidence.value)} without its form; "
                      "state it, e.g. ICC(2,1) for one rater, two-way random, absolute agreement")


@rule("evidence/average-icc-for-single-rating", "error", computed=True,
      source=f"{S.SHROUT_FLEISS_1979} (one rating versus the mean of k ratings; the k form is the Spearman-Brown step-up of the single form)")
def average_icc_for_single_rating(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """An average-of-k ICC is quoted for a trial that averages fewer ratings.

    An average-measures ICC describes the mean of k raters, which is more reliable than any
    single rating; a trial with one rating per visit gets the single-rating value, not the
    quoted one. The rule
    back-calculates the single-rating value with the inverse Spearman–Brown formula,
    r1 = rk / (k − (k − 1) rk), and steps it up to the trial's own number of raters.

    **Passes**: `coefficient: ICC(2,1)` with one rater per assessment; or `ICC(2,k)` over 2 raters with 2 raters per assessment.

    **Fails**: `coefficient: ICC(2,k)`, `averaged_over: 2`, `value: 0.88` with one rater per assessment (single-rating value 0.786).
    """
    from protolint.plan.formulas import spearman_brown

    def hits() -> Iterator[Hit]:
        for instrument, evidence, endpoints in evidence_pairs(plan):
            form = icc_form(evidence.coefficient)
            if form is None or not form.average:
                continue
            k = ratings_averaged(evidence)
            for endpoint in endpoints:
                m = trial_ratings(endpoint)
                if k is None:
                    yield Hit(evidence.path + ("coefficient",),
                              f"evidence {evidence.id} is an average-measures ICC but does not say over how many ratings; "
                              "add averaged_over so the single-rating value can be worked out")
                    break
                if m >= k:
                    continue
                single = single_from(evidence.value, k)
                at_trial = spearman_brown(single, m) if m > 1 else single
                stepped_up = "" if m == 1 else f", and {fmt(at_trial)} for the mean of the trial's {m} ratings"
                yield Hit(evidence.path + ("coefficient",),
                          f"evidence {evidence.id} quotes {evidence.coefficient} = {fmt(evidence.value)}, the mean of {k} ratings, "
                          f"but endpoint {endpoint.id} averages {m}; the single-rating value is "
                          f"{fmt(evidence.value)} / ({k} - {k - 1} x {fmt(evidence.value)}) = {fmt(single)}{stepped_up}; "
                          f"quote the single-rating form, or plan on this value — {PLANNING_AID}",
                          {"evidence": evidence.id, "endpoint": endpoint.id, "reported": evidence.value, "k_reported": k,
                           "formula": "inverse Spearman-Brown r1 = rk / (k - (k - 1) rk), then Spearman-Brown to m",
                           "single_rating": round(single, 4), "m_trial": m, "reliability_for_trial": round(at_trial, 4)})
                break
    yield from unique(hits())


def single_from(value: float, k: int) -> float:
    from protolint.plan.formulas import single_from_average

    return single_from_average(value, k)


@rule("evidence/consistency-icc-rotating-raters", "warning",
      source=cite(f"{S.MCGRAW_WONG_1996} (consistency and absolute-agreement ICCs)", f"{S.WEIR_2005} (ICC(2,·) counts systematic differences between raters as error, ICC(3,·) does not)", f"{S.KOO_LI_2016}"))
def consistency_icc_rotating_raters(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A consistency ICC is quoted where raters differ between participants or visits, or cut-offs apply.

    A consistency ICC (ICC(3,·), ICC(C,·)) ignores a constant offset between raters. That is
    harmless only when every comparison is within one rater. When raters rotate between
    participants or visits, or when a fixed cut-off decides eligibility or response, a
    lenient rater's offset becomes error, and an absolute-agreement ICC (ICC(2,·), ICC(A,·))
    is the relevant evidence.

    **Passes**: `coefficient: ICC(3,1)` for an endpoint with `rater_assignment: fixed-per-participant`, no cut-offs.

    **Fails**: `coefficient: ICC(3,1)` for an endpoint with `rater_assignment: rotating`.
    """
    def hits() -> Iterator[Hit]:
        for instrument, evidence, endpoints in evidence_pairs(plan):
            form = icc_form(evidence.coefficient)
            if form is None or not form.consistency:
                continue
            for endpoint in endpoints:
                reasons = []
                if endpoint.rater_assignment in ("rotating", "any-certified") or endpoint.same_rater_across_visits is False:
                    reasons.append("raters change between participants or visits")
                if endpoint.use and endpoint.use.thresholds:
                    reasons.append("fixed cut-offs are applied to the scores")
                if reasons:
                    yield Hit(evidence.path + ("coefficient",),
                              f"evidence {evidence.id} is a consistency ICC ({evidence.coefficient}), which ignores rater "
                              f"offsets, but for endpoint {endpoint.id} {' and '.join(reasons)}; cite an absolute-agreement ICC")
                    break
    yield from unique(hits())


@rule("evidence/value-outside-interval", "error",
      source="common practice (a point estimate lies inside its own confidence interval, lower bound first)")
def value_outside_interval(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A reported reliability lies outside its own confidence interval, or the interval's bounds are reversed.

    Every interval these studies report contains its estimate; an estimate outside it, or a
    lower bound above the upper one, is a transcription mistake, and every number worked out
    from the record (the trial's reliability, the precision rules, the sample size) inherits
    it. Check the figures against the publication.

    **Passes**: `value: 0.85, ci: [0.78, 0.90]`.

    **Fails**: `value: 0.85, ci: [0.88, 0.95]`, or `ci: [0.90, 0.78]`.
    """
    for instrument, evidence, _ in evidence_pairs(plan):
        if not evidence.ci or len(evidence.ci) != 2:
            continue
        low, high = evidence.ci
        if low > high:
            problem = f"its interval is written upper bound first ({fmt(low)} to {fmt(high)})"
        elif not low <= evidence.value <= high:
            problem = f"the value {fmt(evidence.value)} lies outside its own interval {fmt(low)} to {fmt(high)}"
        else:
            continue
        yield Hit(evidence.path + ("ci",),
                  f"evidence {evidence.id} for {instrument.id}: {problem}; check the figures against the publication",
                  {"evidence": evidence.id, "value": evidence.value, "ci": [low, high]})
