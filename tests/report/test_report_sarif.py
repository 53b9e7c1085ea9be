from __future__ import annotations

import dataclasses
import json

import jsonschema
import pytest

from protolint import CAUTION
from protolint.findings import CheckResult, Location, PlanResult
from protolint.report import render_report
from protolint.report._common import FINGERPRINT_KEY
from protolint.report.fmt_sarif import artifact_uri

from .conftest import FILE_A, SCHEMAS, make_result


@pytest.fixture(scope="module")
def sarif_schema() -> dict:
    return json.loads((SCHEMAS / "sarif-schema-2.1.0.json").read_text(encoding="utf-8"))


def sarif(result, rules) -> dict:
    return json.loads(render_report("sarif", result, rules))


def test_validates_against_the_oasis_schema(result, rules, sarif_schema):
    jsonschema.Draft4Validator(sarif_schema).validate(sarif(result, rules))


def test_schema_check_is_real(result, rules, sarif_schema):
    # Guard against a validator that accepts anything: a broken log must be rejected.
    broken = sarif(result, rules)
    broken["runs"][0]["results"][0]["level"] = "fatal"
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.Draft4Validator(sarif_schema).validate(broken)


def test_run_level_fields(result, rules):
    log = sarif(result, rules)
    assert log["$schema"] == "https://json.schemastore.org/sarif-2.1.0.json"
    assert log["version"] == "2.1.0"
    (run,) = log["runs"]
    assert run["tool"]["driver"]["name"] == "protolint"
    assert run["tool"]["driver"]["version"] == "9.9.9-test"
    assert run["columnKind"] == "unicodeCodePoints"
    assert run["automationDetails"] == {"id": "protolint/"}
    (invocation,) = run["invocations"]
    assert invocation["executionSuccessful"] is True
    assert invocation["properties"]["policy"] == {"file": "default", "sha256": None, "disabled": [], "changed": {}}
    assert run["properties"]["caution"] == CAUTION


def test_rule_descriptors(result, rules):
    driver = sarif(result, rules)["runs"][0]["tool"]["driver"]
    ids = [d["id"] for d in driver["rules"]]
    # Every rule given, plus a minimal entry for the schema finding's rule.
    assert ids == sorted(m.id for m in rules) + ["schema/unknown-key"]
    low = driver["rules"][ids.index("testfam/low-reliability")]
    assert low["name"] == "low-reliability"
    assert low["shortDescription"]["text"] == "The reliability assumed for the sample size exceeds the evidence."
    assert low["defaultConfiguration"]["level"] == "error"
    assert low["properties"]["tags"] == ["testfam"]
    for key in ("text", "markdown"):
        assert "invented test source, 2024" in low["help"][key]
        assert "margin" in low["help"][key] and "0.05" in low["help"][key]


def test_results_point_at_their_rule_and_location(result, rules):
    run = sarif(result, rules)["runs"][0]
    assert len(run["results"]) == 6
    for item in run["results"]:
        assert run["tool"]["driver"]["rules"][item["ruleIndex"]]["id"] == item["ruleId"]
    first = run["results"][1]
    assert first["ruleId"] == "testfam/low-reliability" and first["level"] == "error"
    assert first["locations"][0]["physicalLocation"]["artifactLocation"]["uri"] == FILE_A
    assert first["locations"][0]["physicalLocation"]["region"] == {
        "startLine": 12, "startColumn": 5, "endLine": 12, "endColumn": 9,
    }
    # An undefined number is null, as in every JSON output of the tool.
    assert first["properties"]["facts"] == {"assumed": 0.9, "evidence": 0.62, "n_required": 160, "ratio": None}
    assert first["message"]["text"].startswith("Assumed reliability 0.9")


def test_waived_findings_are_suppressed_with_the_reason(result, rules):
    results = sarif(result, rules)["runs"][0]["results"]
    suppressed = [r for r in results if "suppressions" in r]
    assert len(suppressed) == 2
    assert suppressed[0]["suppressions"] == [
        {"kind": "external", "justification": "Approved by QA <b>lead</b> | ticket `T-1` & co, Zoë's call"}
    ]


def test_uris_are_relative_forward_slash_and_encoded():
    assert artifact_uri("plans\\win.yaml") == "plans/win.yaml"
    assert artifact_uri("plans/second plan é.yaml") == "plans/second%20plan%20%C3%A9.yaml"
    assert artifact_uri("/abs/plan.yaml") == "file:///abs/plan.yaml"


def _fingerprints(result: CheckResult) -> list[str]:
    return [r["partialFingerprints"][FINGERPRINT_KEY] for r in sarif(result, [])["runs"][0]["results"]]


def _shift_lines(result: CheckResult, by: int) -> CheckResult:
    plans = tuple(
        dataclasses.replace(
            plan,
            findings=tuple(
                dataclasses.replace(f, location=Location(f.location.line + by, f.location.column + 1))
                for f in plan.findings
            ),
        )
        for plan in result.plans
    )
    return dataclasses.replace(result, plans=plans)


def test_fingerprints_survive_moved_lines_and_changed_numbers():
    original = make_result()
    assert _fingerprints(_shift_lines(original, 7)) == _fingerprints(original)

    plan = original.plans[0]
    renumbered = tuple(
        dataclasses.replace(f, message=f.message.replace("0.62", "0.66").replace("160", "172"))
        for f in plan.findings
    )
    changed = dataclasses.replace(original, plans=(dataclasses.replace(plan, findings=renumbered),) + original.plans[1:])
    assert _fingerprints(changed) == _fingerprints(original)


def test_fingerprints_differ_between_findings():
    prints = _fingerprints(make_result())
    assert len(set(prints)) == len(prints)
    # Two findings identical but for their line still get distinct fingerprints.
    base = make_result().plans[0].findings[1]
    twin = dataclasses.replace(base, location=Location(50, 5))
    twins = CheckResult(plans=(PlanResult(FILE_A, "a" * 64, (base, twin), ()),), tool_version="1")
    first, second = _fingerprints(twins)
    assert first != second and first.split(":")[0] == second.split(":")[0]
    # A different pointer or rule gives a different identity.
    moved = dataclasses.replace(base, pointer="/sample_size/other")
    other = CheckResult(plans=(PlanResult(FILE_A, "a" * 64, (moved,), ()),), tool_version="1")
    assert _fingerprints(other)[0].split(":")[0] != first.split(":")[0]
