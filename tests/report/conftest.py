"""Hand-built check results for the formatter tests.

All plan names, rule ids and numbers here are invented for the tests. The rule metadata is
built directly (not registered), because formatters take a sequence of RuleMeta and the
registry is global.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from protolint.findings import CheckResult, Finding, Location, PlanResult, Severity
from protolint.rules.registry import RuleMeta, Threshold

SCHEMAS = Path(__file__).resolve().parent.parent / "data" / "schemas"

# Plan-derived text an attacker or a careless copy-paste could put in a plan.
HOSTILE = 'Rater "A" wrote <script>alert(1)</script> & | pipe `tick` *bold* café ≥ 0.7 \x1b[31mred'
HOSTILE_REASON = "Approved by QA <b>lead</b> | ticket `T-1` & co, Zoë's call"

FILE_A = "plans/demo_trial.yaml"
FILE_B = "plans/second plan é.yaml"
FILE_C = "plans/clean.yaml"


def make_rules() -> tuple[RuleMeta, ...]:
    return (
        RuleMeta(
            id="testfam/low-reliability",
            severity=Severity.ERROR,
            summary="The reliability assumed for the sample size exceeds the evidence.",
            documentation="## Rationale\n\nUnreliable ratings shrink the effect.\n\n```yaml\n# a comment\n```",
            source="invented test source, 2024",
            thresholds=(Threshold("margin", 0.05, "Allowed excess over the evidence", 0.0, 0.5),),
            computed=True,
        ),
        RuleMeta(
            id="testfam/short-interval",
            severity=Severity.WARNING,
            summary="Monitoring reviews are too far apart.",
            documentation="Raters drift between reviews.",
            source="common practice",
            thresholds=(Threshold("max_weeks", 12, "Longest gap between reviews"),),
        ),
        RuleMeta(
            id="otherfam/note-only",
            severity=Severity.NOTE,
            summary="Something worth a look.",
            documentation="",
            source="common practice",
        ),
    )


def finding(
    rule: str,
    severity: Severity,
    message: str,
    file: str,
    line: int,
    column: int,
    pointer: str,
    *,
    facts: dict | None = None,
    waived: bool = False,
    reason: str | None = None,
    end: tuple[int, int] | None = None,
) -> Finding:
    location = Location(line, column, *(end or (None, None)))
    return Finding(
        rule=rule,
        severity=severity,
        message=message,
        file=file,
        location=location,
        pointer=pointer,
        facts=facts or {},
        waived=waived,
        waiver_reason=reason,
    )


def make_result() -> CheckResult:
    rules = make_rules()
    plan_a = PlanResult(
        file=FILE_A,
        sha256="a" * 64,
        # Given out of order on purpose: reports must sort.
        findings=(
            finding(
                "testfam/short-interval", Severity.WARNING, HOSTILE, FILE_A, 30, 3,
                "/raters/0/monitoring/interval_weeks", facts={"interval_weeks": 26, "max_weeks": 12},
            ),
            finding(
                "testfam/low-reliability", Severity.ERROR,
                "Assumed reliability 0.9 exceeds the evidence (0.62); N should be 160",
                FILE_A, 12, 5, "/sample_size/reliability",
                facts={"assumed": 0.9, "evidence": 0.62, "n_required": 160, "ratio": float("nan")},
                end=(12, 9),
            ),
            finding(
                "testfam/short-interval", Severity.WARNING, "Second pool reviewed every 20 weeks",
                FILE_A, 40, 7, "/raters/1/monitoring/interval_weeks",
                waived=True, reason=HOSTILE_REASON,
            ),
            finding("otherfam/note-only", Severity.NOTE, "Consider a co-rating sample", FILE_A, 2, 1, ""),
        ),
        rules_run=tuple(meta.id for meta in rules),
        as_of="2026-03-01",
    )
    plan_b = PlanResult(
        file=FILE_B,
        sha256="b" * 64,
        findings=(
            finding("schema/unknown-key", Severity.ERROR, "unknown key 'dya'", FILE_B, 3, 2, "/visits/0/dya"),
            finding(
                "otherfam/note-only", Severity.NOTE, "Accepted as is", FILE_B, 9, 1, "/study",
                waived=True, reason="accepted by the steering group",
            ),
        ),
        rules_run=("testfam/low-reliability", "otherfam/note-only"),
    )
    plan_c = PlanResult(file=FILE_C, sha256="c" * 64, findings=(), rules_run=())
    return CheckResult(plans=(plan_a, plan_b, plan_c), tool_version="9.9.9-test")


@pytest.fixture
def rules() -> tuple[RuleMeta, ...]:
    return make_rules()


@pytest.fixture
def result() -> CheckResult:
    return make_result()
