"""Fixtures shared by every test package."""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

REPO = Path(__file__).resolve().parents[1]
DEMO_PLAN = REPO / "demo_protocol" / "plan.yaml"
STARTER_PLAN = REPO / "templates" / "starter-plan.yaml"


def write_demo_plan(path: Path, text: str) -> Path:
    """Write an edited demo plan to ``path`` with the demo's SOP texts beside it: the plan names
    them by paths relative to its own folder, so a copy elsewhere needs them too."""
    import shutil

    path.write_text(text, encoding="utf-8")
    shutil.copytree(DEMO_PLAN.parent / "sops", path.parent / "sops", dirs_exist_ok=True)
    return path


def assert_one_line_error(exit_code: int, stderr: str, fragment: str = "") -> None:
    """The command line's contract for bad input: exit 2, one line on stderr, no traceback."""
    assert exit_code == 2, stderr
    assert "Traceback" not in stderr, stderr[-2000:]
    assert len(stderr.splitlines()) == 1, stderr[-2000:]
    assert fragment in stderr, stderr


@pytest.fixture
def repo_root() -> Path:
    return REPO


@pytest.fixture
def demo_plan() -> Path:
    return DEMO_PLAN


def filled_starter(text: str) -> str:
    """The starter with every placeholder filled in, as a writer would: a clean plan."""
    text = re.sub(r"Replace with [^,}\]\n#]*?(?=\s*[,}\]\n#])", "Filled in by the test", text)
    return text.replace("REPLACE-WITH-PROTOCOL-ID", "TEST-PROTOCOL-1").replace("REPLACE-WITH-STUDY-ID", "TEST-STUDY-1")


@pytest.fixture
def starter_text() -> str:
    """A clean, schema-valid plan to modify in tests: the starter with its placeholders filled in."""
    return filled_starter(STARTER_PLAN.read_text(encoding="utf-8"))


@pytest.fixture
def cli():
    """Run the command line in-process: ``cli("check", path)`` -> click Result."""
    from protolint.cli import main

    runner = CliRunner()

    def run(*args: str, input: str | bytes | None = None):
        return runner.invoke(main, [str(a) for a in args], input=input, catch_exceptions=False)

    return run


def run_protolint(*args: str | Path, cwd: Path | None = None, env: dict | None = None) -> subprocess.CompletedProcess:
    """Run ``python -m protolint`` in a real process (exit codes, stderr, signals, no traceback)."""
    return subprocess.run([sys.executable, "-m", "protolint", *map(str, args)], capture_output=True,
                          text=True, cwd=cwd or REPO, env=env, timeout=120)


@pytest.fixture
def cli_process():
    """``run_protolint`` as a fixture."""
    return run_protolint


@pytest.fixture(scope="session")
def project_wheel(tmp_path_factory) -> Path:
    """This checkout's wheel, built once per session (see tests/installs.py)."""
    from tests.installs import build_wheel

    return build_wheel(tmp_path_factory.mktemp("wheel"))


@pytest.fixture(scope="session")
def core_venv(tmp_path_factory, project_wheel: Path) -> Path:
    """A core-only install of the wheel (what a pre-commit hook gets), built once per session."""
    from tests.installs import make_core_venv

    return make_core_venv(tmp_path_factory.mktemp("core"), project_wheel)
