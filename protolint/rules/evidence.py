"""Evidence rules: the reliability evidence offered for each instrument fits the trial.

Reliability is a property of scores obtained in a given way from given people, not of an
instrument. These rules ask whether each record measures the right kind of reproducibility,
with a coefficient that suits the score, in a study like the trial, precise enough to plan on.
"""

from __future__ import annotations

from typing import Iterator

from protolint.findings import Severity
from protolint.plan.model import Endpoint, Evidence, Instrument, Plan
from protolint.rules.evidence_fit import (
    CORRELATIONS,
    KAPPAS,
    REPEATED_TYPES,
    UNWEIGHTED_KAPPAS,
    evidence_pairs,
    fitting_evidence,
    fitting_type,
    icc_form,
    individual_use,
    ratings_averaged,
    same_text,
    single_rating_value,
    trial_ratings,
    trial_reliability,
    unique,
)
from protolint.rules._working import PLANNING_AID, fmt
from protolint.rules.registry import Hit, RuleContext, Threshold, rule

_GROUP_MIN = Threshold("min_reliability", 0.70, "Lowest reliability accepted for scores used only to compare groups.", 0.0, 1.0)
_INDIVIDUAL_MIN = Threshold("min_reliability", 0.90, "Lowest reliability accepted when a score decides something about one participant.", 0.0, 1.0)


def _key_endpoints(endpoints: tuple[Endpoint, ...]) -> tuple[Endpoint, ...]:
    return tuple(e for e in endpoints if e.role in ("primary", "key-secondary"))


@rule("evidence/none-for-endpoint", "error",
      source="ICH E9 (1998) 2.2.2 (primary variable reliable in the trial population); SPIRIT 2013 item 18a")
