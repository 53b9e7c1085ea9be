"""What every controlled document shares: its document-control block, its date, its status, its plan.

The document's date is the ``--as-of`` date when one is given, else SOURCE_DATE_EPOCH when set
(reproducible builds), else the plan's date, never the wall clock, so the same plan always gives
the same document. The plan is checked exactly as ``protolint check`` checks it with the same
``--policy`` and ``--as-of`` (:class:`DocumentCheck`); a plan with open errors after the policy
and the waivers makes every document a draft (:class:`DocumentStatus`).
"""

from __future__ import annotations

import os
from dataclasses import dataclass, replace
from datetime import date, datetime, timezone
from importlib import metadata
from pathlib import PurePath
from typing import TYPE_CHECKING, Mapping

from protolint import CAUTION, __version__
from protolint.findings import Finding, PlanResult, PolicyRecord, Severity
from protolint.plan import LoadedPlan
from protolint.plan.model import Plan
from protolint.wording import plural

if TYPE_CHECKING:
    from protolint.pipeline import PolicyArg

SIGNATURE_NOTE = (
    "Signature and initials boxes in this document are placeholders for handwritten "
    "signatures on paper; they are not electronic signatures and carry no electronic "
    "signature controls."
)

DOCUMENT_TITLES = {"manual": "Rater manual", "checklist": "Rater monitoring checklist", "binder": "SOP binder"}

RENDERING_LIBRARIES = ("weasyprint", "pydyf", "fonttools", "jinja2", "markdown-it-py")
"""The libraries whose versions decide every document's bytes (layout, PDF writing, font
subsets, templates, Markdown); the document-control block names each installed version. The
documents' charts are SVG that protolint draws itself, so no plotting library is among them."""

COMPUTING_LIBRARIES = {
    "binder": ("numpy", "scipy"),
    "drift": ("numpy", "scipy", "matplotlib"),
    "design": ("numpy", "scipy", "matplotlib"),
}
"""Further libraries whose versions decide a document's numbers or charts, by document: the
binder's sample-size appendix solves the exact noncentral-t power with scipy; the drift and
design reports compute with numpy and scipy and draw their charts with matplotlib."""

REPRODUCIBILITY_CLAIM = ("The same plan with the same protolint and library versions gives the same document; "
                         "a change to the plan needs a new document.")


@dataclass(frozen=True)
class Fact:
    """One labelled line in a facts table (short values only; long text goes below tables)."""

    label: str
    value: str


@dataclass(frozen=True)
class OpenError:
    """An error finding that keeps a document a draft, located in the plan file."""

    rule: str
    line: int
    column: int
    message: str

    @property
    def where(self) -> str:
        return f"line {self.line}, column {self.column}"


@dataclass(frozen=True)
class DocumentCheck:
    """The plan's check behind a document: the findings under the policy and as-of date in force."""

    result: PlanResult
    policy: PolicyRecord
    as_of: date
    """The date the rules compared with: ``--as-of``, else the plan's date (as ``check``)."""
    as_of_given: bool

    @property
    def given_as_of(self) -> date | None:
        """The ``--as-of`` date, which also dates the document; None when none was given."""
        return self.as_of if self.as_of_given else None

    @property
    def open_errors(self) -> tuple[Finding, ...]:
        """Error findings neither switched off by the policy nor waived: what makes a draft."""
        return tuple(f for f in self.result.findings if f.severity >= Severity.ERROR and not f.waived)


def document_check(loaded: LoadedPlan, policy: PolicyArg = None, as_of: date | None = None) -> DocumentCheck:
    """Check ``loaded`` through the one check pipeline, as ``check --policy --as-of`` would."""
    from protolint.pipeline import check_plan, policy_record, resolve_policy

    plan = valid_plan(loaded)
    chosen = resolve_policy(policy)
    record = policy_record(chosen)
    if record.file is not None:
        # Documents name their files without the folder they were rendered from, as the plan's.
        record = replace(record, file=PurePath(record.file).name)
    return DocumentCheck(check_plan(loaded, chosen, as_of), record, as_of or plan.plan_date, as_of is not None)


@dataclass(frozen=True)
class DocumentStatus:
    """Whether a document may be used, and how the sponsor's document system knows it."""

    open_errors: tuple[OpenError, ...]
    checked_as_of: date
    number: str | None = None
    version: str | None = None

    @property
    def draft(self) -> bool:
        return bool(self.open_errors)

    @property
    def label(self) -> str:
        return "Draft" if self.draft else "Final"

    @property
    def mark(self) -> str:
        """The words every page of a draft carries (empty for a final document)."""
        if not self.draft:
            return ""
        count = len(self.open_errors)
        return f"Draft — {plural(count, 'open error')} in the plan check — not for use"

    @property
    def summary(self) -> str:
        """The status in one sentence: the cover's status line and the running footer."""
        if self.draft:
            return self.mark
        return f"Final — no open errors in the plan check as of {self.checked_as_of.isoformat()}"

    @property
    def identity(self) -> str:
        """"QA-RM-0042 version 2.0", or "" when the plan gives neither."""
        parts = [self.number or "", f"version {self.version}" if self.version else ""]
        return " ".join(part for part in parts if part)

    @property
    def running_line(self) -> str:
        return " · ".join(part for part in (self.identity, self.summary) if part)


