"""``protolint size``: reliability-adjusted sample size and power."""

from __future__ import annotations

import click

from protolint.analysis.size import LIMITS_HELP as SIZE_LIMITS

from protolint.commands.base import ProtolintCommand
from protolint.errors import ProtolintError


@click.command("size", cls=ProtolintCommand, epilog=SIZE_LIMITS)
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
@click.option("--convention", type=click.Choice(("variance-ratio", "observed-true-correlation", "ctt", "true-score")),
              metavar="[variance-ratio|observed-true-correlation]",
              help="Attenuation convention of the two-group design, named by what it takes reliability to be: "
                   "variance-ratio (classical test theory, d*sqrt(rho); what check uses) or observed-true-correlation "
                   "(d*rho). Old names: ctt, true-score. [default: variance-ratio]")
@click.option("--design", type=click.Choice(("two-group", "correlation")), default="two-group", show_default=True, help="Planned analysis.")
@click.option("--reliability-other", type=float, default=1.0, show_default=True, help="Reliability of the second measure (correlation design).")
@click.option("--effect-basis", type=click.Choice(("true-score", "observed")), default="true-score", show_default=True,
              help="As a plan's effect_basis: true-score when the effect is on the error-free scale; observed when it "
                   "was seen in an earlier study measured with --source-reliability.")
@click.option("--source-reliability", type=float, help="With --effect-basis observed: reliability in the study the effect came from.")
@click.option("--n-total", type=int, help="Also give the power at this analysable N and the reliability it needs for --power.")
@click.option("--study-raters", type=int, help="Size a reliability study of the outcome with this many raters per subject.")
@click.option("--study-width", type=float, help="With --study-raters: full width of the 95% ICC interval wanted (Bonett 2002).")
@click.option("--study-null", type=float, help="With --study-raters: lowest acceptable ICC to test against (Walter et al. 1998).")
@click.option("--curve", is_flag=True, help="Add the required N for reliabilities 0.40 to 1.00 by 0.05.")
@click.option("--format", "fmt", type=click.Choice(("text", "json")), default="text", show_default=True, help="Output format.")
@click.option("--output", "-o", type=click.Path(dir_okay=False), help="Write to this file instead of standard output.")
def command(
    effect_size: float | None, difference: float | None, sd: float | None, alpha: float, power: float, sides: str,
    ratio: float, dropout: float, reliability: float | None, single_reliability: float | None, raters: int | None,
    occasions: int | None, convention: str | None, design: str, reliability_other: float, effect_basis: str,
    source_reliability: float | None, n_total: int | None,
    study_raters: int | None, study_width: float | None, study_null: float | None, curve: bool, fmt: str,
    output: str | None,
) -> None:
    """Reliability-adjusted sample size and power for a planned comparison.

    Two-group design: exact power of the two-sample t test (noncentral t) with the effect
    attenuated by the outcome's reliability, by default under classical test theory
    (--convention variance-ratio, d * sqrt(reliability), as `check` does); --convention
    observed-true-correlation uses d * reliability. Correlation design:
    Fisher z with r * sqrt(reliability * reliability-other). Numbers are rounded up and
    reported with the power they achieve. The JSON report gives, beside the sample size:
    achieved_power, dropout, n_total_enrolled, n_per_group_enrolled, ratio, convention, method,
    curve, at_given_n, reliability_study, effect_basis (and with observed: effect_size_stated,
    source_reliability).

    \b
    Examples:
      protolint size --effect-size 0.5 --reliability 0.8
      protolint size --difference 3 --sd 6 --single-reliability 0.6 --raters 2 --dropout 0.1
      protolint size --effect-size 0.3 --design correlation --reliability 0.7 --reliability-other 0.9
      protolint size --effect-size 0.5 --curve --format json
      protolint size --effect-size 0.5 --reliability 0.8 --n-total 120
      protolint size --effect-size 0.5 --single-reliability 0.7 --study-raters 3 --study-width 0.2 --study-null 0.5
    """
    from protolint.analysis.size import Request, plan_size
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
    if convention == "true-score":
        # The old name clashes with a plan's effect_basis: true-score (an effect on the error-free scale).
        click.echo("protolint: note: --convention true-score is the old name of observed-true-correlation "
                   "(observed d = d * reliability); a plan's effect_basis: true-score means something else", err=True)
    stated = None
    if effect_basis == "observed":
        if source_reliability is None:
            raise ProtolintError("--effect-basis observed needs --source-reliability (the reliability the effect was seen with)")
        if design == "correlation":
            raise ProtolintError("--effect-basis observed applies to --design two-group; give the true-score r for a correlation")
        stated = effect_size
        try:
            effect_size = stats.true_effect_size(effect_size, source_reliability, convention or "variance-ratio")
        except ValueError as error:
            raise ProtolintError(f"--source-reliability: {error}") from None
    elif source_reliability is not None:
        raise ProtolintError("--source-reliability goes with --effect-basis observed")
    if n_total is not None and n_total < 4:
        raise ProtolintError(f"--n-total must be at least 4, got {n_total}")
    if study_raters is None and (study_width is not None or study_null is not None):
        raise ProtolintError("--study-width and --study-null need --study-raters (raters per subject in the reliability study)")
    if study_raters is not None and study_raters < 2:
        raise ProtolintError(f"--study-raters must be at least 2, got {study_raters}")
    req = Request(
        design=design, effect_size=effect_size, difference=difference, sd=sd, alpha=alpha, power=power,
        sides=int(sides), ratio=ratio, dropout=dropout, reliability=rho, single_reliability=single_reliability,
        raters=n_raters, occasions=n_occasions, convention=stats.convention_name(convention or "variance-ratio"),
        reliability_other=reliability_other, n_total_given=n_total, study_raters=study_raters, study_width=study_width,
        study_null=study_null, effect_basis=effect_basis, effect_size_stated=stated, source_reliability=source_reliability,
    )
    report = plan_size(req, curve)
    text = to_json(report.to_json()) if fmt == "json" else report.to_text()
    emit(text, output, f"{fmt} sample-size report")
