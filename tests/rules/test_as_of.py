"""Date rules read the reference date from ``--as-of`` (or the plan's date), never the wall clock."""

from __future__ import annotations

import sys
import time
from datetime import date, datetime
from pathlib import Path

import pytest

from protolint.plan import load_plan
from protolint.plan.source import load_source
from protolint.rules.engine import check_loaded

DEMO = Path(__file__).resolve().parents[2] / "demo_protocol" / "plan.yaml"


class _NoToday(date):
    @classmethod
    def today(cls):  # type: ignore[override]
        raise AssertionError("a rule read the wall clock (date.today)")


class _NoNow(datetime):
    @classmethod
    def now(cls, tz=None):  # type: ignore[override]
        raise AssertionError("a rule read the wall clock (datetime.now)")

    @classmethod
    def today(cls):  # type: ignore[override]
        raise AssertionError("a rule read the wall clock (datetime.today)")

    @classmethod
    def utcnow(cls):  # type: ignore[override]
        raise AssertionError("a rule read the wall clock (datetime.utcnow)")


def _run(as_of: date | None):
    source = load_source(DEMO.read_bytes(), str(DEMO))
    loaded = load_plan(source)
    result = check_loaded(loaded, as_of=as_of)
    return [(f.rule, f.location.line, f.message, f.waived, dict(f.facts)) for f in result.findings]


def _forbid_clock(monkeypatch: pytest.MonkeyPatch) -> None:
    def no_time() -> float:
        raise AssertionError("a rule read the wall clock (time.time)")

    monkeypatch.setattr(time, "time", no_time)
    for name, module in list(sys.modules.items()):
        # The model compares type hints with `date` by identity to build dates; it never asks
        # for today, and swapping its name would stop it building dates at all.
        if not name.startswith("protolint") or name == "protolint.plan.model":
            continue
        if getattr(module, "date", None) is date:
            monkeypatch.setattr(module, "date", _NoToday)
        if getattr(module, "datetime", None) is datetime:
            monkeypatch.setattr(module, "datetime", _NoNow)


@pytest.mark.parametrize("as_of", [None, date(2026, 7, 15), date(2027, 9, 1)])
def test_same_findings_without_a_clock(monkeypatch: pytest.MonkeyPatch, as_of: date | None) -> None:
    expected = _run(as_of)
    _forbid_clock(monkeypatch)
    assert _run(as_of) == expected


def test_as_of_changes_the_date_findings() -> None:
    """The demo's certifications (August 2026, valid 12 months) have expired by September 2027,
    and its photography SOP waiver (until 2026-12-31) has expired too; neither as of the plan date."""
    at_plan_date = {(rule, line) for rule, line, *_ in _run(None)}
    later = {(rule, line) for rule, line, *_ in _run(date(2027, 9, 1))}
    assert not any(rule == "raters/certification-expired" for rule, _ in at_plan_date)
    assert any(rule == "raters/certification-expired" for rule, _ in later)
    assert any(rule == "waivers/expired" for rule, _ in later)
    assert _run(None) == _run(date(2026, 7, 15)), "the default reference date is the plan's own date"
