"""Plan trees with id-keyed lists, and the way back to real data paths and pointers.

A list whose entries are all mappings with a unique ``id`` (SOPs, visits, rater pools,
sites, evidence records…) is an unordered collection of named entries; keyed by id, a
structural comparison pairs entries by name instead of by position.
"""

from __future__ import annotations

from typing import Any

Path = tuple[str | int, ...]


class ById(dict):
    """A list of entries re-keyed by their ``id`` (a marker type, otherwise a dict)."""


def keyable(value: Any) -> bool:
    """True for a non-empty list of mappings that each carry a distinct, simple ``id``."""
    if not isinstance(value, list) or not value:
        return False
    ids = []
    for item in value:
        if not isinstance(item, dict) or not isinstance(item.get("id"), (str, int)) or isinstance(item.get("id"), bool):
            return False
        ids.append(item["id"])
    return len(set(ids)) == len(ids)


def keyed(value: Any) -> Any:
    """A copy of ``value`` with every keyable list replaced by a :class:`ById` mapping."""
    if isinstance(value, dict):
        return {key: keyed(item) for key, item in value.items()}
    if keyable(value):
        return ById((item["id"], keyed(item)) for item in value)
    if isinstance(value, list):
        return [keyed(item) for item in value]
    return value


def unkeyed(value: Any) -> Any:
    """The inverse of :func:`keyed`: :class:`ById` mappings back to lists, in their order."""
    if isinstance(value, ById):
        return [unkeyed(item) for item in value.values()]
    if isinstance(value, dict):
        return {key: unkeyed(item) for key, item in value.items()}
    if isinstance(value, list):
        return [unkeyed(item) for item in value]
    return value


def real_path(data: Any, keyed_path: list[Any]) -> Path:
    """The data path in ``data`` of a path into ``keyed(data)`` (ids become list positions)."""
    node, out = data, []
    for step in keyed_path:
        if isinstance(node, list) and keyable(node):
            index = next((i for i, item in enumerate(node) if item["id"] == step), None)
            if index is None:
                out.append(step)
                break
            out.append(index)
            node = node[index]
        elif isinstance(node, list) and isinstance(step, int) and 0 <= step < len(node):
            out.append(step)
            node = node[step]
        elif isinstance(node, dict) and step in node:
            out.append(step)
            node = node[step]
        else:
            out.append(step)
            break
    return tuple(out)


def pointer_parts(pointer: str) -> list[str]:
    """RFC 6901 pointer to its unescaped reference tokens."""
    if not pointer:
        return []
    return [part.replace("~1", "/").replace("~0", "~") for part in pointer.split("/")[1:]]


def stable_pointer(data: Any, pointer: str) -> str:
    """``pointer`` with each position in an id-keyed list replaced by ``[id]``.

    ``/rater_pools/1/monitoring`` becomes ``/rater_pools/[VIDEO-READ]/monitoring``, which
    stays the same when the pools are reordered. Parts that do not resolve are kept as given.
    """
    node, out = data, []
    for part in pointer_parts(pointer):
        if isinstance(node, list) and part.isdigit() and int(part) < len(node):
            item = node[int(part)]
            out.append(f"[{item['id']}]" if keyable(node) else part)
            node = item
        elif isinstance(node, dict) and part in node:
            out.append(part)
            node = node[part]
        else:
            out.append(part)
            node = None
    return "".join("/" + part.replace("~", "~0").replace("/", "~1") for part in out)
