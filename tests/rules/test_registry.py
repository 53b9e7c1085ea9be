"""Every rule carries what `protolint rules ID` and the reference promise: a summary, a
Markdown body with a passing and a failing example, a source, documented thresholds, and a
case folder with both cases."""

from __future__ import annotations

import re

import pytest

from protolint.rules.registry import RULE_ID, all_rules
from tests.rules._cases import CASES

RULES = [r for r in all_rules() if r.check is not None]
FAMILIES = {"evidence", "raters", "training", "monitoring", "blinding", "schedule", "power", "sop", "documents"}
# Released ids that must never disappear (renaming is not supported).
RELEASED = {
    "sop/instrument-not-covered", "sop/effective-too-late", "sop/review-overdue", "raters/no-certification-criterion",
    "blinding/rater-knows-treatment", "blinding/prior-scores-visible", "monitoring/none-planned",
    "monitoring/interval-beyond-participation", "documents/no-protocol-version",
}
# A source names an author and a year, a standard with its section, or says "common practice".
SOURCE = re.compile(r"(\b(19|20)\d\d\b)|common practice|ICH E\d|21 CFR|ISO \d", re.IGNORECASE)


def test_catalogue_size_and_families() -> None:
    ids = {r.meta.id for r in RULES}
    assert len(ids) >= 45
    assert {r.meta.family for r in RULES} == FAMILIES
    assert RELEASED <= ids


@pytest.mark.parametrize("registered", RULES, ids=[r.meta.id for r in RULES])
def test_rule_metadata(registered) -> None:
    meta = registered.meta
    assert RULE_ID.match(meta.id)
    assert meta.summary.endswith("."), "the summary is one sentence"
    assert len(meta.documentation.split("\n\n")) >= 3, "rationale, then the examples"
    assert "**Passes**" in meta.documentation and "**Fails**" in meta.documentation
    assert meta.documentation.index("**Passes**") < meta.documentation.index("**Fails**")
    assert SOURCE.search(meta.source), f"source {meta.source!r} names no year, standard or 'common practice'"
    for threshold in meta.thresholds:
        assert threshold.description.strip()
        assert threshold.minimum is not None and threshold.maximum is not None
        assert threshold.minimum <= threshold.default <= threshold.maximum
        # The documentation or the source explains every threshold by name or by its default.
        assert f"`{threshold.name}`" in meta.documentation or str(threshold.default) in meta.documentation, \
            f"threshold {threshold.name} is not mentioned in the documentation"


@pytest.mark.parametrize("registered", RULES, ids=[r.meta.id for r in RULES])
def test_rule_has_pass_and_fail_case(registered) -> None:
    family, name = registered.meta.id.split("/")
    folder = CASES / family / name
    assert (folder / "pass.yaml").is_file() and (folder / "fail.yaml").is_file()


# Rules that compute a number (not only compare dates) must show their working.
NUMERIC = {
    "evidence/average-icc-for-single-rating", "evidence/study-too-small", "evidence/error-exceeds-threshold",
    "training/certification-too-small", "power/unadjusted-for-reliability", "power/fewer-raters-than-needed",
    "monitoring/no-rounds-in-rating-period",
}


def test_numeric_rules_show_their_working() -> None:
    """On its failing case, each numeric rule puts the formula in its facts; every finding that
    carries a formula says it is a planning aid (monitoring's round count is plain arithmetic)."""
    from protolint.rules._working import PLANNING_AID
    from tests.rules._cases import build_case, case_files, run_text

    with_formula: set[str] = set()
    for rule_id, file in case_files():
        if file.stem != "fail":
            continue
        case = build_case(rule_id, file)
        for finding in run_text(case.text, str(file), case.as_of).findings:
            if "formula" in finding.facts:
                with_formula.add(finding.rule)
                if finding.rule != "monitoring/no-rounds-in-rating-period":
                    assert PLANNING_AID in finding.message, finding.rule
    assert NUMERIC <= with_formula
    for rule_id in NUMERIC:
        assert next(r for r in RULES if r.meta.id == rule_id).meta.computed


# "Author (YEAR). Title" as written in protolint/rules/sources.py, or a named standard.
FULL_CITATION = re.compile(r"\(\d{4}\)\. \S|ICH E\d|ISO 9001|Code of Federal Regulations")


@pytest.mark.parametrize("registered", RULES, ids=[r.meta.id for r in RULES])
def test_rule_source_is_written_out_or_common_practice(registered) -> None:
    source = registered.meta.source
    assert "memory" not in source.lower()
    from protolint.rules.sources import split_sources

    for part in split_sources(source):
        assert FULL_CITATION.search(part) or "common practice" in part, \
            f"{registered.meta.id}: {part!r} is neither a full citation nor common practice"
