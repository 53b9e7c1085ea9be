"""The review report: one self-contained HTML page a reviewer reads on screen or on paper.

For every plan: its identity (file, SHA-256, format and protocol version, as-of date, policy),
a summary by severity and by rule family, the primary endpoint's reliability-adjusted sample
size as an inline SVG chart, and every finding with the plan lines around it, the rule's
rationale and source, and the computed facts in words. Severity and family filters are a
few lines of inline script; without script every finding stays visible (the filter form is
hidden until the script shows it).

The page loads nothing: CSS, SVG and the one script are inline, and the page's
Content-Security-Policy forbids every fetch and every script but the hash of its own.
Rendering uses the documents' Jinja environment (autoescaping, StrictUndefined) and their
Markdown set-up; plan text, including the excerpts, is escaped everywhere. The chart is
drawn here as SVG text, so ``check --format html`` imports neither numpy nor matplotlib.
"""

from __future__ import annotations

import base64
import hashlib
import math
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any, Mapping, Sequence

from protolint import CAUTION
from protolint.report._common import (
    counts_phrase,
    json_safe,
    not_run_note,
    plan_counts,
    plural,
    sop_text_names,
    sorted_findings,
)
from protolint.rules.sources import split_sources

if TYPE_CHECKING:
    from protolint.findings import CheckResult, Finding, PlanResult
    from protolint.rules.registry import RuleMeta

TEMPLATE = "review.html.j2"
CONTEXT_LINES = 2
"""Plan lines shown above and below a finding's line."""

SEVERITY_ORDER = ("error", "warning", "note", "waived")

# The filter script. Its SHA-256 goes into the page's Content-Security-Policy, so the browser
# runs this script and nothing else. Without script the form stays hidden and nothing is.
FILTER_SCRIPT = """
(function () {
  var form = document.getElementById("filters");
  if (!form) { return; }
  form.hidden = false;
  function update() {
    var on = {};
    form.querySelectorAll("input[type=checkbox]").forEach(function (box) { on[box.name + ":" + box.value] = box.checked; });
    var shown = 0, all = document.querySelectorAll("article.finding");
    all.forEach(function (item) {
      var visible = on["severity:" + item.dataset.severity] && on["family:" + item.dataset.family];
      item.hidden = !visible;
      if (visible) { shown += 1; }
    });
    document.getElementById("shown").textContent = shown + " of " + all.length + " findings shown";
  }
  form.addEventListener("change", update);
  update();
})();
""".strip()

