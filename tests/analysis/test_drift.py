"""The drift analysis: certification numbers against the statistics core and pingouin, the due
list against the plan's schedule, and the charts' promises on seeded simulated raters."""

from __future__ import annotations

import csv
from datetime import date, timedelta
from pathlib import Path

import numpy as np
import pandas as pd
import pingouin as pg
import pytest

from protolint.analysis.drift import Options, analyse, read_ratings
from protolint.plan import read_plan_file
from protolint.stats import icc
from protolint.stats.drift import cusum_arl
from tests.conftest import write_demo_plan

REPO = Path(__file__).resolve().parents[2]
DEMO_PLAN = REPO / "demo_protocol" / "plan.yaml"
HEADER = ["date", "site", "rater", "case", "score", "reference", "kind"]

# Shrout & Fleiss (1979) Table 2: 6 targets rated by 4 judges. Judge 1 plays the rater, judge 4
# the reference scores.
SF_TARGETS = [[9, 2, 5, 8], [6, 1, 3, 2], [8, 4, 6, 8], [7, 1, 2, 6], [10, 5, 6, 9], [6, 2, 4, 7]]


def write(path: Path, rows: list[list[object]], header: list[str] = HEADER) -> str:
    with open(path, "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(header)
        writer.writerows(rows)
    return str(path)


def test_certification_icc_is_the_core_icc_a1_and_matches_pingouin(tmp_path: Path) -> None:
    rows = [["2026-01-05", "S1", "J1", f"T{i}", t[0], t[3], "certification"] for i, t in enumerate(SF_TARGETS)]
    report = analyse(read_ratings(write(tmp_path / "c.csv", rows)), None, Options(scale_sd=1.0))
    cert = report.raters[0].certification
    pair = np.array([[t[0], t[3]] for t in SF_TARGETS], dtype=float)
    core = icc(pair)["ICC(A,1)"]
    assert cert.icc == pytest.approx(core.value, abs=1e-12)
    assert cert.icc_ci == pytest.approx((core.ci.low, core.ci.high), abs=1e-12)
    long = pd.DataFrame([(i, rater, v) for i, row in enumerate(pair) for rater, v in zip("ab", row)],
                        columns=["target", "rater", "score"])
    reference = pg.intraclass_corr(long, targets="target", raters="rater", ratings="score").reset_index(drop=True)
    # McGraw & Wong (1996) ICC(A,1) is Shrout & Fleiss ICC(2,1): pingouin's second row (its
    # labels differ between versions, so matched by position).
    assert cert.icc == pytest.approx(reference.iloc[1]["ICC"], abs=1e-10)
    low, high = reference.iloc[1]["CI95"]  # printed to 2 dp
    assert cert.icc_ci == pytest.approx((low, high), abs=0.005 + 1e-9)
    assert cert.mean_abs_deviation == pytest.approx(np.mean(np.abs(pair[:, 0] - pair[:, 1])))
    assert cert.max_abs_deviation == 4.0  # deviations 1, 4, 0, 1, 1, -1


def test_deviation_criterion_lists_the_cases_outside(tmp_path: Path) -> None:
    rows = [["2026-01-05", "S1", "A", f"T{i}", t[0], t[3], "certification"] for i, t in enumerate(SF_TARGETS)]
    report = analyse(read_ratings(write(tmp_path / "c.csv", rows)), None, Options(max_deviation=1.0, scale_sd=1.0))
    cert = report.raters[0].certification
    # Deviations 1, 4, 0, 1, 1, -1: T1 is 4 points off.
    assert cert.outside_cases == ("T1",)
    assert cert.within_share == pytest.approx(5 / 6)
    assert cert.passed is False
    assert report.raters[0].status == "failed-certification"


def _demo_rows(rater: str, site: str, start: date, rounds: int, every_weeks: int, shift: float, rng) -> list[list[object]]:
    refs = {f"C{i}": 10 + 2 * i for i in range(8)}
    rows: list[list[object]] = []
    for case, ref in list(refs.items())[:6]:
        rows.append([start.isoformat(), site, rater, case, ref + round(rng.normal(0, 1)), ref, "certification"])
    for k in range(rounds):
        day = start + timedelta(weeks=every_weeks * (k + 1))
        for case, ref in list(refs.items())[:5]:
            rows.append([day.isoformat(), site, rater, case, round(ref + shift + rng.normal(0, 1), 3), ref, "monitoring"])
    return rows


def test_missed_plan_round_and_interval_are_due(tmp_path: Path) -> None:
    # Demo plan: SITE-DERM rounds every 52 weeks from 2026-09-01 at S01, so round 1 covers
    # 2026-09-01 to 2027-08-31. R-S01-A rates monitoring cases only on 2027-09-10.
    rng = np.random.default_rng(1)
    rows = _demo_rows("R-S01-A", "S01", date(2026, 8, 10), 0, 4, 0.0, rng)
    rows += [["2027-09-10", "S01", "R-S01-A", f"C{i}", 10 + 2 * i, 10 + 2 * i, "monitoring"] for i in range(5)]
    loaded = read_plan_file(str(DEMO_PLAN))
    report = analyse(read_ratings(write(tmp_path / "d.csv", rows)), loaded, Options(scale_sd=1.0))
    codes = {(d.code, d.due.isoformat(), d.overdue) for d in report.due}
    assert ("missed-round", "2027-08-31", True) in codes
    assert ("interval", "2027-08-10", True) in codes  # 12 months after the certification
    assert report.roster_missing == ("R-S02-A",)
    assert report.needs_action("error")


def test_amendment_trigger_recertifies(tmp_path: Path) -> None:
    text = DEMO_PLAN.read_text(encoding="utf-8").replace(
        "      effective: 2026-06-30\n      summary: Adds the week-4", "      effective: 2026-10-15\n      summary: Adds the week-4"
    ).replace("affects_instruments: [PHG-5]", "affects_instruments: [HLSC-8]")
    plan_file = write_demo_plan(tmp_path / "plan.yaml", text)
    rng = np.random.default_rng(2)
    rows = _demo_rows("R-S01-A", "S01", date(2026, 8, 10), 3, 4, 0.0, rng)
    report = analyse(read_ratings(write(tmp_path / "d.csv", rows)), read_plan_file(str(plan_file)), Options(scale_sd=1.0))
    amendment = [d for d in report.due if d.code == "amendment"]
    assert [(d.due, d.action) for d in amendment] == [(date(2026, 10, 15), "recertify")]


def test_without_a_plan_the_defaults_are_used_and_stated(tmp_path: Path) -> None:
    rng = np.random.default_rng(3)
    rows = _demo_rows("A", "S1", date(2026, 1, 5), 6, 4, 0.0, rng)
    report = analyse(read_ratings(write(tmp_path / "d.csv", rows)), None, Options())
    out = report.to_json()
    pool = out["settings"]["pools"][0]
    assert (pool["criterion"]["coefficient"], pool["criterion"]["minimum"]) == ("ICC(A,1)", 0.80)
    assert (pool["interval_weeks"], pool["recertify_months"], pool["source"]) == (4, 12, "options")
    assert out["settings"]["h"] == pytest.approx(4.774, abs=0.001)  # solved for ARL0 = 370
    assert out["chart"]["arl_in_control"] == pytest.approx(370, abs=0.01)
    assert out["plan"] is None and out["as_of"] == (date(2026, 1, 5) + timedelta(weeks=24)).isoformat()


def test_as_of_leaves_later_rows_out(tmp_path: Path) -> None:
    rng = np.random.default_rng(4)
    rows = _demo_rows("A", "S1", date(2026, 1, 5), 6, 4, 0.0, rng)
    report = analyse(read_ratings(write(tmp_path / "d.csv", rows)), None, Options(as_of=date(2026, 3, 1)))
    assert len(report.raters[0].rounds) == 1
    assert report.ignored_after_as_of == 25


def _simulated(tmp_path: Path, raters: int, rounds: int, shift_sd: float, seed: int) -> str:
    # Deviations of single ratings have SD 1 and rounds have 4 cases, so a shift of `shift_sd`
    # SD of a round's mean is shift_sd / 2 points. The scale SD is given (1.0) so that only the
    # chart is tested.
    rng = np.random.default_rng(seed)
    rows: list[list[object]] = []
    start = date(2026, 1, 5)
    for r in range(raters):
        for c in range(4):
            rows.append([start.isoformat(), "S1", f"R{r}", f"C{c}", 20 + c + rng.normal(0, 1), 20 + c, "certification"])
        for k in range(rounds):
            day = (start + timedelta(weeks=4 * (k + 1))).isoformat()
            for c in range(4):
                rows.append([day, "S1", f"R{r}", f"C{c}", 20 + c + shift_sd / 2 + rng.normal(0, 1), 20 + c, "monitoring"])
    return write(tmp_path / f"sim{seed}.csv", rows)


def test_simulated_one_sd_shift_is_flagged_within_the_promised_run_length(tmp_path: Path) -> None:
    # 100 raters shifted by 1 SD from the first round, 40 rounds, CUSUM k = 0.5, h = 4: the mean
    # round of the first signal must be within 4 simulation SEs of the promised ARL (8.38:
    # Lucas & Crosier 1982 Table 1; Montgomery, Introduction to Statistical Quality Control, Table 9.3).
    report = analyse(read_ratings(_simulated(tmp_path, 100, 40, 1.0, 11)), None,
                     Options(scale_sd=1.0, h=4.0, max_deviation=10))
    first = []
    for rater in report.raters:
        assert rater.first_signal is not None
        first.append(1 + [r.day for r in rater.rounds].index(rater.first_signal))
    first_arr = np.asarray(first, dtype=float)
    promised = report.chart.shifted[1][1]
    assert promised == pytest.approx(8.38, abs=0.01)
    assert abs(first_arr.mean() - promised) < 4 * first_arr.std(ddof=1) / np.sqrt(first_arr.size)


def test_simulated_stable_raters_are_flagged_no_more_than_promised(tmp_path: Path) -> None:
    # 200 stable raters × 30 rounds, h = 4 (ARL0 168): promised false-alarm share within 30
    # rounds about 1 - (1 - 1/168)^30 = 0.164; tolerance 3 binomial SEs (about 0.079) above it.
    report = analyse(read_ratings(_simulated(tmp_path, 200, 30, 0.0, 12)), None,
                     Options(scale_sd=1.0, h=4.0, max_deviation=10))
    flagged = np.mean([r.first_signal is not None for r in report.raters])
    promised = 1 - (1 - 1 / cusum_arl(0.5, 4.0)) ** 30
    assert flagged <= promised + 3 * np.sqrt(promised * (1 - promised) / 200)
    assert report.group[0].first_signal is None or report.group[0].left_out > 0
