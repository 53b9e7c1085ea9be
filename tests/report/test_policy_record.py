"""Every output of ``check`` records the policy in force and the as-of date it was checked as of.

The policy below switches one rule off, raises one severity and tightens one threshold of the
demo plan's rules, so each report must name all three, and the policy file's SHA-256.
"""

from __future__ import annotations

import hashlib
import json
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

POLICY = """format_version: 1
description: Invented test policy.
rules:
  documents/deviations-incomplete: {enabled: false}
  sop/review-overdue: {severity: error}
  monitoring/interval-exceeds-drift-window:
    thresholds: {max_interval_weeks: 12}
"""

CHANGED = {
    "monitoring/interval-exceeds-drift-window": {"thresholds": {"max_interval_weeks": {"from": 26, "to": 12}}},
    "sop/review-overdue": {"severity": {"from": "warning", "to": "error"}},
}


@pytest.fixture
def policy(tmp_path: Path) -> Path:
    path = tmp_path / "strict-policy.yaml"
    path.write_text(POLICY, encoding="utf-8")
    return path


def _sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def test_json_records_policy_and_as_of(cli, demo_plan, policy) -> None:
    result = cli("check", demo_plan, "--policy", policy, "--as-of", "2027-01-01", "--format", "json", "--fail-on", "never")
    document = json.loads(result.stdout)
    assert document["policy"] == {"file": str(policy), "sha256": _sha(policy),
                                  "disabled": ["documents/deviations-incomplete"], "changed": CHANGED}
    assert document["as_of"] == "2027-01-01"
    assert document["as_of_basis"] == "given"
    # The policy really was applied: the switched-off rule found nothing, the severity changed.
    rules = {(f["rule"], f["severity"]) for plan in document["plans"] for f in plan["findings"]}
    assert not any(rule == "documents/deviations-incomplete" for rule, _ in rules)
    assert ("sop/review-overdue", "error") in rules


def test_json_default_policy_and_plan_date(cli, demo_plan) -> None:
    document = json.loads(cli("check", demo_plan, "--format", "json", "--fail-on", "never").stdout)
    assert document["policy"] == {"file": "default", "sha256": None, "disabled": [], "changed": {}}
    assert document["as_of"] == "2026-07-15"  # the demo plan's plan_date
    assert document["as_of_basis"] == "plan_date"


def test_sarif_records_policy_in_the_invocation(cli, demo_plan, policy) -> None:
    log = json.loads(cli("check", demo_plan, "--policy", policy, "--as-of", "2027-01-01", "--format", "sarif",
                         "--fail-on", "never").stdout)
    (invocation,) = log["runs"][0]["invocations"]
    assert invocation["properties"]["policy"]["sha256"] == _sha(policy)
    assert invocation["properties"]["policy"]["disabled"] == ["documents/deviations-incomplete"]
    assert invocation["properties"]["policy"]["changed"] == CHANGED
    assert invocation["properties"]["asOf"] == "2027-01-01"


def test_junit_records_policy_as_suite_properties(cli, demo_plan, policy) -> None:
    xml = cli("check", demo_plan, "--policy", policy, "--format", "junit", "--fail-on", "never").stdout
    suite = ET.fromstring(xml).find("testsuite")
    assert suite is not None
    properties = {p.get("name"): p.get("value") for p in suite.iter("property")}
    assert properties["policy_file"] == str(policy)
    assert properties["policy_sha256"] == _sha(policy)
    assert properties["policy_disabled"] == "documents/deviations-incomplete"
    assert properties["policy_changed"] == ("monitoring/interval-exceeds-drift-window threshold max_interval_weeks 26 → 12; "
                                            "sop/review-overdue severity warning → error")
    assert properties["as_of"] == "2026-07-15"


@pytest.mark.parametrize("fmt", ["text", "markdown", "github", "html"])
def test_human_formats_name_the_policy_file_hash_and_changes(cli, demo_plan, policy, fmt: str) -> None:
    out = cli("check", demo_plan, "--policy", policy, "--as-of", "2027-01-01", "--format", fmt, "--fail-on", "never").stdout
    flat = " ".join(out.split()).replace("\\_", "_")  # Markdown escapes the underscores
    assert "as of 2027-01-01" in flat
    assert _sha(policy) in flat
    assert "switched off documents/deviations-incomplete" in flat
    assert "sop/review-overdue severity warning → error" in flat
    assert "max_interval_weeks 26 → 12" in flat
    assert "not recorded" not in flat


@pytest.mark.parametrize("fmt", ["text", "markdown", "github", "html"])
def test_human_formats_say_default_policy(cli, demo_plan, fmt: str) -> None:
    out = " ".join(cli("check", demo_plan, "--format", fmt, "--fail-on", "never").stdout.split())
    assert "the default policy (no policy file)" in out
    assert "not recorded" not in out


def test_diff_checks_both_versions_under_the_policy_and_date(cli, demo_plan, policy) -> None:
    default = json.loads(cli("diff", demo_plan, demo_plan, "--format", "json").stdout)
    checked = json.loads(cli("diff", demo_plan, demo_plan, "--format", "json", "--policy", policy,
                             "--as-of", "2027-01-01").stdout)
    assert checked["policy"]["sha256"] == _sha(policy) and checked["policy"]["changed"] == CHANGED
    assert checked["old"]["as_of"] == checked["new"]["as_of"] == "2027-01-01"
    assert checked["as_of_basis"] == "given" and default["as_of_basis"] == "plan_date"
    assert default["policy"]["file"] == "default"

    def rules(document):
        return {item["rule"] for item in document["findings"]["unchanged"]}
    # The policy and the date really were applied: a rule switched off, an expired waiver reported.
    assert "documents/deviations-incomplete" in rules(default) - rules(checked)
    assert "waivers/expired" in rules(checked) - rules(default)
    text = " ".join(cli("diff", demo_plan, demo_plan, "--policy", policy).stdout.split())
    assert f"Both versions checked as of 2026-07-15 under policy {policy} (SHA-256 {_sha(policy)})" in text
