"""``protolint consistency``: published data, pingouin, output contract and bad input."""

from __future__ import annotations

import json
import math
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pingouin as pg
import pytest
from click.testing import CliRunner

from protolint import CAUTION
from protolint.cli import main

ROOT = Path(__file__).parents[2]
SHROUT_FLEISS = ROOT / "tests" / "data" / "reference" / "A_shrout_fleiss_1979_6x4.csv"


def run(*args: str) -> tuple[int, str, str]:
    result = CliRunner().invoke(main, ["consistency", *args], catch_exceptions=False)
    return result.exit_code, result.stdout, result.stderr


def test_json_on_shrout_fleiss_judges_as_items() -> None:
    code, out, err = run(str(SHROUT_FLEISS), "--format", "json")
    assert code == 0, err
    report = json.loads(out)
    # alpha = ICC(3,4) = 0.9093155 (pingouin / psych), Feldt 95 % CI 0.6756747-0.9858917 (psych).
    alpha = report["cronbach_alpha"]
    assert alpha["value"] == pytest.approx(0.9093155, abs=1e-6)
    assert alpha["ci"] == [pytest.approx(0.6756747, abs=1e-5), pytest.approx(0.9858917, abs=1e-5)]
    assert (report["respondents"], report["items"], report["dropped"]) == (6, 4, 0)
    assert report["sem"] == pytest.approx(report["sd_total"] * math.sqrt(1 - alpha["value"]))
    assert report["mdc95"] == pytest.approx(1.96 * math.sqrt(2) * report["sem"])
    assert [item["item"] for item in report["item_statistics"]] == ["judge1", "judge2", "judge3", "judge4"]
    data = pd.read_csv(SHROUT_FLEISS).drop(columns="subject")
    for item in report["item_statistics"]:
        # pingouin's alpha of the remaining items.
        assert item["alpha_if_deleted"] == pytest.approx(pg.cronbach_alpha(data.drop(columns=item["item"]))[0], abs=1e-10)
    assert report["caution"] == CAUTION


def test_text_report(tmp_path: Path) -> None:
    code, out, _ = run(str(SHROUT_FLEISS))
    assert code == 0
    assert "Cronbach's alpha     0.909" in out and "Feldt 1965" in out
    assert "MDC95" in out and "alpha if deleted" in out
    assert " ".join(out.split()).endswith(" ".join(CAUTION.split()))


def test_missing_answers_are_dropped_and_reported(tmp_path: Path) -> None:
    rng = np.random.default_rng(61)
    x = rng.normal(size=(20, 1)) + rng.normal(size=(20, 4))
    lines = ["id,q1,q2,q3,q4"] + [f"r{i}," + ",".join(f"{v:.4f}" for v in row) for i, row in enumerate(x)]
    lines[3] = "r2,1.0,,0.5,0.2"
    path = tmp_path / "items.csv"
    path.write_text("\n".join(lines) + "\n")
    code, out, _ = run(str(path), "--format", "json", "--confidence", "0.9")
    report = json.loads(out)
    assert code == 0 and report["dropped"] == 1 and report["respondents"] == 19
    frame = pd.read_csv(path).drop(columns="id").dropna()
    alpha, ci = pg.cronbach_alpha(frame, ci=0.9)
    assert report["cronbach_alpha"]["value"] == pytest.approx(alpha, abs=1e-10)
    assert report["cronbach_alpha"]["ci"][0] == pytest.approx(ci[0], abs=5e-4 + 1e-9)  # pingouin rounds to 3 dp
    assert report["notes"]


@pytest.mark.parametrize(
    "content,expected",
    [
        ("", ":1:0: the file is empty"),
        ("id,q1,q2\n1,2,3\n2,x,4\n", ":3:0: column 'q1': 'x' is not a number; item scores must be numbers; "
                                     "leave the cell empty for a missing value"),
        ("id\tq1\tq2\n1\t2\t3\n", ":1:0: the header is one field containing tabs"),
        ("id,q1\n1,2\n2,3\n", ":1:0: found 1 item column;"),
    ],
)
def test_bad_items_file(tmp_path: Path, content: str, expected: str) -> None:
    path = tmp_path / "items.csv"
    path.write_text(content)
    code, out, err = run(str(path))
    assert code == 2 and out == ""
    assert err.startswith(str(path)) and expected in err
    assert len(err.strip().splitlines()) == 1


def test_subprocess_with_output_file(tmp_path: Path) -> None:
    target = tmp_path / "alpha.json"
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    done = subprocess.run(
        [sys.executable, "-m", "protolint", "consistency", str(SHROUT_FLEISS), "--format", "json", "--output", str(target)],
        capture_output=True, text=True, env=env, cwd=ROOT,
    )
    assert done.returncode == 0 and done.stdout == ""
    assert "wrote json consistency report" in done.stderr
    assert json.loads(target.read_text())["cronbach_alpha"]["value"] == pytest.approx(0.9093155, abs=1e-6)


def test_a_ceiling_item_is_computed_with_a_warning(tmp_path: Path) -> None:
    rng = np.random.default_rng(7)
    x = np.round(rng.normal(size=(40, 1)) + rng.normal(size=(40, 3)), 2)
    x = np.column_stack([x, np.full(40, 4.0)])  # q4: every respondent at the ceiling
    path = tmp_path / "ceiling.csv"
    path.write_text("id,q1,q2,q3,q4\n" + "".join(f"r{i}," + ",".join(f"{v:g}" for v in row) + "\n" for i, row in enumerate(x)))
    code, out, err = run(str(path), "--format", "json")
    assert code == 0, err
    report = json.loads(out)
    # pingouin's alpha on the same four items (the constant item adds no variance).
    expected = pg.cronbach_alpha(pd.DataFrame(x, columns=["q1", "q2", "q3", "q4"]))[0]
    assert report["cronbach_alpha"]["value"] == pytest.approx(expected, abs=1e-10)
    assert any("'q4' has the same score (4)" in warning for warning in report["warnings"])
    assert report["item_statistics"][3]["corrected_item_total_r"] is None


def test_the_sem_says_which_reliability_it_rests_on() -> None:
    code, out, _ = run(str(SHROUT_FLEISS), "--format", "json")
    basis = json.loads(out)["sem_reliability"]
    assert basis["coefficient"] == "cronbach_alpha" and basis["kind"] == "internal consistency"
    assert "not the test-retest or inter-rater SEM" in basis["note"]
    code, out, _ = run(str(SHROUT_FLEISS))
    flat = " ".join(out.split())
    assert "Which reliability the SEM rests on: Cronbach's alpha (internal consistency" in flat
    assert "Alpha rests on 6 respondents" in flat
