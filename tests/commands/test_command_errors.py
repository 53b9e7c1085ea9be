"""Every command ends bad usage the same way: one line ``protolint: ...`` on stderr, exit 2."""

from __future__ import annotations

import importlib

import pytest
from click.testing import CliRunner

from protolint.cli import COMMANDS, main
from protolint.commands.base import ProtolintCommand


def run(*args: str) -> tuple[int, str, str]:
    result = CliRunner().invoke(main, list(args), catch_exceptions=False)
    return result.exit_code, result.stdout, result.stderr


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_every_command_uses_the_one_command_class(name: str) -> None:
    assert isinstance(importlib.import_module(COMMANDS[name][0]).command, ProtolintCommand)


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_an_unknown_option_is_one_line_with_exit_2(name: str) -> None:
    code, out, err = run(name, "--no-such-option")
    assert code == 2 and out == ""
    assert err.count("\n") == 1
    assert err.startswith(f"protolint: {name}: ") and "--no-such-option" in err


def test_check_with_an_unknown_format_is_one_line() -> None:
    code, out, err = run("check", "--format", "yaml", "plan.yaml")
    assert (code, out) == (2, "")
    assert err.startswith("protolint: check: Invalid value for '--format': 'yaml' is not one of")
    assert err.count("\n") == 1 and "Usage:" not in err and "Try" not in err


def test_size_with_a_bad_choice_reads_like_check() -> None:
    code, _, err = run("size", "--sides", "3")
    assert code == 2 and err.count("\n") == 1
    assert err.startswith("protolint: size: Invalid value for '--sides'")


def test_top_level_mistakes_are_one_line_and_no_arguments_prints_help() -> None:
    for args in (("no-such-command",), ("--no-such-option",)):
        code, _, err = run(*args)
        assert code == 2 and err.count("\n") == 1 and err.startswith("protolint: No such")
    _, out, err = run()
    assert "Commands:" in out + err and "protolint: " not in err
