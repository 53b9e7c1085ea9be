"""Look-ups by id and memoised derived facts answer exactly what a search of the plan would."""

from __future__ import annotations

from dataclasses import replace

from protolint.plan import read_plan_file
from protolint.plan.monitoring import monitoring_rounds, pool_spans
from protolint.plan.timeline import endpoint_first_assessment, endpoints_first_assessment


def demo(path):
    return read_plan_file(str(path)).plan


def test_every_look_up_returns_the_object_with_that_id(demo_plan):
    plan = demo(demo_plan)
    for section, look_up in ((plan.instruments, plan.instrument), (plan.endpoints, plan.endpoint),
                             (plan.rater_pools, plan.pool), (plan.schedule.visits, plan.visit),
                             (plan.study.sites, plan.study.site)):
        assert section
        for item in section:
            assert look_up(item.id) is item
    for instrument in plan.instruments:
        assert plan.endpoints_for(instrument.id) == tuple(e for e in plan.endpoints if e.instrument == instrument.id)
    assert plan.endpoints_for("NO-SUCH-INSTRUMENT") == ()


def test_earliest_rating_of_many_endpoints_is_the_earliest_of_each(demo_plan):
    plan = demo(demo_plan)
    for site in (None, *(s.id for s in plan.study.sites)):
        assert endpoints_first_assessment(plan, plan.endpoints, site) == min(
            endpoint_first_assessment(plan, endpoint, site) for endpoint in plan.endpoints)


def test_memoised_rounds_cannot_be_changed_by_a_caller(demo_plan):
    plan = demo(demo_plan)
    pool = next(p for p in plan.rater_pools if monitoring_rounds(plan, p))
    first = monitoring_rounds(plan, pool)
    expected = dict(first)
    first.clear()
    assert monitoring_rounds(plan, pool) == expected


def test_a_changed_pool_gets_its_own_rounds_not_the_memoised_ones(demo_plan):
    plan = demo(demo_plan)
    pool = next(p for p in plan.rater_pools if p.monitoring and p.monitoring.interval_weeks)
    weekly = replace(pool, monitoring=replace(pool.monitoring, interval_weeks=1))
    before = monitoring_rounds(plan, pool)
    after = monitoring_rounds(plan, weekly)
    assert pool_spans(plan, weekly) == pool_spans(plan, pool)
    site = next(iter(before))
    assert len(after[site]) > len(before[site])
    assert monitoring_rounds(plan, pool) == before
