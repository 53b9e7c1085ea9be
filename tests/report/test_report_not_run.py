"""A plan with a schema problem: every format says how many rules did not run, and which.

The rules run only on a plan that loads (a rule that recomputes a number reads several
sections; computed from a plan with parts left out it would be a wrong number shown as a
finding). What the writer must not miss is that the report is therefore incomplete.
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET

import jsonschema
import pytest
import xmlschema

from protolint.pipeline import check_text, result_of, rules_run
from protolint.report import FORMATS, render_report
from protolint.rules.registry import all_rules

from .conftest import SCHEMAS

CHECKING_RULES = sorted(r.meta.id for r in all_rules() if not r.meta.id.startswith("schema/"))


@pytest.fixture(scope="module")
def result(request):
    starter = (request.config.rootpath / "templates" / "starter-plan.yaml").read_text(encoding="utf-8")
    text = starter.replace("  power: 0.8\n", "  power: high\n")
    assert text != starter
    return result_of([check_text(text, "edited.yaml")])


def test_the_result_names_every_rule_that_did_not_run(result):
    (plan,) = result.plans
    assert [f.rule for f in plan.findings] == ["schema/wrong-type"]
    assert list(plan.rules_not_run) == CHECKING_RULES
    assert plan.not_run_reason and "schema" in plan.not_run_reason


@pytest.mark.parametrize("fmt", FORMATS)
def test_every_format_says_how_many_rules_did_not_run(result, fmt):
    report = render_report(fmt, result, rules_run(result))
    count = len(CHECKING_RULES)
    if fmt == "json":
        assert json.loads(report)["plans"][0]["rules_not_run"] == CHECKING_RULES
    elif fmt == "sarif":
        [notification] = json.loads(report)["runs"][0]["invocations"][0]["toolExecutionNotifications"]
        assert notification["message"]["text"].startswith(f"{count} rules were not run because")
        assert notification["properties"]["rulesNotRun"] == CHECKING_RULES
    elif fmt == "junit":
        skipped = [case.get("name") for case in ET.fromstring(report).iter("testcase")
                   if (mark := case.find("skipped")) is not None and mark.get("message", "").startswith("not run:")]
        assert skipped == CHECKING_RULES
    else:
        assert f"{count} rules were not run because the plan has schema or reference problems" in " ".join(report.split())
        # Which: by family everywhere, every id where the format has room for it.
        assert "(by family: " in report
        if fmt in ("markdown", "html"):
            assert all(rule_id in report for rule_id in CHECKING_RULES)


def test_machine_formats_stay_valid(result):
    sarif = json.loads(render_report("sarif", result, rules_run(result)))
    schema = json.loads((SCHEMAS / "sarif-schema-2.1.0.json").read_text(encoding="utf-8"))
    jsonschema.Draft4Validator(schema).validate(sarif)
    xmlschema.XMLSchema(str(SCHEMAS / "junit-10.xsd")).validate(render_report("junit", result, rules_run(result)))


def test_a_plan_that_loads_reports_no_rules_not_run(request):
    starter = (request.config.rootpath / "templates" / "starter-plan.yaml").read_text(encoding="utf-8")
    plan = check_text(starter, "starter.yaml")
    assert plan.rules_not_run == () and plan.not_run_reason is None
    assert "not run" not in render_report("text", result_of([plan]), rules_run(result_of([plan])))
