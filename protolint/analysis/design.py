"""From pilot ratings to the cheapest design that keeps the planned power (``protolint design``).

Pipeline: a long-form pilot file (``subject, rater[, occasion], score``) -> rows with their line
numbers (:func:`read_rows`, the only function that touches the file) -> validated ratings
(:func:`pilot_from_rows`) -> a balanced array for one design, with what was dropped said in
words (:func:`arrange`) -> the G-study (``stats.gtheory``) -> D-study coefficients for every
number of raters k and occasions m -> for each (k, m) the reliability-adjusted two-group sample
size (``stats.power.sample_size_two_group``, the function ``protolint size`` uses, attenuation
d·√ρ) and the cost N × (participant + m × occasion + k × m × rating), N being the participants
to enrol.
"""

from __future__ import annotations

import math
from collections import Counter
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from protolint import CAUTION
from protolint.data.rawfile import MAX_CELLS, MAX_DATA_BYTES
from protolint.data.source import parse_number
from protolint.errors import LocatedError, ProtolintError
from protolint.stats.gtheory import DESIGNS, GStudy, g_study
from protolint.wording import plural

if TYPE_CHECKING:
    from protolint.analysis.design_plan import PlanInputs
    from protolint.data.roles import ReadOptions

COEFFICIENTS = ("g", "phi")

# Bounds (ours): the crossed designs' subjects x raters x occasions array, and the raters and
# occasions the optimiser searches (50 x 50 = 2,500 solver calls, about a second).
MAX_CUBE_CELLS = 6_000_000
MAX_SEARCH = 50
LIMITS_HELP = (f"Limits: a pilot file of at most {MAX_DATA_BYTES // 2**20} MiB and {MAX_CELLS:,} cells; at most {MAX_CUBE_CELLS:,} subjects x raters x occasions "
               f"in a crossed design; --max-raters and --max-occasions up to {MAX_SEARCH}.")

# JSON names of the G-study effects (Brennan's notation -> the report's words).
COMPONENT_KEYS: dict[str, str] = {
    "p": "subject",
    "r": "rater",
    "o": "occasion",
    "pr": "subject:rater",
    "po": "subject:occasion",
    "ro": "rater:occasion",
    "pro,e": "residual",
    "pr,e": "residual",
    "r:p": "rater:subject",
}

COMPONENT_WORDS: dict[str, str] = {
    "p": "participants (true differences)",
    "r": "raters (severity or leniency)",
    "o": "occasions",
    "pr": "participant x rater",
    "po": "participant x occasion",
    "ro": "rater x occasion",
    "pro,e": "participant x rater x occasion, residual",
    "pr,e": "participant x rater, residual",
    "r:p": "raters within participants, residual",
}

# The roles of a pilot file's columns (one row per rating); --subject … name other columns.
PILOT_COLUMNS = ("subject", "rater", "occasion", "score")
_REQUIRED = ("subject", "rater", "score")


# --------------------------------------------------------------------------- input

def read_rows(path: str, read_options: ReadOptions | None = None) -> list[tuple[int, list[str]]]:
    """The rows of a pilot file with their row numbers (header first), columns named like the
    roles: every format, sheet, column mapping and row filter through the shared data reader
    (its size and cell limits, strict decoding and located errors), so the validation below
    is the only design-specific part."""
    from protolint.data.records import read_role_rows

    return read_role_rows(path, read_options, PILOT_COLUMNS, skip_missing_score=False)[0]


@dataclass(frozen=True)
class PilotRatings:
    """Validated long-form pilot ratings (one row per rating).

    ``subject``, ``rater`` and ``occasion`` hold indices into ``subjects``, ``raters`` and
    ``occasions`` (all zero when the file has no occasion column); ``line`` is each rating's
    file line.
    """

    path: str
    subjects: tuple[str, ...]
    raters: tuple[str, ...]
    occasions: tuple[str, ...]
    has_occasion_column: bool
    subject: np.ndarray
    rater: np.ndarray
    occasion: np.ndarray
    score: np.ndarray
    line: np.ndarray
    missing_scores: int

    @property
    def n_ratings(self) -> int:
        return int(self.score.size)


