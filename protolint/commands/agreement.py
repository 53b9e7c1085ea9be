"""``protolint agreement``: reliability coefficients from a subjects x raters CSV file."""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING, Any

import click

from protolint import CAUTION
from protolint.commands._shared import emit, to_json
from protolint.commands.base import ProtolintCommand
from protolint.errors import ProtolintError

if TYPE_CHECKING:
    from protolint.data import RatingTable, ReadOptions

SCALES = ("interval", "ordinal", "nominal")

_KAPPA_ON_INTERVAL = (
    "kappa-type coefficients treat scores as unordered categories; not used on an interval scale "
    "(rerun with --scale ordinal or nominal for category data)"
)
_ICC_NOT_INTERVAL = (
    "the ICC assumes equally spaced (interval) scores; rerun with --scale interval if the scores are"
)
_ICC_BANDS = "Koo & Li 2016"
_KAPPA_BANDS = "Landis & Koch 1977"


def _entry(value: float, low: float | None, high: float | None, **extra: Any) -> dict[str, Any]:
    out: dict[str, Any] = {"value": value, "ci": None if low is None else [low, high]}
    out.update(extra)
    return out


def analyse(table: RatingTable, scale: str, confidence: float) -> dict[str, Any]:
    """All coefficients that apply to ``scale``, as the JSON contract of DESIGN section 3."""
    from protolint import stats

    values = table.values
    n_raters = values.shape[1]
    coefficients: dict[str, dict[str, Any]] = {}
    skipped: dict[str, str] = {}
    notes: list[str] = []

    def attempt(name: str, compute: Callable[[], dict[str, Any]]) -> None:
        try:
            coefficients[name] = compute()
        except ValueError as error:
            skipped[name] = str(error)

    def dropped_note(label: str, dropped: int, used: int) -> None:
        if dropped:
            notes.append(f"{label}: {dropped} subject(s) with a missing rating dropped; {used} complete subject(s) used")

    if scale == "interval":
        try:
            result = stats.icc(values, confidence=confidence)
        except ValueError as error:
            for name in stats.ICC_NAMES:
                skipped[name] = str(error)
        else:
            dropped_note("ICC", result.n_dropped, result.n_subjects)
            for form in result.forms:
                coefficients[form.name] = _entry(
                    form.value, form.ci.low, form.ci.high,
                    band=stats.koo_li_2016(form.value),
                    mcgraw_wong=form.mcgraw_wong, model=form.model, type=form.type, unit=form.unit,
                    f_test={"f": form.f_test.f, "df1": form.f_test.df1, "df2": form.f_test.df2, "p_value": form.f_test.p_value},
                    subjects_used=result.n_subjects,
                )
    else:
        for name in stats.ICC_NAMES:
            skipped[name] = _ICC_NOT_INTERVAL

    def alpha() -> dict[str, Any]:
        r = stats.krippendorff_alpha(values, level=scale, confidence=confidence)
        low, high = (r.ci.low, r.ci.high) if r.ci else (None, None)
        return _entry(r.value, low, high, band=stats.landis_koch_1977(r.value), level=r.level,
                      subjects_used=r.n_units, ci_method=f"bootstrap over subjects, {r.n_boot} replicates")

    attempt("krippendorff_alpha", alpha)

    if scale == "interval":
        for name in ("fleiss_kappa", "cohen_kappa", "gwet_ac1"):
            skipped[name] = _KAPPA_ON_INTERVAL
    else:
        def fleiss() -> dict[str, Any]:
            r = stats.fleiss_kappa(values, confidence=confidence)
            dropped_note("Fleiss' kappa", r.n_dropped, r.n_subjects)
            per_category = {
                _category_label(table, c.category): {"value": c.value, "se0": c.se0, "z": c.z}
                for c in r.categories
            }
            return _entry(r.value, r.ci.low, r.ci.high, band=stats.landis_koch_1977(r.value), se=r.se, se0=r.se0,
                          z=r.z, p_value=r.p_value, categories=per_category, subjects_used=r.n_subjects)

        attempt("fleiss_kappa", fleiss)
        kappa_names = ["cohen_kappa"] + (["cohen_kappa_linear", "cohen_kappa_quadratic"] if scale == "ordinal" else [])
        if n_raters != 2:
            for name in kappa_names:
                skipped[name] = f"Cohen's kappa needs exactly 2 raters, the file has {n_raters} (see fleiss_kappa)"
        else:
            for name, weights in zip(kappa_names, ("unweighted", "linear", "quadratic")):
                def cohen(weights: str = weights) -> dict[str, Any]:
                    r = stats.cohen_kappa(values, weights=weights, confidence=confidence)
                    if weights == "unweighted":
                        dropped_note("Cohen's kappa", r.n_dropped, r.n_subjects)
                    return _entry(r.value, r.ci.low, r.ci.high, band=stats.landis_koch_1977(r.value), weights=weights,
                                  se=r.se, se0=r.se0, z=r.z, p_value=r.p_value, subjects_used=r.n_subjects)

                attempt(name, cohen)

        def ac1() -> dict[str, Any]:
            r = stats.gwet_ac1(values, confidence=confidence)
            return _entry(r.value, r.ci.low, r.ci.high, band=stats.landis_koch_1977(r.value), se=r.se,
                          subjects_used=r.n_subjects)

        attempt("gwet_ac1", ac1)
        if scale == "ordinal":
            def ac2() -> dict[str, Any]:
                r = stats.gwet_ac2(values, weights="quadratic", confidence=confidence)
                return _entry(r.value, r.ci.low, r.ci.high, band=stats.landis_koch_1977(r.value), se=r.se,
                              weights="quadratic", subjects_used=r.n_subjects)

            attempt("gwet_ac2", ac2)

    return {
        "file": table.path,
        "subjects": len(table.subjects),
        "raters": n_raters,
        "rater_names": list(table.columns),
        "scale": scale,
        "missing": table.missing,
        "confidence": confidence,
        "coefficients": coefficients,
        "skipped": skipped,
        "bands": {"icc": _ICC_BANDS, "kappa_type": _KAPPA_BANDS},
        "notes": notes,
        "input": table.provenance.to_json() if table.provenance else None,
        "caution": CAUTION,
    }


