"""Plan loading: bytes -> located tree -> schema and reference findings -> typed plan."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path as FilePath
from typing import Iterable

from protolint.errors import LocatedError, ProtolintError
from protolint.findings import Finding
from protolint.plan.model import Plan, build_plan
from protolint.plan.references import reference_findings
from protolint.plan.schema import schema_findings
from protolint.plan.source import LoadedSource, load_source

__all__ = ["LoadedPlan", "Plan", "load_plan", "read_plan_file", "read_source"]


@dataclass(frozen=True)
class LoadedPlan:
    source: LoadedSource
    problems: tuple[Finding, ...]
    """Schema and reference findings; when there are any, ``plan`` is None."""
    plan: Plan | None


def read_source(file: str) -> LoadedSource:
    """Read a plan file from disk (or ``-`` for standard input) into a located tree."""
    try:
        if file == "-":
            import sys

            raw = sys.stdin.buffer.read()
        else:
            raw = FilePath(file).read_bytes()
    except FileNotFoundError:
        raise ProtolintError(f"{file}: no such file") from None
    except IsADirectoryError:
        raise ProtolintError(f"{file}: is a folder, not a plan file") from None
    except OSError as error:
        raise ProtolintError(f"{file}: cannot read: {error.strerror}") from None
    return load_source(raw, file)


def load_plan(source: LoadedSource, known_rule_ids: Iterable[str]) -> LoadedPlan:
    problems = schema_findings(source)
    if not problems:
        problems = reference_findings(source, known_rule_ids)
    if problems:
        return LoadedPlan(source, tuple(problems), None)
    return LoadedPlan(source, (), build_plan(source.data))


def read_plan_file(file: str, known_rule_ids: Iterable[str] = ()) -> LoadedPlan:
    """Convenience for documents and tests: read, validate and build; raise on any problem."""
    loaded = load_plan(read_source(file), known_rule_ids or _all_rule_ids())
    if loaded.problems:
        first = loaded.problems[0]
        raise LocatedError(file, first.location.line, first.location.column, first.message)
    return loaded


def _all_rule_ids() -> list[str]:
    from protolint.rules.registry import all_rules

    return [rule.meta.id for rule in all_rules()]
