"""Findings: what a rule found, where, and how serious it is."""

from __future__ import annotations

import enum
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, Mapping

if TYPE_CHECKING:  # for annotations only: the plan layer builds on this module
    from protolint.plan.source import LoadedSource


class Severity(enum.IntEnum):
    """Ordered so that ``severity >= fail_level`` decides the exit code."""

    NOTE = 1
    WARNING = 2
    ERROR = 3

    @property
    def label(self) -> str:
        return self.name.lower()

    @classmethod
    def parse(cls, text: str) -> "Severity":
        try:
            return cls[text.upper()]
        except KeyError:
            raise ValueError(f"severity must be one of error, warning, note; got {text!r}") from None


@dataclass(frozen=True, order=True)
class Location:
    """A place in a plan file: 1-based line and column (columns count Unicode code points)."""

    line: int
    column: int
    end_line: int | None = None
    end_column: int | None = None


def pointer_from_path(path: tuple[str | int, ...]) -> str:
    """RFC 6901 JSON Pointer for a data path such as ``("endpoints", 0, "visits")``."""
    parts = []
    for part in path:
        text = str(part).replace("~", "~0").replace("/", "~1")
        parts.append(text)
    return "".join("/" + p for p in parts)


@dataclass(frozen=True)
class Finding:
    """One finding in one plan file.

    ``facts`` holds the numbers a computed rule worked with (inputs, formula, result), so a
    reviewer can follow the working; it must contain only JSON-serialisable values.
    """

    rule: str
    severity: Severity
    message: str
    file: str
    location: Location
    pointer: str
    facts: Mapping[str, Any] = field(default_factory=dict)
    waived: bool = False
    waiver_reason: str | None = None

    @property
    def family(self) -> str:
        return self.rule.split("/", 1)[0]

    def sort_key(self) -> tuple[str, int, int, str, str]:
        """The key of :data:`FINDING_ORDER`."""
        return (self.file, self.location.line, self.location.column, self.rule, self.message)


FINDING_ORDER = ("file", "line", "column", "rule", "message")
"""The one order findings are reported in, everywhere: by file, then by place in the file
(so a reader walks the plan top to bottom), then by rule id and message for a stable order of
findings at the same place. :class:`PlanResult` keeps its findings in this order."""


def finding_at(source: LoadedSource, path: tuple[str | int, ...], rule: str, severity: Severity, message: str, *,
               at_key: bool = False, facts: Mapping[str, Any] | None = None) -> Finding:
    """The one way a finding is made: located through the source map (the nearest written
    ancestor when ``path`` itself was not written) and given its RFC 6901 JSON Pointer.

    Schema, reference, rule and waiver findings all come from here, so the line, column and
    pointer of a finding never depend on which step found it.
    """
    return Finding(rule=rule, severity=severity, message=message, file=source.file,
                   location=source.source_map.locate(path, at_key=at_key), pointer=pointer_from_path(path),
                   facts=dict(facts) if facts else {})


@dataclass(frozen=True)
class PlanResult:
    """The outcome of checking one plan file."""

    file: str
    sha256: str
    findings: tuple[Finding, ...]
    rules_run: tuple[str, ...]
    """Ids of every rule that was evaluated for this plan (for per-rule reports such as JUnit)."""
    as_of: str | None = None
    rules_not_run: tuple[str, ...] = ()
    """Enabled rules that could not run on this plan (see ``not_run_reason``)."""
    not_run_reason: str | None = None

    def __post_init__(self) -> None:
        # Sorted here, once, whoever builds the result: every report shows FINDING_ORDER.
        object.__setattr__(self, "findings", tuple(sorted(self.findings, key=Finding.sort_key)))


@dataclass(frozen=True)
class CheckResult:
    """Everything ``protolint check`` produced, handed to a reporter."""

    plans: tuple[PlanResult, ...]
    tool_version: str

    def counts(self) -> dict[str, int]:
        counts = {"error": 0, "warning": 0, "note": 0, "waived": 0}
        for plan in self.plans:
            for finding in plan.findings:
                if finding.waived:
                    counts["waived"] += 1
                else:
                    counts[finding.severity.label] += 1
        return counts
