"""The rule engine: policy (off, severity, thresholds), waivers (match, expiry, unused), as-of."""

from __future__ import annotations

from datetime import date
from pathlib import Path

import pytest

from protolint.errors import LocatedError
from protolint.findings import Severity
from protolint.plan import load_plan
from protolint.pipeline import check_text
from protolint.plan.source import load_source
from protolint.rules.engine import check_loaded
from protolint.rules.policy import read_policy
from protolint.rules.registry import all_rules

RULE = "sop/review-overdue"


def rule_ids() -> list[str]:
    return [r.meta.id for r in all_rules()]


def check(text: str, policy=None, as_of: date | None = None):
    loaded = load_plan(load_source(text.encode(), "plan.yaml"))
    assert loaded.problems == ()
    kwargs = {"policy": policy} if policy else {}
    return check_loaded(loaded, as_of=as_of, **kwargs)


def of_rule(result, rule=RULE):
    return [f for f in result.findings if f.rule == rule]


@pytest.fixture
def overdue_plan(starter_text: str) -> str:
    # The SOP's review fell due 45 days before the plan date (2027-01-15).
    text = starter_text.replace("    review_due: 2029-02-01\n", "    review_due: 2026-12-01\n")
    assert text != starter_text
    return text


def with_waiver(text: str, waiver: str) -> str:
    return text.replace("waivers: []\n", "waivers:\n" + waiver)


WAIVER = """  - rule: sop/review-overdue
    target: /sops/0
    reason: Review meeting held; the revised SOP is in approval and changes nothing for raters.
    approved_by: Head of QA
    date: 2027-01-10
"""


def policy_file(tmp_path: Path, text: str) -> str:
    path = tmp_path / "policy.yaml"
    path.write_text(text, encoding="utf-8")
    return str(path)


def metas():
    return {r.meta.id: r.meta for r in all_rules()}


def test_finding_is_located_and_as_of_defaults_to_the_plan_date(overdue_plan):
    result = check(overdue_plan)
    [finding] = of_rule(result)
    assert finding.severity is Severity.WARNING
    assert finding.pointer == "/sops/0/review_due"
    assert overdue_plan.splitlines()[finding.location.line - 1].strip() == "review_due: 2026-12-01"
    assert result.as_of == "2027-01-15"
    assert "45 days" in finding.message


def test_as_of_changes_the_answer(overdue_plan):
    # 2026-11-01 is 30 days before the review date: within due_soon_days (60), so a note.
    assert [f.severity for f in of_rule(check(overdue_plan, as_of=date(2026, 11, 1)))] == [Severity.NOTE]
    assert [f.severity for f in of_rule(check(overdue_plan, as_of=date(2027, 6, 1)))] == [Severity.WARNING]
    assert of_rule(check(overdue_plan, as_of=date(2026, 6, 1))) == []


def test_policy_switches_a_rule_off(overdue_plan, tmp_path):
    policy = read_policy(policy_file(tmp_path, f"format_version: 1\nrules:\n  {RULE}: {{enabled: false}}\n"), metas())
    result = check(overdue_plan, policy)
    assert of_rule(result) == [] and RULE not in result.rules_run


def test_policy_changes_severity(overdue_plan, tmp_path):
    policy = read_policy(policy_file(tmp_path, f"format_version: 1\nrules:\n  {RULE}: {{severity: error}}\n"), metas())
    assert of_rule(check(overdue_plan, policy))[0].severity is Severity.ERROR


def test_policy_changes_a_threshold(starter_text, tmp_path):
    # Review due 30 days after the plan date: a note only while due_soon_days >= 30.
    text = starter_text.replace("    review_due: 2029-02-01\n", "    review_due: 2027-02-14\n")
    assert [f.severity for f in of_rule(check(text))] == [Severity.NOTE]
    policy = read_policy(policy_file(tmp_path, f"format_version: 1\nrules:\n  {RULE}:\n    thresholds: {{due_soon_days: 10}}\n"), metas())
    assert of_rule(check(text, policy)) == []


@pytest.mark.parametrize("text, line, words", [
    ("format_version: 1\nrules:\n  sop/no-such-rule: {enabled: false}\n", 3, "does not exist"),
    (f"format_version: 1\nrules:\n  {RULE}:\n    thresholds: {{due_sooon_days: 3}}\n", 4, "no threshold"),
    (f"format_version: 1\nrules:\n  {RULE}:\n    thresholds: {{due_soon_days: 4000}}\n", 4, "must lie between"),
    (f"format_version: 1\nrules:\n  {RULE}: {{severity: fatal}}\n", 3, "expected one of"),
    ("rules: {}\n", 1, "format_version"),
    ("format_version: 1\nrules:\n  a: b: c\n", 3, "not valid YAML"),
    # The schema checks are not the policy's: a plan the schema rejects is not checked at all.
    ("format_version: 1\nrules:\n  schema/unknown-key: {enabled: false}\n", 3, "cannot change 'enabled' of schema/unknown-key"),
    ("format_version: 1\nrules:\n  schema/out-of-range:\n    severity: note\n", 4, "always errors"),
    ("format_version: 1\nrules:\n  schema/too-large: {enabled: true, severity: error}\n", 3, "cannot change 'severity'"),
    ("format_version: 1\nrules:\n  sop/review-overdue: !!seq x\n", 3, "asks for a list"),
])
def test_bad_policy_is_a_located_input_error(tmp_path, text, line, words):
    with pytest.raises(LocatedError) as caught:
        read_policy(policy_file(tmp_path, text), metas())
    assert caught.value.line == line and words in caught.value.reason


