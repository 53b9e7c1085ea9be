"""Certification, drift and the recertification due list: rating data + plan -> frozen results.

The input is long form, one row per rating of a reference case (see :func:`parse_ratings`).
For each rater and instrument the analysis judges

* **certification**: agreement with the reference scores in the latest certification attempt,
  by the criterion in force (the plan's, or the command-line options');
* **drift**: each monitoring round's mean deviation from the reference, standardised by a
  stated scale SD, watched by a two-sided tabular CUSUM or an EWMA chart, plus the plan's own
  per-round drift threshold;
* **agreement over all ratings**: Bland–Altman bias and limits of agreement;

then gives each rater a status and lists who must be recalibrated or recertified by when.

Conventions (stated so that the report can be checked by hand):

* Rows dated after ``as_of`` are ignored: the analysis is the one that could be made that day.
* A *certification attempt* is all certification rows of a rater and instrument on one date;
  the latest attempt decides. ``kind = recertification`` rows are attempts too, and unlike
  certification rows they may follow monitoring rows.
* A *monitoring round* of a rater is all monitoring rows of that rater and instrument on one
  date. Its point on the chart is ``z = mean deviation × √n / scale_sd`` (n cases), which has
  SD 1 when the deviations of single ratings have SD ``scale_sd``; chart shifts are therefore
  in SD units of a round's mean.
* The default ``scale_sd`` is the pooled within-rater SD of the deviations in the certification
  rounds (pooled over raters who passed; over all raters when none did), per instrument.
* The whole-group check bins every rater's round points into periods of the monitoring
  interval, counted from the instrument's first monitoring date; a period's point is the mean
  of its ``z`` values times √(their number), so it too has SD 1 when nothing moved.
"""

from __future__ import annotations

import dataclasses
import math
from collections import defaultdict
from dataclasses import dataclass, field
from datetime import date, timedelta
from typing import TYPE_CHECKING, Any, Iterable, NamedTuple, Sequence

from protolint import CAUTION
from protolint.errors import LocatedError, ProtolintError

# --- Derived plan facts. Monitoring rounds and calendar arithmetic have one definition, shared
# with the checklist and the calendar; this is the one place this module imports them from.
from protolint.plan.timeline import add_months
from protolint.plan.monitoring import CENTRAL, MonitoringRound, monitoring_rounds
from protolint.wording import plural

if TYPE_CHECKING:
    from protolint.data.roles import ReadOptions
    from protolint.plan import LoadedPlan
    from protolint.plan.model import Plan, RaterPool

# Stable status codes (JSON) with the words the text report uses.
STATUS_WORDS: dict[str, str] = {
    "ok": "in agreement",
    "drifting": "drifting from the reference",
    "failed-certification": "failed certification",
    "not-certified": "no certification on file",
    "insufficient-data": "too few ratings to judge",
}
STATUS_ORDER = ("failed-certification", "not-certified", "drifting", "insufficient-data", "ok")

KINDS = ("certification", "recertification", "monitoring")
REQUIRED_COLUMNS = ("date", "site", "rater", "case", "score", "reference")
ROLES = REQUIRED_COLUMNS
"""The shared reader's column roles drift uses (``--date``, ``--site``, … map other names)."""
OPTIONAL_COLUMNS = ("kind", "instrument")
SHIFTS = (0.5, 1.0, 2.0)
MIN_CASES = 3
"""Fewest cases an attempt or round needs before agreement with the reference is judged."""

WEEKS_PER_YEAR = 365.25 / 7

DEFAULT_MIN_ICC = 0.80
DEFAULT_INTERVAL_WEEKS = 4
DEFAULT_RECERTIFY_MONTHS = 12
DEFAULT_ARL0 = 370.0
DEFAULT_WITHIN_DAYS = 90


# ----------------------------------------------------------------------------- input


@dataclass(frozen=True)
class RawTable:
    """A delimited file as text: the header (lower case) and every non-blank row, as stripped
    cells padded to the header's width, with its line number."""

    file: str
    sha256: str
    header: tuple[str, ...]
    rows: tuple[tuple[int, list[str]], ...]


def read_rows(file: str, read_options: ReadOptions | None = None) -> RawTable:
    """Read the data through the shared reader (CSV, TSV, .xlsx, Dataset-JSON, SAS transport;
    column roles, presets and filters from ``read_options``) into rows of text with their row
    numbers. Only reading happens here; every check of the values is in :func:`parse_ratings`."""
    from protolint.data.records import read_role_rows

    from protolint.data.rawfile import read_limited

    digest = read_limited(file).sha256
    rows, _ = read_role_rows(file, read_options, ROLES, REQUIRED_COLUMNS, keep=OPTIONAL_COLUMNS,
                             skip_missing_score=False)
    (_, header), body = rows[0], rows[1:]
    return RawTable(file, digest, tuple(name.lower() for name in header), tuple(body))


class Rating(NamedTuple):
    """One rating of a reference case (a named tuple: a trial's data has 10^5 of them)."""

    line: int
    day: date
    site: str
    rater: str
    case: str
    score: float
    reference: float
    kind: str
    instrument: str | None
    deviation: float
    """``score − reference``."""


@dataclass(frozen=True)
class RatingData:
    file: str
    sha256: str
    ratings: tuple[Rating, ...]
    has_instrument: bool

    @property
    def latest(self) -> date:
        return max(rating.day for rating in self.ratings)


def _number(file: str, line: int, column: str, cell: str) -> float:
    from protolint.data.source import parse_number

    try:
        return parse_number(cell)
    except ValueError as error:
        raise LocatedError(file, line, None, f"{column}: {error}") from None


