"""Cross-references inside a plan: ids must be unique and every reference must resolve.

Runs on plan data that already matches the schema, so the shapes are known.
"""

from __future__ import annotations

import difflib
from typing import Any, Iterable, Iterator

from protolint.findings import Finding, Severity, pointer_from_path
from protolint.plan.schema import locate
from protolint.plan.source import LoadedSource, Path

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


def reference_findings(source: LoadedSource, known_rule_ids: Iterable[str]) -> list[Finding]:
    data = source.data
    findings: list[Finding] = []

    def add(rule: str, path: Path, message: str) -> None:
        findings.append(Finding(rule=rule, severity=Severity.ERROR, message=message, file=source.file,
                                location=locate(source.source_map, path), pointer=pointer_from_path(path)))

    for pattern, noun in ID_LISTS:
        for list_path, items in walk(data, pattern):
            seen: dict[str, int] = {}
            for index, item in enumerate(items or []):
                ident = item.get("id") if isinstance(item, dict) else None
                if ident is None:
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
                hint = _suggest(value, ids)
                add("schema/unknown-reference", path,
                    f"{value!r} is not the id of any {noun} in the plan{hint}")

    rule_ids = set(known_rule_ids)
    for path, waiver in walk(data, ("waivers", "*")):
        rule = waiver.get("rule")
        if rule not in rule_ids:
            add("schema/unknown-reference", path + ("rule",),
                f"waiver names rule {rule!r}, which does not exist{_suggest(rule, sorted(rule_ids))}")
        target = waiver.get("target")
        if target and not _pointer_exists(data, target):
            add("schema/unknown-reference", path + ("target",),
                f"waiver target {target!r} points at nothing in this plan")
    return findings


def _ids(data: Any, target: tuple[str, ...]) -> set[str]:
    return {item["id"] for _, items in walk(data, target) for item in (items or []) if isinstance(item, dict) and "id" in item}


def _suggest(value: str, options: Iterable[str]) -> str:
    close = difflib.get_close_matches(value, list(options), n=1, cutoff=0.6)
    return f" (did you mean {close[0]!r}?)" if close else ""


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


