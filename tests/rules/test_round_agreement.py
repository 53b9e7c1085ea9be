"""The monitoring rules count the rounds the rendered checklist prints, on every plan we have.

For every rule case plan and the demo, the checklist is rendered (Markdown, through the public
``render`` API) and its round forms are counted per pool and site. Then:

* ``monitoring/no-rounds-in-rating-period`` fires for a pool exactly when some site's table
  holds no regular round (only the close-out form), and its ``rounds`` fact equals the rounds
  printed for that pool at the sites it names;
* ``monitoring/interval-exceeds-drift-window`` reports as ``rounds`` the fewest regular rounds
  of any site's table for that pool.

Both sides take their rounds from ``protolint.plan.monitoring``; the test guards against either
side growing its own arithmetic again.
"""

from __future__ import annotations

import re
from collections import defaultdict
from pathlib import Path

import pytest

from protolint.plan import load_plan
from protolint.plan.source import load_source
from protolint.render import render
from protolint.rules.registry import all_rules
from tests.rules._cases import build_case, case_files, run_text

RULE_IDS = [r.meta.id for r in all_rules()]
DEMO = Path(__file__).resolve().parents[2] / "demo_protocol" / "plan.yaml"

_SITE = re.compile(r"^## .*?(?: \(site (?P<id>[^(),]+)(?:, country [^()]+)?\))?$")
_POOL = re.compile(r"^### (?P<label>.+) — every (?:week|\d+ weeks)$")
_ROUND = re.compile(r"^#### Round (?P<number>\d+)(?P<close> \(close-out\))?: due \d{4}-\d\d-\d\d,")


def _plans() -> list[tuple[str, str]]:
    plans = [(f"{rule_id}:{file.stem}", build_case(rule_id, file).text) for rule_id, file in case_files()]
    plans.append(("demo", DEMO.read_text(encoding="utf-8")))
    return plans


PLANS = _plans()


def _file(name: str) -> str:
    # The demo is checked under its own path: it names its SOP texts relative to its folder.
    return str(DEMO) if name == "demo" else name


def checklist_rows(text: str, name: str = "plan.yaml") -> dict[tuple[str, str], list[bool]]:
    """(pool label, site id) -> one entry per printed round form, True for a close-out round."""
    loaded = load_plan(load_source(text.encode("utf-8"), _file(name)))
    markdown = render("checklist", "markdown", loaded)
    rows: dict[tuple[str, str], list[bool]] = defaultdict(list)
    site = pool = ""
    for line in markdown.splitlines():
        if (match := _SITE.match(line)) is not None:
            site = match["id"] or "central"
        elif (match := _POOL.match(line)) is not None:
            pool = match["label"]
        elif (match := _ROUND.match(line)) is not None:
            rows[(pool, site)].append(bool(match["close"]))
    return rows


@pytest.mark.parametrize("name,text", PLANS, ids=[name for name, _ in PLANS])
def test_rules_count_the_checklist_rounds(name: str, text: str) -> None:
    result = run_text(text, _file(name))
    plan = load_plan(load_source(text.encode("utf-8"), _file(name))).plan
    assert plan is not None
    rows = checklist_rows(text, name)
    label = {pool.id: pool.label for pool in plan.rater_pools}

    no_rounds = {f.facts["pool"]: f for f in result.findings if f.rule == "monitoring/no-rounds-in-rating-period"}
    for pool in plan.people_pools():
        sites = {site: printed for (pool_label, site), printed in rows.items() if pool_label == pool.label}
        only_close_out = sorted(site for site, printed in sites.items() if not any(not close for close in printed))
        if pool.id in no_rounds:
            facts = no_rounds[pool.id].facts
            assert sorted(facts["sites"]) == only_close_out
            assert facts["rounds"] == sum(len(sites[site]) for site in only_close_out)
        else:
            assert only_close_out == [], f"{pool.id}: the checklist has only close-out rounds at {only_close_out}"

    for finding in result.findings:
        if finding.rule == "monitoring/interval-exceeds-drift-window":
            pool_label = label[finding.facts["pool"]]
            regular = [sum(1 for close in printed if not close) for (p, _), printed in rows.items() if p == pool_label]
            assert finding.facts["rounds"] == min(regular)


def test_the_agreement_is_tested_on_a_failing_plan() -> None:
    # The comparison above is only meaningful if some plan makes the rule fire.
    fired = [name for name, text in PLANS
             if any(f.rule == "monitoring/no-rounds-in-rating-period" for f in run_text(text, _file(name)).findings)]
    assert "monitoring/no-rounds-in-rating-period:fail" in fired
