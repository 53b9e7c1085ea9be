"""What every controlled document shares: its document-control block, its date, its plan.

The document's date is SOURCE_DATE_EPOCH when set (reproducible builds), else the plan's date,
never the wall clock, so the same plan always gives the same document.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from datetime import date, datetime, timezone
from pathlib import PurePath

from protolint import CAUTION, __version__
from protolint.plan import LoadedPlan
from protolint.plan.model import Plan

SIGNATURE_NOTE = (
    "Signature and initials boxes in this document are placeholders for handwritten "
    "signatures on paper; they are not electronic signatures and carry no electronic "
    "signature controls."
)

DOCUMENT_TITLES = {"manual": "Rater manual", "checklist": "Rater monitoring checklist", "binder": "SOP binder"}


@dataclass(frozen=True)
class Fact:
    """One labelled line in a facts table (short values only; long text goes below tables)."""

    label: str
    value: str


@dataclass(frozen=True)
class DocumentControl:
    kind: str
    title: str
    study_id: str
    study_title: str
    sponsor: str | None
    protocol: str | None
    plan_file: str
    plan_sha256: str
    plan_date: date
    format_version: int
    tool_version: str
    document_date: date
    date_basis: str
    paper: str
    caution: str = CAUTION
    signature_note: str = SIGNATURE_NOTE

    @property
    def running_title(self) -> str:
        return f"{self.study_id} · {self.title}"


def document_date(plan: Plan, environ: dict[str, str] | os._Environ[str] | None = None) -> tuple[date, str]:
    """The document's date: SOURCE_DATE_EPOCH when set (reproducible builds), else the plan's date.

    Never the wall clock, so the same plan always gives the same document.
    """
    environ = os.environ if environ is None else environ
    raw = environ.get("SOURCE_DATE_EPOCH")
    if raw:
        try:
            stamp = int(raw)
        except ValueError:
            raise ValueError(f"SOURCE_DATE_EPOCH must be a whole number of seconds, got {raw!r}") from None
        return datetime.fromtimestamp(stamp, tz=timezone.utc).date(), "SOURCE_DATE_EPOCH"
    return plan.plan_date, "plan date"


def document_control(loaded: LoadedPlan, kind: str, paper: str) -> DocumentControl:
    plan = valid_plan(loaded)
    day, basis = document_date(plan)
    protocol = f"{plan.protocol.id} version {plan.protocol.version} ({plan.protocol.date.isoformat()})" if plan.protocol else None
    return DocumentControl(
        kind=kind, title=DOCUMENT_TITLES[kind], study_id=plan.study.id, study_title=plan.study.title,
        sponsor=plan.study.sponsor, protocol=protocol, plan_file=PurePath(loaded.source.file).name,
        plan_sha256=loaded.source.sha256, plan_date=plan.plan_date, format_version=plan.format_version,
        tool_version=__version__, document_date=day, date_basis=basis, paper=paper)


def valid_plan(loaded: LoadedPlan) -> Plan:
    """The typed plan of ``loaded``; documents are made only from a plan that loads."""
    if loaded.plan is None:
        raise ValueError("the plan has schema or reference problems; documents are rendered only from a valid plan")
    return loaded.plan
