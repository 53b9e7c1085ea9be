"""The branches of the newer rules that one failing case per rule does not reach."""

from __future__ import annotations

import pytest

from tests.rules._cases import BASE, run_text


def _edit(*pairs: tuple[str, str]) -> str:
    text = BASE.read_text(encoding="utf-8")
    for old, new in pairs:
        assert text.count(old) == 1, old
        text = text.replace(old, new)
    return text


def _hits(text: str, rule_id: str):
    return [f for f in run_text(text).findings if f.rule == rule_id]


def test_lead_time_shorter_than_the_pool_requires() -> None:
    text = _edit(("{instrument: SCORE-A, version: \"1.0\", date: 2026-08-10}", "{instrument: SCORE-A, version: \"1.0\", date: 2026-08-28}"))
    (hit,) = _hits(text, "training/no-lead-time")
    assert hit.facts["lead_days"] == 4 and hit.facts["required_days"] == 14
    assert "4 days before their first rating on 2026-09-01" in hit.message


def test_rater_without_first_rating_trained_after_the_site_started() -> None:
    text = _edit(("    first_rating: 2026-09-01\n", ""),
                 ("{instrument: SCORE-A, version: \"1.0\", date: 2026-08-10}", "{instrument: SCORE-A, version: \"1.0\", date: 2026-09-10}"))
    (hit,) = _hits(text, "training/no-lead-time")
    assert hit.facts["site_first_assessment"] == "2026-09-01"


def test_drift_limit_looser_than_the_pass_mark_in_points() -> None:
    text = _edit(('criterion: {coefficient: "ICC(2,1)", minimum: 0.85}', 'criterion: {coefficient: "ICC(2,1)", minimum: 0.85, max_deviation: 3}'))
    (hit,) = _hits(text, "monitoring/drift-limit-too-loose")
    assert "beyond 4 points" in hit.message and "allowed 3" in hit.message


def test_drift_limit_looser_than_the_pass_mark_in_coefficient() -> None:
    text = _edit(("drift_threshold: {max_deviation: 4}", 'drift_threshold: {coefficient: "ICC(2,1)", minimum: 0.70}'))
    (hit,) = _hits(text, "monitoring/drift-limit-too-loose")
    assert hit.facts["drift_minimum"] == 0.70 and hit.facts["pass_minimum"] == 0.85


def test_drift_limit_at_the_share_threshold_passes() -> None:
    # 10 points on a 0-40 range is exactly 25 %: not more than the threshold.
    assert _hits(_edit(("drift_threshold: {max_deviation: 4}", "drift_threshold: {max_deviation: 10}")),
                 "monitoring/drift-limit-too-loose") == []


def test_reversed_interval_bounds() -> None:
    (hit,) = _hits(_edit(("ci: [0.78, 0.90]", "ci: [0.90, 0.78]")), "evidence/value-outside-interval")
    assert "upper bound first" in hit.message


@pytest.mark.parametrize("criterion, fires", [
    ('{coefficient: weighted-kappa-quadratic, minimum: 0.60}', True),
    ('{coefficient: cohen-kappa, minimum: 0.60}', False),  # not on the scale of an ICC: not compared
])
def test_certification_criterion_on_the_icc_scale(criterion: str, fires: bool) -> None:
    text = _edit(('criterion: {coefficient: "ICC(2,1)", minimum: 0.85}', f"criterion: {criterion}"))
    assert bool(_hits(text, "raters/certification-laxer-than-planned")) is fires


def test_sop_without_review_date() -> None:
    (hit,) = _hits(_edit(("    review_due: 2028-08-01\n", "")), "sop/review-cycle-too-long")
    assert "has no review date" in hit.message


def test_placeholder_in_a_list_is_found() -> None:
    text = _edit(("content: [rating conventions, practice ratings]", "content: [rating conventions, TODO]"))
    (hit,) = _hits(text, "documents/placeholder-value")
    assert hit.message.startswith("rater_pools: POOL-A training content is marked unfinished ('TODO')")


@pytest.mark.parametrize("title, unfinished", [
    ("TBD", True), ("tbd later", True), ("  TBA", True), ("ToDo: the title", True), ("FIXME", True), ("XXX", True),
    ("XXXX", True), ("the xxx trial", True), ("??", True), ("  ???  ", True), ("what???", True),
    ("Replace with the title", True), ("REPLACE_WITH title", True), ("   ", True),
    ("a ?? b", False), ("Todos for raters", False), ("taxxx", False), ("Rater training trial", False),
    ("Fixed-dose trial", False), ("Xerosis trial", False), ("Trial? Yes", False), ("replaced with care", False),
])
def test_placeholder_markers_at_the_start_inside_and_absent(title: str, unfinished: bool) -> None:
    # Quoted, so the YAML keeps leading and trailing spaces.
    quoted = '"' + title + '"'
    hits = _hits(_edit(("title: Invented test trial", f"title: {quoted}")), "documents/placeholder-value")
    assert [hit.facts["value"] for hit in hits] == ([title] if unfinished else [])
