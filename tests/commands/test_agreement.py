"""``protolint agreement`` on published data, its JSON contract, text report and bad input."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from protolint import CAUTION
from protolint.cli import main

ROOT = Path(__file__).parents[2]
REFERENCE = ROOT / "tests" / "data" / "reference"
SHROUT_FLEISS = REFERENCE / "A_shrout_fleiss_1979_6x4.csv"
FLEISS_1971 = REFERENCE / "A_fleiss1971_diagnoses_30x6.csv"
KRIPPENDORFF = REFERENCE / "A_krippendorff_4x12.csv"
SKIN = REFERENCE / "A_sas_skin_condition_long.csv"


def run(*args: str) -> tuple[int, str, str]:
    result = CliRunner().invoke(main, ["agreement", *args], catch_exceptions=False)
    return result.exit_code, result.stdout, result.stderr


def run_json(*args: str) -> dict:
    code, out, err = run(*args, "--format", "json")
    assert code == 0, err
    return json.loads(out)


def test_json_contract_on_shrout_fleiss() -> None:
    report = run_json(str(SHROUT_FLEISS))
    assert (report["subjects"], report["raters"], report["scale"], report["missing"]) == (6, 4, "interval", 0)
    coefficients = report["coefficients"]
    assert list(coefficients)[:6] == ["ICC(1,1)", "ICC(2,1)", "ICC(3,1)", "ICC(1,k)", "ICC(2,k)", "ICC(3,k)"]
    # Shrout & Fleiss (1979) Table 4 (2 dp), rounded from the unrounded values.
    printed = {"ICC(1,1)": 0.17, "ICC(2,1)": 0.29, "ICC(3,1)": 0.71, "ICC(1,k)": 0.44, "ICC(2,k)": 0.62, "ICC(3,k)": 0.91}
    for name, value in printed.items():
        entry = coefficients[name]
        assert round(entry["value"], 2) == value
        assert isinstance(entry["ci"], list) and len(entry["ci"]) == 2
        assert entry["ci"][0] < entry["value"] < entry["ci"][1]
    # 95 % bounds of ICC(2,1) from psych::ICC() (Satterthwaite interval of McGraw & Wong 1996).
    assert coefficients["ICC(2,1)"]["ci"] == [pytest.approx(0.0187865, abs=1e-5), pytest.approx(0.7610844, abs=1e-5)]
    assert coefficients["ICC(2,1)"]["mcgraw_wong"] == "ICC(A,1)"
    assert coefficients["ICC(3,k)"]["type"] == "consistency"
    # Koo & Li (2016) bands: 0.715 moderate, 0.909 excellent, 0.166 poor.
    assert [coefficients[n]["band"] for n in ("ICC(3,1)", "ICC(3,k)", "ICC(1,1)")] == ["moderate", "excellent", "poor"]
    # Krippendorff's interval alpha on the same data: the krippendorff package gives the same value
    # (see tests/stats); here the contract shape.
    assert set(coefficients["krippendorff_alpha"]) >= {"value", "ci"}
    assert set(report["skipped"]) == {"fleiss_kappa", "cohen_kappa", "gwet_ac1"}
    assert report["caution"] == CAUTION


def test_nominal_fleiss_1971() -> None:
    report = run_json(str(FLEISS_1971), "--scale", "nominal")
    coefficients = report["coefficients"]
    # Fleiss (1971): kappa .430; Krippendorff nominal alpha 0.4334098 and Gwet AC1 0.4478845
    # (krippendorff package / irrCAC on the same data).
    assert round(coefficients["fleiss_kappa"]["value"], 3) == 0.430
    assert coefficients["krippendorff_alpha"]["value"] == pytest.approx(0.4334098, abs=1e-6)
    assert coefficients["gwet_ac1"]["value"] == pytest.approx(0.4478845, abs=1e-6)
    assert coefficients["fleiss_kappa"]["se0"] == pytest.approx(0.02437393, abs=1e-7)
    assert set(coefficients["fleiss_kappa"]["categories"]) == {"1", "2", "3", "4", "5"}
    assert "exactly 2 raters" in report["skipped"]["cohen_kappa"]
    assert all(name in report["skipped"] for name in ("ICC(1,1)", "ICC(3,k)"))
    for entry in coefficients.values():
        assert entry["ci"][0] <= entry["value"] <= entry["ci"][1]


def test_ordinal_two_raters_skin_study() -> None:
    coefficients = run_json(str(SKIN), "--scale", "ordinal")["coefficients"]
    # SAS PROC FREQ agreement study: kappa 0.3449 (95 % CI 0.2030-0.4868); weighted kappas
    # 0.5081601 (linear) and 0.6607229 (quadratic) from statsmodels / scikit-learn.
    assert round(coefficients["cohen_kappa"]["value"], 4) == 0.3449
    assert [round(b, 4) for b in coefficients["cohen_kappa"]["ci"]] == [0.2030, 0.4868]
    assert coefficients["cohen_kappa_linear"]["value"] == pytest.approx(0.5081601, abs=1e-6)
    assert coefficients["cohen_kappa_quadratic"]["value"] == pytest.approx(0.6607229, abs=1e-6)
    assert coefficients["gwet_ac1"]["value"] == pytest.approx(0.3510733, abs=1e-6)
    assert coefficients["gwet_ac2"]["weights"] == "quadratic"


@pytest.mark.parametrize("scale,alpha", [("nominal", 0.743), ("ordinal", 0.815), ("interval", 0.849)])
def test_krippendorff_example_with_missing_cells(scale: str, alpha: float) -> None:
    report = run_json(str(KRIPPENDORFF), "--scale", scale)
    # Krippendorff (2011): .743 / .815 / .849; 7 of the 48 cells are empty.
    assert round(report["coefficients"]["krippendorff_alpha"]["value"], 3) == alpha
    assert report["missing"] == 7
    assert any("7 ratings of 48 are missing" in note for note in report["notes"])
    # Krippendorff's alpha pairs the values of the 11 units with two or more of them (Krippendorff 2011).
    alpha = report["coefficients"]["krippendorff_alpha"]
    assert (alpha["subjects_used"], alpha["ratings_used"]) == (11, 40)


def test_confidence_option_changes_intervals() -> None:
    wide = run_json(str(SHROUT_FLEISS))["coefficients"]["ICC(3,1)"]["ci"]
    narrow = run_json(str(SHROUT_FLEISS), "--confidence", "0.8")["coefficients"]["ICC(3,1)"]["ci"]
    assert narrow[0] > wide[0] and narrow[1] < wide[1]


def test_text_report_names_bands_and_caution() -> None:
    code, out, err = run(str(SHROUT_FLEISS))
    assert code == 0 and err == ""
    assert "ICC(2,1) = ICC(A,1)" in out
    # One interpretation scheme per report, named with its cut points.
    assert "Koo & Li 2016" in out and "Landis & Koch" not in out
    assert "poor < 0.5 <= moderate < 0.75 <= good < 0.9 <= excellent" in out
    assert "Not computed:" in out
    assert out.rstrip().endswith(CAUTION.split()[-1])
    assert " ".join(out.split()).endswith(" ".join(CAUTION.split()))


def test_output_file_is_written_and_stdout_stays_empty(tmp_path: Path) -> None:
    target = tmp_path / "out" / "agreement.json"
    code, out, err = run(str(SHROUT_FLEISS), "--format", "json", "--output", str(target))
    assert code == 0 and out == ""
    assert "wrote json agreement report" in err
    assert json.loads(target.read_text())["subjects"] == 6
    assert [p.name for p in target.parent.iterdir()] == ["agreement.json"]  # no temporary left behind


BAD_FILES = {
    "empty.csv": ("", ":1:0: the file is empty"),
    "semicolons.csv": ("subject;a;b\n1;2;3\n2;3;4\n", ":1:0: the header is one field containing semicolons"),
    "ragged.csv": ("subject,a,b\n1,2,3\n2,3\n", ":3:0: row has 2 fields, the header has 3"),
    "text.csv": ("subject,a,b\n1,2,3\n2,3,high\n", ":3:0: column 'b': 'high' is not a number; ratings on an interval scale must be numbers "
                              "(--scale nominal reads text categories); leave the cell empty for a missing value"),
    "one_rater.csv": ("subject,a\n1,2\n2,3\n", ":1:0: found 1 rater column;"),
    "one_subject.csv": ("subject,a,b\n1,2,3\n", ":2:0: found 1 subject row; at least 2 are needed"),
    "duplicate.csv": ("subject,a,b\n1,2,3\n1,3,4\n", ":3:0: subject '1' appears again (first on line 2)"),
    "infinite.csv": ("subject,a,b\n1,2,inf\n2,3,4\n", ":2:0: column 'b': 'inf' is not a finite number"),
    "empty_column.csv": ("subject,a,b\n1,2,\n2,3,\n", ":1:0: rater column 'b' has no values"),
    "quote.csv": ('subject,a,b\n1,"2,3\n', "malformed CSV"),
}


@pytest.mark.parametrize("name", list(BAD_FILES))
def test_bad_csv_gives_located_error_and_exit_2(tmp_path: Path, name: str) -> None:
    content, expected = BAD_FILES[name]
    path = tmp_path / name
    path.write_text(content, encoding="utf-8")
    code, out, err = run(str(path))
    assert code == 2
    assert out == ""
    assert err.startswith(str(path))
    assert expected in err
    assert len(err.strip().splitlines()) == 1
    assert "Traceback" not in err


def test_missing_file_and_bad_options() -> None:
    code, _, err = run("no/such/file.csv")
    assert code == 2 and "no/such/file.csv:0:0: no such file" in err
    code, _, err = run(str(SHROUT_FLEISS), "--confidence", "1.5")
    assert code == 2 and "--confidence must be between 0 and 1" in err
    code, _, err = run(str(SHROUT_FLEISS), "--scale", "ratio")
    # click's usage errors are reduced to one line as well.
    assert code == 2 and err.startswith("protolint: agreement: Invalid value for '--scale'")
    assert len(err.strip().splitlines()) == 1
    code, _, err = run()
    assert code == 2 and err.strip() == "protolint: agreement: Missing argument 'RATINGS.csv'."


def test_nominal_text_labels_are_accepted(tmp_path: Path) -> None:
    path = tmp_path / "labels.csv"
    path.write_text("subject,r1,r2,r3\ns1,clear,clear,mild\ns2,mild,mild,mild\ns3,severe,severe,severe\ns4,clear,mild,clear\n")
    report = run_json(str(path), "--scale", "nominal")
    assert set(report["coefficients"]["fleiss_kappa"]["categories"]) == {"clear", "mild", "severe"}


def test_runs_as_module_in_a_subprocess() -> None:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    done = subprocess.run(
        [sys.executable, "-m", "protolint", "agreement", str(SHROUT_FLEISS), "--format", "json"],
        capture_output=True, text=True, env=env, cwd=ROOT,
    )
    assert done.returncode == 0, done.stderr
    assert round(json.loads(done.stdout)["coefficients"]["ICC(3,k)"]["value"], 2) == 0.91
    bad = subprocess.run(
        [sys.executable, "-m", "protolint", "agreement", str(ROOT / "pyproject.toml")],
        capture_output=True, text=True, env=env, cwd=ROOT,
    )
    assert bad.returncode == 2 and "Traceback" not in bad.stderr


# --- issue: statistics output a statistician accepts ---------------------------------------

def _has_varying_raters_fleiss() -> bool:
    import numpy as np

    from protolint import stats

    data = np.array([[1, 1, np.nan], [1, 2, 2], [2, 2, 2], [1, 1, 1]], dtype=float)
    return hasattr(stats.fleiss_kappa(data), "n_ratings")


@pytest.mark.skipif(not _has_varying_raters_fleiss(), reason="statistics core without Fleiss' kappa for varying raters")
def test_fleiss_with_missing_ratings_uses_the_varying_raters_form() -> None:
    import pandas as pd
    from irrCAC.raw import CAC

    report = run_json(str(KRIPPENDORFF), "--scale", "nominal")
    fleiss = report["coefficients"]["fleiss_kappa"]
    # irrCAC 0.4.4, CAC(data).fleiss(): Gwet's generalisation of Fleiss (1971) to a varying number
    # of raters per subject, on the same data (7 of 48 cells empty).
    expected = CAC(pd.read_csv(KRIPPENDORFF, index_col=0)).fleiss()["est"]["coefficient_value"]
    assert fleiss["value"] == pytest.approx(expected, abs=1e-5)
    assert expected == pytest.approx(0.76117, abs=1e-5)
    # Gwet's generalisation uses every rated subject (12, with 41 ratings) for the category
    # proportions, as his AC1 does; Krippendorff's alpha pairs only the 11 units with two or more.
    ac1 = report["coefficients"]["gwet_ac1"]
    assert (fleiss["subjects_used"], fleiss["ratings_used"]) == (ac1["subjects_used"], ac1["ratings_used"]) == (12, 41)
    alpha = report["coefficients"]["krippendorff_alpha"]
    assert (alpha["subjects_used"], alpha["ratings_used"]) == (11, 40)
    assert not any("Fleiss" in note and "dropped" in note for note in report["notes"])


def test_fleiss_reports_subjects_and_ratings_used_either_way() -> None:
    fleiss = run_json(str(KRIPPENDORFF), "--scale", "nominal")["coefficients"]["fleiss_kappa"]
    assert fleiss["subjects_used"] * 2 <= fleiss["ratings_used"] <= 48 - 7


def test_declared_categories_reach_weighted_kappa_and_gwet(tmp_path: Path) -> None:
    import numpy as np
    import pandas as pd
    from irrCAC.raw import CAC
    from sklearn.metrics import cohen_kappa_score

    rows = [line.split(",") for line in SKIN.read_text().splitlines()[1:]]
    pairs = np.array([[float(a), float(b)] for _, a, b in rows])
    observed = sorted(set(pairs.ravel().tolist()))
    declared = list(range(int(min(observed)), int(max(observed)) + 2))  # one category above any rating
    spec = f"{declared[0]}-{declared[-1]}"
    report = run_json(str(SKIN), "--scale", "ordinal", "--categories", spec)
    coefficients = report["coefficients"]
    assert report["categories"]["unused"] == [str(declared[-1])]
    assert report["categories"]["declared"] == [str(c) for c in declared]
    # scikit-learn's weighted kappa over the declared labels (index weights = value weights for
    # equally spaced categories).
    for key, weights in (("cohen_kappa_linear", "linear"), ("cohen_kappa_quadratic", "quadratic")):
        expected = cohen_kappa_score(pairs[:, 0], pairs[:, 1], labels=[float(c) for c in declared], weights=weights)
        assert coefficients[key]["value"] == pytest.approx(expected, abs=1e-9)
    # Gwet's AC1 and AC2 with the category set given to irrCAC 0.4.4: an unused category changes
    # chance agreement, so the values differ from those on the observed categories.
    frame = pd.DataFrame(pairs)
    ac1 = CAC(frame, categories=[float(c) for c in declared]).gwet()["est"]["coefficient_value"]
    ac2 = CAC(frame, weights="quadratic", categories=[float(c) for c in declared]).gwet()["est"]["coefficient_value"]
    assert coefficients["gwet_ac1"]["value"] == pytest.approx(ac1, abs=1e-5)
    assert coefficients["gwet_ac2"]["value"] == pytest.approx(ac2, abs=1e-5)
    plain = run_json(str(SKIN), "--scale", "ordinal")["coefficients"]
    assert plain["gwet_ac1"]["value"] != pytest.approx(coefficients["gwet_ac1"]["value"], abs=1e-6)
    code, out, _ = run(str(SKIN), "--scale", "ordinal", "--categories", spec)
    assert code == 0 and f"Unused: {declared[-1]}." in out


def test_categories_from_the_plan_scale() -> None:
    plan = ROOT / "demo_protocol" / "plan.yaml"
    photos = ROOT / "demo_protocol" / "data" / "photo_grades_phg5.csv"
    report = run_json(str(photos), "--scale", "ordinal", "--plan", str(plan), "--instrument", "PHG-5")
    # The demo plan's PHG-5 scale: ordinal, min 0, max 4, 5 levels.
    assert report["categories"]["declared"] == ["0", "1", "2", "3", "4"]
    assert "PHG-5" in report["categories"]["source"]
    code, _, err = run(str(photos), "--scale", "ordinal", "--plan", str(plan), "--instrument", "NOPE")
    assert code == 2 and "no instrument 'NOPE'" in err and err.count("\n") == 1


def test_a_rating_outside_the_declared_categories_is_refused() -> None:
    code, out, err = run(str(SKIN), "--scale", "ordinal", "--categories", "0,1")
    assert code == 2 and out == "" and "not among the declared categories" in err and err.count("\n") == 1


def test_a_contingency_table_is_refused_or_read_with_table(tmp_path: Path) -> None:
    import numpy as np
    from sklearn.metrics import cohen_kappa_score

    path = tmp_path / "crosstab.csv"
    counts = [[20, 5, 1], [4, 15, 3], [0, 2, 10]]
    path.write_text("rater1,0,1,2\n" + "".join(f"{i},{','.join(map(str, row))}\n" for i, row in enumerate(counts)))
    code, out, err = run(str(path), "--scale", "ordinal")
    assert code == 2 and out == "" and "looks like a contingency table" in err and "--table" in err
    report = run_json(str(path), "--scale", "ordinal", "--table")
    assert report["read_as_contingency_table"] is True and report["subjects"] == sum(map(sum, counts))
    pairs = np.array([(i, j) for i, row in enumerate(counts) for j, n in enumerate(row) for _ in range(n)])
    # scikit-learn on the 60 rating pairs the table counts.
    assert report["coefficients"]["cohen_kappa"]["value"] == pytest.approx(cohen_kappa_score(pairs[:, 0], pairs[:, 1]), abs=1e-9)
    assert report["coefficients"]["cohen_kappa_quadratic"]["value"] == pytest.approx(
        cohen_kappa_score(pairs[:, 0], pairs[:, 1], weights="quadratic"), abs=1e-9)


def test_a_constant_rater_is_computed_where_defined_with_a_warning(tmp_path: Path) -> None:
    path = tmp_path / "constant.csv"
    path.write_text("subject,a,b\n1,4,3\n2,4,5\n3,4,1\n4,4,4\n5,4,2\n")
    report = run_json(str(path), "--scale", "nominal")
    # One rater who gives one category throughout agrees no better than chance: Cohen's kappa 0
    # (po = pe; Cohen 1960's definition, common practice).
    assert report["coefficients"]["cohen_kappa"]["value"] == pytest.approx(0.0, abs=1e-12)
    assert any("'a' gives 4 to every subject" in warning for warning in report["warnings"])


def test_two_subjects_give_a_warning_and_no_interval(tmp_path: Path) -> None:
    path = tmp_path / "two.csv"
    path.write_text("subject,a,b\n1,1,1\n2,2,2\n")
    report = run_json(str(path), "--scale", "nominal")
    kappa = report["coefficients"]["cohen_kappa"]
    assert kappa["value"] == pytest.approx(1.0)
    assert kappa["ci"] is None and kappa["ci_method"] is None and "standard error is 0" in kappa["no_interval_reason"]
    assert "estimate alone" in kappa["interpretation"]
    assert any("rest on 2 subjects" in warning for warning in report["warnings"])


def test_interpretation_judges_the_interval_under_one_named_scheme() -> None:
    report = run_json(str(SHROUT_FLEISS))
    assert report["interpretation_scheme"]["name"] == "Koo & Li 2016"
    assert report["bands"] == {"icc": "Koo & Li 2016", "kappa_type": "Koo & Li 2016"}
    for key, entry in report["coefficients"].items():
        low, high = entry["ci"]
        assert entry["interpretation"] in (_koo_li(low), f"{_koo_li(low)} to {_koo_li(high)}"), key
    # ICC(3,k) = 0.909, 95 % CI [0.676, 0.986]: "moderate to excellent", not "excellent".
    assert report["coefficients"]["ICC(3,k)"]["interpretation"] == "moderate to excellent"
    nominal = run_json(str(FLEISS_1971), "--scale", "nominal")
    assert nominal["interpretation_scheme"]["name"] == "Landis & Koch 1977"


def _koo_li(x: float) -> str:
    # Koo & Li (2016), J Chiropr Med 15:155-163: below .50 poor, .50-.75 moderate, .75-.90 good, above .90 excellent.
    return "poor" if x < 0.5 else "moderate" if x < 0.75 else "good" if x < 0.9 else "excellent"


def test_text_names_coefficients_and_interval_methods_in_words() -> None:
    code, out, _ = run(str(FLEISS_1971), "--scale", "nominal")
    assert code == 0
    for key in ("fleiss_kappa", "cohen_kappa", "gwet_ac1", "krippendorff_alpha"):
        assert key not in out
    assert "Percentile bootstrap over subjects, 1000 replicates." in out
    assert "Student t interval with Gwet's (2014) variance." in out
    assert "Cohen's kappa: Cohen's kappa needs exactly 2 raters and the file has 6; see Fleiss' kappa." in out
    # Every line of prose ends its sentence (no clause cut off at a line end).
    code, out, _ = run(str(FLEISS_1971), "--scale", "ordinal")
    assert "rerun with --scale interval if the scores are equally spaced." in " ".join(out.split())


def test_bootstrap_option_sets_the_replicates_and_zero_gives_no_interval() -> None:
    alpha = run_json(str(FLEISS_1971), "--scale", "nominal", "--bootstrap", "200")["coefficients"]["krippendorff_alpha"]
    assert alpha["ci_method"] == "percentile bootstrap over subjects, 200 replicates"
    none = run_json(str(FLEISS_1971), "--scale", "nominal", "--bootstrap", "0")
    assert none["coefficients"]["krippendorff_alpha"]["ci"] is None
    assert none["coefficients"]["krippendorff_alpha"]["no_interval_reason"] == "no interval: --bootstrap 0"
    assert none["bootstrap_replicates"] == 0
    code, _, err = run(str(FLEISS_1971), "--bootstrap", "-1")
    assert code == 2 and "--bootstrap must be 0" in err
    _, help_text, _ = run("--help")
    assert "--bootstrap N" in help_text and "[default: 1000]" in help_text


def test_declared_text_categories_on_nominal_labels(tmp_path: Path) -> None:
    import pandas as pd
    from irrCAC.raw import CAC

    path = tmp_path / "labels.csv"
    rows = [("clear", "clear", "mild"), ("mild", "mild", "mild"), ("severe", "severe", "severe"), ("clear", "mild", "clear"),
            ("mild", "severe", "mild"), ("clear", "clear", "clear")]
    path.write_text("subject,r1,r2,r3\n" + "".join(f"s{i},{','.join(r)}\n" for i, r in enumerate(rows)))
    report = run_json(str(path), "--scale", "nominal", "--categories", "clear,mild,moderate,severe")
    assert report["categories"]["unused"] == ["moderate"]
    assert set(report["coefficients"]["fleiss_kappa"]["categories"]) == {"clear", "mild", "moderate", "severe"}
    # irrCAC 0.4.4's AC1 with the same four categories (one never used).
    expected = CAC(pd.DataFrame(rows), categories=["clear", "mild", "moderate", "severe"]).gwet()["est"]["coefficient_value"]
    assert report["coefficients"]["gwet_ac1"]["value"] == pytest.approx(expected, abs=1e-5)
