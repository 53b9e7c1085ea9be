"""The SOP full texts (``sops[].text_file``) of two versions of a plan compared.

The plans can be identical while an SOP's text changed, so the comparison looks at the texts
themselves: SOPs are paired by id, and a text is added, removed or changed when its SHA-256
differs (a renamed file with the same bytes is no text change; the plan comparison shows the
new path). A changed text comes with a unified diff of its lines (difflib's), bounded in lines
and in line length so that a rewritten 256 KB text cannot flood a CI log. A text that could not
be read in either version cannot be compared; it is reported as unreadable with the located
reason, as ``check`` gives it.

The texts are the ones the check of each version read (:attr:`PlanResult.sop_texts`), so the
diff shows exactly the bytes whose digest the check recorded; nothing is read twice.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from protolint.findings import pointer_from_path
from protolint.plan.sop_texts import sop_label
from protolint.report._common import location_text
from protolint.wording import plural

if TYPE_CHECKING:
    from protolint.findings import PlanResult
    from protolint.plan.sop_texts import SopText
    from protolint.plan.source import LoadedSource

TEXT_CHANGE_KINDS = ("added", "removed", "changed", "unreadable")
MAX_DIFF_LINES = 300
"""Lines of a unified diff shown per text; the rest are counted, not shown."""
MAX_LINE_CHARACTERS = 300
"""Characters of one diff line shown; a longer line ends in "…"."""
CONTEXT_LINES = 3
TEXT_RULES = ("schema/text-file-outside-folder", "schema/text-file-unreadable")


@dataclass(frozen=True)
class TextChange:
    """An SOP text added, removed, changed or unreadable between the two versions."""

    kind: str
    """added, removed, changed, or unreadable (in either version: then not compared)."""
    sop_id: str
    pointer: str
    """JSON Pointer of the ``text_file`` key in the new version (in the old one when removed)."""
    old_text_file: str | None
    new_text_file: str | None
    old_sha256: str | None
    new_sha256: str | None
    old_line: int | None
    """Line of the ``text_file`` key in each plan file."""
    new_line: int | None
    lines_added: int = 0
    lines_removed: int = 0
    diff: tuple[str, ...] = ()
    """The unified diff of a changed text (old → new), at most MAX_DIFF_LINES lines."""
    diff_lines_omitted: int = 0
    problems: tuple[str, ...] = ()
    """For an unreadable text: why, as ``file:line:column: message`` (one per version)."""

    @property
    def sentence(self) -> str:
        if self.kind == "changed":
            renamed = f", now {self.new_text_file}" if self.new_text_file != self.old_text_file else ""
            return (f"text of SOP {self.sop_id} ({self.old_text_file}{renamed}) changed: "
                    f"{plural(self.lines_added, 'line')} added, "
                    f"{self.lines_removed} removed")
        if self.kind == "added":
            return f"text of SOP {self.sop_id} added ({self.new_text_file})"
        if self.kind == "removed":
            return f"text of SOP {self.sop_id} removed (was {self.old_text_file})"
        return f"text of SOP {self.sop_id} could not be read, so it was not compared"

    def to_json(self) -> dict[str, Any]:
        return {
            "kind": self.kind, "sop": self.sop_id, "pointer": self.pointer,
            "old_text_file": self.old_text_file, "new_text_file": self.new_text_file,
            "old_sha256": self.old_sha256, "new_sha256": self.new_sha256,
            "old_line": self.old_line, "new_line": self.new_line,
            "lines_added": self.lines_added, "lines_removed": self.lines_removed,
            "diff": list(self.diff), "diff_lines_omitted": self.diff_lines_omitted,
            "problems": list(self.problems), "description": self.sentence,
        }


@dataclass(frozen=True)
class _Named:
    """What one version says about one SOP's text: where the key is, and what was read."""

    sop_id: str
    text_file: str
    pointer: str
    line: int
    text: SopText | None
    problem: str | None


