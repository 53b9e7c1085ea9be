"""Walking and editing a loaded plan's data tree, for tests that mutate plans."""

from __future__ import annotations

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
