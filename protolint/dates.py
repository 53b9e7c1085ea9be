"""The one strict reading of a calendar date: exactly YYYY-MM-DD, a day that exists.

Used for dates in a plan (the schemas' ``format: date``), in data files and on the command line
(``--as-of``), so ``20260715`` or the week date ``2026-W01-1`` (both taken by Python's
``date.fromisoformat``) is refused the same way everywhere.
"""

from __future__ import annotations

import re
from datetime import date

_ISO_DATE = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}")


def parse_date(text: str) -> date:
    """The date ``text`` names, written exactly YYYY-MM-DD.

    Raises
    ------
    ValueError
        When the text has another form or names no real date.
    """
    if not _ISO_DATE.fullmatch(text):
        raise ValueError(f"{text!r} is not a date written YYYY-MM-DD")
    try:
        return date.fromisoformat(text)
    except ValueError as error:
        raise ValueError(f"{text!r} is not a date ({error})") from None
