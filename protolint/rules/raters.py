"""Rater rules: who may rate, and how they show they can before they do."""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Plan, RaterCertification
from protolint.plan.timeline import certification_expiry
from protolint.rules import sources as S
from protolint.rules.sources import cite
from protolint.wording import plural
from protolint.rules.registry import Hit, RuleContext, Threshold, rule


@rule("raters/no-certification-criterion", "error",
      source=cite(f"{S.E6}, Annex 1 section 2.3.2 (training corresponds to the delegated trial activities)", "certification against reference cases with a pass mark: common practice"))
def no_certification_criterion(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rater pool has no measurable certification pass criterion.

    Certification only separates raters who can score the instrument from those who cannot if
    the pass rule is explicit and measurable: a minimum coefficient against reference scores,
    or a maximum deviation from the reference total. A pool whose instruments are rated by
    people needs `certification.criterion` with `minimum` (and its `coefficient`) or
    `max_deviation`.

    **Passes**: `criterion: {coefficient: "ICC(2,1)", minimum: 0.80}`.

    **Fails**: a pool with `certification: {method: recorded-cases, cases: 10}` and no criterion.
    """
    for pool in plan.people_pools():
        certification = pool.certification
        criterion = certification.criterion if certification else None
        measurable = criterion is not None and (
            (criterion.minimum is not None and criterion.coefficient is not None) or criterion.max_deviation is not None
        )
        if not measurable:
            where = certification.path if certification else pool.path + ("id",)
            what = "no certification" if certification is None else "a certification without a measurable pass criterion"
            yield Hit(where, f"rater pool {pool.id} has {what}; state the coefficient and minimum, or the largest "
                             "allowed deviation from the reference scores, that a rater must reach")



@rule("raters/no-qualifications", "error",
      source=cite(f"{S.E6}, principle 5.1 (individuals qualified by education, training and experience)", f"{S.KOBAK_2004} (academic credentials alone do not ensure rating competence)"))
def no_qualifications(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rater pool has no written minimum qualifications.

    Sites delegate rating to whoever is available unless the plan says who may rate: the
    accepted professions or licences and the clinical experience with the population. A pool
    needs `qualifications` with at least `profession` or `min_experience_years`.

    **Passes**: `qualifications: {profession: [dermatologist], min_experience_years: 2}`.

    **Fails**: a pool without `qualifications`.
    """
    for pool in plan.people_pools():
        q = pool.qualifications
        if q is None or (not q.profession and q.min_experience_years is None):
            where = q.path if q is not None else pool.path + ("id",)
            yield Hit(where, f"rater pool {pool.id} does not say who may rate; state the accepted professions and the "
                             "minimum experience with the population")


@rule("raters/unqualified-rater", "error",
      source=f"{S.E6}, principle 5.1 (individuals qualified by education, training and experience) and Annex 1 section 2.3.2 (delegated staff appropriately qualified)")
def unqualified_rater(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rater on the roster does not meet the qualifications of their pool.

    The roster's `profession` must be one the pool accepts, and `experience_years` at least the
    pool's minimum. Ratings by an unqualified rater are a deviation that cannot be repaired.

    **Passes**: a dermatologist with 4 years' experience in a pool requiring dermatologists with 2.

    **Fails**: a nurse in a pool that accepts dermatologists only, or 1 year against a minimum of 2.
    """
    for rater in plan.roster:
        q = plan.pool(rater.pool).qualifications
        if q is None:
            continue
        if rater.profession and q.profession and not any(
                rater.profession.lower() in p.lower() or p.lower() in rater.profession.lower() for p in q.profession):
            yield Hit(rater.path + ("profession",),
                      f"rater {rater.id} is a {rater.profession}; pool {rater.pool} accepts {', '.join(q.profession)}")
        if rater.experience_years is not None and q.min_experience_years is not None and rater.experience_years < q.min_experience_years:
            yield Hit(rater.path + ("experience_years",),
                      f"rater {rater.id} has {rater.experience_years:g} years' experience; pool {rater.pool} requires "
                      f"{q.min_experience_years:g}",
                      {"rater": rater.id, "experience_years": rater.experience_years, "minimum": q.min_experience_years})


def _certifications(plan: Plan, rater, instrument_id: str):
    return [c for c in rater.certifications if c.instrument == instrument_id]


@rule("raters/certified-after-first-rating", "error", computed=True,
      source=f"{S.E6}, Appendix C, essential records table (trial-specific training records and the delegation of activities in place before the trial starts) and Annex 1 section 2.3.2")
def certified_after_first_rating(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rater rates before being certified on an instrument of their pool.

    A rating made before certification cannot be repaired afterwards. For each rater with a
    `first_rating` date and each instrument of their pool, the earliest certification must
    be on or before that date; a missing certification is reported at the rater.

    **Passes**: certified 2026-08-10, first rating 2026-09-01.

    **Fails**: certified 2026-09-05, first rating 2026-09-03.
    """
    for rater in plan.roster:
        if rater.first_rating is None:
            continue
        for instrument_id in plan.pool(rater.pool).instruments:
            if not plan.instrument(instrument_id).is_rated_by_people:
                continue
            held = _certifications(plan, rater, instrument_id)
            if not held:
                yield Hit(rater.path + ("first_rating",),
                          f"rater {rater.id} starts rating on {rater.first_rating.isoformat()} but holds no certification on "
                          f"{instrument_id}", {"rater": rater.id, "instrument": instrument_id})
                continue
            first = min(held, key=lambda c: c.date)
            if first.date > rater.first_rating:
                late = (first.date - rater.first_rating).days
                yield Hit(first.path + ("date",),
                          f"rater {rater.id} is certified on {instrument_id} on {first.date.isoformat()}, {late} days after "
                          f"their first rating on {rater.first_rating.isoformat()}; ratings before certification are "
                          "deviations — certify before rating or move the first rating",
                          {"rater": rater.id, "instrument": instrument_id, "certified": first.date.isoformat(),
                           "first_rating": rater.first_rating.isoformat(), "days_late": late})


@rule("raters/certification-expired", "error", computed=True,
      source=cite("common practice (certification valid for a stated interval, often a year)", f"{S.E6}, Annex 1 section 2.3.2"))
def certification_expired(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rater's latest certification has expired as of the check date.

    A certification is valid until its `expires` date or, when none is given, for the pool's
    `recertification.interval_months` from its date. Expiry is judged as of `--as-of`
    (default: the plan's date), never the wall clock.

    **Passes**: certified 2026-08-10, 12-month validity, checked as of 2027-01-15.

    **Fails**: certified 2025-08-10, 12-month validity, checked as of 2026-09-01.
    """
    for rater in plan.roster:
        pool = plan.pool(rater.pool)
        months = pool.recertification.interval_months if pool.recertification else None
        latest: dict[str, RaterCertification] = {}
        for cert in rater.certifications:
            if cert.instrument not in latest or cert.date > latest[cert.instrument].date:
                latest[cert.instrument] = cert
        for cert in latest.values():
            expires = certification_expiry(cert, months)
            if expires is not None and expires <= ctx.as_of:
                yield Hit(cert.path + ("date",),
                          f"rater {rater.id}'s certification on {cert.instrument} from {cert.date.isoformat()} expired on "
                          f"{expires.isoformat()} (checked as of {ctx.as_of.isoformat()}); recertify before the next rating",
                          {"rater": rater.id, "instrument": cert.instrument, "expires": expires.isoformat(),
                           "as_of": ctx.as_of.isoformat()})


@rule("raters/certified-on-other-version", "warning",
      source=f"{S.E6}, Annex 1 section 2.3.2 (training corresponds to the delegated trial activities)")
def certified_on_other_version(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rater's certification names another version of the instrument than the trial uses.

    Anchors, conventions and scoring change between versions; a rater certified on the old
    one applies the old rules. Applies when both the certification and the instrument state
    a version.

    **Passes**: certification `version: "1.2"` for an instrument at version 1.2.

    **Fails**: certification `version: "1.1"` for an instrument at version 1.2.
    """
    for rater in plan.roster:
        for cert in rater.certifications:
            instrument = plan.instrument(cert.instrument)
            if cert.version and instrument.version and cert.version != instrument.version:
                yield Hit(cert.path + ("version",),
                          f"rater {rater.id} is certified on version {cert.version} of {instrument.id}; the trial uses "
                          f"version {instrument.version}; recertify on the current version")


@rule("raters/continuity-unstated", "warning",
      source=cite("common practice (the same rater follows a participant)", f"{S.MULSANT_2002} (differences between raters enter the scores when different raters rate)"))
def continuity_unstated(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A repeatedly rated endpoint does not keep the same rater per participant, or has no fallback.

    Most trials analyse change within a participant. When the rater changes between
    baseline and the primary visit, the difference between the two raters' habits enters the
    change score. An endpoint rated by people at two or more visits should set
    `same_rater_across_visits: true` (or `rater_assignment: fixed-per-participant`) and say
    in `continuity_fallback` what happens when that rater is unavailable. Central reading of
    recordings in random order is exempt when raters are blinded to visit sequence.

    **Passes**: `same_rater_across_visits: true` with a `continuity_fallback`.

    **Fails**: `rater_assignment: any-certified` at a site, or continuity without a fallback.
    """
    for endpoint in plan.endpoints:
        if len(endpoint.visits) < 2 or not plan.instrument(endpoint.instrument).is_rated_by_people:
            continue
        if endpoint.blinded_to and "visit-sequence" in endpoint.blinded_to:
            continue  # visit order hidden: raters cannot carry offsets along one participant's course
        kept = endpoint.same_rater_across_visits is True or endpoint.rater_assignment == "fixed-per-participant"
        if not kept:
            where = endpoint.path + (("rater_assignment",) if endpoint.rater_assignment else ("same_rater_across_visits",) if endpoint.same_rater_across_visits is not None else ("id",))
            yield Hit(where, f"endpoint {endpoint.id} is rated at {len(endpoint.visits)} visits but does not keep the same "
                             "rater for a participant; rater offsets will enter the change scores")
        elif not endpoint.continuity_fallback:
            yield Hit(endpoint.path + ("same_rater_across_visits",) if endpoint.same_rater_across_visits is not None else endpoint.path + ("rater_assignment",),
                      f"endpoint {endpoint.id} keeps one rater per participant but does not say what happens when that "
                      "rater is unavailable; add a continuity_fallback")


@rule("raters/no-turnover-plan", "warning",
      thresholds=[Threshold("min_raters_per_site", 2, "Certified raters each site should keep per instrument, so that one departure does not stop rating.", 1, 20)],
      source="common practice (rater turnover in long trials; backup raters certified in advance)")
def no_turnover_plan(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A pool does not plan for raters leaving, or a site keeps too few certified raters.

    In a trial that runs for more than a year raters leave. Without a written `turnover`
    procedure (replacement trained and certified before rating, handover) new staff rate
    uncertified or visits are missed; with a single certified rater per site one departure
    stops rating at that site.

    **Passes**: `turnover:` described and `raters_per_site: 2`.

    **Fails**: no `turnover`, or `raters_per_site: 1`.
    """
    minimum = int(ctx.thresholds["min_raters_per_site"])
    for pool in plan.people_pools():
        if not pool.turnover:
            yield Hit(pool.path + ("id",), f"rater pool {pool.id} has no procedure for a rater who leaves; say how a "
                                           "replacement is trained and certified before rating")
        if not pool.is_central and pool.raters_per_site is not None and pool.raters_per_site < minimum:
            yield Hit(pool.path + ("raters_per_site",),
                      f"rater pool {pool.id} keeps {plural(pool.raters_per_site, 'certified rater')} per site, fewer than {minimum}; "
                      "certify a backup rater at each site",
                      {"pool": pool.id, "raters_per_site": pool.raters_per_site, "minimum": minimum})


@rule("raters/confounded-with-arm", "warning",
      source="common practice (raters balanced across arms, so that a rater's offset cannot pass for a treatment effect)")
def confounded_with_arm(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Raters rate participants of one treatment arm only.

    When raters and arms coincide, a lenient or a harsh rater cannot be told apart from a
    treatment effect. Raters should rate participants of every arm (`arm_assignment: across-arms`).

    **Passes**: `arm_assignment: across-arms`.

    **Fails**: `arm_assignment: arm-specific`.
    """
    for pool in plan.people_pools():
        if pool.arm_assignment == "arm-specific":
            yield Hit(pool.path + ("arm_assignment",),
                      f"raters of pool {pool.id} rate only one arm each, so rater effects are confounded with treatment; "
                      "assign raters across arms")


# Coefficients on the scale of an ICC: weighted kappa with quadratic weights equals an ICC
# (Fleiss & Cohen 1973), so its criterion can be compared with a planned reliability.
def _icc_scale(coefficient: str | None) -> bool:
    return bool(coefficient) and (coefficient.startswith("ICC") or coefficient == "weighted-kappa-quadratic")  # type: ignore[union-attr]


@rule("raters/certification-laxer-than-planned", "warning", computed=True,
      source="common practice (certify raters at least at the reliability the sample size assumes; a quadratic-weighted kappa read on the ICC scale)")
def certification_laxer_than_planned(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The certification pass mark lets raters through who are less reliable than the sample size assumes.

    The sample size rests on `assumed_reliability`: the reliability of the score the trial
    analyses, which for one rating per assessment is a single rater's reliability. A
    certification that passes a rater at a lower ICC (or quadratic-weighted kappa) admits
    raters worse than the power calculation planned for, so the trial can be underpowered
    with every rater certified. The assumed reliability is first stepped down to one rating
    when the endpoint averages several (inverse Spearman–Brown). A plan that assumes perfect
    reliability (1.0) is left to `power/assumed-above-evidence`.

    **Passes**: pass mark ICC(2,1) ≥ 0.85, sample size assuming 0.85 with one rater per assessment.

    **Fails**: pass mark ICC(2,1) ≥ 0.50, sample size assuming 0.85 with one rater per assessment.
    """
    from protolint.plan.formulas import single_from_average
    from protolint.rules._working import PLANNING_AID, fmt
    from protolint.plan.reliability import trial_ratings

    size = plan.sample_size
    if size is None or size.assumed_reliability is None or not 0.0 < size.assumed_reliability < 1.0:
        return
    endpoint = plan.endpoint(size.endpoint)
    pool = plan.pool(endpoint.rater_pool)
    cert = pool.certification
    criterion = cert.criterion if cert else None
    if criterion is None or criterion.minimum is None or not _icc_scale(criterion.coefficient):
        return
    m = trial_ratings(endpoint)
    planned = size.assumed_reliability
    single = single_from_average(planned, m) if m > 1 else planned
    if criterion.minimum >= single:
        return
    per_rating = "" if m == 1 else f", which for one of the {m} ratings averaged is {fmt(single)}"
    yield Hit(criterion.path + ("minimum",),
              f"rater pool {pool.id} certifies raters at {criterion.coefficient} ≥ {fmt(criterion.minimum)}, but the sample "
              f"size of endpoint {endpoint.id} assumes a reliability of {fmt(planned)}{per_rating}; a certified rater can be "
              f"less reliable than planned, so raise the pass mark to at least {fmt(single)} or plan the sample size on the "
              f"pass mark — {PLANNING_AID}",
              {"pool": pool.id, "endpoint": endpoint.id, "criterion": criterion.coefficient,
               "pass_minimum": criterion.minimum, "assumed_reliability": planned, "ratings_averaged": m,
               "formula": "single-rating reliability r1 = rm / (m - (m - 1) rm) (inverse Spearman-Brown)",
               "assumed_single_rating": round(single, 4)})
