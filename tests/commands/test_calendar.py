"""``protolint calendar``: RFC 5545 events parsed back with the icalendar library."""

from __future__ import annotations

from datetime import date
from pathlib import Path

import pytest
from icalendar import Calendar

from protolint.plan import read_plan_file
from protolint.render.calendar import dated_duties
from protolint.plan.monitoring import monitoring_rounds
from tests.conftest import write_demo_plan


@pytest.fixture(autouse=True)
def _no_source_date_epoch(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.delenv("SOURCE_DATE_EPOCH", raising=False)


def _events(data: bytes):
    return [c for c in Calendar.from_ical(data).walk("VEVENT")]


def test_calendar_parses_back_with_every_duty(cli, demo_plan, tmp_path: Path) -> None:
    target = tmp_path / "demo.ics"
    result = cli("calendar", demo_plan, "--output", target)
    assert result.exit_code == 0
    events = _events(target.read_bytes())
    plan = read_plan_file(str(demo_plan)).plan
    assert len(events) == len(dated_duties(plan))
    kinds = {str(e["categories"].cats[0]) for e in events}
    assert kinds == {"training-deadline", "certification-deadline", "recertification", "monitoring-round", "sop-review"}
    uids = [str(e["uid"]) for e in events]
    assert len(set(uids)) == len(uids)
    by_summary = {str(e["summary"]): e for e in events}
    review = by_summary["NDS-HD-301: SOP review due — SOP-IMG-002 Standardised hand photography and central grading"]
    assert review.decoded("dtstart") == date(2026, 6, 30)
    # Every monitoring round of the plan is an event on its due date.
    round_days = sorted(r.due for p in plan.rater_pools for rs in monitoring_rounds(plan, p).values() for r in rs)
    assert sorted(e.decoded("dtstart") for e in events if str(e["categories"].cats[0]) == "monitoring-round") == round_days
    # Rater R-S01-A certified on 2026-08-10, every 12 months: due 2027-08-10.
    assert any("R-S01-A" in str(e["summary"]) and e.decoded("dtstart") == date(2027, 8, 10) for e in events)


def test_re_export_gives_the_same_uids_and_bytes(cli, demo_plan) -> None:
    first, second = cli("calendar", demo_plan), cli("calendar", demo_plan)
    assert first.exit_code == second.exit_code == 0
    assert first.stdout_bytes == second.stdout_bytes
    assert [str(e["uid"]) for e in _events(first.stdout_bytes)] == [str(e["uid"]) for e in _events(second.stdout_bytes)]
    assert b"DTSTAMP:20260715T000000Z" in first.stdout_bytes  # the plan's date, not the clock


def test_unreadable_plan_exits_2(cli_process, tmp_path: Path) -> None:
    bad = tmp_path / "bad.yaml"
    bad.write_text("a: [1\n", encoding="utf-8")
    result = cli_process("calendar", bad, "--output", tmp_path / "x.ics")
    assert result.returncode == 2
    assert result.stderr.startswith(f"{bad}:") and "Traceback" not in result.stderr
    assert not (tmp_path / "x.ics").exists()


def test_a_rostered_expiry_date_is_the_recertification_date(demo_plan, tmp_path: Path) -> None:
    # The rule raters/certification-expired and the calendar read the same expiry: the roster's
    # own `expires` when given, else the pool's interval from the certification date.
    text = demo_plan.read_text(encoding="utf-8")
    edited = text.replace('certifications: [{instrument: HLSC-8, version: "1.2", date: 2026-08-10}]',
                          'certifications: [{instrument: HLSC-8, version: "1.2", date: 2026-08-10, expires: 2027-02-10}]')
    assert edited != text
    plan_file = write_demo_plan(tmp_path / "plan.yaml", edited)
    duties = [d for d in dated_duties(read_plan_file(str(plan_file)).plan)
              if d.kind == "recertification" and "R-S01-A" in d.summary]
    # 2027-02-10 from the roster, then every 12 months (the pool's interval) until rating ends.
    assert [d.day for d in duties] == [date(2027, 2, 10), date(2028, 2, 10)]
    unedited = [d.day for d in dated_duties(read_plan_file(str(demo_plan)).plan)
                if d.kind == "recertification" and "R-S01-A" in d.summary]
    assert unedited == [date(2027, 8, 10)]   # 2026-08-10 + 12 months; rating ends 2028-03-15


@pytest.mark.parametrize("value", ["now", "99999999999999999999"])
def test_a_bad_source_date_epoch_is_one_line_not_a_traceback(cli_process, value):
    import os

    result = cli_process("calendar", "demo_protocol/plan.yaml", env={**os.environ, "SOURCE_DATE_EPOCH": value})
    assert result.returncode == 2 and "Traceback" not in result.stderr and result.stdout == ""
    [line] = result.stderr.splitlines()
    assert line.startswith("protolint: SOURCE_DATE_EPOCH is ") and "whole number of seconds" in line
