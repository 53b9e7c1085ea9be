"""``protolint size``: attenuated sample sizes, Cohen (1988), the JSON contract and bad input."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner
from statsmodels.stats.power import TTestIndPower

from protolint import CAUTION
from protolint.cli import main

ROOT = Path(__file__).parents[2]
CONTRACT_KEYS = [
    "design", "effect_size", "alpha", "power", "sides", "reliability", "effect_size_observed",
    "n_per_group", "n_total", "n_total_perfect_reliability", "inflation",
]


def run(*args: str) -> tuple[int, str, str]:
    result = CliRunner().invoke(main, ["size", *args], catch_exceptions=False)
    return result.exit_code, result.stdout, result.stderr


def run_json(*args: str) -> dict:
    code, out, err = run(*args, "--format", "json")
    assert code == 0, err
    return json.loads(out)


def test_design_section_3_example() -> None:
    report = run_json("--effect-size", "0.5", "--reliability", "0.8")
    assert list(report)[: len(CONTRACT_KEYS)] == CONTRACT_KEYS
    # d .5, rho .8 -> 80 + 80 = 160 (statsmodels TTestIndPower().solve_power(0.5 * sqrt(0.8),
    # alpha=0.05, power=0.8) = 79.46 per group), 128 at rho 1 (63.77; Cohen 1988 Table 2.4.1
    # prints 64), inflation 1.25; observed d = .5 sqrt(.8) = 0.447.
    assert report["design"] == "two-group"
    assert (report["effect_size"], report["alpha"], report["power"], report["sides"], report["reliability"]) == (0.5, 0.05, 0.8, 2, 0.8)
    assert round(report["effect_size_observed"], 3) == 0.447
    assert report["n_per_group"] == [80, 80]
    assert report["n_total"] == 160
    assert report["n_total_perfect_reliability"] == 128
    assert report["inflation"] == 1.25
    assert report["achieved_power"] >= 0.8
    assert report["caution"] == CAUTION


@pytest.mark.parametrize("convention,rho,n_total", [("ctt", "0.4", 316), ("true-score", "0.8", 200), ("true-score", "0.4", 788)])
def test_conventions_by_name(convention: str, rho: str, n_total: int) -> None:
    # statsmodels TTestIndPower per group, rounded up, doubled: 316 at rho .4 (ctt, d_obs 0.3162);
    # 200 at .8 (d_obs 0.4) and 788 at .4 (d_obs 0.2; 393.41 per group) under the true-score convention.
    report = run_json("--effect-size", "0.5", "--reliability", rho, "--convention", convention)
    assert report["n_total"] == n_total
    assert report["convention"] == {"ctt": "variance-ratio", "true-score": "observed-true-correlation"}[convention]


def test_difference_and_sd_with_raters_and_dropout() -> None:
    report = run_json("--difference", "3", "--sd", "6", "--single-reliability", "0.6", "--raters", "2", "--dropout", "0.1")
    # d = 3/6 = .5; Spearman-Brown of .6 with 2 raters = .75 (formula); exact t n checked
    # against statsmodels' continuous solution.
    assert report["effect_size"] == 0.5 and report["reliability"] == pytest.approx(0.75)
    exact = TTestIndPower().solve_power(effect_size=0.5 * 0.75**0.5, alpha=0.05, power=0.8)
    assert report["n_per_group"] == [int(-(-exact // 1))] * 2
    assert report["n_per_group_enrolled"] == [-(-report["n_per_group"][0] * 10 // 9)] * 2
    assert report["reliability_from"] == {"single_reliability": 0.6, "raters": 2, "occasions": 1,
                                          "rule": "Spearman-Brown over raters x occasions ratings"}


def test_cohen_1988_anchor_without_reliability() -> None:
    # Cohen (1988) Table 2.4.1: d .8, power .90 -> 34 per group (exact noncentral t 33.83 -> 34).
    report = run_json("--effect-size", "0.8", "--power", "0.9")
    assert report["n_per_group"] == [34, 34] and report["reliability"] == 1.0 and report["inflation"] == 1.0


def test_one_sided_and_allocation_ratio() -> None:
    report = run_json("--effect-size", "0.5", "--sides", "1", "--ratio", "2")
    n1, n2 = report["n_per_group"]
    assert n2 == 2 * n1 and report["sides"] == 1
    power = TTestIndPower().power(effect_size=0.5, nobs1=n1, alpha=0.05, ratio=2, alternative="larger")
    assert report["achieved_power"] == pytest.approx(power, abs=1e-8)


def test_curve_json_and_text() -> None:
    report = run_json("--effect-size", "0.5", "--curve")
    curve = report["curve"]
    assert [point["reliability"] for point in curve] == [round(0.40 + 0.05 * i, 2) for i in range(13)]
    by_rho = {point["reliability"]: point["n_total"] for point in curve}
    # ctt, exact t (statsmodels TTestIndPower at d = 0.5 sqrt(rho)): 316 / 212 / 160 / 128 at rho .4 / .6 / .8 / 1.
    assert (by_rho[0.4], by_rho[0.6], by_rho[0.8], by_rho[1.0]) == (316, 212, 160, 128)
    assert all(a["n_total"] >= b["n_total"] for a, b in zip(curve, curve[1:]))
    code, out, _ = run("--effect-size", "0.5", "--curve")
    assert code == 0 and "Required N by reliability" in out and "316" in out


def test_correlation_design() -> None:
    report = run_json("--effect-size", "0.3", "--design", "correlation")
    # Cohen (1992) Table 2 (recalled): r .30 -> 85; Fisher z formula 84.93 -> 85.
    assert report["design"] == "correlation" and report["n_total"] == 85 and report["n_per_group"] is None
    attenuated = run_json("--effect-size", "0.3", "--design", "correlation", "--reliability", "0.8", "--reliability-other", "0.8")
    assert attenuated["effect_size_observed"] == pytest.approx(0.24)
    assert attenuated["n_total_perfect_reliability"] == 85 and attenuated["n_total"] > 85


def test_text_report_ends_with_caution() -> None:
    code, out, err = run("--effect-size", "0.5", "--reliability", "0.8")
    assert code == 0 and err == ""
    assert "80 + 80 = 160" in out and "classical test theory" in out
    assert " ".join(out.split()).endswith(" ".join(CAUTION.split()))


@pytest.mark.parametrize(
    "args,message",
    [
        ([], "give --effect-size, or --difference together with --sd"),
        (["--effect-size", "0.5", "--difference", "2"], "not both"),
        (["--difference", "2"], "--difference together with --sd"),
        (["--difference", "2", "--sd", "0"], "--sd must be greater than 0"),
        (["--effect-size", "0.5", "--reliability", "1.5"], "reliability must be in (0, 1], got 1.5"),
        (["--effect-size", "0.5", "--raters", "2"], "--raters and --occasions need --single-reliability"),
        (["--effect-size", "0.5", "--reliability", "0.8", "--single-reliability", "0.5"], "not both"),
        (["--effect-size", "0.5", "--single-reliability", "0.5", "--raters", "0"], "raters must be an integer >= 1"),
        (["--effect-size", "0.5", "--dropout", "1"], "dropout must be in [0, 1)"),
        (["--effect-size", "0.5", "--alpha", "0"], "alpha must be in (0, 1)"),
        (["--effect-size", "0.00001"], "too small to detect"),
        (["--effect-size", "0.3", "--design", "correlation", "--convention", "ctt"], "--convention applies"),
    ],
)
def test_bad_input_exits_2_with_one_line(args: list[str], message: str) -> None:
    code, out, err = run(*args)
    assert code == 2 and out == ""
    assert message in err
    assert len(err.strip().splitlines()) == 1


def test_subprocess_and_output_file(tmp_path: Path) -> None:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    target = tmp_path / "size.json"
    done = subprocess.run(
        [sys.executable, "-m", "protolint", "size", "--effect-size", "0.5", "--reliability", "0.8",
         "--format", "json", "--output", str(target)],
        capture_output=True, text=True, env=env, cwd=ROOT,
    )
    assert done.returncode == 0 and done.stdout == ""
    assert json.loads(target.read_text())["n_total"] == 160
    bad = subprocess.run([sys.executable, "-m", "protolint", "size", "--effect-size", "abc"], capture_output=True, text=True, env=env)
    assert bad.returncode == 2 and "Traceback" not in bad.stderr
    assert bad.stderr.strip() == "protolint: size: Invalid value for '--effect-size': 'abc' is not a valid float."
    helped = subprocess.run([sys.executable, "-m", "protolint", "size", "--help"], capture_output=True, text=True, env=env)
    assert helped.returncode == 0 and "protolint size --effect-size 0.5 --reliability 0.8" in helped.stdout


@pytest.mark.parametrize("new,old", [("variance-ratio", "ctt"), ("observed-true-correlation", "true-score")])
def test_convention_names_say_what_they_assume_and_old_names_stay(new: str, old: str) -> None:
    assert run_json("--effect-size", "0.5", "--reliability", "0.8", "--convention", new) == \
        run_json("--effect-size", "0.5", "--reliability", "0.8", "--convention", old)
    # The default is what a plan's sample-size rules use: 160 at d = 0.5, rho = 0.8 (d * sqrt(rho)).
    assert run_json("--effect-size", "0.5", "--reliability", "0.8")["convention"] == "variance-ratio"


def test_the_printed_reliability_reproduces_the_n() -> None:
    code, out, _ = run("--effect-size", "0.5", "--single-reliability", "0.55", "--raters", "3")
    assert code == 0
    printed = next(line for line in out.splitlines() if "Reliability of the outcome" in line).split()[-1]
    # Spearman-Brown of 0.55 with 3 ratings = 1.65 / 2.1 = 0.785714...; rerunning with the printed value gives the same N.
    assert printed == "0.785714"
    assert run_json("--effect-size", "0.5", "--reliability", printed)["n_total"] == \
        run_json("--effect-size", "0.5", "--single-reliability", "0.55", "--raters", "3")["n_total"]


def test_power_at_a_given_n_and_the_reliability_it_needs() -> None:
    report = run_json("--effect-size", "0.5", "--reliability", "0.8", "--n-total", "128")
    given = report["at_given_n"]
    # statsmodels' power of the t test at 64 per group and d_obs = 0.5 * sqrt(0.8).
    expected = TTestIndPower().power(effect_size=0.5 * 0.8**0.5, nobs1=64, alpha=0.05, ratio=1.0)
    assert given["n_per_group"] == [64, 64] and given["power"] == pytest.approx(expected, abs=1e-6)
    # 128 reach 80 % only at perfect reliability (Cohen 1988 Table 2.4.1: 64 per group at d = 0.5).
    assert given["reliability_needed"] == pytest.approx(1.0, abs=0.02)
    roomy = run_json("--effect-size", "0.5", "--reliability", "0.8", "--n-total", "300")["at_given_n"]
    rho = roomy["reliability_needed"]
    assert TTestIndPower().power(effect_size=0.5 * rho**0.5, nobs1=150, alpha=0.05) == pytest.approx(0.8, abs=1e-6)
    short = run_json("--effect-size", "0.5", "--n-total", "60")["at_given_n"]
    assert short["reliability_needed"] is None


def test_reliability_study_sizes() -> None:
    report = run_json("--effect-size", "0.5", "--single-reliability", "0.75", "--study-raters", "3",
                      "--study-null", "0.5", "--study-width", "0.2")
    study = report["reliability_study"]
    # Walter, Eliasziw & Donner (1998): rho0 .5, rho1 .75, k = 3, one-sided .05, power .80 -> 23.09 -> 24.
    assert study["walter_1998"]["n_subjects"] == 24
    assert study["walter_1998"]["n_exact"] == pytest.approx(23.09, abs=0.01)
    assert study["bonett_2002"]["n_subjects"] >= 2 and study["bonett_2002"]["expected_width"] <= 0.2 + 1e-9
    code, out, _ = run("--effect-size", "0.5", "--single-reliability", "0.75", "--study-raters", "3", "--study-null", "0.5")
    assert "Walter, Eliasziw & Donner 1998" in out
    code, _, err = run("--effect-size", "0.5", "--study-null", "0.5")
    assert code == 2 and "--study-raters" in err
    code, _, err = run("--effect-size", "0.5", "--reliability", "0.5", "--study-raters", "3", "--study-null", "0.6")
    assert code == 2 and err == "protolint: --study-null must be at least 0 and below the planning ICC 0.5, got 0.6\n"
    code, _, err = run("--effect-size", "0.5", "--reliability", "0.5", "--study-raters", "3", "--study-width", "3")
    assert code == 2 and "--study-width must be between 0 and 2" in err


def test_effect_basis_means_what_it_means_in_a_plan() -> None:
    # A plan's effect_basis: observed with source_reliability 0.64: the true effect is
    # 0.4 / sqrt(0.64) = 0.5 (classical test theory, Lord & Novick 1968), so N is that of d = 0.5.
    observed = run_json("--effect-size", "0.4", "--effect-basis", "observed", "--source-reliability", "0.64", "--reliability", "0.8")
    direct = run_json("--effect-size", "0.5", "--reliability", "0.8")
    assert observed["effect_size"] == pytest.approx(0.5) and observed["n_total"] == direct["n_total"] == 160
    assert (observed["effect_basis"], observed["effect_size_stated"], observed["source_reliability"]) == ("observed", 0.4, 0.64)
    assert direct["effect_basis"] == "true-score"
    code, _, err = run("--effect-size", "0.4", "--effect-basis", "observed")
    assert code == 2 and "--source-reliability" in err


def test_the_old_true_score_name_prints_a_note() -> None:
    code, _, err = run("--effect-size", "0.5", "--reliability", "0.8", "--convention", "true-score")
    assert code == 0 and err.count("\n") == 1
    assert "old name of observed-true-correlation" in err and "effect_basis: true-score means something else" in err
    code, _, err = run("--effect-size", "0.5", "--reliability", "0.8", "--convention", "observed-true-correlation")
    assert code == 0 and err == ""
