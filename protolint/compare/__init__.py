"""Two versions of a plan compared: what changed in the measurement plan, and in its findings.

The structural comparison is deepdiff's. Before it runs, every list whose entries all carry
a unique ``id`` is re-keyed by that id (:mod:`.keyed`), so entries are paired by identity
rather than position: moving an SOP or a visit is no change, while a changed interval in
rater pool VIDEO-READ is one change wherever the pool sits. Each change is mapped back to
the real data path in both versions, which gives its JSON Pointer and its line in each file,
and is described in words (:mod:`.words`). The RFC 6902 patch is jsonpatch's and turns the
old data into the new one.

Findings keep their identity across versions by rule and by the id-based pointer of where
they point (the same idea as SARIF's partial fingerprints, with list positions replaced by
entry ids so that reordering does not turn a finding into a "new" one).

The SOP full texts the plans point to are compared by their SHA-256 (:mod:`.texts`), since
the plans can be identical while a text changed.
"""

from __future__ import annotations

import sys
from collections import Counter
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Iterable

from protolint.compare.keyed import keyed, real_path, stable_pointer
from protolint.compare.texts import TEXT_CHANGE_KINDS, TextChange, text_changes
from protolint.compare.words import describe_change
from protolint.findings import DEFAULT_POLICY_RECORD, Finding, PolicyRecord, Severity, pointer_from_path

if TYPE_CHECKING:
    from protolint.findings import PlanResult
    from protolint.plan.source import LoadedSource

__all__ = ["Change", "FindingStatus", "PlanComparison", "TextChange", "compare_plans"]

CHANGE_KINDS = ("added", "removed", "changed")
FINDING_STATUSES = ("introduced", "resolved", "unchanged", "not-rechecked")


@dataclass(frozen=True)
class Change:
    """One difference between the two versions of a plan."""

    kind: str
    """added, removed or changed."""
    pointer: str
    """JSON Pointer in the new version (for a removed value: in the old version)."""
    old_pointer: str | None
    new_pointer: str | None
    old_line: int | None
    new_line: int | None
    old_value: Any
    new_value: Any
    sentence: str

    def to_json(self) -> dict[str, Any]:
        return {
            "kind": self.kind, "pointer": self.pointer, "old_pointer": self.old_pointer, "new_pointer": self.new_pointer,
            "old_line": self.old_line, "new_line": self.new_line, "old_value": self.old_value,
            "new_value": self.new_value, "description": self.sentence,
        }


@dataclass(frozen=True)
class FindingStatus:
    """A finding of either version and what the amendment did to it."""

    status: str
    """introduced (only in the new version), resolved (only in the old), unchanged (in both),
    or not-rechecked: an old finding of a rule that could not run on the new version, because
    the new version does not pass the schema and reference checks (it is not resolved)."""
    finding: Finding
    """The new version's finding, or the old one's when resolved."""
    identity: str

    def to_json(self) -> dict[str, Any]:
        finding = self.finding
        return {
            "status": self.status, "rule": finding.rule, "severity": finding.severity.label, "waived": finding.waived,
            "message": finding.message, "file": finding.file, "line": finding.location.line,
            "column": finding.location.column, "pointer": finding.pointer, "identity": self.identity,
        }


