"""``protolint design``: input contract, balancing, the optimiser, --plan and bad input."""

from __future__ import annotations

import csv
import dataclasses
import json
import math
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from protolint import CAUTION
from protolint.cli import main
from protolint.stats import power_two_group
from protolint.stats.gtheory import g_study
from protolint.wording import plural
from tests.conftest import write_demo_plan

ROOT = Path(__file__).parents[2]
BRENNAN = ROOT / "tests" / "data" / "reference" / "A_brennan2001_synthetic3_pxixo_long.csv"
DEMO_PILOT = ROOT / "demo_protocol" / "pilot" / "pilot_hlsc8_simulated.csv"
DEMO_PLAN = ROOT / "demo_protocol" / "plan.yaml"


def run(*args: str) -> tuple[int, str, str]:
    result = CliRunner().invoke(main, ["design", *map(str, args)], catch_exceptions=False)
    return result.exit_code, result.stdout, result.stderr


def run_json(*args: str) -> dict:
    code, out, err = run(*args, "--format", "json")
    assert code == 0, err
    return json.loads(out)


def write(path: Path, header: list[str], rows: list[list[object]]) -> Path:
    with open(path, "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(header)
        writer.writerows(rows)
    return path


@pytest.fixture
def brennan_rows() -> list[list[str]]:
    with open(BRENNAN, newline="") as handle:
        return list(csv.reader(handle))[1:]


@pytest.fixture
def brennan_file(tmp_path: Path, brennan_rows: list[list[str]]) -> Path:
    # Brennan (2001) ch. 3 synthetic data set No. 3 with the input contract's column names.
    return write(tmp_path / "pilot.csv", ["subject", "rater", "occasion", "score"], brennan_rows)


def test_json_contract_on_brennan_synthetic_3(brennan_file: Path) -> None:
    report = run_json(brennan_file)
    assert report["design"] == "p x r x o" and report["design_detected"] is True
    assert (report["subjects"], report["raters"], report["occasions"]) == (10, 4, 2)
    assert list(report["components"]) == [
        "subject", "rater", "occasion", "subject:rater", "subject:occasion", "rater:occasion", "residual"]
    # Brennan (2001), ch. 3: .5528, .4417, .0074, .5750, .1009, .1565, .9352.
    printed = [0.5528, 0.4417, 0.0074, 0.5750, 0.1009, 0.1565, 0.9352]
    for entry, value in zip(report["components"].values(), printed):
        assert set(entry) >= {"variance", "share", "set_to_zero"}
        assert round(entry["variance"], 4) == value and entry["set_to_zero"] is False
    assert sum(e["share"] for e in report["components"].values()) == pytest.approx(1.0)
    row = next(r for r in report["dstudy"] if (r["raters"], r["occasions"]) == (4, 2))
    assert row["g"] == pytest.approx(0.639871, abs=5e-7) and row["phi"] == pytest.approx(0.554125, abs=5e-7)
    assert report["coefficient"] == "phi"
    assert report["optimum"] is None and report["frontier"] == [] and report["caution"] == CAUTION
    assert report["sha256"] and len(report["sha256"]) == 64


def test_missing_cells_drop_subjects_and_say_so(tmp_path: Path, brennan_rows: list[list[str]]) -> None:
    rows = [r for r in brennan_rows if not (r[0] == "3" and r[1] == "2" and r[2] == "1")]
    rows = [r if not (r[0] == "7" and r[1] == "4" and r[2] == "2") else [*r[:3], ""] for r in rows]
    report = run_json(write(tmp_path / "gaps.csv", ["subject", "rater", "occasion", "score"], rows))
    dropped = report["dropped"]
    assert (dropped["subjects"], dropped["used"], dropped["of"]) == (2, 8, 10)
    assert dropped["ids"] == ["3", "7"] and dropped["missing_scores"] == 1
    assert "dropped 2 subjects with missing rater x occasion cells; 8 of 10 used" in dropped["note"]
    # The components are those of the 8 complete subjects.
    full = np.zeros((10, 4, 2))
    for p, i, o, s in brennan_rows:
        full[int(p) - 1, int(i) - 1, int(o) - 1] = float(s)
    expected = g_study(np.delete(full, [2, 6], axis=0))
    assert report["components"]["subject"]["variance"] == pytest.approx(expected.variance("p"))
    assert report["subjects"] == 8
    code, out, _ = run(tmp_path / "gaps.csv")
    assert code == 0 and "8 of 10 used" in out


def test_two_facet_and_nested_designs_are_detected(tmp_path: Path) -> None:
    rng = np.random.default_rng(3)
    x = rng.normal(10, 2, (12, 1)) + rng.normal(0, 1, (12, 3))
    crossed = write(tmp_path / "pxr.csv", ["subject", "rater", "score"],
                    [[f"S{i}", f"R{j}", round(x[i, j], 3)] for i in range(12) for j in range(3)])
    nested = write(tmp_path / "rp.csv", ["Subject", "Rater", "Score"],
                   [[f"S{i}", f"R{i}-{j}", round(x[i, j], 3)] for i in range(12) for j in range(3)])
    a = run_json(crossed)
    assert a["design"] == "p x r" and list(a["components"]) == ["subject", "rater", "residual"]
    assert a["components"]["residual"]["effect"] == "pr,e"
    assert all(row["occasions"] == 1 for row in a["dstudy"])
    b = run_json(nested)
    assert b["design"] == "r:p" and list(b["components"]) == ["subject", "rater:subject"]
    assert all(row["g"] == row["phi"] for row in b["dstudy"])
    # Insisting on r:p for crossed data ignores rater identity, and says so.
    assert run_json(crossed, "--design", "PxR")["design"] == "p x r"
    assert run(crossed, "--design", "p x q")[0] == 2
    c = run_json(crossed, "--design", "r:p")
    assert c["design"] == "r:p" and c["design_detected"] is False
    assert any("rater identity ignored" in note for note in c["notes"])
    assert c["components"]["subject"]["variance"] == pytest.approx(b["components"]["subject"]["variance"])


def test_nested_subjects_with_other_numbers_of_ratings_are_dropped(tmp_path: Path) -> None:
    rows = [[f"S{i}", f"R{i}-{j}", i + j] for i in range(6) for j in range(3)]
    rows += [["S9", "R9-0", 4.0], ["S9", "R9-1", 5.0]]
    report = run_json(write(tmp_path / "rp.csv", ["subject", "rater", "score"], rows))
    assert report["dropped"]["ids"] == ["S9"] and report["subjects"] == 6
    assert "without exactly 3 ratings" in report["dropped"]["note"]


def brute_force(components: dict[str, float], grid: list[tuple[int, int]], d: float, alpha: float,
                target: float, dropout: float, costs: tuple[float, float, float]) -> tuple[int, int, int, float]:
    """Cheapest (k, m, N to enrol, cost) found by walking n upwards with the exact power function."""
    best = None
    for k, m in grid:
        c = components
        tau = c["p"]
        delta = c["pr"] / k + c["po"] / m + c["pro,e"] / (k * m)
        absolute = delta + c["r"] / k + c["o"] / m + c["ro"] / (k * m)
        phi = tau / (tau + absolute)
        n = 2
        while power_two_group(n, d, alpha=alpha, reliability=phi).power < target:
            n += 1
        enrolled = 2 * math.ceil(round(n / (1 - dropout), 9))
        cost = enrolled * (costs[0] + m * costs[2] + k * m * costs[1])
        if best is None or cost < best[3]:
            best = (k, m, enrolled, cost)
    assert best is not None
    return best


def test_optimiser_agrees_with_a_brute_force_search(brennan_file: Path) -> None:
    costs = (900.0, 60.0, 150.0)
    report = run_json(brennan_file, "--effect-size", "0.9", "--power", "0.85", "--dropout", "0.1",
                      "--cost-participant", costs[0], "--cost-rating", costs[1], "--cost-occasion", costs[2],
                      "--max-raters", "3", "--max-occasions", "2")
    components = {e["effect"]: e["variance"] for e in report["components"].values()}
    grid = [(k, m) for k in (1, 2, 3) for m in (1, 2)]
    k, m, n, cost = brute_force(components, grid, 0.9, 0.05, 0.85, 0.1, costs)
    opt = report["optimum"]
    assert (opt["raters"], opt["occasions"], opt["n_total_enrolled"]) == (k, m, n)
    assert opt["cost"] == pytest.approx(cost) and opt["coefficient"] == "phi" and opt["power"] >= 0.85
    assert len(report["frontier"]) == 6
    assert [p["cost"] for p in report["frontier"]] == sorted(p["cost"] for p in report["frontier"])
    base = report["baseline"]
    assert (base["raters"], base["occasions"]) == (1, 1)
    assert report["saving"]["cost"] == pytest.approx(base["cost"] - opt["cost"])
    # The frontier flag: no flagged design is beaten on both cost and participants.
    for p in report["frontier"]:
        beaten = any(q["cost"] <= p["cost"] and q["n_total_enrolled"] <= p["n_total_enrolled"]
                     and (q["cost"], q["n_total_enrolled"]) != (p["cost"], p["n_total_enrolled"])
                     for q in report["frontier"])
        assert p["efficient"] is (not beaten)
    assert report["frontier"][0]["efficient"] is True


def test_coefficient_g_changes_the_reliability_used(brennan_file: Path) -> None:
    args = (brennan_file, "--effect-size", "0.5", "--cost-participant", "1000", "--max-raters", "2", "--max-occasions", "1")
    g = run_json(*args, "--coefficient", "g")
    phi = run_json(*args)
    assert g["optimum"]["reliability"] == pytest.approx(g["dstudy"][-1]["g"])
    assert phi["optimum"]["reliability"] == pytest.approx(phi["dstudy"][-1]["phi"])
    assert g["optimum"]["n_total_enrolled"] < phi["optimum"]["n_total_enrolled"]


def test_plan_supplies_the_comparison_and_judges_its_own_design() -> None:
    report = run_json(DEMO_PILOT, "--plan", DEMO_PLAN, "--cost-participant", "4000", "--cost-rating", "150",
                      "--cost-occasion", "350")
    # The demo plan: d = 0.45 on the true-score scale, alpha .05 two-sided, power .90, dropout 15 %.
    assert report["comparison"] == {"effect_size": 0.45, "alpha": 0.05, "power": 0.9, "sides": 2, "ratio": 1.0,
                                    "dropout": 0.15, "convention": "variance-ratio"}
    # EP-PRIMARY's total decides eligibility and response: absolute error, Phi.
    assert report["coefficient"] == "phi" and "individual" in report["coefficient_reason"]
    # The simulated pilot's rater x occasion estimate is negative: reported, zeroed and used as zero.
    ro = report["components"]["rater:occasion"]
    assert ro["set_to_zero"] is True and ro["estimate"] < 0 and ro["variance"] == 0.0 and ro["share"] == 0.0
    v = {e["effect"]: e["variance"] for e in report["components"].values()}
    absolute = v["pr"] + v["po"] + v["pro,e"] + v["r"] + v["o"] + v["ro"]
    assert report["dstudy"][0]["phi"] == pytest.approx(v["p"] / (v["p"] + absolute))
    plan = report["plan"]
    assert (plan["raters"], plan["occasions"]) == (1, 1) and plan["endpoint"] == "EP-PRIMARY"
    assert plan["design"]["reliability"] == pytest.approx(report["dstudy"][0]["phi"])
    assert plan["extra_cost_vs_optimum"] == pytest.approx(plan["design"]["cost"] - report["optimum"]["cost"])
    on = next(p["efficient"] for p in report["frontier"] if (p["raters"], p["occasions"]) == (1, 1))
    assert plan["on_frontier"] is on


def test_coefficient_follows_the_rating_arrangement() -> None:
    from protolint.analysis.design_plan import coefficient_for_endpoint
    from protolint.plan import read_plan_file

    plan = read_plan_file(str(DEMO_PLAN)).plan
    assert plan is not None
    photo = plan.endpoint("EP-PHOTO")
    assert coefficient_for_endpoint(plan, photo)[0] == "phi"  # rotating central readers
    # The whole central panel of 4 reads every photograph, and no individual decision: relative error.
    panel = dataclasses.replace(photo, rater_assignment=None, raters_per_assessment=4)
    assert coefficient_for_endpoint(plan, panel) == ("g", "the same 4 central raters rate every participant (relative error only)")
    assert coefficient_for_endpoint(plan, dataclasses.replace(panel, raters_per_assessment=2))[0] == "phi"


@pytest.mark.parametrize(("content", "message"), [
    ("", "pilot.csv:1:0: the file is empty"),
    ("subject,judge,score\nA,R1,3\n", "pilot.csv:1:0: no 'rater' column"),
    ("subject,rater,score\nA,R1,3\nA,R2\n", "pilot.csv:3:0: row has 2 fields, the header has 3"),
    ("subject,rater,score\nA,R1,3\nA,R2,high\n", "pilot.csv:3:0: score 'high' is not a number"),
    ("subject,rater,score\nA,R1,3\nB,R1,4\nA,R1,5\n", "pilot.csv:4:0: subject 'A', rater 'R1' is already rated on line 2"),
    ("subject,rater,score\nA,,3\n", "pilot.csv:2:0: empty rater"),
    ("subject,rater,score\nA,R1,3\nA,R2,4\n", "pilot.csv:3:0: found 1 subject with a score"),
    ("subject;rater;score\nA;R1;3\n", "pilot.csv:1:0: the header is one field"),
    ("subject,rater,score\nA,R1,inf\n", "pilot.csv:2:0: score 'inf' is not a finite number"),
])
def test_bad_files_get_one_located_line_and_exit_2(tmp_path: Path, cli_process, content: str, message: str) -> None:
    path = tmp_path / "pilot.csv"
    path.write_text(content, encoding="utf-8")
    result = cli_process("design", path)
    assert result.returncode == 2
    assert message in result.stderr and result.stderr.count("\n") == 1
    assert "Traceback" not in result.stderr


def test_data_that_cannot_support_the_design_is_refused(tmp_path: Path, cli_process) -> None:
    nested = write(tmp_path / "rp.csv", ["subject", "rater", "score"],
                   [[f"S{i}", f"R{i}-{j}", i + j] for i in range(5) for j in range(2)])
    result = cli_process("design", nested, "--design", "p x r")
    assert result.returncode == 2 and "use --design r:p" in result.stderr and "Traceback" not in result.stderr
    # Raters who each rate the subjects of one site only: too few complete subjects.
    by_site = write(tmp_path / "sites.csv", ["subject", "rater", "score"],
                    [[f"S{i}", f"R{i % 3}-{j}", i + j] for i in range(9) for j in range(2)])
    result = cli_process("design", by_site)
    assert result.returncode == 2 and "only 0 of 9 subjects" in result.stderr and "--design r:p" in result.stderr
    result = cli_process("design", BRENNAN, "--plan", DEMO_PLAN, "--effect-size", "0.4")
    assert result.returncode == 2 and "Traceback" not in result.stderr


@pytest.mark.parametrize(("args", "message"), [
    (("--plan", str(DEMO_PLAN), "--effect-size", "0.4"), "--effect-size comes from the plan"),
    (("--power", "0.9",), "--power needs --effect-size"),
    (("--effect-size", "0.4"), "give at least one cost"),
    (("--format", "pdf"), "--format pdf needs --output"),
    (("--effect-size", "0.4", "--cost-participant", "1", "--alpha", "2"), "alpha"),
])
def test_bad_options_are_one_line_errors(brennan_file: Path, args: tuple[str, ...], message: str) -> None:
    code, _, err = run(brennan_file, *args)
    assert code == 2 and message in err


def test_demo_pilot_is_labelled_simulated() -> None:
    readme = (DEMO_PILOT.parent / "README.md").read_text(encoding="utf-8")
    assert "SIMULATED" in readme and "simulated" in DEMO_PILOT.name


def _plan_with(tmp_path: Path, old: str, new: str) -> Path:
    text = DEMO_PLAN.read_text(encoding="utf-8")
    assert old in text
    return write_demo_plan(tmp_path / "plan.yaml", text.replace(old, new, 1))


def test_plan_design_outside_the_limits_is_evaluated_and_said(tmp_path: Path) -> None:
    plan = _plan_with(tmp_path, "    raters_per_assessment: 1\n", "    raters_per_assessment: 3\n")
    report = run_json(DEMO_PILOT, "--plan", plan, "--cost-participant", "4000", "--cost-rating", "150",
                      "--max-raters", "2", "--max-occasions", "1")
    p = report["plan"]
    assert (p["raters"], p["occasions"]) == (3, 1) and p["on_frontier"] is False
    assert p["note"] == "the plan's design lies outside the searched limits"
    assert p["design"]["reliability"] == pytest.approx(
        g_study_of_demo().d_study(3, 1).phi)


def g_study_of_demo():
    from protolint.analysis.design import arrange, read_pilot

    return g_study(arrange(read_pilot(str(DEMO_PILOT))).scores)


def test_plan_occasions_cannot_be_projected_from_a_two_facet_pilot(tmp_path: Path) -> None:
    plan = _plan_with(tmp_path, "    raters_per_assessment: 1\n", "    raters_per_assessment: 1\n    occasions_per_assessment: 2\n")
    rows = [[f"S{i}", f"R{j}", (i * 7 + j * 3) % 11] for i in range(8) for j in range(3)]
    pilot = write(tmp_path / "pxr.csv", ["subject", "rater", "score"], rows)
    report = run_json(pilot, "--plan", plan, "--cost-participant", "100")
    assert report["plan"]["design"] is None and "no occasion facet" in report["plan"]["note"]
    assert report["limits"]["max_occasions"] == 1


def test_text_report_names_the_optimum_the_saving_and_the_plan() -> None:
    code, out, _ = run(DEMO_PILOT, "--plan", DEMO_PLAN, "--cost-participant", "4000", "--cost-rating", "150",
                       "--cost-occasion", "350")
    report = run_json(DEMO_PILOT, "--plan", DEMO_PLAN, "--cost-participant", "4000", "--cost-rating", "150",
                      "--cost-occasion", "350")
    opt = report["optimum"]
    assert code == 0
    assert f"Cheapest design: {plural(opt['raters'], 'rater')} x {plural(opt['occasions'], 'occasion')}, N = {opt['n_total_enrolled']}" in out
    assert f"saves {report['saving']['cost']:,.0f}" in out
    assert "negative estimate" in out and "set to 0" in out
    assert f"on the frontier: {'yes' if report['plan']['on_frontier'] else 'no'}" in out
    assert out.rstrip().endswith(CAUTION.split()[-1])


def test_a_workbook_sheet_with_other_column_names_is_read_like_the_csv(tmp_path: Path, brennan_file: Path,
                                                                        brennan_rows: list[list[str]]) -> None:
    """The same Brennan (2001) ratings from the second sheet of a workbook, under other column
    names, give the same report as the CSV (apart from the file named and its hash)."""
    openpyxl = pytest.importorskip("openpyxl")
    book = openpyxl.Workbook()
    book.active.title = "Cover"
    book.active.append(["simulated pilot export for a test"])
    sheet = book.create_sheet("Pilot")
    sheet.append(["Participant", "Assessor", "Session", "Total"])
    for subject, rater, occasion, score in brennan_rows:
        sheet.append([subject, rater, occasion, float(score)])
    workbook = tmp_path / "pilot.xlsx"
    book.save(workbook)
    from_csv = run_json(brennan_file, "--effect-size", "0.4", "--cost-participant", "100")
    from_sheet = run_json(workbook, "--sheet", "Pilot", "--subject", "Participant", "--rater", "Assessor",
                          "--occasion", "Session", "--score", "Total", "--effect-size", "0.4", "--cost-participant", "100")
    for report in (from_csv, from_sheet):
        del report["file"], report["sha256"]
    assert from_sheet == from_csv
    assert (from_sheet["design"], from_sheet["subjects"], from_sheet["raters"], from_sheet["occasions"]) == ("p x r x o", 10, 4, 2)
    # Without the column options the roles are not found: one located line naming the option.
    code, out, err = run(workbook, "--sheet", "Pilot")
    assert code == 2 and out == ""
    assert err == (f"{workbook}:1:0: no 'subject' column; the header must name subject, rater, score (and optionally "
                   "occasion), or --subject must name its column; found none of them\n")


def test_where_keeps_the_rows_of_one_pilot(tmp_path: Path, brennan_rows: list[list[str]]) -> None:
    """Two instruments' pilots in one long file: --where picks one, and the result is that of
    the pilot on its own."""
    alone = write(tmp_path / "alone.csv", ["subject", "rater", "occasion", "score"], brennan_rows)
    other = [[subject, rater, occasion, str(9 - float(score))] for subject, rater, occasion, score in brennan_rows]
    both = write(tmp_path / "both.csv", ["subject", "rater", "occasion", "score", "scale"],
                 [row + ["A"] for row in brennan_rows] + [row + ["B"] for row in other])
    expected = run_json(alone)
    chosen = run_json(both, "--where", "scale=A")
    assert chosen["components"] == expected["components"]
    assert chosen["dstudy"] == expected["dstudy"]
    code, _, err = run(both)
    assert code == 2 and "is already rated on line" in err
