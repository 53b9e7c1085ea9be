"""A data error keeps the one-line contract of every located error, in its parts as in its text."""

from __future__ import annotations

from protolint.data.where import DataError, Where
from protolint.errors import LocatedError


def test_data_error_reason_is_one_line_like_a_located_error() -> None:
    # A cell's text can reach a message; a line break or an escape in it must not split or
    # recolour a log line, whichever attribute a caller prints.
    hostile = "value 'a\nb\x1b[31m' is not a score"
    data = DataError(Where("ratings.csv", "4:2"), hostile)
    plan = LocatedError("ratings.csv", 4, 2, hostile)
    assert data.reason == plan.reason == "value 'a\\nb\\x1b[31m' is not a score"
    assert (data.file, data.line, data.column) == ("ratings.csv", 4, 2)
    assert data.format_message() == plan.format_message()
