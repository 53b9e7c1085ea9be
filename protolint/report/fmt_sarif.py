"""SARIF 2.1.0 report, for code-scanning services and SARIF viewers.

Choices worth knowing:

* Every rule that ran becomes a ``reportingDescriptor``; a finding whose rule is not among
  them (e.g. a schema finding) gets a minimal descriptor, so every ``ruleIndex`` is valid.
* ``partialFingerprints["protolintFinding/v1"]`` hashes rule id, file, JSON Pointer and the
  message with its numbers masked, so a finding keeps its identity when lines move or a
  recomputed number changes.
* Waived findings stay in the log with an external suppression carrying the waiver reason,
  so viewers show them as dismissed instead of losing the audit trail.
* The run's ``artifacts`` list every plan with its SHA-256 and, after them, every SOP text a
  plan points to that the check read (``hashes["sha-256"]``, ``length`` in bytes, the SOP and
  the plan in its ``properties``), so the log proves which texts were checked.
* Columns count Unicode code points (the loader's columns), hence ``columnKind``.
* A run that could not check its plans (exit 2) is still a SARIF log (:func:`render_failure`):
  ``executionSuccessful: false``, exit code 2, and one error notification per input that could
  not be read, located at that file (and line, when known), with no results. A code-scanning
  upload then shows a failed analysis, never a clean plan.
"""

from __future__ import annotations

import json
from typing import TYPE_CHECKING, Any, Sequence
from urllib.parse import quote

from protolint import CAUTION
from protolint.report._common import (
    FINGERPRINT_KEY,
    RUN_NOT_CHECKED,
    as_of_basis,
    fingerprints,
    forward_slashes,
    json_safe,
    not_run_note,
)

if TYPE_CHECKING:
    from protolint.findings import CheckResult, Finding
    from protolint.pipeline import CheckFailure, InputProblem
    from protolint.rules.registry import RuleMeta

SARIF_SCHEMA = "https://json.schemastore.org/sarif-2.1.0.json"
AUTOMATION_ID = "protolint/"


def artifact_uri(path: str) -> str:
    """A URI reference for a plan path: relative paths stay relative, forward slashes."""
    posix = forward_slashes(path)
    if len(posix) > 1 and posix[1] == ":":  # a Windows drive path
        return "file:///" + quote(posix, safe="/:")
    if posix.startswith("/"):
        return "file://" + quote(posix, safe="/")
    return quote(posix, safe="/")


def _help_text(meta: RuleMeta) -> str:
    parts = [meta.summary]
    if meta.documentation:
        parts.append(meta.documentation)
    parts.append(f"Source: {meta.source}")
    if meta.thresholds:
        lines = ["Thresholds (policy may change them):"]
        lines += [f"- {t.name} = {t.default}: {t.description}" for t in meta.thresholds]
        parts.append("\n".join(lines))
    return "\n\n".join(parts)


def _help_markdown(meta: RuleMeta) -> str:
    # The documentation is the rule's own Markdown (our code, not plan text), used as-is.
    parts = [f"**{meta.summary}**"]
    if meta.documentation:
        parts.append(meta.documentation)
    parts.append(f"**Source:** {meta.source}")
    if meta.thresholds:
        rows = ["| Threshold | Default | Meaning |", "|---|---|---|"]
        rows += [f"| `{t.name}` | {t.default} | {t.description} |" for t in meta.thresholds]
        parts.append("\n".join(rows))
    return "\n\n".join(parts)


def _descriptor(meta: RuleMeta) -> dict[str, Any]:
    return {
        "id": meta.id,
        "name": meta.name,
        "shortDescription": {"text": meta.summary},
        "fullDescription": {"text": meta.documentation or meta.summary},
        "help": {"text": _help_text(meta), "markdown": _help_markdown(meta)},
        "defaultConfiguration": {
            "level": meta.severity.label,
            "parameters": {t.name: t.default for t in meta.thresholds},
        },
        "properties": {
            "tags": [meta.family],
            "computed": meta.computed,
            "waivable": meta.waivable,
            "source": meta.source,
        },
    }


