"""Installing this checkout the way a user would, for the packaging tests.

Building a wheel and a venv takes seconds, so the session builds each once (fixtures
``project_wheel`` and ``core_venv`` in tests/conftest.py) and every test that needs an
installed copy shares it. Works offline: the wheel is built from a copy of this checkout, and
the core venv's dependencies are copied file by file from the distributions installed beside
the test run (exactly the files each distribution's RECORD lists).
"""

from __future__ import annotations

import re
import shutil
import subprocess
import sys
import tomllib
from importlib import metadata
from pathlib import Path

from packaging.requirements import Requirement

REPO = Path(__file__).resolve().parents[1]


def build_wheel(root: Path) -> Path:
    """The project's wheel, built in ``root`` from a copy of the sources (so that no build/ or
    egg-info folder lands in the repo)."""
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
    return wheel


def core_closure() -> list[metadata.Distribution]:
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


def make_core_venv(root: Path, wheel: Path) -> Path:
    """A venv holding the wheel and the core's dependencies only; `pip check` confirms the set
    is complete."""
    venv = root / "venv"
    subprocess.run([sys.executable, "-m", "venv", "--without-pip", str(venv)], check=True)
    python = venv / "bin" / "python"
    site = Path(subprocess.run([str(python), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
                               capture_output=True, text=True, check=True).stdout.strip())
    for distribution in core_closure():
        _copy_distribution(distribution, site)
    pip = [sys.executable, "-m", "pip", "--python", str(python)]
    installed = subprocess.run([*pip, "install", "--quiet", "--no-deps", "--no-index", str(wheel)], capture_output=True, text=True)
    assert installed.returncode == 0, installed.stderr
    checked = subprocess.run([*pip, "check"], capture_output=True, text=True)
    assert checked.returncode == 0, checked.stdout + checked.stderr
    return venv


def run_in_venv(venv: Path, *args: str) -> subprocess.CompletedProcess:
    """Run a program with only the venv's bin on PATH (and a HOME inside it)."""
    env = {"PATH": f"{venv / 'bin'}:/usr/bin:/bin", "HOME": str(venv)}
    return subprocess.run([*args], capture_output=True, text=True, cwd=REPO, env=env, timeout=120)
