"""Walking and editing a loaded plan's data tree, for tests that mutate plans."""

from __future__ import annotations

import copy
import random
from typing import Any, Iterator


def leaves(node: Any, path: tuple = ()) -> Iterator[tuple[tuple, Any]]:
    """Every scalar of a nested dict/list tree with its path of keys and indexes."""
    if isinstance(node, dict):
        for key, value in node.items():
            yield from leaves(value, path + (key,))
    elif isinstance(node, list):
        for index, value in enumerate(node):
            yield from leaves(value, path + (index,))
    else:
        yield path, node


def parent_of(node: Any, path: tuple) -> Any:
    """The dict or list that holds the place ``path`` names (KeyError/IndexError if it is gone)."""
    for part in path[:-1]:
        node = node[part]
    return node


EDGE_NUMBERS = (0, 1, -1, 0.0001, 0.5, 0.99, 1.0, 2, 10, 100, 1000)
EDGE_DATES = ("2020-01-01", "2030-12-31", "2026-09-01", "2026-02-28")


def mutate(plan: dict, rng: random.Random) -> dict:
    """A copy of ``plan`` with 1-4 seeded edits: a key or item removed, a boolean flipped, a
    number pushed to an edge, a date moved."""
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
