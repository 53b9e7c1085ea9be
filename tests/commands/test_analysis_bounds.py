"""The analyses' bounds: what is refused with one line, what is left out with the reason, and
that the limits are stated in --help."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from protolint.analysis.agreement import MAX_BOOTSTRAP, MAX_CATEGORIES
from protolint.cli import main
from tests.conftest import assert_one_line_error


def run(*args: str | Path) -> tuple[int, str, str]:
    result = CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)
    return result.exit_code, result.stdout, result.stderr


def write(path: Path, rows: list[list[object]]) -> Path:
    path.write_text("\n".join(",".join(map(str, row)) for row in rows) + "\n", encoding="utf-8")
    return path


def test_kappa_type_coefficients_are_left_out_beyond_the_category_bound(tmp_path: Path) -> None:
    rng = np.random.default_rng(7)
    n_categories = MAX_CATEGORIES + 50
    scores = rng.integers(0, n_categories, size=(400, 2))
    scores[:, 1] = np.where(rng.random(400) < 0.7, scores[:, 0], scores[:, 1])
    path = write(tmp_path / "many.csv", [["subject", "a", "b"], *[[f"S{i}", *row] for i, row in enumerate(scores)]])
    code, out, err = run("agreement", path, "--scale", "ordinal", "--bootstrap", "0", "--format", "json")
    assert code == 0, err
    report = json.loads(out)
    assert "krippendorff_alpha" in report["coefficients"]
    for name in ("fleiss_kappa", "cohen_kappa", "gwet_ac1", "gwet_ac2"):
        assert name not in report["coefficients"]
        assert f"more than the {MAX_CATEGORIES}" in report["skipped"][name]


def test_values_near_the_largest_float_are_refused_where_they_are(tmp_path: Path) -> None:
    path = write(tmp_path / "huge.csv", [["subject", "a", "b"], ["S1", "1e305", "2e305"], ["S2", "1.5e305", "3e305"]])
    code, _, err = run("agreement", path)
    assert_one_line_error(code, err, f"{path}:2:0: column 'a': '1e305' is beyond ±1e15")


def test_values_just_inside_the_bound_give_finite_coefficients(tmp_path: Path) -> None:
    rows = [["subject", "a", "b", "c"]] + [[f"S{i}", f"{(i % 5 + 1) * 1e14:.6e}", f"{(i % 5 + 1.5) * 1e14:.6e}",
                                            f"{(i % 4 + 1) * 1e14:.6e}"] for i in range(12)]
    code, out, err = run("agreement", write(tmp_path / "large.csv", rows), "--bootstrap", "0", "--format", "json")
    assert code == 0, err
    values = [entry["value"] for entry in json.loads(out)["coefficients"].values()]
    assert values and all(value is not None and -1.5 <= value <= 1.0 for value in values)


def test_category_range_bootstrap_and_table_counts_are_bounded(tmp_path: Path) -> None:
    ratings = write(tmp_path / "r.csv", [["subject", "a", "b"], ["S1", 1, 2], ["S2", 2, 2], ["S3", 3, 1]])
    code, _, err = run("agreement", ratings, "--scale", "ordinal", "--categories", "0-1000000000")
    assert_one_line_error(code, err, "a category set has at most 10,000")
    code, _, err = run("agreement", ratings, "--bootstrap", str(MAX_BOOTSTRAP + 1))
    assert_one_line_error(code, err, f"up to {MAX_BOOTSTRAP:,}")
    table = write(tmp_path / "table.csv", [["", "0", "1"], ["0", "900000000", "1"], ["1", "1", "900000000"]])
    code, _, err = run("agreement", table, "--table", "--scale", "nominal")
    assert_one_line_error(code, err, "--table reads at most")


@pytest.mark.parametrize("args, fragment", [
    (["--effect-size", "1e-300"], "too small to detect"),
    (["--effect-size", "1e300", "--ratio", "100"], "larger than any effect"),
    (["--effect-size", "0.5", "--ratio", "1e300"], "--ratio must be between"),
    (["--effect-size", "0.5", "--reliability", "5e-324"], "too small to detect"),
    (["--effect-size", "0.5", "--n-total", "1000000000000"], "--n-total must be at most"),
    (["--effect-size", "0.3", "--design", "correlation", "--reliability", "5e-324"], "too weak"),
])
def test_size_refuses_values_beyond_its_bounds_with_one_line(args: list[str], fragment: str) -> None:
    code, _, err = run("size", *args)
    assert_one_line_error(code, err, fragment)


def test_design_search_and_crossed_array_are_bounded(tmp_path: Path) -> None:
    pilot = write(tmp_path / "pilot.csv", [["subject", "rater", "score"],
                                           *[[f"P{i}", f"R{j}", (i + j) % 5] for i in range(6) for j in range(3)]])
    code, _, err = run("design", pilot, "--effect-size", "0.4", "--cost-participant", "10", "--max-raters", "1000000")
    assert_one_line_error(code, err, "must be between 1 and 50")
    code, _, err = run("design", pilot, "--effect-size", "0.4", "--cost-participant", "inf")
    assert_one_line_error(code, err, "costs must be between 0 and 1e12")


@pytest.mark.parametrize("command", ["agreement", "consistency", "drift", "design", "size"])
def test_help_states_the_limits(command: str) -> None:
    code, out, _ = run(command, "--help")
    assert code == 0
    assert "Limits:" in out or "Bounds:" in out
