"""``protolint drift`` from the command line: formats, exit codes and bad input."""

from __future__ import annotations

import hashlib
import json
import re
import os
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from protolint import CAUTION
from protolint.cli import main

ROOT = Path(__file__).parents[2]
DEMO_PLAN = ROOT / "demo_protocol" / "plan.yaml"
DEMO_DATA = ROOT / "demo_protocol" / "data" / "drift_hlsc8.csv"
HEADER = "date,site,rater,case,score,reference,kind\n"


def run(*args: str) -> tuple[int, str, str]:
    result = CliRunner().invoke(main, ["drift", *args], catch_exceptions=False)
    return result.exit_code, result.stdout, result.stderr


def process(*args: str) -> subprocess.CompletedProcess[str]:
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "protolint", "drift", *args], capture_output=True, text=True, env=env)


def stable_file(tmp_path: Path) -> Path:
    rows = []
    refs = [10, 14, 18, 22, 26, 30]
    for i, ref in enumerate(refs):
        rows.append(f"2026-01-05,S1,A,C{i},{ref + (i % 3) - 1},{ref},certification")
        rows.append(f"2026-01-05,S1,B,C{i},{ref + (i % 2)},{ref},certification")
    for week in (4, 8, 12):
        day = f"2026-{1 + week // 4:02d}-0{2 + week // 4}"
        for i, ref in enumerate(refs[:5]):
            rows.append(f"{day},S1,A,C{i},{ref + (i % 3) - 1},{ref},monitoring")
            rows.append(f"{day},S1,B,C{i},{ref + (i % 2)},{ref},monitoring")
    path = tmp_path / "stable.csv"
    path.write_text(HEADER + "\n".join(rows) + "\n", encoding="utf-8")
    return path


def test_demo_json_contract_and_exit_code(tmp_path: Path) -> None:
    code, out, err = run(str(DEMO_DATA), "--plan", str(DEMO_PLAN), "--format", "json")
    assert code == 1, err  # a failed and a drifting rater
    report = json.loads(out)
    assert set(report) >= {"as_of", "plan", "settings", "chart", "raters", "group_shift", "sites", "due"}
    assert report["plan"]["file"] == str(DEMO_PLAN) and len(report["plan"]["sha256"]) == 64
    assert set(report["chart"]["arl_shift"]) == {"0.5", "1", "2"}
    status = {r["rater"]: r["status"] for r in report["raters"]}
    assert status["R-S01-A"] == "drifting" and status["R-S02-A"] == "failed-certification"
    rater = next(r for r in report["raters"] if r["rater"] == "R-S01-A")
    assert set(rater) >= {"rater", "site", "pool", "instrument", "status", "certification", "bland_altman",
                          "first_signal", "rounds", "mean_deviation"}
    assert rater["first_signal"] is not None and len(rater["bland_altman"]["loa"]) == 2
    assert report["roster"]["not_on_roster"] == ["R-S03-A", "R-S04-A"]
    assert {d["code"] for d in report["due"]} >= {"failed-certification", "drift-signal", "interval"}
    assert report["caution"] == CAUTION


def test_fail_on_never_and_a_clean_file(tmp_path: Path) -> None:
    assert run(str(DEMO_DATA), "--plan", str(DEMO_PLAN), "--fail-on", "never")[0] == 0
    code, out, err = run(str(stable_file(tmp_path)), "--max-deviation", "3", "--min-icc", "0.8")
    assert code == 0, out + err
    assert out.index("DUE") < out.index("RATERS")  # the due list comes first
    assert "pass if ICC(A,1) >= 0.8 and 100 % of cases within 3 points" in out
    assert "no plan" in out


def test_ewma_option_and_limits_in_the_output(tmp_path: Path) -> None:
    code, out, _ = run(str(stable_file(tmp_path)), "--method", "ewma", "--lambda", "0.5", "--L", "3.071",
                       "--format", "json", "--fail-on", "never")
    report = json.loads(out)
    assert (report["settings"]["lambda"], report["settings"]["L"]) == (0.5, 3.071)
    # Lucas & Saccucci (1990) Table 3: ARL0 500 and 17.5 after a 1-SD shift.
    assert round(report["chart"]["arl_in_control"]) == 500
    assert round(report["chart"]["arl_shift"]["1"], 1) == 17.5


@pytest.mark.parametrize("body,line,message", [
    ("date,site,rater,case,score\n2026-01-01,S,A,C,1\n", 1, "no column for the reference"),
    (HEADER + "2026-13-01,S,A,C1,1,1,certification\n", 2, "not an ISO 8601 date"),
    (HEADER + "2026-01-01,S,A,C1,x,1,certification\n", 2, "score: 'x' is not a number"),
    (HEADER + "2026-01-01,S,A,C1,1,1,certification\n2026-01-01,S,B,C1,1,2,certification\n", 3, "reference 2 differs"),
    (HEADER + "2026-01-01,S,,C1,1,1,certification\n", 2, "rater is empty"),
    (HEADER + "2026-01-01,S,A,C1,1,1,monitoring\n2026-02-01,S,A,C1,1,1,certification\n", 3,
     "after their monitoring ratings begin"),
    (HEADER + "2026-01-01,S,A,C1,1,1,practice\n", 2, "kind: 'practice'"),
])
def test_bad_files_exit_2_with_file_and_line_and_write_nothing(tmp_path: Path, body: str, line: int, message: str) -> None:
    data = tmp_path / "bad.csv"
    data.write_text(body, encoding="utf-8")
    target = tmp_path / "out.json"
    done = process(str(data), "--format", "json", "--output", str(target))
    assert done.returncode == 2
    assert done.stderr.startswith(f"{data}:{line}:") and message in done.stderr, done.stderr
    assert "Traceback" not in done.stderr
    assert not target.exists()