def document_status(plan: Plan, kind: str, check: DocumentCheck) -> DocumentStatus:
    identity = getattr(plan.documents, kind, None) if plan.documents else None
    errors = tuple(OpenError(f.rule, f.location.line, f.location.column, f.message) for f in check.open_errors)
    return DocumentStatus(errors, check.as_of, identity.number if identity else None,
                          identity.version if identity else None)


def library_versions(names: tuple[str, ...] = RENDERING_LIBRARIES) -> tuple[Fact, ...]:
    """The installed version of each library in ``names`` (importlib.metadata), in that order."""
    rows = []
    for name in names:
        try:
            rows.append(Fact(name, metadata.version(name)))
        except metadata.PackageNotFoundError:
            rows.append(Fact(name, "not installed"))
    return tuple(rows)


def document_libraries(kind: str) -> tuple[Fact, ...]:
    """The versions document ``kind`` (a document kind, ``drift`` or ``design``) names in its
    control block: the rendering libraries, and those that computed or drew its content."""
    return library_versions(RENDERING_LIBRARIES + COMPUTING_LIBRARIES.get(kind, ()))


@dataclass(frozen=True)
class IncludedFile:
    """A file besides the plan whose content the document prints (an SOP's text), identified
    in the document-control block by its SHA-256."""

    label: str
    path: str
    sha256: str


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
    status: DocumentStatus
    policy: PolicyRecord
    libraries: tuple[Fact, ...]
    caution: str = CAUTION
    signature_note: str = SIGNATURE_NOTE
    reproducibility: str = REPRODUCIBILITY_CLAIM
    included_files: tuple[IncludedFile, ...] = ()
    """Set by the documents that print other files (the binder's SOP texts)."""

    @property
    def running_title(self) -> str:
        return f"{self.study_id} · {self.title}"

    @property
    def policy_text(self) -> str:
        return self.policy.describe()

    @property
    def checked_as_of(self) -> date:
        return self.status.checked_as_of


def document_date(plan: Plan, environ: dict[str, str] | os._Environ[str] | None = None,
                  as_of: date | None = None) -> tuple[date, str]:
    """The document's date: ``as_of`` when given (``--as-of``), else SOURCE_DATE_EPOCH when set
    (reproducible builds), else the plan's date.

    Never the wall clock, so the same plan always gives the same document.
    """
    if as_of is not None:
        return as_of, "--as-of date"
    epoch = source_date_epoch(environ)
    if epoch is not None:
        return epoch, "SOURCE_DATE_EPOCH"
    return plan.plan_date, "plan date"


_LAST_EPOCH_DAY = date(2199, 12, 31)  # the plan schema's last date: documents stay in the same range


def source_date_epoch(environ: Mapping[str, str] | None = None) -> date | None:
    """The day SOURCE_DATE_EPOCH names (reproducible builds), or None when it is not set.

    The value must be a whole number of seconds since 1970-01-01 UTC (the specification's
    form) naming a day up to 2199-12-31; anything else is an error of the one-line kind, never
    an overflow deep inside the date library.
    """
    from protolint.errors import ProtolintError

    environ = os.environ if environ is None else environ
    raw = environ.get("SOURCE_DATE_EPOCH")
    if not raw:
        return None
    text = raw.strip()
    limit = int(datetime(2199, 12, 31, 23, 59, 59, tzinfo=timezone.utc).timestamp())
    if not (text.isascii() and text.isdigit()) or len(text) > 12 or int(text) > limit:
        raise ProtolintError(f"SOURCE_DATE_EPOCH is {raw[:40]!r}; it must be a whole number of seconds since "
                             f"1970-01-01 UTC, up to {limit} ({_LAST_EPOCH_DAY.isoformat()})")
    return datetime.fromtimestamp(int(text), tz=timezone.utc).date()


def document_control(loaded: LoadedPlan, kind: str, paper: str, check: DocumentCheck | None = None) -> DocumentControl:
    """The control block of document ``kind``; ``check`` is the plan's check (default policy,
    the plan's date when None)."""
    plan = valid_plan(loaded)
    check = check or document_check(loaded)
    day, basis = document_date(plan, as_of=check.given_as_of)
    protocol = f"{plan.protocol.id} version {plan.protocol.version} ({plan.protocol.date.isoformat()})" if plan.protocol else None
    return DocumentControl(
        kind=kind, title=DOCUMENT_TITLES[kind], study_id=plan.study.id, study_title=plan.study.title,
        sponsor=plan.study.sponsor, protocol=protocol, plan_file=PurePath(loaded.source.file).name,
        plan_sha256=loaded.source.sha256, plan_date=plan.plan_date, format_version=plan.format_version,
        tool_version=__version__, document_date=day, date_basis=basis, paper=paper,
        status=document_status(plan, kind, check), policy=check.policy,
        libraries=document_libraries(kind))


def valid_plan(loaded: LoadedPlan) -> Plan:
    """The typed plan of ``loaded``; documents are made only from a plan that loads."""
    if loaded.plan is None:
        raise ValueError("the plan has schema or reference problems; documents are rendered only from a valid plan")
    return loaded.plan
