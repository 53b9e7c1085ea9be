"""``protolint agreement``: reliability coefficients from a subjects x raters file."""

from __future__ import annotations

from typing import TYPE_CHECKING

import click

from protolint.analysis.agreement import LIMITS_HELP as KAPPA_LIMITS, MAX_BOOTSTRAP
from protolint.data.rawfile import LIMITS_HELP as DATA_LIMITS

from protolint.analysis.agreement import DEFAULT_BOOTSTRAP, SCALES
from protolint.commands._shared import emit, to_json
from protolint.commands.base import ProtolintCommand
from protolint.data.options import TABLE_ROLES, reader_options
from protolint.errors import ProtolintError

if TYPE_CHECKING:
    from protolint.data import ReadOptions


@click.command("agreement", cls=ProtolintCommand, epilog=f"{DATA_LIMITS} {KAPPA_LIMITS} --bootstrap up to {MAX_BOOTSTRAP:,}.")
@click.argument("ratings", metavar="RATINGS.csv", type=click.Path(dir_okay=False))
@click.option("--scale", type=click.Choice(SCALES), default="interval", show_default=True,
              help="Level of measurement of the ratings; selects the coefficients.")
@click.option("--confidence", type=float, default=0.95, show_default=True, help="Confidence level of the intervals.")
@click.option("--categories", metavar="LIST|RANGE",
              help="The scale's full category set, e.g. 0,1,2,3,4 or 0-4 (or text labels): weighted kappa, "
                   "Fleiss' kappa and Gwet's AC1/AC2 then count unused categories too.")
@click.option("--plan", "plan_file", metavar="PLAN", help="Take the category set from this plan's scale (with --instrument).")
@click.option("--instrument", metavar="ID", help="The instrument of --plan whose scale gives the categories.")
@click.option("--table", "as_table", is_flag=True,
              help="RATINGS.csv is a contingency table of two raters (rater 1's categories down, rater 2's across).")
@click.option("--bootstrap", type=int, default=DEFAULT_BOOTSTRAP, show_default=True, metavar="N",
              help="Bootstrap replicates for Krippendorff's alpha interval; 0 for no interval.")
@click.option("--format", "fmt", type=click.Choice(("text", "json")), default="text", show_default=True, help="Output format.")
@click.option("--output", "-o", type=click.Path(dir_okay=False), help="Write to this file instead of standard output.")
@reader_options(roles=TABLE_ROLES)
def command(ratings: str, scale: str, confidence: float, categories: str | None, plan_file: str | None,
            instrument: str | None, as_table: bool, bootstrap: int, fmt: str, output: str | None,
            read_options: ReadOptions) -> None:
    """Reliability coefficients from rating data.

    RATINGS.csv has a header row, one row per subject, the subject id in the first column and
    one column per rater (or occasion); an empty cell is a missing rating. The file may also be
    .tsv, .xlsx, Dataset-JSON 1.1 (.json, .ndjson) or SAS transport (.xpt), and long data (one
    row per rating) is read with --subject/--rater/--score (or --columns sdtm-qs). Interval scale: the
    six ICC forms and Krippendorff's alpha, judged by Koo & Li (2016). Ordinal and nominal
    scales: Krippendorff's alpha, Fleiss' kappa, Cohen's kappa (two raters) and Gwet's AC1
    (AC2 on ordinal data), judged by Landis & Koch (1977). Each interpretation judges the whole
    confidence interval. A file that is a contingency table is refused unless --table is given.

    \b
    Examples:
      protolint agreement certification_photos.csv --scale ordinal --categories 0-4
      protolint agreement grades.csv --scale ordinal --plan plan.yaml --instrument PHG5 --format json
      protolint agreement crosstab.csv --table --scale nominal
      protolint agreement qs.xpt --columns sdtm-qs --where QSTESTCD=HLSC8TOT
    """
    from protolint.analysis import agreement, agreement_input

    if categories is not None and plan_file is not None:
        raise ProtolintError("give either --categories or --plan with --instrument, not both")
    if (plan_file is None) != (instrument is None):
        raise ProtolintError("--plan and --instrument go together (the instrument whose scale gives the categories)")
    declared = None
    source = "--categories"
    if categories is not None:
        declared = agreement_input.parse_categories(categories)
    elif plan_file is not None and instrument is not None:
        declared = agreement_input.categories_from_plan(plan_file, instrument)
        source = f"the scale of {instrument} in {plan_file}"
    table = agreement_input.read_ratings(ratings, scale, as_table=as_table, read_options=read_options)
    report = agreement.analyse(table, scale, confidence, categories=declared, categories_source=source,
                               bootstrap=bootstrap, read_as_table=as_table)
    text = to_json(report.to_json()) if fmt == "json" else agreement.format_text(report)
    emit(text, output, f"{fmt} agreement report")