@dataclass(frozen=True)
class PlanComparison:
    old_file: str
    new_file: str
    old_sha256: str
    new_sha256: str
    changes: tuple[Change, ...]
    findings: tuple[FindingStatus, ...]
    patch: tuple[dict[str, Any], ...]
    """RFC 6902 operations that turn the old plan data into the new."""
    policy: PolicyRecord = DEFAULT_POLICY_RECORD
    """The policy both versions were checked under."""
    old_as_of: str | None = None
    new_as_of: str | None = None
    as_of_given: bool = False
    """True when ``--as-of`` dated both checks; otherwise each version's own plan_date did."""
    sop_texts: tuple[TextChange, ...] = ()
    """SOP full texts added, removed, changed or unreadable, in the new file's order."""
    sop_texts_unchanged: int = 0
    """SOP texts with the same SHA-256 in both versions."""

    def checked_under(self) -> str:
        """"Both versions checked as of … under …", as every check report says it."""
        if self.as_of_given or self.old_as_of == self.new_as_of:
            when = f"as of {self.new_as_of or self.old_as_of or 'no date (neither version loads)'}"
        else:
            when = f"as of each version's own date (old {self.old_as_of or 'not dated'}, new {self.new_as_of or 'not dated'})"
        return f"Both versions checked {when} under {self.policy.describe()}."

    def with_status(self, status: str) -> tuple[FindingStatus, ...]:
        return tuple(item for item in self.findings if item.status == status)

    def introduced_at_or_above(self, level: Severity) -> tuple[FindingStatus, ...]:
        """Introduced findings at or above ``level`` that no waiver covers (these fail a CI run)."""
        return tuple(item for item in self.with_status("introduced")
                     if item.finding.severity >= level and not item.finding.waived)

    def counts(self) -> dict[str, int]:
        counts = {kind: 0 for kind in CHANGE_KINDS + FINDING_STATUSES}
        for change in self.changes:
            counts[change.kind] += 1
        for item in self.findings:
            counts[item.status] += 1
        return counts

    def text_counts(self) -> dict[str, int]:
        """SOP texts by what the amendment did to them (``unchanged``: the same SHA-256 in both)."""
        counts = {kind: 0 for kind in TEXT_CHANGE_KINDS}
        for change in self.sop_texts:
            counts[change.kind] += 1
        return {**counts, "unchanged": self.sop_texts_unchanged}

    def with_text_kind(self, kind: str) -> tuple[TextChange, ...]:
        return tuple(change for change in self.sop_texts if change.kind == kind)

    def to_json(self) -> dict[str, Any]:
        return {
            "old": {"file": self.old_file, "sha256": self.old_sha256, "as_of": self.old_as_of},
            "new": {"file": self.new_file, "sha256": self.new_sha256, "as_of": self.new_as_of},
            "policy": self.policy.to_json(),
            "as_of_basis": "given" if self.as_of_given else "plan_date",
            "counts": self.counts(),
            "changes": [change.to_json() for change in self.changes],
            "findings": {status: [item.to_json() for item in self.with_status(status)] for status in FINDING_STATUSES},
            "patch": list(self.patch),
            "sop_text_counts": self.text_counts(),
            "sop_texts": [change.to_json() for change in self.sop_texts],
        }


def compare_plans(old: LoadedSource, new: LoadedSource, old_result: PlanResult, new_result: PlanResult,
                  policy: PolicyRecord = DEFAULT_POLICY_RECORD, as_of_given: bool = False) -> PlanComparison:
    """Compare two loaded versions of a plan and their check results (made under ``policy``;
    ``as_of_given`` when ``--as-of`` dated both)."""
    import jsonpatch

    texts, texts_unchanged = text_changes(old, new, old_result, new_result)
    return PlanComparison(
        old_file=old.file,
        new_file=new.file,
        old_sha256=old.sha256,
        new_sha256=new.sha256,
        changes=tuple(plan_changes(old, new)),
        findings=tuple(finding_statuses(old.data, new.data, old_result.findings, new_result.findings,
                                        new_rules_ran=rules_ran(new_result))),
        patch=tuple(jsonpatch.make_patch(old.data, new.data).patch),
        policy=policy, old_as_of=old_result.as_of, new_as_of=new_result.as_of, as_of_given=as_of_given,
        sop_texts=texts, sop_texts_unchanged=texts_unchanged,
    )


def plan_changes(old: LoadedSource, new: LoadedSource) -> list[Change]:
    """The differences of the two plan trees, paired by entry id, in the new file's line order."""
    diff = _deepdiff()(keyed(old.data), keyed(new.data), view="tree", ignore_order=True,
                       report_repetition=False, verbose_level=2)
    changes: list[Change] = []
    for report_type, levels in diff.items():
        kind = _KIND.get(report_type)
        if kind is None:
            continue  # repetition or attribute reports do not arise for plan data
        for level in levels:
            changes.append(_change(kind, level, old, new))
    changes.sort(key=lambda c: (c.new_line if c.new_line is not None else (c.old_line or 0), c.kind != "removed", c.pointer))
    return changes


_KIND = {
    "values_changed": "changed", "type_changes": "changed",
    "dictionary_item_added": "added", "iterable_item_added": "added",
    "dictionary_item_removed": "removed", "iterable_item_removed": "removed",
}


