"""``protolint drift``: rater certification, drift and the recertification due list."""

from __future__ import annotations

import sys
from datetime import date
from pathlib import PurePath
from typing import TYPE_CHECKING

import click

from protolint.data.rawfile import LIMITS_HELP as DATA_LIMITS

from protolint import CAUTION
from protolint.commands._shared import emit, to_json
from protolint.commands.base import ProtolintCommand, parse_date_option
from protolint.data.options import reader_options
from protolint.errors import ProtolintError
from protolint.wording import plural

if TYPE_CHECKING:
    from protolint.analysis.drift import DriftReport
    from protolint.data.roles import ReadOptions

FORMATS = ("text", "json", "html", "pdf")


def _num(value: float | None, digits: int = 2) -> str:
    return "-" if value is None else f"{value:.{digits}f}"


def render_text(report: DriftReport) -> str:
    """The terminal report: what to do first, then the evidence."""
    from protolint.analysis.drift import STATUS_WORDS, UNNAMED_INSTRUMENT, instrument_words

    def with_instrument(*parts: str) -> str:
        # Data with no instrument column has one unnamed instrument: its "-" is a table's
        # "none", so lines of words leave it out instead of printing it.
        return ", ".join(part for part in parts if part != UNNAMED_INSTRUMENT)

    width = 100
    lines = [f"Rater drift as of {report.as_of}" + (f" — {report.study}" if report.study else ""),
             f"Data {report.data_file} (SHA-256 {report.data_sha256[:16]}…)"
             + (f"; plan {report.plan_file} (SHA-256 {(report.plan_sha256 or '')[:16]}…)" if report.plan_file else "; no plan"),
             ""]
    counts = report.counts()
    lines.append("Raters: " + ", ".join(f"{n} {code}" for code, n in counts.items() if n) + f" ({len(report.raters)} in all)")
    lines += ["", f"DUE (overdue first; upcoming within {report.within_days} days of {report.as_of})"]
    if report.due:
        for item in report.due:
            flag = "OVERDUE " if item.overdue else ""
            lines.append(f"  {item.due}  {flag}{item.rater} ({with_instrument(item.site, item.instrument)}): {item.action}")
            lines += ["      " + text for text in click.wrap_text(item.reason, width - 6).splitlines()]
    else:
        lines.append("  nothing due")
    if report.roster_missing or report.not_on_roster:
        lines += ["", "ROSTER"]
        if report.roster_missing:
            lines.append(f"  on the plan's roster but absent from the data: {', '.join(report.roster_missing)}")
        if report.not_on_roster:
            lines.append(f"  in the data but not on the plan's roster: {', '.join(report.not_on_roster)}")

    lines += ["", "RATERS"]
    header = (f"  {'rater':<12} {'site':<8} {'instr.':<8} {'status':<21} {'cert ICC(A,1) [95% CI]':<25} "
              f"{'max |dev|':>9} {'rounds':>6}  {'first signal':<12} {'bias [LoA]'}")
    lines += [header, "  " + "-" * (len(header) - 2)]
    for r in report.raters:
        cert = r.certification
        icc = "-"
        if cert is not None and cert.icc is not None:
            ci = f" [{cert.icc_ci[0]:.2f}, {cert.icc_ci[1]:.2f}]" if cert.icc_ci else ""
            icc = f"{cert.icc:.3f}{ci}" + ("*" if cert.marginal else "")
        ba = r.bland_altman
        bias = "-" if ba is None else f"{ba.bias:+.2f} [{ba.loa[0]:.1f}, {ba.loa[1]:.1f}]"
        lines.append(f"  {r.rater:<12} {r.site:<8} {r.instrument:<8} {r.status:<21} {icc:<25} "
                     f"{_num(cert.max_abs_deviation if cert else None, 1):>9} {len(r.rounds):>6}  "
                     f"{str(r.first_signal or '-'):<12} {bias}")
    if any(r.certification and r.certification.marginal for r in report.raters):
        lines.append("  * passes on the estimate, but more than half of its 95 % interval lies below the minimum")
    details = [r for r in report.raters if r.status != "ok" or r.notes or (r.certification and r.certification.marginal)]
    if details:
        lines += ["", "WHY"]
        for r in details:
            about = with_instrument(r.instrument)
            lines.append(f"  {r.rater}{f' ({about})' if about else ''}: {STATUS_WORDS[r.status]}")
            if r.certification is not None:
                lines.append(f"      certification {r.certification.day}, {r.certification.cases} cases: "
                             + "; ".join(r.certification.reasons))
            if r.first_signal is not None:
                lines.append(f"      chart signal on {r.first_signal}: scores {r.signal_direction} against the reference "
                             f"(mean deviation {_num(r.mean_deviation)} over {len(r.rounds)} rounds)")
            for bad in (x for x in r.rounds if x.over_threshold):
                lines.append(f"      round {bad.day} outside the drift threshold: {bad.threshold_reason}")
            lines += [f"      note: {note}" for note in r.notes]

    chart = report.chart
    s = chart.settings
    lines += ["", "CHART"]
    if s.method == "cusum":
        what = f"two-sided tabular CUSUM (Page 1954), k = {s.k:g}, h = {s.h:.3f}"
    else:
        what = f"EWMA with fixed limits (Roberts 1959; Lucas & Saccucci 1990), lambda = {s.lam:g}, L = {s.L:.3f}"
    if s.arl0 is not None:
        what += f" (limit solved for an in-control run length of {s.arl0:g} rounds)"
    lines.append("  " + what)
    shifted = ", ".join(f"{size:g} SD: {arl:.1f}" for size, arl in chart.shifted)
    lines.append(f"  average run length, in rounds: in control {chart.in_control:.1f}; after a shift of {shifted}")
    lines.append(f"  ({chart.arl_method})")
    for rule in report.rules:
        lines += ["  " + text for text in click.wrap_text(f"{rule.pool}: {report.plain_words(rule)}", width - 2).splitlines()]
    for instrument, (sd, source) in report.scale_sd.items():
        text = f"deviations of {instrument_words(instrument)} are standardised by an SD of {sd:.3f} points per rating ({source})"
        lines += ["  " + line for line in click.wrap_text(text, width - 2).splitlines()]

    lines += ["", "WHOLE GROUP AND SITES (raters with their own signal left out; a shift the others share "
                  "points at the reference scores, the instrument or training)"]
    for g in report.group + report.sites:
        where = f"site {g.site}" if g.site else "all raters"
        signal = f"signal on {g.first_signal} ({g.direction})" if g.first_signal else "no signal"
        left = f" (+{g.left_out} left out)" if g.left_out else ""
        label = " ".join(part for part in (with_instrument(g.instrument), where) if part)
        lines.append(f"  {label}: {plural(g.raters, 'rater')}{left}, {plural(g.periods, 'period')}, mean deviation "
                     f"{_num(g.mean_deviation)}; {signal}")

    lines += ["", "RULES IN FORCE"]
    for rule in report.rules:
        lines.append(f"  pool {rule.pool} (from the {rule.source}): pass if {rule.criterion.describe()}; "
                     f"monitoring every {rule.interval_weeks or '-'} weeks; drift threshold "
                     f"{rule.drift_threshold.describe() if rule.drift_threshold else 'none'}; recertify every "
                     f"{rule.recertify_months or '-'} months; triggers {', '.join(rule.triggers) or 'none'}")
    for note in report.notes:
        lines.append(f"  note: {note}")
    lines += ["", click.wrap_text(CAUTION, width=width)]
    return "\n".join(lines) + "\n"