def pilot_from_rows(path: str, rows: list[tuple[int, list[str]]]) -> PilotRatings:
    """Validate rows of strings (header first) into :class:`PilotRatings`.

    Raises
    ------
    LocatedError
        ``file:line: message`` for a missing column, an empty id, a score that
        is not a finite number, a repeated rating or too few subjects.
    """
    if not rows:
        raise LocatedError(path, 1, None, "the file is empty; expected a header row: subject,rater,occasion,score (occasion optional)")
    # The reader has refused ragged rows, a wrong delimiter and a column named twice; the
    # header holds the roles it found, in the order of PILOT_COLUMNS.
    header_line, header = rows[0]
    names = [cell.strip().lower() for cell in header]
    for required in _REQUIRED:
        if required not in names:
            raise LocatedError(path, header_line, None,
                               f"no {required!r} column; the header must name subject, rater, score (and optionally occasion), "
                               f"or --{required} must name its column; found {', '.join(names) or 'none of them'}")
    col = {name: names.index(name) for name in PILOT_COLUMNS if name in names}
    has_occasion = "occasion" in col
    subject_ids: dict[str, int] = {}
    rater_ids: dict[str, int] = {}
    occasion_ids: dict[str, int] = {}
    seen: dict[tuple[int, int, int], int] = {}
    subj: list[int] = []
    rat: list[int] = []
    occ: list[int] = []
    scores: list[float] = []
    lines: list[int] = []
    missing = 0
    for line, row in rows[1:]:
        subject = row[col["subject"]].strip()
        rater = row[col["rater"]].strip()
        occasion = row[col["occasion"]].strip() if has_occasion else "1"
        cell = row[col["score"]].strip()
        for what, value in (("subject", subject), ("rater", rater), ("occasion", occasion)):
            if not value:
                raise LocatedError(path, line, None, f"empty {what}; every rating needs a {what} id")
        if not cell:
            missing += 1
            continue
        try:
            score = parse_number(cell)
        except ValueError as error:
            raise LocatedError(path, line, None, f"score {error}; leave it empty for a missing rating") from None
        key = (subject_ids.setdefault(subject, len(subject_ids)), rater_ids.setdefault(rater, len(rater_ids)),
               occasion_ids.setdefault(occasion, len(occasion_ids)))
        if key in seen:
            where = f", occasion {occasion!r}" if has_occasion else ""
            raise LocatedError(path, line, None,
                               f"subject {subject!r}, rater {rater!r}{where} is already rated on line {seen[key]}; one score per cell")
        seen[key] = line
        subj.append(key[0])
        rat.append(key[1])
        occ.append(key[2])
        scores.append(score)
        lines.append(line)
    if len(subject_ids) < 2:
        raise LocatedError(path, rows[-1][0], None, f"found {plural(len(subject_ids), 'subject')} with a score; a G-study needs at least 2")
    return PilotRatings(
        path=path,
        subjects=tuple(subject_ids),
        raters=tuple(rater_ids),
        occasions=tuple(occasion_ids),
        has_occasion_column=has_occasion,
        subject=np.asarray(subj, dtype=np.intp),
        rater=np.asarray(rat, dtype=np.intp),
        occasion=np.asarray(occ, dtype=np.intp),
        score=np.asarray(scores, dtype=np.float64),
        line=np.asarray(lines, dtype=np.intp),
        missing_scores=missing,
    )


def read_pilot(path: str, read_options: ReadOptions | None = None) -> PilotRatings:
    """Read and validate a pilot file (``read_options``: the sheet, column roles and filters
    of ``--sheet``, ``--subject`` …)."""
    return pilot_from_rows(path, read_rows(path, read_options))