# Fact keys in words: label and unit. Keys not listed are shown in words from their name
# (underscores to spaces; a unit suffix such as _weeks becomes the unit), never as code.
FACT_WORDS: dict[str, tuple[str, str]] = {
    "allocation_ratio": ("allocation ratio (second arm : first arm)", ""),
    "alpha": ("significance level α", ""),
    "amendment": ("amendment", ""),
    "amendment_effective": ("amendment in effect from", ""),
    "approved": ("approved on", ""),
    "as_of": ("checked as of", ""),
    "assumed_reliability": ("reliability the plan assumes", ""),
    "assumed_single_rating": ("single-rating reliability the plan assumes", ""),
    "band_95": ("95 % band of a single score (± 1.96 SEM)", "scale points"),
    "cases": ("certification cases", "cases"),
    "cases_for_max_width": ("cases needed for the widest allowed interval", "cases"),
    "certified": ("certified on", ""),
    "ci": ("confidence interval", ""),
    "criterion": ("pass criterion", ""),
    "ci_low_for_trial": ("lower confidence limit, as the trial rates", ""),
    "ci_low_reported": ("lower confidence limit, as reported", ""),
    "ci_width": ("expected confidence-interval width", ""),
    "confidence": ("confidence level", ""),
    "cutoff": ("decision cut-off", "scale points"),
    "days_late": ("days late", "days"),
    "days_before_first_rating": ("training lead time before the first rating", "days"),
    "drift_max_deviation": ("largest deviation allowed in monitoring", "scale points"),
    "drift_minimum": ("lowest agreement allowed in monitoring", ""),
    "dropout": ("expected dropout", "of enrolled"),
    "duplicate_fraction": ("share of ratings rated twice", ""),
    "effect_basis": ("effect size measured on", ""),
    "effect_size": ("standardised effect size d (as stated)", ""),
    "effect_size_observed": ("effect size the ratings will show", ""),
    "effect_size_true": ("error-free (true-score) effect size", ""),
    "effective": ("in effect from", ""),
    "endpoint": ("endpoint", ""),
    "evidence": ("reliability evidence", ""),
    "evidence_type_needed": ("kind of evidence needed", ""),
    "evidence_value": ("in the evidence", ""),
    "excess": ("excess over the evidence", ""),
    "expected_icc": ("ICC expected in certification", ""),
    "expected_icc_basis": ("expected ICC taken from", ""),
    "experience_years": ("rater experience", "years"),
    "expert_years": ("experience counted as expert", "years"),
    "expires": ("expires on", ""),
    "field": ("population attribute", ""),
    "first_assessment": ("first rated assessment", ""),
    "first_certification": ("first certification", ""),
    "first_rating": ("first rating", ""),
    "formula": ("formula", ""),
    "instrument": ("instrument", ""),
    "k": ("raters per certification case", "raters"),
    "k_reported": ("ratings averaged in the evidence", "ratings"),
    "last_certified": ("last certified", ""),
    "last_rating": ("last rating", ""),
    "lead_days": ("lead time", "days"),
    "m_trial": ("ratings averaged per assessment in the trial", "ratings"),
    "max_ci_width": ("widest allowed confidence interval", ""),
    "max_cycle_months": ("longest allowed review cycle", "months"),
    "max_deviation": ("largest deviation allowed", "scale points"),
    "max_share_of_range": ("largest share of the score range allowed", ""),
    "max_interval_weeks": ("longest allowed monitoring interval", "weeks"),
    "max_months": ("longest allowed interval", "months"),
    "min_cases": ("fewest certification cases allowed", "cases"),
    "min_lead_days": ("shortest lead time allowed", "days"),
    "min_subjects": ("fewest subjects allowed", "subjects"),
    "minimum": ("required reliability", ""),
    "missing": ("missing", ""),
    "n_per_group": ("analysable participants per group", "participants"),
    "n_total_needed": ("participants needed (enrolled)", "participants"),
    "n_total_needed_at_perfect_reliability": ("participants needed at perfect reliability", "participants"),
    "n_total_stated": ("participants the plan states", "participants"),
    "participant_days": ("time a participant is in the trial", "days"),
    "pass_max_deviation": ("largest deviation allowed to pass certification", "scale points"),
    "pass_minimum": ("lowest agreement allowed to pass certification", ""),
    "plan_date": ("plan date", ""),
    "pool": ("rater pool", ""),
    "pool_min_years": ("least experience the pool admits", "years"),
    "power": ("planned power", ""),
    "power_at_stated_n": ("power at the stated number of participants", ""),
    "rater": ("rater", ""),
    "raters": ("raters", "raters"),
    "raters_needed": ("independent raters needed per assessment", "raters"),
    "raters_per_site": ("raters per site", "raters"),
    "rating_period_days": ("rating period", "days"),
    "ratings_averaged": ("ratings averaged per assessment", "ratings"),
    "reliability": ("reliability the trial can expect", ""),
    "reliability_for_trial": ("reliability the trial can expect", ""),
    "reliability_now": ("reliability with the planned raters", ""),
    "reliability_with_needed": ("reliability with the raters needed", ""),
    "reported": ("coefficient as reported", ""),
    "required_days": ("lead time required", "days"),
    "review_due": ("review due", ""),
    "rounds": ("monitoring rounds", "rounds"),
    "rule": ("rule", ""),
    "score_range": ("width of the score range", "scale points"),
    "sdc": ("smallest detectable change (SDC)", "scale points"),
    "section": ("section", ""),
    "sem": ("standard error of measurement (SEM)", "scale points"),
    "sem_basis": ("SEM computed from", ""),
    "shortfall": ("shortfall", "participants"),
    "share_of_range": ("share of the score range", ""),
    "sides": ("sides of the test", ""),
    "single_rating": ("reliability of a single rating", ""),
    "single_rating_estimate": ("estimated single-rating reliability", ""),
    "single_rating_reliability": ("reliability of a single rating", ""),
    "site": ("site", ""),
    "site_first_assessment": ("site's first rated assessment", ""),
    "sop": ("SOP", ""),
    "subjects": ("subjects", "subjects"),
    "subjects_for_max_width": ("subjects needed for the widest allowed interval", "subjects"),
    "target": ("target reliability", ""),
    "threshold": ("threshold", "scale points"),
    "tolerance": ("tolerance", ""),
    "value": ("value", ""),
    "trial_value": ("in the trial", ""),
}
_UNIT_SUFFIXES = {"days": "days", "weeks": "weeks", "months": "months", "years": "years", "hours": "hours"}
_PERCENT_KEYS = {"dropout", "power", "power_at_stated_n", "duplicate_fraction", "confidence", "share_of_range",
                 "max_share_of_range"}