def default_output(data: str, fmt: str) -> str | None:
    return f"{PurePath(data).stem}-drift.pdf" if fmt == "pdf" else None


@click.command("drift", cls=ProtolintCommand, epilog=DATA_LIMITS)
@click.argument("data", metavar="DATA")
@click.option("--plan", type=click.Path(dir_okay=False), help="Measurement plan: criteria, intervals, roster and schedule.")
@click.option("--pool", metavar="ID", help="Only this rater pool.")
@click.option("--as-of", callback=parse_date_option, metavar="YYYY-MM-DD", help="Judge as of this date (default: the latest date in DATA).")
@click.option("--format", "fmt", type=click.Choice(FORMATS), default="text", show_default=True, help="Output format.")
@click.option("--output", "-o", type=click.Path(dir_okay=False), help="Write to this file (PDF default: <data-stem>-drift.pdf).")
@click.option("--min-icc", type=float, help="Certification: minimum ICC(A,1) against the reference "
              "(default without a plan: 0.80).")
@click.option("--max-deviation", type=float, help="Certification and drift threshold: largest allowed |score - reference|.")
@click.option("--interval-weeks", type=click.IntRange(1, 520), help="Weeks between monitoring rounds (default without a plan: 4).")
@click.option("--recertify-months", type=click.IntRange(1, 240), help="Months between certifications (default without a plan: 12).")
@click.option("--scale", type=click.Choice(("interval", "ordinal")), help="Scores' level (default: the plan's instrument, else interval); "
              "ordinal adds weighted kappa.")
