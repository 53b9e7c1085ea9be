"""The reader's command-line options, added to a command with one decorator."""

from __future__ import annotations

import functools
from collections.abc import Callable
from typing import Any, TypeVar

import click

from protolint.data.roles import PRESETS, ROLE_HELP, ROLES, ReadOptions
from protolint.data.source import FORMATS

# The roles of a subjects x raters (or items) table: agreement and consistency offer these.
TABLE_ROLES = ("subject", "case", "rater", "item", "occasion", "score")

F = TypeVar("F", bound=Callable[..., Any])


def reader_options(function: F | None = None, *, roles: tuple[str, ...] = ROLES) -> Any:
    """Add ``--input-format``, ``--sheet``, ``--columns``, one option per role in ``roles``
    and ``--where`` to a click command; the command receives them as one ``read_options``
    keyword argument (a :class:`ReadOptions`).

    Use as ``@reader_options`` (every role) or ``@reader_options(roles=("subject", ...))``
    (only the roles the command uses, so an option it would ignore is not offered).
    """
    unknown = set(roles) - set(ROLES)
    if unknown:
        raise ValueError(f"roles: unknown {'role' if len(unknown) == 1 else 'roles'} {sorted(unknown)}; expected some of {ROLES}")

    def decorate(target: F) -> F:
        @functools.wraps(target)
        def wrapper(*args: Any, **kwargs: Any) -> Any:
            given = tuple((role, kwargs.pop(f"role_{role}")) for role in roles)
            kwargs["read_options"] = ReadOptions(
                input_format=kwargs.pop("input_format"),
                sheet=kwargs.pop("sheet"),
                roles=tuple((role, column) for role, column in given if column),
                preset=kwargs.pop("preset"),
                where=tuple(kwargs.pop("where")),
            )
            return target(*args, **kwargs)

        decorators = [
            click.option("--input-format", type=click.Choice(FORMATS), default=None,
                         help="Format of the data file (default: from its extension: .csv, .tsv, .xlsx, .json/.ndjson "
                              "Dataset-JSON 1.1, .xpt SAS transport)."),
            click.option("--sheet", metavar="NAME", default=None, help="Worksheet of an .xlsx file (default: the first)."),
            click.option("--columns", "preset", type=click.Choice(tuple(PRESETS)), default=None,
                         help="Column roles of a standard layout: sdtm-qs = CDISC SDTM QS domain (USUBJID, QSTESTCD, "
                              "QSSTRESN, VISITNUM or QSDTC, rater QSEVALID or QSEVAL; QSSTAT=NOT DONE rows skipped)."),
            *(click.option(f"--{role}", f"role_{role}", metavar="COLUMN", default=None,
                           help=f"Long data: the column with {ROLE_HELP[role]}.") for role in roles),
            click.option("--where", multiple=True, metavar="COLUMN=VALUE",
                         help="Long data: keep rows where COLUMN=VALUE (or COLUMN!=VALUE); repeatable, values of one "
                              "column are alternatives."),
        ]
        for decorator in reversed(decorators):
            wrapper = decorator(wrapper)
        return wrapper  # type: ignore[return-value]

    return decorate(function) if function is not None else decorate
