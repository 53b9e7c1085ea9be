"""Schedule rules: rated visits are timed, and nobody rates before raters and procedures are ready."""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Plan
from protolint.rules import sources as S
from protolint.rules.sources import cite
from protolint.rules.registry import Hit, RuleContext, rule


def _rated_visit_ids(plan: Plan) -> set[str]:
    return {visit for endpoint in plan.endpoints for visit in endpoint.visits}


@rule("schedule/no-visit-window", "warning",
      source=cite("common practice (visit windows in the schedule of assessments)", f"{S.E6}, Annex 1 section 2.5.3 (deviations documented)"))
def no_visit_window(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rated follow-up visit has no allowed window.

    Without a window the timing of repeated ratings drifts between participants, and an
    out-of-window rating cannot be defined as a deviation. Every rated visit other than the
    first rated one and day 1 (randomisation, which anchors the schedule) needs
    `window_before` and `window_after` (0 is a valid window).

    **Passes**: `{id: week-4, day: 29, window_before: 3, window_after: 3}`.

    **Fails**: `{id: week-4, day: 29}` rated by an endpoint.
    """
    rated = _rated_visit_ids(plan)
    visits = [v for v in plan.schedule.visits if v.id in rated]
    if not visits:
        return
    first_day = min(v.day for v in visits)
    for visit in visits:
        # Day 1 (randomisation) anchors the schedule and the first rated visit opens it: neither can be "late".
        if visit.day not in (first_day, 1) and (visit.window_before is None or visit.window_after is None):
            yield Hit(visit.path + ("day",), f"rated visit {visit.id} (day {visit.day}) has no window; add window_before and window_after")


@rule("schedule/out-of-window-unhandled", "warning",
      source=cite(f"{S.E6}, Annex 1 section 2.5.3 (deviations documented; important ones explained)", "common practice"))
def out_of_window_unhandled(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The plan does not say what happens to a rating made outside its visit window.

    Is the rating kept, flagged, excluded from the primary analysis? Say so in
    `schedule.out_of_window` or define an `out-of-window` deviation.

    **Passes**: `out_of_window: Ratings outside the window are kept and listed as deviations.`

    **Fails**: neither `out_of_window` nor an `out-of-window` deviation.
    """
    if plan.schedule.out_of_window or any(d.kind == "out-of-window" for d in plan.deviations):
        return
    yield Hit(("schedule",), "the schedule does not say how out-of-window ratings are handled; add out_of_window or an "
                             "out-of-window deviation")


@rule("schedule/rating-before-raters-ready", "error", computed=True,
      source=f"{S.E6}, Appendix C, essential records table (trial-specific training records in place before the trial starts)")
def rating_before_raters_ready(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A site starts rating an instrument before any of its rostered raters is certified on it.

    For each site that has raters on the roster, the site's first planned assessment of each
    endpoint (from `study.first_assessment` or the site's own date, and the visit days) is
    compared with the earliest certification date on that instrument among the site's raters.
    Sites without roster entries are not judged.

    **Passes**: site S01 first rates 2026-09-01; its rater certified 2026-08-10.

    **Fails**: site S02 first rates 2026-09-01; its only rater certified 2026-09-05.
    """
    from protolint.plan.timeline import endpoint_first_assessment

    reported: set[tuple[str, str]] = set()
    for endpoint in plan.endpoints:
        instrument = plan.instrument(endpoint.instrument)
        if not instrument.is_rated_by_people or plan.pool(endpoint.rater_pool).is_central:
            continue
        for site in plan.study.sites:
            raters = [r for r in plan.roster if r.site == site.id and r.pool == endpoint.rater_pool]
            if not raters or (site.id, instrument.id) in reported:
                continue
            dates = [c.date for r in raters for c in r.certifications if c.instrument == instrument.id]
            first = endpoint_first_assessment(plan, endpoint, site.id)
            ready = min(dates) if dates else None
            if ready is None or ready > first:
                reported.add((site.id, instrument.id))
                when = "no rater is certified at all" if ready is None else f"the first certification is on {ready.isoformat()}"
                yield Hit(site.path + ("id",),
                          f"site {site.id} first rates {instrument.id} on {first.isoformat()} but {when}; certify a rater "
                          "before the site's first assessment or delay it",
                          {"site": site.id, "instrument": instrument.id, "first_assessment": first.isoformat(),
                           "first_certification": ready.isoformat() if ready else None})