def _change(kind: str, level: Any, old: LoadedSource, new: LoadedSource) -> Change:
    old_path = real_path(old.data, level.path(output_format="list")) if kind != "added" else None
    new_path = real_path(new.data, level.path(use_t2=True, output_format="list")) if kind != "removed" else None
    old_value = None if kind == "added" else _plain(level.t1)
    new_value = None if kind == "removed" else _plain(level.t2)
    old_pointer = pointer_from_path(old_path) if old_path is not None else None
    new_pointer = pointer_from_path(new_path) if new_path is not None else None
    # One side always exists: an added value has a new path, any other change an old one.
    data, path = (new.data, new_path) if new_path is not None else (old.data, old_path or ())
    return Change(
        kind=kind,
        pointer=new_pointer if new_pointer is not None else str(old_pointer),
        old_pointer=old_pointer,
        new_pointer=new_pointer,
        old_line=old.source_map.span(old_path).key_line if old_path is not None else None,
        new_line=new.source_map.span(new_path).key_line if new_path is not None else None,
        old_value=old_value,
        new_value=new_value,
        sentence=describe_change(kind, data, path, old_value, new_value),
    )


def _plain(value: Any) -> Any:
    """Values back in the plan's own shape (re-keyed lists become lists again)."""
    from protolint.compare.keyed import unkeyed

    return unkeyed(value)


def rules_ran(result: PlanResult) -> bool:
    """Whether the plan rules ran, i.e. the plan passed the schema and reference checks."""
    return any(not rule_id.startswith("schema/") for rule_id in result.rules_run)


def finding_statuses(old_data: Any, new_data: Any, old_findings: Iterable[Finding],
                     new_findings: Iterable[Finding], *, new_rules_ran: bool = True) -> list[FindingStatus]:
    """Findings split into introduced, resolved and unchanged, matched by rule and stable pointer.

    Two findings of one rule at one place are matched one for one (a multiset), so a second
    instance of an old finding still counts as introduced. When the rules did not run on the
    new version, an old rule finding it lacks is "not-rechecked", never "resolved".
    """
    def identity(finding: Finding, data: Any) -> str:
        return f"{finding.rule} {stable_pointer(data, finding.pointer)}"

    old_list = sorted(old_findings, key=lambda f: f.sort_key())
    new_list = sorted(new_findings, key=lambda f: f.sort_key())
    remaining = Counter(identity(f, old_data) for f in old_list)
    out: list[FindingStatus] = []
    for finding in new_list:
        key = identity(finding, new_data)
        if remaining[key] > 0:
            remaining[key] -= 1
            out.append(FindingStatus("unchanged", finding, key))
        else:
            out.append(FindingStatus("introduced", finding, key))
    matched = Counter(item.identity for item in out if item.status == "unchanged")
    for finding in old_list:
        key = identity(finding, old_data)
        if matched[key] > 0:
            matched[key] -= 1
        elif new_rules_ran or finding.rule.startswith("schema/"):
            out.append(FindingStatus("resolved", finding, key))
        else:
            out.append(FindingStatus("not-rechecked", finding, key))
    order = {status: index for index, status in enumerate(FINDING_STATUSES)}
    return sorted(out, key=lambda item: (order[item.status], -item.finding.severity, item.finding.sort_key()))


def _deepdiff() -> Any:
    """deepdiff's DeepDiff, imported without numpy, pandas or polars.

    deepdiff imports those opportunistically when they are installed (about 0.3 s, and
    ``protolint diff`` belongs with ``check`` to the light commands). Plan data holds only
    YAML scalars, so its numpy and pandas support is never needed: while deepdiff is first
    imported the three names are blocked, then unblocked so that later imports work as usual.
    """
    if "deepdiff" not in sys.modules:
        blocked = [name for name in ("numpy", "pandas", "polars") if name not in sys.modules]
        for name in blocked:
            sys.modules[name] = None  # type: ignore[assignment]  # makes `import name` raise ImportError
        try:
            import deepdiff  # noqa: F401  (the first import, made while the names are blocked)
        finally:
            for name in blocked:
                if sys.modules.get(name) is None:
                    del sys.modules[name]
    from deepdiff import DeepDiff

    return DeepDiff
