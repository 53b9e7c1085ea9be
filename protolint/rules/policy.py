"""The policy file: a sponsor's or a trial's adjustments to the rules.

A policy can switch rules off, change their severity and change their thresholds. It is
YAML, read with the same safe loader as plans and checked against its own schema; any
problem in it is an input error (exit 2) located at the offending line.

The ``schema/*`` checks are not the policy's to change: a plan the schema rejects cannot be
checked at all (no rule runs on it), so switching a schema check off, or lowering it to a
warning, would let an unchecked plan pass with "no findings". A policy that tries is refused
at the offending key; :class:`Policy` also ignores such settings when built in code.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, field
from typing import Any, Mapping

from protolint.errors import LocatedError
from protolint.findings import PolicyRecord, Severity
from protolint.plan.schema import schema_findings
from protolint.plan.source import load_source, read_limited
from protolint.rules.registry import RuleMeta

POLICY_SCHEMA = "policy.schema.json"
FIXED_FAMILIES = ("schema/",)
"""Rule families whose checks a policy can neither switch off nor change in severity."""


def is_fixed(rule_id: str) -> bool:
    return rule_id.startswith(FIXED_FAMILIES)


@dataclass(frozen=True)
class Policy:
    disabled: frozenset[str] = frozenset()
    severities: Mapping[str, Severity] = field(default_factory=dict)
    thresholds: Mapping[str, Mapping[str, float]] = field(default_factory=dict)
    file: str | None = None
    """The policy file as given (None: the built-in default or a policy made in code)."""
    sha256: str | None = None
    """SHA-256 of the policy file's bytes."""

    def enabled(self, rule_id: str) -> bool:
        return is_fixed(rule_id) or rule_id not in self.disabled

    def severity(self, meta: RuleMeta) -> Severity:
        return meta.severity if is_fixed(meta.id) else self.severities.get(meta.id, meta.severity)

    def thresholds_for(self, meta: RuleMeta) -> dict[str, float]:
        values = {threshold.name: threshold.default for threshold in meta.thresholds}
        values.update(self.thresholds.get(meta.id, {}))
        return values


    def record(self, rules: Mapping[str, RuleMeta]) -> PolicyRecord:
        """What this policy changed, against the rules' own defaults in ``rules`` (by id)."""
        changed: dict[str, dict[str, Any]] = {}
        for rule_id in sorted(set(self.severities) | set(self.thresholds)):
            meta = rules.get(rule_id)
            settings: dict[str, Any] = {}
            if rule_id in self.severities:
                settings["severity"] = {"from": meta.severity.label if meta else None,
                                        "to": self.severities[rule_id].label}
            if rule_id in self.thresholds:
                defaults = {t.name: t.default for t in meta.thresholds} if meta else {}
                settings["thresholds"] = {name: {"from": defaults.get(name), "to": value}
                                          for name, value in sorted(self.thresholds[rule_id].items())}
            changed[rule_id] = settings
        return PolicyRecord(self.file, self.sha256, tuple(sorted(self.disabled)), changed)


DEFAULT_POLICY = Policy()


def read_policy(file: str, rules: Mapping[str, RuleMeta]) -> Policy:
    """Read and check a policy file against the registered rules."""
    raw = read_limited(file, "policy")
    source = load_source(raw, file)
    problems = schema_findings(source, POLICY_SCHEMA)
    if problems:
        first = min(problems, key=lambda finding: finding.sort_key())
        raise LocatedError(file, first.location.line, first.location.column, f"policy: {first.message}")

    disabled: set[str] = set()
    severities: dict[str, Severity] = {}
    thresholds: dict[str, dict[str, float]] = {}
    for rule_id, settings in (source.data.get("rules") or {}).items():
        where = source.source_map.locate(("rules", rule_id), at_key=True)
        meta = rules.get(rule_id)
        if meta is None:
            raise LocatedError(file, where.line, where.column, f"policy names rule {rule_id!r}, which does not exist")
        for key in ("enabled", "severity"):
            if is_fixed(rule_id) and key in settings and (key == "severity" or settings[key] is not True):
                spot = source.source_map.locate(("rules", rule_id, key), at_key=True)
                raise LocatedError(file, spot.line, spot.column,
                                   f"policy cannot change {key!r} of {rule_id}: a plan the schema rejects cannot be "
                                   "checked, so schema checks always run and are always errors")
        if settings.get("enabled") is False:
            disabled.add(rule_id)
        if "severity" in settings:
            severities[rule_id] = Severity.parse(settings["severity"])
        for name, value in (settings.get("thresholds") or {}).items():
            spot = source.source_map.locate(("rules", rule_id, "thresholds", name), at_key=True)
            try:
                threshold = meta.threshold(name)
            except KeyError:
                known = ", ".join(t.name for t in meta.thresholds) or "none"
                raise LocatedError(file, spot.line, spot.column,
                                   f"rule {rule_id} has no threshold {name!r} (its thresholds: {known})") from None
            if threshold.minimum is not None and value < threshold.minimum or threshold.maximum is not None and value > threshold.maximum:
                raise LocatedError(file, spot.line, spot.column,
                                   f"threshold {name} of {rule_id} must lie between {threshold.minimum} and {threshold.maximum}, not {value}")
            thresholds.setdefault(rule_id, {})[name] = value
    return Policy(frozenset(disabled), severities, thresholds, file=file, sha256=hashlib.sha256(raw).hexdigest())
