"""Cross-references inside a plan: ids must be unique and every reference must resolve.

Runs on the data whether or not it matches the schema (a plan with a schema problem still
hears about its dangling references), so it looks only at values of the expected kind.
Waiver rule ids are checked by the rule engine, which knows the rules.
"""

from __future__ import annotations

from typing import Any, Iterator

from protolint.findings import Finding, Severity, finding_at
from protolint.plan.source import LoadedSource, Path
from protolint.suggest import did_you_mean

# (list path, what the ids name). A path segment "*" walks every item of a list.
ID_LISTS: tuple[tuple[tuple[str, ...], str], ...] = (
    (("instruments",), "instrument"),
    (("instruments", "*", "evidence"), "evidence record"),
    (("endpoints",), "endpoint"),
    (("schedule", "visits"), "visit"),
    (("rater_pools",), "rater pool"),
    (("roster",), "rater"),
    (("sops",), "SOP"),
    (("study", "sites"), "site"),
    (("study", "arms"), "arm"),
    (("protocol", "amendments"), "amendment"),
)

# (path of the referring value, the id list it refers to)
REFERENCES: tuple[tuple[tuple[str, ...], tuple[str, ...]], ...] = (
    (("endpoints", "*", "instrument"), ("instruments",)),
    (("endpoints", "*", "visits", "*"), ("schedule", "visits")),
    (("endpoints", "*", "rater_pool"), ("rater_pools",)),
    (("rater_pools", "*", "instruments", "*"), ("instruments",)),
    (("rater_pools", "*", "sites", "*"), ("study", "sites")),
    (("roster", "*", "pool"), ("rater_pools",)),
    (("roster", "*", "site"), ("study", "sites")),
    (("roster", "*", "certifications", "*", "instrument"), ("instruments",)),
    (("sample_size", "endpoint"), ("endpoints",)),
    (("sops", "*", "covers", "instruments", "*"), ("instruments",)),
    (("protocol", "amendments", "*", "affects_instruments", "*"), ("instruments",)),
)


def walk(data: Any, pattern: tuple[str, ...], prefix: Path = ()) -> Iterator[tuple[Path, Any]]:
    """Yield (path, value) for every place matching ``pattern`` ('*' = every list item)."""
    if not pattern:
        yield prefix, data
        return
    head, rest = pattern[0], pattern[1:]
    if head == "*":
        if isinstance(data, list):
            for index, item in enumerate(data):
                yield from walk(item, rest, prefix + (index,))
    elif isinstance(data, dict) and head in data:
        yield from walk(data[head], rest, prefix + (head,))


def reference_findings(source: LoadedSource) -> list[Finding]:
    data = source.data
    findings: list[Finding] = []

    def add(rule: str, path: Path, message: str) -> None:
        findings.append(finding_at(source, path, rule, Severity.ERROR, message))

    for pattern, noun in ID_LISTS:
        for list_path, items in walk(data, pattern):
            seen: dict[str, int] = {}
            for index, item in enumerate(items if isinstance(items, list) else []):
                ident = item.get("id") if isinstance(item, dict) else None
                if not isinstance(ident, str):
                    continue
                if ident in seen:
                    add("schema/duplicate-id", list_path + (index, "id"),
                        f"{noun} id {ident!r} is used twice (first at entry {seen[ident] + 1} of the list)")
                else:
                    seen[ident] = index

    for ref_pattern, target in REFERENCES:
        ids = _ids(data, target)
        noun = dict(ID_LISTS)[target]
        for path, value in walk(data, ref_pattern):
            if isinstance(value, str) and value not in ids:
                hint = did_you_mean(value, ids)
                add("schema/unknown-reference", path,
                    f"{value!r} is not the id of any {noun} in the plan{hint}")

    for path, waiver in walk(data, ("waivers", "*")):
        pointer = waiver.get("target") if isinstance(waiver, dict) else None
        if isinstance(pointer, str) and pointer and not _pointer_exists(data, pointer):
            add("schema/unknown-reference", path + ("target",),
                f"waiver target {pointer!r} points at nothing in this plan")
    return findings


def _ids(data: Any, target: tuple[str, ...]) -> set[str]:
    return {item["id"] for _, items in walk(data, target) if isinstance(items, list)
            for item in items if isinstance(item, dict) and isinstance(item.get("id"), str)}



def parse_pointer(pointer: str) -> list[str]:
    if pointer in ("", "/"):
        return []
    return [part.replace("~1", "/").replace("~0", "~") for part in pointer[1:].split("/")]


def _pointer_exists(data: Any, pointer: str) -> bool:
    node = data
    for part in parse_pointer(pointer):
        if isinstance(node, dict) and part in node:
            node = node[part]
        elif isinstance(node, list) and part.isdigit() and int(part) < len(node):
            node = node[int(part)]
        else:
            return False
    return True