def file_sha256(path: str) -> str:
    """SHA-256 of the pilot file (read within the data size limit)."""
    from protolint.data.rawfile import read_limited

    return read_limited(path).sha256


# --------------------------------------------------------------------------- design and G-study

@dataclass(frozen=True)
class Dropped:
    """What was left out to make the data balanced."""

    subjects: tuple[str, ...]
    of: int
    reason: str | None
    missing_scores: int

    @property
    def used(self) -> int:
        return self.of - len(self.subjects)

    def note(self) -> str | None:
        parts = []
        if self.missing_scores:
            parts.append(f"{plural(self.missing_scores, 'row')} with an empty score ignored")
        if self.subjects:
            parts.append(f"dropped {plural(len(self.subjects), 'subject')} {self.reason}; {self.used} of {self.of} used")
        return "; ".join(parts) or None

    def to_json(self) -> dict[str, Any]:
        return {"subjects": len(self.subjects), "used": self.used, "of": self.of, "ids": list(self.subjects),
                "reason": self.reason, "missing_scores": self.missing_scores, "note": self.note()}


@dataclass(frozen=True)
class Arrangement:
    """The pilot as one balanced array of the chosen design."""

    design: str
    detected: bool
    scores: np.ndarray
    subjects: tuple[str, ...]
    raters: tuple[str, ...]
    occasions: tuple[str, ...]
    dropped: Dropped
    notes: tuple[str, ...]


def detect_design(pilot: PilotRatings) -> str:
    """``"r:p"`` when no rater rated two subjects; else crossed, with occasions when there are several."""
    subjects_per_rater = np.bincount(
        np.unique(np.stack([pilot.rater, pilot.subject]), axis=1)[0], minlength=len(pilot.raters))
    if (subjects_per_rater <= 1).all():
        return "r:p"
    return "p x r x o" if len(pilot.occasions) > 1 else "p x r"


def arrange(pilot: PilotRatings, design: str | None = None) -> Arrangement:
    """Balance the pilot for ``design`` (detected when None), dropping incomplete subjects.

    Raises
    ------
    ProtolintError
        When the data cannot support the design (say why), or fewer than 2 subjects remain.
    """
    detected = design is None
    chosen = detect_design(pilot) if design is None else design
    if chosen not in DESIGNS:
        raise ProtolintError(f"design must be one of {', '.join(DESIGNS)}, got {chosen!r}")
    n_subjects = len(pilot.subjects)
    n_occasions = len(pilot.occasions)
    notes: list[str] = []
    if chosen == "p x r" and n_occasions > 1:
        raise ProtolintError(f"{pilot.path}: the pilot has {n_occasions} occasions; use --design 'p x r x o' "
                             "(or give the ratings of one occasion)")
    if chosen == "p x r x o" and n_occasions < 2:
        raise ProtolintError(f"{pilot.path}: design p x r x o needs ratings on at least 2 occasions, "
                             f"the file has {n_occasions}{'' if pilot.has_occasion_column else ' (no occasion column)'}")
    if chosen == "r:p":
        if n_occasions > 1:
            raise ProtolintError(f"{pilot.path}: raters nested in subjects on {n_occasions} occasions is not supported; "
                                 "give the ratings of one occasion")
        if not detected and detect_design(pilot) != "r:p":
            notes.append("rater identity ignored (--design r:p): each subject's ratings are treated as made by raters of its own")
        return _arrange_nested(pilot, detected, notes)

    shape = (n_subjects, len(pilot.raters), n_occasions)
    if math.prod(shape) > MAX_CUBE_CELLS:
        raise ProtolintError(
            f"{pilot.path}: {n_subjects:,} subjects x {len(pilot.raters):,} raters x {n_occasions:,} occasions is more "
            f"than the {MAX_CUBE_CELLS:,} cells a crossed G-study is computed on; a pilot where raters differ between "
            "subjects is --design r:p, and a crossed pilot has a few raters and occasions")
    cube = np.full(shape, np.nan)
    cube[pilot.subject, pilot.rater, pilot.occasion] = pilot.score
    complete = ~np.isnan(cube).reshape(n_subjects, -1).any(axis=1)
    kept = np.flatnonzero(complete)
    dropped = tuple(pilot.subjects[i] for i in np.flatnonzero(~complete))
    cells = "rater" if n_occasions == 1 else "rater x occasion"
    nested_hint = ("--design r:p treats each subject's ratings as made by raters of its own "
                   "(rater and residual variance are then confounded)")
    if kept.size < 2:
        per_rater = np.bincount(pilot.rater, minlength=len(pilot.raters))
        hint = f" (no rater rated more than one subject: use {nested_hint})" if detect_design(pilot) == "r:p" else (
            f"; the fewest-rated rater, {pilot.raters[int(per_rater.argmin())]!r}, has "
            f"{plural(int(per_rater.min()), 'rating')}; if raters differ between subjects, {nested_hint}")
        raise ProtolintError(
            f"{pilot.path}: only {kept.size} of {n_subjects} subjects have a score in every {cells} cell; "
            f"design {chosen} needs at least 2 complete subjects{hint}")
    if len(dropped) > n_subjects / 2:
        notes.append(f"more than half of the subjects were dropped for missing cells; if raters differ between "
                     f"subjects, {nested_hint}")
    array = cube[kept] if chosen == "p x r x o" else cube[kept, :, 0]
    return Arrangement(chosen, detected, array, tuple(pilot.subjects[i] for i in kept), pilot.raters, pilot.occasions,
                       Dropped(dropped, n_subjects, f"with missing {cells} cells", pilot.missing_scores), tuple(notes))