@dataclass(frozen=True)
class Fact:
    label: str
    value: str


@dataclass(frozen=True)
class ExcerptLine:
    number: int
    text: str
    marked: bool


@dataclass(frozen=True)
class WaiverView:
    reason: str
    approved_by: str
    date: str
    expires: str


@dataclass(frozen=True)
class FindingView:
    anchor: str
    rule: str
    family: str
    severity: str
    """error, warning, note, or waived."""
    original_severity: str
    line: int
    column: int
    pointer: str
    message: str
    summary: str
    rationale: str
    """Markdown (our own rule documentation, still rendered through the safe set-up)."""
    sources: tuple[str, ...]
    """The rule's citations, one per item (or "common practice")."""
    facts: tuple[Fact, ...]
    formula: str
    excerpt: tuple[ExcerptLine, ...]
    waiver: WaiverView | None
    waiver_text: str


@dataclass(frozen=True)
class PlanView:
    anchor: str
    file: str
    sha256: str
    format_version: str
    protocol: str
    as_of: str
    policy: str
    counts: Mapping[str, int]
    counts_text: str
    families: tuple[tuple[str, Mapping[str, int]], ...]
    findings: tuple[FindingView, ...]
    chart: str
    """Inline SVG markup built here from numbers only (no plan text), or empty."""
    chart_caption: str
    source_note: str
    not_run: str = ""
    """How many rules a schema problem kept from running, and which (empty when all ran)."""
    sop_texts: tuple[str, ...] = ()
    """The SOP texts the check read, with their SHA-256 (empty when the plan names none)."""


def render(result: CheckResult, rules: Sequence[RuleMeta], *, color: bool = False) -> str:
    # jinja2 first: without the documents extra, its absence gives the one-line install hint.
    from protolint.render.environment import make_env
    from markupsafe import Markup

    metas = {meta.id: meta for meta in rules}
    # The same phrase as every other report and the documents.
    policy = result.policy.describe()
    plans = tuple(_plan_view(index, plan, metas, policy, given=result.as_of is not None)
                  for index, plan in enumerate(result.plans))
    families = sorted({finding.family for plan in plans for finding in plan.findings})
    counts = result.counts()
    script_hash = base64.b64encode(hashlib.sha256(FILTER_SCRIPT.encode("utf-8")).digest()).decode("ascii")
    return make_env().get_template(TEMPLATE).render(
        title=f"protolint review report: {counts_phrase(counts)}",
        tool_version=result.tool_version,
        counts_text=counts_phrase(counts),
        plans_text=plural(len(plans), "plan"),
        plans=plans,
        families=families,
        severities=SEVERITY_ORDER,
        script=Markup(FILTER_SCRIPT),
        script_hash=script_hash,
        caution=CAUTION,
        svg=lambda markup: Markup(markup),
    )


def _plan_view(index: int, plan: PlanResult, metas: Mapping[str, RuleMeta], policy: str, *, given: bool = False) -> PlanView:
    lines, data, source_note = _plan_source(plan)
    raw_waivers, raw_protocol = data.get("waivers"), data.get("protocol")
    waivers: list[Any] = raw_waivers if isinstance(raw_waivers, list) else []
    protocol: dict[str, Any] = raw_protocol if isinstance(raw_protocol, dict) else {}
    findings = sorted_findings(plan)
    views = tuple(
        _finding_view(f"p{index}-f{number}", finding, metas.get(finding.rule), lines, waivers)
        for number, finding in enumerate(findings, start=1)
    )
    families: dict[str, dict[str, int]] = {}
    for view in views:
        row = families.setdefault(view.family, dict.fromkeys(SEVERITY_ORDER, 0))
        row[view.severity] += 1
    chart, caption = _sample_size_chart(findings)
    protocol_text = " ".join(str(part) for part in (protocol.get("id"), _version(protocol.get("version"))) if part)
    return PlanView(
        anchor=f"plan-{index}",
        file=plan.file,
        sha256=plan.sha256,
        format_version=str(data.get("format_version", "not stated")),
        protocol=protocol_text or "not stated",
        as_of=_as_of_text(plan, given),
        policy=policy,
        counts=plan_counts(plan),
        counts_text=counts_phrase(plan_counts(plan)),
        families=tuple(sorted(families.items())),
        findings=views,
        chart=chart,
        chart_caption=caption,
        source_note=source_note,
        not_run=not_run_note(plan, with_ids=True) or "",
        sop_texts=sop_text_names(plan),
    )


