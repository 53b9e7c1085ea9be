"""Dates derived from the plan's schedule: when rating starts and ends, per instrument and site.

Conventions (stated so that rules and documents agree):

* ``study.first_assessment`` is the date of the first rated assessment of the first
  participant, at the earliest rated visit of the schedule.
* Participants enter evenly over ``study.enrolment_weeks``; the last one has that earliest
  visit ``enrolment_weeks`` after the first.
* A participant's visits follow the schedule's days; a participant stays in the rated part of
  the trial for the longer of ``treatment_weeks`` and the span of the rated visits.
* A site with its own ``first_assessment`` starts rating then; it stops with the study.
"""

from __future__ import annotations

import calendar
from dataclasses import dataclass
from datetime import date, timedelta
from typing import Iterable

from protolint.plan.model import Endpoint, Plan, RaterCertification, per_plan


@dataclass(frozen=True)
class RatingWindow:
    first: date
    last: date

    @property
    def days(self) -> int:
        return (self.last - self.first).days


def rated_visit_days(plan: Plan, endpoints: tuple[Endpoint, ...] | None = None) -> tuple[int, ...]:
    """The schedule days on which ``endpoints`` (every endpoint when None) are rated, in order."""
    if endpoints is None:
        return _all_rated_visit_days(plan)
    return _visit_days(plan, endpoints)


@per_plan
def _all_rated_visit_days(plan: Plan) -> tuple[int, ...]:
    # Asked once per endpoint and site by the rules: computed once per plan.
    return _visit_days(plan, plan.endpoints)


def _visit_days(plan: Plan, endpoints: tuple[Endpoint, ...]) -> tuple[int, ...]:
    days = sorted({plan.visit(visit).day for endpoint in endpoints for visit in endpoint.visits})
    return tuple(days or sorted(v.day for v in plan.schedule.visits))


def participant_span_days(plan: Plan) -> int:
    days = rated_visit_days(plan)
    return max(days[-1] - days[0], plan.study.treatment_weeks * 7)


def study_window(plan: Plan) -> RatingWindow:
    """From the first participant's first rated assessment to the last participant's last."""
    first = plan.study.first_assessment
    last = first + timedelta(weeks=plan.study.enrolment_weeks) + timedelta(days=participant_span_days(plan))
    return RatingWindow(first, last)


def endpoint_first_assessment(plan: Plan, endpoint: Endpoint, site_id: str | None = None) -> date:
    """First date the endpoint is rated (at a site, when given)."""
    return endpoints_first_assessment(plan, (endpoint,), site_id)


def endpoints_first_assessment(plan: Plan, endpoints: Iterable[Endpoint], site_id: str | None = None) -> date:
    """First date any of ``endpoints`` (at least one) is rated (at a site, when given).

    Every endpoint is offset from the same start by its first rated day, so the earliest of
    them is the one with the earliest day: one pass over the endpoints, whatever the sites.
    """
    first_day = min(plan.visit(v).day for endpoint in endpoints for v in endpoint.visits)
    start = plan.study.first_assessment
    if site_id is not None:
        site = plan.study.site(site_id)
        start = site.first_assessment or start
    return start + timedelta(days=first_day - rated_visit_days(plan)[0])


def instrument_first_assessment(plan: Plan, instrument_id: str) -> date | None:
    endpoints = plan.endpoints_for(instrument_id)
    if not endpoints:
        return None
    return endpoints_first_assessment(plan, endpoints)


def pool_sites(plan: Plan, pool_id: str) -> tuple[str, ...]:
    pool = plan.pool(pool_id)
    if pool.is_central:
        return ()
    return pool.sites if pool.sites else tuple(site.id for site in plan.study.sites)


def add_months(day: date, months: int) -> date:
    """``day`` plus whole calendar months, clamped to the month's last day (31 Jan + 1 = 28/29 Feb)."""
    month_index = day.month - 1 + months
    year, month = day.year + month_index // 12, month_index % 12 + 1
    return date(year, month, min(day.day, calendar.monthrange(year, month)[1]))


def certification_expiry(certification: RaterCertification, interval_months: int | None) -> date | None:
    """When a certification lapses: its own ``expires`` date, else the pool's recertification
    interval counted from the certification date, else never."""
    if certification.expires is not None:
        return certification.expires
    return add_months(certification.date, interval_months) if interval_months else None
