"""Reliability coefficients of a subjects x raters table, as one report.

The report holds every coefficient that applies to the scale, each with its interval and the
interval's method, the subjects and ratings it rests on, and one interpretation judged by the
interval under one named scheme per report: Koo & Li (2016) on an interval scale (the ICC
forms and Krippendorff's interval alpha), Landis & Koch (1977) for the kappa-type coefficients
of ordinal and nominal data. Coefficients that do not apply, or are undefined on the data, are
listed with the reason in words.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

from protolint import CAUTION
from protolint.errors import ProtolintError
from protolint.stats.bands import KOO_LI_2016, LANDIS_KOCH_1977, BandScale
from protolint.wording import plural

if TYPE_CHECKING:
    import numpy as np
    from numpy.typing import NDArray

    from protolint.data import RatingTable

SCALES = ("interval", "ordinal", "nominal")
DEFAULT_BOOTSTRAP = 1000
# More replicates than this add nothing to a percentile interval but time (ours).
MAX_BOOTSTRAP = 20_000

# Koo & Li (2016) ask for at least 30 heterogeneous subjects in a reliability study; below that
# an interval is wide and a band says little.
FEW_SUBJECTS = 30

NAMES: dict[str, str] = {
    "krippendorff_alpha": "Krippendorff's alpha",
    "fleiss_kappa": "Fleiss' kappa",
    "cohen_kappa": "Cohen's kappa",
    "cohen_kappa_linear": "Cohen's kappa (linear weights)",
    "cohen_kappa_quadratic": "Cohen's kappa (quadratic weights)",
    "gwet_ac1": "Gwet's AC1",
    "gwet_ac2": "Gwet's AC2 (quadratic weights)",
}

_KAPPA_ON_INTERVAL = (
    "Kappa-type coefficients treat scores as unordered categories, so they are not used on an "
    "interval scale; rerun with --scale ordinal or --scale nominal for category data."
)
_ICC_NOT_INTERVAL = (
    "The ICC assumes equally spaced (interval) scores; rerun with --scale interval if the "
    "scores are equally spaced."
)

_CI_ICC = "exact F-distribution interval (McGraw & Wong 1996)"
_CI_COHEN = "normal approximation with the large-sample standard error of Fleiss, Cohen & Everitt (1969)"
_CI_GWET = "Student t interval with Gwet's (2014) variance"


def human_name(key: str) -> str:
    """The name a reader knows a coefficient by (the ICC keys are already such names)."""
    return NAMES.get(key, key)


def scheme_for(scale: str) -> BandScale:
    """The one interpretation scheme of a report on ``scale``."""
    return KOO_LI_2016 if scale == "interval" else LANDIS_KOCH_1977


@dataclass(frozen=True)
class Interval:
    low: float
    high: float
    method: str


@dataclass(frozen=True)
class Coefficient:
    """One coefficient of the report.

    ``extra`` holds the coefficient's own JSON fields (standard errors, tests, the McGraw &
    Wong labels of an ICC form) in the order they are written.
    """

    key: str
    value: float
    interval: Interval | None
    no_interval_reason: str | None
    band: str
    interpretation: str
    subjects_used: int
    ratings_used: int
    extra: Mapping[str, Any] = field(default_factory=dict)

    @property
    def name(self) -> str:
        return human_name(self.key)

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {
            "value": self.value,
            "ci": None if self.interval is None else [self.interval.low, self.interval.high],
        }
        out["band"] = self.band
        out.update(self.extra)
        out["subjects_used"] = self.subjects_used
        out["ratings_used"] = self.ratings_used
        out["ci_method"] = None if self.interval is None else self.interval.method
        if self.no_interval_reason:
            out["no_interval_reason"] = self.no_interval_reason
        out["interpretation"] = self.interpretation
        return out


@dataclass(frozen=True)
class CategorySet:
    """The categories the category-based coefficients used, and where they came from."""

    declared: tuple[str, ...]
    source: str
    used: tuple[str, ...]
    unused: tuple[str, ...]

    def to_json(self) -> dict[str, Any]:
        return {"declared": list(self.declared), "source": self.source, "used": list(self.used), "unused": list(self.unused)}


@dataclass(frozen=True)
class AgreementReport:
    file: str
    subjects: int
    raters: int
    rater_names: tuple[str, ...]
    scale: str
    missing: int
    confidence: float
    coefficients: tuple[Coefficient, ...]
    skipped: tuple[tuple[str, str], ...]
    scheme: BandScale
    categories: CategorySet | None
    bootstrap: int
    read_as_table: bool
    notes: tuple[str, ...]
    warnings: tuple[str, ...]
    input: dict[str, Any] | None = None
    """Where the table came from (the reader's provenance summary), when known."""

    def coefficient(self, key: str) -> Coefficient:
        for entry in self.coefficients:
            if entry.key == key:
                return entry
        raise KeyError(key)

    def to_json(self) -> dict[str, Any]:
        return {
            "file": self.file,
            "subjects": self.subjects,
            "raters": self.raters,
            "rater_names": list(self.rater_names),
            "scale": self.scale,
            "missing": self.missing,
            "confidence": self.confidence,
            "coefficients": {entry.key: entry.to_json() for entry in self.coefficients},
            "skipped": dict(self.skipped),
            # One scheme per report: both keys name it, as earlier reports had one key per family.
            "bands": {"icc": self.scheme.name, "kappa_type": self.scheme.name},
            "interpretation_scheme": {
                "name": self.scheme.name,
                "reference": self.scheme.reference,
                "bands": self.scheme.describe(),
                "judged_by": "the confidence interval (both ends); the estimate alone where there is no interval",
            },
            "categories": None if self.categories is None else self.categories.to_json(),
            "bootstrap_replicates": self.bootstrap,
            "read_as_contingency_table": self.read_as_table,
            "notes": list(self.notes),
            "warnings": list(self.warnings),
            "input": self.input,
            "caution": CAUTION,
        }


# --- analysis -------------------------------------------------------------------------------


def _krippendorff(values: NDArray[np.float64], level: str, confidence: float, bootstrap: int) -> Any:
    from protolint import stats

    return stats.krippendorff_alpha(values, level=level, confidence=confidence, bootstrap=bootstrap)


def _ratings_not_declared(unknown: Sequence[str], declared: Sequence[str]) -> str:
    one = len(unknown) == 1
    return (f"{'rating' if one else 'ratings'} {', '.join(unknown)} {'is' if one else 'are'} not among the "
            f"declared categories {', '.join(declared)}")


def _category_values(table: RatingTable, declared: Sequence[str] | None) -> tuple[NDArray[np.float64], list[float] | None, tuple[str, ...] | None]:
    """The ratings recoded for the declared categories, the category values, and the labels."""
    import numpy as np

    values = table.values
    if declared is None:
        return values, None, table.labels
    if table.labels is not None:
        unknown = sorted(set(table.labels) - set(declared))
        if unknown:
            raise ProtolintError(f"{table.path}: {_ratings_not_declared(unknown, declared)}")
        recode = np.array([declared.index(label) for label in table.labels], dtype=float)
        out = np.full(values.shape, np.nan)
        present = ~np.isnan(values)
        out[present] = recode[values[present].astype(int)]
        return out, [float(i) for i in range(len(declared))], tuple(declared)
    try:
        numbers = [float(c) for c in declared]
    except ValueError:
        raise ProtolintError(f"{table.path}: the ratings are numbers but --categories has text labels") from None
    observed = set(np.unique(values[~np.isnan(values)]).tolist())
    unknown = sorted(observed - set(numbers))
    if unknown:
        raise ProtolintError(f"{table.path}: {_ratings_not_declared([f'{u:g}' for u in unknown], declared)}")
    return values, numbers, None


# The kappa-type coefficients work on a subjects x categories count table and a categories x
# categories weight matrix: their time grows with subjects x categories squared. Beyond these
# bounds they are left out with the reason (Krippendorff's alpha is still computed, in time
# linear in the ratings). No rating scale read as categories has more than a few dozen levels;
# more distinct values usually mean continuous scores that belong on --scale interval.
MAX_CATEGORIES = 200
MAX_COUNT_CELLS = 20_000_000

LIMITS_HELP = (f"Kappa-type coefficients (Fleiss, Cohen, Gwet) are computed for at most {MAX_CATEGORIES} categories "
               f"and {MAX_COUNT_CELLS:,} subjects x categories.")


def category_limit_reason(n_categories: int, n_subjects: int) -> str | None:
    """Why the kappa-type coefficients are left out for this many categories, or None."""
    if n_categories > MAX_CATEGORIES:
        return (f"{n_categories:,} distinct categories, more than the {MAX_CATEGORIES} the kappa-type coefficients "
                "are computed for; scores with this many values are usually continuous: use --scale interval, or "
                "group them into categories")
    if n_categories * n_subjects > MAX_COUNT_CELLS:
        return (f"{n_subjects:,} subjects x {n_categories} categories is more than the {MAX_COUNT_CELLS:,} "
                "the kappa-type coefficients are computed for")
    return None


def _label(value: float, labels: tuple[str, ...] | None) -> str:
    return labels[int(value)] if labels is not None else f"{value:g}"


def _interval(low: float, high: float, method: str, n: int) -> tuple[Interval | None, str | None]:
    if not (math.isfinite(low) and math.isfinite(high)) or high - low <= 1e-12:
        return None, (f"no interval: with {plural(n, 'subject')} the standard error is 0 or undefined, which says "
                      "nothing about precision")
    return Interval(low, high, method), None


def analyse(
    table: RatingTable,
    scale: str,
    confidence: float = 0.95,
    *,
    categories: Sequence[str] | None = None,
    categories_source: str = "--categories",
    bootstrap: int = DEFAULT_BOOTSTRAP,
    read_as_table: bool = False,
) -> AgreementReport:
    """Every coefficient that applies to ``scale``, judged under one scheme."""
    import numpy as np

    from protolint import stats

    if scale not in SCALES:
        raise ProtolintError(f"scale must be one of {', '.join(SCALES)}, got {scale!r}")
    if not 0.0 < confidence < 1.0:
        raise ProtolintError(f"--confidence must be between 0 and 1, got {confidence}")
    if not 0 <= bootstrap <= MAX_BOOTSTRAP:
        raise ProtolintError(f"--bootstrap must be 0 (no interval) or a number of replicates up to {MAX_BOOTSTRAP:,}, "
                             f"got {bootstrap}")
    if categories is not None and scale == "interval":
        raise ProtolintError("--categories applies to --scale ordinal or nominal (the category-based coefficients)")
    scheme = scheme_for(scale)
    values = table.values
    n_raters = values.shape[1]
    coefficients: list[Coefficient] = []
    skipped: dict[str, str] = {}
    notes: list[str] = []
    warnings: list[str] = []
    few: dict[int, list[str]] = {}

    def judged(key: str, value: float, low: float | None, high: float | None, n_subjects: int, n_ratings: int,
               ci_method: str, **extra: Any) -> Coefficient:
        interval, reason = (None, "no interval was asked for") if low is None or high is None else _interval(low, high, ci_method, n_subjects)
        band = scheme.classify(value) if math.isfinite(value) else "undefined"
        if interval is None:
            interpretation = f"{band} (judged on the estimate alone, as there is no interval)"
        else:
            interpretation = scheme.judge(value, interval.low, interval.high)
        if n_subjects < FEW_SUBJECTS:
            few.setdefault(n_subjects, []).append(human_name(key))
        return Coefficient(key, value, interval, reason, band, interpretation, n_subjects, n_ratings, extra)

    def attempt(key: str, compute: Callable[[], Coefficient]) -> None:
        try:
            coefficients.append(compute())
        except ValueError as error:
            skipped[key] = _sentence(str(error))

    # Constant columns: compute what is defined, and say which column it is.
    for j, name in enumerate(table.columns):
        present = values[~np.isnan(values[:, j]), j]
        if present.size >= 2 and np.all(present == present[0]):
            warnings.append(
                f"Rater column {name!r} gives {_label(float(present[0]), table.labels)} to every subject it rated; "
                "the coefficients that are defined are computed, but check the file for a copy or export error."
            )

    def dropped_note(label: str, dropped: int, used: int) -> None:
        if dropped:
            notes.append(
                f"{label}: {plural(dropped, 'subject')} with a missing rating dropped; "
                f"{plural(used, 'complete subject')} used."
            )

    if table.missing:
        notes.append(
            f"{plural(table.missing, 'rating')} of {values.size} {'is' if table.missing == 1 else 'are'} missing; the "
            "Subjects and Ratings columns show what each coefficient used."
        )
    if scale == "interval":
        try:
            result = stats.icc(values, confidence=confidence)
        except ValueError as error:
            for name in stats.ICC_NAMES:
                skipped[name] = _sentence(str(error))
        else:
            dropped_note("ICC", result.n_dropped, result.n_subjects)
            for form in result.forms:
                coefficients.append(judged(
                    form.name, form.value, form.ci.low, form.ci.high, result.n_subjects, result.n_subjects * n_raters, _CI_ICC,
                    mcgraw_wong=form.mcgraw_wong, model=form.model, type=form.type, unit=form.unit,
                    f_test={"f": form.f_test.f, "df1": form.f_test.df1, "df2": form.f_test.df2, "p_value": form.f_test.p_value},
                ))
    else:
        for name in stats.ICC_NAMES:
            skipped[name] = _ICC_NOT_INTERVAL

    def alpha() -> Coefficient:
        r = _krippendorff(values, scale, confidence, bootstrap)
        low, high = (r.ci.low, r.ci.high) if r.ci else (None, None)
        method = f"percentile bootstrap over subjects, {r.n_boot} replicates"
        entry = judged("krippendorff_alpha", r.value, low, high, r.n_units, r.n_values, method, level=r.level)
        if r.ci is None:
            reason = "no interval: --bootstrap 0" if bootstrap == 0 else "no interval: no bootstrap replicate gave a defined alpha"
            entry = Coefficient(entry.key, entry.value, None, reason, entry.band, entry.interpretation,
                                entry.subjects_used, entry.ratings_used, entry.extra)
        return entry

    attempt("krippendorff_alpha", alpha)

    category_set: CategorySet | None = None
    if scale == "interval":
        for name in ("fleiss_kappa", "cohen_kappa", "gwet_ac1"):
            skipped[name] = _KAPPA_ON_INTERVAL
    else:
        coded, cats, labels = _category_values(table, categories)
        observed = np.unique(coded[~np.isnan(coded)])
        if cats is not None:
            used = tuple(c for c, v in zip(categories or (), cats) if v in set(observed.tolist()))
            unused = tuple(c for c, v in zip(categories or (), cats) if v not in set(observed.tolist()))
            category_set = CategorySet(tuple(categories or ()), categories_source, used, unused)
            if unused:
                notes.append(
                    f"Declared categories never used: {', '.join(unused)}; they still count in the weights and in "
                    "chance agreement of weighted kappa, Fleiss' kappa and Gwet's AC1/AC2."
                )
        else:
            shown = tuple(_label(float(v), labels) for v in observed)
            category_set = CategorySet(shown, "observed", shown, ())
            notes.append(
                "The categories are those observed in the file; declare the full set with --categories "
                "(or --plan and --instrument) so that a category nobody used still counts."
            )

        # Every coefficient below is kappa-type: beyond the bound each is left out with the one
        # reason, instead of computed (Krippendorff's alpha above is linear in the ratings).
        too_many = category_limit_reason(len(cats) if cats is not None else int(observed.size), values.shape[0])

        def attempt_kappa(key: str, compute: Callable[[], Coefficient]) -> None:
            if too_many:
                skipped[key] = too_many
            else:
                attempt(key, compute)

        def fleiss() -> Coefficient:
            r = stats.fleiss_kappa(coded, confidence=confidence, categories=cats)
            n_ratings = int(r.n_ratings)
            per_category = {_label(c.category, labels): {"value": c.value, "se0": c.se0, "z": c.z} for c in r.categories}
            return judged("fleiss_kappa", r.value, r.ci.low, r.ci.high, r.n_subjects, n_ratings, _CI_GWET, se=r.se,
                          se0=r.se0, z=r.z, p_value=r.p_value, categories=per_category, method=r.method)

        attempt_kappa("fleiss_kappa", fleiss)
        kappa_names = ["cohen_kappa"] + (["cohen_kappa_linear", "cohen_kappa_quadratic"] if scale == "ordinal" else [])
        if n_raters != 2 and not too_many:
            for name in kappa_names:
                skipped[name] = f"Cohen's kappa needs exactly 2 raters and the file has {n_raters}; see Fleiss' kappa."
        else:
            for name, weights in zip(kappa_names, ("unweighted", "linear", "quadratic")):
                def cohen(name: str = name, weights: str = weights) -> Coefficient:
                    r = stats.cohen_kappa(coded, weights=weights, confidence=confidence, categories=cats)
                    if weights == "unweighted":
                        dropped_note("Cohen's kappa", r.n_dropped, r.n_subjects)
                    return judged(name, r.value, r.ci.low, r.ci.high, r.n_subjects, 2 * r.n_subjects, _CI_COHEN,
                                  weights=weights, se=r.se, se0=r.se0, z=r.z, p_value=r.p_value)

                attempt_kappa(name, cohen)

        rated = coded[~np.isnan(coded).all(axis=1)] if coded.size else coded

        def ac1() -> Coefficient:
            r = stats.gwet_ac1(coded, confidence=confidence, categories=cats)
            return judged("gwet_ac1", r.value, r.ci.low, r.ci.high, r.n_subjects, _ratings_in(rated), _CI_GWET, se=r.se)

        attempt_kappa("gwet_ac1", ac1)
        if scale == "ordinal":
            def ac2() -> Coefficient:
                r = stats.gwet_ac2(coded, weights="quadratic", confidence=confidence, categories=cats)
                return judged("gwet_ac2", r.value, r.ci.low, r.ci.high, r.n_subjects, _ratings_in(rated), _CI_GWET,
                              se=r.se, weights="quadratic")

            attempt_kappa("gwet_ac2", ac2)

    if few:
        counts = sorted(few)
        names = [name for n in counts for name in few[n]]
        span = plural(counts[0], "subject") if len(counts) == 1 else f"{counts[0]} to {counts[-1]} subjects"
        what = "All coefficients rest" if len(names) == len(coefficients) else f"{_join(names)} {'rest' if len(names) > 1 else 'rests'}"
        warnings.append(
            f"{what} on {span}; fewer than {FEW_SUBJECTS} subjects give wide intervals and unstable bands (common "
            f"practice; Koo & Li 2016 advise at least {FEW_SUBJECTS} for a reliability study), so read them with care."
        )
    unique_warnings = tuple(dict.fromkeys(warnings))
    return AgreementReport(
        file=table.path,
        subjects=len(table.subjects),
        raters=n_raters,
        rater_names=tuple(table.columns),
        scale=scale,
        missing=table.missing,
        confidence=confidence,
        coefficients=tuple(coefficients),
        skipped=tuple(skipped.items()),
        scheme=scheme,
        categories=category_set,
        bootstrap=bootstrap,
        read_as_table=read_as_table,
        notes=tuple(notes),
        warnings=unique_warnings,
        input=table.provenance.to_json() if table.provenance is not None else None,
    )


def _ratings_in(values: NDArray[np.float64]) -> int:
    import numpy as np

    return int((~np.isnan(values)).sum())


def _some(labels: Sequence[str], shown: int = 40) -> str:
    """Labels joined, the first ``shown`` only when there are many (the JSON lists them all)."""
    if len(labels) <= shown:
        return ", ".join(labels)
    return f"{', '.join(labels[:shown])} … ({len(labels):,} in all)"


def _join(names: Sequence[str]) -> str:
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]


