"""``protolint design``: G-study, D-study and the cheapest design that reaches the power."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import click

from protolint.analysis.design import LIMITS_HELP as DESIGN_LIMITS, PILOT_COLUMNS

from protolint import CAUTION
from protolint.commands.base import ProtolintCommand
from protolint.data.options import reader_options
from protolint.errors import ProtolintError
from protolint.wording import plural

if TYPE_CHECKING:
    from protolint.data.roles import ReadOptions

FORMATS = ("text", "json", "html", "pdf")

_COEFFICIENT_NAME = {"g": "Eρ² (generalizability)", "phi": "Φ (dependability)"}


def _num(value: float | None, digits: int = 3) -> str:
    return "—" if value is None or value != value else f"{value:.{digits}f}"


def _money(value: float | None) -> str:
    return "—" if value is None else f"{value:,.0f}"


_DESIGN_NAMES = {"pxr": "p x r", "pxrxo": "p x r x o", "r:p": "r:p"}


def _design_name(value: str | None) -> str | None:
    if value is None:
        return None
    key = "".join(value.lower().replace("×", "x").split())
    if key not in _DESIGN_NAMES:
        raise ProtolintError(f"--design must be 'p x r', 'p x r x o' or 'r:p', got {value!r}")
    return _DESIGN_NAMES[key]


def render_text(report: dict[str, Any]) -> str:
    """The plain-text report."""
    lines = [f"G-study of {report['file']}: design {report['design']}"
             f" ({'detected from the data' if report['design_detected'] else 'as given with --design'})",
             f"  {report['subjects']} subjects, {plural(report['raters'], 'rater')}{' per subject' if report['design'] == 'r:p' else ''}, "
             f"{plural(report['occasions'], 'occasion')}; grand mean {_num(report['grand_mean'])}"]
    note = report["dropped"]["note"]
    if note:
        lines.append(f"  {note}")
    lines += [f"  note: {n}" for n in report["notes"]]
    lines += ["", "Variance components (ANOVA, Brennan 2001 ch. 3):",
              f"  {'component':<18} {'effect':<7} {'variance':>9} {'share':>7}"]
    for key, c in report["components"].items():
        zero = f"   negative estimate {c['estimate']:.4f} set to 0" if c["set_to_zero"] else ""
        lines.append(f"  {key:<18} {c['effect']:<7} {c['variance']:>9.4f} {_num(c['share'] * 100 if c['share'] is not None else None, 1):>6}%{zero}")
    lines += ["", f"D-study (coefficient used: {_COEFFICIENT_NAME[report['coefficient']]}; {report['coefficient_reason']}):",
              f"  {'raters':>6} {'occasions':>9} {'Eρ²':>7} {'Φ':>7}"]
    for row in report["dstudy"]:
        lines.append(f"  {row['raters']:>6} {row['occasions']:>9} {_num(row['g']):>7} {_num(row['phi']):>7}")
    comp = report["comparison"]
    if comp is None:
        lines += ["", "No comparison given (--effect-size or --plan): no sample size or cost search."]
    else:
        costs = report["costs"]
        lines += ["", f"Planned comparison: true-score d = {comp['effect_size']:.3f}, alpha {comp['alpha']:g} "
                      f"{'two' if comp['sides'] == 2 else 'one'}-sided, power {comp['power']:g}, allocation {comp['ratio']:g}, "
                      f"dropout {comp['dropout']:.0%}; observed d = d·√ρ, exact noncentral t",
                  f"Costs: participant {_money(costs['participant'])}, occasion {_money(costs['occasion'])}, "
                  f"rating {_money(costs['rating'])}; N below is the number to enrol"]
        opt = report["optimum"]
        if opt is None:
            lines.append("No searched design reaches the power.")
        else:
            lines += ["", f"Cheapest design: {plural(opt['raters'], 'rater')} x {plural(opt['occasions'], 'occasion')}, "
                          f"N = {opt['n_total_enrolled']} to enrol ({opt['n_total']} analysable), cost {_money(opt['cost'])}, "
                          f"reliability {_num(opt['reliability'])}, power {_num(opt['power'])}"]
            base = report["baseline"]
            saving = report["saving"]
            if base["cost"] is not None and saving is not None:
                fraction = f" ({saving['fraction']:.0%})" if saving["fraction"] is not None else ""
                lines.append(f"Against 1 rater x 1 occasion (N = {base['n_total_enrolled']}, cost {_money(base['cost'])}): "
                             f"saves {_money(saving['cost'])}{fraction}")
            else:
                lines.append(f"1 rater x 1 occasion does not reach the power: {base['infeasible']}")
        lines += ["", "Cost frontier (cheapest N for each design; * = on the frontier: no other design costs less and needs no more participants):",
                  f"  {'raters':>6} {'occasions':>9} {'reliability':>11} {'N enrol':>8} {'power':>6} {'cost':>14}"]
        for p in report["frontier"]:
            mark = "*" if p["efficient"] else " "
            n = "—" if p["n_total_enrolled"] is None else str(p["n_total_enrolled"])
            lines.append(f"{mark} {p['raters']:>6} {p['occasions']:>9} {_num(p['reliability']):>11} {n:>8} "
                         f"{_num(p['power']):>6} {_money(p['cost']):>14}")
    plan = report.get("plan")
    if plan:
        lines += ["", f"The plan ({plan['file']}, endpoint {plan['endpoint']}): {plural(plan['raters'], 'rater')} x "
                      f"{plural(plan['occasions'], 'occasion')}; effect {plan['effect_basis']}"]
        if plan["design_note"]:
            lines.append(f"  {plan['design_note']}")
        if plan["evidence_reliability"] is not None:
            lines.append(f"  reliability the plan's evidence supports for this design: {_num(plan['evidence_reliability'])}")
        point = plan["design"]
        if point is None:
            lines.append(f"  {plan['note']}")
        else:
            if point["cost"] is None:
                lines.append(f"  does not reach the power: {point['infeasible']}")
            else:
                lines.append(f"  pilot reliability {_num(point['reliability'])}: N = {point['n_total_enrolled']} to enrol "
                             f"(plan states {plan['stated_n_total']}), cost {_money(point['cost'])}, "
                             f"{_money(plan['extra_cost_vs_optimum'])} more than the cheapest design")
            lines.append(f"  on the frontier: {'yes' if plan['on_frontier'] else 'no'}"
                         + (f" ({plan['note']})" if plan["note"] else ""))
    lines += ["", click.wrap_text(CAUTION, width=100)]
    return "\n".join(lines) + "\n"



@click.command("design", cls=ProtolintCommand, epilog=DESIGN_LIMITS)
@click.argument("pilot", type=click.Path(dir_okay=True))
@click.option("--plan", "plan_file", type=click.Path(), help="Take the comparison, the coefficient and the plan's own design from this plan.")
@click.option("--design", "design", callback=lambda ctx, param, value: _design_name(value), metavar="[p x r|p x r x o|r:p]",
              help="Insist on a design instead of detecting it (spaces optional: pxr, pxrxo).")
@click.option("--coefficient", type=click.Choice(("g", "phi")), help="Eρ² (g) or Φ (phi) [default: phi, or from --plan].")
@click.option("--effect-size", type=float, help="True-score standardised difference d of the planned comparison.")
@click.option("--alpha", type=float, help="Significance level [default: 0.05].")
@click.option("--power", type=float, help="Target power [default: 0.8].")
@click.option("--sides", type=click.Choice(("1", "2")), help="One- or two-sided test [default: 2].")
@click.option("--ratio", type=float, help="Allocation ratio n2/n1 [default: 1].")
@click.option("--dropout", type=float, help="Expected proportion lost [default: 0].")
@click.option("--cost-participant", type=float, default=0.0, show_default=True, help="Cost per enrolled participant.")
@click.option("--cost-rating", type=float, default=0.0, show_default=True, help="Cost per rating (one rater, one occasion).")
@click.option("--cost-occasion", type=float, default=0.0, show_default=True, help="Cost per rated occasion (visit) per participant.")
@click.option("--max-raters", type=int, default=5, show_default=True, help="Most raters per assessment searched.")
@click.option("--max-occasions", type=int, default=3, show_default=True, help="Most occasions searched.")
@click.option("--format", "fmt", type=click.Choice(FORMATS), default="text", show_default=True, help="Output format.")
@click.option("--output", "-o", type=click.Path(dir_okay=False), help="Write to this file (required for pdf).")
@click.option("--paper", type=click.Choice(("a4", "letter")), default="a4", show_default=True, help="Paper size (html, pdf).")
@reader_options(roles=PILOT_COLUMNS)
def command(
    pilot: str, plan_file: str | None, design: str | None, coefficient: str | None, effect_size: float | None,
    alpha: float | None, power: float | None, sides: str | None, ratio: float | None, dropout: float | None,
    cost_participant: float, cost_rating: float, cost_occasion: float, max_raters: int, max_occasions: int,
    fmt: str, output: str | None, paper: str, read_options: ReadOptions,
) -> None:
    """From pilot ratings to the cheapest design that reaches the target power.

    PILOT has one row per rating with the columns subject, rater, score and optionally
    occasion (other names mapped with --subject, --rater, --score, --occasion; rows chosen with
    --where). CSV, TSV, .xlsx (--sheet), Dataset-JSON and SAS transport files are read. The
    design is detected: raters nested in subjects (r:p)
    when no rater rated two subjects, else subjects x raters (p x r) or subjects x raters x
    occasions (p x r x o). Subjects with missing cells are dropped and counted.

    The G-study gives the variance components (ANOVA, Brennan 2001 ch. 3; negative estimates
    set to zero), the D-study Eρ² and Φ for k raters and m occasions. With --effect-size (or
    --plan) and costs, every design k <= --max-raters, m <= --max-occasions gets its
    reliability-adjusted sample size (exact noncentral t, observed d = d·√ρ, as
    `protolint size`) and the cost N x (participant + m x occasion + k x m x rating).

    \b
    Examples:
      protolint design pilot.csv --effect-size 0.4 --power 0.9 --cost-participant 2500 --cost-rating 120
      protolint design pilot.csv --plan plan.yaml --cost-participant 2500 --cost-rating 120 --cost-occasion 300
      protolint design pilot.csv --plan plan.yaml --cost-participant 2500 --format pdf --output design.pdf
      protolint design pilot.xlsx --sheet Pilot --subject Participant --rater Assessor --score Total --effect-size 0.4
    """
    from protolint.analysis import design as analysis
    from protolint.commands._shared import emit, to_json

    if fmt == "pdf" and not output:
        raise ProtolintError("--format pdf needs --output FILE")
    comparison_options = {"--effect-size": effect_size, "--alpha": alpha, "--power": power, "--sides": sides,
                          "--ratio": ratio, "--dropout": dropout}
    plan = None
    comparison = None
    if plan_file is not None:
        given = [name for name, value in comparison_options.items() if value is not None]
        if given:
            raise ProtolintError(f"{', '.join(given)} {'comes' if len(given) == 1 else 'come'} from the plan's sample_size with --plan; "
                                 f"drop {'it' if len(given) == 1 else 'them'} or drop --plan")
        from protolint.analysis.design_plan import plan_inputs

        plan = plan_inputs(plan_file)
    elif effect_size is not None:
        comparison = analysis.Comparison(
            effect_size, alpha=0.05 if alpha is None else alpha, power=0.8 if power is None else power,
            sides=2 if sides is None else int(sides), ratio=1.0 if ratio is None else ratio,
            dropout=0.0 if dropout is None else dropout)
    else:
        given = [name for name, value in comparison_options.items() if value is not None]
        if given:
            raise ProtolintError(f"{', '.join(given)} {'needs' if len(given) == 1 else 'need'} --effect-size (or --plan)")
    ratings = analysis.read_pilot(pilot, read_options)
    report = analysis.analyse(
        ratings, design=design, coefficient=coefficient, comparison=comparison,
        costs=analysis.Costs(cost_participant, cost_rating, cost_occasion),
        max_raters=max_raters, max_occasions=max_occasions, plan=plan, sha256=analysis.file_sha256(pilot))
    data = report.to_json()
    if fmt == "json":
        emit(to_json(data), output, "JSON design report")
    elif fmt == "text":
        emit(render_text(data), output, "design report")
    else:
        from protolint.render.design_report import render_html, render_pdf

        if fmt == "html":
            emit(render_html(report, paper), output, "HTML design report")
        else:
            emit(render_pdf(report, paper), output, "PDF design report", binary=True)