def _arrange_nested(pilot: PilotRatings, detected: bool, notes: list[str]) -> Arrangement:
    counts = np.bincount(pilot.subject, minlength=len(pilot.subjects))
    tally = Counter(int(c) for c in counts)
    # The most common number of ratings per subject; on a tie the larger, which keeps more ratings.
    n_r = max(tally, key=lambda c: (tally[c], c))
    if n_r < 2:
        raise ProtolintError(f"{pilot.path}: most subjects have one rating; raters nested in subjects (r:p) "
                             "needs at least 2 ratings per subject")
    keep = np.flatnonzero(counts == n_r)
    if keep.size < 2:
        raise ProtolintError(f"{pilot.path}: only {plural(int(keep.size), 'subject')} {'has' if keep.size == 1 else 'have'} {n_r} ratings; r:p needs at least 2")
    order = np.argsort(pilot.subject, kind="stable")
    by_subject = np.split(pilot.score[order], np.cumsum(counts)[:-1])
    array = np.stack([by_subject[i] for i in keep])
    dropped = tuple(pilot.subjects[i] for i in np.flatnonzero(counts != n_r))
    return Arrangement("r:p", detected, array, tuple(pilot.subjects[i] for i in keep), (), pilot.occasions,
                       Dropped(dropped, len(pilot.subjects), f"without exactly {n_r} ratings", pilot.missing_scores),
                       tuple(notes))


# --------------------------------------------------------------------------- the planned comparison

@dataclass(frozen=True)
class Comparison:
    """The planned two-group comparison on the true-score scale."""

    effect_size: float
    alpha: float = 0.05
    power: float = 0.8
    sides: int = 2
    ratio: float = 1.0
    dropout: float = 0.0

    def to_json(self) -> dict[str, Any]:
        return {"effect_size": self.effect_size, "alpha": self.alpha, "power": self.power, "sides": self.sides,
                "ratio": self.ratio, "dropout": self.dropout, "convention": "variance-ratio"}


@dataclass(frozen=True)
class Costs:
    participant: float = 0.0
    rating: float = 0.0
    occasion: float = 0.0

    def per_participant(self, raters: int, occasions: int) -> float:
        return self.participant + occasions * self.occasion + raters * occasions * self.rating

    def to_json(self) -> dict[str, Any]:
        return {"participant": self.participant, "rating": self.rating, "occasion": self.occasion}


