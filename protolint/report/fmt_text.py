"""Plain-text report for terminals, editors and CI logs.

Each finding is one ``file:line:column: severity rule message`` line, so editors and CI log
viewers can jump to it. Waived findings use the word ``waived`` in the severity slot, so a
tool that scans for ``error``/``warning`` does not count them; their original severity and
the waiver's reason follow the message.
"""

from __future__ import annotations

import textwrap
from typing import TYPE_CHECKING, Sequence

from protolint import CAUTION
from protolint.report._common import (
    check_basis,
    counts_phrase,
    one_line,
    plan_counts,
    plural,
    not_run_note,
    sop_texts_line,
)

if TYPE_CHECKING:
    from protolint.findings import CheckResult, Finding
    from protolint.rules.registry import RuleMeta

# A restrained palette: only the severity word is coloured, plan headers are bold and
# waived findings are dimmed. Plain SGR codes that every ANSI terminal understands.
_RESET = "\x1b[0m"
_STYLE = {
    "error": "\x1b[31;1m",
    "warning": "\x1b[33m",
    "note": "\x1b[36m",
    "waived": "\x1b[2m",
    "header": "\x1b[1m",
    "ok": "\x1b[32m",
}

WRAP_WIDTH = 100


def _paint(text: str, style: str, color: bool) -> str:
    return f"{_STYLE[style]}{text}{_RESET}" if color else text


def finding_line(finding: Finding, *, color: bool = False) -> str:
    """The one-line form of a finding (also used by the JUnit report)."""
    location = one_line(f"{finding.file}:{finding.location.line}:{finding.location.column}")
    message = one_line(finding.message)
    if finding.waived:
        reason = one_line(finding.waiver_reason or "no reason recorded")
        text = (
            f"{location}: waived {finding.rule} {message} "
            f"({finding.severity.label}; waived: {reason})"
        )
        return _paint(text, "waived", color)
    severity = _paint(finding.severity.label, finding.severity.label, color)
    return f"{location}: {severity} {finding.rule} {message}"


def _header(file: str, counts: dict[str, int], color: bool) -> str:
    phrase = counts_phrase(counts, skip_zero=True) or "no findings"
    return _paint(f"{one_line(file)} ({phrase})", "header", color)


def summary_line(result: CheckResult) -> str:
    counts = result.counts()
    return f"{counts_phrase(counts)} in {plural(len(result.plans), 'plan')}"


def render(result: CheckResult, rules: Sequence[RuleMeta], *, color: bool = False) -> str:
    blocks: list[str] = []
    for plan in result.plans:
        lines = [_header(plan.file, plan_counts(plan), color)]
        lines.extend(finding_line(finding, color=color) for finding in plan.findings)
        texts = sop_texts_line(plan)
        if texts:
            lines.append(textwrap.fill(one_line(texts), width=WRAP_WIDTH))
        note = not_run_note(plan)
        if note:
            lines.append(textwrap.fill(one_line(note), width=WRAP_WIDTH))
        blocks.append("\n".join(lines))

    counts = result.counts()
    summary = summary_line(result)
    if counts["error"]:
        summary = _paint(summary, "error", color)
    elif counts["warning"]:
        summary = _paint(summary, "warning", color)
    else:
        summary = _paint(summary, "ok", color)
    blocks.append(summary)
    blocks.append(textwrap.fill(one_line(check_basis(result)), width=WRAP_WIDTH))
    blocks.append(textwrap.fill(f"Caution: {CAUTION}", width=WRAP_WIDTH))
    return "\n\n".join(blocks) + "\n"
