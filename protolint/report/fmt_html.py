"""HTML report: one self-contained page for reviewers (inline CSS, no script, no external resource).

Built with the standard library's escaping rather than the document templates, so that
``protolint check --format html`` does not load the rendering stack. Everything from a plan is
escaped; computed findings show their facts in a table under the message.
"""

from __future__ import annotations

from html import escape
from typing import TYPE_CHECKING, Any, Sequence

from protolint import CAUTION
from protolint.report._common import counts_phrase, json_safe, plan_counts, plural, sorted_findings

if TYPE_CHECKING:
    from protolint.findings import CheckResult, Finding, PlanResult
    from protolint.rules.registry import RuleMeta

_CSS = """
body { font: 14px/1.45 system-ui, "DejaVu Sans", sans-serif; color: #1d2733; margin: 2rem auto; max-width: 70rem; padding: 0 1rem; }
h1 { font-size: 1.6rem; margin-bottom: .2rem; } h2 { font-size: 1.2rem; margin-top: 2rem; border-bottom: 2px solid #d5dbe3; }
table { border-collapse: collapse; width: 100%; margin: .6rem 0 1rem; }
th, td { border: 1px solid #d5dbe3; padding: .35rem .5rem; text-align: left; vertical-align: top; }
th { background: #f2f4f7; font-weight: 600; }
td.num { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; }
code { font-family: "DejaVu Sans Mono", monospace; font-size: .92em; }
.sev { font-weight: 600; white-space: nowrap; }
.sev-error { color: #8f1d1d; } .sev-warning { color: #7a4d00; } .sev-note { color: #2f4f6f; } .sev-waived { color: #55606e; }
details { margin-top: .3rem; } summary { cursor: pointer; color: #2f4f6f; }
table.facts { width: auto; margin: .3rem 0 0; font-size: .92em; } table.facts th { background: none; font-weight: normal; color: #55606e; }
.meta, .muted { color: #55606e; } .caution { border: 1px solid #c9a0a0; background: #fbf3f3; padding: .7rem 1rem; margin-top: 2rem; }
@media print { details { display: block; } summary { display: none; } body { margin: 0; max-width: none; } }
"""


def _facts(facts: Any) -> str:
    safe = json_safe(facts)
    if not safe:
        return ""
    rows = "".join(f"<tr><th>{escape(str(key))}</th><td>{escape(_value(value))}</td></tr>" for key, value in safe.items())
    return f'<details><summary>working ({len(safe)} facts)</summary><table class="facts">{rows}</table></details>'


def _value(value: Any) -> str:
    if isinstance(value, list):
        return ", ".join(_value(item) for item in value)
    if isinstance(value, dict):
        return "; ".join(f"{key}: {_value(item)}" for key, item in value.items())
    return str(value)


def _finding_row(finding: Finding) -> str:
    label = "waived" if finding.waived else finding.severity.label
    message = escape(finding.message)
    if finding.waived:
        message += f'<div class="muted">Waived ({escape(finding.severity.label)}): {escape(finding.waiver_reason or "no reason recorded")}</div>'
    return (
        f'<tr><td class="num">{finding.location.line}:{finding.location.column}</td>'
        f'<td class="sev sev-{label}">{label}</td><td><code>{escape(finding.rule)}</code></td>'
        f'<td>{message}{_facts(finding.facts)}</td><td><code>{escape(finding.pointer or "")}</code></td></tr>'
    )


def _plan_section(plan: PlanResult) -> str:
    findings = sorted_findings(plan)
    meta = [f"SHA-256 <code>{escape(plan.sha256)}</code>"]
    if plan.as_of:
        meta.append(f"dates checked as of {escape(plan.as_of)}")
    body = (
        "<table><thead><tr><th>Line:col</th><th>Severity</th><th>Rule</th><th>Finding</th><th>Pointer</th></tr></thead>"
        "<tbody>" + "".join(_finding_row(f) for f in findings) + "</tbody></table>"
        if findings else "<p>No findings.</p>"
    )
    return (f"<section><h2>{escape(plan.file)}</h2><p class=\"meta\">{escape(counts_phrase(plan_counts(plan)))}; "
            f"{'; '.join(meta)}</p>{body}</section>")


def _summary(result: CheckResult) -> str:
    keys = ("error", "warning", "note", "waived")
    rows = "".join(
        f"<tr><td>{escape(plan.file)}</td>" + "".join(f'<td class="num">{plan_counts(plan)[k]}</td>' for k in keys) + "</tr>"
        for plan in result.plans
    )
    return ("<table><thead><tr><th>Plan</th><th>Errors</th><th>Warnings</th><th>Notes</th><th>Waived</th></tr></thead>"
            f"<tbody>{rows}</tbody></table>")


def render(result: CheckResult, rules: Sequence[RuleMeta], *, color: bool = False) -> str:
    counts = result.counts()
    title = f"protolint report: {counts_phrase(counts)}"
    sections = "".join(_plan_section(plan) for plan in result.plans)
    return (
        "<!DOCTYPE html>\n"
        f'<html lang="en"><head><meta charset="utf-8"><title>{escape(title)}</title>'
        f'<meta name="generator" content="protolint {escape(result.tool_version)}">'
        # No script, style or resource may come from elsewhere; the page is one file.
        "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'unsafe-inline'\">"
        f"<style>{_CSS}</style></head><body>"
        f"<h1>protolint report</h1><p class=\"meta\">{escape(counts_phrase(counts))} in "
        f"{escape(plural(len(result.plans), 'plan'))}; protolint {escape(result.tool_version)}</p>"
        f"{_summary(result)}{sections}"
        f'<p class="caution"><strong>Caution.</strong> {escape(CAUTION)}</p>'
        "</body></html>\n"
    )
