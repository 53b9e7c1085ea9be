"""`diff` in a core-only install (what a CI job on a pull request gets).

Every format needs only the core: deepdiff and jsonpatch compare, and the HTML pages render
through the one Jinja set-up, whose jinja2 and markdown-it-py are core dependencies.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from tests.installs import run_in_venv as _run
from tests.conftest import write_demo_plan

REPO = Path(__file__).resolve().parents[2]
DEMO = REPO / "demo_protocol" / "plan.yaml"


@pytest.fixture(scope="module")
def amended(tmp_path_factory) -> Path:
    path = tmp_path_factory.mktemp("amended") / "amended.yaml"
    return write_demo_plan(path, DEMO.read_text(encoding="utf-8").replace("interval_weeks: 52", "interval_weeks: 30"))


def test_core_diff_text_json_and_markdown(core_venv: Path, amended: Path) -> None:
    protolint = str(core_venv / "bin" / "protolint")
    text = _run(core_venv, protolint, "diff", str(DEMO), str(amended), "--fail-on-new", "error")
    assert text.returncode == 0, text.stderr
    assert "monitoring interval of rater pool SITE-DERM: 52 → 30 weeks" in text.stdout
    report = json.loads(_run(core_venv, protolint, "diff", str(DEMO), str(amended), "--format", "json").stdout)
    assert report["patch"] == [{"op": "replace", "path": "/rater_pools/0/monitoring/interval_weeks", "value": 30}]
    markdown = _run(core_venv, protolint, "diff", str(DEMO), str(amended), "--format", "markdown")
    assert markdown.returncode == 0 and "| changed | monitoring interval" in markdown.stdout, markdown.stderr


def test_core_html_pages_need_no_extra(core_venv: Path, amended: Path, tmp_path: Path) -> None:
    protolint = str(core_venv / "bin" / "protolint")
    for args in (("diff", str(DEMO), str(amended)), ("check", str(DEMO), "--fail-on", "never")):
        out = tmp_path / f"{args[0]}.html"
        done = _run(core_venv, protolint, *args, "--format", "html", "--output", str(out))
        assert done.returncode == 0 and "Traceback" not in done.stderr, done.stderr
        page = out.read_text(encoding="utf-8")
        assert page.lstrip().lower().startswith("<!doctype html") and "</html>" in page
    assert "52 → 30" in (tmp_path / "diff.html").read_text(encoding="utf-8")
