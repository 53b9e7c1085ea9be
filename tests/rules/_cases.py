"""Builds rule case plans from the clean base plan and runs the engine on them."""

from __future__ import annotations

import re
from dataclasses import dataclass
from datetime import date
from pathlib import Path

import yaml

from protolint.findings import PlanResult
from protolint.pipeline import check_text

HERE = Path(__file__).parent
CASES = HERE / "cases"
BASE = HERE / "base_plan.yaml"
EXPECT = re.compile(r"#\s*expect:\s*(?P<rules>[a-z0-9/,\s-]+)$")


@dataclass(frozen=True)
class Case:
    rule: str
    kind: str  # "pass" or "fail"
    file: Path
    text: str
    as_of: date | None

    def expected_lines(self) -> set[int]:
        lines = set()
        for number, line in enumerate(self.text.splitlines(), start=1):
            match = EXPECT.search(line)
            if match and self.rule in {r.strip() for r in match["rules"].split(",")}:
                lines.add(number)
        return lines


def build_case(rule_id: str, file: Path) -> Case:
    """Apply the case's text edits to the base plan. Each `old` must occur exactly once."""
    spec = yaml.safe_load(file.read_text(encoding="utf-8")) or {}
    text = BASE.read_text(encoding="utf-8")
    for number, edit in enumerate(spec.get("edits") or [], start=1):
        old, new = edit["old"], edit["new"]
        count = text.count(old)
        if count != 1:
            raise AssertionError(f"{file}: edit {number}: the text to replace occurs {count} times in the plan:\n{old}")
        text = text.replace(old, new)
    as_of = spec.get("as_of")
    return Case(rule_id, file.stem, file, text, as_of)


def run_text(text: str, name: str = "case.yaml", as_of: date | None = None) -> PlanResult:
    """The check pipeline's result for a case plan, which must load."""
    result = check_text(text, name, as_of=as_of)
    if result.rules_not_run:
        problems = "; ".join(f"{p.location.line}: {p.message}" for p in result.findings if p.rule.startswith("schema/"))
        raise AssertionError(f"{name} does not load: {problems}")
    return result


def case_files() -> list[tuple[str, Path]]:
    found = []
    for file in sorted(CASES.glob("*/*/*.yaml")):
        family, name = file.parent.parent.name, file.parent.name
        found.append((f"{family}/{name}", file))
    return found