def parse_ratings(table: RawTable) -> RatingData:
    """Validate the rows: columns, dates, numbers, one reference score per case, and
    certification before monitoring for each rater (recertification may come later)."""
    file = table.file
    missing = [name for name in REQUIRED_COLUMNS if name not in table.header]
    if missing:
        raise LocatedError(file, 1, None, f"missing column{'s' if len(missing) > 1 else ''} "
                           f"{', '.join(missing)}; expected {', '.join(REQUIRED_COLUMNS)} "
                           f"(and optionally {', '.join(OPTIONAL_COLUMNS)})")
    if not table.rows:
        raise LocatedError(file, None, None, "no ratings after the header row")
    ratings: list[Rating] = []
    references: dict[tuple[str | None, str], tuple[float, int]] = {}
    has_instrument = "instrument" in table.header
    at = {name: table.header.index(name) for name in REQUIRED_COLUMNS + OPTIONAL_COLUMNS if name in table.header}
    i_date, i_site, i_rater, i_case, i_score, i_ref = (at[name] for name in REQUIRED_COLUMNS)
    i_kind, i_instrument = at.get("kind"), at.get("instrument")
    from protolint.dates import parse_date

    parsed_days: dict[str, date] = {}
    for line, cells in table.rows:
        for name in REQUIRED_COLUMNS:
            if not cells[at[name]]:
                raise LocatedError(file, line, None, f"{name} is empty")
        text_day = cells[i_date]
        day = parsed_days.get(text_day)
        if day is None:
            try:
                day = parsed_days[text_day] = parse_date(text_day)
            except ValueError:
                raise LocatedError(file, line, None, f"date: {text_day!r} is not an ISO 8601 date (YYYY-MM-DD)") from None
        kind = "monitoring" if i_kind is None or not cells[i_kind] else cells[i_kind].lower()
        if kind not in KINDS:
            raise LocatedError(file, line, None, f"kind: {kind!r} is not one of {', '.join(KINDS)}")
        instrument = (cells[i_instrument] or None) if i_instrument is not None else None
        score = _number(file, line, "score", cells[i_score])
        reference = _number(file, line, "reference", cells[i_ref])
        rating = Rating(line, day, cells[i_site], cells[i_rater], cells[i_case], score, reference, kind,
                        instrument, score - reference)
        key = (instrument, rating.case)
        known = references.get(key)
        if known is None:
            references[key] = (rating.reference, line)
        elif known[0] != rating.reference:
            raise LocatedError(file, line, None, f"case {rating.case!r}: reference {rating.reference:g} differs "
                               f"from {known[0]:g} on line {known[1]}")
        ratings.append(rating)
    first_monitoring: dict[tuple[str, str | None], date] = {}
    for rating in ratings:
        if rating.kind == "monitoring":
            who = (rating.rater, rating.instrument)
            if who not in first_monitoring or rating.day < first_monitoring[who]:
                first_monitoring[who] = rating.day
    for rating in ratings:
        begins = first_monitoring.get((rating.rater, rating.instrument))
        if rating.kind == "certification" and begins is not None and rating.day > begins:
            raise LocatedError(file, rating.line, None,
                               f"certification of rater {rating.rater!r} dated {rating.day}, after their monitoring "
                               f"ratings begin ({begins}); mark a later certification as kind 'recertification'")
    return RatingData(file, table.sha256, tuple(ratings), has_instrument)


def read_ratings(file: str, read_options: ReadOptions | None = None) -> RatingData:
    """Read and validate a ratings file (the one entry point the command uses)."""
    return parse_ratings(read_rows(file, read_options))


# ----------------------------------------------------------------------------- settings


@dataclass(frozen=True)
class PassRule:
    """A pass rule against the reference scores: a coefficient minimum, a deviation limit, or both."""

    coefficient: str | None = None
    minimum: float | None = None
    max_deviation: float | None = None
    within_fraction: float | None = None

    def describe(self) -> str:
        parts = []
        if self.coefficient is not None and self.minimum is not None:
            parts.append(f"{self.coefficient} >= {self.minimum:g}")
        if self.max_deviation is not None:
            share = 1.0 if self.within_fraction is None else self.within_fraction
            parts.append(f"{share * 100:g} % of cases within {self.max_deviation:g} points of the reference")
        return " and ".join(parts) or "none"

    def to_json(self) -> dict[str, Any]:
        return {"coefficient": self.coefficient, "minimum": self.minimum, "max_deviation": self.max_deviation,
                "within_fraction": self.within_fraction, "text": self.describe()}


@dataclass(frozen=True)
class PoolRules:
    """What one rater pool is judged by, and where each value came from."""

    pool: str
    instruments: tuple[str, ...]
    criterion: PassRule
    interval_weeks: int | None
    drift_threshold: PassRule | None
    recertify_months: int | None
    triggers: tuple[str, ...]
    scale_type: dict[str, str]
    attempts: int | None
    source: str
    """"plan" or "options"."""

    def to_json(self) -> dict[str, Any]:
        return {"pool": self.pool, "instruments": list(self.instruments), "criterion": self.criterion.to_json(),
                "interval_weeks": self.interval_weeks,
                "drift_threshold": None if self.drift_threshold is None else self.drift_threshold.to_json(),
                "recertify_months": self.recertify_months, "triggers": list(self.triggers),
                "scale": dict(self.scale_type), "attempts": self.attempts, "source": self.source}


@dataclass(frozen=True)
class ChartSettings:
    method: str
    k: float | None = None
    h: float | None = None
    lam: float | None = None
    L: float | None = None
    arl0: float | None = None
    """The in-control ARL the limit was solved for (None when the limit was given)."""


@dataclass(frozen=True)
class Options:
    """Everything the command line can set; None means "from the plan, else the default"."""

    pool: str | None = None
    as_of: date | None = None
    min_icc: float | None = None
    max_deviation: float | None = None
    interval_weeks: int | None = None
    recertify_months: int | None = None
    scale: str | None = None
    scale_sd: float | None = None
    method: str = "cusum"
    k: float = 0.5
    h: float | None = None
    lam: float = 0.2
    L: float | None = None
    arl0: float = DEFAULT_ARL0
    within_days: int = DEFAULT_WITHIN_DAYS


def chart_settings(options: Options) -> ChartSettings:
    """The chart in use, with its limit solved for ``arl0`` when it was not given."""
    from protolint.stats import drift as charts

    try:
        if options.method == "cusum":
            h = options.h if options.h is not None else charts.cusum_h_for_arl(options.k, options.arl0)
            return ChartSettings("cusum", k=options.k, h=h, arl0=None if options.h is not None else options.arl0)
        if options.method == "ewma":
            L = options.L if options.L is not None else charts.ewma_L_for_arl(options.lam, options.arl0)
            return ChartSettings("ewma", lam=options.lam, L=L, arl0=None if options.L is not None else options.arl0)
    except (TypeError, ValueError) as error:
        raise ProtolintError(f"drift: {error}") from None
    raise ProtolintError(f"drift: --method must be cusum or ewma, got {options.method!r}")