@click.option("--scale-sd", type=click.FloatRange(min=0, min_open=True),
              help="SD that standardises deviations (default: pooled SD of certification deviations).")
@click.option("--method", type=click.Choice(("cusum", "ewma")), default="cusum", show_default=True, help="Drift chart.")
@click.option("--k", "k", type=click.FloatRange(min=0), default=0.5, show_default=True, help="CUSUM reference value (SD).")
@click.option("--h", "h", type=click.FloatRange(min=0, min_open=True), help="CUSUM decision interval (default: solved for --arl0).")
@click.option("--lambda", "lam", type=click.FloatRange(0, 1, min_open=True), default=0.2, show_default=True, help="EWMA smoothing constant.")
@click.option("--L", "L", type=click.FloatRange(min=0, min_open=True), help="EWMA limit width (default: solved for --arl0).")
@click.option("--arl0", type=click.FloatRange(min=2), default=370.0, show_default=True,
              help="In-control average run length, in rounds, that h or L is solved for.")
@click.option("--due-within", "within_days", type=click.IntRange(0, 3650), default=90, show_default=True,
              help="Days ahead the due list looks.")
@click.option("--fail-on", type=click.Choice(("error", "warning", "never")), default="error", show_default=True,
              help="error: exit 1 when a rater failed, is not certified, drifts or is overdue; warning: also for "
                   "marginal passes, too little data, roster gaps and anything due soon.")
@reader_options(roles=("date", "site", "rater", "case", "score", "reference"))
def command(data: str, plan: str | None, pool: str | None, as_of: date | None, fmt: str, output: str | None,
            min_icc: float | None, max_deviation: float | None, interval_weeks: int | None,
            recertify_months: int | None, scale: str | None, scale_sd: float | None, method: str, k: float,
            h: float | None, lam: float, L: float | None, arl0: float, within_days: int, fail_on: str,
            read_options: ReadOptions) -> None:
    """Judge certification and monitoring ratings of reference cases against the plan.

    DATA has one row per rating of a reference case, with columns date (YYYY-MM-DD), site,
    rater, case, score, reference (other names mapped with --date, --rater, ...), and optionally
    kind (certification, recertification or monitoring; default monitoring) and instrument.
    CSV, TSV, .xlsx, Dataset-JSON and SAS transport files are read.

    Without --plan the options give the rules; their defaults are an ICC(A,1) of at least 0.80,
    a round every 4 weeks, recertification every 12 months, a CUSUM with k = 0.5 and h solved
    for an in-control run length of 370 rounds.

    Exit code 0 when nothing at --fail-on was found, 1 when something was, 2 for bad input
    (nothing is written then).

    \b
    Examples:
      protolint drift ratings.csv --plan plan.yaml
      protolint drift ratings.csv --min-icc 0.75 --interval-weeks 8 --format json
      protolint drift ratings.csv --plan plan.yaml --format pdf --output drift.pdf
    """
    from protolint.analysis.drift import Options, analyse, read_ratings

    if min_icc is not None and not 0.0 < min_icc < 1.0:
        raise ProtolintError(f"drift: --min-icc must be between 0 and 1, got {min_icc}")
    loaded = None
    if plan is not None:
        from protolint.plan import read_plan_file

        loaded = read_plan_file(plan)
    ratings = read_ratings(data, read_options)
    options = Options(pool=pool, as_of=as_of, min_icc=min_icc, max_deviation=max_deviation,
                      interval_weeks=interval_weeks, recertify_months=recertify_months, scale=scale,
                      scale_sd=scale_sd, method=method, k=k, h=h, lam=lam, L=L, arl0=arl0, within_days=within_days)
    report = analyse(ratings, loaded, options)
    if fmt in ("html", "pdf"):
        from protolint.render.drift_report import render_drift

        from protolint.data.rawfile import text_attachment

        attachment = text_attachment(data) if fmt == "pdf" else None
        plan_model = loaded.plan if loaded else None
        document = render_drift(report, fmt, attachment,
                                study_title=plan_model.study.title if plan_model else None,
                                sponsor=plan_model.study.sponsor if plan_model else None)
        target = output or default_output(data, fmt)
        emit(document, target, f"drift report ({fmt})", binary=fmt == "pdf")
    else:
        emit(to_json(report.to_json()) if fmt == "json" else render_text(report), output, f"drift report ({fmt})")
    if report.needs_action(fail_on):
        sys.exit(1)
