from __future__ import annotations

import json

import pytest

from protolint.report import render_report

from .conftest import FILE_A, FILE_B, FILE_C

CONTRACT_TOP = ["tool", "plans", "summary"]
CONTRACT_PLAN = ["file", "sha256", "findings"]
CONTRACT_FINDING = ["rule", "severity", "message", "line", "column", "pointer", "waived", "facts"]


def strict_loads(text: str):
    def refuse(constant: str):
        raise AssertionError(f"non-standard JSON constant {constant}")

    return json.loads(text, parse_constant=refuse)


def in_order(keys: list[str], contract: list[str]) -> bool:
    """All contract keys present, in the contract's relative order."""
    positions = [keys.index(k) for k in contract if k in keys]
    return len(positions) == len(contract) and positions == sorted(positions)


@pytest.fixture
def doc(result, rules):
    return strict_loads(render_report("json", result, rules))


def test_contract_keys_present_in_order(doc):
    assert in_order(list(doc), CONTRACT_TOP)
    assert doc["tool"] == {"name": "protolint", "version": "9.9.9-test"}
    for plan in doc["plans"]:
        assert in_order(list(plan), CONTRACT_PLAN)
        for item in plan["findings"]:
            assert in_order(list(item), CONTRACT_FINDING)
    assert list(doc["summary"]) == ["error", "warning", "note", "waived"]


def test_values_and_types(doc):
    assert [p["file"] for p in doc["plans"]] == [FILE_A, FILE_B, FILE_C]
    assert doc["summary"] == {"error": 2, "warning": 1, "note": 1, "waived": 2}
    first = doc["plans"][0]["findings"][1]
    assert first == {
        **first,
        "rule": "testfam/low-reliability",
        "severity": "error",
        "line": 12,
        "column": 5,
        "pointer": "/sample_size/reliability",
        "waived": False,
        # NaN is not JSON; an undefined number is null, as in the analysis commands' JSON.
        "facts": {"assumed": 0.9, "evidence": 0.62, "n_required": 160, "ratio": None},
        "end_line": 12,
        "end_column": 9,
    }
    waived = doc["plans"][0]["findings"][3]
    assert waived["waived"] is True and waived["severity"] == "warning"
    assert waived["waiver_reason"].startswith("Approved by QA <b>lead</b>")


def test_findings_sorted_by_position(doc):
    lines = [f["line"] for f in doc["plans"][0]["findings"]]
    assert lines == [2, 12, 30, 40]


def test_formatting_is_stable(result, rules):
    text = render_report("json", result, rules)
    assert text == render_report("json", result, rules)
    assert '\n  "plans": [' in text  # indent 2
    assert "café ≥ 0.7" in text  # ensure_ascii=False keeps non-ASCII literal
    assert "\\u00e9" not in text


def test_empty_result(rules):
    from protolint.findings import CheckResult

    doc = strict_loads(render_report("json", CheckResult(plans=(), tool_version="1"), rules))
    assert doc["plans"] == [] and doc["summary"] == {"error": 0, "warning": 0, "note": 0, "waived": 0}
