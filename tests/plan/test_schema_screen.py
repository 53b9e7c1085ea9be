"""The compiled screen never passes a plan that jsonschema's located validation rejects.

`schema_findings` asks jsonschema_rs first and jsonschema only for plans the screen rejects, so
the screen must be sound: whenever it says valid, jsonschema finds no error. These tests hold
the two validators to the same verdict on the demo, every rule case, the starter, seeded
mutations of the demo and hand-picked edge values, and check the written-out date format
against jsonschema's own format checker.
"""

from __future__ import annotations

import copy
import random

import pytest
from jsonschema import Draft202012Validator

from protolint.plan import load_plan
from protolint.plan.schema import PLAN_SCHEMA, is_calendar_date, passes_screen, validator_for
from protolint.plan.source import load_source
from protolint.rules.policy import POLICY_SCHEMA
from tests.plan_tree import mutate, parent_of
from tests.rules._cases import BASE, build_case, case_files


def located_valid(data, schema_name: str = PLAN_SCHEMA) -> bool:
    return not any(True for _ in validator_for(schema_name).iter_errors(data))


def data_of(path):
    return load_source(path.read_bytes(), path.name).data


@pytest.mark.parametrize("text", [
    "2026-07-15", "2024-02-29", "2023-02-29", "2026-02-30", "2026-13-01", "2026-00-10", "0000-01-01",
    "0001-01-01", "9999-12-31", "2026-7-15", "20260715", "2026-W29-3", "2026-196", "2026-07-15T00:00",
    "2026-07-15 ", " 2026-07-15", "2026-07-15\n", "\uff12\uff10\uff12\uff16-07-15", "2026/07/15", "", "today",
])
def test_date_format_is_jsonschemas(text):
    # jsonschema's format checker is the reference for `format: date` (jsonschema._format.is_date).
    assert is_calendar_date(text) is Draft202012Validator.FORMAT_CHECKER.conforms(text, "date")


def test_the_demo_the_starter_and_every_rule_case_get_the_same_verdict_from_both(demo_plan, starter_text):
    texts = {"demo": demo_plan.read_text(encoding="utf-8"), "starter": starter_text,
             "base": BASE.read_text(encoding="utf-8")}
    texts.update({str(file): build_case(rule_id, file).text for rule_id, file in case_files()})
    for name, text in texts.items():
        data = load_source(text.encode("utf-8"), "plan.yaml").data
        assert passes_screen(data) is located_valid(data), name
    assert len(texts) > 100


@pytest.mark.parametrize("seed", range(3))
def test_seeded_mutations_get_the_same_verdict_from_both(demo_plan, seed):
    base = data_of(demo_plan)
    rng = random.Random(seed)
    verdicts = []
    for _ in range(150):
        data = mutate(base, rng)
        verdict = located_valid(data)
        assert passes_screen(data) is verdict
        verdicts.append(verdict)
    assert 0 < sum(verdicts) < len(verdicts)


@pytest.mark.parametrize("place, value", [
    (("plan_date",), "0000-01-01"),               # a date Python cannot represent
    (("plan_date",), "2026-02-30"),
    (("format_version",), 1.0),                   # JSON Schema counts 1.0 as the integer 1
    (("format_version",), True),                  # a boolean is never a number
    (("format_version",), 10 ** 30),              # beyond 64 bits: the screen cannot take it
    (("study", "enrolment_weeks"), -(10 ** 25)),
    (("study", "sites", 0, "country"), "GB\n"),  # Python's `$` matches before a final line break
    (("study", "sites", 0, "country"), "gb"),
    (("study", "title"), ""),
    (("instruments", 0, "evidence", 0, "value"), 1.5),
    (("endpoints", 0, "blinded_to"), ["treatment", "treatment"]),
    (("waivers",), []),
])
def test_edge_values_get_the_same_verdict_from_both(demo_plan, place, value):
    # The same verdict, not only "valid by the screen implies valid": a screen that refused
    # everything would pass that for the ten invalid values here (1.0 and [] are valid).
    data = copy.deepcopy(data_of(demo_plan))
    parent_of(data, place)[place[-1]] = value
    assert passes_screen(data) is located_valid(data)


def test_a_plan_the_screen_cannot_take_still_gets_its_located_finding(demo_plan):
    # The loader refuses a number this large in a file; data made in code can still hold one.
    from dataclasses import replace

    # Named as the demo itself: it names its SOP texts relative to its folder.
    source = load_source(demo_plan.read_bytes(), str(demo_plan))
    data = dict(source.data, format_version=100000000000000000000000)
    loaded = load_plan(replace(source, data=data))
    assert [(f.rule, f.location.line) for f in loaded.problems] == [("schema/value-not-allowed", 7)]


def test_policy_files_are_screened_too():
    assert passes_screen({"rules": {}}, POLICY_SCHEMA) is located_valid({"rules": {}}, POLICY_SCHEMA)
    assert passes_screen({"unknown": 1}, POLICY_SCHEMA) is located_valid({"unknown": 1}, POLICY_SCHEMA) is False
