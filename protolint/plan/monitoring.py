"""Monitoring rounds per rater pool and site, and the other dated duties of a plan.

Pure functions of the typed plan. This module is the one definition of "a monitoring round":
the rule ``monitoring/no-rounds-in-rating-period``, the monitoring checklist, the binder and
the calendar all take their rounds from :func:`monitoring_rounds`, so a date printed on paper
is the date in the calendar and the number of rounds a finding counts is the number of rows
on the checklist.

Conventions (in addition to those of :mod:`protolint.plan.timeline`):

* A pool starts rating at a site on the first date any of its endpoints is rated there
  (the site's own ``first_assessment`` when it has one). A central pool starts on the first
  date any of its endpoints is rated anywhere, and is scheduled as one unit, "central".
* Monitoring round *k* (k = 1, 2, …) falls ``k × interval_weeks`` after that start: a round
  reviews the ratings made since the previous one, so none falls on the first rating day.
* Ratings stop on the last participant's last rated visit (``study_window(plan).last``).
  Regular rounds run up to and including that date; when the last regular round falls before
  it, a close-out round on that date reviews the ratings made since, so no rating is left
  outside a round.
* A pool without a monitoring interval has no rounds.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, timedelta

from protolint.plan.model import Plan, Rater, RaterPool, per_plan
from protolint.plan.timeline import add_months, endpoints_first_assessment, pool_sites, study_window

__all__ = [
    "CENTRAL", "MonitoringRound", "PoolSiteSpan", "monitoring_rounds", "pool_spans", "recertification_dates",
    "rostered_raters", "rounds_between", "rounds_while_rating", "training_deadline",
]

CENTRAL = "central"
"""The ``site`` of a round or duty that belongs to a central pool."""


@dataclass(frozen=True)
class MonitoringRound:
    pool: str
    site: str
    number: int
    due: date
    covers_from: date
    """First rating day the round reviews (the day after the previous round, or the start)."""
    close_out: bool = False


@dataclass(frozen=True)
class PoolSiteSpan:
    """When a pool rates at one site (or centrally)."""

    pool: str
    site: str
    first_rating: date
    last_rating: date


@per_plan
def pool_spans(plan: Plan, pool: RaterPool) -> tuple[PoolSiteSpan, ...]:
    """The rating span of ``pool`` at each site it serves (one span for a central pool)."""
    endpoints = [endpoint for endpoint in plan.endpoints if endpoint.rater_pool == pool.id]
    if not endpoints:
        return ()
    last = study_window(plan).last
    sites = pool_sites(plan, pool.id)
    if not sites:
        return (PoolSiteSpan(pool.id, CENTRAL, endpoints_first_assessment(plan, endpoints), last),)
    return tuple(PoolSiteSpan(pool.id, site, endpoints_first_assessment(plan, endpoints, site), last) for site in sites)


def rostered_raters(plan: Plan, pool: str, site: str) -> tuple[Rater, ...]:
    """The roster's raters of ``pool`` at ``site``, in roster order; every rater of the pool for ``CENTRAL``.

    The checklist prints a row per rater and the calendar decides whether a site has named
    raters from the same answer. The roster is indexed once per plan, so asking for every pool
    and site stays linear in the roster's length.
    """
    in_pool, at_site = _roster_index(plan)
    return in_pool.get(pool, ()) if site == CENTRAL else at_site.get((pool, site), ())


@per_plan
def _roster_index(plan: Plan) -> tuple[dict[str, tuple[Rater, ...]], dict[tuple[str, str], tuple[Rater, ...]]]:
    in_pool: dict[str, list[Rater]] = {}
    at_site: dict[tuple[str, str], list[Rater]] = {}
    for rater in plan.roster:
        in_pool.setdefault(rater.pool, []).append(rater)
        if rater.site is not None:
            at_site.setdefault((rater.pool, rater.site), []).append(rater)
    return ({pool: tuple(raters) for pool, raters in in_pool.items()},
            {key: tuple(raters) for key, raters in at_site.items()})


def rounds_between(pool: str, site: str, start: date, end: date, interval_weeks: int) -> tuple[MonitoringRound, ...]:
    """Rounds every ``interval_weeks`` after ``start`` up to ``end``, plus a close-out round.

    >>> [r.due.isoformat() for r in rounds_between("P", "S", date(2026, 9, 1), date(2026, 11, 24), 5)]
    ['2026-10-06', '2026-11-10', '2026-11-24']
    """
    if interval_weeks <= 0:
        raise ValueError(f"interval_weeks must be a positive number of weeks, got {interval_weeks}")
    rounds: list[MonitoringRound] = []
    step = timedelta(weeks=interval_weeks)
    due = start + step
    covers_from = start
    while due <= end:
        rounds.append(MonitoringRound(pool, site, len(rounds) + 1, due, covers_from))
        covers_from = due + timedelta(days=1)
        due += step
    if covers_from <= end and (not rounds or rounds[-1].due < end):
        rounds.append(MonitoringRound(pool, site, len(rounds) + 1, end, covers_from, close_out=True))
    return tuple(rounds)


def monitoring_rounds(plan: Plan, pool: RaterPool) -> dict[str, tuple[MonitoringRound, ...]]:
    """Rounds of ``pool`` keyed by site id (``CENTRAL`` for a central pool), in site order."""
    return dict(_rounds_by_site(plan, pool))  # a new dict each time: the memoised rounds stay as they are


@per_plan
def _rounds_by_site(plan: Plan, pool: RaterPool) -> tuple[tuple[str, tuple[MonitoringRound, ...]], ...]:
    # Several rules, the checklist and the calendar ask for the same pool's rounds.
    interval = pool.monitoring.interval_weeks if pool.monitoring else None
    if not interval:
        return ()
    return tuple((span.site, rounds_between(pool.id, span.site, span.first_rating, span.last_rating, interval))
                 for span in pool_spans(plan, pool))


def rounds_while_rating(rounds: tuple[MonitoringRound, ...]) -> tuple[MonitoringRound, ...]:
    """The regular rounds, which fall while ratings are still being made.

    A close-out round falls on the last rating day, when every rating has been made: it can
    only find drift after the fact. A site whose rounds are all close-out rounds has no check
    of its raters while data are collected.
    """
    return tuple(r for r in rounds if not r.close_out)


def recertification_dates(certified: date, interval_months: int, until: date) -> tuple[date, ...]:
    """Dates a certification made on ``certified`` falls due again, up to ``until``."""
    if interval_months <= 0:
        raise ValueError(f"interval_months must be a positive number of months, got {interval_months}")
    dates = []
    k = 1
    while (due := add_months(certified, k * interval_months)) <= until:
        dates.append(due)
        k += 1
    return tuple(dates)


def training_deadline(first_rating: date, days_before: int | None) -> date:
    """Latest day initial training must be complete (the day before rating when unstated)."""
    return first_rating - timedelta(days=days_before if days_before else 1)
