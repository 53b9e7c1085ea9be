"""Rating data in: one reader for every analysis command.

File (CSV/TSV, .xlsx, Dataset-JSON 1.1, SAS transport) -> :class:`~.source.SourceTable`
(header, rows of cells, places) -> roles, filters and skips (:mod:`.roles`) -> a subjects x
raters/items :class:`RatingTable` (``agreement``, ``consistency``) or :class:`Records` by role
(``drift``, ``design``), each with a :class:`Provenance` that the report shows.
Every error is one line located at ``file:line``, ``file:Sheet!C4`` or ``file:row N``.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from protolint.data.provenance import Provenance
from protolint.data.roles import PRESETS, ROLES, ReadOptions
from protolint.data.where import DataError, Where

if TYPE_CHECKING:
    from protolint.data.records import Record, Records, read_records, read_role_rows
    from protolint.data.options import reader_options
    from protolint.data.table import RatingTable

__all__ = ["PRESETS", "ROLES", "DataError", "Provenance", "RatingTable", "ReadOptions", "Record", "Records", "Where",
           "read_rating_table", "read_records", "read_role_rows", "reader_options"]


def read_rating_table(path: str, options: ReadOptions | None = None, *, numeric: bool = True, kind: str = "rater",
                      number_reason: str | None = None, min_columns: int = 2, allow_constant: bool = False) -> RatingTable:
    """Read a ratings (``kind="rater"``) or items (``kind="item"``) table from any format.

    ``numeric=False`` (nominal scale) accepts text categories, coded by their sorted labels;
    ``number_reason`` says why the cells must be numbers ("item scores must be numbers"), for
    the message about one that is not;
    ``allow_constant`` accepts a column with one value throughout (the analysis then says so).
    """
    from protolint.data.readers import read_source
    from protolint.data.table import build_table

    options = options or ReadOptions()
    source = read_source(path, options.input_format, options.sheet)
    return build_table(source, options, numeric=numeric, kind=kind, number_reason=number_reason, min_columns=min_columns,
                       allow_constant=allow_constant)


def __getattr__(name: str) -> Any:
    # numpy-based and click-based parts load on first use, so importing the package is light.
    if name == "RatingTable":
        from protolint.data.table import RatingTable

        return RatingTable
    if name in ("read_records", "read_role_rows", "Record", "Records"):
        from protolint.data import records

        return getattr(records, name)
    if name == "reader_options":
        from protolint.data.options import reader_options

        return reader_options
    raise AttributeError(name)
