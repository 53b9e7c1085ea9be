from __future__ import annotations

import re

from protolint import CAUTION
from protolint.report import render_report

from .conftest import FILE_A, FILE_B, FILE_C

LINE = re.compile(r"^(?P<file>.+):(?P<line>\d+):(?P<col>\d+): (?P<sev>error|warning|note|waived) (?P<rule>\S+) ")


def finding_lines(text: str) -> list[re.Match[str]]:
    return [m for m in map(LINE.match, text.splitlines()) if m]


def test_no_ansi_without_color_even_for_hostile_text(result, rules):
    text = render_report("text", result, rules, color=False)
    assert "\x1b" not in text
    # The escape character from the plan is shown, not executed.
    assert "\\x1b[31mred" in text


def test_color_is_applied_only_when_asked(result, rules):
    text = render_report("text", result, rules, color=True)
    assert "\x1b[31;1merror\x1b[0m" in text
    # The plan's own escape sequence is still neutralised when we colour.
    assert "\x1b[31mred" not in text


def test_one_line_per_finding_sorted_within_each_file(result, rules):
    text = render_report("text", result, rules)
    matches = finding_lines(text)
    assert [(m["file"], int(m["line"]), m["sev"], m["rule"]) for m in matches] == [
        (FILE_A, 2, "note", "otherfam/note-only"),
        (FILE_A, 12, "error", "testfam/low-reliability"),
        (FILE_A, 30, "warning", "testfam/short-interval"),
        (FILE_A, 40, "waived", "testfam/short-interval"),
        (FILE_B, 3, "error", "schema/unknown-key"),
        (FILE_B, 9, "waived", "otherfam/note-only"),
    ]


def test_header_per_file_including_clean_ones(result, rules):
    lines = render_report("text", result, rules).splitlines()
    assert f"{FILE_A} (1 error, 1 warning, 1 note, 1 waived)" in lines
    assert f"{FILE_B} (1 error, 1 waived)" in lines
    assert f"{FILE_C} (no findings)" in lines


def test_waived_line_gives_severity_and_reason(result, rules):
    text = render_report("text", result, rules)
    waived = [line for line in text.splitlines() if ":40:7: waived " in line]
    assert len(waived) == 1
    assert waived[0].endswith("(warning; waived: Approved by QA <b>lead</b> | ticket `T-1` & co, Zoë's call)")


def test_summary_and_caution(result, rules):
    text = render_report("text", result, rules)
    assert "2 errors, 1 warning, 1 note, 2 waived in 3 plans" in text.splitlines()
    tail = " ".join(text.split("2 waived in 3 plans", 1)[1].split())
    assert tail == f"Checked as of 2026-03-01 under the default policy (no policy file). Caution: {CAUTION}"
