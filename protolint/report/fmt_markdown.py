"""Markdown report, for a pull-request comment or a wiki page.

Everything that comes from a plan (file names, messages, waiver reasons, facts) is untrusted:
it is escaped so that it renders as the literal text and can neither inject HTML nor break
out of a table cell.
"""

from __future__ import annotations

import re
from typing import TYPE_CHECKING, Sequence

from protolint import CAUTION
from protolint.report._common import (
    check_basis,
    counts_phrase,
    facts_inline,
    plan_counts,
    plural,
    not_run_note,
    sop_texts_line,
)

if TYPE_CHECKING:
    from protolint.findings import CheckResult, Finding
    from protolint.rules.registry import RuleMeta

# Without "<" no raw HTML can start; "&" is escaped so that entities in plan text stay literal.
_HTML = {"&": "&amp;", "<": "&lt;", ">": "&gt;"}
# Punctuation that can start inline Markdown syntax in the middle of a line: emphasis, code
# spans, links and images, table cells, strikethrough, a heading's closing sequence. Escaped
# text never starts a line, so list and block markers ("-", "+", "1.") need no escaping.
_MARKDOWN = set("\\`*_[]|~#")
_BREAKS = re.compile(r"[\r\n\u2028\u2029\x85]+")
_CONTROL = re.compile(r"[\x00-\x08\x0b-\x1f\x7f-\x9f]")
_SAFE_CODE = re.compile(r"^[A-Za-z0-9/_.-]+$")


def escape(text: str) -> str:
    """Plan-derived text as inert inline Markdown, safe inside a table cell."""
    text = _CONTROL.sub("", _BREAKS.sub(" ", text))
    out = []
    for char in text:
        if char in _HTML:
            out.append(_HTML[char])
        elif char in _MARKDOWN:
            out.append("\\" + char)
        else:
            out.append(char)
    return "".join(out)


def code(text: str) -> str:
    """An identifier in a code span when it is plainly safe, otherwise escaped text."""
    return f"`{text}`" if _SAFE_CODE.match(text) else escape(text)


def _row(cells: Sequence[str]) -> str:
    return "| " + " | ".join(cells) + " |"


def _table(header: Sequence[str], rows: Sequence[Sequence[str]]) -> str:
    lines = [_row(header), _row(["---"] * len(header))]
    lines += [_row(row) for row in rows]
    return "\n".join(lines)


def _where(finding: Finding) -> str:
    return f"{finding.location.line}:{finding.location.column}"


def _pointer(finding: Finding) -> str:
    return escape(finding.pointer) if finding.pointer else "—"


def _finding_row(finding: Finding) -> list[str]:
    return [
        _where(finding),
        finding.severity.label,
        code(finding.rule),
        escape(finding.message),
        _pointer(finding),
        escape(facts_inline(finding.facts)),
    ]


def _waived_row(finding: Finding) -> list[str]:
    return [
        _where(finding),
        finding.severity.label,
        code(finding.rule),
        escape(finding.message),
        escape(finding.waiver_reason or "no reason recorded"),
    ]


def _summary_table(result: CheckResult) -> str:
    rows = []
    for plan in result.plans:
        counts = plan_counts(plan)
        rows.append([escape(plan.file)] + [str(counts[k]) for k in ("error", "warning", "note", "waived")])
    totals = result.counts()
    rows.append(["**Total**"] + [f"**{totals[k]}**" for k in ("error", "warning", "note", "waived")])
    return _table(["Plan", "Errors", "Warnings", "Notes", "Waived"], rows)


def render(result: CheckResult, rules: Sequence[RuleMeta], *, color: bool = False) -> str:
    counts = result.counts()
    parts = [
        "# protolint report",
        f"{counts_phrase(counts)} in {plural(len(result.plans), 'plan')} "
        f"(protolint {escape(result.tool_version)}).",
        escape(check_basis(result)),
        _summary_table(result),
    ]
    for plan in result.plans:
        findings = plan.findings
        active = [f for f in findings if not f.waived]
        waived = [f for f in findings if f.waived]
        parts.append(f"## {escape(plan.file)}")
        meta = f"sha256 `{plan.sha256}`" if _SAFE_CODE.match(plan.sha256 or "") else ""
        if plan.as_of:
            meta += ("; " if meta else "") + f"dates checked as of {escape(plan.as_of)}"
        if meta:
            parts.append(meta)
        if plan.sop_texts:
            parts.append(escape(sop_texts_line(plan)))
        if active:
            parts.append(
                _table(
                    ["Line:col", "Severity", "Rule", "Message", "Pointer", "Facts"],
                    [_finding_row(f) for f in active],
                )
            )
        else:
            parts.append("No unwaived findings.")
        note = not_run_note(plan)
        if note:
            parts.append(f"**Not checked.** {escape(note)}.")
            parts.append("<details><summary>Rules not run</summary>\n\n"
                         + ", ".join(f"`{rule_id}`" for rule_id in plan.rules_not_run if _SAFE_CODE.match(rule_id))
                         + "\n\n</details>")
        if waived:
            parts.append("### Waived")
            parts.append(
                _table(
                    ["Line:col", "Severity", "Rule", "Message", "Waiver reason"],
                    [_waived_row(f) for f in waived],
                )
            )
    parts.append(f"> **Caution.** {CAUTION}")
    return "\n\n".join(parts) + "\n"