def _category_label(table: RatingTable, value: float) -> str:
    if table.labels is not None:
        return table.labels[int(value)]
    return f"{value:g}"


_DISPLAY = {
    "krippendorff_alpha": "Krippendorff's alpha",
    "fleiss_kappa": "Fleiss' kappa",
    "cohen_kappa": "Cohen's kappa",
    "cohen_kappa_linear": "Cohen's kappa, linear weights",
    "cohen_kappa_quadratic": "Cohen's kappa, quadratic weights",
    "gwet_ac1": "Gwet's AC1",
    "gwet_ac2": "Gwet's AC2, quadratic weights",
}


def _fmt(x: float) -> str:
    return f"{x:6.3f}"


def render_text(report: dict[str, Any]) -> str:
    """A readable table with the interpretation band of every value."""
    level = round(report["confidence"] * 100, 4)
    lines = [
        f"Agreement in {report['file']}",
        f"{report['subjects']} subjects x {report['raters']} raters, {report['scale']} scale, "
        f"{report['missing']} missing cell(s); {level:g}% confidence intervals",
        *provenance_lines(report.get("input")),
        "",
    ]
    header = f"{'Coefficient':<34} {'Value':>6}  {f'{level:g}% CI':<17} {'N':>4}  Band"
    lines += [header, "-" * len(header)]
    for name, entry in report["coefficients"].items():
        label = name
        if name.startswith("ICC"):
            label = f"{name} = {entry['mcgraw_wong']}"
        elif name in _DISPLAY:
            label = _DISPLAY[name] + (f" ({entry['level']})" if name == "krippendorff_alpha" else "")
        ci = entry["ci"]
        ci_text = f"[{_fmt(ci[0])}, {_fmt(ci[1])}]" if ci else "-"
        source = _ICC_BANDS if name.startswith("ICC") else _KAPPA_BANDS
        lines.append(f"{label:<34} {_fmt(entry['value'])}  {ci_text:<17} {entry['subjects_used']:>4}  {entry['band']} ({source})")
    if any(name.startswith("ICC") for name in report["coefficients"]):
        lines += [
            "",
            "ICC models (McGraw & Wong 1996): ICC(1,.) one-way random, absolute agreement; ICC(2,.) two-way",
            "random, absolute agreement; ICC(3,.) two-way mixed, consistency. The ',1' forms describe one",
            "rater, the ',k' forms the mean of all raters. F tests and exact intervals: McGraw & Wong 1996.",
        ]
    bands = (
        f"Bands: ICC by {_ICC_BANDS} (poor < .50 <= moderate < .75 <= good < .90 <= excellent; the "
        f"authors ask that the whole interval be judged, not only the estimate); kappa-type coefficients "
        f"(kappa, Krippendorff's alpha, Gwet's AC) by {_KAPPA_BANDS} (poor < 0 <= slight <= .20 < fair "
        f"<= .40 < moderate <= .60 < substantial <= .80 < almost perfect)."
    )
    lines += ["", click.wrap_text(bands, width=100)]
    if report["notes"]:
        lines += ["", "Notes:"] + [f"  - {note}" for note in report["notes"]]
    if report["skipped"]:
        # One line per reason: the six ICC forms usually share theirs.
        by_reason: dict[str, list[str]] = {}
        for name, reason in report["skipped"].items():
            by_reason.setdefault(reason, []).append(name)
        lines += ["", "Not computed:"]
        lines += [f"  - {', '.join(names)}: {reason}" for reason, names in by_reason.items()]
    lines += ["", click.wrap_text(CAUTION, width=100)]
    return "\n".join(lines) + "\n"


