"""The plan's dated duties as iCalendar (RFC 5545), written with the ``icalendar`` package.

Events are all-day (``VALUE=DATE``): a deadline is a day, not a time in some time zone.
Every UID is a hash of the study id, the event kind, the ids involved and the date, so
exporting the same plan again gives the same UIDs and calendar programs update the events
instead of adding copies; ``DTSTAMP`` is the document date (``--as-of``, SOURCE_DATE_EPOCH or
the plan's date), never the clock, so the same plan gives the same file. The calendar's
description records the plan, the policy and the date it was checked under, and whether the
plan still has open errors (then every event says it comes from a draft plan).
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass
from pathlib import PurePath
from datetime import date, datetime, time, timedelta, timezone

from protolint import CAUTION, __version__
from protolint.plan import LoadedPlan
from protolint.plan.model import Plan
from protolint.plan.timeline import certification_expiry, study_window
from protolint.plan.monitoring import CENTRAL, monitoring_rounds, pool_spans, recertification_dates, rostered_raters
from protolint.plan.monitoring import training_deadline
from protolint.render.document import DocumentCheck, document_check, document_date, document_status, library_versions

UID_DOMAIN = "protolint.invalid"


@dataclass(frozen=True)
class DatedDuty:
    kind: str
    """training-deadline, certification-deadline, recertification, monitoring-round, sop-review."""
    day: date
    summary: str
    description: str
    ids: tuple[str, ...]


def stable_uid(study_id: str, kind: str, ids: tuple[str, ...], day: date) -> str:
    key = "\x1f".join((study_id, kind, *ids, day.isoformat()))
    return f"{hashlib.sha256(key.encode('utf-8')).hexdigest()[:32]}@{UID_DOMAIN}"


def _site_name(plan: Plan, site_id: str) -> str:
    return "central" if site_id == CENTRAL else plan.study.site(site_id).name


def dated_duties(plan: Plan) -> tuple[DatedDuty, ...]:
    """Every dated duty in the plan, sorted by date then kind then ids."""
    duties: list[DatedDuty] = []
    study = plan.study.id
    end = study_window(plan).last
    for pool in plan.rater_pools:
        days_before = pool.training.days_before_first_rating if pool.training else None
        interval = pool.recertification.interval_months if pool.recertification else None
        for span in pool_spans(plan, pool):
            where = _site_name(plan, span.site)
            deadline = training_deadline(span.first_rating, days_before)
            duties.append(DatedDuty(
                "training-deadline", deadline, f"{study}: training complete — {pool.label}, {where}",
                f"Initial rater training for {pool.label} at {where} must be complete; first rating {span.first_rating.isoformat()}.",
                (pool.id, span.site)))
            duties.append(DatedDuty(
                "certification-deadline", span.first_rating - timedelta(days=1),
                f"{study}: raters certified — {pool.label}, {where}",
                f"Every rater of {pool.label} at {where} certified before the first rating on {span.first_rating.isoformat()}.",
                (pool.id, span.site)))
            if interval and not rostered_raters(plan, pool.id, span.site):
                # No named raters yet: the pool's certifications fall due counted from first rating.
                for due in recertification_dates(span.first_rating, interval, end):
                    duties.append(DatedDuty(
                        "recertification", due, f"{study}: recertification due — {pool.label}, {where}",
                        f"Certifications of {pool.label} at {where} made by {span.first_rating.isoformat()} fall due "
                        f"(every {interval} months).", (pool.id, span.site)))
        for rater in rostered_raters(plan, pool.id, CENTRAL):
            for cert in rater.certifications:
                first_due = certification_expiry(cert, interval)
                if first_due is None or first_due > end:
                    continue
                # The first date is the certification's own expiry when the roster states one;
                # later ones follow the pool's interval from there.
                later = recertification_dates(first_due, interval, end) if interval else ()
                for due in (first_due, *later):
                    duties.append(DatedDuty(
                        "recertification", due, f"{study}: recertification due — rater {rater.id}, {cert.instrument}",
                        f"Rater {rater.id} ({pool.label}) certified on {cert.instrument} on {cert.date.isoformat()}; "
                        + (f"recertify every {interval} months." if interval else f"the certification lapses on {first_due.isoformat()}."),
                        (pool.id, rater.id, cert.instrument)))
        for site_id, rounds in monitoring_rounds(plan, pool).items():
            where = _site_name(plan, site_id)
            for r in rounds:
                label = "close-out monitoring round" if r.close_out else f"monitoring round {r.number}"
                duties.append(DatedDuty(
                    "monitoring-round", r.due, f"{study}: {label} — {pool.label}, {where}",
                    f"Review the ratings made from {r.covers_from.isoformat()} to {r.due.isoformat()} "
                    f"against the plan's drift threshold.", (pool.id, site_id, str(r.number))))
    for sop in plan.sops:
        if sop.review_due:
            duties.append(DatedDuty("sop-review", sop.review_due, f"{study}: SOP review due — {sop.id} {sop.title}",
                                    f"{sop.id} version {sop.version} is due for review.", (sop.id, sop.version)))
    return tuple(sorted(duties, key=lambda d: (d.day, d.kind, d.ids)))


def render_calendar(loaded: LoadedPlan, check: DocumentCheck | None = None) -> bytes:
    """The iCalendar file for ``loaded``; ``check`` is the plan's check under the policy and
    as-of date in force (None: the default policy as of the plan's date)."""
    from icalendar import Calendar, Event

    if loaded.plan is None:
        raise ValueError("the plan has schema or reference problems; no calendar is made from it")
    plan = loaded.plan
    check = check or document_check(loaded)
    day, _ = document_date(plan, as_of=check.given_as_of)
    stamp = datetime.combine(day, time(0, 0), tzinfo=timezone.utc)
    calendar = Calendar()
    calendar.add("prodid", f"-//protolint//protolint {__version__}//EN")
    calendar.add("version", "2.0")
    calendar.add("calscale", "GREGORIAN")
    calendar.add("x-wr-calname", f"{plan.study.id} rater duties")
    # The documents' own draft words ("Draft — 2 open errors in the plan check — not for use").
    draft = document_status(plan, "calendar", check).mark
    status = f"{draft}." if draft else "No open errors in the plan check."
    versions = ", ".join(f"{lib.label} {lib.value}" for lib in library_versions(("icalendar",)))
    calendar.add("x-wr-caldesc", f"From plan {PurePath(loaded.source.file).name} (SHA-256 {loaded.source.sha256}), "
                                 f"checked as of {check.as_of.isoformat()} under {check.policy.describe()}. {status} "
                                 f"protolint {__version__}, {versions}. {CAUTION}")
    footer = f"\n\nFrom plan SHA-256 {loaded.source.sha256}.{' ' + status if draft else ''}\n{CAUTION}"
    for duty in dated_duties(plan):
        event = Event()
        event.add("uid", stable_uid(plan.study.id, duty.kind, duty.ids, duty.day))
        event.add("dtstamp", stamp)
        event.add("dtstart", duty.day)
        event.add("dtend", duty.day + timedelta(days=1))
        event.add("summary", duty.summary)
        event.add("description", duty.description + footer)
        event.add("categories", [duty.kind])
        event.add("transp", "TRANSPARENT")
        calendar.add_component(event)
    return calendar.to_ical()