@dataclass(frozen=True)
class DesignPoint:
    """One (k raters, m occasions) design with its coefficient, sample size and cost."""

    raters: int
    occasions: int
    coefficient: float
    n_total: int | None
    n_total_enrolled: int | None
    power: float | None
    cost: float | None
    infeasible: str | None = None
    efficient: bool = False

    def to_json(self) -> dict[str, Any]:
        return {"raters": self.raters, "occasions": self.occasions, "reliability": self.coefficient,
                "n_total": self.n_total, "n_total_enrolled": self.n_total_enrolled, "power": self.power,
                "cost": self.cost, "efficient": self.efficient, "infeasible": self.infeasible}


def coefficient_of(g: GStudy, raters: int, occasions: int, coefficient: str) -> float:
    d = g.d_study(raters, occasions)
    return d.e_rho2 if coefficient == "g" else d.phi


def evaluate(g: GStudy, coefficient: str, comparison: Comparison, costs: Costs, raters: int, occasions: int) -> DesignPoint:
    """Coefficient, reliability-adjusted sample size (one solver call) and cost of one design."""
    from protolint.stats.power import sample_size_two_group
    from protolint.stats._results import SolverError

    rho = coefficient_of(g, raters, occasions, coefficient)
    if not rho > 0.0:
        reason = "the coefficient is undefined" if math.isnan(rho) else "the coefficient is 0: no true differences between subjects"
        return DesignPoint(raters, occasions, rho, None, None, None, None, reason)
    try:
        size = sample_size_two_group(
            comparison.effect_size, alpha=comparison.alpha, power=comparison.power, sides=comparison.sides,
            ratio=comparison.ratio, dropout=comparison.dropout, reliability=min(rho, 1.0), convention="variance-ratio")
    except SolverError as error:
        return DesignPoint(raters, occasions, rho, None, None, None, None, str(error))
    cost = size.n_total_enrolled * costs.per_participant(raters, occasions)
    return DesignPoint(raters, occasions, rho, size.n_total, size.n_total_enrolled, size.achieved_power, cost)


def _mark_efficient(points: list[DesignPoint]) -> list[DesignPoint]:
    """Flag the cost frontier: designs that no other design matches on both cost and participants.

    A design is off the frontier when another design costs no more and needs no more
    participants to enrol, and is better on one of the two.
    """
    feasible = [(p.cost, p.n_total_enrolled) for p in points if p.cost is not None]
    out = []
    for p in points:
        efficient = p.cost is not None and not any(
            c <= p.cost and n <= p.n_total_enrolled and (c, n) != (p.cost, p.n_total_enrolled)  # type: ignore[operator]
            for c, n in feasible)
        out.append(DesignPoint(p.raters, p.occasions, p.coefficient, p.n_total, p.n_total_enrolled, p.power,
                               p.cost, p.infeasible, efficient))
    return out


def _cheapest(points: list[DesignPoint]) -> DesignPoint | None:
    feasible = [p for p in points if p.cost is not None]
    if not feasible:
        return None
    # Ties: fewer ratings per subject, then fewer participants (less burden for the same money).
    return min(feasible, key=lambda p: (p.cost, p.raters * p.occasions, p.n_total_enrolled, p.raters))


@dataclass(frozen=True)
class Optimisation:
    frontier: tuple[DesignPoint, ...]
    """Every (k, m) searched, cheapest first (infeasible designs last)."""
    optimum: DesignPoint | None
    baseline: DesignPoint

    @property
    def saving(self) -> float | None:
        if self.optimum is None or self.baseline.cost is None or self.optimum.cost is None:
            return None
        return self.baseline.cost - self.optimum.cost


