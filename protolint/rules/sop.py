"""SOP rules: every rated instrument is governed by a controlled procedure that is in force."""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Plan
from protolint.plan.timeline import instrument_first_assessment
from protolint.rules import sources as S
from protolint.rules.sources import cite
from protolint.rules.registry import Hit, RuleContext, Threshold, rule


@rule("sop/instrument-not-covered", "error",
      source=cite(f"{S.ISO_9001}, clause 7.5 (documented information the system needs, created, approved and controlled)", f"{S.E6}, Appendix C section C.1.3 (records identifiable and version controlled)"))
def instrument_not_covered(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rated instrument is covered by no SOP.

    Raters at every site must administer and score an instrument the same way, and that way
    must be written down in a controlled, versioned document. An instrument rated by people
    (clinician-rated, observer-rated or performance) that no SOP's `covers.instruments` names
    has no such document.

    **Passes**: instrument `HLSC-8` and an SOP with `covers: {instruments: [HLSC-8]}`.

    **Fails**: instrument `HLSC-8` and no SOP that names it.
    """
    covered = {instrument for sop in plan.sops if sop.covers for instrument in sop.covers.instruments}
    for instrument in plan.instruments:
        if instrument.is_rated_by_people and instrument.id not in covered and plan.endpoints_for(instrument.id):
            yield Hit(instrument.path + ("id",),
                      f"instrument {instrument.id} is rated by people but no SOP covers it; "
                      "add it to the covers.instruments of the SOP that governs its administration and scoring")


@rule("sop/effective-too-late", "error",
      source=cite(f"{S.E6}, Appendix C, essential records table (records marked to be in place before the trial starts)", "common practice"))
def effective_too_late(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """An SOP takes effect after the first planned assessment it governs.

    Ratings made before the procedure that governs them is in force were made under no
    controlled procedure. The first assessment of each covered instrument is worked out from
    the study's first assessment date and the visits at which the instrument is rated.

    **Passes**: SOP effective 2026-08-15, instrument first rated 2026-09-01.

    **Fails**: SOP effective 2026-09-10, instrument first rated 2026-09-01.
    """
    for sop in plan.sops:
        if sop.status in ("superseded", "retired") or not sop.covers:
            continue
        for instrument_id in sop.covers.instruments:
            first = instrument_first_assessment(plan, instrument_id)
            if first is not None and sop.effective > first:
                yield Hit(sop.path + ("effective",),
                          f"{sop.id} version {sop.version} takes effect on {sop.effective.isoformat()}, "
                          f"after {instrument_id} is first rated on {first.isoformat()} "
                          f"({(sop.effective - first).days} days without a procedure in force)",
                          {"sop": sop.id, "effective": sop.effective.isoformat(), "instrument": instrument_id,
                           "first_assessment": first.isoformat()})


@rule("sop/review-overdue", "warning",
      source=cite(f"{S.ISO_9001}, clause 7.5.2 (review and approval for suitability and adequacy)", "the length of the review cycle: common practice"),
      thresholds=[Threshold("due_soon_days", 60, "Days before the review date from which a note says the review is due soon.", 0, 365)])
def review_overdue(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """An SOP's periodic review date has passed.

    A controlled document is reviewed on a fixed cycle so that it still matches practice.
    The review date is compared with `--as-of` (default: the plan's date), never with the
    wall clock, so the same plan gives the same answer in CI tomorrow. A review that falls due
    within `due_soon_days` gives a note.

    **Passes**: `review_due: 2027-08-15` checked as of 2026-07-15.

    **Fails**: `review_due: 2026-06-30` checked as of 2026-07-15.
    """
    from protolint.findings import Severity

    soon = int(ctx.thresholds["due_soon_days"])
    for sop in plan.sops:
        if sop.review_due is None or sop.status in ("superseded", "retired"):
            continue
        late = (ctx.as_of - sop.review_due).days
        facts = {"sop": sop.id, "review_due": sop.review_due.isoformat(), "as_of": ctx.as_of.isoformat()}
        if late > 0:
            yield Hit(sop.path + ("review_due",),
                      f"{sop.id} was due for review on {sop.review_due.isoformat()}, {late} days before {ctx.as_of.isoformat()}",
                      facts)
        elif -late <= soon:
            yield Hit(sop.path + ("review_due",),
                      f"{sop.id} is due for review on {sop.review_due.isoformat()}, within {soon} days of {ctx.as_of.isoformat()}",
                      facts, severity=Severity.NOTE)


@rule("sop/approval-incomplete", "error",
      source=cite(f"{S.E6}, Appendix C section C.1.3 (authors, reviewers and approvers, with date and signature)", f"{S.CFR_PART_11}(a)(3) (the meaning of a signature, such as review or approval)", f"{S.ISO_9001}, clause 7.5.2(c)"))
def approval_incomplete(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """An SOP in use has no owner, no approval, or an approval without role or meaning.

    A controlled procedure names who owns it and who approved this version, when, in what
    role and with what meaning ('approved for use'). Draft SOPs are not checked.

    **Passes**: `owner` set and `approvals: [{name: ..., role: Head of Clinical Science, date: ..., meaning: approved for use}]`.

    **Fails**: no `approvals`, or an approval without `meaning`.
    """
    for sop in plan.sops:
        if sop.status == "draft":
            continue
        if not sop.owner:
            yield Hit(sop.path + ("id",), f"{sop.id} names no owner")
        if not sop.approvals:
            yield Hit(sop.path + ("version",), f"{sop.id} version {sop.version} has no recorded approval")
        for approval in sop.approvals:
            missing = [n for n, v in (("role", approval.role), ("meaning", approval.meaning)) if not v]
            if missing:
                yield Hit(approval.path + ("name",), f"the approval of {sop.id} by {approval.name} does not state its "
                                                     f"{' or '.join(missing)}")


@rule("sop/approved-after-effective", "error", computed=True,
      source=cite(f"{S.ISO_9001}, clause 7.5.2(c) (review and approval for suitability and adequacy)", f"{S.E6}, Appendix C section C.1.3"))
def approved_after_effective(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """An SOP takes effect before it was approved.

    A procedure cannot be in force before it is approved. The latest approval date of the
    version must be on or before its `effective` date.

    **Passes**: approved 2026-08-01, effective 2026-08-15.

    **Fails**: approved 2026-08-20, effective 2026-08-15.
    """
    for sop in plan.sops:
        if not sop.approvals:
            continue
        last = max(sop.approvals, key=lambda a: a.date)
        if last.date > sop.effective:
            yield Hit(last.path + ("date",),
                      f"{sop.id} version {sop.version} is effective from {sop.effective.isoformat()} but approved only on "
                      f"{last.date.isoformat()}; move the effective date or the approval",
                      {"sop": sop.id, "effective": sop.effective.isoformat(), "approved": last.date.isoformat()})


@rule("sop/not-in-force", "error",
      source=f"{S.ISO_9001}, clause 7.5.3.2(e) (prevent the unintended use of obsolete documented information)")
def not_in_force(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rated instrument is covered only by SOPs that are drafts, superseded or retired.

    Raters must work to the current approved version. When every SOP that names an
    instrument is a draft, superseded or retired, the instrument is governed by a document
    that is not in force.

    **Passes**: an `effective` SOP covers the instrument.

    **Fails**: the only SOP covering the instrument has `status: superseded`.
    """
    for instrument in plan.instruments:
        if not instrument.is_rated_by_people or not plan.endpoints_for(instrument.id):
            continue
        covering = [s for s in plan.sops if s.covers and instrument.id in s.covers.instruments]
        if covering and all(s.status in ("draft", "superseded", "retired") for s in covering):
            for sop in covering:
                yield Hit(sop.path + ("status",), f"{sop.id} is {sop.status} but is the only SOP covering {instrument.id}; "
                                                  "issue an effective version")


@rule("sop/approved-after-plan-date", "warning",
      source="common practice (a plan records what is in force on its date; an approval not yet given is a planned one)")
def approved_after_plan_date(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """An SOP counted as in force carries an approval dated after the plan itself.

    The plan describes the procedures as they stand on its `plan_date`. An approval dated
    later has not happened yet, so an SOP marked effective (or with no status) on the strength
    of it is not yet approved, and every document rendered from the plan would say otherwise.
    Mark such an SOP `draft` until it is approved, or reissue the plan after the approval.

    **Passes**: plan dated 2026-07-15, approval dated 2026-07-20 of a draft SOP; or an effective SOP approved 2026-07-10.

    **Fails**: plan dated 2026-07-15, an effective SOP approved 2026-07-20.
    """
    for sop in plan.sops:
        if sop.status in ("draft", "superseded", "retired") or not sop.approvals:
            continue
        last = max(sop.approvals, key=lambda a: a.date)
        if last.date > plan.plan_date:
            yield Hit(last.path + ("date",),
                      f"{sop.id} version {sop.version} counts as in force, but its approval by {last.name} is dated "
                      f"{last.date.isoformat()}, {(last.date - plan.plan_date).days} days after the plan date "
                      f"{plan.plan_date.isoformat()}; mark it draft until approved, or reissue the plan after the approval",
                      {"sop": sop.id, "approved": last.date.isoformat(), "plan_date": plan.plan_date.isoformat()})


@rule("sop/review-before-effective", "error",
      source=cite(f"{S.ISO_9001}, clause 7.5.2 (review and approval of documented information)", "the order of the dates: common practice"))
def review_before_effective(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """An SOP's next review date falls before the version takes effect.

    A review is due some time after a version comes into force; a review date earlier than
    the effective date is a dating mistake (often the previous version's review date left in
    place), and it makes the version look overdue from its first day (which
    `sop/review-overdue` reports as well once the date has passed).

    **Passes**: `effective: 2026-08-01`, `review_due: 2028-08-01`.

    **Fails**: `effective: 2026-08-01`, `review_due: 2026-06-30`.
    """
    for sop in plan.sops:
        if sop.review_due is not None and sop.review_due < sop.effective:
            yield Hit(sop.path + ("review_due",),
                      f"{sop.id} version {sop.version} is due for review on {sop.review_due.isoformat()}, "
                      f"{(sop.effective - sop.review_due).days} days before it takes effect on {sop.effective.isoformat()}; "
                      "set the review date of this version",
                      {"sop": sop.id, "effective": sop.effective.isoformat(), "review_due": sop.review_due.isoformat()})


@rule("sop/review-cycle-too-long", "warning",
      thresholds=[Threshold("max_cycle_months", 36, "Longest interval between an SOP version taking effect and its next review.", 1, 120)],
      source=cite("common practice (SOPs reviewed periodically, commonly every two to three years)", f"{S.ISO_9001}, clause 7.5.2 (review for suitability and adequacy)"))
def review_cycle_too_long(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """An SOP is not reviewed for years after it takes effect, or has no review date at all.

    Practice, staff and the instrument's guidance change during a long trial; a procedure
    that nobody reviews for more than `max_cycle_months` (or ever) drifts away from what raters
    actually do. Drafts, superseded and retired versions are not judged.

    **Passes**: `effective: 2026-08-01`, `review_due: 2028-08-01`.

    **Fails**: `effective: 2026-08-01`, `review_due: 2031-08-01`, or no `review_due`.
    """
    from protolint.plan.timeline import add_months

    months = int(ctx.thresholds["max_cycle_months"])
    for sop in plan.sops:
        if sop.status in ("draft", "superseded", "retired"):
            continue
        if sop.review_due is None:
            yield Hit(sop.path + ("effective",), f"{sop.id} version {sop.version} has no review date; add review_due",
                      {"sop": sop.id})
            continue
        latest = add_months(sop.effective, months)
        if sop.review_due > latest:
            yield Hit(sop.path + ("review_due",),
                      f"{sop.id} version {sop.version} takes effect on {sop.effective.isoformat()} and is next reviewed on "
                      f"{sop.review_due.isoformat()}, more than {months} months later; review it by {latest.isoformat()}",
                      {"sop": sop.id, "effective": sop.effective.isoformat(), "review_due": sop.review_due.isoformat(),
                       "max_cycle_months": months})