def _rule(criterion: Any) -> PassRule | None:
    if criterion is None:
        return None
    return PassRule(criterion.coefficient, criterion.minimum, criterion.max_deviation, criterion.within_fraction)


def _option_rules(options: Options, instruments: Sequence[str]) -> PoolRules:
    if options.max_deviation is not None and options.min_icc is None:
        criterion = PassRule(max_deviation=options.max_deviation)
    else:
        criterion = PassRule("ICC(A,1)", DEFAULT_MIN_ICC if options.min_icc is None else options.min_icc,
                             options.max_deviation)
    return PoolRules(
        pool=options.pool or "all", instruments=tuple(instruments), criterion=criterion,
        interval_weeks=options.interval_weeks or DEFAULT_INTERVAL_WEEKS,
        drift_threshold=None if options.max_deviation is None else PassRule(max_deviation=options.max_deviation),
        recertify_months=options.recertify_months or DEFAULT_RECERTIFY_MONTHS,
        triggers=("failed-monitoring",), scale_type={i: options.scale or "interval" for i in instruments},
        attempts=None, source="options")


def _plan_rules(plan: Plan, pool: RaterPool, options: Options) -> PoolRules:
    certification = pool.certification
    criterion = _rule(certification.criterion if certification else None) or PassRule()
    # A command-line value overrides the plan's (and the report says which was used).
    if options.min_icc is not None:
        criterion = PassRule("ICC(A,1)", options.min_icc, criterion.max_deviation, criterion.within_fraction)
    if options.max_deviation is not None:
        criterion = PassRule(criterion.coefficient, criterion.minimum, options.max_deviation, criterion.within_fraction)
    if criterion.coefficient is None and criterion.max_deviation is None:
        criterion = PassRule("ICC(A,1)", DEFAULT_MIN_ICC)
    monitoring = pool.monitoring
    recert = pool.recertification
    return PoolRules(
        pool=pool.id, instruments=pool.instruments, criterion=criterion,
        interval_weeks=options.interval_weeks or (monitoring.interval_weeks if monitoring else None),
        drift_threshold=_rule(monitoring.drift_threshold if monitoring else None),
        recertify_months=options.recertify_months or (recert.interval_months if recert else None),
        triggers=recert.triggers if recert else (),
        scale_type={i: options.scale or plan.instrument(i).scale.type for i in pool.instruments},
        attempts=certification.attempts if certification else None, source="plan")


# ----------------------------------------------------------------------------- results


@dataclass(frozen=True)
class Agreement:
    """Agreement of one set of ratings (an attempt or a round) with the reference scores."""

    day: date
    cases: int
    icc: float | None
    icc_ci: tuple[float, float] | None
    icc_consistency: float | None
    weighted_kappa: float | None
    kappa: float | None
    percent_agreement: float
    mean_deviation: float
    mean_abs_deviation: float
    max_abs_deviation: float
    within_share: float | None
    outside_cases: tuple[str, ...]
    passed: bool | None
    """None when the rule cannot be judged (too few cases, coefficient undefined)."""
    marginal: bool
    reasons: tuple[str, ...]

    def coefficient(self, name: str | None) -> tuple[float | None, tuple[float, float] | None]:
        if name in ("ICC(2,1)", "ICC(A,1)"):
            return self.icc, self.icc_ci
        if name in ("ICC(3,1)", "ICC(C,1)"):
            return self.icc_consistency, None
        if name == "weighted-kappa-quadratic":
            return self.weighted_kappa, None
        if name == "weighted-kappa-linear":
            return self.weighted_kappa_linear, None
        if name == "cohen-kappa":
            return self.kappa, None
        if name == "percent-agreement":
            return self.percent_agreement, None
        return None, None

    weighted_kappa_linear: float | None = None

    def to_json(self) -> dict[str, Any]:
        return {
            "date": self.day.isoformat(), "cases": self.cases,
            "icc_a1": self.icc, "icc_a1_ci": None if self.icc_ci is None else list(self.icc_ci),
            "icc_c1": self.icc_consistency, "weighted_kappa_quadratic": self.weighted_kappa,
            "weighted_kappa_linear": self.weighted_kappa_linear, "cohen_kappa": self.kappa,
            "percent_agreement": self.percent_agreement, "mean_deviation": self.mean_deviation,
            "mean_abs_deviation": self.mean_abs_deviation, "max_abs_deviation": self.max_abs_deviation,
            "within_share": self.within_share, "cases_outside": list(self.outside_cases),
            "passed": self.passed, "marginal": self.marginal, "reasons": list(self.reasons),
        }


@dataclass(frozen=True)
class Round:
    day: date
    cases: int
    mean_deviation: float
    z: float
    chart: float
    """The chart statistic after this round (max(C+, C-) for the CUSUM, E for the EWMA)."""
    over_threshold: bool | None
    threshold_reason: str | None

    def to_json(self) -> dict[str, Any]:
        return {"date": self.day.isoformat(), "cases": self.cases, "mean_deviation": self.mean_deviation,
                "z": self.z, "chart": self.chart, "over_threshold": self.over_threshold,
                "threshold_reason": self.threshold_reason}


@dataclass(frozen=True)
class LimitsOfAgreement:
    n: int
    bias: float
    bias_ci: tuple[float, float]
    sd: float
    loa: tuple[float, float]
    lower_ci: tuple[float, float]
    upper_ci: tuple[float, float]

    def to_json(self) -> dict[str, Any]:
        return {"n": self.n, "bias": self.bias, "bias_ci": list(self.bias_ci), "sd": self.sd,
                "loa": list(self.loa), "loa_lower_ci": list(self.lower_ci), "loa_upper_ci": list(self.upper_ci),
                "ci_method": "exact, noncentral t (Carkeet 2015)"}