@click.command("agreement", cls=ProtolintCommand)
@click.argument("ratings", metavar="RATINGS.csv", type=click.Path(dir_okay=False))
@click.option("--scale", type=click.Choice(SCALES), default="interval", show_default=True,
              help="Level of measurement of the ratings; selects the coefficients.")
@click.option("--confidence", type=float, default=0.95, show_default=True, help="Confidence level of the intervals.")
@click.option("--format", "fmt", type=click.Choice(("text", "json")), default="text", show_default=True, help="Output format.")
@click.option("--output", "-o", type=click.Path(dir_okay=False), help="Write to this file instead of standard output.")
@reader_options(roles=TABLE_ROLES)
def command(ratings: str, scale: str, confidence: float, fmt: str, output: str | None, read_options: ReadOptions) -> None:
    """Reliability coefficients from rating data.

    RATINGS.csv has a header row, one row per subject, the subject id in the first column and
    one column per rater (or occasion); an empty cell is a missing rating. The file may also be
    .tsv, .xlsx, Dataset-JSON 1.1 (.json, .ndjson) or SAS transport (.xpt), and long data (one
    row per rating) is read with --subject/--rater/--score (or --columns sdtm-qs). Interval scale: the
    six ICC forms and Krippendorff's alpha. Ordinal and nominal scales: Krippendorff's alpha,
    Fleiss' kappa, Cohen's kappa (two raters) and Gwet's AC1 (AC2 on ordinal data).

    \b
    Example:
      protolint agreement certification_photos.csv --scale ordinal --format json
      protolint agreement qs.xpt --columns sdtm-qs --where QSTESTCD=HLSC8TOT
    """
    from protolint.data import read_rating_table

    if not 0.0 < confidence < 1.0:
        raise ProtolintError(f"--confidence must be between 0 and 1, got {confidence}")
    table = read_rating_table(ratings, read_options, numeric=scale != "nominal", kind="rater", scale=scale)
    report = analyse(table, scale, confidence)
    text = to_json(report) if fmt == "json" else render_text(report)
    emit(text, output, f"{fmt} agreement report")
