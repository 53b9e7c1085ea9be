from __future__ import annotations

import re

from protolint import CAUTION
from protolint.report import render_report
from protolint.report.fmt_markdown import escape

HEADING_A = "## plans/demo\\_trial.yaml"  # "_" is escaped like any emphasis marker


def unescaped_pipes(line: str) -> int:
    return len(re.findall(r"(?<!\\)\|", line))


def test_hostile_text_is_inert(result, rules):
    text = render_report("markdown", result, rules)
    for raw in ("<script>", "</script>", "<b>", "`tick`", "`T-1`", "*bold*", "\x1b"):
        assert raw not in text, raw
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in text
    assert "&lt;b&gt;lead&lt;/b&gt;" in text
    assert "\\`tick\\`" in text and "\\*bold\\*" in text
    assert "&amp; \\| pipe" in text
    assert "café ≥ 0.7" in text


def test_escape_keeps_entities_literal():
    assert escape("&lt;x&gt;") == "&amp;lt;x&amp;gt;"
    assert escape("a\nb|c") == "a b\\|c"


def test_tables_keep_their_shape(result, rules):
    text = render_report("markdown", result, rules)
    rows = [line for line in text.splitlines() if line.startswith("|")]
    assert rows
    tables: list[list[str]] = []
    for line in text.splitlines():
        if line.startswith("|"):
            if not tables or not tables[-1]:
                tables.append([])
            tables[-1].append(line)
        elif tables and tables[-1]:
            tables.append([])
    for table in (t for t in tables if t):
        widths = {unescaped_pipes(line) for line in table}
        assert len(widths) == 1, table


def test_structure(result, rules):
    text = render_report("markdown", result, rules)
    lines = text.splitlines()
    assert lines[0] == "# protolint report"
    assert "2 errors, 1 warning, 1 note, 2 waived in 3 plans" in text
    assert "| **Total** | **2** | **1** | **1** | **2** |" in lines
    assert HEADING_A in lines
    assert "## plans/second plan é.yaml" in lines
    assert lines.count("### Waived") == 2
    assert "| 12:5 | error | `testfam/low-reliability` |" in text
    assert "accepted by the steering group" in text
    assert lines[-1] == f"> **Caution.** {CAUTION}"


def test_waived_findings_are_not_in_the_main_table(result, rules):
    text = render_report("markdown", result, rules)
    main_a = text.split(HEADING_A, 1)[1].split("### Waived", 1)[0]
    assert "Second pool reviewed" not in main_a
    waived_a = text.split("### Waived", 1)[1].split("## ", 1)[0]
    assert "Second pool reviewed every 20 weeks" in waived_a
