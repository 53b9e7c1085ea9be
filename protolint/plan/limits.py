"""How much a plan asks documents and the calendar to list, counted before anything is built.

Some plan numbers multiply: sites × raters per site is the number of sign-off rows in the
binder, sites × rating weeks / interval the number of monitoring rounds in the checklist and the
calendar. The schema bounds each number on its own; their product can still be more than any
document can print. These counts are arithmetic on the typed plan (no round, row or event is
made), so an oversized plan is refused with a finding at the number that multiplies, before a
command allocates anything. :func:`size_problems` is called by ``plan.load_plan``.

The limits are far above any trial's needs (a weekly round at 30 sites for two years is about
3,100 rounds).
"""

from __future__ import annotations

from dataclasses import dataclass

from protolint.plan.model import Path, Plan, RaterPool
from protolint.plan.monitoring import PoolSiteSpan, pool_spans
from protolint.plan.timeline import certification_expiry, study_window

MAX_ROUNDS = 100_000
"""Monitoring rounds over every pool and site (the checklist prints a row per round)."""
MAX_SIGNOFF_ROWS = 50_000
"""Sign-off rows over every SOP of the binder (a row per rater the pools must keep)."""
MAX_DATED_DUTIES = 200_000
"""Events in the calendar: training and certification deadlines, recertifications, rounds, reviews."""
MIN_SIGNOFF_ROWS = 6
"""Blank rows a sign-off sheet of the binder gets at least (defined here, where the count needs
it, and imported by the binder)."""


@dataclass(frozen=True)
class SizeProblem:
    path: Path
    message: str


def rounds_count(days: int, interval_weeks: int) -> int:
    """Rounds of :func:`~protolint.plan.monitoring.rounds_between` over ``days`` days, at most
    (the regular rounds plus the close-out round)."""
    return max(days, 0) // (7 * interval_weeks) + 1


def months_between(first_day_ordinal: int, last_day_ordinal: int) -> int:
    """Whole months from one day to a later one, rounded up (an upper bound on due dates)."""
    return max(last_day_ordinal - first_day_ordinal, 0) // 28 + 1


def pool_rounds(pool: RaterPool, spans: tuple[PoolSiteSpan, ...]) -> int:
    """Monitoring rounds of ``pool`` over its rating spans (an upper bound, by arithmetic)."""
    interval = pool.monitoring.interval_weeks if pool.monitoring else None
    if not interval:
        return 0
    return sum(rounds_count((span.last_rating - span.first_rating).days, interval) for span in spans)


def size_problems(plan: Plan) -> tuple[SizeProblem, ...]:
    """A problem for each count over its limit, located at the number that multiplies."""
    problems: list[SizeProblem] = []
    spans = {pool.id: pool_spans(plan, pool) for pool in plan.rater_pools}
    rounds = {pool.id: pool_rounds(pool, spans[pool.id]) for pool in plan.rater_pools}
    total_rounds = sum(rounds.values())
    if total_rounds > MAX_ROUNDS:
        pool = max(plan.rater_pools, key=lambda p: rounds[p.id])
        problems.append(SizeProblem(pool.path + ("monitoring", "interval_weeks"),
                                    f"the plan asks for {total_rounds:,} monitoring rounds over its sites and rating "
                                    f"period ({rounds[pool.id]:,} for {pool.id}); documents and the calendar list at most "
                                    f"{MAX_ROUNDS:,}: check the interval and the number of sites"))
    sites = max(len(plan.study.sites), 1)
    rows = {pool.id: max(MIN_SIGNOFF_ROWS, (pool.raters_per_site or 1) * (1 if pool.is_central else sites))
            for pool in plan.rater_pools}
    roster = len(plan.roster)
    total_rows = len(plan.sops) * (sum(rows.values()) + roster)
    if total_rows > MAX_SIGNOFF_ROWS:
        pool = max(plan.rater_pools, key=lambda p: rows[p.id])
        problems.append(SizeProblem(pool.path + ("raters_per_site",),
                                    f"{len(plan.sops)} SOPs × {sites:,} sites × the raters each pool keeps make "
                                    f"{total_rows:,} sign-off rows; the binder prints at most {MAX_SIGNOFF_ROWS:,}"))
    duties = total_rounds + len(plan.sops) + 2 * sum(len(spans[pool.id]) for pool in plan.rater_pools)
    window = study_window(plan)
    months = months_between(window.first.toordinal(), window.last.toordinal())
    for pool in plan.rater_pools:
        interval = pool.recertification.interval_months if pool.recertification else None
        if interval:
            duties += len(spans[pool.id]) * (months // interval + 1)
        for rater in plan.roster:
            if rater.pool != pool.id:
                continue
            for cert in rater.certifications:
                expiry = certification_expiry(cert, interval)
                if expiry is not None:
                    span = months_between(expiry.toordinal(), window.last.toordinal())
                    duties += 1 + (span // interval if interval else 0)
    if duties > MAX_DATED_DUTIES:
        problems.append(SizeProblem(("roster",) if roster else ("study", "sites"),
                                    f"the plan's dated duties (deadlines, recertifications, monitoring rounds, reviews) "
                                    f"come to about {duties:,}; the calendar lists at most {MAX_DATED_DUTIES:,}"))
    return tuple(problems)
