"""Reliability-adjusted sample size and power, as one report.

The two-group design attenuates the true-score effect by the outcome's reliability under a
named convention (see :mod:`protolint.stats.power`: ``variance-ratio``, the classical-test-
theory d * sqrt(rho) that a plan's sample-size rules use, or ``observed-true-correlation``,
d * rho); the correlation design by r * sqrt(rho_x * rho_y). Beyond the N for the target power
the report can answer the power at a given N, the reliability a given N needs, and the subjects
a reliability study of the outcome needs (Bonett 2002; Walter, Eliasziw & Donner 1998).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import click

from protolint import CAUTION
from protolint.errors import ProtolintError
from protolint.wording import plural

if TYPE_CHECKING:
    from protolint.stats import study_size as stats_study

# --curve: reliabilities 0.40, 0.45, ..., 1.00.
CURVE = tuple(round(0.40 + 0.05 * i, 2) for i in range(13))

_CONVENTION_TEXT = {
    "variance-ratio": "variance-ratio: observed d = d * sqrt(reliability) (classical test theory)",
    "observed-true-correlation": "observed-true-correlation: observed d = d * reliability",
}


@dataclass(frozen=True)
class Request:
    """The validated command-line request."""

    design: str
    effect_size: float
    difference: float | None
    sd: float | None
    alpha: float
    power: float
    sides: int
    ratio: float
    dropout: float
    reliability: float
    single_reliability: float | None
    raters: int
    occasions: int
    convention: str
    reliability_other: float
    n_total_given: int | None = None
    effect_basis: str = "true-score"
    effect_size_stated: float | None = None
    source_reliability: float | None = None
    study_raters: int | None = None
    study_width: float | None = None
    study_null: float | None = None


@dataclass(frozen=True)
class Answer:
    """The sample size at one reliability (either design)."""

    reliability: float
    effect_size_observed: float
    n_per_group: tuple[int, int] | None
    n_total: int
    n_total_perfect_reliability: int
    inflation: float
    achieved_power: float
    n_per_group_enrolled: tuple[int, int] | None
    n_total_enrolled: int
    method: str


@dataclass(frozen=True)
class AtGivenN:
    """Power at a given analysable N, and the lowest reliability that reaches the target there."""

    n_total: int
    n_per_group: tuple[int, int] | None
    power: float
    reliability_needed: float | None
    """None when even reliability 1 falls short of the target power."""

    def to_json(self) -> dict[str, Any]:
        return {"n_total": self.n_total, "n_per_group": None if self.n_per_group is None else list(self.n_per_group),
                "power": self.power, "reliability_needed": self.reliability_needed}


@dataclass(frozen=True)
class ReliabilityStudy:
    """Subjects for a reliability study of the outcome (the statistics core's results)."""

    raters: int
    planning_icc: float
    bonett: stats_study.IccWidthSampleSize | None
    walter: stats_study.IccTestSampleSize | None

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {"raters": self.raters, "planning_icc": self.planning_icc}
        if self.bonett is not None:
            b = self.bonett
            out["bonett_2002"] = {"width": b.width, "confidence": b.confidence, "n_subjects": b.n, "n_exact": b.n_exact,
                                  "expected_width": b.achieved_width, "adjusted_for_two_raters": b.adjusted_for_two_raters,
                                  "method": b.method}
        if self.walter is not None:
            w = self.walter
            out["walter_1998"] = {"rho0": w.rho0, "rho1": w.rho1, "alpha": w.alpha, "sides": w.sides, "power": w.power,
                                  "n_subjects": w.n, "n_exact": w.n_exact, "achieved_power": w.achieved_power,
                                  "method": w.method}
        return out


def _two_group(req: Request, reliability: float) -> Answer:
    from protolint import stats

    r = stats.sample_size_two_group(
        req.effect_size, alpha=req.alpha, power=req.power, sides=req.sides, ratio=req.ratio,
        dropout=req.dropout, reliability=reliability, convention=req.convention,
    )
    return Answer(r.reliability, r.effect_size_observed, r.n_per_group, r.n_total, r.n_total_perfect_reliability,
                  r.inflation, r.achieved_power, r.n_per_group_enrolled, r.n_total_enrolled, r.method)


def _correlation(req: Request, reliability: float) -> Answer:
    from protolint import stats

    r = stats.sample_size_correlation(
        req.effect_size, alpha=req.alpha, power=req.power, sides=req.sides,
        reliability_x=reliability, reliability_y=req.reliability_other, dropout=req.dropout,
    )
    return Answer(r.reliability_x, r.r_observed, None, r.n, r.n_perfect_reliability, r.inflation, r.achieved_power,
                  None, r.n_enrolled, r.method)


def _at_given_n(req: Request, n: int) -> AtGivenN:
    from protolint import stats

    if req.design == "two-group":
        n1 = max(2, round(n / (1.0 + req.ratio)))
        groups = (n1, max(2, n - n1))
        power = stats.power_two_group(groups, req.effect_size, alpha=req.alpha, sides=req.sides,
                                      reliability=req.reliability, convention=req.convention).power
        needed = stats.reliability_for_power(groups, req.effect_size, alpha=req.alpha, power=req.power,
                                             sides=req.sides, convention=req.convention)
        return AtGivenN(sum(groups), groups, power, needed)
    power = stats.power_correlation(n, req.effect_size, alpha=req.alpha, sides=req.sides, reliability_x=req.reliability,
                                    reliability_y=req.reliability_other).power
    needed = stats.reliability_for_power_correlation(n, req.effect_size, alpha=req.alpha, power=req.power, sides=req.sides,
                                                     reliability_y=req.reliability_other)
    return AtGivenN(n, None, power, needed)


def _reliability_study(req: Request, k: int) -> ReliabilityStudy:
    from protolint import stats

    # The planning ICC of a reliability study is that of one rating when it is known.
    rho = req.single_reliability if req.single_reliability is not None else req.reliability
    if not 0.0 <= rho < 1.0:
        raise ProtolintError(f"a reliability study needs a planning ICC below 1, got {rho:g}")
    if req.study_width is not None and not 0.0 < req.study_width < 2.0:
        raise ProtolintError(f"--study-width must be between 0 and 2 (the full width of an ICC interval), got {req.study_width:g}")
    if req.study_null is not None and not 0.0 <= req.study_null < rho:
        raise ProtolintError(f"--study-null must be at least 0 and below the planning ICC {rho:.6g}, got {req.study_null:g}")
    bonett = None if req.study_width is None else stats.subjects_for_icc_width_bonett(rho, k, req.study_width, confidence=0.95)
    walter = None if req.study_null is None else stats.subjects_for_icc_test_walter(
        req.study_null, rho, k, alpha=req.alpha, power=req.power, sides=1)
    return ReliabilityStudy(k, rho, bonett, walter)


@dataclass(frozen=True)
class SizeReport:
    """The validated request and its answers; ``to_json()`` is the JSON contract of ``size``."""

    request: Request
    answer: Answer
    curve: tuple[Answer, ...] | None = None
    at_given_n: AtGivenN | None = None
    reliability_study: ReliabilityStudy | None = None

    @property
    def n_total(self) -> int:
        return self.answer.n_total

    def to_json(self) -> dict[str, Any]:
        req, main = self.request, self.answer
        report: dict[str, Any] = {
            "design": req.design,
            "effect_size": req.effect_size,
            "alpha": req.alpha,
            "power": req.power,
            "sides": req.sides,
            "reliability": main.reliability,
            "effect_size_observed": main.effect_size_observed,
            "n_per_group": None if main.n_per_group is None else list(main.n_per_group),
            "n_total": main.n_total,
            "n_total_perfect_reliability": main.n_total_perfect_reliability,
            "inflation": main.inflation,
            "achieved_power": main.achieved_power,
            "dropout": req.dropout,
            "n_total_enrolled": main.n_total_enrolled,
        }
        if req.design == "two-group":
            report["ratio"] = req.ratio
            report["n_per_group_enrolled"] = None if main.n_per_group_enrolled is None else list(main.n_per_group_enrolled)
            report["convention"] = req.convention
        else:
            report["reliability_other"] = req.reliability_other
            report["convention"] = "r * sqrt(reliability * reliability_other)"
        report["effect_basis"] = req.effect_basis
        if req.effect_basis == "observed":
            report["effect_size_stated"] = req.effect_size_stated
            report["source_reliability"] = req.source_reliability
        if req.difference is not None:
            report["difference"] = req.difference
            report["sd"] = req.sd
        if req.single_reliability is not None:
            report["reliability_from"] = {
                "single_reliability": req.single_reliability,
                "raters": req.raters,
                "occasions": req.occasions,
                "rule": "Spearman-Brown over raters x occasions ratings",
            }
        if self.at_given_n is not None:
            report["at_given_n"] = self.at_given_n.to_json()
        if self.reliability_study is not None:
            report["reliability_study"] = self.reliability_study.to_json()
        report["method"] = main.method
        if self.curve is not None:
            report["curve"] = [
                {"reliability": p.reliability, "effect_size_observed": p.effect_size_observed,
                 "n_per_group": None if p.n_per_group is None else list(p.n_per_group), "n_total": p.n_total,
                 "achieved_power": p.achieved_power, "inflation": p.inflation}
                for p in self.curve
            ]
        report["caution"] = CAUTION
        return report

    def to_text(self) -> str:
        return render_text(self.to_json())


# Bounds of a request, checked before any solver runs. Outside them the exact solvers would
# divide by zero or overflow (d = 1e-300 needs ~10^600 participants; d = 1e300 squares to
# infinity), and no trial is planned there: a standardised difference below 0.001 needs more
# than 15 million participants per group, one above 20 separates the groups completely, and an
# allocation beyond 1:100 is not randomisation. Our bounds (common practice).
MIN_EFFECT, MAX_EFFECT = 0.001, 20.0
MIN_RATIO, MAX_RATIO = 0.01, 100.0
MAX_N_TOTAL = 100_000_000
MAX_STUDY_RATERS = 1000

LIMITS_HELP = (f"Bounds: |effect size| {MIN_EFFECT:g} to {MAX_EFFECT:g} (a correlation below 1), --ratio "
               f"{MIN_RATIO:g} to {MAX_RATIO:g}, --n-total up to {MAX_N_TOTAL:,}, --study-raters up to {MAX_STUDY_RATERS}.")


def check_two_group_bounds(effect_size: float, ratio: float, name: str = "--effect-size") -> None:
    """Refuse a two-group comparison outside the bounds above (also `design`'s comparison)."""
    size = abs(effect_size)
    if not MIN_EFFECT <= size <= MAX_EFFECT:
        why = ("too small to detect with any trial's participants" if size < MIN_EFFECT else
               "larger than any effect a trial is planned for (the groups would not overlap)" if size > MAX_EFFECT
               else "not a number")
        raise ProtolintError(f"{name} gives a standardised difference of {effect_size:g}, {why}; expected "
                             f"{MIN_EFFECT:g} to {MAX_EFFECT:g} in absolute value")
    _check_ratio(ratio)


def _check_ratio(ratio: float) -> None:
    if not MIN_RATIO <= ratio <= MAX_RATIO:
        raise ProtolintError(f"--ratio must be between {MIN_RATIO:g} and {MAX_RATIO:g}, got {ratio:g}")


def check_bounds(req: Request) -> None:
    """Refuse a request outside the bounds above, naming the option and the value."""
    if req.design == "two-group":
        check_two_group_bounds(req.effect_size, req.ratio,
                               "--effect-size" if req.difference is None else "--difference / --sd")
    else:
        if not MIN_EFFECT <= abs(req.effect_size) < 1.0:
            raise ProtolintError(f"--effect-size r must be between {MIN_EFFECT:g} and 1 in absolute value, got {req.effect_size:g}")
        _check_ratio(req.ratio)
    if req.n_total_given is not None and req.n_total_given > MAX_N_TOTAL:
        raise ProtolintError(f"--n-total must be at most {MAX_N_TOTAL:,}, got {req.n_total_given:,}")
    if req.study_raters is not None and req.study_raters > MAX_STUDY_RATERS:
        raise ProtolintError(f"--study-raters must be at most {MAX_STUDY_RATERS}, got {req.study_raters:,}")


def plan_size(request: Request, curve: bool = False) -> SizeReport:
    """Sample size (and, as asked, power at a given N and a reliability study) for ``request``."""
    from protolint.stats import SolverError

    check_bounds(request)
    solve = _two_group if request.design == "two-group" else _correlation
    try:
        return SizeReport(
            request=request,
            answer=solve(request, request.reliability),
            curve=tuple(solve(request, rho) for rho in CURVE) if curve else None,
            at_given_n=None if request.n_total_given is None else _at_given_n(request, request.n_total_given),
            reliability_study=None if request.study_raters is None else _reliability_study(request, request.study_raters),
        )
    except (ValueError, SolverError) as error:
        raise ProtolintError(str(error)) from None


def _pair(values: list[int] | None, total: int) -> str:
    if values is None:
        return f"{total}"
    return f"{values[0]} + {values[1]} = {total}"


def render_text(report: dict[str, Any]) -> str:
    two_group = report["design"] == "two-group"
    sides = "two-sided" if report["sides"] == 2 else "one-sided"
    what = "effect size d" if two_group else "correlation r"
    rows: list[tuple[str, str]] = [(f"True {what}", f"{report['effect_size']:.3f}")]
    if "difference" in report:
        rows.append(("  from difference / SD", f"{report['difference']:g} / {report['sd']:g}"))
    if report.get("effect_basis") == "observed":
        root = "sqrt(source reliability)" if report["convention"] == "variance-ratio" else "source reliability"
        rows.append(("  from an observed effect",
                     f"{report['effect_size_stated']:g} / {root}, source reliability {report['source_reliability']:g}"))
    # Enough digits to reproduce N from the printed value (0.786 and 0.78641 can differ by 2).
    rows.append(("Reliability of the outcome", f"{report['reliability']:.6g}"))
    if "reliability_from" in report:
        src = report["reliability_from"]
        rows.append((
            "  Spearman-Brown from one rating",
            f"{src['single_reliability']:g} x {plural(src['raters'], 'rater')} x {plural(src['occasions'], 'occasion')}",
        ))
    if two_group:
        rows.append(("Attenuation convention", _CONVENTION_TEXT[report["convention"]]))
    else:
        rows.append(("Reliability of the other measure", f"{report['reliability_other']:.3f}"))
        rows.append(("Attenuation", "observed r = r * sqrt(reliability * other reliability)"))
    rows += [
        (f"Observed {what}", f"{report['effect_size_observed']:.3f}"),
        ("Alpha, power", f"{report['alpha']:g} {sides}, target power {report['power']:g}"),
    ]
    if two_group:
        rows.append(("Allocation ratio (group 2 / 1)", f"{report['ratio']:g}"))
    rows += [
        ("Analysable " + ("per group" if two_group else "participants"),
         f"{_pair(report['n_per_group'], report['n_total'])}   (achieved power {report['achieved_power']:.3f})"),
        ("Same design at reliability 1" if two_group else "Same with both reliabilities 1",
         f"{report['n_total_perfect_reliability']}"),
        ("Inflation for unreliability", f"x {report['inflation']:.3f}"),
    ]
    if report["dropout"] > 0:
        rows.append((f"To enrol (dropout {report['dropout']:.0%})",
                     _pair(report.get("n_per_group_enrolled"), report["n_total_enrolled"])))
    title = "two-group comparison of means" if two_group else "correlation of two measures"
    lines = [f"Reliability-adjusted sample size: {title}", ""]
    lines += [f"  {label:<34} {value}" for label, value in rows]
    method = "exact noncentral t power" if two_group else "Fisher z"
    lines += ["", f"Sample sizes are rounded up; method: {method}."]
    if "curve" in report:
        lines += [
            "",
            "Required N by reliability of the outcome:",
            f"  {'reliability':>11}  {'observed':>8}  {'N total':>7}  {'power':>6}  {'inflation':>9}",
        ]
        for point in report["curve"]:
            lines.append(
                f"  {point['reliability']:>11.2f}  {point['effect_size_observed']:>8.3f}  {point['n_total']:>7}  "
                f"{point['achieved_power']:>6.3f}  {point['inflation']:>9.3f}"
            )
    lines += _extra_text(report)
    lines += ["", click.wrap_text(CAUTION, width=100)]
    return "\n".join(lines) + "\n"


def _extra_text(report: dict[str, Any]) -> list[str]:
    lines: list[str] = []
    given = report.get("at_given_n")
    if given is not None:
        groups = given["n_per_group"]
        n_text = f"{groups[0]} + {groups[1]} = {given['n_total']}" if groups else f"{given['n_total']}"
        needed = given["reliability_needed"]
        needed_text = (
            f"a reliability of at least {needed:.4f} reaches power {report['power']:g} at this N"
            if needed is not None else f"no reliability reaches power {report['power']:g} at this N, not even 1"
        )
        lines += ["", f"At the given N ({n_text} analysable): power {given['power']:.3f} at reliability "
                      f"{report['reliability']:.6g}; {needed_text}."]
    study = report.get("reliability_study")
    if study is not None:
        lines += ["", f"Reliability study of the outcome ({study['raters']} raters per subject, planning ICC {study['planning_icc']:.6g}):"]
        if "bonett_2002" in study:
            b = study["bonett_2002"]
            lines.append(f"  {b['n_subjects']} subjects give a 95% interval of expected full width {b['expected_width']:.3f} "
                         f"(asked: {b['width']:g}; Bonett 2002).")
        if "walter_1998" in study:
            w = study["walter_1998"]
            lines.append(f"  {w['n_subjects']} subjects test ICC = {w['rho0']:g} against {w['rho1']:.6g} one-sided at alpha "
                         f"{w['alpha']:g} with power {w['achieved_power']:.3f} (Walter, Eliasziw & Donner 1998).")
        if len(lines) and not ("bonett_2002" in study or "walter_1998" in study):
            lines.append("  give --study-width (Bonett 2002) and/or --study-null (Walter et al. 1998).")
    return lines

