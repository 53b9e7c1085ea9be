"""The reader's command-line options, added to a command with one decorator."""

from __future__ import annotations

import functools
from collections.abc import Callable
from typing import Any, TypeVar

import click

from protolint.data.roles import PRESETS, ROLE_HELP, ROLES, ReadOptions
from protolint.data.source import FORMATS

F = TypeVar("F", bound=Callable[..., Any])


def reader_options(function: F) -> F:
    """Add ``--input-format``, ``--sheet``, ``--columns``, one option per role and
    ``--where`` to a click command; the command receives them as one ``read_options``
    keyword argument (a :class:`ReadOptions`)."""

    @functools.wraps(function)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        roles = tuple((role, kwargs.pop(f"role_{role}")) for role in ROLES)
        kwargs["read_options"] = ReadOptions(
            input_format=kwargs.pop("input_format"),
            sheet=kwargs.pop("sheet"),
            roles=tuple((role, column) for role, column in roles if column),
            preset=kwargs.pop("preset"),
            where=tuple(kwargs.pop("where")),
        )
        return function(*args, **kwargs)

    decorators = [
        click.option("--input-format", type=click.Choice(FORMATS), default=None,
                     help="Format of the data file (default: from its extension: .csv, .tsv, .xlsx, .json/.ndjson "
                          "Dataset-JSON 1.1, .xpt SAS transport)."),
        click.option("--sheet", metavar="NAME", default=None, help="Worksheet of an .xlsx file (default: the first)."),
        click.option("--columns", "preset", type=click.Choice(tuple(PRESETS)), default=None,
                     help="Column roles of a standard layout: sdtm-qs = CDISC SDTM QS domain (USUBJID, QSTESTCD, "
                          "QSSTRESN, VISITNUM or QSDTC, rater QSEVALID or QSEVAL; QSSTAT=NOT DONE rows skipped)."),
        *(click.option(f"--{role}", f"role_{role}", metavar="COLUMN", default=None,
                       help=f"Long data: the column with {ROLE_HELP[role]}.") for role in ROLES),
        click.option("--where", multiple=True, metavar="COLUMN=VALUE",
                     help="Long data: keep rows where COLUMN=VALUE (or COLUMN!=VALUE); repeatable, values of one "
                          "column are alternatives."),
    ]
    for decorator in reversed(decorators):
        wrapper = decorator(wrapper)
    return wrapper  # type: ignore[return-value]
