"""Helpers shared by the formatters: ordering, counting, fingerprints, safe text."""

from __future__ import annotations

import hashlib
import math
import re
from datetime import date, datetime
from typing import TYPE_CHECKING, Any, Iterable, Sequence

from protolint.errors import escape_control
from protolint.errors import one_line as one_line  # re-exported for the formatters
from protolint.wording import plural as counted

if TYPE_CHECKING:
    from protolint.findings import CheckResult, Finding, PlanResult
    from protolint.rules.registry import RuleMeta

FINGERPRINT_KEY = "protolintFinding/v1"

# Numbers in a message change when the plan's numbers change (a recomputed N, a coefficient);
# the finding is still "the same finding", so they are masked before hashing.
_NUMBER = re.compile(r"[-+]?\d+(?:[.,]\d+)*(?:[eE][-+]?\d+)?")
_SPACE = re.compile(r"\s+")

# Characters XML 1.0 cannot carry at all, not even as character references.
_XML_INVALID = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff\ud800-\udfff]")


def sorted_findings(plan: PlanResult) -> tuple[Finding, ...]:
    """The plan's findings in the declared order (``findings.FINDING_ORDER``); the result
    sorted them when it was made, so this only reads them."""
    return plan.findings


def not_run_note(plan: PlanResult, *, with_ids: bool = False) -> str | None:
    """'58 rules were not run because …', naming the families (and with ``with_ids`` every
    rule id), or None when every enabled rule ran on the plan."""
    if not plan.rules_not_run:
        return None
    families: dict[str, int] = {}
    for rule_id in plan.rules_not_run:
        family = rule_id.split("/", 1)[0]
        families[family] = families.get(family, 0) + 1
    count = len(plan.rules_not_run)
    which = ", ".join(f"{family} {n}" for family, n in sorted(families.items()))
    note = (f"{plural(count, 'rule')} {'was' if count == 1 else 'were'} not run because "
            f"{plan.not_run_reason or 'the plan could not be checked'} (by family: {which}); "
            "rules run only on a plan that loads, so fix the problems above and check again")
    if with_ids:
        note += ": " + ", ".join(plan.rules_not_run)
    return note


RUN_NOT_CHECKED = "No plan was checked: an input (a plan or the policy) could not be read."
"""What the machine-read reports of a failed run (exit 2) say about the run as a whole."""


def check_basis(result: CheckResult) -> str:
    """"Checked as of 2026-07-15 under the default policy (no policy file)." for every
    human-readable report: the date and the policy that decided which findings exist."""
    when = result.as_of_in_force
    return f"Checked {'as of ' + when if when else 'as of each plan' + chr(39) + 's own date'} under {result.policy.describe()}."


SHORT_DIGEST = 12
"""Hex digits of an SOP text's SHA-256 the reports people read show (JSON and SARIF give it all)."""


def sop_text_names(plan: PlanResult) -> tuple[str, ...]:
    """("sops/A.md 0f1c1bdcb512…", …): each SOP text the check read with the start of its digest,
    for the reports people read; the digests identify the texts it saw."""
    return tuple(f"{text.path} {text.sha256[:SHORT_DIGEST]}…" for text in plan.sop_texts)


def sop_texts_line(plan: PlanResult) -> str:
    """"SOP texts read (SHA-256): sops/A.md 0f1c1bdcb512…, …", or "" when the plan names none."""
    return f"SOP texts read (SHA-256): {', '.join(sop_text_names(plan))}" if plan.sop_texts else ""


def as_of_basis(result: CheckResult) -> str:
    """Where the as-of date came from, for the machine-read reports: "given" (``--as-of``) or
    "plan_date" (each plan checked as of its own ``plan_date``)."""
    return "given" if result.as_of is not None else "plan_date"