def _fallback_descriptor(rule_id: str, level: str) -> dict[str, Any]:
    family, _, name = rule_id.partition("/")
    text = f"Findings reported as {rule_id}."
    return {
        "id": rule_id,
        "name": name or family,
        "shortDescription": {"text": text},
        "fullDescription": {"text": text},
        "help": {"text": text, "markdown": text},
        "defaultConfiguration": {"level": level},
        "properties": {"tags": [family]},
    }


def _region(finding: Finding) -> dict[str, int] | None:
    loc = finding.location
    if loc.line < 1:  # no usable position: the location names the file only
        return None
    region = {"startLine": loc.line}
    if loc.column >= 1:
        region["startColumn"] = loc.column
    if loc.end_line is not None and loc.end_line >= loc.line:
        region["endLine"] = loc.end_line
    if loc.end_column is not None and loc.end_column >= 1:
        region["endColumn"] = loc.end_column
    return region


def _result(
    finding: Finding, fingerprint: str, rule_index: int, artifact_index: int
) -> dict[str, Any]:
    physical: dict[str, Any] = {
        "artifactLocation": {"uri": artifact_uri(finding.file), "index": artifact_index}
    }
    region = _region(finding)
    if region is not None:
        physical["region"] = region
    result: dict[str, Any] = {
        "ruleId": finding.rule,
        "ruleIndex": rule_index,
        "level": finding.severity.label,
        "message": {"text": finding.message},
        "locations": [{"physicalLocation": physical}],
        "partialFingerprints": {FINGERPRINT_KEY: fingerprint},
        "properties": {"pointer": finding.pointer, "facts": json_safe(dict(finding.facts))},
    }
    if finding.waived:
        result["suppressions"] = [
            {"kind": "external", "justification": finding.waiver_reason or "waived"}
        ]
    return result


def _invocation(notifications: list[dict[str, Any]], result: CheckResult) -> dict[str, Any]:
    """Rules that could not run on a plan are tool execution notifications: the run itself
    succeeded (it reported what it could check), but its results are incomplete. The
    invocation's properties record the policy and the as-of date the run was made with."""
    properties: dict[str, Any] = {"policy": result.policy.to_json(), "asOf": result.as_of_in_force,
                                  "asOfBasis": as_of_basis(result)}
    invocation: dict[str, Any] = {"executionSuccessful": True, "properties": properties}
    if notifications:
        invocation["toolExecutionNotifications"] = notifications
    return invocation


def as_document(result: CheckResult, rules: Sequence[RuleMeta]) -> dict[str, Any]:
    unique = {meta.id: meta for meta in rules}
    descriptors = [_descriptor(unique[rule_id]) for rule_id in sorted(unique)]
    rule_index = {d["id"]: i for i, d in enumerate(descriptors)}
    artifacts: list[dict[str, Any]] = []
    artifact_index: dict[str, int] = {}
    results: list[dict[str, Any]] = []
    notifications: list[dict[str, Any]] = []

    for plan in result.plans:
        uri = artifact_uri(plan.file)
        if uri not in artifact_index:
            artifact_index[uri] = len(artifacts)
            artifact: dict[str, Any] = {"location": {"uri": uri}}
            if plan.sha256:
                artifact["hashes"] = {"sha-256": plan.sha256}
            artifacts.append(artifact)
        note = not_run_note(plan)
        if note:
            notifications.append({
                "level": "warning",
                "message": {"text": note},
                "locations": [{"physicalLocation": {"artifactLocation": {"uri": uri, "index": artifact_index[uri]}}}],
                "properties": {"rulesNotRun": list(plan.rules_not_run)},
            })
        findings = plan.findings
        for finding, fingerprint in zip(findings, fingerprints(findings)):
            if finding.rule not in rule_index:
                rule_index[finding.rule] = len(descriptors)
                descriptors.append(_fallback_descriptor(finding.rule, finding.severity.label))
            # A finding's own file may differ from the plan's (an included file).
            file_uri = artifact_uri(finding.file)
            if file_uri not in artifact_index:
                artifact_index[file_uri] = len(artifacts)
                artifacts.append({"location": {"uri": file_uri}})
            results.append(
                _result(finding, fingerprint, rule_index[finding.rule], artifact_index[file_uri])
            )

    _add_sop_texts(artifacts, artifact_index, result)
    run: dict[str, Any] = {
        "tool": {
            "driver": {
                "name": "protolint",
                "version": result.tool_version,
                "semanticVersion": result.tool_version,
                "rules": descriptors,
            }
        },
        "automationDetails": {"id": AUTOMATION_ID},
        "invocations": [_invocation(notifications, result)],
        "artifacts": artifacts,
        "columnKind": "unicodeCodePoints",
        "results": results,
        "properties": {"caution": CAUTION, "policy": result.policy.to_json()},
    }
    as_of = sorted({plan.as_of for plan in result.plans if plan.as_of})
    if as_of:
        run["properties"]["asOf"] = as_of
    return {"$schema": SARIF_SCHEMA, "version": "2.1.0", "runs": [run]}


