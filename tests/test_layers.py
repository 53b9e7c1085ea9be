"""Imports point down the layers only: source -> plan -> derived facts -> rules -> report.

Every ``import`` in a package (at module level or inside a function; ``TYPE_CHECKING`` imports
excluded, they exist for annotations only) must name a package it may depend on.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "protolint"

# package -> protolint packages it must never import
FORBIDDEN = {
    "stats": {"plan", "rules", "render", "report", "commands", "analysis", "pipeline", "cli"},
    "plan": {"rules", "render", "report", "commands", "analysis", "pipeline", "cli"},
    "rules": {"render", "report", "commands", "analysis", "pipeline", "cli"},
    # The review report (report/fmt_html.py) shares the one jinja2 environment and safe Markdown
    # set-up that render/ builds, so report may import render; nothing else of the documents.
    "report": {"commands", "analysis", "cli"},
    "findings": {"plan", "rules", "render", "report", "commands", "analysis", "pipeline", "cli"},
}


def _imports(tree: ast.AST) -> set[str]:
    names: set[str] = set()
    skip: set[int] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.If) and "TYPE_CHECKING" in ast.unparse(node.test):
            skip.update(id(child) for child in ast.walk(node))
    for node in ast.walk(tree):
        if id(node) in skip:
            continue
        if isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            names.add(node.module)
        elif isinstance(node, ast.Import):
            names.update(alias.name for alias in node.names)
    return {name.split(".")[1] for name in names if name.startswith("protolint.")}


def _modules(layer: str) -> list[Path]:
    folder = PACKAGE / layer
    return sorted(folder.rglob("*.py")) if folder.is_dir() else [PACKAGE / f"{layer}.py"]


@pytest.mark.parametrize("layer", sorted(FORBIDDEN))
def test_no_import_runs_up_a_layer(layer: str) -> None:
    wrong = []
    for module in _modules(layer):
        used = _imports(ast.parse(module.read_text(encoding="utf-8")))
        wrong += [f"{module.relative_to(PACKAGE)} imports protolint.{name}" for name in sorted(used & FORBIDDEN[layer])]
    assert wrong == []


def test_the_layer_test_sees_imports() -> None:
    # A check that cannot fail is no check: the reading of imports finds a real one.
    assert "plan" in _imports(ast.parse((PACKAGE / "rules" / "monitoring.py").read_text(encoding="utf-8")))
