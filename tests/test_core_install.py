"""A core-only install (what a pre-commit hook gets): `check` works, no heavy package is
installed, and a command that needs an extra says which one in one line.

Works offline: the session's `core_venv` (tests/installs.py) gets the wheel built from this
checkout, and the core's dependencies are copied file by file from the distributions installed
beside the test run, then `pip check` confirms the set is complete.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from tests.installs import REPO
from tests.installs import run_in_venv as _run

HEAVY = ("numpy", "scipy", "matplotlib", "weasyprint", "pandas", "openpyxl", "pyreadstat")


def test_core_install_checks_the_demo_without_heavy_packages(core_venv: Path) -> None:
    listed = _run(core_venv, str(core_venv / "bin" / "python"), "-c",
                  "import importlib.metadata as m; print('\\n'.join(sorted(d.metadata['Name'].lower() for d in m.distributions())))")
    names = set(listed.stdout.split())
    assert "trial-protolint" in names and "pyyaml" in names and "jsonschema" in names
    assert not names & set(HEAVY), sorted(names & set(HEAVY))
    for command in ("protolint", "trial-protolint"):
        done = _run(core_venv, str(core_venv / "bin" / command), "check", "demo_protocol/plan.yaml", "--format", "json")
        assert done.returncode in (0, 1), done.stderr
        assert '"findings"' in done.stdout
    module = _run(core_venv, str(core_venv / "bin" / "python"), "-m", "protolint", "rules")
    assert module.returncode == 0, module.stderr


def test_core_install_writes_every_check_format(core_venv: Path) -> None:
    """Every report format is core, the HTML review report included: a CI job publishes it without extras."""
    protolint = str(core_venv / "bin" / "protolint")
    for fmt in ("text", "json", "sarif", "junit", "github", "markdown", "html"):
        done = _run(core_venv, protolint, "check", "demo_protocol/plan.yaml", "--format", fmt, "--fail-on", "never")
        assert done.returncode == 0 and done.stdout.strip(), (fmt, done.stderr)
    assert "<html" in done.stdout.lower()


@pytest.mark.parametrize(("args", "extra", "module"), [
    (("render", "manual", "demo_protocol/plan.yaml", "--output", "never-written.pdf"), "documents", "weasyprint"),
    (("agreement", "demo_protocol/data/certification_hlsc8.csv"), "analysis", "numpy"),
    (("size", "--effect-size", "0.5"), "analysis", "scipy"),
    (("design", "demo_protocol/pilot/pilot_hlsc8_simulated.csv"), "analysis", "numpy"),
])
def test_command_without_its_extra_prints_one_line(core_venv: Path, args: tuple[str, ...], extra: str, module: str) -> None:
    done = _run(core_venv, str(core_venv / "bin" / "protolint"), *args)
    assert done.returncode == 2
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in done.stderr, done.stderr
    assert f"needs the optional '{extra}' dependencies" in lines[0]
    assert f"pip install 'trial-protolint[{extra}]'" in lines[0]
    assert f"({module} is not installed)" in lines[0]
    assert not (REPO / "never-written.pdf").exists()