def _add_sop_texts(artifacts: list[dict[str, Any]], artifact_index: dict[str, int], result: CheckResult) -> None:
    """Each SOP text a plan points to that was read, as an artifact with its hash (once per file)."""
    from protolint.plan.sop_texts import text_file_path

    for plan in result.plans:
        for text in plan.sop_texts:
            uri = artifact_uri(text_file_path(plan.file, text.path))
            if uri in artifact_index:
                continue
            artifact_index[uri] = len(artifacts)
            artifacts.append({
                "location": {"uri": uri}, "length": text.size, "mimeType": "text/markdown", "encoding": "utf-8",
                "hashes": {"sha-256": text.sha256},
                "description": {"text": f"Full text of SOP {text.sop_id}"},
                "properties": {"sop": text.sop_id, "textFile": text.path, "plan": artifact_uri(plan.file)},
            })


def render(result: CheckResult, rules: Sequence[RuleMeta], *, color: bool = False) -> str:
    document = as_document(result, rules)
    return json.dumps(document, ensure_ascii=False, indent=2, allow_nan=False) + "\n"


INPUT_ERROR = "protolint/input-error"


def _failure_notification(problem: InputProblem, artifact_index: dict[str, int]) -> dict[str, Any]:
    notification: dict[str, Any] = {"level": "error", "message": {"text": problem.message},
                                    "descriptor": {"id": INPUT_ERROR, "index": 0}}
    if problem.file:
        uri = artifact_uri(problem.file)
        physical: dict[str, Any] = {"artifactLocation": {"uri": uri, "index": artifact_index[uri]}}
        if problem.line >= 1:
            physical["region"] = {"startLine": problem.line, **({"startColumn": problem.column} if problem.column >= 1 else {})}
        notification["locations"] = [{"physicalLocation": physical}]
    return notification


def failure_document(failure: CheckFailure) -> dict[str, Any]:
    """The SARIF log of a run that could not check its plans."""
    from protolint.pipeline import NOT_CHECKED

    artifacts: list[dict[str, Any]] = []
    artifact_index: dict[str, int] = {}
    for file in (*failure.plans, *(p.file for p in failure.problems if p.file)):
        uri = artifact_uri(file)
        if uri not in artifact_index:
            artifact_index[uri] = len(artifacts)
            artifacts.append({"location": {"uri": uri}})
    notifications = [_failure_notification(problem, artifact_index) for problem in failure.problems]
    for file in failure.plans:
        if failure.problem_of(file) is None:
            uri = artifact_uri(file)
            notifications.append({"level": "note", "message": {"text": NOT_CHECKED},
                                  "locations": [{"physicalLocation": {"artifactLocation": {"uri": uri, "index": artifact_index[uri]}}}]})
    run: dict[str, Any] = {
        "tool": {"driver": {"name": "protolint", "version": failure.tool_version,
                            "semanticVersion": failure.tool_version, "rules": [],
                            "notifications": [{"id": INPUT_ERROR, "shortDescription": {"text": RUN_NOT_CHECKED}}]}},
        "automationDetails": {"id": AUTOMATION_ID},
        "invocations": [{
            "executionSuccessful": False,
            "exitCode": 2,
            "exitCodeDescription": RUN_NOT_CHECKED,
            "toolExecutionNotifications": notifications,
        }],
        "artifacts": artifacts,
        "columnKind": "unicodeCodePoints",
        "results": [],
        "properties": {"caution": CAUTION},
    }
    return {"$schema": SARIF_SCHEMA, "version": "2.1.0", "runs": [run]}


def render_failure(failure: CheckFailure) -> str:
    return json.dumps(failure_document(failure), ensure_ascii=False, indent=2) + "\n"