def none_for_endpoint(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A primary or key secondary endpoint rests on an instrument with no reproducibility evidence.

    An endpoint that carries the trial's main claims must rest on scores shown to be
    reproducible: agreement between raters for an instrument scored by people, agreement over
    repeated occasions (test-retest) for a self-report or device. The instrument needs at
    least one `evidence` record of that type. (Internal consistency alone is reported by
    `evidence/alpha-as-rater-evidence` instead.)

    **Passes**: a clinician-rated instrument with an `inter-rater` record, used by the primary endpoint.

    **Fails**: the primary endpoint's clinician-rated instrument lists no `evidence` at all.
    """
    def hits() -> Iterator[Hit]:
        for instrument in plan.instruments:
            key = _key_endpoints(plan.endpoints_for(instrument.id))
            if not key:
                continue
            wanted = fitting_type(instrument)
            if any(e.type == wanted for e in instrument.evidence):
                continue
            if instrument.evidence and all(e.type == "internal-consistency" for e in instrument.evidence):
                continue  # evidence/alpha-as-rater-evidence explains this case
            where = instrument.path + (("evidence",) if instrument.evidence else ("id",))
            yield Hit(where, f"instrument {instrument.id} carries endpoint {key[0].id} ({key[0].role}) but no {wanted} "
                             f"reliability evidence is given; cite a {wanted} study or plan one before the trial starts",
                      {"instrument": instrument.id, "endpoint": key[0].id, "evidence_type_needed": wanted})
    yield from unique(hits())


def _threshold_hits(plan: Plan, ctx: RuleContext, individual: bool) -> Iterator[Hit]:
    minimum = float(ctx.thresholds["min_reliability"])
    for endpoint in plan.endpoints:
        if individual_use(endpoint) != individual:
            continue
        found = trial_reliability(plan, endpoint)
        if found is None or found.reliability >= minimum:
            continue
        evidence = found.evidence
        how = "one rating" if found.ratings == 1 else f"the mean of {found.ratings} independent ratings"
        stepped = "" if found.single == evidence.value else f" (single-rating value {fmt(found.single)} from the reported {fmt(evidence.value)})"
        use = "decides about individual participants" if individual else "compares groups"
        yield Hit(evidence.path + ("value",),
                  f"endpoint {endpoint.id} {use} with {how} per assessment, for which evidence {evidence.id} supports a "
                  f"reliability of {fmt(found.reliability)}{stepped}, below {fmt(minimum)}; raise it by averaging raters, "
                  "better training, or find stronger evidence",
                  {"endpoint": endpoint.id, "evidence": evidence.id, "reliability": round(found.reliability, 4),
                   "single_rating": round(found.single, 4), "ratings_averaged": found.ratings, "minimum": minimum})


@rule("evidence/below-group-threshold", "warning", thresholds=[_GROUP_MIN],
      source="Nunnally & Bernstein 1994, Psychometric Theory, ch. 7 (about 0.70 for group research); COSMIN criteria, Prinsen et al. 2018 (ICC or weighted kappa >= 0.70)")
def below_group_threshold(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The reliability the evidence supports for a group comparison is below the minimum.

    Under roughly 0.70 measurement error takes so large a share of the score variance that a
    between-group comparison needs far more participants. The value compared is the one that applies to how the trial rates: the evidence's
    single-rating value (average-measures ICCs are stepped down), stepped up by Spearman–Brown
    to the trial's number of independent raters per assessment. The least favourable fitting
    record is used. Endpoints whose scores decide about individuals are judged by
    `evidence/below-individual-threshold` instead.

    **Passes**: one rater per assessment, evidence `ICC(2,1)` = 0.82.

    **Fails**: one rater per assessment, evidence `ICC(2,1)` = 0.62.
    """
    yield from unique(_threshold_hits(plan, ctx, individual=False))


@rule("evidence/below-individual-threshold", "warning", thresholds=[_INDIVIDUAL_MIN],
      source="Nunnally & Bernstein 1994, Psychometric Theory, ch. 7 (0.90 minimum, 0.95 desirable, for decisions about individuals)")
def below_individual_threshold(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Scores decide about individual participants but their reliability is below the minimum.

    Eligibility cut-offs, responder classification, dose changes and stopping rules apply a
    score to one person, where error is not averaged away; classic psychometric guidance asks
    for at least 0.90 there. Applies to endpoints with `use.individual_decisions: true` or
    `use.thresholds`; the value compared is worked out as in `evidence/below-group-threshold`.

    **Passes**: an eligibility cut-off on a score whose trial reliability is 0.92.

    **Fails**: an eligibility cut-off on a score whose evidence, stepped down to one rater, is 0.79.
    """
    yield from unique(_threshold_hits(plan, ctx, individual=True))


@rule("evidence/lower-bound-below-threshold", "note",
      thresholds=[Threshold("group_minimum", 0.70, "Minimum for group comparisons, applied to the lower confidence bound.", 0.0, 1.0),
                  Threshold("individual_minimum", 0.90, "Minimum for decisions about individuals, applied to the lower confidence bound.", 0.0, 1.0)],
      source="Koo & Li 2016, J Chiropr Med 15:155 (judge an ICC by its 95 % interval); Kottner et al. 2011, GRRAS item 13")
def lower_bound_below_threshold(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The evidence's confidence interval reaches below the reliability the trial needs.

    A small study can report an estimate that clears the minimum while its interval still
    admits a reliability far below it. The lower bound is moved to the trial's way of rating exactly as the point
    estimate is (stepped down from an average form, stepped up to the trial's raters) and
    compared with the minimum for the endpoint's use. A record with neither an interval nor a
    number of subjects cannot be judged for precision at all, which is also noted.

    **Passes**: `value: 0.86, ci: [0.78, 0.92]` for a group comparison.

    **Fails**: `value: 0.80, ci: [0.55, 0.91]` for a group comparison.
    """
    from protolint.rules._working import single_from_average, spearman_brown

    def hits() -> Iterator[Hit]:
        for endpoint in plan.endpoints:
            instrument = plan.instrument(endpoint.instrument)
            minimum = float(ctx.thresholds["individual_minimum" if individual_use(endpoint) else "group_minimum"])
            for evidence in fitting_evidence(instrument):
                if not evidence.ci:
                    if evidence.subjects is None:
                        yield Hit(evidence.path + ("value",),
                                  f"evidence {evidence.id} for {instrument.id} gives neither a confidence interval nor "
                                  "the number of subjects, so its precision cannot be judged; add both")
                    continue
                low = evidence.ci[0]
                k = ratings_averaged(evidence)
                if k and k > 1:
                    low = single_from_average(max(low, 0.0), k)
                m = trial_ratings(endpoint)
                low_trial = spearman_brown(low, m) if m > 1 else low
                if low_trial < minimum:
                    yield Hit(evidence.path + ("ci",),
                              f"the interval of evidence {evidence.id} reaches down to {fmt(low_trial)} for the way "
                              f"endpoint {endpoint.id} is rated, below {fmt(minimum)}; the study cannot rule out "
                              "reliability too low for the endpoint's use",
                              {"evidence": evidence.id, "endpoint": endpoint.id, "ci_low_reported": evidence.ci[0],
                               "ci_low_for_trial": round(low_trial, 4), "minimum": minimum})
    yield from unique(hits())


@rule("evidence/kappa-for-interval-score", "error",
      source="Mokkink et al. 2020, BMC Med Res Methodol 20:293, COSMIN Risk of Bias tool, reliability box, statistical standards (ICC for continuous scores)")
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
      source="Mokkink et al. 2010 COSMIN taxonomy (internal consistency and reliability are distinct properties); Mokkink et al. 2020, COSMIN Risk of Bias tool")
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
      source="Bland & Altman 1986, Lancet i:307 (correlation is not agreement); Mokkink et al. 2020, COSMIN Risk of Bias tool (correlation adequate only without systematic change)")
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
      source="Mokkink et al. 2020, COSMIN Risk of Bias tool (weighted kappa with the weighting scheme stated for ordinal scores)")
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
      source="Koo & Li 2016, J Chiropr Med 15:155 (report model, type and definition); Shrout & Fleiss 1979, Psychol Bull 86:420")
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
      source="Shrout & Fleiss 1979, Psychol Bull 86:420 (single versus mean-of-k ICC; the k form is the Spearman–Brown step-up)")
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
    from protolint.rules._working import spearman_brown

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
    from protolint.rules._working import single_from_average

    return single_from_average(value, k)