def _as_of_text(plan: PlanResult, given: bool = False) -> str:
    if plan.as_of:
        return plan.as_of + (" (given with --as-of)" if given else " (the plan's own date)")
    if plan.rules_run and all(rule_id.startswith("schema/") for rule_id in plan.rules_run):
        # The engine stops before the rules when the plan does not load; no date was compared.
        return "not used (the plan did not pass the schema and reference checks, so no rule compared dates)"
    return "not recorded"


def _version(value: Any) -> str:
    return f"version {value}" if value not in (None, "") else ""


def _plan_source(plan: PlanResult) -> tuple[list[str], dict[str, Any], str]:
    """The plan's lines and data, read again from its file, if it still has the checked bytes.

    A report is about the bytes that were checked: when the file has changed since (or cannot
    be read, or came from standard input), excerpts and waiver details are left out and the
    report says why, rather than show lines that may no longer be the ones the finding meant.
    """
    from protolint.errors import ProtolintError
    from protolint.plan.source import load_source

    if plan.file == "-":
        return [], {}, "The plan was read from standard input, so the report shows no plan excerpts."
    try:
        raw = Path(plan.file).read_bytes()
    except OSError:
        return [], {}, "The plan file could not be read again, so the report shows no plan excerpts."
    if hashlib.sha256(raw).hexdigest() != plan.sha256:
        return [], {}, "The plan file has changed since it was checked, so the report shows no plan excerpts."
    try:
        loaded = load_source(raw, plan.file)
    except ProtolintError:
        text = raw.decode("utf-8", errors="replace")
        return text.splitlines(), {}, ""
    return loaded.text.splitlines(), loaded.data, ""


def _finding_view(anchor: str, finding: Finding, meta: RuleMeta | None, lines: list[str],
                  waivers: list[Any]) -> FindingView:
    facts = json_safe(finding.facts) or {}
    formula = str(facts.pop("formula", "")) if isinstance(facts, dict) else ""
    waiver = _matching_waiver(finding, waivers) if finding.waived else None
    return FindingView(
        anchor=anchor,
        rule=finding.rule,
        family=finding.family,
        severity="waived" if finding.waived else finding.severity.label,
        original_severity=finding.severity.label,
        line=finding.location.line,
        column=finding.location.column,
        pointer=finding.pointer or "/",
        message=finding.message,
        summary=meta.summary if meta else "",
        rationale=_rationale(meta.documentation) if meta else "",
        sources=tuple(split_sources(meta.source)) if meta else (),
        facts=tuple(Fact(*_fact_words(key, value)) for key, value in facts.items()) if isinstance(facts, dict) else (),
        formula=formula,
        excerpt=_excerpt(lines, finding.location.line, finding.location.end_line),
        waiver=waiver,
        waiver_text=finding.waiver_reason or "",
    )


def _rationale(documentation: str) -> str:
    """The first paragraph of a rule's documentation: why the rule matters."""
    for paragraph in documentation.strip().split("\n\n"):
        text = paragraph.strip()
        if text and not text.startswith(("#", "**Passes", "**Fails", "```", "-")):
            return text
    return ""


def _fact_words(key: str, value: Any) -> tuple[str, str]:
    label, unit = FACT_WORDS.get(key, ("", ""))
    if not label:
        words = key.split("_")
        if words[-1] in _UNIT_SUFFIXES and len(words) > 1:
            unit = _UNIT_SUFFIXES[words[-1]]
            words = words[:-1]
        label = " ".join(words)
    return label[:1].upper() + label[1:], _value_words(key, value, unit)


def _value_words(key: str, value: Any, unit: str) -> str:
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, list):
        items = [_value_words(key, item, "") for item in value]
        joined = " and ".join(items) if len(items) == 2 else ", ".join(items)
        return joined + (f" {unit}" if unit and value else "")
    if isinstance(value, dict):
        return "; ".join(f"{_fact_words(k, v)[0].lower()}: {_value_words(k, v, '')}" for k, v in value.items())
    if value is None:
        return "not stated"
    if isinstance(value, (int, float)):
        if key in _PERCENT_KEYS and 0 <= value <= 1:
            return f"{value * 100:.4g} %"
        text = _number(value)
        if unit:
            singular = unit[:-1] if unit.endswith("s") and value == 1 else unit
            return f"{text} {singular}"
        return text
    return str(value).replace("-", " ") if key in ("effect_basis",) else str(value)


