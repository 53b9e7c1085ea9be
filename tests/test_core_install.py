"""A core-only install (what a pre-commit hook gets): `check` works, no heavy package is
installed, and a command that needs an extra says which one in one line.

Works offline: the venv gets the wheel built from this checkout, and the core's dependencies
are copied file by file from the distributions installed beside the test run (exactly the
files each distribution's RECORD lists), then `pip check` confirms the set is complete.
"""

from __future__ import annotations

import re
import shutil
import subprocess
import sys
import tomllib
from importlib import metadata
from pathlib import Path

import pytest
from packaging.requirements import Requirement

REPO = Path(__file__).resolve().parents[1]
HEAVY = ("numpy", "scipy", "matplotlib", "weasyprint", "pandas", "openpyxl", "pyreadstat")


def _core_closure() -> list[metadata.Distribution]:
    """The installed distributions the core requires, transitively (no extras)."""
    project = tomllib.loads((REPO / "pyproject.toml").read_text(encoding="utf-8"))["project"]
    todo = [Requirement(text) for text in project["dependencies"]]
    found: dict[str, metadata.Distribution] = {}
    while todo:
        requirement = todo.pop()
        key = re.sub(r"[-_.]+", "-", requirement.name).lower()
        if key in found or (requirement.marker and not requirement.marker.evaluate({"extra": ""})):
            continue
        dist = metadata.distribution(requirement.name)
        found[key] = dist
        todo += [Requirement(text) for text in dist.requires or []]
    return list(found.values())


def _copy_distribution(dist: metadata.Distribution, site: Path) -> None:
    base = Path(dist.locate_file(""))
    for file in dist.files or []:
        source = Path(dist.locate_file(file))
        if file.parts[0] == ".." or "__pycache__" in file.parts or not source.is_file():
            continue  # console scripts and caches: not needed to import the package
        target = site / file
        target.parent.mkdir(parents=True, exist_ok=True)
        shutil.copy2(source, target)
    assert base.is_dir()


@pytest.fixture(scope="module")
def core_venv(tmp_path_factory) -> Path:
    root = tmp_path_factory.mktemp("core")
    src = root / "src"
    skip = shutil.ignore_patterns("__pycache__", "*.pyc")
    for folder in ("protolint", "schemas", "templates"):
        shutil.copytree(REPO / folder, src / folder, ignore=skip)
    for name in ("pyproject.toml", "setup.py", "MANIFEST.in", "README.md", "LICENSE"):
        shutil.copy(REPO / name, src / name)
    dist = root / "dist"
    built = subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "-w", str(dist), str(src)],
                           capture_output=True, text=True)
    assert built.returncode == 0, built.stderr
    [wheel] = dist.glob("trial_protolint-*.whl")
    venv = root / "venv"
    subprocess.run([sys.executable, "-m", "venv", "--without-pip", str(venv)], check=True)
    python = venv / "bin" / "python"
    site = Path(subprocess.run([str(python), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
                               capture_output=True, text=True, check=True).stdout.strip())
    for distribution in _core_closure():
        _copy_distribution(distribution, site)
    pip = [sys.executable, "-m", "pip", "--python", str(python)]
    installed = subprocess.run([*pip, "install", "--quiet", "--no-deps", "--no-index", str(wheel)], capture_output=True, text=True)
    assert installed.returncode == 0, installed.stderr
    checked = subprocess.run([*pip, "check"], capture_output=True, text=True)
    assert checked.returncode == 0, checked.stdout + checked.stderr
    return venv


def _run(venv: Path, *args: str) -> subprocess.CompletedProcess:
    env = {"PATH": f"{venv / 'bin'}:/usr/bin:/bin", "HOME": str(venv)}
    return subprocess.run([*args], capture_output=True, text=True, cwd=REPO, env=env, timeout=120)


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
