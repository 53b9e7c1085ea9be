"""A plain, non-editable install must find its schemas and templates inside the package."""

from __future__ import annotations

import subprocess
import sys
import zipfile
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]


@pytest.fixture
def wheel(project_wheel: Path) -> Path:
    """The session's wheel (tests/conftest.py), built from a copy of the sources."""
    return project_wheel


def test_wheel_carries_schemas_and_templates(wheel):
    names = zipfile.ZipFile(wheel).namelist()
    assert "protolint/_data/schemas/plan.schema.json" in names
    assert "protolint/_data/schemas/policy.schema.json" in names
    assert "protolint/_data/templates/starter-plan.yaml" in names


def test_the_wheel_takes_its_version_from_the_package(wheel):
    # The version is written once, in protolint/__init__.py; pyproject.toml reads it from there.
    from protolint import __version__

    assert wheel.name.split("-")[1] == __version__  # name-version-python-abi-platform.whl


def test_installed_package_checks_a_plan_away_from_the_repo(wheel, tmp_path):
    target = tmp_path / "site"
    subprocess.run([sys.executable, "-m", "pip", "install", "--quiet", "--no-deps", "--target", str(target), str(wheel)], check=True)
    plan = tmp_path / "plan.yaml"
    plan.write_bytes((REPO / "demo_protocol" / "plan.yaml").read_bytes())
    env = {"PYTHONPATH": str(target), "PATH": "/usr/bin:/bin"}
    probe = subprocess.run([sys.executable, "-c", "import protolint, protolint.resources as r; "
                            "print(protolint.__file__); print(r.data_dir('schemas')); print(r.templates_dir())"],
                           capture_output=True, text=True, cwd=tmp_path, env=env)
    assert probe.returncode == 0, probe.stderr
    module_file, schemas, templates = probe.stdout.split()
    assert module_file.startswith(str(target)) and schemas.startswith(str(target)) and templates.startswith(str(target))
    checked = subprocess.run([sys.executable, "-m", "protolint", "check", "plan.yaml", "--format", "json", "--fail-on", "never"],
                             capture_output=True, text=True, cwd=tmp_path, env=env)
    assert checked.returncode == 0, checked.stderr
    assert '"findings"' in checked.stdout
    init = subprocess.run([sys.executable, "-m", "protolint", "init", "starter.yaml"], capture_output=True, text=True, cwd=tmp_path, env=env)
    assert init.returncode == 0 and (tmp_path / "starter.yaml").read_text(encoding="utf-8").startswith("# To let your editor")