def optimise(g: GStudy, coefficient: str, comparison: Comparison, costs: Costs,
             max_raters: int, max_occasions: int) -> Optimisation:
    """Brute force over k <= max_raters and m <= max_occasions (m = 1 without an occasion facet)."""
    m_max = max_occasions if g.has_occasions else 1
    points = [evaluate(g, coefficient, comparison, costs, k, m)
              for k in range(1, max_raters + 1) for m in range(1, m_max + 1)]
    points = _mark_efficient(points)
    baseline = points[0]
    ranked = sorted(points, key=lambda p: (p.cost is None, p.cost if p.cost is not None else 0.0,
                                           p.raters * p.occasions, p.raters))
    return Optimisation(tuple(ranked), _cheapest(points), baseline)


# --------------------------------------------------------------------------- the report

@dataclass(frozen=True)
class DesignReport:
    """Everything ``protolint design`` reports."""

    file: str
    sha256: str
    arrangement: Arrangement
    g: GStudy
    coefficient: str
    coefficient_reason: str
    dstudy: tuple[tuple[int, int, float, float], ...]
    comparison: Comparison | None
    costs: Costs
    max_raters: int
    max_occasions: int
    optimisation: Optimisation | None
    plan: PlanInputs | None = None
    plan_point: DesignPoint | None = None
    plan_point_note: str | None = None
    notes: tuple[str, ...] = field(default=())

    @property
    def plan_on_frontier(self) -> bool | None:
        if self.plan_point is None or self.optimisation is None:
            return None
        return any(p.raters == self.plan_point.raters and p.occasions == self.plan_point.occasions and p.efficient
                   for p in self.optimisation.frontier)

    def to_json(self) -> dict[str, Any]:
        g = self.g
        components = {
            COMPONENT_KEYS[c.effect]: {
                "variance": c.variance, "share": g.share(c.effect), "set_to_zero": c.set_to_zero,
                "estimate": c.estimate, "effect": c.effect, "mean_square": c.mean_square, "df": c.df,
            }
            for c in g.components
        }
        opt = self.optimisation
        report: dict[str, Any] = {
            "design": g.design,
            "design_detected": self.arrangement.detected,
            "file": self.file,
            "sha256": self.sha256,
            "subjects": g.n_p,
            "raters": g.n_r,
            "occasions": g.n_o,
            "dropped": self.arrangement.dropped.to_json(),
            "notes": list(self.notes),
            "grand_mean": g.grand_mean,
            "total_variance": g.total,
            "components": components,
            "coefficient": self.coefficient,
            "coefficient_reason": self.coefficient_reason,
            "dstudy": [{"raters": k, "occasions": m, "g": e, "phi": p} for k, m, e, p in self.dstudy],
            "comparison": None if self.comparison is None else self.comparison.to_json(),
            "costs": self.costs.to_json(),
            "limits": {"max_raters": self.max_raters, "max_occasions": self.max_occasions if g.has_occasions else 1},
            "optimum": None,
            "frontier": [],
            "baseline": None,
            "saving": None,
            "plan": None,
        }
        if opt is not None:
            if opt.optimum is not None:
                report["optimum"] = {**opt.optimum.to_json(), "coefficient": self.coefficient}
            report["frontier"] = [p.to_json() for p in opt.frontier]
            report["baseline"] = opt.baseline.to_json()
            saving = opt.saving
            report["saving"] = None if saving is None else {
                "cost": saving,
                "fraction": saving / opt.baseline.cost if opt.baseline.cost else None,
            }
        if self.plan is not None:
            p = self.plan
            point = self.plan_point
            extra = None
            if point is not None and point.cost is not None and opt is not None and opt.optimum is not None:
                extra = point.cost - (opt.optimum.cost or 0.0)
            report["plan"] = {
                "file": p.file, "sha256": p.sha256, "endpoint": p.endpoint_id, "effect_basis": p.effect_basis,
                "raters": p.raters, "occasions": p.occasions, "design_note": p.design_note,
                "evidence_reliability": p.evidence_reliability, "stated_n_total": p.stated_n_total,
                "design": None if point is None else point.to_json(),
                "on_frontier": self.plan_on_frontier,
                "extra_cost_vs_optimum": extra,
                "note": self.plan_point_note,
            }
        report["method"] = (f"{g.method}; D-study for k raters and m occasions (Brennan 2001, ch. 4); "
                            "two-sample t test, exact noncentral t, observed d = d * sqrt(coefficient)")
        report["caution"] = CAUTION
        return report