@dataclass(frozen=True)
class RaterResult:
    rater: str
    site: str
    pool: str
    instrument: str
    status: str
    on_roster: bool | None
    certification: Agreement | None
    attempts: tuple[Agreement, ...]
    rounds: tuple[Round, ...]
    first_signal: date | None
    signal_direction: str | None
    bland_altman: LimitsOfAgreement | None
    notes: tuple[str, ...]
    points: tuple[tuple[float, float], ...] = field(repr=False, default=())
    """(reference, deviation) of every rating, for the Bland–Altman plot."""

    @property
    def mean_deviation(self) -> float | None:
        if not self.rounds:
            return None
        total = sum(r.mean_deviation * r.cases for r in self.rounds)
        return total / sum(r.cases for r in self.rounds)

    def to_json(self) -> dict[str, Any]:
        return {
            "rater": self.rater, "site": self.site, "pool": self.pool, "instrument": self.instrument,
            "status": self.status, "on_roster": self.on_roster,
            "certification": None if self.certification is None else self.certification.to_json(),
            "certification_attempts": len(self.attempts),
            "bland_altman": None if self.bland_altman is None else self.bland_altman.to_json(),
            "first_signal": None if self.first_signal is None else self.first_signal.isoformat(),
            "signal_direction": self.signal_direction,
            "rounds": len(self.rounds), "mean_deviation": self.mean_deviation,
            "round_points": [r.to_json() for r in self.rounds], "notes": list(self.notes),
        }


@dataclass(frozen=True)
class GroupCheck:
    """The chart run on all raters together (of an instrument, or of one site)."""

    instrument: str
    site: str | None
    raters: int
    periods: int
    mean_deviation: float | None
    first_signal: date | None
    direction: str | None
    left_out: int = 0
    """Raters left out because their own chart signalled."""
    points: tuple[tuple[date, float], ...] = field(repr=False, default=())

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {"instrument": self.instrument}
        if self.site is not None:
            out["site"] = self.site
        out.update({"raters": self.raters, "left_out_with_own_signal": self.left_out, "periods": self.periods, "mean_deviation": self.mean_deviation,
                    "first_signal": None if self.first_signal is None else self.first_signal.isoformat(),
                    "direction": self.direction})
        return out


@dataclass(frozen=True)
class DueItem:
    rater: str
    instrument: str
    site: str
    due: date
    action: str
    reason: str
    code: str
    overdue: bool

    def to_json(self) -> dict[str, Any]:
        return {"rater": self.rater, "instrument": self.instrument, "site": self.site, "due": self.due.isoformat(),
                "action": self.action, "reason": self.reason, "code": self.code, "overdue": self.overdue}


@dataclass(frozen=True)
class ChartSummary:
    settings: ChartSettings
    in_control: float
    shifted: tuple[tuple[float, float], ...]
    arl_method: str

    def to_json(self) -> dict[str, Any]:
        return {"method": self.settings.method, "arl_in_control": self.in_control,
                "arl_shift": {f"{s:g}": arl for s, arl in self.shifted}, "arl_method": self.arl_method,
                "units": "monitoring rounds; shifts in SD of a round's mean deviation"}

    def plain_words(self, interval_weeks: float | None, basis: str = "") -> str:
        one_sd = dict(self.shifted).get(1.0)
        if interval_weeks:
            years = self.in_control * interval_weeks / WEEKS_PER_YEAR
            every = f"{interval_weeks:.3g} week{'s' if interval_weeks != 1 else ''}"
            text = (f"With a round every {every}{' ' + basis if basis else ''}, a stable rater is falsely flagged "
                    f"about once in {years:.0f} years ({self.in_control:.0f} rounds)")
        else:
            text = f"A stable rater is falsely flagged about once in {self.in_control:.0f} rounds"
        if one_sd is not None:
            text += f"; a 1-SD shift is caught after about {one_sd:.1f} rounds"
            if interval_weeks:
                text += f" (about {one_sd * interval_weeks:.0f} weeks)"
        return text + "."


@dataclass(frozen=True)
class DriftReport:
    as_of: date
    data_file: str
    data_sha256: str
    plan_file: str | None
    plan_sha256: str | None
    study: str | None
    rules: tuple[PoolRules, ...]
    chart: ChartSummary
    scale_sd: dict[str, tuple[float, str]]
    """instrument -> (SD, where it came from)."""
    raters: tuple[RaterResult, ...]
    group: tuple[GroupCheck, ...]
    sites: tuple[GroupCheck, ...]
    due: tuple[DueItem, ...]
    roster_missing: tuple[str, ...]
    not_on_roster: tuple[str, ...]
    notes: tuple[str, ...]
    within_days: int
    ignored_after_as_of: int
    round_spacing_days: dict[str, float] = field(default_factory=dict)
    """instrument -> median days between a rater's rounds in the data."""

    def plain_words(self, rule: PoolRules) -> str:
        """The chart's run lengths in calendar time: at the data's own round spacing when there
        are rounds, else at the pool's interval."""
        observed = [self.round_spacing_days[i] for i in rule.instruments if i in self.round_spacing_days]
        if observed:
            weeks = max(observed) / 7
            text = self.chart.plain_words(weeks, "as in the data")
            if rule.interval_weeks and abs(weeks - rule.interval_weeks) > 0.5:
                text += f" (The plan's interval is {rule.interval_weeks} weeks.)"
            return text
        return self.chart.plain_words(rule.interval_weeks, "as planned" if rule.source == "plan" else "")

    def counts(self) -> dict[str, int]:
        out = {code: 0 for code in STATUS_ORDER}
        for rater in self.raters:
            out[rater.status] += 1
        return out

    def needs_action(self, fail_on: str) -> bool:
        """Whether ``--fail-on`` turns this report into exit code 1."""
        if fail_on == "never":
            return False
        serious = any(r.status in ("failed-certification", "not-certified", "drifting") for r in self.raters)
        serious = serious or any(item.overdue for item in self.due)
        if fail_on == "error" or serious:
            return serious
        return bool(self.due or self.roster_missing or self.not_on_roster
                    or any(r.status == "insufficient-data" or (r.certification and r.certification.marginal)
                           for r in self.raters))

    def to_json(self) -> dict[str, Any]:
        chart = self.chart.settings
        settings: dict[str, Any] = {
            "method": chart.method, "scale_sd": {i: {"value": v, "source": s} for i, (v, s) in self.scale_sd.items()},
            "pools": [rule.to_json() for rule in self.rules],
            "criterion": self.rules[0].criterion.to_json() if len(self.rules) == 1 else None,
            "due_within_days": self.within_days, "min_cases": MIN_CASES,
            "round_spacing_days": dict(self.round_spacing_days),
        }
        if chart.method == "cusum":
            settings.update({"k": chart.k, "h": chart.h})
        else:
            settings.update({"lambda": chart.lam, "L": chart.L})
        settings["limit_solved_for_arl_in_control"] = chart.arl0
        by_instrument = {g.instrument: g.to_json() for g in self.group}
        return {
            "as_of": self.as_of.isoformat(),
            "data": {"file": self.data_file, "sha256": self.data_sha256, "rows_after_as_of_ignored": self.ignored_after_as_of},
            "plan": None if self.plan_file is None else {"file": self.plan_file, "sha256": self.plan_sha256},
            "settings": settings,
            "chart": self.chart.to_json(),
            "summary": self.counts(),
            "raters": [r.to_json() for r in self.raters],
            "group_shift": by_instrument,
            "sites": [s.to_json() for s in self.sites],
            "due": [d.to_json() for d in self.due],
            "roster": {"missing_from_data": list(self.roster_missing), "not_on_roster": list(self.not_on_roster)},
            "notes": list(self.notes),
            "caution": CAUTION,
        }


