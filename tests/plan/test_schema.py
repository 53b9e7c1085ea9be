"""Schema violations become located findings a protocol writer understands."""

from __future__ import annotations

import json

import pytest

from protolint.plan import load_plan
from protolint.plan.source import load_source
from protolint.resources import load_schema


def problems(text: str):
    loaded = load_plan(load_source(text.encode(), "plan.yaml"))
    return loaded.problems, loaded


def line_of(text: str, needle: str) -> int:
    return next(number for number, line in enumerate(text.splitlines(), 1) if needle in line)


def test_plan_schema_is_valid_draft_2020_12_with_a_description_on_every_property():
    from jsonschema import Draft202012Validator

    schema = load_schema("plan.schema.json")
    Draft202012Validator.check_schema(schema)
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"

    missing: list[str] = []

    def visit(node, where):
        if isinstance(node, dict):
            for name, sub in (node.get("properties") or {}).items():
                if "description" not in sub:
                    missing.append(f"{where}/{name}")
            for key, sub in node.items():
                visit(sub, f"{where}/{key}")
        elif isinstance(node, list):
            for index, sub in enumerate(node):
                visit(sub, f"{where}/{index}")

    visit(schema, "")
    assert missing == []


def test_policy_schema_is_valid():
    from jsonschema import Draft202012Validator

    Draft202012Validator.check_schema(load_schema("policy.schema.json"))


def test_starter_plan_is_valid(starter_text):
    found, loaded = problems(starter_text)
    assert found == () and loaded.plan is not None


def test_demo_plan_is_valid(demo_plan):
    loaded = load_plan(load_source(demo_plan.read_bytes(), str(demo_plan)))
    found = loaded.problems
    assert found == ()
    assert loaded.plan.study.sites[0].country == "NO"   # YAML 1.1 would have made this False


def test_unknown_key_is_located_at_the_key_with_a_suggestion(starter_text):
    text = starter_text.replace("    - {id: end, name: End of treatment, day: 85,", "    - {id: end, name: End of treatment, dya: 85,")
    found, _ = problems(text)
    unknown = [f for f in found if f.rule == "schema/unknown-key"]
    assert len(unknown) == 1
    assert unknown[0].location.line == line_of(text, "dya: 85")
    assert "'dya'" in unknown[0].message and "did you mean 'day'" in unknown[0].message
    assert unknown[0].pointer == "/schedule/visits/1/dya"


def test_missing_key_is_located_at_its_parent(starter_text):
    text = starter_text.replace("  first_assessment: 2027-03-01   # first rated assessment of the first participant\n", "")
    found, _ = problems(text)
    missing = [f for f in found if f.rule == "schema/missing-key"]
    assert [m.location.line for m in missing] == [line_of(text, "study:")]
    assert "first_assessment" in missing[0].message


@pytest.mark.parametrize("old, new, rule, words", [
    ("  power: 0.8\n", "  power: high\n", "schema/wrong-type", "should be a number"),
    ("  power: 0.8\n", "  power: 1.5\n", "schema/out-of-range", "at most 0.9999"),
    ("    role: primary\n", "    role: main\n", "schema/value-not-allowed", "expected one of"),
    ("plan_date: 2027-01-15", "plan_date: 2027-02-30", "schema/invalid-date", "not a real calendar date"),
    ("plan_date: 2027-01-15", "plan_date: 15/01/2027", "schema/invalid-date", "YYYY-MM-DD"),
    ("  - id: SCALE-1\n", "  - id: SCALE 1\n", "schema/invalid-form", "not of the expected form"),
    ("format_version: 1", "format_version: 7", "schema/value-not-allowed", "must be 1"),
])
def test_value_errors_are_located_at_the_value(starter_text, old, new, rule, words):
    text = starter_text.replace(old, new, 1)
    assert text != starter_text
    found, loaded = problems(text)
    assert loaded.plan is None
    hits = [f for f in found if f.rule == rule]
    assert hits, [f.message for f in found]
    assert hits[0].location.line == line_of(text, new.strip())
    assert words in hits[0].message
    # Messages speak of the plan, never of the validator's internals.
    assert "jsonschema" not in hits[0].message and "$defs" not in hits[0].message