def _number(value: float | int) -> str:
    if isinstance(value, int) or (math.isfinite(value) and float(value).is_integer()):
        return f"{int(value):,}"
    if not math.isfinite(value):
        return "not defined"
    return f"{value:.4g}"


def _excerpt(lines: list[str], line: int, end_line: int | None) -> tuple[ExcerptLine, ...]:
    if not lines or line < 1 or line > len(lines):
        return ()
    last = min(end_line or line, line + 5)
    start, stop = max(1, line - CONTEXT_LINES), min(len(lines), last + CONTEXT_LINES)
    return tuple(ExcerptLine(number, lines[number - 1], line <= number <= last) for number in range(start, stop + 1))


def _matching_waiver(finding: Finding, waivers: list[Any]) -> WaiverView | None:
    """The plan's waiver that covers ``finding``: same rule, target a prefix of its pointer.

    The same test as the engine's, applied to the plan data, so the report can show the
    waiver's fields one by one; the engine has already decided that one is in force.
    """
    for waiver in waivers:
        if not isinstance(waiver, dict) or waiver.get("rule") != finding.rule:
            continue
        target = str(waiver.get("target") or "")
        if target and finding.pointer != target and not finding.pointer.startswith(target.rstrip("/") + "/"):
            continue
        return WaiverView(
            reason=str(waiver.get("reason", "")),
            approved_by=str(waiver.get("approved_by", "")),
            date=str(waiver.get("date", "")),
            expires=str(waiver.get("expires") or "no expiry"),
        )
    return None


# --- the sample-size chart --------------------------------------------------------------------

_CHART_RULE = "power/unadjusted-for-reliability"


def _sample_size_chart(findings: Sequence[Finding]) -> tuple[str, str]:
    """SVG of participants needed against reliability, for the primary endpoint's sample size.

    Drawn by the documents' one sample-size chart (``render.charts``) from the facts of the
    sample-size rule, with the same closed-form function the rule used (``plan.formulas``), so
    the curve passes through the rule's figure. Only numbers go into the SVG; the caption (plan
    text) is escaped by the template.
    """
    finding = next((f for f in findings if f.rule == _CHART_RULE and f.facts), None)
    if finding is None:
        return "", ""
    facts = finding.facts
    try:
        d_true = float(facts["effect_size_true"])
        alpha, power = float(facts["alpha"]), float(facts["power"])
        sides, ratio = int(facts["sides"]), float(facts["allocation_ratio"])
        dropout = float(facts["dropout"])
        evidence_rho, needed = float(facts["reliability"]), int(facts["n_total_needed"])
        stated = int(facts["n_total_stated"])
        assumed = facts.get("assumed_reliability")
    except (KeyError, TypeError, ValueError):
        return "", ""
    from protolint.plan.formulas import enrolled, n_per_group
    from protolint.render.charts import SampleSizeCurve, sample_size_chart

    def total(rho: float) -> int:
        groups = n_per_group(d_true * math.sqrt(rho), alpha, power, sides, ratio)
        return enrolled(groups.n1, dropout) + enrolled(groups.n2, dropout)

    low = max(0.05, min(0.3, evidence_rho - 0.1, float(assumed) - 0.1 if assumed else 1.0))
    low = math.floor(low * 10) / 10
    xs = tuple(low + (1.0 - low) * i / 80 for i in range(81))
    plan_x = float(assumed) if assumed else 1.0
    svg = sample_size_chart(SampleSizeCurve(xs, tuple(total(x) for x in xs), plan_x, stated, evidence_rho, needed))
    assumed_text = f"assumes reliability {plan_x:.2f}" if assumed else "assumes no loss from unreliable ratings"
    caption = (
        f"Endpoint {facts.get('endpoint', '')}: participants to enrol for {power:.0%} power at α = {alpha:g} "
        f"({sides}-sided), effect size {d_true:.3g} on the error-free scale, {dropout:.0%} dropout, as the "
        f"reliability of the ratings varies (normal approximation with Guenther's 1981 correction). "
        f"Square: the plan states {stated:,} and {assumed_text}. Circle: evidence {facts.get('evidence', '')} "
        f"supports {evidence_rho:.3f}, for which {needed:,} are needed."
    )
    return svg, caption
