"""The only code that knows where ``schemas/`` and ``templates/`` live.

In a source checkout (and an editable install) they are the top-level folders of the
repository; a built wheel carries copies inside the package under ``protolint/_data/``.
"""

from __future__ import annotations

import json
from functools import lru_cache
from pathlib import Path
from typing import Any

_PACKAGE = Path(__file__).resolve().parent


def data_dir(name: str) -> Path:
    """Folder ``name`` ('schemas' or 'templates'), preferring the copy inside the package."""
    for candidate in (_PACKAGE / "_data" / name, _PACKAGE.parent / name):
        if candidate.is_dir():
            return candidate
    raise FileNotFoundError(
        f"protolint cannot find its {name}/ folder; the installation is incomplete (reinstall protolint)"
    )


def schema_path(name: str) -> Path:
    return data_dir("schemas") / name


@lru_cache(maxsize=None)
def load_schema(name: str) -> dict[str, Any]:
    with open(schema_path(name), encoding="utf-8") as handle:
        return json.load(handle)


def templates_dir() -> Path:
    return data_dir("templates")
