"""Monitoring rules: raters are checked for drift while the trial runs."""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Plan
from protolint.plan.monitoring import CENTRAL, monitoring_rounds, pool_spans, rounds_while_rating
from protolint.rules import sources as S
from protolint.rules.registry import Hit, RuleContext, Threshold, rule
from protolint.rules.sources import cite
from protolint.wording import plural


@rule("monitoring/none-planned", "error",
      source=cite(f"{S.LACHIN_2004} (quality control by duplicate assessments)",
                  f"{S.E6}, Annex 1 sections 3.11.4 and 3.11.4.2 (monitoring, including centralised monitoring)"))
def none_planned(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rater pool is trained and certified but never monitored afterwards.

    Raters drift after certification: their scores move away from the reference over months.
    Without monitoring rounds (co-rating, review of recordings, central re-rating, data
    surveillance) drift is found only when the data are analysed, if at all.

    **Passes**: `monitoring: {interval_weeks: 12, method: [central-re-rating]}`.

    **Fails**: a pool with no `monitoring`, or monitoring with no `interval_weeks` or `method`.
    """
    for pool in plan.people_pools():
        monitoring = pool.monitoring
        if monitoring is None:
            yield Hit(pool.path + ("id",), f"rater pool {pool.id} has no monitoring of raters after certification")
        elif monitoring.interval_weeks is None or not monitoring.method:
            missing = "how often" if monitoring.interval_weeks is None else "how"
            yield Hit(monitoring.path, f"monitoring of rater pool {pool.id} does not say {missing} raters are checked")


@rule("monitoring/interval-beyond-participation", "warning",
      source="common practice (a monitoring round must fall inside a participant's time in the trial to catch drift in their ratings)")
def interval_beyond_participation(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Monitoring rounds are further apart than a participant's time in the trial.

    If raters are checked less often than once per participant's rated period, a
    participant can enter and finish the trial between two checks, and drift in all of that
    participant's ratings goes unseen.

    **Passes**: monitoring every 12 weeks, participants rated over 26 weeks.

    **Fails**: monitoring every 52 weeks, participants rated over 26 weeks.
    """
    from protolint.plan.timeline import participant_span_days

    span = participant_span_days(plan)
    for pool in plan.rater_pools:
        monitoring = pool.monitoring
        if monitoring is None or monitoring.interval_weeks is None:
            continue
        if monitoring.interval_weeks * 7 > span:
            yield Hit(monitoring.path + ("interval_weeks",),
                      f"rater pool {pool.id} is monitored every {monitoring.interval_weeks} weeks, longer than the "
                      f"{span // 7} weeks a participant is rated",
                      {"interval_days": monitoring.interval_weeks * 7, "participant_days": span})


ROUND_DEFINITION = ("round k falls k x interval after the pool's first rating at the site, up to the last rating; "
                    "a close-out round on the last rating day reviews the ratings made after the last regular round")


@rule("monitoring/no-rounds-in-rating-period", "warning", computed=True,
      source=cite("common practice (arithmetic on the plan's schedule)", f"{S.MULSANT_2002} (reliability of ratings in trials)"))
def no_rounds_in_rating_period(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Monitoring is so infrequent that no round falls while ratings are being made.

    A pool starts rating at a site on the first day any of its endpoints is rated there (the
    site's own `first_assessment` when it has one) and stops on the last participant's last
    rated visit. Monitoring round k falls k × `interval_weeks` after that start; when the last
    regular round falls before the last rating day, a close-out round on that day reviews the
    rest. These are the rounds the monitoring checklist and the calendar list. When the only
    round at a site is the close-out round, its raters are checked only after every rating has
    been made: drift is found too late to correct any of them.

    **Passes**: interval 12 weeks, rating period 78 weeks (6 regular rounds and a close-out round).

    **Fails**: interval 80 weeks, rating period 78 weeks (only the close-out round).
    """
    for pool in plan.people_pools():
        monitoring = pool.monitoring
        if monitoring is None or monitoring.interval_weeks is None:
            continue
        rounds = monitoring_rounds(plan, pool)
        late = [site for site, site_rounds in rounds.items() if not rounds_while_rating(site_rounds)]
        if not late:
            continue
        spans = {span.site: span for span in pool_spans(plan, pool)}
        first = min(spans[site].first_rating for site in late)
        last = max(spans[site].last_rating for site in late)
        days = (last - first).days
        count = sum(len(rounds[site]) for site in late)
        where = "centrally" if late == [CENTRAL] else f"at {_sites_phrase(late)}"
        span_words = "" if len({spans[site].first_rating for site in late}) == 1 else "at most "
        yield Hit(monitoring.path + ("interval_weeks",),
                  f"rater pool {pool.id} is monitored every {monitoring.interval_weeks} weeks, but {where} it rates for "
                  f"{span_words}{days} days ({first.isoformat()} to {last.isoformat()}): the first round would fall after the "
                  f"last rating, so the only round is the close-out round on {last.isoformat()}, when every rating has been "
                  "made; shorten the interval so that raters are checked while data are collected",
                  {"pool": pool.id, "sites": late, "rating_period_days": days, "first_rating": first.isoformat(),
                   "last_rating": last.isoformat(), "interval_days": monitoring.interval_weeks * 7,
                   "rounds": count, "rounds_while_rating": 0, "formula": ROUND_DEFINITION})


def _sites_phrase(sites: list[str]) -> str:
    names = ["central rating" if site == CENTRAL else f"site {site}" if len(sites) == 1 else site for site in sites]
    if len(names) == 1:
        return names[0]
    return "sites " + ", ".join(names[:-1]) + " and " + names[-1]


@rule("monitoring/interval-exceeds-drift-window", "warning", computed=True,
      thresholds=[Threshold("max_interval_weeks", 26, "Longest acceptable gap between monitoring rounds (the drift window).", 1, 260)],
      source=cite("common practice (recalibration within months; no published interval)",
                  f"{S.MULSANT_2002} (reliability of ratings in trials)"))
def interval_exceeds_drift_window(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Monitoring rounds are further apart than the drift window.

    Drift builds up gradually; the longer the gap between checks, the more ratings a drifting
    rater makes before anyone notices. The rule reports intervals longer than
    `max_interval_weeks` together with the number of regular rounds (those that fall while
    ratings are made, as the monitoring checklist lists them) at the site with the fewest.

    **Passes**: monitoring every 12 weeks.

    **Fails**: monitoring every 52 weeks against a 26-week drift window.
    """
    limit = int(ctx.thresholds["max_interval_weeks"])
    for pool in plan.people_pools():
        monitoring = pool.monitoring
        if monitoring is None or monitoring.interval_weeks is None or monitoring.interval_weeks <= limit:
            continue
        per_site = {site: len(rounds_while_rating(site_rounds)) for site, site_rounds in monitoring_rounds(plan, pool).items()}
        lengths = {(span.last_rating - span.first_rating).days for span in pool_spans(plan, pool)}
        days = max(lengths, default=0)
        fewest = min(per_site.values(), default=0)
        rounds_words = plural(fewest, "regular round")
        if len(set(per_site.values())) > 1:
            rounds_words = f"as few as {rounds_words} at one site"
        elif len(per_site) > 1:
            rounds_words += " at each site"
        count = f"{rounds_words} in {'at most ' if len(lengths) > 1 else ''}{days} days of rating"
        yield Hit(monitoring.path + ("interval_weeks",),
                  f"rater pool {pool.id} is monitored every {monitoring.interval_weeks} weeks, longer than the {limit}-week "
                  f"drift window; that gives {count}, so a drifting rater can rate "
                  f"for up to {monitoring.interval_weeks} weeks unnoticed",
                  {"pool": pool.id, "interval_weeks": monitoring.interval_weeks, "max_interval_weeks": limit,
                   "rating_period_days": days, "rounds": fewest})


@rule("monitoring/recertification-too-infrequent", "warning",
      thresholds=[Threshold("max_months", 12, "Longest a certification may stay valid without recertification.", 1, 120)],
      source=cite("common practice (yearly recertification)", f"{S.E6}, Annex 1 section 2.3.2 (trial-specific training)"))
def recertification_too_infrequent(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Raters are never recertified, or only after a long interval.

    Certification shows a rater could score the instrument on a given day. In a long trial
    raters should certify again at a set interval and after events that change the task.

    **Passes**: `recertification: {interval_months: 12, triggers: [amendment]}`.

    **Fails**: no `recertification`, or `interval_months: 24`.
    """
    limit = int(ctx.thresholds["max_months"])
    for pool in plan.people_pools():
        recert = pool.recertification
        if recert is None or recert.interval_months is None:
            where = recert.path if recert is not None else pool.path + ("id",)
            yield Hit(where, f"rater pool {pool.id} sets no recertification interval; recertify at least every {limit} months")
        elif recert.interval_months > limit:
            yield Hit(recert.path + ("interval_months",),
                      f"rater pool {pool.id} recertifies every {recert.interval_months} months, longer than {limit}",
                      {"pool": pool.id, "interval_months": recert.interval_months, "max_months": limit})


@rule("monitoring/no-drift-criteria", "warning",
      source=f"{S.E6}, Annex 1 section 3.11.4.5.4 (look for outliers, lack of variability and trends within and across "
             "sites) and principle 6.3")
def no_drift_criteria(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Monitoring does not say what counts as drift or what happens then.

    A monitoring round is useful only if it measures something per rater (`metrics`), has an
    action threshold (`drift_threshold`) and a `remediation` (retrain, suspend, recertify, and
    what becomes of the ratings made meanwhile).

    **Passes**: monitoring with `metrics`, `drift_threshold: {max_deviation: 4}` and `remediation`.

    **Fails**: monitoring with `interval_weeks` and `method` only.
    """
    for pool in plan.people_pools():
        monitoring = pool.monitoring
        if monitoring is None:
            continue
        missing = [name for name, value in (("metrics", monitoring.metrics), ("drift_threshold", monitoring.drift_threshold),
                                            ("remediation", monitoring.remediation)) if not value]
        if missing:
            yield Hit(monitoring.path, f"monitoring of rater pool {pool.id} does not state its {', '.join(missing)}; say what is "
                                       "measured per rater, when it counts as drift and what is done then")


_DUPLICATING = frozenset({"co-rating", "central-re-rating", "video-review"})


@rule("monitoring/no-duplicate-ratings", "note",
      thresholds=[Threshold("min_duplicate_fraction", 0.05, "Smallest share of trial assessments rated twice independently.", 0.0, 1.0)],
      source=cite(f"{S.LACHIN_2004} (quality control by randomly selected duplicate assessments)",
                  "the fraction: common practice"))
def no_duplicate_ratings(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """No random share of real trial assessments is rated a second time.

    Certification measures agreement on curated training cases. What the trial itself
    achieves shows only when some of its own assessments are rated twice (co-rating, blind review of recordings, central re-rating) show what the trial
    achieved, so that it can be reported with the results. A stated `duplicate_fraction` below
    `min_duplicate_fraction` is reported too.

    **Passes**: `method: [central-re-rating]` with `duplicate_fraction: 0.1`.

    **Fails**: `method: [data-surveillance]` only, or `duplicate_fraction: 0.02`.
    """
    minimum = float(ctx.thresholds["min_duplicate_fraction"])
    for pool in plan.people_pools():
        monitoring = pool.monitoring
        if monitoring is None or not monitoring.method:
            continue
        if not _DUPLICATING & set(monitoring.method):
            yield Hit(monitoring.path + ("method",),
                      f"monitoring of rater pool {pool.id} re-rates no trial assessments; add co-rating, video review or "
                      f"central re-rating of at least {minimum:.0%} of assessments")
        elif monitoring.duplicate_fraction is not None and monitoring.duplicate_fraction < minimum:
            yield Hit(monitoring.path + ("duplicate_fraction",),
                      f"rater pool {pool.id} re-rates {monitoring.duplicate_fraction:.0%} of assessments, less than {minimum:.0%}",
                      {"pool": pool.id, "duplicate_fraction": monitoring.duplicate_fraction, "minimum": minimum})