def test_all_violations_are_reported_sorted_by_line(starter_text):
    text = starter_text.replace("  power: 0.8\n", "  power: high\n").replace("    role: primary\n", "    role: main\n")
    found, _ = problems(text)
    lines = [f.location.line for f in found]
    assert len(found) == 2 and lines == sorted(lines)


def test_dangling_references_are_located(starter_text):
    text = starter_text.replace("    instrument: SCALE-1\n", "    instrument: SCALE-2\n")
    found, _ = problems(text)
    assert [f.rule for f in found] == ["schema/unknown-reference"]
    assert found[0].location.line == line_of(text, "instrument: SCALE-2")
    assert "did you mean 'SCALE-1'" in found[0].message


@pytest.mark.parametrize("old, new", [
    ("    visits: [baseline, end]\n", "    visits: [baseline, finish]\n"),
    ("    rater_pool: RATERS\n", "    rater_pool: READERS\n"),
    ("    covers: {instruments: [SCALE-1]", "    covers: {instruments: [SCALE-9]"),
    ("  endpoint: PRIMARY\n", "  endpoint: PRIMARY-2\n"),
])
def test_every_kind_of_reference_is_resolved(starter_text, old, new):
    text = starter_text.replace(old, new)
    assert text != starter_text
    found, _ = problems(text)
    assert [f.rule for f in found] == ["schema/unknown-reference"]
    assert found[0].location.line == line_of(text, new.strip())


def test_duplicate_ids_are_found(starter_text):
    text = starter_text.replace("    - {id: end, name: End", "    - {id: baseline, name: End")
    found, _ = problems(text)
    assert "schema/duplicate-id" in [f.rule for f in found]


def test_typed_model_is_immutable_and_keeps_paths(starter_text):
    import dataclasses
    from datetime import date

    _, loaded = problems(starter_text)
    plan = loaded.plan
    assert plan.plan_date == date(2027, 1, 15)
    assert plan.endpoints[0].path == ("endpoints", 0)
    assert plan.schedule.visits[1].path == ("schedule", "visits", 1)
    with pytest.raises(dataclasses.FrozenInstanceError):
        plan.plan_date = date(2000, 1, 1)  # type: ignore[misc]


def test_schema_command_prints_the_schema(cli):
    result = cli("schema")
    assert result.exit_code == 0
    assert json.loads(result.stdout)["title"].startswith("protolint measurement plan")
    assert "policy" in json.loads(cli("schema", "--policy").stdout)["title"]


# ---------------------------------------------------------------- hardening

def test_patterns_follow_ecma_262_so_a_trailing_line_break_is_no_id():
    from protolint.plan.schema import ecma_regex

    identifier = ecma_regex("^[A-Za-z0-9][A-Za-z0-9_.-]*$")
    assert identifier.search("S01") and not identifier.search("S01\n")
    assert not ecma_regex(r"^\d+$").search("１２")     # \d is ASCII in ECMA-262 without the u flag
    assert ecma_regex("^[$]+$").search("$$")           # a $ inside a class stays a character
    assert ecma_regex(r"^a\$$").search("a$")            # an escaped $ stays a character


@pytest.mark.parametrize("old, new, words", [
    ("plan_date: 2027-01-15", "plan_date: 9999-12-31", "plan dates lie between 1900-01-01 and 2199-12-31"),
    ("plan_date: 2027-01-15", "plan_date: 1899-12-31", "plan dates lie between"),
    ("  power: 0.8\n", "  power: 1\n", "at most 0.9999"),
    ("  alpha: 0.05\n", "  alpha: 1e-17\n", "at least 1e-06"),
])
def test_plausible_bounds_are_located_schema_findings(starter_text, old, new, words):
    text = starter_text.replace(old, new, 1)
    assert text != starter_text
    found, loaded = problems(text)
    assert loaded.plan is None
    [hit] = [f for f in found if words in f.message]
    assert hit.location.line == line_of(text, new.strip())
    assert hit.rule in ("schema/invalid-date", "schema/out-of-range")


def test_an_impossible_date_is_reported_once(starter_text):
    text = starter_text.replace("plan_date: 2027-01-15", "plan_date: 9999-99-99", 1)
    found, _ = problems(text)
    assert [f.rule for f in found if f.pointer == "/plan_date"] == ["schema/invalid-date"]
