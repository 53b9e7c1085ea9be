"""``protolint size``: reliability-adjusted sample size and power."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import click

from protolint import CAUTION
from protolint.commands.base import ProtolintCommand
from protolint.errors import ProtolintError

# --curve: reliabilities 0.40, 0.45, ..., 1.00.
CURVE = tuple(round(0.40 + 0.05 * i, 2) for i in range(13))

_CONVENTION_TEXT = {
    "ctt": "classical test theory, observed d = d * sqrt(reliability)",
    "true-score": "correlation with true score, observed d = d * reliability",
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


def _two_group(req: Request, reliability: float) -> dict[str, Any]:
    from protolint import stats

    r = stats.sample_size_two_group(
        req.effect_size, alpha=req.alpha, power=req.power, sides=req.sides, ratio=req.ratio,
        dropout=req.dropout, reliability=reliability, convention=req.convention,
    )
    return {
        "reliability": r.reliability,
        "effect_size_observed": r.effect_size_observed,
        "n_per_group": list(r.n_per_group),
        "n_total": r.n_total,
        "n_total_perfect_reliability": r.n_total_perfect_reliability,
        "inflation": r.inflation,
        "achieved_power": r.achieved_power,
        "n_per_group_enrolled": list(r.n_per_group_enrolled),
        "n_total_enrolled": r.n_total_enrolled,
        "method": r.method,
    }


def _correlation(req: Request, reliability: float) -> dict[str, Any]:
    from protolint import stats

    r = stats.sample_size_correlation(
        req.effect_size, alpha=req.alpha, power=req.power, sides=req.sides,
        reliability_x=reliability, reliability_y=req.reliability_other, dropout=req.dropout,
    )
    return {
        "reliability": r.reliability_x,
        "effect_size_observed": r.r_observed,
        "n_per_group": None,
        "n_total": r.n,
        "n_total_perfect_reliability": r.n_perfect_reliability,
        "inflation": r.inflation,
        "achieved_power": r.achieved_power,
        "n_total_enrolled": r.n_enrolled,
        "method": r.method,
    }


def compute(req: Request, curve: bool) -> dict[str, Any]:
    """The JSON report of DESIGN section 3 (plus the extra keys documented in --help)."""
    from protolint.stats import SolverError

    solve = _two_group if req.design == "two-group" else _correlation
    try:
        main = solve(req, req.reliability)
        points = [solve(req, rho) for rho in CURVE] if curve else None
    except (ValueError, SolverError) as error:
        raise ProtolintError(str(error)) from None
    report: dict[str, Any] = {
        "design": req.design,
        "effect_size": req.effect_size,
        "alpha": req.alpha,
        "power": req.power,
        "sides": req.sides,
        "reliability": main["reliability"],
        "effect_size_observed": main["effect_size_observed"],
        "n_per_group": main["n_per_group"],
        "n_total": main["n_total"],
        "n_total_perfect_reliability": main["n_total_perfect_reliability"],
        "inflation": main["inflation"],
        "achieved_power": main["achieved_power"],
        "dropout": req.dropout,
        "n_total_enrolled": main["n_total_enrolled"],
    }
    if req.design == "two-group":
        report["ratio"] = req.ratio
        report["n_per_group_enrolled"] = main["n_per_group_enrolled"]
        report["convention"] = req.convention
    else:
        report["reliability_other"] = req.reliability_other
        report["convention"] = "r * sqrt(reliability * reliability_other)"
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
    report["method"] = main["method"]
    if points is not None:
        keys = ("reliability", "effect_size_observed", "n_per_group", "n_total", "achieved_power", "inflation")
        report["curve"] = [{key: point[key] for key in keys} for point in points]
    report["caution"] = CAUTION
    return report


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
    rows.append(("Reliability of the outcome", f"{report['reliability']:.3f}"))
    if "reliability_from" in report:
        src = report["reliability_from"]
        rows.append((
            "  Spearman-Brown from one rating",
            f"{src['single_reliability']:g} x {src['raters']} rater(s) x {src['occasions']} occasion(s)",
        ))
    if two_group:
        rows.append(("Attenuation", _CONVENTION_TEXT[report["convention"]]))
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
    lines += ["", click.wrap_text(CAUTION, width=100)]
    return "\n".join(lines) + "\n"


@click.command("size", cls=ProtolintCommand)
@click.option("--effect-size", type=float, help="True-score standardised difference d (two-group) or correlation r (correlation).")
@click.option("--difference", type=float, help="Difference in means, with --sd, instead of --effect-size.")
@click.option("--sd", type=float, help="Standard deviation of the outcome, with --difference.")
@click.option("--alpha", type=float, default=0.05, show_default=True, help="Significance level.")
@click.option("--power", type=float, default=0.8, show_default=True, help="Target power.")
@click.option("--sides", type=click.Choice(("1", "2")), default="2", show_default=True, help="One- or two-sided test.")
@click.option("--ratio", type=float, default=1.0, show_default=True, help="Allocation ratio n2/n1 (two-group design).")
@click.option("--dropout", type=float, default=0.0, show_default=True, help="Expected proportion lost; enrolment is inflated by 1/(1-dropout).")
@click.option("--reliability", type=float, help="Reliability of the outcome as analysed (default 1).")
@click.option("--single-reliability", type=float, help="Reliability of a single rating; combine with --raters and/or --occasions.")
@click.option("--raters", type=int, help="Raters averaged per assessment (with --single-reliability).")
@click.option("--occasions", type=int, help="Occasions averaged (with --single-reliability).")
@click.option("--convention", type=click.Choice(("ctt", "true-score")), help="Attenuation convention for the two-group design [default: ctt].")
@click.option("--design", type=click.Choice(("two-group", "correlation")), default="two-group", show_default=True, help="Planned analysis.")
@click.option("--reliability-other", type=float, default=1.0, show_default=True, help="Reliability of the second measure (correlation design).")
@click.option("--curve", is_flag=True, help="Add the required N for reliabilities 0.40 to 1.00 by 0.05.")
@click.option("--format", "fmt", type=click.Choice(("text", "json")), default="text", show_default=True, help="Output format.")
@click.option("--output", "-o", type=click.Path(dir_okay=False), help="Write to this file instead of standard output.")
def command(
    effect_size: float | None, difference: float | None, sd: float | None, alpha: float, power: float, sides: str,
    ratio: float, dropout: float, reliability: float | None, single_reliability: float | None, raters: int | None,
    occasions: int | None, convention: str | None, design: str, reliability_other: float, curve: bool, fmt: str,
    output: str | None,
) -> None:
    """Reliability-adjusted sample size and power for a planned comparison.

    Two-group design: exact power of the two-sample t test (noncentral t) with the effect
    attenuated by the outcome's reliability, by default under classical test theory
    (d * sqrt(reliability)); --convention true-score uses d * reliability. Correlation design:
    Fisher z with r * sqrt(reliability * reliability-other). Numbers are rounded up and
    reported with the power they achieve. JSON keys beyond the contract: achieved_power,
    dropout, n_total_enrolled, n_per_group_enrolled, ratio, convention, method, curve.

    \b
    Examples:
      protolint size --effect-size 0.5 --reliability 0.8
      protolint size --difference 3 --sd 6 --single-reliability 0.6 --raters 2 --dropout 0.1
      protolint size --effect-size 0.3 --design correlation --reliability 0.7 --reliability-other 0.9
      protolint size --effect-size 0.5 --curve --format json
    """
    from protolint.commands._shared import emit, to_json

    if effect_size is not None and (difference is not None or sd is not None):
        raise ProtolintError("give either --effect-size or --difference with --sd, not both")
    if effect_size is None:
        if difference is None or sd is None:
            raise ProtolintError("give --effect-size, or --difference together with --sd")
        if design == "correlation":
            raise ProtolintError("--difference/--sd describe a two-group design; give --effect-size r for --design correlation")
        if not sd > 0:
            raise ProtolintError(f"--sd must be greater than 0, got {sd:g}")
        effect_size = difference / sd
    if reliability is not None and single_reliability is not None:
        raise ProtolintError("give either --reliability or --single-reliability (with --raters/--occasions), not both")
    if single_reliability is None and (raters is not None or occasions is not None):
        raise ProtolintError("--raters and --occasions need --single-reliability (the reliability of one rating)")
    if design == "correlation" and convention is not None:
        raise ProtolintError("--convention applies to --design two-group; a correlation is attenuated by r*sqrt(rx*ry)")
    if design == "correlation" and ratio != 1.0:
        raise ProtolintError("--ratio applies to --design two-group only")

    from protolint import stats

    n_raters = 1 if raters is None else raters
    n_occasions = 1 if occasions is None else occasions
    try:
        rho = (
            stats.reliability_of_mean(single_reliability, n_raters, n_occasions)
            if single_reliability is not None
            else (1.0 if reliability is None else reliability)
        )
    except (ValueError, TypeError) as error:
        raise ProtolintError(f"{error} (--single-reliability/--raters/--occasions)") from None
    req = Request(
        design=design, effect_size=effect_size, difference=difference, sd=sd, alpha=alpha, power=power,
        sides=int(sides), ratio=ratio, dropout=dropout, reliability=rho, single_reliability=single_reliability,
        raters=n_raters, occasions=n_occasions, convention=convention or "ctt", reliability_other=reliability_other,
    )
    report = compute(req, curve)
    text = to_json(report) if fmt == "json" else render_text(report)
    emit(text, output, f"{fmt} sample-size report")
