"""JUnit XML report, for CI servers that display test results.

Mapping (JUnit has no official specification; this targets the common ``junit-10.xsd``):

* one ``<testsuite>`` per plan file (``name`` = the file path), with the plan's sha256, the
  as-of date, the policy (file or "default", its sha256, the rules it switched off, the
  severities and thresholds it changed), the tool version and the caution as ``<properties>``;
* one ``<testcase>`` per rule per plan (``classname`` = plan file, ``name`` = rule id);
* one ``<failure>`` per unwaived finding of severity warning or error (``type`` = the
  severity, ``message`` = the finding's one-line text form, body =
  ``file:line:col message`` followed by the JSON Pointer and the facts);
* notes and waived findings are listed in the case's ``<system-out>``;
* a case with no failure but at least one waived finding is reported as ``<skipped>`` (the
  check did not pass on its own merits; a waiver set it aside), with the reasons;
* a rule that could not run on the plan (schema or reference problems) is a ``<skipped>``
  case whose message says why.

Counts: ``tests`` counts test cases, ``failures`` the cases with at least one ``<failure>``
(the JUnit meaning: failed tests, not failure elements), ``skipped`` the skipped cases;
``errors`` is 0 in a report of checked plans. A run that could not check its plans (exit 2) is
reported by :func:`render_failure`: a suite per plan whose one case, ``protolint/read-plan``,
holds an ``<error>`` with the located message (or is skipped, when another input failed), and
a suite for a policy file that could not be read.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from typing import TYPE_CHECKING, Sequence

from protolint import CAUTION
from protolint.findings import Severity
from protolint.report._common import (
    facts_inline,
    location_text,
    one_line,
    rule_ids_for_plan,
    xml_safe,
)
from protolint.report.fmt_text import finding_line

if TYPE_CHECKING:
    from protolint.findings import CheckResult, Finding, PlanResult, PolicyRecord
    from protolint.pipeline import CheckFailure, InputProblem
    from protolint.rules.registry import RuleMeta


def _is_failure(finding: Finding) -> bool:
    return not finding.waived and finding.severity >= Severity.WARNING


def _failure_body(finding: Finding) -> str:
    lines = [f"{location_text(finding)} {finding.message}"]
    if finding.pointer:
        lines.append(f"pointer: {finding.pointer}")
    facts = facts_inline(finding.facts)
    if facts:
        lines.append(f"facts: {facts}")
    return xml_safe("\n".join(lines))


def _testcase(plan: PlanResult, rule_id: str, findings: list[Finding]) -> tuple[ET.Element, str]:
    """One case and its outcome: 'failed', 'skipped' or 'passed'."""
    case = ET.Element("testcase", {"classname": xml_safe(plan.file), "name": xml_safe(rule_id)})
    failures = [f for f in findings if _is_failure(f)]
    waived = [f for f in findings if f.waived]
    others = [f for f in findings if not _is_failure(f)]  # notes and waived findings

    outcome = "passed"
    if failures:
        outcome = "failed"
    elif waived:
        outcome = "skipped"
        reasons = "; ".join(one_line(f.waiver_reason or "no reason recorded") for f in waived)
        ET.SubElement(case, "skipped", {"message": xml_safe(f"waived: {reasons}")})

    for finding in failures:
        failure = ET.SubElement(
            case,
            "failure",
            {"type": finding.severity.label, "message": xml_safe(finding_line(finding))},
        )
        failure.text = _failure_body(finding)

    if others:
        out = ET.SubElement(case, "system-out")
        out.text = xml_safe("\n".join(finding_line(f) for f in others))
    return case, outcome


def _testsuite(plan: PlanResult, rules: Sequence[RuleMeta], version: str, policy: PolicyRecord) -> tuple[ET.Element, dict[str, int]]:
    by_rule: dict[str, list[Finding]] = {}
    for finding in plan.findings:
        by_rule.setdefault(finding.rule, []).append(finding)

    suite = ET.Element("testsuite", {"name": xml_safe(plan.file)})
    properties = ET.SubElement(suite, "properties")
    for name, value in (
        ("sha256", plan.sha256),
        ("as_of", plan.as_of),
        ("policy_file", policy.name),
        ("policy_sha256", policy.sha256),
        ("policy_disabled", ", ".join(policy.disabled) or "none"),
        ("policy_changed", "; ".join(policy.changes()[1 if policy.disabled else 0:]) or "none"),
        ("protolint_version", version),
        ("caution", CAUTION),
    ):
        if value:
            ET.SubElement(properties, "property", {"name": name, "value": xml_safe(value)})

    counts = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
    for rule_id in rule_ids_for_plan(plan, rules):
        case, outcome = _testcase(plan, rule_id, by_rule.get(rule_id, []))
        suite.append(case)
        counts["tests"] += 1
        if outcome == "failed":
            counts["failures"] += 1
        elif outcome == "skipped":
            counts["skipped"] += 1
    for rule_id in plan.rules_not_run:
        case = ET.SubElement(suite, "testcase", {"classname": xml_safe(plan.file), "name": xml_safe(rule_id)})
        ET.SubElement(case, "skipped", {"message": xml_safe(f"not run: {plan.not_run_reason or 'the plan could not be checked'}")})
        counts["tests"] += 1
        counts["skipped"] += 1
    for key, count in counts.items():
        suite.set(key, str(count))
    suite.set("file", xml_safe(plan.file))
    return suite, counts


def render(result: CheckResult, rules: Sequence[RuleMeta], *, color: bool = False) -> str:
    root = ET.Element("testsuites", {"name": "protolint"})
    totals = {"tests": 0, "failures": 0, "errors": 0}
    for plan in result.plans:
        suite, counts = _testsuite(plan, rules, result.tool_version, result.policy)
        root.append(suite)
        for key in totals:
            totals[key] += counts[key]
    for key, value in totals.items():
        root.set(key, str(value))
    ET.indent(root, space="  ")
    body = ET.tostring(root, encoding="unicode")
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + body + "\n"


READ_CASE = "protolint/read-plan"


def _failure_suite(file: str, problem: InputProblem | None, version: str, case_name: str = READ_CASE) -> ET.Element:
    from protolint.pipeline import NOT_CHECKED

    suite = ET.Element("testsuite", {"name": xml_safe(file)})
    properties = ET.SubElement(suite, "properties")
    for name, value in (("protolint_version", version), ("caution", CAUTION)):
        ET.SubElement(properties, "property", {"name": name, "value": xml_safe(value)})
    case = ET.SubElement(suite, "testcase", {"classname": xml_safe(file), "name": case_name})
    if problem is not None:
        error = ET.SubElement(case, "error", {"type": "input-error", "message": xml_safe(problem.message)})
        error.text = xml_safe(problem.text())
    else:
        ET.SubElement(case, "skipped", {"message": xml_safe(NOT_CHECKED)})
    counts = {"tests": 1, "failures": 0, "errors": int(problem is not None), "skipped": int(problem is None)}
    for key, count in counts.items():
        suite.set(key, str(count))
    suite.set("file", xml_safe(file))
    return suite


def render_failure(failure: CheckFailure) -> str:
    root = ET.Element("testsuites", {"name": "protolint"})
    suites = [_failure_suite(file, failure.problem_of(file), failure.tool_version) for file in failure.plans]
    suites += [_failure_suite(problem.file or "protolint", problem, failure.tool_version, "protolint/read-input")
               for problem in failure.other_problems]
    for suite in suites:
        root.append(suite)
    for key in ("tests", "failures", "errors"):
        root.set(key, str(sum(int(suite.get(key, "0")) for suite in suites)))
    ET.indent(root, space="  ")
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ET.tostring(root, encoding="unicode") + "\n"
