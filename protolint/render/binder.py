"""The SOP binder: every SOP with its summary page, its full text when the plan points to one
(read by ``plan.sop_texts``; its SHA-256 goes into the document control) and its sign-off
sheets, the revision history, the sample-size appendix and the check appendix (the plan's
findings, from the one check pipeline)."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from datetime import date
from typing import Any, Callable

from protolint.plan import LoadedPlan
from protolint.plan.model import Endpoint, Plan, RaterPool, Sop
from protolint.plan.monitoring import pool_spans
from protolint.plan.limits import MIN_SIGNOFF_ROWS  # the one definition: the size limits count with it
from protolint.plan.sop_texts import SopText, text_for
from protolint.render.document import DocumentCheck, DocumentControl, Fact, IncludedFile, document_check, document_control, valid_plan
from protolint.render.environment import number, words
from protolint.render.pdf import PdfAttachment
from protolint.render.phrases import join_or, sop_status_text


@dataclass(frozen=True)
class SignOffRow:
    rater_id: str
    site: str


@dataclass(frozen=True)
class SignOffSheet:
    pool_label: str
    rows: tuple[SignOffRow, ...]
    blank_rows: int


@dataclass(frozen=True)
class SopFullText:
    """An SOP's own text as the binder prints it: Markdown (untrusted; the templates render it
    through the safe Markdown filters) and the file it came from."""

    path: str
    sha256: str
    size: int
    markdown: str


@dataclass(frozen=True)
class SopSection:
    id: str
    title: str
    version: str
    facts: tuple[Fact, ...]
    approvals: tuple[Fact, ...]
    summary: str | None
    sheets: tuple[SignOffSheet, ...]
    text: SopFullText | None = None
    location: str | None = None
    """Where the controlled copy is kept (shown with or without the text)."""


@dataclass(frozen=True)
class RevisionRow:
    document: str
    version: str
    date: date
    summary: str


@dataclass(frozen=True)
class SampleSizeAppendix:
    inputs: tuple[Fact, ...]
    results: tuple[Fact, ...]
    chart_svg: str
    convention: str
    note: str | None


@dataclass(frozen=True)
class FindingRow:
    severity: str
    rule: str
    where: str
    message: str
    waiver_reason: str | None


@dataclass(frozen=True)
class CheckAppendix:
    as_of: date
    policy: str
    """The policy in force, in words (file and SHA-256, or the default; what it changed)."""
    counts: tuple[Fact, ...]
    findings: tuple[FindingRow, ...]
    waived: tuple[FindingRow, ...]


@dataclass(frozen=True)
class BinderContext:
    control: DocumentControl
    sops: tuple[SopSection, ...]
    revisions: tuple[RevisionRow, ...]
    amendments: tuple[RevisionRow, ...]
    sample_size: SampleSizeAppendix | None
    check: CheckAppendix




def signing_pools(plan: Plan, sop: Sop) -> tuple[RaterPool, ...]:
    """Pools whose raters sign ``sop``: those rating an instrument it covers, or all pools when
    it covers procedures only (such as monitoring for every pool)."""
    covered = set(sop.covers.instruments) if sop.covers else set()
    if not covered:
        return plan.rater_pools
    return tuple(pool for pool in plan.rater_pools if covered & set(pool.instruments))


def signoff_sheet(plan: Plan, pool: RaterPool) -> SignOffSheet:
    rows = tuple(SignOffRow(r.id, r.site or "central") for r in plan.roster if r.pool == pool.id)
    sites = 1 if pool.is_central else len(pool_spans(plan, pool)) or len(plan.study.sites)
    expected = (pool.raters_per_site or 1) * sites
    blank = max(MIN_SIGNOFF_ROWS, expected - len(rows)) if len(rows) < expected else MIN_SIGNOFF_ROWS // 2
    return SignOffSheet(pool.label, rows, blank)


def _sop_section(plan: Plan, sop: Sop, day: date, text: SopText | None = None) -> SopSection:
    covers = sop.covers
    facts = (
        Fact("Version", sop.version),
        Fact("Status", sop_status_text(sop, day)),
        Fact("Effective", sop.effective.isoformat()),
        Fact("Next review", sop.review_due.isoformat() if sop.review_due else "not stated in the plan"),
        Fact("Owner", sop.owner or "not stated in the plan"),
        Fact("Instruments covered", join_or(tuple(plan.instrument(i).name for i in covers.instruments) if covers else (), "none")),
        Fact("Procedures covered", join_or(tuple(words(p) for p in covers.procedures) if covers else (), "none")),
    )
    approvals = tuple(Fact(a.name + (f", {a.role}" if a.role else ""), f"{a.date.isoformat()}" + (f" — {a.meaning}" if a.meaning else ""))
                      for a in sop.approvals)
    sheets = tuple(signoff_sheet(plan, pool) for pool in signing_pools(plan, sop))
    return SopSection(sop.id, sop.title, sop.version, facts, approvals, sop.summary, sheets,
                      full_text(text), sop.location)


def full_text(text: SopText | None) -> SopFullText | None:
    return None if text is None else SopFullText(text.path, text.sha256, text.size, text.text)


def included_sop_files(plan: Plan, texts: tuple[SopText, ...]) -> tuple[IncludedFile, ...]:
    """The document-control rows of the SOP texts the binder prints, in the plan's SOP order."""
    rows = []
    for index, sop in enumerate(plan.sops):
        text = text_for(texts, index)
        if text is not None:
            rows.append(IncludedFile(f"{sop.id} {sop.version} text", text.path, text.sha256))
    return tuple(rows)


