"""What a plan multiplies is counted by arithmetic before any document builds it."""

from __future__ import annotations

from pathlib import Path

import pytest

from protolint.plan import load_plan, read_source
from protolint.plan.limits import MAX_ROUNDS, pool_rounds, rounds_count, size_problems
from protolint.plan.monitoring import monitoring_rounds, pool_spans, rounds_between

REPO = Path(__file__).resolve().parents[2]
PLANS = [REPO / "demo_protocol" / "plan.yaml", REPO / "tests" / "corpus" / "plans" / "base.yaml"]


@pytest.mark.parametrize("days, weeks", [(0, 1), (6, 1), (7, 1), (8, 1), (84, 12), (85, 12), (3650, 52), (3651, 1)])
def test_the_count_bounds_the_rounds_made(days, weeks):
    from datetime import date, timedelta

    start = date(2026, 9, 1)
    made = len(rounds_between("P", "S", start, start + timedelta(days=days), weeks))
    assert made <= rounds_count(days, weeks) <= made + 1


@pytest.mark.parametrize("path", PLANS, ids=lambda p: p.parent.name)
def test_the_plans_rounds_are_counted_without_making_them(path):
    plan = load_plan(read_source(str(path))).plan
    assert plan is not None and size_problems(plan) == ()
    for pool in plan.rater_pools:
        spans = pool_spans(plan, pool)
        made = sum(len(rounds) for rounds in monitoring_rounds(plan, pool).values())
        assert made <= pool_rounds(pool, spans) <= made + len(spans)


def test_a_plan_over_the_limit_is_a_located_finding(tmp_path):
    base = PLANS[1].read_text(encoding="utf-8")
    sites = "".join(f"    - {{id: X{i:04d}, name: Invented site {i}}}\n" for i in range(1900))
    text = base.replace("    - {id: S01, name: Invented site one}\n", sites + "    - {id: S01, name: Invented site one}\n")
    text = text.replace("      interval_weeks: 12\n", "      interval_weeks: 1\n").replace("  enrolment_weeks: 52\n", "  enrolment_weeks: 520\n")
    path = tmp_path / "big.yaml"
    path.write_text(text, encoding="utf-8")
    loaded = load_plan(read_source(str(path)))
    assert loaded.plan is None
    rounds = [f for f in loaded.problems if "monitoring rounds over its sites" in f.message]
    assert [f.rule for f in rounds] == ["schema/too-large"]
    assert rounds[0].pointer == "/rater_pools/0/monitoring/interval_weeks"
    assert f"at most {MAX_ROUNDS:,}" in rounds[0].message
    assert rounds[0].location.line == text.splitlines().index("      interval_weeks: 1") + 1
