"""What ``agreement`` reads besides the ratings themselves: a declared category set (a list, a
range, or a plan instrument's scale), and the check that a file is one row per subject rather
than a contingency table of two raters (which ``--table`` reads as such).
"""

from __future__ import annotations

import re
from typing import TYPE_CHECKING

from protolint.errors import LocatedError, ProtolintError
from protolint.wording import plural

if TYPE_CHECKING:
    from protolint.data import RatingTable, ReadOptions

# A contingency table's counts become one row per rated subject; beyond this the table is
# refused before anything is allocated (the rows of --table are 16 bytes each).
MAX_TABLE_PAIRS = 10_000_000


def parse_categories(text: str) -> tuple[str, ...]:
    """``"0,1,2,3,4"``, ``"0-4"`` (whole numbers from 0 to 4) or text labels ``"none,mild,severe"``."""
    spec = text.strip()
    if not spec:
        raise ProtolintError("--categories is empty; give a list such as 0,1,2,3,4 or a range such as 0-4")
    span = re.fullmatch(r"(-?[0-9]{1,18})\s*(?:-|\.\.)\s*(-?[0-9]{1,18})", spec)
    if span:
        low, high = int(span.group(1)), int(span.group(2))
        if high - low >= 10_000:
            raise ProtolintError(f"--categories range {spec!r} spans {high - low + 1:,} values; a category set has at "
                                 "most 10,000")
        if high <= low:
            raise ProtolintError(f"--categories range {spec!r} must run from a lower to a higher whole number")
        return tuple(str(v) for v in range(low, high + 1))
    labels = tuple(part.strip() for part in spec.split(","))
    if any(not label for label in labels):
        raise ProtolintError(f"--categories {spec!r} has an empty entry")
    if len(set(labels)) != len(labels):
        raise ProtolintError(f"--categories {spec!r} names a category twice")
    return labels


def categories_from_plan(plan_file: str, instrument_id: str) -> tuple[str, ...]:
    """The category set of an instrument's scale in a plan: ``levels`` points from min to max."""
    from protolint.plan import read_plan_file

    plan = read_plan_file(plan_file).plan
    assert plan is not None  # read_plan_file raises on any problem
    ids = [instrument.id for instrument in plan.instruments]
    if instrument_id not in ids:
        raise ProtolintError(f"{plan_file}: no instrument {instrument_id!r}; the plan has {', '.join(ids) or 'none'}")
    scale = next(instrument.scale for instrument in plan.instruments if instrument.id == instrument_id)
    if scale.min is None or scale.max is None:
        raise ProtolintError(f"{plan_file}: instrument {instrument_id} has no scale min and max to take categories from")
    levels = scale.levels
    if levels is None:
        if not (float(scale.min).is_integer() and float(scale.max).is_integer()):
            raise ProtolintError(f"{plan_file}: instrument {instrument_id} has a non-integer scale and no levels; give --categories")
        levels = int(scale.max - scale.min) + 1
    if levels < 2:
        raise ProtolintError(f"{plan_file}: instrument {instrument_id} has fewer than 2 scale levels")
    step = (scale.max - scale.min) / (levels - 1)
    return tuple(f"{scale.min + i * step:g}" for i in range(levels))


def looks_like_contingency_table(table: RatingTable) -> bool:
    """A square table of non-negative whole counts whose row and column labels are the same
    set of categories: rater 1's categories down, rater 2's across."""
    import numpy as np

    values = table.values
    if table.labels is not None or values.shape[0] != values.shape[1] or values.shape[0] < 2:
        return False
    if np.isnan(values).any() or (values < 0).any() or not np.all(values == np.round(values)):
        return False
    return set(table.subjects) == set(table.columns)


def read_ratings(path: str, scale: str, *, as_table: bool = False, read_options: ReadOptions | None = None) -> RatingTable:
    """The ratings file as subjects x raters; a contingency table is refused unless ``as_table``,
    in which case its counts become one row per subject with two raters."""
    from protolint.data import read_rating_table

    if as_table:
        table = read_rating_table(path, read_options, numeric=True, kind="category",
                                  number_reason="a contingency table (--table) holds counts", allow_constant=True)
        if not looks_like_contingency_table(table):
            raise LocatedError(path, 1, None, "--table needs a square table of whole counts whose row labels (first column) "
                                              "are the same categories as the column headers")
        return _expand_table(table)
    numeric = scale != "nominal"
    # Text categories are read on a nominal scale only: say so where a number was needed.
    reason = (f"ratings on {'an' if scale[0] in 'aeiou' else 'a'} {scale} scale must be numbers "
              "(--scale nominal reads text categories)") if numeric else None
    table = read_rating_table(path, read_options, numeric=numeric, kind="rater", number_reason=reason, allow_constant=True)
    if looks_like_contingency_table(table):
        raise LocatedError(
            path, 1, None,
            f"this looks like a contingency table ({len(table.columns)} x {len(table.columns)} counts with the same "
            "categories as row and column labels), not one row per subject; rerun with --table to read it as "
            "rater 1's categories down and rater 2's across",
        )
    return table


def _expand_table(table: RatingTable) -> RatingTable:
    import numpy as np

    from protolint.data.table import RatingTable

    from protolint.data.source import is_number_text, parse_number

    if all(is_number_text(label) for label in (*table.subjects, *table.columns)):
        row_values = [parse_number(label) for label in table.subjects]
        col_values = [parse_number(label) for label in table.columns]
        labels = None
    else:
        labels = tuple(sorted(set(table.subjects) | set(table.columns)))
        row_values = [float(labels.index(label)) for label in table.subjects]
        col_values = [float(labels.index(label)) for label in table.columns]
    counts = table.values.astype(np.int64)
    total = int(counts.sum())
    if total > MAX_TABLE_PAIRS:
        raise LocatedError(table.path, 0, None, f"the table counts {total:,} rated subjects; --table reads at most "
                                                f"{MAX_TABLE_PAIRS:,}")
    if total < 2:
        raise LocatedError(table.path, 1, None, f"the table counts {plural(total, 'subject')}; at least 2 are needed")
    repeat = counts.ravel()
    rows = np.repeat(np.repeat(np.asarray(row_values), counts.shape[1]), repeat)
    cols = np.repeat(np.tile(np.asarray(col_values), counts.shape[0]), repeat)
    values = np.column_stack((rows, cols))
    pairs = range(total)
    return RatingTable(
        path=table.path,
        id_header="subject",
        columns=("rater 1 (rows)", "rater 2 (columns)"),
        subjects=tuple(f"pair {i + 1}" for i in range(len(pairs))),
        lines=tuple(0 for _ in pairs),
        values=values,
        labels=labels,
        provenance=table.provenance,
    )