def sop_text_attachments(plan: Plan, texts: tuple[SopText, ...]) -> tuple[PdfAttachment, ...]:
    """The SOP texts the binder prints, to embed in its PDF: each file once (two SOPs may share
    one), under the path the plan writes (relative to the plan's folder, so names are unique),
    in the plan's SOP order."""
    attachments: dict[str, PdfAttachment] = {}
    for index, sop in enumerate(plan.sops):
        text = text_for(texts, index)
        if text is not None and text.path not in attachments:
            attachments[text.path] = PdfAttachment(
                text.path, text.text, f"The full text of {sop.id} {sop.version} printed in this binder "
                                      f"(SHA-256 {text.sha256})")
    return tuple(attachments.values())


@dataclass(frozen=True)
class EvidencePoint:
    reliability: float
    n_total: int
    power: float
    description: str
    effect_size_observed: float
    """The observed effect at this reliability, from the same sample-size calculation."""


def _evidence_point(plan: Plan, endpoint: Endpoint, effect: float, common: dict[str, Any]) -> EvidencePoint | None:
    """The N the same comparison needs at the reliability the plan's own evidence supports for
    the way the endpoint is rated (the figure `power/unadjusted-for-reliability` checks)."""
    from protolint.plan.reliability import trial_reliability
    from protolint.stats import SolverError, sample_size_two_group

    expected = trial_reliability(plan, endpoint)
    if expected is None or not 0.0 < expected.reliability <= 1.0:
        return None
    try:
        result = sample_size_two_group(effect, reliability=expected.reliability, **common)
    except (SolverError, ValueError):
        return None
    ratings = "one rating" if expected.ratings == 1 else f"the mean of {expected.ratings} ratings"
    description = (f"{number(expected.reliability, 3)} ({ratings}; single-rating value "
                   f"{number(expected.single, 3)} from evidence {expected.evidence.id})")
    return EvidencePoint(expected.reliability, result.n_total_enrolled, result.achieved_power, description,
                         result.effect_size_observed)