def plan_counts(plan: PlanResult) -> dict[str, int]:
    """Counts of one plan in the shape of :meth:`CheckResult.counts`."""
    counts = {"error": 0, "warning": 0, "note": 0, "waived": 0}
    for finding in plan.findings:
        counts["waived" if finding.waived else finding.severity.label] += 1
    return counts


def plural(count: int, word: str) -> str:
    """``protolint.wording.plural``, except that "waived" does not take an "s"."""
    return f"{count} waived" if word == "waived" else counted(count, word)


def counts_phrase(counts: dict[str, int], *, skip_zero: bool = False) -> str:
    """'1 error, 2 warnings, 0 notes, 1 waived' (optionally without the zeros)."""
    parts = [
        plural(counts[key], key)
        for key in ("error", "warning", "note", "waived")
        if counts[key] or not skip_zero
    ]
    return ", ".join(parts)


def normalised_message(message: str) -> str:
    return _SPACE.sub(" ", _NUMBER.sub("#", message)).strip()


def forward_slashes(path: str) -> str:
    return path.replace("\\", "/")


def finding_digest(finding: Finding) -> str:
    """sha256 of what identifies a finding independently of where its line ended up."""
    material = "\x00".join(
        (finding.rule, forward_slashes(finding.file), finding.pointer, normalised_message(finding.message))
    )
    return hashlib.sha256(material.encode("utf-8")).hexdigest()


def fingerprints(findings: Iterable[Finding]) -> list[str]:
    """One stable fingerprint per finding, in the order given.

    Two findings with the same digest (same rule, file, pointer and masked message) get an
    occurrence counter, in position order, so they stay distinct for consumers that
    de-duplicate on the fingerprint.
    """
    seen: dict[str, int] = {}
    out: list[str] = []
    for finding in findings:
        digest = finding_digest(finding)
        seen[digest] = seen.get(digest, 0) + 1
        out.append(f"{digest}:{seen[digest]}")
    return out


def xml_safe(text: str) -> str:
    """Text XML 1.0 can carry (ElementTree escapes ``<&>"`` itself but not these)."""
    return _XML_INVALID.sub(escape_control, text)


def json_safe(value: Any) -> Any:
    """A copy of ``value`` that strict JSON can encode.

    Facts should already be JSON values, but a report must not crash on a rule's slip: an
    undefined number (NaN, an infinity) becomes ``null``, as in every JSON output of the tool
    (strict JSON has no NaN), dates become ISO text, tuples become lists and anything else
    its ``str``.
    """
    if value is None or isinstance(value, (bool, int, str)):
        return value
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, (date, datetime)):
        return value.isoformat()
    if isinstance(value, dict) or hasattr(value, "items"):
        return {str(key): json_safe(item) for key, item in value.items()}
    if isinstance(value, (list, tuple, set, frozenset)):
        items = sorted(value, key=repr) if isinstance(value, (set, frozenset)) else value
        return [json_safe(item) for item in items]
    return str(value)


def facts_inline(facts: Any) -> str:
    """'icc=0.62, n_subjects=30' for human-readable formats."""
    import json  # cheap, and only needed when there are facts to show

    safe = json_safe(facts)
    if not safe:
        return ""
    return ", ".join(
        f"{key}={json.dumps(value, ensure_ascii=False, sort_keys=True)}" for key, value in safe.items()
    )


def rule_ids_for_plan(plan: PlanResult, rules: Sequence[RuleMeta]) -> list[str]:
    """The rules a per-rule report lists for one plan.

    The plan's own ``rules_run`` when the engine recorded it, else every rule given; plus any
    rule that produced a finding without being in either list (e.g. schema findings), so no
    finding is ever dropped from a report.
    """
    ids = set(plan.rules_run) if plan.rules_run else {meta.id for meta in rules}
    ids.update(finding.rule for finding in plan.findings)
    return sorted(ids)


def location_text(finding: Finding) -> str:
    return f"{finding.file}:{finding.location.line}:{finding.location.column}"
