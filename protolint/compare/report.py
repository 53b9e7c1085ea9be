"""A plan comparison as text, JSON, Markdown or HTML (the HTML page shares the review report's look)."""

from __future__ import annotations

import re
from typing import TYPE_CHECKING, Callable

from protolint import CAUTION
from protolint.report._common import one_line
from protolint.wording import plural

if TYPE_CHECKING:
    from protolint.compare import Change, FindingStatus, PlanComparison, TextChange

FORMATS = ("text", "json", "markdown", "html")
TEMPLATE = "diff.html.j2"
_BACKTICKS = re.compile(r"`+")


def render_comparison(fmt: str, comparison: PlanComparison) -> str:
    renderers = {"text": as_text, "json": as_json, "markdown": as_markdown, "html": as_html}
    if fmt not in renderers:
        raise ValueError(f"comparison format must be one of {', '.join(FORMATS)}; got {fmt!r}")
    return renderers[fmt](comparison)


def summary(comparison: PlanComparison) -> str:
    counts = comparison.counts()
    changes = counts["added"] + counts["removed"] + counts["changed"]
    return (f"{plural(changes, 'change')} ({counts['added']} added, {counts['removed']} removed, "
            f"{counts['changed']} changed); findings: {counts['introduced']} introduced, {counts['resolved']} resolved, "
            f"{counts['unchanged']} unchanged"
            + (f", {counts['not-rechecked']} not rechecked (the new version does not pass the schema and reference checks)"
               if counts["not-rechecked"] else "")
            + text_summary(comparison))


def text_summary(comparison: PlanComparison) -> str:
    """"; SOP texts: 1 changed, 0 added, 0 removed, 2 unchanged", when either version names any."""
    texts = comparison.text_counts()
    if not any(texts.values()):
        return ""
    return (f"; SOP texts: {texts['changed']} changed, {texts['added']} added, {texts['removed']} removed, "
            f"{texts['unchanged']} unchanged"
            + (f", {texts['unreadable']} not compared (unreadable)" if texts["unreadable"] else ""))


def digests_text(change: TextChange) -> str:
    return f"SHA-256 {change.old_sha256 or '–'} → {change.new_sha256 or '–'}"


def omitted_text(change: TextChange) -> str:
    return (f"… {plural(change.diff_lines_omitted, 'more diff line')} left out (the first {len(change.diff)} are shown)"
            if change.diff_lines_omitted else "")


def lines_text(change: Change | TextChange) -> str:
    """Where a change is in each plan file: its key's line in the version(s) that have it (an SOP
    text's change is placed at its ``text_file`` key)."""
    if change.old_line is None:
        return f"new line {change.new_line}"
    if change.new_line is None:
        return f"old line {change.old_line}"
    return f"line {change.old_line} → {change.new_line}"


def as_json(comparison: PlanComparison) -> str:
    from protolint.commands._shared import to_json

    report = {"tool": {"name": "protolint", "command": "diff"}, **comparison.to_json(), "caution": CAUTION}
    return to_json(report)


def as_text(comparison: PlanComparison) -> str:
    out = [f"protolint diff: {one_line(comparison.old_file)} → {one_line(comparison.new_file)}",
           summary(comparison), one_line(comparison.checked_under()), ""]
    if comparison.changes:
        out.append("Changes in the plan")
        for change in comparison.changes:
            out.append(f"  {change.kind:<8} {one_line(change.sentence)}")
            out.append(f"           {one_line(change.pointer)}  ({lines_text(change)})")
        out.append("")
    else:
        out += ["No change in the plan's content (reordered entries do not count).", ""]
    if comparison.sop_texts:
        out.append("Changes in the SOP texts")
        for text in comparison.sop_texts:
            out.append(f"  {text.kind:<10} {one_line(text.sentence)}")
            out.append(f"             {one_line(text.pointer)}  ({lines_text(text)})")
            if text.kind != "unreadable":
                out.append(f"             {digests_text(text)}")
            out += [f"             {one_line(problem)}" for problem in text.problems]
            out += [f"             {one_line(line)}" for line in text.diff]
            if text.diff_lines_omitted:
                out.append(f"             {omitted_text(text)}")
        out.append("")
    for status, heading in (("introduced", "Findings introduced"), ("resolved", "Findings resolved"),
                            ("not-rechecked", "Old findings not rechecked (the new version does not load)")):
        items = comparison.with_status(status)
        if status == "not-rechecked" and not items:
            continue
        out.append(f"{heading}: {len(items) or 'none'}")
        out += [_finding_text(item) for item in items]
        out.append("")
    out.append(f"Unchanged findings: {len(comparison.with_status('unchanged'))} (listed in --format json, markdown or html)")
    out += ["", f"Caution: {CAUTION}", ""]
    return "\n".join(out)


