"""Any plan that passes the schema can be checked: rules never crash on odd but valid values.

Seeded mutations of the demo plan (keys removed, numbers pushed to their edges, booleans
flipped, dates moved) that still load cleanly are run through every rule. A crash here is a
traceback a user would see for input the schema accepted.
"""

from __future__ import annotations

import random

import pytest
import yaml

from protolint.plan import load_plan
from protolint.plan.source import load_source
from protolint.rules.engine import check_loaded
from tests.plan_tree import mutate


@pytest.mark.parametrize("seed", range(3))
def test_schema_valid_mutations_never_crash_the_rules(demo_plan, seed):
    base = load_source(demo_plan.read_bytes(), "demo.yaml").data
    rng = random.Random(seed)
    checked = 0
    for _ in range(100):
        text = yaml.safe_dump(mutate(base, rng), sort_keys=False, allow_unicode=True)
        # Named as if beside the demo plan, whose SOP texts it names by relative paths.
        loaded = load_plan(load_source(text.encode("utf-8"), str(demo_plan.parent / "mutated.yaml")))
        if loaded.plan is None:
            continue
        result = check_loaded(loaded)
        assert all(f.location.line >= 1 for f in result.findings)
        checked += 1
    assert checked > 40   # most mutations stay schema-valid, so the test really exercises the rules
