"""``protolint diff`` on pairs of plans with known changes.

Every pair is the invented demo plan and a copy with text edits, so each expected change is
written out by hand beside the edit.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import jsonpatch
import pytest

from protolint.compare import compare_plans
from protolint.plan import read_source
from protolint.pipeline import check_source
from tests.conftest import write_demo_plan

DEMO = Path(__file__).resolve().parents[2] / "demo_protocol" / "plan.yaml"
DEMO_TEXT = DEMO.read_text(encoding="utf-8")

INTERVAL = ("      interval_weeks: 52\n", "      interval_weeks: 30\n")
# Swap the week-4 and week-12 visits: the same entries in another order.
VISITS = ("    - {id: week-4, name: Week 4, day: 29, window_before: 3, window_after: 3}\n"
          "    - {id: week-12, name: Week 12, day: 85, window_before: 5, window_after: 5}\n",
          "    - {id: week-12, name: Week 12, day: 85, window_before: 5, window_after: 5}\n"
          "    - {id: week-4, name: Week 4, day: 29, window_before: 3, window_after: 3}\n")
# Resolves sop/review-overdue (SOP-IMG-002 was due 2026-06-30, before the plan date 2026-07-15;
# 2026-09-15 is more than the rule's 60 days ahead, yet still before the SOP takes effect on
# 2026-09-20, so sop/review-before-effective stays, with a new message but the same identity);
# introduces sop/effective-too-late (SOP-RAT-001 in effect only after site S01 starts rating).
AMENDMENT = [("    review_due: 2026-06-30\n", "    review_due: 2026-09-15\n"),
             ("    effective: 2026-08-15\n", "    effective: 2026-10-01\n")]


def edited(*edits: tuple[str, str]) -> str:
    text = DEMO_TEXT
    for old, new in edits:
        assert text.count(old) == 1, old
        text = text.replace(old, new)
    return text


def write(tmp_path: Path, name: str, text: str) -> Path:
    return write_demo_plan(tmp_path / name, text)


def compare(tmp_path: Path, new_text: str, old_text: str = DEMO_TEXT):
    old, new = write(tmp_path, "old.yaml", old_text), write(tmp_path, "new.yaml", new_text)
    sources = read_source(str(old)), read_source(str(new))
    results = [check_source(source) for source in sources]
    return compare_plans(*sources, *results), sources


def line_of(text: str, fragment: str) -> int:
    return text[: text.index(fragment)].count("\n") + 1


def test_changed_interval_is_one_sentence_with_pointer_and_both_lines(tmp_path):
    # A comment above the pool shifts the new file's lines by two.
    new_text = edited(INTERVAL, ("rater_pools:\n", "# amended\n# again\nrater_pools:\n"))
    comparison, _ = compare(tmp_path, new_text)
    assert len(comparison.changes) == 1
    change = comparison.changes[0]
    assert change.kind == "changed" and change.old_value == 52 and change.new_value == 30
    assert change.sentence == "monitoring interval of rater pool SITE-DERM: 52 → 30 weeks"
    assert change.pointer == "/rater_pools/0/monitoring/interval_weeks"
    assert change.old_line == line_of(DEMO_TEXT, INTERVAL[0]) and change.new_line == line_of(new_text, INTERVAL[1])
    assert change.new_line == change.old_line + 2


def test_added_and_removed_sop(tmp_path):
    start, end = DEMO_TEXT.index("  - id: SOP-MON-003\n"), DEMO_TEXT.index("\ndeviations:")
    monitoring_sop = DEMO_TEXT[start:end]
    added = monitoring_sop.replace("SOP-MON-003", "SOP-MON-009").replace("Rater monitoring and recalibration",
                                                                         "Central rater surveillance")
    new_text = DEMO_TEXT[:start] + added + DEMO_TEXT[end:]
    comparison, (old, new) = compare(tmp_path, new_text)
    kinds = sorted((c.kind, c.sentence) for c in comparison.changes if c.pointer.startswith("/sops"))
    assert kinds == [("added", "added SOP SOP-MON-009 (Central rater surveillance)"),
                     ("removed", "removed SOP SOP-MON-003 (Rater monitoring and recalibration)")]
    removed = next(c for c in comparison.changes if c.kind == "removed")
    assert removed.old_pointer == "/sops/2" and removed.new_pointer is None and removed.old_line == line_of(DEMO_TEXT, "  - id: SOP-MON-003")
    assert removed.new_line is None


def test_reordered_visits_and_pools_are_no_change(tmp_path):
    pools = DEMO_TEXT.index("rater_pools:\n") + len("rater_pools:\n")
    second = DEMO_TEXT.index("  - id: ", DEMO_TEXT.index("  - id: SITE-DERM") + 1)
    end = DEMO_TEXT.index("\nroster:") if "\nroster:" in DEMO_TEXT else None
    assert end is not None and second < end
    swapped = DEMO_TEXT[:pools] + DEMO_TEXT[second:end] + "\n" + DEMO_TEXT[pools:second].rstrip("\n") + DEMO_TEXT[end:]
    new_text = swapped.replace(*VISITS)
    assert new_text != DEMO_TEXT
    comparison, _ = compare(tmp_path, new_text)
    assert comparison.changes == ()
    # Every finding keeps its identity although its pointer's list positions moved.
    assert comparison.counts()["introduced"] == comparison.counts()["resolved"] == 0
    assert comparison.patch  # the positional patch still records the moves


def test_amendment_resolves_one_finding_and_introduces_another(tmp_path):
    comparison, _ = compare(tmp_path, edited(*AMENDMENT))
    introduced = [(s.finding.rule, s.finding.severity.label) for s in comparison.with_status("introduced")]
    resolved = [(s.finding.rule, s.finding.severity.label) for s in comparison.with_status("resolved")]
    assert introduced == [("sop/effective-too-late", "error")]
    assert resolved == [("sop/review-overdue", "warning")]
    assert "SOP-RAT-001" in comparison.with_status("introduced")[0].finding.message
    kept = [s for s in comparison.with_status("unchanged") if s.finding.rule == "sop/review-before-effective"]
    assert len(kept) == 1 and "2026-09-15" in kept[0].finding.message
    sentences = {c.sentence for c in comparison.changes}
    assert sentences == {"review due of SOP SOP-IMG-002: 2026-06-30 → 2026-09-15",
                         "effective of SOP SOP-RAT-001: 2026-08-15 → 2026-10-01"}


@pytest.mark.parametrize("edits", [[INTERVAL], AMENDMENT, [VISITS], [INTERVAL, VISITS] + AMENDMENT])
def test_json_patch_turns_old_into_new(tmp_path, edits):
    comparison, (old, new) = compare(tmp_path, edited(*edits))
    assert jsonpatch.apply_patch(old.data, list(comparison.patch)) == new.data


def test_cli_exit_codes_of_fail_on_new(cli, cli_process, tmp_path):
    old = write(tmp_path, "old.yaml", DEMO_TEXT)
    amended = write(tmp_path, "amended.yaml", edited(*AMENDMENT))
    interval = write(tmp_path, "interval.yaml", edited(INTERVAL))
    # One real process for the exit codes a CI job sees; the rest in process (same exit codes).
    assert cli_process("diff", old, amended).returncode == 0
    assert cli_process("diff", old, amended, "--fail-on-new", "error").returncode == 1
    # The reverse direction introduces only the warning the amendment had resolved.
    assert cli("diff", amended, old, "--fail-on-new", "error").exit_code == 0
    assert cli("diff", amended, old, "--fail-on-new", "warning").exit_code == 1
    # Shortening nothing and lengthening nothing new: 52 -> 30 weeks introduces no finding.
    run = cli("diff", old, interval, "--fail-on-new", "note")
    assert run.exit_code == 0, run.stdout
    assert "monitoring interval of rater pool SITE-DERM: 52 → 30 weeks" in run.stdout


def test_cli_unreadable_input_exits_2_without_traceback(cli_process, tmp_path):
    old = write(tmp_path, "old.yaml", DEMO_TEXT)
    broken = write(tmp_path, "broken.yaml", "format_version: 1\nstudy: [unclosed\n")
    for args in ((old, tmp_path / "missing.yaml"), (broken, old), (old, tmp_path)):
        run = cli_process("diff", *args)
        assert run.returncode == 2 and "Traceback" not in run.stderr
        assert len(run.stderr.strip().splitlines()) == 1, run.stderr
    assert re.match(r"^.*broken\.yaml:3:1: ", cli_process("diff", broken, old).stderr)


def test_json_output(cli, tmp_path):
    old = write(tmp_path, "old.yaml", DEMO_TEXT)
    new = write(tmp_path, "new.yaml", edited(*AMENDMENT))
    result = cli("diff", old, new, "--format", "json")
    report = json.loads(result.output)
    assert report["counts"]["changed"] == 2 and report["counts"]["introduced"] == 1 and report["counts"]["resolved"] == 1
    assert [f["rule"] for f in report["findings"]["introduced"]] == ["sop/effective-too-late"]
    assert {c["pointer"] for c in report["changes"]} == {"/sops/0/effective", "/sops/1/review_due"}
    ops = {(op["op"], op["path"]) for op in report["patch"]}
    assert ops == {("replace", "/sops/0/effective"), ("replace", "/sops/1/review_due")}
    assert "does not replace the trial statistician" in report["caution"]


def test_markdown_and_html_escape_plan_text(cli, tmp_path):
    hostile = "<script>alert(1)</script> | *x*"
    old = write(tmp_path, "old.yaml", DEMO_TEXT)
    new = write(tmp_path, "new.yaml", DEMO_TEXT.replace(
        "    title: Standardised hand photography and central grading\n", f"    title: '{hostile}'\n"))
    markdown = cli("diff", old, new, "--format", "markdown").output
    assert "&lt;script&gt;alert(1)&lt;/script&gt; \\| \\*x\\*" in markdown and "<script>" not in markdown
    html = cli("diff", old, new, "--format", "html").output
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html and "<script" not in html
    assert "default-src 'none'" in html and not re.search(r'\b(src|href)=', html)
    assert "title of SOP SOP-IMG-002: Standardised hand photography and central grading →" in html


def test_sentences_for_a_list_value_a_section_and_a_unit(tmp_path):
    new_text = edited(("    blinded_to: [treatment]\n", "    blinded_to: [treatment, prior-scores]\n"),
                      ("  stated_n_total: 250\n", "  stated_n_total: 320\n"),
                      ("      min_experience_years: 2\n", "      min_experience_years: 1\n"))
    comparison, _ = compare(tmp_path, new_text)
    assert [c.sentence for c in comparison.changes] == [
        "endpoint EP-PRIMARY, blinded to: added prior-scores",
        "qualifications min experience of rater pool SITE-DERM: 2 → 1 year",
        "stated number of participants in the sample size: 250 → 320",
    ]
    assert comparison.changes[0].pointer == "/endpoints/0/blinded_to/1"


def test_old_findings_are_not_resolved_when_the_new_version_does_not_load(tmp_path, cli_process):
    broken = edited(("      interval_weeks: 52\n", "      interval_weeks: fifty-two\n"))
    comparison, _ = compare(tmp_path, broken)
    statuses = {s.status for s in comparison.findings}
    assert comparison.with_status("resolved") == ()
    assert [s.finding.rule for s in comparison.with_status("introduced")] == ["schema/wrong-type"]
    old_count = len(check_source(read_source(str(tmp_path / "old.yaml"))).findings)
    assert len(comparison.with_status("not-rechecked")) == old_count > 20 and statuses == {"introduced", "not-rechecked"}
    run = cli_process("diff", tmp_path / "old.yaml", tmp_path / "new.yaml", "--fail-on-new", "error")
    assert run.returncode == 1 and f"{old_count} not rechecked" in run.stdout


def test_text_output_keeps_line_breaks_on_one_line(cli, tmp_path):
    old = write(tmp_path, "old.yaml", DEMO_TEXT)
    new = write(tmp_path, "new.yaml", DEMO_TEXT.replace(
        "    title: Standardised hand photography and central grading\n", '    title: "evil\\tone\\nnext"\n'))
    output = cli("diff", old, new).output
    line = next(line for line in output.splitlines() if "title of SOP SOP-IMG-002" in line)
    assert line.endswith("→ evil one next")   # tab and line break folded into spaces


def test_an_escape_sequence_in_a_plan_is_refused_before_the_comparison(cli_process, tmp_path):
    # The loader refuses control characters written as escapes ("\x1b[31m"), so none reaches
    # a terminal through the comparison.
    old = write(tmp_path, "old.yaml", DEMO_TEXT)
    new = write(tmp_path, "new.yaml", DEMO_TEXT.replace(
        "    title: Standardised hand photography and central grading\n", '    title: "evil\\x1b[31m"\n'))
    run = cli_process("diff", old, new)
    [line] = run.stderr.splitlines()
    assert run.returncode == 2 and line.startswith(f"{new}:") and "control character U+001B" in line
    assert "\x1b" not in run.stdout + run.stderr
