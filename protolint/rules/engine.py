"""Runs the rules on a loaded plan, applies the policy and the plan's waivers."""

from __future__ import annotations

from datetime import date
from typing import Iterable

from protolint.findings import Finding, PlanResult, pointer_from_path
from protolint.plan import LoadedPlan
from protolint.plan.model import Plan, Waiver
from protolint.plan.schema import locate
from protolint.plan.source import LoadedSource
from protolint.rules.policy import DEFAULT_POLICY, Policy
from protolint.rules.registry import Rule, RuleContext, all_rules


def check_loaded(loaded: LoadedPlan, policy: Policy = DEFAULT_POLICY, as_of: date | None = None,
                 rules: Iterable[Rule] | None = None) -> PlanResult:
    """Check one loaded plan. ``as_of`` defaults to the plan's own date, never the wall clock."""
    rules = tuple(all_rules() if rules is None else rules)
    source = loaded.source
    builtin_ids = tuple(r.meta.id for r in rules if r.check is None and policy.enabled(r.meta.id))
    if loaded.plan is None:
        problems = [f for f in loaded.problems if policy.enabled(f.rule)]
        return PlanResult(file=source.file, sha256=source.sha256, findings=tuple(sorted(problems, key=Finding.sort_key)),
                          rules_run=tuple(i for i in builtin_ids if i.startswith("schema/")),
                          as_of=as_of.isoformat() if as_of else None)

    plan = loaded.plan
    as_of = as_of or plan.plan_date
    findings: list[Finding] = []
    ran: list[str] = list(builtin_ids)
    for registered in rules:
        meta = registered.meta
        if registered.check is None or not policy.enabled(meta.id):
            continue
        ran.append(meta.id)
        context = RuleContext(thresholds=policy.thresholds_for(meta), as_of=as_of)
        severity = policy.severity(meta)
        for hit in registered.check(plan, context):
            findings.append(Finding(
                rule=meta.id,
                severity=hit.severity if hit.severity is not None and meta.id not in policy.severities else severity,
                message=hit.message,
                file=source.file,
                location=locate(source.source_map, hit.path),
                pointer=pointer_from_path(hit.path),
                facts=dict(hit.facts),
            ))
    waivable = {r.meta.id for r in rules if r.meta.waivable}
    findings = apply_waivers(findings, plan, source, as_of, waivable, policy)
    return PlanResult(file=source.file, sha256=source.sha256, findings=tuple(sorted(findings, key=Finding.sort_key)),
                      rules_run=tuple(sorted(ran)), as_of=as_of.isoformat())


def _matches(waiver: Waiver, finding: Finding) -> bool:
    if waiver.rule != finding.rule:
        return False
    target = waiver.target
    return not target or finding.pointer == target or finding.pointer.startswith(target.rstrip("/") + "/")


def apply_waivers(findings: list[Finding], plan: Plan, source: LoadedSource, as_of: date,
                  waivable: set[str], policy: Policy) -> list[Finding]:
    """Mark findings covered by a waiver in force; report expired and unused waivers."""
    from dataclasses import replace

    result: list[Finding] = []
    used: set[int] = set()
    expired = [(w, w.expires) for w in plan.waivers if w.expires is not None and w.expires < as_of]
    in_force = [w for w in plan.waivers if w.expires is None or w.expires >= as_of]
    for finding in findings:
        waiver = next((w for w in in_force if finding.rule in waivable and _matches(w, finding)), None)
        if waiver is None:
            result.append(finding)
            continue
        used.add(id(waiver))
        until = f", until {waiver.expires.isoformat()}" if waiver.expires else ""
        result.append(replace(finding, waived=True,
                              waiver_reason=f"{waiver.reason} (approved by {waiver.approved_by} on {waiver.date.isoformat()}{until})"))

    def waiver_finding(rule: str, waiver: Waiver, message: str, facts: dict) -> Finding | None:
        if not policy.enabled(rule):
            return None
        from protolint.rules.registry import get_rule

        return Finding(rule=rule, severity=policy.severity(get_rule(rule).meta), message=message, file=source.file,
                       location=locate(source.source_map, waiver.path), pointer=pointer_from_path(waiver.path), facts=facts)

    for waiver, expiry in expired:
        extra = waiver_finding("waivers/expired", waiver,
                               f"the waiver for {waiver.rule} expired on {expiry.isoformat()} (checked as of {as_of.isoformat()}); "
                               "what it covered is reported again",
                               {"rule": waiver.rule, "expires": expiry.isoformat(), "as_of": as_of.isoformat()})
        if extra:
            result.append(extra)
    for waiver in in_force:
        if id(waiver) not in used:
            where = f" at {waiver.target}" if waiver.target else ""
            extra = waiver_finding("waivers/unused", waiver,
                                   f"the waiver for {waiver.rule}{where} matches no finding; remove it or correct its target",
                                   {"rule": waiver.rule, "target": waiver.target})
            if extra:
                result.append(extra)
    return result
