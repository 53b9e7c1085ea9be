"""Which optional dependencies ("extras") each command needs, and the one-line hint when absent.

The core install serves pre-commit hooks and CI (`check`, `rules`, `schema`, `init`, `diff`,
in every format: jinja2 and markdown-it-py are core because the HTML review report and the
HTML diff use them); documents and analyses bring heavy stacks and are extras. A command whose extra is missing
fails with one line naming the extra, raised once for all commands by the lazy loader in
``protolint.cli``.
"""

from __future__ import annotations

from protolint.errors import ProtolintError

DISTRIBUTION = "trial-protolint"

DOCUMENTS = "documents"
ANALYSIS = "analysis"

# command -> the extra it needs (commands not listed need the core only).
COMMAND_EXTRAS: dict[str, str] = {
    "render": DOCUMENTS,
    "calendar": DOCUMENTS,
    "size": ANALYSIS,
    "agreement": ANALYSIS,
    "consistency": ANALYSIS,
    "drift": ANALYSIS,
    "design": ANALYSIS,
}

# Top-level modules that only the extras install: a missing one of these is an install
# choice, not a bug, so it gets the hint instead of a traceback. A module that only one
# extra provides names that extra (an analysis writing its report as PDF needs `documents`);
# one that both provide names the command's own extra.
MODULE_EXTRAS: dict[str, str] = {
    "weasyprint": DOCUMENTS, "icalendar": DOCUMENTS,
    "openpyxl": ANALYSIS, "pyreadstat": ANALYSIS, "narwhals": ANALYSIS,
}
SHARED_MODULES: frozenset[str] = frozenset({"numpy", "scipy", "matplotlib"})
OPTIONAL_MODULES: frozenset[str] = frozenset(MODULE_EXTRAS) | SHARED_MODULES


def install_hint(extra: str) -> str:
    """The install command for ``extra``."""
    return f"pip install '{DISTRIBUTION}[{extra}]'"


def missing_extra_error(command: str | None, error: ModuleNotFoundError) -> ProtolintError | None:
    """The one-line error for ``command`` failing on an optional module, else None.

    Returns None when the missing module is not one the extras provide, so a genuine bug
    still surfaces as itself.
    """
    missing = (error.name or "").split(".")[0]
    if missing not in OPTIONAL_MODULES:
        return None
    extra = MODULE_EXTRAS.get(missing) or COMMAND_EXTRAS.get(command or "", ANALYSIS)
    what = f"`protolint {command}`" if command else "this command"
    return ProtolintError(
        f"{what} needs the optional '{extra}' dependencies ({missing} is not installed): {install_hint(extra)}"
    )