def _finding_text(item: FindingStatus) -> str:
    finding = item.finding
    waived = " (waived)" if finding.waived else ""
    return (f"  {finding.severity.label:<8}{waived} {finding.rule} at {one_line(finding.file)}:{finding.location.line}:"
            f"{finding.location.column}: {one_line(finding.message)}")


def as_markdown(comparison: PlanComparison) -> str:
    # The report formatters' own escaping (standard library only), so that the Markdown
    # comparison, like text and JSON, needs the core install alone.
    from protolint.report.fmt_markdown import escape as esc

    out = [f"# Plan comparison: {esc(comparison.old_file)} → {esc(comparison.new_file)}", "", esc(summary(comparison)), "", esc(comparison.checked_under()), ""]
    out += ["## Changes in the plan", ""]
    if comparison.changes:
        out += ["| Change | What | Pointer (new version) | Lines |", "|---|---|---|---|"]
        out += [f"| {change.kind} | {esc(change.sentence)} | {esc(change.pointer)} | {esc(lines_text(change))} |"
                for change in comparison.changes]
    else:
        out.append("No change in the plan's content (reordered entries do not count).")
    if comparison.sop_texts:
        out += _markdown_texts(comparison.sop_texts, esc)
    for status in ("introduced", "resolved", "unchanged", "not-rechecked"):
        items = comparison.with_status(status)
        if status == "not-rechecked" and not items:
            continue
        out += ["", f"## Findings {status.replace('-', ' ')} ({len(items)})", ""]
        if items:
            out += ["| Severity | Rule | Line | Finding |", "|---|---|---|---|"]
            out += [f"| {item.finding.severity.label}{' (waived)' if item.finding.waived else ''} | {esc(item.finding.rule)} "
                    f"| {item.finding.location.line} | {esc(item.finding.message)} |" for item in items]
        else:
            out.append("None.")
    out += ["", f"> **Caution.** {esc(CAUTION)}", ""]
    return "\n".join(out)


def _markdown_texts(texts: tuple[TextChange, ...], esc: Callable[[str], str]) -> list[str]:
    out = ["", "## Changes in the SOP texts", "", "| Change | What | Pointer (new version) | Lines | SHA-256 (old → new) |",
           "|---|---|---|---|---|"]
    out += [f"| {text.kind} | {esc(text.sentence)} | {esc(text.pointer)} | {esc(lines_text(text))} "
            f"| {esc(text.old_sha256 or '–')} → {esc(text.new_sha256 or '–')} |" for text in texts]
    for text in texts:
        if text.problems:
            out += ["", f"SOP {esc(text.sop_id)}, not compared:", ""]
            out += [f"- {esc(problem)}" for problem in text.problems]
        if text.diff:
            # The fence is longer than any run of backticks in the text, so no line of it can close it.
            fence = "`" * max(3, 1 + max((len(run) for line in text.diff for run in _BACKTICKS.findall(line)), default=0))
            out += ["", f"SOP {esc(text.sop_id)}, unified diff of its text:", "", fence + "diff", *text.diff, fence]
            if text.diff_lines_omitted:
                out += ["", esc(omitted_text(text))]
    return out


def diff_line_class(number: int, line: str) -> str:
    """The HTML class of line ``number`` (from 0) of a unified diff: its first two lines are the file headers."""
    if number < 2:
        return "file"
    return {"+": "add", "-": "del", "@": "hunk"}.get(line[:1], "same")


def as_html(comparison: PlanComparison) -> str:
    from protolint.render.environment import make_env

    return make_env().get_template(TEMPLATE).render(
        comparison=comparison, summary=summary(comparison), lines_text=lines_text, caution=CAUTION,
        introduced=comparison.with_status("introduced"), resolved=comparison.with_status("resolved"),
        unchanged=comparison.with_status("unchanged"), not_rechecked=comparison.with_status("not-rechecked"),
        omitted_text=omitted_text, diff_line_class=diff_line_class,
    )