# ----------------------------------------------------------------------------- analysis


def _agreement(ratings: Sequence[Rating], rule: PassRule, scale_type: str, tolerance: float | None) -> Agreement:
    import numpy as np

    from protolint import stats

    score = np.array([r.score for r in ratings])
    reference = np.array([r.reference for r in ratings])
    deviation = score - reference
    n = len(ratings)
    icc_value = icc_c = None
    icc_ci: tuple[float, float] | None = None
    kappa_q = kappa_l = kappa = None
    pair = np.column_stack([score, reference])
    if n >= 2:
        try:
            result = stats.icc(pair)
            form = result["ICC(A,1)"]
            icc_value, icc_ci = form.value, (form.ci.low, form.ci.high)
            icc_c = result["ICC(C,1)"].value
        except (ValueError, ZeroDivisionError, FloatingPointError):
            pass
    if scale_type != "interval" and n >= 2:
        for weights in ("quadratic", "linear", "unweighted"):
            try:
                value = stats.cohen_kappa(pair, weights=weights).value
            except (ValueError, ZeroDivisionError, FloatingPointError):
                value = None
            if weights == "quadratic":
                kappa_q = value
            elif weights == "linear":
                kappa_l = value
            else:
                kappa = value
    absdev = np.abs(deviation)
    within_share = outside = None
    if tolerance is not None:
        inside = absdev <= tolerance + 1e-9
        within_share = float(inside.mean())
        outside = tuple(r.case for r, ok in zip(ratings, inside) if not ok)
    base = Agreement(
        day=ratings[0].day, cases=n, icc=_finite(icc_value), icc_ci=icc_ci, icc_consistency=_finite(icc_c),
        weighted_kappa=_finite(kappa_q), kappa=_finite(kappa), percent_agreement=float(np.mean(deviation == 0)),
        mean_deviation=float(deviation.mean()), mean_abs_deviation=float(absdev.mean()),
        max_abs_deviation=float(absdev.max()), within_share=within_share, outside_cases=outside or (),
        passed=None, marginal=False, reasons=(), weighted_kappa_linear=_finite(kappa_l))
    passed, marginal, reasons = _judge(base, rule)
    return dataclasses.replace(base, passed=passed, marginal=marginal, reasons=reasons)


def _finite(value: float | None) -> float | None:
    return value if value is not None and math.isfinite(value) else None


def _judge(result: Agreement, rule: PassRule) -> tuple[bool | None, bool, tuple[str, ...]]:
    """Pass or fail by ``rule``; ``marginal`` when a coefficient passes on its estimate but more
    than half of its confidence interval lies below the minimum."""
    if result.cases < MIN_CASES:
        return None, False, (f"only {plural(result.cases, 'case')}; at least {MIN_CASES} are needed to judge",)
    verdicts: list[bool] = []
    reasons: list[str] = []
    marginal = False
    if rule.coefficient is not None and rule.minimum is not None:
        value, ci = result.coefficient(rule.coefficient)
        if value is None:
            reasons.append(f"{rule.coefficient} is undefined for these ratings (no spread in the scores)")
            return None, False, tuple(reasons)
        ok = value >= rule.minimum
        verdicts.append(ok)
        reasons.append(f"{rule.coefficient} {value:.3f} {'>=' if ok else '<'} {rule.minimum:g}")
        if ok and ci is not None and ci[1] > ci[0]:
            below = (min(rule.minimum, ci[1]) - ci[0]) / (ci[1] - ci[0])
            if below > 0.5:
                marginal = True
                reasons.append(f"but {below * 100:.0f} % of its 95 % interval [{ci[0]:.2f}, {ci[1]:.2f}] lies below "
                               f"{rule.minimum:g}")
    if rule.max_deviation is not None and result.within_share is not None:
        need = 1.0 if rule.within_fraction is None else rule.within_fraction
        ok = result.within_share >= need - 1e-9
        verdicts.append(ok)
        text = f"{result.within_share * 100:.0f} % of cases within {rule.max_deviation:g} points (need {need * 100:g} %)"
        if result.outside_cases:
            text += f"; outside: {', '.join(result.outside_cases)}"
        reasons.append(text)
    if not verdicts:
        return None, False, ("no pass rule applies",)
    return all(verdicts), marginal, tuple(reasons)


def _pooled_sd(groups: Iterable[Sequence[float]]) -> tuple[float, int]:
    squares = 0.0
    df = 0
    for values in groups:
        if len(values) < 2:
            continue
        mean = sum(values) / len(values)
        squares += sum((v - mean) ** 2 for v in values)
        df += len(values) - 1
    return (math.sqrt(squares / df) if df else float("nan")), df


def _by_date(ratings: Iterable[Rating]) -> list[list[Rating]]:
    groups: dict[date, list[Rating]] = defaultdict(list)
    for rating in ratings:
        groups[rating.day].append(rating)
    return [groups[day] for day in sorted(groups)]


@dataclass
class _RaterInput:
    rater: str
    instrument: str
    pool: str
    site: str
    certification: list[Rating] = field(default_factory=list)
    monitoring: list[Rating] = field(default_factory=list)
    sites: set[str] = field(default_factory=set)