def sample_size_appendix(plan: Plan) -> SampleSizeAppendix | None:
    """The reliability-adjusted sample size of the plan's comparison, with its curve.

    Uses the classical-test-theory convention: the observed SD is the true-score SD over √ρ, so the
    observed d is d·√ρ. An effect
    the plan states as observed in a previous trial is first brought to the true-score scale
    exactly as the sample-size rule does (``plan.reliability.true_effect_size``).
    """
    from protolint.render.charts import SampleSizeCurve, reliability_grid, sample_size_chart
    from protolint.stats import SolverError, sample_size_two_group

    from protolint.plan.reliability import trial_reliability, true_effect_size

    spec = plan.sample_size
    if spec is None:
        return None
    endpoint = plan.endpoint(spec.endpoint)
    reliability = spec.assumed_reliability if spec.assumed_reliability is not None else 1.0
    expected = trial_reliability(plan, endpoint)
    effect = true_effect_size(spec, expected.reliability if expected else reliability)
    if effect is None:
        return None
    d = effect.value
    ratio = plan.study.allocation_ratio
    common = dict(alpha=spec.alpha, power=spec.power, sides=spec.sides or 2, ratio=ratio, dropout=spec.dropout or 0.0)
    try:
        at_plan = sample_size_two_group(d, reliability=reliability, **common)  # type: ignore[arg-type]
        grid = [r for r in reliability_grid() if r <= 1.0]
        curve = [sample_size_two_group(d, reliability=r, **common).n_total_enrolled for r in grid]  # type: ignore[arg-type]
    except (SolverError, ValueError) as error:
        return SampleSizeAppendix((), (Fact("Could not compute", str(error)),), "", "", None)
    supported = _evidence_point(plan, endpoint, d, common)
    stated = () if spec.effect_basis != "observed" else (
        Fact("Standardised effect as stated", f"{number(spec.standardised_effect or 0, 3)} ({effect.basis})"),)
    inputs = (
        Fact("Endpoint", endpoint.label),
        *stated,
        Fact("Standardised effect (true score)", number(d, 3)),
        Fact("Significance level", f"{number(spec.alpha, 3)}, {spec.sides or 2}-sided"),
        Fact("Target power", number(spec.power)),
        Fact("Allocation ratio (group 2 / group 1)", number(ratio)),
        Fact("Expected dropout", f"{(spec.dropout or 0) * 100:g} %"),
        Fact("Reliability the calculation assumes", number(reliability)),
        Fact("Total N to enrol stated in the plan", str(spec.stated_n_total)),
    )
    results: tuple[Fact, ...] = (
        Fact(f"Observed effect at the assumed reliability {number(reliability)}", number(at_plan.effect_size_observed, 3)),
        Fact("Analysable N per group", " / ".join(str(n) for n in at_plan.n_per_group)),
        Fact("Analysable N in total", str(at_plan.n_total)),
        Fact("To enrol, allowing for dropout", str(at_plan.n_total_enrolled)),
        Fact("Power achieved", number(at_plan.achieved_power, 3)),
        Fact("N at perfect reliability (total)", str(at_plan.n_total_perfect_reliability)),
        Fact("Method", at_plan.method),
    )
    if supported is not None:
        results += (
            Fact("Reliability the evidence supports", supported.description),
            # The same attenuation as above (d·√ρ, computed by the sample-size solver), at the
            # evidence's reliability: the figure a reader compares with the plan's assumption.
            Fact(f"Observed effect at the supported reliability {number(supported.reliability, 3)}",
                 number(supported.effect_size_observed, 3)),
            Fact("To enrol at that reliability", f"{supported.n_total} (power {number(supported.power, 3)})"),
        )
    note = None
    if reliability >= 1.0:
        note = ("The plan assumes perfect reliability. No rated score is perfectly reliable; the curve "
                "shows how many participants the same comparison needs at realistic reliabilities.")
    plan_n = spec.stated_n_total if spec.stated_n_total is not None else at_plan.n_total_enrolled
    svg = sample_size_chart(SampleSizeCurve(
        tuple(grid), tuple(curve), reliability, plan_n,
        supported.reliability if supported else None, supported.n_total if supported else None))
    convention = ("Classical test theory: the observed standardised effect is d·√ρ, so the analysable N "
                  "grows as 1/ρ. Exact power from the noncentral t distribution. The curve shows the "
                  "participants to enrol (analysable N increased for the expected dropout), which is what "
                  "the plan's stated N counts.")
    return SampleSizeAppendix(inputs, results, svg, convention, note)


def check_appendix(check: DocumentCheck) -> CheckAppendix:
    """The plan's findings as the document's check found them (the policy and date in force)."""
    result = check.result
    rows = [FindingRow(f.severity.label, f.rule, f"line {f.location.line}, column {f.location.column}",
                       f.message, f.waiver_reason) for f in result.findings]
    findings = tuple(r for r, f in zip(rows, result.findings) if not f.waived)
    waived = tuple(r for r, f in zip(rows, result.findings) if f.waived)
    counts = tuple(Fact(level, str(sum(1 for r in findings if r.severity == level))) for level in ("error", "warning", "note"))
    return CheckAppendix(check.as_of, check.policy.describe(), counts + (Fact("waived", str(len(waived))),),
                         findings, waived)


def binder_context(loaded: LoadedPlan, paper: str = "a4",
                   progress: Callable[[str], None] | None = None, check: DocumentCheck | None = None) -> BinderContext:
    plan = valid_plan(loaded)
    if progress:
        progress("running the checks")
    check = check or document_check(loaded)
    control = dataclasses.replace(document_control(loaded, "binder", paper, check),
                                  included_files=included_sop_files(plan, loaded.sop_texts))
    sops = tuple(_sop_section(plan, sop, control.document_date, text_for(loaded.sop_texts, index))
                 for index, sop in enumerate(plan.sops))
    revisions = tuple(sorted(
        (RevisionRow(f"{sop.id} {sop.title}", rev.version, rev.date, rev.summary or "")
         for sop in plan.sops for rev in sop.revisions),
        key=lambda row: (row.date, row.document, row.version)))
    amendments: tuple[RevisionRow, ...] = ()
    if plan.protocol:
        amendments = tuple(RevisionRow(f"{plan.protocol.id} {a.id}", a.version or "", a.effective, a.summary or "")
                           for a in plan.protocol.amendments)
    if progress:
        progress("computing the sample-size appendix")
    sample = sample_size_appendix(plan)
    return BinderContext(control, sops, revisions, amendments, sample, check_appendix(check))
