"""Monitoring rounds on a hand-worked example.

Worked by hand (calendar arithmetic, no code), for the plan in ``tests/render/fixtures/minimal.yaml`` with a
5-week monitoring interval and a second site that starts on 2026-04-01:

* first assessment 2026-03-02; enrolment 4 weeks (28 days); each participant is rated on
  days 1 and 57, treatment 8 weeks, so a participant's rated span is max(57 - 1, 8 × 7) = 56
  days. The last participant's last visit is 2026-03-02 + 28 + 56 = + 84 days:
  March 2 + 29 = March 31 (29), + 30 = April 30 (59), + 25 = **May 25** (84).
* Site A (starts 2026-03-02): round 1 at + 35 days = March 31 (+29) + 6 = **April 6**;
  round 2 at + 70 days = April 6 + 35 = April 30 (+24) + 11 = **May 11**; round 3 would be
  June 15, after May 25, so a close-out round on **May 25** reviews ratings from May 12.
* Site B (starts 2026-04-01): round 1 at April 1 + 35 = April 30 (+29) + 6 = **May 6**;
  the next, June 10, is past May 25: close-out on **May 25** covering May 7 to May 25.
"""

from __future__ import annotations

from dataclasses import replace
from datetime import date
from pathlib import Path

import pytest

from protolint.plan.model import Monitoring
from protolint.plan.monitoring import (
    CENTRAL,
    add_months,  # re-exported from protolint.plan.timeline
    monitoring_rounds,
    recertification_dates,
    rostered_raters,
    rounds_between,
    training_deadline,
)


MINIMAL = Path(__file__).resolve().parents[1] / "render" / "fixtures" / "minimal.yaml"


@pytest.fixture(scope="module")
def minimal_loaded():
    from protolint.plan import read_plan_file

    return read_plan_file(str(MINIMAL))


@pytest.fixture(scope="module")
def demo_loaded():
    from protolint.plan import read_plan_file

    return read_plan_file(str(Path(__file__).resolve().parents[2] / "demo_protocol" / "plan.yaml"))


@pytest.fixture
def worked_plan(minimal_loaded):
    plan = minimal_loaded.plan
    site_a = plan.study.sites[0]
    site_b = replace(site_a, id="B", name="Site B (invented)", first_assessment=date(2026, 4, 1))
    pool = replace(plan.rater_pools[0], monitoring=Monitoring(path=(), interval_weeks=5))
    return replace(plan, study=replace(plan.study, sites=(site_a, site_b)), rater_pools=(pool,))


def test_hand_worked_rounds_per_site(worked_plan) -> None:
    rounds = monitoring_rounds(worked_plan, worked_plan.rater_pools[0])
    assert list(rounds) == ["A", "B"]
    a = [(r.number, r.due, r.covers_from, r.close_out) for r in rounds["A"]]
    assert a == [
        (1, date(2026, 4, 6), date(2026, 3, 2), False),
        (2, date(2026, 5, 11), date(2026, 4, 7), False),
        (3, date(2026, 5, 25), date(2026, 5, 12), True),
    ]
    b = [(r.number, r.due, r.covers_from, r.close_out) for r in rounds["B"]]
    assert b == [(1, date(2026, 5, 6), date(2026, 4, 1), False), (2, date(2026, 5, 25), date(2026, 5, 7), True)]


def test_a_round_on_the_last_day_needs_no_close_out() -> None:
    # 84 days = 12 weeks: with a 4-week interval the third round falls on the last day.
    rounds = rounds_between("P", "A", date(2026, 3, 2), date(2026, 5, 25), 4)
    assert [r.due for r in rounds] == [date(2026, 3, 30), date(2026, 4, 27), date(2026, 5, 25)]
    assert not any(r.close_out for r in rounds)


def test_central_pool_is_one_unit(demo_loaded) -> None:
    plan = demo_loaded.plan
    rounds = monitoring_rounds(plan, plan.pool("CENTRAL-READ"))
    assert list(rounds) == [CENTRAL]
    # Demo, by hand: screening (day -14) is 2026-09-01; photographs start at baseline (day 1),
    # 1 - (-14) = 15 days later: 2026-09-16. Every 12 weeks = 84 days: Sep 16 + 14 = Sep 30,
    # + 31 = Oct 31 (45), + 30 = Nov 30 (75), + 9 = Dec 9 (84).
    assert rounds[CENTRAL][0].covers_from == date(2026, 9, 16)
    assert rounds[CENTRAL][0].due == date(2026, 12, 9)


def test_rostered_raters_by_pool_and_site(demo_loaded) -> None:
    # The demo roster (invented) lists R-S01-A at S01 and R-S02-A at S02, both SITE-DERM.
    plan = demo_loaded.plan
    assert [r.id for r in rostered_raters(plan, "SITE-DERM", "S01")] == ["R-S01-A"]
    assert [r.id for r in rostered_raters(plan, "SITE-DERM", "S02")] == ["R-S02-A"]
    assert rostered_raters(plan, "SITE-DERM", "S03") == ()
    # Central: every rater of the pool, wherever the roster places them, in roster order.
    assert [r.id for r in rostered_raters(plan, "SITE-DERM", CENTRAL)] == ["R-S01-A", "R-S02-A"]
    assert rostered_raters(plan, "CENTRAL-READ", CENTRAL) == ()


def test_pool_without_interval_has_no_rounds(minimal_loaded) -> None:
    plan = minimal_loaded.plan
    assert monitoring_rounds(plan, plan.rater_pools[0]) == {}


def test_interval_must_be_positive() -> None:
    with pytest.raises(ValueError, match="interval_weeks"):
        rounds_between("P", "A", date(2026, 1, 1), date(2026, 6, 1), 0)


def test_calendar_months_clamp_to_month_end() -> None:
    assert add_months(date(2026, 1, 31), 1) == date(2026, 2, 28)
    assert add_months(date(2027, 11, 30), 3) == date(2028, 2, 29)
    assert recertification_dates(date(2026, 8, 10), 12, date(2028, 8, 9)) == (date(2027, 8, 10),)
    assert training_deadline(date(2026, 9, 1), 14) == date(2026, 8, 18)
