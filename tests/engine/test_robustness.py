"""Any plan that passes the schema can be checked: rules never crash on odd but valid values.

Seeded mutations of the demo plan (keys removed, numbers pushed to their edges, booleans
flipped, dates moved) that still load cleanly are run through every rule. A crash here is a
traceback a user would see for input the schema accepted.
"""

from __future__ import annotations

import copy
import random

import pytest
import yaml

from protolint.plan import load_plan
from protolint.plan.source import load_source
from protolint.rules.engine import check_loaded
from tests.plan_tree import leaves, parent_of

EDGE_NUMBERS = (0, 1, -1, 0.0001, 0.5, 0.99, 1.0, 2, 10, 100, 1000)
EDGE_DATES = ("2020-01-01", "2030-12-31", "2026-09-01", "2026-02-28")


def mutate(plan: dict, rng: random.Random) -> dict:
    plan = copy.deepcopy(plan)
    places = list(leaves(plan))
    for _ in range(rng.randint(1, 4)):
        path, value = rng.choice(places)
        try:
            parent = parent_of(plan, path)
            if rng.random() < 0.2:
                if isinstance(parent, dict):
                    parent.pop(path[-1], None)
                elif len(parent) > 1:
                    parent.pop(path[-1])
            elif isinstance(value, bool):
                parent[path[-1]] = not value
            elif isinstance(value, (int, float)):
                parent[path[-1]] = rng.choice(EDGE_NUMBERS + (value * 2, value / 3))
            elif isinstance(value, str) and len(value) == 10 and value[4] == "-":
                parent[path[-1]] = rng.choice(EDGE_DATES)
        except (KeyError, IndexError, TypeError):
            continue  # an earlier mutation removed this place
    return plan


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
