"""Findings: what a rule found, where, and how serious it is."""

from __future__ import annotations

import enum
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, Mapping

if TYPE_CHECKING:  # for annotations only: the plan layer builds on this module
    from protolint.plan.sop_texts import SopText
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
    from protolint.errors import one_line

    # One line always: a value quoted from the plan may hold a line break or an escape sequence.
    return Finding(rule=rule, severity=severity, message=one_line(message), file=source.file,
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
    sop_texts: tuple[SopText, ...] = ()
    """The SOP texts the plan points to that were read (with their SHA-256), so a report
    records which texts this check saw; a text that could not be read is a finding instead."""

    def __post_init__(self) -> None:
        # Sorted here, once, whoever builds the result: every report shows FINDING_ORDER.
        object.__setattr__(self, "findings", tuple(sorted(self.findings, key=Finding.sort_key)))


@dataclass(frozen=True)
class PolicyRecord:
    """Which policy a check ran under, as every report and document records it.

    ``file`` is the policy file as given (None for the built-in default), ``sha256`` the hash of
    its bytes, ``disabled`` the rules it switched off and ``changed`` what it set for each rule:
    ``{"severity": {"from": "error", "to": "warning"}, "thresholds": {name: {"from": 26, "to": 12}}}``.
    A reader years later can then tell a finding that was never looked for from one that was absent.
    """

    file: str | None = None
    sha256: str | None = None
    disabled: tuple[str, ...] = ()
    changed: Mapping[str, Mapping[str, Any]] = field(default_factory=dict)

    @property
    def is_default(self) -> bool:
        return self.file is None and not self.disabled and not self.changed

    @property
    def name(self) -> str:
        """The file as given, "default" for the built-in policy, or a note for a policy made in code."""
        if self.file is not None:
            return self.file
        return "default" if self.is_default else "a policy given in code (no file)"

    def changes(self) -> tuple[str, ...]:
        """Each change in words: "switched off a/b", "a/b severity error → warning", "a/b threshold x 26 → 12"."""
        parts = ["switched off " + ", ".join(self.disabled)] if self.disabled else []
        for rule, settings in self.changed.items():
            severity = settings.get("severity")
            if severity:
                parts.append(f"{rule} severity {severity['from']} → {severity['to']}")
            for name, change in (settings.get("thresholds") or {}).items():
                parts.append(f"{rule} threshold {name} {_number(change['from'])} → {_number(change['to'])}")
        return tuple(parts)

    def describe(self) -> str:
        """The policy in one phrase, for reports and documents: "the default policy (no policy
        file)", or "policy strict.yaml (SHA-256 …): switched off …; … severity error → warning"."""
        if self.is_default:
            return "the default policy (no policy file)"
        head = f"policy {self.name}" + (f" (SHA-256 {self.sha256})" if self.sha256 else "")
        changes = self.changes()
        return head + (": " + "; ".join(changes) if changes else ", which changes no rule")

    def to_json(self) -> dict[str, Any]:
        return {"file": self.name, "sha256": self.sha256, "disabled": list(self.disabled),
                "changed": {rule: dict(settings) for rule, settings in self.changed.items()}}


DEFAULT_POLICY_RECORD = PolicyRecord()


def _number(value: Any) -> str:
    return "none" if value is None else f"{value:g}" if isinstance(value, float) else str(value)


@dataclass(frozen=True)
class CheckResult:
    """Everything ``protolint check`` produced, handed to a reporter."""

    plans: tuple[PlanResult, ...]
    tool_version: str
    policy: PolicyRecord = DEFAULT_POLICY_RECORD
    """The policy every plan of this result was checked under."""
    as_of: str | None = None
    """The date given with ``--as-of`` (ISO), or None when each plan was checked as of its own
    ``plan_date`` (each :class:`PlanResult` records the date it was checked as of)."""

    @property
    def as_of_in_force(self) -> str | None:
        """The one date every plan was checked as of, or None when the plans' dates differ."""
        if self.as_of is not None:
            return self.as_of
        dates = {plan.as_of for plan in self.plans if plan.as_of}
        return dates.pop() if len(dates) == 1 else None

    def counts(self) -> dict[str, int]:
        counts = {"error": 0, "warning": 0, "note": 0, "waived": 0}
        for plan in self.plans:
            for finding in plan.findings:
                if finding.waived:
                    counts["waived"] += 1
                else:
                    counts[finding.severity.label] += 1
        return counts
