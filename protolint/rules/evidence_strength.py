"""Evidence strength: is there reproducibility evidence for each key endpoint, and is it high and precise enough?

These rules take the evidence the plan cites at its word about *what* it measured and ask
how much it supports: a reliability above the minimum for the endpoint's use, an interval
that does not reach below it, a study large enough to plan on, and a measurement error
smaller than the cut-offs applied to one participant's score. Their ids keep the released
``evidence/`` prefix.
"""

from __future__ import annotations

from typing import Iterator

from protolint.findings import Severity
from protolint.plan.model import Endpoint, Evidence, Instrument, Plan
from protolint.plan.reliability import (
    REPEATED_TYPES,
    evidence_pairs,
    fitting_evidence,
    fitting_type,
    icc_form,
    individual_use,
    ratings_averaged,
    single_rating_value,
    trial_ratings,
    trial_reliability,
)
from protolint.rules._working import unique
from protolint.rules._working import PLANNING_AID, fmt
from protolint.rules import sources as S
from protolint.rules.sources import cite
from protolint.rules.registry import Hit, RuleContext, Threshold, rule

_GROUP_MIN = Threshold("min_reliability", 0.70, "Lowest reliability accepted for scores used only to compare groups.", 0.0, 1.0)
_INDIVIDUAL_MIN = Threshold("min_reliability", 0.90, "Lowest reliability accepted when a score decides something about one participant.", 0.0, 1.0)


def _key_endpoints(endpoints: tuple[Endpoint, ...]) -> tuple[Endpoint, ...]:
    return tuple(e for e in endpoints if e.role in ("primary", "key-secondary"))


@rule("evidence/none-for-endpoint", "error",
      source=cite(f"{S.ICH_E9}, section 2.2.2 (the primary variable reliable and valid in the trial population)", f"{S.LACHIN_2004} (the reliability of the outcome and eligibility measures is a prime consideration in choosing them)"))
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
      source=cite(f"{S.NUNNALLY_BERNSTEIN_1994} (about 0.70 for research comparing groups)", f"{S.COSMIN_GUIDELINE_2018} (criteria for good measurement properties: ICC or weighted kappa of at least 0.70)"))
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
      source=f"{S.NUNNALLY_BERNSTEIN_1994} (at least 0.90, and 0.95 desirable, when scores decide about individuals)")
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
      source=cite(f"{S.KOO_LI_2016} (judge an ICC by its 95% confidence interval)", f"{S.GRRAS_2011}, item 13 (estimates with their statistical uncertainty)"))
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
    from protolint.plan.formulas import single_from_average, spearman_brown

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


@rule("evidence/study-too-small", "warning", computed=True,
      thresholds=[Threshold("min_subjects", 30, "Fewest subjects a reliability study should have rated.", 2, 10000),
                  Threshold("max_ci_width", 0.30, "Widest acceptable 95% interval of an ICC, as planned with Bonett's formula.", 0.01, 1.0)],
      source=cite(f"{S.BONETT_2002} (expected width of the 95% interval of an ICC from subjects, raters and the estimate)", "30 subjects at least: common practice"))
def study_too_small(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A reliability study rated too few subjects to pin its estimate down.

    Small reliability studies give intervals that run from poor to excellent. For an ICC the
    expected full width of the 95% interval is worked out from the subjects n, the raters k
    and the single-rating estimate r (Bonett 2002):
    w = 2 z (1 − r)(1 + (k − 1) r) √(2 / (k (k − 1)(n − 1))), with the number of subjects that
    would reach `max_ci_width`. Any rater or retest study with fewer than `min_subjects` is
    reported as well.

    **Passes**: ICC(2,1) = 0.80 from 60 subjects and 3 raters (width ≈ 0.15).

    **Fails**: ICC(2,1) = 0.80 from 12 subjects and 2 raters (width ≈ 0.43; about 28 subjects needed for 0.30).
    """
    from protolint.plan.formulas import bonett_subjects, bonett_width

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
                      f"evidence {evidence.id} for {instrument.id} rated {n} subjects with {k} raters; at r = {fmt(r)} its 95% "
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
      source=cite(f"{S.DE_VET_2006} (smallest detectable change, distinct from the minimal important change)", f"{S.WEIR_2005} (SEM from the ICC; the smallest difference that shows a real change in one person)", f"{S.COSMIN_RISK_OF_BIAS_2020}, standards on measurement error"))
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
        from protolint.plan.formulas import Z95_ROUNDED, smallest_detectable_change

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
    from protolint.plan.formulas import sem

    if found is not None and instrument.score_sd is not None:
        reliability = found.reliability  # type: ignore[attr-defined]
        return sem(instrument.score_sd, reliability), f"SD {fmt(instrument.score_sd)} and reliability {fmt(reliability)}"
    for evidence in instrument.evidence:
        if evidence.sem is not None:
            return evidence.sem, f"the SEM reported by {evidence.id}"
    return None, ""


def _repeated(evidence: Evidence) -> bool:
    return evidence.type in REPEATED_TYPES