# The instrument of ratings whose data has no instrument column, judged without a plan: shown
# as "-" where a table has an instrument column, and in words by instrument_words.
UNNAMED_INSTRUMENT = "-"


def instrument_words(instrument: str) -> str:
    """The instrument as a sentence names it: "instrument HLSC8", or "the ratings (the data has
    no instrument column)" for :data:`UNNAMED_INSTRUMENT`."""
    if instrument == UNNAMED_INSTRUMENT:
        return "the ratings (the data has no instrument column)"
    return f"instrument {instrument}"


def _assign(data: RatingData, plan: Plan | None, options: Options) -> dict[tuple[str, str], _RaterInput]:
    roster = {r.id: r for r in plan.roster} if plan else {}
    pools = {p.id: p for p in plan.rater_pools} if plan else {}
    if options.pool is not None and plan is not None and options.pool not in pools:
        raise ProtolintError(f"drift: --pool {options.pool!r} is not a rater pool of the plan "
                             f"(pools: {', '.join(pools) or 'none'})")
    by_instrument: dict[str, list[str]] = defaultdict(list)
    for pool in pools.values():
        for rated in pool.instruments:
            by_instrument[rated].append(pool.id)
    groups: dict[tuple[str, str], _RaterInput] = {}
    for rating in data.ratings:
        pool_id = _pool_of(rating, plan, roster, pools, by_instrument, options, data.file)
        if pool_id is None:
            continue
        if rating.instrument is None:
            if plan is None:
                instrument = UNNAMED_INSTRUMENT
            else:
                choices = pools[pool_id].instruments
                if len(choices) != 1:
                    raise LocatedError(data.file, rating.line, None, f"instrument is empty and pool {pool_id!r} rates "
                                       f"{', '.join(choices)}; add an instrument column")
                instrument = choices[0]
        else:
            instrument = rating.instrument
        if plan is not None and instrument not in pools[pool_id].instruments:
            raise LocatedError(data.file, rating.line, None, f"instrument {instrument!r} is not rated by pool "
                               f"{pool_id!r} ({', '.join(pools[pool_id].instruments)})")
        key = (rating.rater, instrument)
        entry = groups.get(key)
        if entry is None:
            entry = groups[key] = _RaterInput(rating.rater, instrument, pool_id, rating.site)
        entry.sites.add(rating.site)
        (entry.monitoring if rating.kind == "monitoring" else entry.certification).append(rating)
    return groups


def _pool_of(rating: Rating, plan: Plan | None, roster: dict[str, Any], pools: dict[str, Any],
             by_instrument: dict[str, list[str]], options: Options, file: str) -> str | None:
    if plan is None:
        return options.pool or "all"
    member = roster.get(rating.rater)
    if member is not None:
        pool_id = member.pool
    elif options.pool is not None:
        pool_id = options.pool
    elif rating.instrument is not None and len(by_instrument.get(rating.instrument, ())) == 1:
        pool_id = by_instrument[rating.instrument][0]
    elif len(pools) == 1:
        pool_id = next(iter(pools))
    else:
        raise LocatedError(file, rating.line, None, f"rater {rating.rater!r} is not on the plan's roster and the row "
                           "does not say which pool they belong to; give --pool or an instrument column")
    if options.pool is not None and pool_id != options.pool:
        return None
    return pool_id


