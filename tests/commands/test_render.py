"""``protolint render`` through the command line."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]
MINIMAL = REPO / "tests" / "render" / "fixtures" / "minimal.yaml"


@pytest.fixture(autouse=True)
def _no_source_date_epoch(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.delenv("SOURCE_DATE_EPOCH", raising=False)


def test_help_has_an_example(cli) -> None:
    result = cli("render", "--help")
    assert result.exit_code == 0
    assert "protolint render binder demo_protocol/plan.yaml" in result.output


def test_html_goes_to_stdout(cli, demo_plan) -> None:
    result = cli("render", "manual", demo_plan, "--format", "html")
    assert result.exit_code == 0
    assert result.stdout.startswith("<!DOCTYPE html>")
    assert "NDS-HD-301 · Rater manual" in result.stdout


def test_markdown_to_a_file(cli, demo_plan, tmp_path: Path) -> None:
    target = tmp_path / "sub" / "checklist.md"
    result = cli("render", "checklist", demo_plan, "--format", "markdown", "--output", target)
    assert result.exit_code == 0
    assert f"wrote checklist (markdown) to {target}" in result.stderr
    text = target.read_text(encoding="utf-8")
    assert text.startswith("# Rater monitoring checklist: NDS-HD-301")
    # S01, SITE-DERM: first rating 2026-09-01 + 52 weeks; one row for the rostered rater R-S01-A.
    assert "#### Round 1: due 2027-08-31, reviews ratings from 2026-09-01\n" in text
    assert "| R-S01-A | | [ ] yes [ ] no | | | |" in text


def test_pdf_default_name_beside_the_current_folder(cli, tmp_path: Path, monkeypatch) -> None:
    monkeypatch.chdir(tmp_path)
    result = cli("render", "manual", MINIMAL, "--paper", "letter")
    assert result.exit_code == 0
    written = tmp_path / "minimal-manual.pdf"
    assert written.read_bytes().startswith(b"%PDF")
    assert [p.name for p in tmp_path.iterdir()] == ["minimal-manual.pdf"]  # no temporary file left


def test_unreadable_plan_exits_2_without_traceback_or_file(cli_process, tmp_path: Path) -> None:
    bad = tmp_path / "bad.yaml"
    bad.write_text("format_version: 1\nstudy: [unclosed\n", encoding="utf-8")
    target = tmp_path / "out.pdf"
    result = cli_process("render", "binder", bad, "--output", target)
    assert result.returncode == 2
    assert result.stderr.startswith(f"{bad}:")
    assert len(result.stderr.strip().splitlines()) == 1
    assert "Traceback" not in result.stderr
    assert not target.exists()


def test_invalid_plan_exits_2_and_keeps_the_old_output(cli, tmp_path: Path) -> None:
    bad = tmp_path / "invalid.yaml"
    bad.write_text(MINIMAL.read_text(encoding="utf-8").replace("enrolment_weeks: 4", "enrolment_weeks: many"), encoding="utf-8")
    target = tmp_path / "manual.html"
    target.write_text("previous edition", encoding="utf-8")
    result = cli("render", "manual", bad, "--format", "html", "--output", target)
    assert result.exit_code == 2
    assert result.stderr.startswith(f"{bad}:")
    assert target.read_text(encoding="utf-8") == "previous edition"


def test_missing_plan_and_bad_kind(cli) -> None:
    assert cli("render", "manual", "no-such-plan.yaml", "--format", "html").exit_code == 2
    assert cli("render", "poster", str(MINIMAL)).exit_code == 2


def test_same_plan_same_bytes_across_processes(cli_process, tmp_path: Path) -> None:
    outputs = []
    for seed in ("1", "2"):
        target = tmp_path / f"manual-{seed}.html"
        env = {**os.environ, "PYTHONHASHSEED": seed, "PYTHONPATH": str(REPO)}
        env.pop("SOURCE_DATE_EPOCH", None)
        result = cli_process("render", "binder", "demo_protocol/plan.yaml", "--format", "html", "--output", target, env=env)
        assert result.returncode == 0, result.stderr
        outputs.append(target.read_bytes())
    assert outputs[0] == outputs[1]


def test_checklist_for_one_site(cli, demo_plan, tmp_path: Path, monkeypatch) -> None:
    monkeypatch.chdir(tmp_path)
    whole = cli("render", "checklist", demo_plan, "--format", "markdown").stdout
    one = cli("render", "checklist", demo_plan, "--format", "markdown", "--site", "S02").stdout
    assert "(site S01, country NO)" in whole and "(site S02, country DE)" in whole
    assert "(site S02, country DE)" in one and "(site S01, country NO)" not in one and "Central rating" not in one
    assert "This copy covers site S02 only." in one
    assert one.startswith("# Rater monitoring checklist: NDS-HD-301 — site S02, Lindenhof Dermatology Centre (fictional)\n")
    result = cli("render", "checklist", demo_plan, "--site", "S02")
    assert result.exit_code == 0 and (tmp_path / "plan-checklist-S02.pdf").read_bytes().startswith(b"%PDF")


@pytest.mark.parametrize("args, words", [
    (("render", "checklist", "--site", "S99"), "unknown site 'S99'"),
    (("render", "checklist", "--site", "S99"), "the plan's sites are: S01, S02, S03, S04, central"),
    (("render", "binder", "--site", "S01"), "checklist only"),
])
def test_bad_site_choice_exits_2(cli_process, demo_plan, tmp_path: Path, args, words) -> None:
    result = cli_process(*args[:2], demo_plan, *args[2:], "--format", "html", cwd=tmp_path)
    assert result.returncode == 2 and words in result.stderr and "Traceback" not in result.stderr
    assert list(tmp_path.iterdir()) == []