def text_changes(old: LoadedSource, new: LoadedSource, old_result: PlanResult,
                 new_result: PlanResult) -> tuple[tuple[TextChange, ...], int]:
    """The SOP texts that differ between the versions, in the new file's order, and how many
    texts were the same in both."""
    before, after = _named(old, old_result), _named(new, new_result)
    changes: list[TextChange] = []
    same = 0
    for sop_id in [*after, *(key for key in before if key not in after)]:
        was, now = before.get(sop_id), after.get(sop_id)
        if was is not None and now is not None and was.text and now.text and was.text.sha256 == now.text.sha256:
            same += 1
            continue
        changes.append(_change(sop_id, was, now))
    changes.sort(key=lambda c: (c.new_line if c.new_line is not None else (c.old_line or 0), c.kind != "removed"))
    return tuple(changes), same


def _named(source: LoadedSource, result: PlanResult) -> dict[str, _Named]:
    sops = source.data.get("sops") if isinstance(source.data, dict) else None
    if not isinstance(sops, list):
        return {}
    read = {text.sop_index: text for text in result.sop_texts}
    named: dict[str, _Named] = {}
    for index, sop in enumerate(sops):
        if not isinstance(sop, dict) or not isinstance(sop.get("text_file"), str):
            continue
        # The first of a duplicated id (a schema finding) wins.
        sop_id = sop_label(sop, index)
        path = ("sops", index, "text_file")
        pointer = pointer_from_path(path)
        span = source.source_map.span(path)
        text = read.get(index)
        problem = None if text is not None else _problem(source, result, pointer, span.key_line, span.key_column)
        named.setdefault(sop_id, _Named(sop_id, sop["text_file"], pointer, span.key_line, text, problem))
    return named


def _problem(source: LoadedSource, result: PlanResult, pointer: str, line: int, column: int) -> str:
    """Why a text was not read, located, as the check of that version reported it."""
    finding = next((f for f in result.findings if f.rule in TEXT_RULES and f.pointer == pointer), None)
    if finding is not None:
        return f"{location_text(finding)}: {finding.message}"
    # The policy switched the text-file rules off: the reason is not known, the place is.
    return f"{source.file}:{line}:{column}: SOP text file could not be read (the policy switched its check off)"


def _change(sop_id: str, was: _Named | None, now: _Named | None) -> TextChange:
    place = now if now is not None else was
    assert place is not None  # the id came from one of the versions
    common: dict[str, Any] = dict(
        sop_id=sop_id, pointer=place.pointer,
        old_text_file=was.text_file if was else None, new_text_file=now.text_file if now else None,
        old_sha256=was.text.sha256 if was and was.text else None, new_sha256=now.text.sha256 if now and now.text else None,
        old_line=was.line if was else None, new_line=now.line if now else None,
    )
    problems = tuple(side.problem for side in (was, now) if side is not None and side.problem)
    if problems:
        return TextChange("unreadable", problems=problems, **common)
    if was is None:
        return TextChange("added", **common)
    if now is None:
        return TextChange("removed", **common)
    assert was.text is not None and now.text is not None
    shown, added, removed, omitted = bounded_diff(was.text.text, now.text.text, f"old/{was.text_file}", f"new/{now.text_file}")
    return TextChange("changed", lines_added=added, lines_removed=removed, diff=shown, diff_lines_omitted=omitted, **common)


def bounded_diff(old: str, new: str, old_label: str, new_label: str,
                 max_lines: int = MAX_DIFF_LINES) -> tuple[tuple[str, ...], int, int, int]:
    """A unified diff of two texts: the first ``max_lines`` lines (each cut at
    MAX_LINE_CHARACTERS), the lines added and removed in the whole diff, and how many diff lines
    were left out."""
    shown: list[str] = []
    added = removed = omitted = 0
    lines = difflib.unified_diff(old.splitlines(), new.splitlines(), old_label, new_label, n=CONTEXT_LINES, lineterm="")
    for number, line in enumerate(lines):
        if number >= 2:  # the first two are the "---" and "+++" file headers, not lines of the text
            added += line.startswith("+")
            removed += line.startswith("-")
        if len(shown) < max_lines:
            shown.append(line if len(line) <= MAX_LINE_CHARACTERS else line[: MAX_LINE_CHARACTERS - 1] + "…")
        else:
            omitted += 1
    return tuple(shown), added, removed, omitted