def analyse(data: RatingData, loaded: LoadedPlan | None, options: Options) -> DriftReport:
    """Judge every rater in ``data`` against the plan (or the options) as of ``options.as_of``."""
    from protolint.stats import drift as charts
    from protolint.stats.bland_altman import bland_altman

    plan = loaded.plan if loaded is not None else None
    as_of = options.as_of or data.latest
    kept = tuple(r for r in data.ratings if r.day <= as_of)
    if not kept:
        raise ProtolintError(f"drift: no ratings on or before --as-of {as_of}")
    ignored = len(data.ratings) - len(kept)
    data = RatingData(data.file, data.sha256, kept, data.has_instrument)
    groups = _assign(data, plan, options)
    if not groups:
        raise ProtolintError(f"drift: no ratings of pool {options.pool!r} in {data.file}")

    rules: dict[str, PoolRules] = {}
    if plan is None:
        instruments = sorted({key[1] for key in groups})
        rules[options.pool or "all"] = _option_rules(options, instruments)
    else:
        for pool_id in sorted({g.pool for g in groups.values()}):
            rules[pool_id] = _plan_rules(plan, plan.pool(pool_id), options)

    settings = chart_settings(options)
    if settings.method == "cusum":
        assert settings.k is not None and settings.h is not None
        run = charts.cusum_run_lengths(settings.k, settings.h, SHIFTS)
    else:
        assert settings.lam is not None and settings.L is not None
        run = charts.ewma_run_lengths(settings.lam, settings.L, SHIFTS)
    chart_summary = ChartSummary(settings, run.in_control, run.shifted, run.method)

    notes: list[str] = []
    # Certification first: its deviations give the default scale.
    attempts: dict[tuple[str, str], tuple[Agreement, ...]] = {}
    for key, entry in groups.items():
        rule = rules[entry.pool]
        scale_type = rule.scale_type.get(entry.instrument, "interval")
        attempts[key] = tuple(_agreement(group, rule.criterion, scale_type, rule.criterion.max_deviation)
                              for group in _by_date(entry.certification))

    scale_sd: dict[str, tuple[float, str]] = {}
    for instrument in sorted({key[1] for key in groups}):
        if options.scale_sd is not None:
            scale_sd[instrument] = (options.scale_sd, "--scale-sd")
            continue
        keys = [key for key in groups if key[1] == instrument]
        passed = [key for key in keys if attempts[key] and attempts[key][-1].passed]
        chosen = passed or keys
        sd, df = _pooled_sd([r.deviation for r in groups[key].certification] for key in chosen)
        if not df or not sd > 0:
            who = "certified rater" if passed else "rater"
            why = (f"no {who} has more than one certification rating" if not df else
                   f"each {who}'s certification ratings deviate from the reference by the same amount "
                   f"(pooled within-rater SD 0 on {df} degrees of freedom)")
            raise ProtolintError(f"drift: cannot estimate the SD that standardises the deviations of "
                                 f"{instrument_words(instrument)}: {why}; give --scale-sd")
        scale_sd[instrument] = (sd, f"pooled within-rater SD of certification deviations, "
                                    f"{plural(len(chosen), 'certified rater' if passed else 'rater')}, {df} df")

    roster = {r.id: r for r in plan.roster} if plan else {}
    results: list[RaterResult] = []
    due: list[DueItem] = []
    round_points: dict[tuple[str, str], list[tuple[date, float]]] = {}
    for key in sorted(groups):
        entry = groups[key]
        rule = rules[entry.pool]
        rater_notes: list[str] = []
        if len(entry.sites) > 1:
            rater_notes.append(f"rated at several sites ({', '.join(sorted(entry.sites))}); reported under {entry.site}")
        sd = scale_sd[entry.instrument][0]
        scale_type = rule.scale_type.get(entry.instrument, "interval")
        rounds_raw = _by_date(entry.monitoring)
        z = [sum(r.deviation for r in group) / len(group) * math.sqrt(len(group)) / sd for group in rounds_raw]
        round_points[key] = [(group[0].day, value) for group, value in zip(rounds_raw, z)]
        stat: list[float] = []
        signal = None
        if z and settings.method == "cusum":
            cusum_path = charts.cusum(z, settings.k or 0.0, settings.h or 1.0)
            stat, signal = [max(u, l) for u, l in zip(cusum_path.upper, cusum_path.lower)], cusum_path.signal
        elif z:
            ewma_path = charts.ewma(z, settings.lam or 0.2, settings.L or 3.0)
            stat, signal = list(ewma_path.statistic), ewma_path.signal
        signal_day: date | None = None
        direction: str | None = None
        if signal is not None and signal.index is not None:
            signal_day = rounds_raw[signal.index][0].day
            direction = signal.direction
        rounds = []
        for group, value, chart_value in zip(rounds_raw, z, stat):
            over = reason = None
            if rule.drift_threshold is not None:
                check = _agreement(group, rule.drift_threshold, scale_type, rule.drift_threshold.max_deviation)
                over = None if check.passed is None else not check.passed
                reason = "; ".join(check.reasons)
            rounds.append(Round(group[0].day, len(group), sum(r.deviation for r in group) / len(group), value,
                                chart_value, over, reason))
        tried = attempts[key]
        latest = tried[-1] if tried else None
        if rule.attempts is not None and len(tried) > rule.attempts:
            rater_notes.append(f"{len(tried)} certification attempts; the plan allows {rule.attempts}")
        everything = entry.certification + entry.monitoring
        limits = None
        if len(everything) >= MIN_CASES:
            try:
                ba = bland_altman([r.score for r in everything], [r.reference for r in everything])
                limits = LimitsOfAgreement(ba.n, ba.bias, (ba.bias_ci.low, ba.bias_ci.high), ba.sd,
                                           (ba.lower.value, ba.upper.value), (ba.lower.ci.low, ba.lower.ci.high),
                                           (ba.upper.ci.low, ba.upper.ci.high))
            except ValueError:
                limits = None
        certified_day = _last_pass_day(tried)
        failed_rounds = [r for r in rounds if r.over_threshold and (certified_day is None or r.day > certified_day)]
        if latest is None:
            status = "not-certified"
        elif latest.passed is False:
            status = "failed-certification"
        elif latest.passed is None:
            status = "insufficient-data"
        elif signal_day is not None or failed_rounds:
            status = "drifting"
        else:
            status = "ok"
        member = roster.get(entry.rater)
        if member is not None and member.site is not None and member.site != entry.site:
            rater_notes.append(f"the roster places this rater at {member.site}, the data at {entry.site}")
        if member is not None and latest is None and member.certifications:
            rater_notes.append("the roster records a certification, but the data has no certification ratings")
        result = RaterResult(
            rater=entry.rater, site=entry.site, pool=entry.pool, instrument=entry.instrument, status=status,
            on_roster=(entry.rater in roster) if plan else None, certification=latest, attempts=tried,
            rounds=tuple(rounds), first_signal=signal_day, signal_direction=direction, bland_altman=limits,
            notes=tuple(rater_notes),
            points=tuple((r.reference, r.deviation) for r in everything))
        results.append(result)
        due.extend(_due_items(result, entry, rule, plan, as_of, options.within_days, failed_rounds))

    results.sort(key=lambda r: (STATUS_ORDER.index(r.status), r.rater, r.instrument))
    spacing = round_spacing(groups)
    # A rater who drifts on their own would pull the group along; the shared-shift check is
    # about the others, so raters with their own signal are left out of it (and counted).
    flagged = {(r.rater, r.instrument) for r in results if r.first_signal is not None}
    group_checks, site_checks = _group_checks(groups, round_points, spacing, settings, flagged)
    roster_missing: tuple[str, ...] = ()
    not_on_roster: tuple[str, ...] = ()
    if plan is not None:
        pools_seen = set(rules)
        seen = {key[0] for key in groups}
        roster_missing = tuple(sorted(r.id for r in plan.roster if r.pool in pools_seen and r.id not in seen))
        not_on_roster = tuple(sorted(rater for rater in seen if rater not in roster))
    if ignored:
        notes.append(f"{plural(ignored, 'rating')} dated after {as_of} {'was' if ignored == 1 else 'were'} left out")
    due.sort(key=lambda d: (not d.overdue, d.due, d.rater))
    return DriftReport(
        as_of=as_of, data_file=data.file, data_sha256=data.sha256,
        plan_file=loaded.source.file if loaded else None, plan_sha256=loaded.source.sha256 if loaded else None,
        study=plan.study.id if plan else None, rules=tuple(rules.values()), chart=chart_summary, scale_sd=scale_sd,
        raters=tuple(results), group=group_checks, sites=site_checks, due=tuple(due),
        roster_missing=roster_missing, not_on_roster=not_on_roster, notes=tuple(notes),
        within_days=options.within_days, ignored_after_as_of=ignored, round_spacing_days=spacing)


def _last_pass_day(attempts: Sequence[Agreement]) -> date | None:
    passed = [a.day for a in attempts if a.passed]
    return passed[-1] if passed else None


