"""The hint for a missing optional module names the extra that installs it."""

from __future__ import annotations

from protolint.extras import missing_extra_error


def hint(command: str, module: str) -> str | None:
    error = missing_extra_error(command, ModuleNotFoundError(f"No module named '{module}'", name=module))
    return None if error is None else error.format_message()


def test_the_extra_follows_the_module_then_the_command() -> None:
    assert hint("render", "numpy") == ("`protolint render` needs the optional 'documents' dependencies (numpy is not "
                                       "installed): pip install 'trial-protolint[documents]'")
    assert "'analysis'" in hint("agreement", "numpy")
    # An analysis writing its report as PDF needs the documents extra, not its own.
    assert "'documents'" in hint("design", "weasyprint")
    assert "'analysis'" in hint("agreement", "openpyxl.reader")
    assert "'analysis'" in hint("drift", "matplotlib")


def test_a_missing_core_or_unknown_module_is_not_disguised() -> None:
    assert hint("check", "yaml") is None
    assert hint("render", "protolint.render.nothing") is None
