"""JSON report: the machine-readable contract of ``protolint check`` (described in README.md).

The contract keys come first in a fixed order and are never renamed or dropped; the extra
keys (``end_line``, ``end_column``, ``waiver_reason``, ``fingerprint``, ``as_of``,
``rules_not_run``, ``not_run_reason``, ``sop_texts``, the top-level ``policy`` and ``as_of``, ``caution``,
``execution_successful``, ``errors``) follow them. ``policy`` is ``{"file", "sha256",
"disabled", "changed"}`` (``file`` "default" for the built-in policy); the top-level ``as_of``
is the date every plan was checked as of, ``as_of_basis`` says whether it was given
(``--as-of``) or is the plans' own ``plan_date``. Undefined numbers are ``null``. When the
plan's ``sop_texts`` lists every SOP text the check read: ``{"sop", "text_file", "file",
"sha256", "bytes"}`` (``text_file`` as the plan writes it, ``file`` the path beside the plan), so
a CI artifact proves which texts were checked; one that could not be read is a finding. When the
plans could not be checked (exit 2) the report is :func:`failure_document`:
``execution_successful`` false, the error in each plan's entry, ``policy`` and ``as_of`` null.
"""

from __future__ import annotations

import json
from typing import TYPE_CHECKING, Any, Sequence

from protolint import CAUTION
from protolint.report._common import as_of_basis, fingerprints, json_safe

if TYPE_CHECKING:
    from protolint.findings import CheckResult, Finding, PlanResult
    from protolint.plan.sop_texts import SopText
    from protolint.pipeline import CheckFailure, InputProblem
    from protolint.rules.registry import RuleMeta


def _finding(finding: Finding, fingerprint: str) -> dict[str, Any]:
    return {
        "rule": finding.rule,
        "severity": finding.severity.label,
        "message": finding.message,
        "line": finding.location.line,
        "column": finding.location.column,
        "pointer": finding.pointer,
        "waived": finding.waived,
        "facts": json_safe(dict(finding.facts)),
        "end_line": finding.location.end_line,
        "end_column": finding.location.end_column,
        "waiver_reason": finding.waiver_reason,
        "fingerprint": fingerprint,
    }


def _plan(plan: PlanResult) -> dict[str, Any]:
    findings = plan.findings
    return {
        "file": plan.file,
        "sha256": plan.sha256,
        "as_of": plan.as_of,
        "findings": [_finding(f, fp) for f, fp in zip(findings, fingerprints(findings))],
        "rules_not_run": list(plan.rules_not_run),
        "not_run_reason": plan.not_run_reason,
        "sop_texts": [_sop_text(plan.file, text) for text in plan.sop_texts],
    }


def _sop_text(plan_file: str, text: SopText) -> dict[str, Any]:
    from protolint.plan.sop_texts import text_file_path

    return {"sop": text.sop_id, "text_file": text.path, "file": text_file_path(plan_file, text.path),
            "sha256": text.sha256, "bytes": text.size}


def as_document(result: CheckResult) -> dict[str, Any]:
    """The report as plain Python data (what :func:`render` serialises)."""
    return {
        "tool": {"name": "protolint", "version": result.tool_version},
        "plans": [_plan(plan) for plan in result.plans],
        "summary": result.counts(),
        "policy": result.policy.to_json(),
        "as_of": result.as_of_in_force,
        "as_of_basis": as_of_basis(result),
        "caution": CAUTION,
        "execution_successful": True,
        "errors": [],
    }


def _problem(problem: InputProblem) -> dict[str, Any]:
    return {"file": problem.file, "line": problem.line, "column": problem.column, "message": problem.message}


def failure_document(failure: CheckFailure) -> dict[str, Any]:
    """A run that could not check its plans (exit 2): each plan's entry carries its ``error``
    (or says it was not checked because another input failed), ``errors`` lists every input
    that failed, and ``execution_successful`` is false. Nothing was checked, so nothing is
    counted in the summary."""
    from protolint.pipeline import NOT_CHECKED

    plans: list[dict[str, Any]] = []
    for file in failure.plans:
        problem = failure.problem_of(file)
        plans.append({
            "file": file, "sha256": None, "as_of": None, "findings": [], "rules_not_run": [],
            "not_run_reason": problem.message if problem else NOT_CHECKED, "sop_texts": [],
            "error": _problem(problem) if problem else None,
        })
    return {
        "tool": {"name": "protolint", "version": failure.tool_version},
        "plans": plans,
        "summary": {"error": 0, "warning": 0, "note": 0, "waived": 0},
        "policy": None,
        "as_of": None,
        "as_of_basis": None,
        "caution": CAUTION,
        "execution_successful": False,
        "errors": [_problem(problem) for problem in failure.problems],
    }


def render_failure(failure: CheckFailure) -> str:
    return json.dumps(failure_document(failure), ensure_ascii=False, indent=2) + "\n"


def render(result: CheckResult, rules: Sequence[RuleMeta], *, color: bool = False) -> str:
    # allow_nan=False: json_safe has already turned undefined numbers into null, and strict
    # JSON parsers reject NaN.
    return json.dumps(as_document(result), ensure_ascii=False, indent=2, allow_nan=False) + "\n"