def _due_items(result: RaterResult, entry: _RaterInput, rule: PoolRules, plan: Plan | None, as_of: date,
               within_days: int, failed_rounds: Sequence[Round]) -> list[DueItem]:
    horizon = as_of + timedelta(days=within_days)
    items: list[DueItem] = []

    def add(day: date, action: str, reason: str, code: str) -> None:
        if day <= horizon:
            items.append(DueItem(result.rater, result.instrument, result.site, day, action, reason, code, day < as_of))

    after_monitoring = "recertify" if "failed-monitoring" in rule.triggers else "recalibrate"
    latest = result.certification
    if result.status == "not-certified":
        first = min(r.day for r in entry.monitoring)
        add(first, "certify", f"rates since {first} without a certification in the data", "not-certified")
    elif latest is not None and latest.passed is False:
        add(latest.day, "recertify", f"failed certification on {latest.day}: {'; '.join(latest.reasons)}",
            "failed-certification")
    if result.first_signal is not None:
        add(result.first_signal, after_monitoring,
            f"drift signal on {result.first_signal} (scores {result.signal_direction} against the reference)",
            "drift-signal")
    for bad in failed_rounds[:1]:
        add(bad.day, after_monitoring, f"monitoring round on {bad.day} outside the drift threshold: "
            f"{bad.threshold_reason}", "failed-round")
    certified = _last_pass_day(result.attempts)
    if certified is not None and rule.recertify_months:
        due_day = add_months(certified, rule.recertify_months)
        add(due_day, "recertify", f"{rule.recertify_months}-month interval since certification on {certified}",
            "interval")
    if certified is not None and plan is not None and plan.protocol is not None and "amendment" in rule.triggers:
        for amendment in plan.protocol.amendments:
            touches = not amendment.affects_instruments or result.instrument in amendment.affects_instruments
            if touches and amendment.effective > certified:
                add(amendment.effective, "recertify", f"protocol amendment {amendment.id} effective "
                    f"{amendment.effective} changes {result.instrument}", "amendment")
    items.extend(_missed_rounds(result, entry, rule, plan, as_of, certified))
    return items


def _missed_rounds(result: RaterResult, entry: _RaterInput, rule: PoolRules, plan: Plan | None, as_of: date,
                   certified: date | None) -> list[DueItem]:
    # Only a rater in good standing is expected at rounds; a failed or missing certification
    # is already on the due list.
    start = certified
    if start is None or result.status in ("failed-certification", "not-certified") or not rule.interval_weeks:
        return []
    days = sorted({r.day for r in entry.monitoring})
    out: list[DueItem] = []
    if plan is not None and rule.source == "plan":
        rounds: Sequence[MonitoringRound] = monitoring_rounds(plan, plan.pool(result.pool)).get(
            result.site, monitoring_rounds(plan, plan.pool(result.pool)).get(CENTRAL, ()))
        for planned in rounds:
            if planned.due >= as_of or planned.due < start:
                continue
            if not any(planned.covers_from <= day <= planned.due for day in days):
                out.append(DueItem(result.rater, result.instrument, result.site, planned.due, "attend monitoring round",
                                   f"no monitoring ratings for round {planned.number} of the plan "
                                   f"({planned.covers_from} to {planned.due})", "missed-round", True))
        return out
    last = days[-1] if days else start
    next_due = last + timedelta(weeks=rule.interval_weeks)
    if next_due < as_of:
        out.append(DueItem(result.rater, result.instrument, result.site, next_due, "attend monitoring round",
                           f"no monitoring round since {last} (every {rule.interval_weeks} weeks)", "missed-round", True))
    return out


def round_spacing(groups: dict[tuple[str, str], _RaterInput]) -> dict[str, float]:
    """Median days between a rater's consecutive monitoring rounds, per instrument (the data's
    own rhythm, which may be closer than the plan's minimum interval)."""
    gaps: dict[str, list[int]] = defaultdict(list)
    for (_, instrument), entry in groups.items():
        days = sorted({r.day for r in entry.monitoring})
        gaps[instrument].extend((b - a).days for a, b in zip(days, days[1:]))
    out = {}
    for instrument, values in gaps.items():
        if values:
            values.sort()
            middle = len(values) // 2
            out[instrument] = float(values[middle] if len(values) % 2 else (values[middle - 1] + values[middle]) / 2)
    return out


def _group_checks(groups: dict[tuple[str, str], _RaterInput], points: dict[tuple[str, str], list[tuple[date, float]]],
                  spacing: dict[str, float], settings: ChartSettings,
                  flagged: set[tuple[str, str]]) -> tuple[tuple[GroupCheck, ...], tuple[GroupCheck, ...]]:
    """The round points of raters without their own signal, binned into periods of the data's
    median round spacing."""
    from protolint.stats import drift as charts

    def check(instrument: str, site: str | None, every: list[tuple[str, str]]) -> GroupCheck:
        keys = [key for key in every if key not in flagged]
        left_out = len(every) - len(keys)
        series = [p for key in keys for p in points[key]]
        if not series:
            return GroupCheck(instrument, site, len(keys), 0, None, None, None, left_out)
        period_days = spacing.get(instrument) or 7 * DEFAULT_INTERVAL_WEEKS
        origin = min(day for day, _ in series)
        periods: dict[int, list[tuple[date, float]]] = defaultdict(list)
        for day, value in series:
            periods[int((day - origin).days // period_days)].append((day, value))
        ordered = [periods[i] for i in sorted(periods)]
        z = [sum(v for _, v in group) / math.sqrt(len(group)) for group in ordered]
        ends = [max(day for day, _ in group) for group in ordered]
        if settings.method == "cusum":
            signal = charts.cusum(z, settings.k or 0.0, settings.h or 1.0).signal
        else:
            signal = charts.ewma(z, settings.lam or 0.2, settings.L or 3.0).signal
        deviations = [r.deviation for key in keys for r in groups[key].monitoring]
        return GroupCheck(instrument, site, len(keys), len(ordered),
                          sum(deviations) / len(deviations) if deviations else None,
                          None if signal.index is None else ends[signal.index], signal.direction,
                          left_out, tuple(zip(ends, z)))

    instruments = sorted({key[1] for key in groups})
    whole = tuple(check(i, None, [k for k in groups if k[1] == i]) for i in instruments)
    sites = tuple(check(i, s, [k for k in groups if k[1] == i and groups[k].site == s])
                  for i in instruments for s in sorted({groups[k].site for k in groups if k[1] == i}))
    return whole, sites