@rule("evidence/consistency-icc-rotating-raters", "warning",
      source="McGraw & Wong 1996, Psychol Methods 1:30 (consistency versus absolute agreement) [from memory]; Koo & Li 2016, J Chiropr Med 15:155")
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


def _repeated(evidence: Evidence) -> bool:
    return evidence.type in REPEATED_TYPES


@rule("evidence/population-differs", "warning",
      source="Kottner et al. 2011, J Clin Epidemiol 64:96, GRRAS item 3; Mulsant et al. 2002, Am J Psychiatry 159:1598 (ICC depends on the range of patients rated); ICH E9 2.2.2")
def population_differs(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Reliability evidence comes from another population than the trial's, or the population is not described.

    Reliability depends on the spread of true scores: a study that included mild cases
    usually reports a higher ICC than a trial restricted to moderate-to-severe disease will
    see. Each field given both in the evidence's `population` and in `study.population`
    (condition, severity, age group, setting, language) is compared.

    **Passes**: evidence and trial both `severity: moderate to severe`.

    **Fails**: evidence `severity: mild to severe`, trial `severity: moderate to severe`.
    """
    trial = plan.study.population
    for instrument, evidence, _ in evidence_pairs(plan):
        if not _repeated(evidence):
            continue
        if evidence.population is None:
            yield Hit(evidence.path + ("id",),
                      f"evidence {evidence.id} for {instrument.id} does not describe the population it was obtained in; "
                      "add its population so it can be compared with the trial's")
            continue
        if trial is None:
            continue
        for name in evidence.population.FIELDS:
            theirs, ours = getattr(evidence.population, name), getattr(trial, name)
            if theirs is not None and ours is not None and not same_text(str(theirs), str(ours)):
                yield Hit(evidence.population.path + (name,),
                          f"evidence {evidence.id} for {instrument.id} was obtained with {name.replace('_', ' ')} "
                          f"'{theirs}', the trial enrols '{ours}'; reliability may differ, so justify the transfer "
                          "or measure it in the trial population",
                          {"evidence": evidence.id, "field": name, "evidence_value": theirs, "trial_value": ours})


@rule("evidence/rater-type-differs", "warning",
      thresholds=[Threshold("expert_years", 5, "Years of experience below which a pool's raters are not comparable with the experts of an evidence study.", 0, 40)],
      source="Kottner et al. 2011, J Clin Epidemiol 64:96, GRRAS items 4 and 12 (rater population, training and experience)")
def rater_type_differs(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Raters in the evidence study differ from the raters the trial qualifies.

    Scale developers and senior specialists usually agree more closely than the site raters a
    trial recruits, so their figures flatter what the trial will see. The evidence's `rater_profession` is compared with the pool's accepted
    professions, and evidence from `expert` raters is compared with the pool's minimum
    experience (`expert_years`). Evidence that describes neither is reported too.

    **Passes**: evidence from trained dermatologists, pool of dermatologists with 5 years' experience.

    **Fails**: evidence from expert dermatologists, pool admitting raters with 2 years' experience.
    """
    expert_years = float(ctx.thresholds["expert_years"])

    def hits() -> Iterator[Hit]:
        for instrument, evidence, endpoints in evidence_pairs(plan):
            if evidence.type not in ("inter-rater", "intra-rater") or not instrument.is_rated_by_people:
                continue
            if evidence.rater_profession is None and evidence.rater_experience is None:
                yield Hit(evidence.path + ("id",),
                          f"evidence {evidence.id} for {instrument.id} does not say who rated; add rater_profession and rater_experience")
                continue
            for endpoint in endpoints:
                pool = plan.pool(endpoint.rater_pool)
                q = pool.qualifications
                if q is None:
                    continue
                theirs = evidence.rater_profession
                if theirs and q.profession and not any(theirs.lower() in p.lower() or p.lower() in theirs.lower() for p in q.profession):
                    yield Hit(evidence.path + ("rater_profession",),
                              f"evidence {evidence.id} was rated by raters described as {theirs!r}, but pool {pool.id} accepts "
                              f"{', '.join(q.profession)}; show the evidence holds for the trial's raters")
                    break
                years = q.min_experience_years
                if evidence.rater_experience == "expert" and (years is None or years < expert_years):
                    admitted = "any experience" if years is None else f"{fmt(years)} years' experience"
                    yield Hit(evidence.path + ("rater_experience",),
                              f"evidence {evidence.id} comes from expert raters, but pool {pool.id} admits raters with "
                              f"{admitted} (below {fmt(expert_years)}); expect lower agreement, or confirm it in the trial's certification data",
                              {"evidence": evidence.id, "pool": pool.id, "pool_min_years": years, "expert_years": expert_years})
                    break
    yield from unique(hits())


_MODE_OF_RATING = {"central-remote": "remote"}


def _trial_mode(instrument: Instrument, endpoint: Endpoint) -> str | None:
    if instrument.is_rated_by_people:
        return _MODE_OF_RATING.get(endpoint.rating_mode, endpoint.rating_mode)
    return instrument.administration


@rule("evidence/administration-differs", "warning",
      source="FDA 2009 PRO guidance (a changed mode of administration needs evidence that measurement properties hold); Mokkink et al. 2020, COSMIN Risk of Bias tool, design standard on similar measurement conditions")
def administration_differs(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Reliability evidence was obtained with another mode of administration than the trial uses.

    Rating a participant live, from video, from photographs or over the telephone are
    different measurements; so are paper and electronic self-report. Evidence should match the
    trial's mode, or equivalence should be shown. For instruments rated by people the trial's
    mode is the endpoint's `rating_mode`; for others, the instrument's `administration`.

    **Passes**: evidence `administration: live`, endpoint `rating_mode: live`.

    **Fails**: evidence `administration: live`, endpoint `rating_mode: video`.
    """
    def hits() -> Iterator[Hit]:
        for instrument, evidence, endpoints in evidence_pairs(plan):
            if not _repeated(evidence) or evidence.administration is None:
                continue
            for endpoint in endpoints:
                mode = _trial_mode(instrument, endpoint)
                if mode is not None and mode != evidence.administration:
                    yield Hit(evidence.path + ("administration",),
                              f"evidence {evidence.id} for {instrument.id} was obtained by {evidence.administration} "
                              f"administration, but endpoint {endpoint.id} is rated by {mode}; show the modes are equivalent "
                              "or measure reliability in the trial's mode")
                    break
    yield from unique(hits())


@rule("evidence/version-differs", "warning",
      source="FDA 2009 PRO guidance (modified instruments need evidence that measurement properties are preserved); Kottner et al. 2011, GRRAS item 2")
def version_differs(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Reliability evidence was obtained with another version or language of the instrument.

    Changed wording, anchors, scoring or translation can change how raters and participants
    respond. The evidence's `instrument_version` and `language` are compared with the
    instrument's.

    **Passes**: evidence `instrument_version: "1.2"`, instrument `version: "1.2"`.

    **Fails**: evidence `instrument_version: "1.0"`, instrument `version: "1.2"`.
    """
    for instrument, evidence, _ in evidence_pairs(plan):
        if not _repeated(evidence):
            continue
        if evidence.instrument_version and instrument.version and evidence.instrument_version != instrument.version:
            yield Hit(evidence.path + ("instrument_version",),
                      f"evidence {evidence.id} used version {evidence.instrument_version} of {instrument.id}; the trial uses "
                      f"version {instrument.version}; show the change does not affect reliability")
        if evidence.language and instrument.language and not same_text(evidence.language, instrument.language):
            yield Hit(evidence.path + ("language",),
                      f"evidence {evidence.id} used the '{evidence.language}' version of {instrument.id}; the trial uses "
                      f"'{instrument.language}'; cite evidence for the trial's language version")


@rule("evidence/study-too-small", "warning", computed=True,
      thresholds=[Threshold("min_subjects", 30, "Fewest subjects a reliability study should have rated.", 2, 10000),
                  Threshold("max_ci_width", 0.30, "Widest acceptable 95 % interval of an ICC, as planned with Bonett's formula.", 0.01, 1.0)],
      source="Bonett 2002, Stat Med 21:1331 (interval width of an ICC from subjects, raters and the estimate); Mokkink et al. 2020 (COSMIN sample-size standard); 30 subjects: common practice")
def study_too_small(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A reliability study rated too few subjects to pin its estimate down.

    Small reliability studies give intervals that run from poor to excellent. For an ICC the
    expected full width of the 95 % interval is worked out from the subjects n, the raters k
    and the single-rating estimate r (Bonett 2002):
    w = 2 z (1 − r)(1 + (k − 1) r) √(2 / (k (k − 1)(n − 1))), with the number of subjects that
    would reach `max_ci_width`. Any rater or retest study with fewer than `min_subjects` is
    reported as well.

    **Passes**: ICC(2,1) = 0.80 from 60 subjects and 3 raters (width ≈ 0.15).

    **Fails**: ICC(2,1) = 0.80 from 12 subjects and 2 raters (width ≈ 0.43; about 28 subjects needed for 0.30).
    """
    from protolint.rules._working import bonett_subjects, bonett_width

    min_subjects = int(ctx.thresholds["min_subjects"])
    max_width = float(ctx.thresholds["max_ci_width"])
    for instrument, evidence, _ in evidence_pairs(plan):
        if not _repeated(evidence) or evidence.subjects is None:
            continue
        n, k = evidence.subjects, evidence.raters
        if icc_form(evidence.coefficient) is not None and k is not None and k >= 2 and n >= 2:
            r = min(max(single_rating_value(evidence), 0.0), 0.999)
            width = bonett_width(r, k, n)
            if width <= max_width and n >= min_subjects:
                continue
            needed = bonett_subjects(r, k, max_width)
            yield Hit(evidence.path + ("subjects",),
                      f"evidence {evidence.id} for {instrument.id} rated {n} subjects with {k} raters; at r = {fmt(r)} its 95 % "
                      f"interval is about {fmt(width, 2)} wide (Bonett 2002), against at most {fmt(max_width, 2)}; about "
                      f"{needed} subjects would be needed — {PLANNING_AID}",
                      {"evidence": evidence.id, "subjects": n, "raters": k, "single_rating_estimate": round(r, 4),
                       "formula": "Bonett 2002: w = 2 z (1 - r)(1 + (k - 1) r) sqrt(2 / (k (k - 1)(n - 1)))",
                       "ci_width": round(width, 4), "max_ci_width": max_width, "subjects_for_max_width": needed,
                       "min_subjects": min_subjects, "confidence": 0.95})
        elif n < min_subjects:
            yield Hit(evidence.path + ("subjects",),
                      f"evidence {evidence.id} for {instrument.id} rated only {n} subjects (fewer than {min_subjects}); its "
                      "estimate is too imprecise to plan on",
                      {"evidence": evidence.id, "subjects": n, "min_subjects": min_subjects})


_CHANGE_CUTOFFS = ("responder", "dose-change", "withdrawal", "safety-stop")


@rule("evidence/error-exceeds-threshold", "warning", computed=True,
      source="Mokkink et al. 2020, COSMIN Risk of Bias tool, measurement-error standards (SEM, SDC); de Vet et al. 2006, Health Qual Life Outcomes 4:54 (SDC = 1.96 x sqrt(2) x SEM); Weir 2005, J Strength Cond Res 19:231")
def error_exceeds_threshold(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A responder or decision threshold is smaller than the score's measurement error.

    A change smaller than the smallest detectable change (SDC) cannot be told apart from
    measurement noise in one participant, so a responder cut-off inside it classifies people
    largely at random. SEM = SD √(1 − r), from the evidence's own SEM when given or from the
    instrument's `score_sd` and the reliability the trial will have; SDC = 1.96 √2 SEM. For an
    eligibility cut-off without independent confirmation, the ±1.96 SEM band around it is
    given as a note. When neither an SEM nor `score_sd` is given, a note asks for them.

    **Passes**: responder threshold 8 points, SDC 6.2 points.

    **Fails**: responder threshold 4 points, SD 7.5, trial reliability 0.786 → SEM 3.47, SDC 9.62 points.
    """
    for endpoint in plan.endpoints:
        if endpoint.use is None or not endpoint.use.thresholds:
            continue
        instrument = plan.instrument(endpoint.instrument)
        if instrument.scale.type != "interval":
            continue
        found = trial_reliability(plan, endpoint)
        sem_value, basis = _sem_for(instrument, found)
        if sem_value is None:
            yield Hit(endpoint.use.path + ("thresholds",),
                      f"endpoint {endpoint.id} applies cut-offs to {instrument.id} scores but its measurement error is unknown; "
                      "give the instrument's score_sd or the evidence's sem", severity=Severity.NOTE)
            continue
        from protolint.rules._working import Z95_ROUNDED, smallest_detectable_change

        sdc = smallest_detectable_change(sem_value)
        for index, cutoff in enumerate(endpoint.use.thresholds):
            facts = {"endpoint": endpoint.id, "cutoff": cutoff.kind, "threshold": cutoff.value, "sem": round(sem_value, 3),
                     "sem_basis": basis, "formula": "SEM = SD x sqrt(1 - r); SDC = 1.96 x sqrt(2) x SEM",
                     "sdc": round(sdc, 3)}
            where = cutoff.path + ("value",)
            if cutoff.kind in _CHANGE_CUTOFFS and sdc > cutoff.value:
                yield Hit(where, f"the {cutoff.kind} threshold of endpoint {endpoint.id} is a change of {fmt(cutoff.value)} "
                                 f"points, smaller than the smallest detectable change {fmt(sdc, 2)} (SEM {fmt(sem_value, 2)}, "
                                 f"{basis}); raise the threshold, average more ratings, or classify on the group level — "
                                 f"{PLANNING_AID}", facts)
            elif cutoff.kind == "eligibility" and cutoff.confirmation in (None, "none"):
                band = Z95_ROUNDED * sem_value
                facts["band_95"] = round(band, 3)
                yield Hit(where, f"an eligibility score of {fmt(cutoff.value)} on {instrument.id} is uncertain by about "
                                 f"±{fmt(band, 1)} points (1.96 x SEM {fmt(sem_value, 2)}), so participants near the cut-off are "
                                 f"enrolled or excluded largely by chance; consider confirming eligibility scores — {PLANNING_AID}",
                          facts, severity=Severity.NOTE)


def _sem_for(instrument: Instrument, found: object) -> tuple[float | None, str]:
    from protolint.rules._working import sem

    if found is not None and instrument.score_sd is not None:
        reliability = found.reliability  # type: ignore[attr-defined]
        return sem(instrument.score_sd, reliability), f"SD {fmt(instrument.score_sd)} and reliability {fmt(reliability)}"
    for evidence in instrument.evidence:
        if evidence.sem is not None:
            return evidence.sem, f"the SEM reported by {evidence.id}"
    return None, ""