def test_waiver_turns_the_finding_into_a_waived_one(overdue_plan):
    result = check(with_waiver(overdue_plan, WAIVER))
    [finding] = of_rule(result)
    assert finding.waived and "Head of QA" in finding.waiver_reason
    assert not [f for f in result.findings if f.rule.startswith("waivers/")]


def test_waiver_without_target_covers_the_whole_plan(overdue_plan):
    text = with_waiver(overdue_plan, WAIVER.replace("    target: /sops/0\n", ""))
    assert of_rule(check(text))[0].waived


def test_waiver_for_another_place_does_not_apply_and_is_reported_unused(overdue_plan):
    text = with_waiver(overdue_plan, WAIVER.replace("target: /sops/0", "target: /endpoints/0"))
    result = check(text)
    assert not of_rule(result)[0].waived
    [unused] = of_rule(result, "waivers/unused")
    assert text.splitlines()[unused.location.line - 1].strip().startswith("- rule: sop/review-overdue")


def test_expired_waiver_no_longer_applies_and_is_reported(overdue_plan):
    text = with_waiver(overdue_plan, WAIVER + "    expires: 2027-01-31\n")
    assert of_rule(check(text))[0].waived                      # as of the plan date: in force
    later = check(text, as_of=date(2027, 3, 1))
    assert not of_rule(later)[0].waived
    [expired] = of_rule(later, "waivers/expired")
    assert "expired on 2027-01-31" in expired.message and expired.severity is Severity.WARNING


def test_waiver_on_the_expiry_day_is_still_in_force(overdue_plan):
    text = with_waiver(overdue_plan, WAIVER + "    expires: 2027-03-01\n")
    assert of_rule(check(text, as_of=date(2027, 3, 1)))[0].waived


def test_schema_findings_cannot_be_waived_and_stop_the_rules(starter_text):
    text = starter_text.replace("  power: 0.8\n", "  power: high\n")
    loaded = load_plan(load_source(text.encode(), "plan.yaml"))
    result = check_loaded(loaded)
    assert [f.rule for f in result.findings] == ["schema/wrong-type"]
    assert all(rule.startswith("schema/") for rule in result.rules_run)


def test_waiver_references_are_checked(starter_text):
    text = starter_text.replace("waivers: []", """waivers:
  - rule: sop/revew-overdue
    target: /sops/7
    reason: A reason that is long enough.
    approved_by: QA lead
    date: 2027-01-10
""")
    # The target is checked by the loader, the rule id by the engine (which knows the rules);
    # one run of the pipeline reports both.
    messages = [f.message for f in check_text(text).findings]
    assert any("does not exist" in m and "sop/review-overdue" in m for m in messages)
    assert any("points at nothing" in m for m in messages)


def test_builtin_checks_are_documented_like_rules():
    builtin = [r.meta for r in all_rules() if r.check is None]
    assert {m.family for m in builtin} == {"schema", "waivers"}
    for meta in builtin:
        assert meta.summary and "**Passes**" in meta.documentation and "**Fails**" in meta.documentation
        assert not meta.waivable


def test_rule_ids_are_well_formed_and_unique():
    from protolint.rules.registry import RULE_ID

    ids = rule_ids()
    assert len(ids) == len(set(ids))
    assert all(RULE_ID.match(i) for i in ids)


def test_a_policy_built_in_code_cannot_silence_the_schema_either(starter_text):
    from protolint.pipeline import check_text
    from protolint.rules.policy import Policy

    text = starter_text.replace("  power: 0.8\n", "  power: high\n")
    silenced = Policy(disabled=frozenset({"schema/wrong-type"}), severities={"schema/wrong-type": Severity.NOTE})
    [finding] = check_text(text, policy=silenced).findings
    assert finding.rule == "schema/wrong-type" and finding.severity is Severity.ERROR


def test_a_policy_may_leave_a_schema_check_enabled(tmp_path):
    policy = read_policy(policy_file(tmp_path, "format_version: 1\nrules:\n  schema/unknown-key: {enabled: true}\n"), metas())
    assert policy.enabled("schema/unknown-key")