def _sentence(text: str) -> str:
    text = text.strip()
    if not text:
        return text
    text = text[0].upper() + text[1:]
    return text if text.endswith((".", "!", "?")) else text + "."


# --- text -----------------------------------------------------------------------------------


def _fmt(x: float) -> str:
    return f"{x:6.3f}"


def format_text(report: AgreementReport, width: int = 100) -> str:
    """The report as a table a statistician can read without the JSON beside it."""
    import textwrap

    from protolint.data.provenance import provenance_lines

    def wrap(text: str, indent: str = "") -> list[str]:
        return textwrap.wrap(text, width=width, initial_indent=indent, subsequent_indent=indent + "  " if indent else "")

    level = f"{round(report.confidence * 100, 4):g}%"
    what = "counts read as a contingency table of two raters" if report.read_as_table else plural(report.raters, "rater")
    lines = [
        f"Agreement in {report.file}",
        f"{plural(report.subjects, 'subject')} x {what}, {report.scale} scale, "
        f"{plural(report.missing, 'missing rating')}; {level} confidence intervals.",
        *provenance_lines(report.input),
    ]
    if report.categories is not None:
        cats = report.categories
        source = {"observed": "as observed in the file", "--categories": "declared with --categories"}.get(cats.source, f"from {cats.source}")
        text = f"Categories ({source}): {_some(cats.declared)}."
        if cats.source != "observed":
            text += f" Used: {_some(cats.used) or 'none'}. Unused: {_some(cats.unused) or 'none'}."
        lines += wrap(text)
    lines.append("")
    name_width = 34
    header = f"{'Coefficient':<{name_width}} {'Value':>6}  {level + ' CI':<17} {'Subjects':>8} {'Ratings':>7}  Interpretation"
    lines += [header, "-" * len(header)]
    for entry in report.coefficients:
        label = entry.name
        if "mcgraw_wong" in entry.extra:
            label = f"{entry.key} = {entry.extra['mcgraw_wong']}"
        elif entry.key == "krippendorff_alpha":
            label = f"{entry.name} ({entry.extra['level']})"
        ci = f"[{_fmt(entry.interval.low)}, {_fmt(entry.interval.high)}]" if entry.interval else "none"
        interpretation = entry.interpretation if entry.interval else f"{entry.band} (estimate only)"
        lines.append(f"{label:<{name_width}} {_fmt(entry.value)}  {ci:<17} {entry.subjects_used:>8} {entry.ratings_used:>7}  {interpretation}")
    if report.coefficients:
        lines.append("")
        lines += wrap(
            f"Interpretation: {report.scheme.name} ({report.scheme.describe()}), applied to both ends of the "
            f"confidence interval, so an interval that spans two bands reads, for example, "
            f"'{report.scheme.labels[-2]} to {report.scheme.labels[-1]}'. Bands are conventions, not criteria."
        )
        by_method: dict[str, list[str]] = {}
        for entry in report.coefficients:
            method = entry.interval.method if entry.interval else (entry.no_interval_reason or "no interval")
            group = "The ICC forms" if "mcgraw_wong" in entry.extra else entry.name
            names = by_method.setdefault(method, [])
            if group not in names:
                names.append(group)
        lines += ["", "Intervals:"]
        for method, names in by_method.items():
            lines += wrap(f"- {_join(names)}: {_sentence(method)}", "  ")
    if any("mcgraw_wong" in entry.extra for entry in report.coefficients):
        lines += [""] + wrap(
            "ICC models (McGraw & Wong 1996): ICC(1,.) one-way random, absolute agreement; ICC(2,.) two-way "
            "random, absolute agreement; ICC(3,.) two-way mixed, consistency. The ',1' forms describe one "
            "rater, the ',k' forms the mean of all raters."
        )
    if report.warnings:
        lines += ["", "Warnings:"]
        for warning in report.warnings:
            lines += wrap(f"- {warning}", "  ")
    if report.notes:
        lines += ["", "Notes:"]
        for note in report.notes:
            lines += wrap(f"- {note}", "  ")
    if report.skipped:
        # One line per reason: the six ICC forms usually share theirs.
        by_reason: dict[str, list[str]] = {}
        for key, reason in report.skipped:
            by_reason.setdefault(reason, []).append(human_name(key))
        lines += ["", "Not computed:"]
        for reason, names in by_reason.items():
            subject = "the ICC forms" if all(n.startswith("ICC(") for n in names) and len(names) > 1 else _join(names)
            lines += wrap(f"- {subject[0].upper() + subject[1:]}: {reason}", "  ")
    lines += [""] + textwrap.wrap(CAUTION, width=width)
    return "\n".join(lines) + "\n"
