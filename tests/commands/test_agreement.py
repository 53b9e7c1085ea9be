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
    assert any("dropped" in note for note in report["notes"])


def test_confidence_option_changes_intervals() -> None:
    wide = run_json(str(SHROUT_FLEISS))["coefficients"]["ICC(3,1)"]["ci"]
    narrow = run_json(str(SHROUT_FLEISS), "--confidence", "0.8")["coefficients"]["ICC(3,1)"]["ci"]
    assert narrow[0] > wide[0] and narrow[1] < wide[1]


def test_text_report_names_bands_and_caution() -> None:
    code, out, err = run(str(SHROUT_FLEISS))
    assert code == 0 and err == ""
    assert "ICC(2,1) = ICC(A,1)" in out
    assert "Koo & Li 2016" in out and "Landis & Koch 1977" in out
    assert "poor (Koo & Li 2016)" in out
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
    "empty.csv": ("", ":1: the file is empty"),
    "semicolons.csv": ("subject;a;b\n1;2;3\n2;3;4\n", ":1: the header is one field containing semicolons"),
    "ragged.csv": ("subject,a,b\n1,2,3\n2,3\n", ":3: row has 2 field(s), the header has 3"),
    "text.csv": ("subject,a,b\n1,2,3\n2,3,high\n", ":3: column 'b': 'high' is not a number (the scale is interval)"),
    "one_rater.csv": ("subject,a\n1,2\n2,3\n", ":1: found 1 rater column(s)"),
    "one_subject.csv": ("subject,a,b\n1,2,3\n", ":2: found 1 subject row(s); at least 2 are needed"),
    "constant.csv": ("subject,a,b\n1,4,3\n2,4,5\n3,4,1\n", ":1: rater column 'a' has the same value (4) in every row"),
    "duplicate.csv": ("subject,a,b\n1,2,3\n1,3,4\n", ":3: subject '1' appears again (first on line 2)"),
    "infinite.csv": ("subject,a,b\n1,2,inf\n2,3,4\n", ":2: column 'b': 'inf' is not a finite number"),
    "empty_column.csv": ("subject,a,b\n1,2,\n2,3,\n", ":1: rater column 'b' has no values"),
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
    assert code == 2 and "no/such/file.csv: no such file" in err
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