def analyse(
    pilot: PilotRatings,
    *,
    design: str | None = None,
    coefficient: str | None = None,
    comparison: Comparison | None = None,
    costs: Costs = Costs(),
    max_raters: int = 5,
    max_occasions: int = 3,
    plan: PlanInputs | None = None,
    sha256: str = "",
) -> DesignReport:
    """G-study, D-study and (with a comparison) the cost optimiser for one pilot."""
    if not (1 <= max_raters <= MAX_SEARCH and 1 <= max_occasions <= MAX_SEARCH):
        raise ProtolintError(f"--max-raters and --max-occasions must be between 1 and {MAX_SEARCH}, got {max_raters} "
                             f"and {max_occasions}")
    if comparison is not None:
        from protolint.analysis.size import check_two_group_bounds

        check_two_group_bounds(comparison.effect_size, comparison.ratio)
    if coefficient is not None and coefficient not in COEFFICIENTS:
        raise ProtolintError(f"coefficient must be g or phi, got {coefficient!r}")
    arrangement = arrange(pilot, design)
    g = g_study(arrangement.scores, arrangement.design)
    notes = list(arrangement.notes)
    if plan is not None and coefficient is None:
        chosen, reason = plan.coefficient, f"from the plan: {plan.coefficient_reason}"
    elif coefficient is not None:
        chosen, reason = coefficient, "chosen with --coefficient"
    else:
        chosen, reason = "phi", "default: raters may differ between participants (absolute error)"
    if g.design == "r:p":
        reason += "; with raters nested in subjects Eρ² and Φ coincide"
    m_max = max_occasions if g.has_occasions else 1
    if not g.has_occasions and max_occasions > 1:
        notes.append("the pilot has no occasion facet, so only one occasion is projected")
    dstudy = tuple((k, m, d.e_rho2, d.phi) for k in range(1, max_raters + 1) for m in range(1, m_max + 1)
                   for d in (g.d_study(k, m),))
    comp = plan.comparison if plan is not None else comparison
    optimisation = None
    plan_point = None
    plan_note = None
    if comp is not None:
        if not all(0 <= cost <= 1e12 for cost in (costs.participant, costs.rating, costs.occasion)):
            raise ProtolintError("costs must be between 0 and 1e12 (a finite amount in one currency)")
        if costs.per_participant(1, 1) <= 0 and costs.rating <= 0 and costs.occasion <= 0:
            raise ProtolintError("give at least one cost (--cost-participant, --cost-rating, --cost-occasion) to optimise")
        try:
            optimisation = optimise(g, chosen, comp, costs, max_raters, max_occasions)
        except ValueError as error:
            raise ProtolintError(str(error)) from None
        if plan is not None:
            if plan.occasions > 1 and not g.has_occasions:
                plan_note = (f"the plan averages {plan.occasions} occasions but the pilot has no occasion facet; "
                             "its design cannot be projected")
            else:
                plan_point = next((p for p in optimisation.frontier
                                   if (p.raters, p.occasions) == (plan.raters, plan.occasions)), None)
                if plan_point is None:
                    plan_point = evaluate(g, chosen, comp, costs, plan.raters, plan.occasions)
                    plan_note = "the plan's design lies outside the searched limits"
    return DesignReport(
        file=pilot.path, sha256=sha256, arrangement=arrangement, g=g, coefficient=chosen, coefficient_reason=reason,
        dstudy=dstudy, comparison=comp, costs=costs, max_raters=max_raters, max_occasions=max_occasions,
        optimisation=optimisation, plan=plan, plan_point=plan_point, plan_point_note=plan_note, notes=tuple(notes))
