"""Training rules: raters are trained, certified precisely enough, and retrained when the protocol changes."""

from __future__ import annotations

from datetime import date
from typing import Iterator

from protolint.plan.model import Plan, RaterPool
from protolint.rules._working import PLANNING_AID, fmt
from protolint.rules import sources as S
from protolint.rules.sources import cite
from protolint.wording import plural
from protolint.rules.registry import Hit, RuleContext, Threshold, rule

# Amendment changes that alter what a rater does; a change of rated visits alone does not.
_RATER_CHANGES = frozenset({"instrument-version", "administration", "scoring"})



@rule("training/no-training-plan", "error",
      source=f"{S.E6}, Annex 1 section 2.3.2 (trial-related training corresponding to the delegated activities)")
def no_training_plan(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rater pool has no initial training, or its training has no content.

    Raters need trial-specific training on the construct, the administration and the scoring
    conventions before certification. A pool needs `training` with its `content`.

    **Passes**: `training: {content: [rating conventions, practice ratings], format: web session}`.

    **Fails**: a pool without `training`, or `training: {hours: 2}` with no content.
    """
    for pool in plan.people_pools():
        if pool.training is None:
            yield Hit(pool.path + ("id",), f"rater pool {pool.id} has no initial training; describe its content, format and trainer")
        elif not pool.training.content:
            yield Hit(pool.path + ("training",), f"the training of rater pool {pool.id} does not say what it covers; list its content")


@rule("training/reference-scores-unstated", "warning",
      source="common practice (certification against reference scores set by a named expert panel)")
def reference_scores_unstated(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Certification does not say how its reference scores were set.

    A certification exercise compares each rater with reference ('gold-standard') scores. If
    those scores were set by one person, or nobody can say how, passing means agreeing with an
    unknown judgement. `certification.reference_scores` should say who set them and how.

    **Passes**: `reference_scores: Consensus of three senior dermatologists.`

    **Fails**: a certification without `reference_scores`.
    """
    for pool in plan.people_pools():
        cert = pool.certification
        if cert is not None and cert.method != "co-rating" and not cert.reference_scores:
            yield Hit(pool.path + ("certification",),
                      f"the certification of rater pool {pool.id} does not say how its reference scores were set")


def _certification_rho(pool: RaterPool, assumed: float) -> tuple[float, str]:
    cert = pool.certification
    if cert is not None and cert.expected_icc is not None:
        return cert.expected_icc, "certification.expected_icc"
    criterion = cert.criterion if cert else None
    if criterion is not None and criterion.minimum is not None and criterion.coefficient and criterion.coefficient.startswith("ICC"):
        return criterion.minimum, "the pass criterion's minimum ICC"
    return assumed, "the rule's assumed_icc"


@rule("training/certification-too-small", "warning", computed=True,
      thresholds=[Threshold("min_cases", 10, "Fewest reference cases a certification should use.", 1, 1000),
                  Threshold("max_ci_width", 0.40, "Widest acceptable 95% interval of one rater's agreement with the reference.", 0.01, 1.0),
                  Threshold("assumed_icc", 0.80, "Agreement assumed when the plan gives neither expected_icc nor an ICC criterion.", 0.0, 0.99)],
      source=cite(f"{S.BONETT_2002} (expected width of the interval of an ICC)", f"{S.WALTER_1998}", "the default width: common practice"))
def certification_too_small(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Certification uses too few reference cases to tell a good rater from a poor one.

    Each rater's pass or fail rests on their agreement with the reference scores over the
    certification cases: an ICC between two score sets (k = 2) from n cases. Its expected
    95% interval width is worked out with Bonett's (2002) formula at the expected agreement
    (the pool's `expected_icc`, else its ICC pass minimum, else `assumed_icc`), together with
    the number of cases that would reach `max_ci_width`; fewer than `min_cases` cases are
    reported whatever the width. With few cases a rater passes or fails largely by chance.

    **Passes**: 40 cases at an expected ICC of 0.80 (width ≈ 0.23).

    **Fails**: 4 cases at an expected ICC of 0.80 (width ≈ 0.81; 18 cases reach 0.40).
    """
    from protolint.plan.formulas import bonett_subjects, bonett_width

    min_cases = int(ctx.thresholds["min_cases"])
    max_width = float(ctx.thresholds["max_ci_width"])
    for pool in plan.people_pools():
        cert = pool.certification
        if cert is None or cert.cases is None or cert.method == "co-rating":
            continue
        rho, basis = _certification_rho(pool, float(ctx.thresholds["assumed_icc"]))
        rho = min(rho, 0.99)
        n = cert.cases
        width = bonett_width(rho, 2, n) if n >= 2 else float("inf")
        if width <= max_width and n >= min_cases:
            continue
        needed = bonett_subjects(rho, 2, max_width)
        shown = "cannot be estimated" if n < 2 else f"is about {fmt(width, 2)} wide"
        yield Hit(cert.path + ("cases",),
                  f"rater pool {pool.id} certifies on {plural(n, 'case')}: at an expected ICC of {fmt(rho)}, {basis}, the 95% "
                  f"interval of a rater's agreement with the reference {shown} (Bonett 2002); {needed} cases would bring it to "
                  f"{fmt(max_width, 2)}, and at least {min_cases} are expected — {PLANNING_AID}",
                  {"pool": pool.id, "cases": n, "k": 2, "expected_icc": rho, "expected_icc_basis": basis,
                   "formula": "Bonett 2002: w = 2 z (1 - r)(1 + (k - 1) r) sqrt(2 / (k (k - 1)(n - 1))), k = 2",
                   "ci_width": None if n < 2 else round(width, 4), "max_ci_width": max_width,
                   "cases_for_max_width": needed, "min_cases": min_cases})


@rule("training/no-records", "error",
      source=f"{S.E6}, Appendix C, essential records table (trial-specific training records and the documentation of delegation)")
def no_records(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The plan does not say how training and certification are recorded.

    Inspectors check that only trained, certified and delegated staff rated. Each pool's
    `training.records` should say where dated, per-rater training and certification records
    are kept and how they link to the site's delegation log.

    **Passes**: `records: Dated certificates filed in the site binder and linked to the delegation log.`

    **Fails**: `training` without `records`.
    """
    for pool in plan.people_pools():
        if pool.training is not None and not pool.training.records:
            yield Hit(pool.training.path, f"the training of rater pool {pool.id} does not say how training and "
                                          "certification are recorded; name the record and where it is filed")


@rule("training/no-recertification-after-amendment", "error", computed=True,
      source=cite(f"{S.E6}, Annex 1 section 2.3.2 (training corresponds to the delegated trial activities)", f"{S.FDA_PRO_2009} (modified instruments)"))
def no_recertification_after_amendment(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """An amendment changes how a rated instrument is administered or scored, and raters are not recertified by its date.

    Raters keep applying the old rules until retrained. For each amendment whose `changes`
    include `instrument-version`, `administration` or `scoring` of an instrument in
    `affects_instruments`: every pool rating that instrument must list `amendment` among its
    recertification triggers, and every rater on the roster certified on it before the
    amendment must be certified again no later than the day the amendment takes effect. A
    rater whose latest certification predates the amendment is reported.

    **Passes**: amendment effective 2027-03-01 changing scoring, rater recertified 2027-02-20.

    **Fails**: amendment effective 2027-03-01 changing scoring, rater's latest certification 2026-08-10.
    """
    protocol = plan.protocol
    if protocol is None:
        return
    for amendment in protocol.amendments:
        changes = set(amendment.changes) & _RATER_CHANGES
        if not changes:
            continue
        for instrument_id in amendment.affects_instruments:
            pools = [p for p in plan.rater_pools if instrument_id in p.instruments]
            for pool in pools:
                triggers = pool.recertification.triggers if pool.recertification else ()
                if "amendment" not in triggers:
                    yield Hit(amendment.path + ("effective",),
                              f"amendment {amendment.id} changes the {', '.join(sorted(changes))} of {instrument_id}, but rater "
                              f"pool {pool.id} does not recertify after amendments; add 'amendment' to its recertification triggers")
            for rater in plan.roster:
                held = [c for c in rater.certifications if c.instrument == instrument_id]
                if not held:
                    continue
                latest = max(held, key=lambda c: c.date)
                if latest.date < amendment.effective:
                    yield Hit(latest.path + ("date",),
                              f"rater {rater.id} was last certified on {instrument_id} on {latest.date.isoformat()}, before "
                              f"amendment {amendment.id} changed its {', '.join(sorted(changes))} on "
                              f"{amendment.effective.isoformat()}; recertify by that date",
                              {"rater": rater.id, "instrument": instrument_id, "amendment": amendment.id,
                               "amendment_effective": amendment.effective.isoformat(), "last_certified": latest.date.isoformat()})


def _site_start(plan: Plan, pool: RaterPool, site_id: str) -> date | None:
    from protolint.plan.timeline import endpoint_first_assessment

    starts = [endpoint_first_assessment(plan, e, site_id) for e in plan.endpoints if e.rater_pool == pool.id]
    return min(starts) if starts else None


@rule("training/no-lead-time", "warning",
      thresholds=[Threshold("min_lead_days", 7, "Fewest days between the end of training and a rater's first rating.", 0, 365)],
      source=cite("common practice (time between training and the first rating to certify, and to retrain and retest after a failed attempt)", f"{S.E6}, Annex 1 section 2.3.2"))
def no_lead_time(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Raters are trained with no lead time before the first assessment they may rate.

    Training that ends on the day of the first rating leaves no time to certify, to retrain a
    rater who fails, or to certify a backup, so the first participants are rated by whoever
    happens to pass on the day, or by nobody certified. A pool's
    `training.days_before_first_rating` below `min_lead_days` (0 included) is reported. On the
    roster, a rater's certification date is the latest sign that training was complete: it is
    reported when it leaves less lead time than the pool's own `days_before_first_rating` before
    the rater's `first_rating` (a certification after the first rating is
    `raters/certified-after-first-rating`), or, for a rater with no `first_rating`, when it
    falls after the site's first assessment.

    **Passes**: `days_before_first_rating: 14`; rater certified 2026-08-10, first rating 2026-09-01.

    **Fails**: `days_before_first_rating: 0`; or a rater certified 2026-08-28 with first rating 2026-09-01 and 14 days required.
    """
    min_lead = int(ctx.thresholds["min_lead_days"])
    for pool in plan.people_pools():
        training = pool.training
        lead = training.days_before_first_rating if training else None
        if training is not None and lead is not None and lead < min_lead:
            yield Hit(training.path + ("days_before_first_rating",),
                      f"rater pool {pool.id} may finish training {plural(lead, 'day')} before a rater's first rating, fewer than "
                      f"{plural(min_lead, 'day')}; leave time to certify, and to retrain a rater who fails, before the first assessment",
                      {"pool": pool.id, "days_before_first_rating": lead, "min_lead_days": min_lead})
        for rater in plan.roster:
            if rater.pool != pool.id:
                continue
            for instrument_id in pool.instruments:
                held = [c for c in rater.certifications if c.instrument == instrument_id]
                if not held or not plan.instrument(instrument_id).is_rated_by_people:
                    continue
                first = min(held, key=lambda c: c.date)
                if rater.first_rating is not None:
                    gap = (rater.first_rating - first.date).days
                    if lead is not None and 0 <= gap < lead:
                        yield Hit(first.path + ("date",),
                                  f"rater {rater.id} is certified on {instrument_id} on {first.date.isoformat()}, {plural(gap, 'day')} "
                                  f"before their first rating on {rater.first_rating.isoformat()}, but pool {pool.id} requires "
                                  f"training to end {plural(lead, 'day')} before",
                                  {"rater": rater.id, "instrument": instrument_id, "certified": first.date.isoformat(),
                                   "first_rating": rater.first_rating.isoformat(), "lead_days": gap, "required_days": lead})
                elif rater.site is not None:
                    start = _site_start(plan, pool, rater.site)
                    if start is not None and first.date > start:
                        yield Hit(first.path + ("date",),
                                  f"rater {rater.id} at site {rater.site} is certified on {instrument_id} on "
                                  f"{first.date.isoformat()}, after the site's first assessment on {start.isoformat()}; "
                                  "give the rater's first_rating if they start later, or train them before the site starts",
                                  {"rater": rater.id, "site": rater.site, "instrument": instrument_id,
                                   "certified": first.date.isoformat(), "site_first_assessment": start.isoformat()})
                break