@pytest.mark.parametrize("instrument_column, rows, message", [
    # No instrument column and no plan: the sentence names the ratings, not a placeholder.
    (False, ["2026-01-05,S1,A,C1,10,10,certification", "2026-01-05,S1,A,C2,12,12,certification",
             "2026-01-05,S1,A,C3,14,14,certification", "2026-02-05,S1,A,C1,11,10,monitoring"],
     "drift: cannot estimate the SD that standardises the deviations of the ratings (the data has no instrument "
     "column): each certified rater's certification ratings deviate from the reference by the same amount "
     "(pooled within-rater SD 0 on 2 degrees of freedom); give --scale-sd"),
    (True, ["2026-01-05,S1,A,C1,10,10,certification,HX", "2026-02-05,S1,A,C1,11,10,monitoring,HX"],
     "drift: cannot estimate the SD that standardises the deviations of instrument HX: no rater has more than one "
     "certification rating; give --scale-sd"),
])
def test_an_unestimable_scale_names_what_it_is_about(tmp_path: Path, instrument_column: bool, rows: list[str],
                                                     message: str) -> None:
    data = tmp_path / "flat.csv"
    header = HEADER.rstrip("\n") + (",instrument\n" if instrument_column else "\n")
    data.write_text(header + "\n".join(rows) + "\n", encoding="utf-8")
    done = process(str(data))
    assert done.returncode == 2 and done.stdout == ""
    assert done.stderr == f"protolint: {message}\n"


def test_the_text_report_names_the_scale_in_words(tmp_path: Path) -> None:
    code, out, err = run(str(stable_file(tmp_path)), "--scale-sd", "1.5", "--fail-on", "never")
    assert code == 0, err
    assert ("deviations of the ratings (the data has no instrument column) are standardised by an SD of 1.500 "
            "points per rating (--scale-sd)") in " ".join(line.strip() for line in out.splitlines())
    assert max(len(line) for line in out.splitlines() if "standardised" in line or "--scale-sd)" in line) <= 100
    # Without an instrument column, lines of words name no placeholder instrument.
    lines = out.splitlines()
    assert "  all raters: 2 raters, 2 periods, mean deviation 0.10; no signal" in lines, out
    assert not any(line.startswith("  - ") or "(-)" in line or ", -)" in line for line in lines)


def test_tsv_is_read(tmp_path: Path) -> None:
    csv_text = stable_file(tmp_path).read_text(encoding="utf-8")
    tsv = tmp_path / "stable.tsv"
    tsv.write_text(csv_text.replace(",", "\t"), encoding="utf-8")
    code, out, err = run(str(tsv), "--format", "json", "--fail-on", "never")
    assert code == 0, err
    assert len(json.loads(out)["raters"]) == 2


def test_columns_with_other_names_are_mapped_by_role(tmp_path: Path) -> None:
    text = stable_file(tmp_path).read_text(encoding="utf-8").replace("rater,case", "assessor,case", 1)
    data = tmp_path / "renamed.csv"
    data.write_text(text, encoding="utf-8")
    code, out, err = run(str(data), "--rater", "assessor", "--format", "json", "--fail-on", "never")
    assert code == 0, err
    assert sorted(r["rater"] for r in json.loads(out)["raters"]) == ["A", "B"]


def test_unknown_pool_and_bad_option_are_one_line_errors(tmp_path: Path) -> None:
    done = process(str(DEMO_DATA), "--plan", str(DEMO_PLAN), "--pool", "NOPE")
    assert done.returncode == 2 and "not a rater pool" in done.stderr and "Traceback" not in done.stderr
    done = process(str(DEMO_DATA), "--method", "shewhart")
    assert done.returncode == 2 and len(done.stderr.strip().splitlines()) == 1


def test_html_report_escapes_names_from_the_data(tmp_path: Path) -> None:
    text = stable_file(tmp_path).read_text(encoding="utf-8").replace(",B,", ",<b>x</b>,")
    data = tmp_path / "names.csv"
    data.write_text(text, encoding="utf-8")
    code, out, err = run(str(data), "--format", "html", "--fail-on", "never")
    assert code == 0, err
    assert "<b>x</b>" not in out and "&lt;b&gt;x&lt;/b&gt;" in out
    assert "SHA-256 of the data file" in out and CAUTION.split(".")[0] in out
    assert out.count("<svg") == 2
    from importlib import metadata

    # The control block names the versions that computed the statistics and drew the charts.
    for name in ("numpy", "scipy", "matplotlib", "weasyprint"):
        assert f"{name} {metadata.version(name)}" in out, name


def test_pdf_is_archival_and_carries_the_data(tmp_path: Path) -> None:
    target = tmp_path / "drift.pdf"
    code, _, err = run(str(stable_file(tmp_path)), "--format", "pdf", "--output", str(target), "--fail-on", "never")
    assert code == 0, err
    from pypdf import PdfReader

    reader = PdfReader(target)
    xmp = reader.trailer["/Root"]["/Metadata"].get_object().get_data().decode("utf-8")
    assert re.search(r"pdfaid:part(>|=\")3", xmp)
    # The rating data file travels inside the report, byte for byte.
    data = stable_file(tmp_path)
    assert reader.attachments["stable.csv"] == [data.read_bytes()]
    text = "".join(reader.pages[0].extract_text().split())
    assert hashlib.sha256(data.read_bytes()).hexdigest() in text
