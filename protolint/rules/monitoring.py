"""Monitoring rules: raters are checked for drift while the trial runs."""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Plan
from protolint.rules.registry import Hit, RuleContext, rule


@rule("monitoring/none-planned", "error",
      source="Lachin 2004 (Clin Trials 1:553; quality control by duplicate assessments); ICH E6(R3) 3.11.4 (centralised monitoring)")
def none_planned(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rater pool is trained and certified but never monitored afterwards.

    Raters drift after certification: their scores move away from the reference over months.
    Without monitoring rounds (co-rating, review of recordings, central re-rating, data
    surveillance) drift is found only when the data are analysed, if at all.

    **Passes**: `monitoring: {interval_weeks: 12, method: [central-re-rating]}`.

    **Fails**: a pool with no `monitoring`, or monitoring with no `interval_weeks` or `method`.
    """
    for pool in plan.rater_pools:
        if not any(plan.instrument(i).is_rated_by_people for i in pool.instruments):
            continue
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
