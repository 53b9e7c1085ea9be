"""The shared reader: the same ratings in every format give the same coefficients; long data,
the SDTM QS preset, and malformed files of each format with a located one-line error."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from protolint.cli import main

ROOT = Path(__file__).parents[2]
# Shrout & Fleiss (1979) Table 2: 6 targets x 4 judges.
SHROUT_FLEISS = ROOT / "tests" / "data" / "reference" / "A_shrout_fleiss_1979_6x4.csv"

pd = pytest.importorskip("pandas")
openpyxl = pytest.importorskip("openpyxl")
pyreadstat = pytest.importorskip("pyreadstat")


def run(*args: str) -> tuple[int, str, str]:
    result = CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)
    return result.exit_code, result.stdout, result.stderr


def run_json(*args: str) -> dict:
    code, out, err = run(*args, "--format", "json")
    assert code == 0, err
    return json.loads(out)


def wide_frame() -> "pd.DataFrame":
    return pd.read_csv(SHROUT_FLEISS, dtype={0: str})


def long_frame(wide: "pd.DataFrame") -> "pd.DataFrame":
    id_column = wide.columns[0]
    long = wide.melt(id_vars=[id_column], var_name="judge", value_name="score")
    return long.rename(columns={id_column: "target"})


def dataset_json(frame: "pd.DataFrame", version: str = "1.1.0") -> dict:
    columns = [{"itemOID": f"IT.{name}", "name": name, "label": name,
                "dataType": "string" if frame[name].dtype == object else "double"} for name in frame.columns]
    rows = [[None if (isinstance(v, float) and v != v) else v for v in row] for row in frame.astype(object).values.tolist()]
    return {"datasetJSONCreationDateTime": "2026-01-01T00:00:00", "datasetJSONVersion": version,
            "itemGroupOID": "IG.RATINGS", "records": len(rows), "name": "RATINGS", "label": "Invented test ratings",
            "columns": columns, "rows": rows}


def write_all_formats(frame: "pd.DataFrame", folder: Path, stem: str) -> dict[str, Path]:
    """The same table written with each library's own writer."""
    paths = {fmt: folder / f"{stem}.{fmt}" for fmt in ("csv", "tsv", "xlsx", "json", "ndjson", "xpt")}
    frame.to_csv(paths["csv"], index=False)
    frame.to_csv(paths["tsv"], index=False, sep="\t")
    frame.to_excel(paths["xlsx"], index=False, sheet_name="Ratings", engine="openpyxl")
    document = dataset_json(frame)
    paths["json"].write_text(json.dumps(document), encoding="utf-8")
    meta = {k: v for k, v in document.items() if k != "rows"}
    paths["ndjson"].write_text("\n".join([json.dumps(meta), *(json.dumps(r) for r in document["rows"])]) + "\n", encoding="utf-8")
    pyreadstat.write_xport(frame, str(paths["xpt"]), table_name="RATINGS", file_format_version=5)
    return paths


def coefficients(report: dict) -> dict[str, float]:
    return {name: entry["value"] for name, entry in report["coefficients"].items()}


def test_same_wide_data_in_every_format_gives_identical_coefficients(tmp_path: Path) -> None:
    frame = wide_frame()
    # SAS names: letters, digits, underscore, at most 8 characters.
    frame.columns = ["TARGET", *(f"J{i}" for i in range(1, frame.shape[1]))]
    paths = write_all_formats(frame, tmp_path, "wide")
    reference = run_json("agreement", SHROUT_FLEISS)
    for fmt, path in paths.items():
        report = run_json("agreement", path)
        assert coefficients(report) == coefficients(reference), fmt
        assert (report["subjects"], report["raters"]) == (6, 4)
        assert report["input"]["rows_read"] == report["input"]["rows_used"] == 6
    # Shrout & Fleiss (1979) Table 4: ICC(3,1) = 0.71 (2 dp).
    assert round(coefficients(reference)["ICC(3,1)"], 2) == 0.71
    assert run_json("agreement", paths["xlsx"])["input"]["detail"] == "sheet 'Ratings'"


def test_same_long_data_in_every_format_gives_identical_coefficients(tmp_path: Path) -> None:
    long = long_frame(wide_frame())
    long.columns = ["TARGET", "JUDGE", "SCORE"]
    paths = write_all_formats(long, tmp_path, "long")
    reference = coefficients(run_json("agreement", SHROUT_FLEISS))
    for fmt, path in paths.items():
        report = run_json("agreement", path, "--subject", "TARGET", "--rater", "JUDGE", "--score", "SCORE")
        assert coefficients(report) == reference, fmt
        assert report["input"]["layout"] == "long" and report["input"]["rows_used"] == 24
        assert report["input"]["columns"] == {"subject": "TARGET", "rater": "JUDGE", "score": "SCORE"}


def sdtm_qs() -> "pd.DataFrame":
    """An SDTM-QS-shaped table (invented values, for this test only): 4 subjects x 2 visits,
    three items and a derived total per visit, two evaluators, one record not done, one with
    no standard result and a second instrument that a filter must drop."""
    rows = []
    seq = 0
    scores = {  # (subject, visit) -> evaluator -> item scores
        ("S1", 1): {"RATER 1": [1, 2, 3], "RATER 2": [1, 2, 2]},
        ("S1", 2): {"RATER 1": [0, 1, 1], "RATER 2": [0, 1, 2]},
        ("S2", 1): {"RATER 1": [3, 3, 4], "RATER 2": [3, 4, 4]},
        ("S2", 2): {"RATER 1": [2, 2, 3], "RATER 2": [2, 3, 3]},
        ("S3", 1): {"RATER 1": [4, 4, 4], "RATER 2": [4, 3, 4]},
        ("S3", 2): {"RATER 1": [1, 0, 2], "RATER 2": [1, 1, 2]},
        ("S4", 1): {"RATER 1": [2, 1, 2], "RATER 2": [2, 1, 1]},
        ("S4", 2): {"RATER 1": [3, 2, 2], "RATER 2": [3, 2, 3]},
    }
    for (subject, visit), by_rater in scores.items():
        for rater, items in by_rater.items():
            for code, value in zip(("ITM1", "ITM2", "ITM3", "TOTAL"), [*items, sum(items)]):
                seq += 1
                rows.append({"STUDYID": "INV-01", "DOMAIN": "QS", "USUBJID": f"INV-01-{subject}", "QSSEQ": float(seq),
                             "QSTESTCD": code, "QSCAT": "INVENTED-8", "QSSTRESN": float(value), "QSSTAT": "",
                             "QSEVAL": "INVESTIGATOR", "QSEVALID": rater, "VISITNUM": float(visit),
                             "QSDTC": f"2026-0{visit}-15", "QSDRVFL": "Y" if code == "TOTAL" else ""})
    extra = dict(rows[0], QSSEQ=float(seq + 1), USUBJID="INV-01-S5", QSTESTCD="TOTAL", QSSTRESN=float("nan"), QSSTAT="NOT DONE")
    missing = dict(rows[0], QSSEQ=float(seq + 2), USUBJID="INV-01-S5", QSTESTCD="TOTAL", QSEVALID="RATER 2", QSSTRESN=float("nan"))
    other = dict(rows[0], QSSEQ=float(seq + 3), QSCAT="OTHER-SCALE", QSTESTCD="TOTAL")
    return pd.DataFrame([*rows, extra, missing, other])


def test_sdtm_qs_totals_not_done_and_two_evaluators(tmp_path: Path) -> None:
    paths = write_all_formats(sdtm_qs(), tmp_path, "qs")
    expected_total = None
    for fmt in ("xpt", "json", "csv"):
        report = run_json("agreement", paths[fmt], "--columns", "sdtm-qs", "--where", "QSCAT=INVENTED-8",
                          "--where", "QSTESTCD=TOTAL")
        assert report["rater_names"] == ["RATER 1", "RATER 2"]
        assert report["subjects"] == 8  # 4 subjects x 2 visits
        skipped = report["input"]["rows_skipped"]
        assert skipped == {"not selected by --where QSCAT=INVENTED-8 QSTESTCD=TOTAL": 49,
                           "not done (QSSTAT=NOT DONE)": 1, "missing score (QSSTRESN)": 1}
        assert report["input"]["rows_read"] == 67 and report["input"]["rows_used"] == 16
        assert report["input"]["columns"]["rater"] == "QSEVALID"
        assert report["input"]["columns"]["occasion"] == "VISITNUM"
        if expected_total is None:
            expected_total = coefficients(report)
        assert coefficients(report) == expected_total, fmt
    # The totals pivoted by hand give the same ICCs through the wide layout.
    frame = sdtm_qs()
    totals = frame[(frame.QSTESTCD == "TOTAL") & (frame.QSCAT == "INVENTED-8") & frame.QSSTRESN.notna()]
    wide = totals.pivot(index=["USUBJID", "VISITNUM"], columns="QSEVALID", values="QSSTRESN").reset_index()
    wide.insert(0, "unit", wide.USUBJID + "/" + wide.VISITNUM.astype(int).astype(str))
    wide = wide.drop(columns=["USUBJID", "VISITNUM"])
    wide.to_csv(tmp_path / "by_hand.csv", index=False)
    assert coefficients(run_json("agreement", tmp_path / "by_hand.csv")) == expected_total

    # The items (not the derived total) for internal consistency, one row per subject x visit x evaluator.
    items = run_json("consistency", paths["xpt"], "--columns", "sdtm-qs", "--where", "QSCAT=INVENTED-8",
                     "--where", "QSTESTCD!=TOTAL")
    assert (items["respondents"], items["items"]) == (16, 3)
    # QSEVAL holds the evaluator's role, the same for both raters: read as the rater column,
    # the two scores of one visit collide, and the reader says so instead of keeping one.
    code, _, err = run("agreement", paths["xpt"], "--columns", "sdtm-qs", "--rater", "QSEVAL",
                       "--where", "QSCAT=INVENTED-8", "--where", "QSTESTCD=TOTAL")
    assert code == 2 and f"{paths['xpt']}:row 8: a second score for INV-01-S1 / TOTAL / 1 by rater 'INVESTIGATOR'" in err


def test_sdtm_qs_refuses_two_instruments_together(tmp_path: Path) -> None:
    path = write_all_formats(sdtm_qs(), tmp_path, "qs")["json"]
    code, _, err = run("agreement", path, "--columns", "sdtm-qs", "--where", "QSTESTCD=TOTAL")
    assert code == 2 and "rows from 2 instruments (QSCAT: INVENTED-8, OTHER-SCALE)" in err
    assert err.startswith(f"{path}:columns: ")


def test_long_data_second_score_for_the_same_unit_is_located(tmp_path: Path) -> None:
    path = tmp_path / "long.csv"
    path.write_text("case,rater,score\nC1,R1,3\nC1,R2,4\nC2,R1,2\nC2,R2,2\nC1,R1,5\n", encoding="utf-8")
    code, _, err = run("agreement", path, "--case", "case", "--rater", "rater", "--score", "score")
    assert code == 2
    assert err.strip() == (f"{path}:6:0: a second score for C1 by rater 'R1' (first at {path}:2:0); "
                           "each rater scores each unit once")
    code, _, err = run("agreement", path, "--case", "case", "--rater", "judge", "--score", "score")
    assert code == 2 and f"{path}:1:0: no column 'judge' (named by --rater)" in err


def workbook(tmp_path: Path, name: str, fill) -> Path:
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Scores"
    for row in (["case", "R1", "R2", "R3"], ["C1", 1, 2, 2], ["C2", 3, 3, 4], ["C3", 5, 4, 5]):
        sheet.append(row)
    fill(sheet)
    path = tmp_path / name
    book.save(path)
    return path


def _formula(sheet) -> None:
    sheet["C3"] = "=B3+1"


def _merged(sheet) -> None:
    sheet.merge_cells("C1:D1")


def _text(sheet) -> None:
    sheet["D4"] = "high"


MALFORMED_WORKBOOKS = {
    "formula.xlsx": (_formula, ":Scores!C3: formula =B3+1 has no stored value; formulas are not evaluated"),
    "merged.xlsx": (_merged, ":Scores!C1:D1: merged cells"),
    "text.xlsx": (_text, ":Scores!D4: column 'R3': 'high' is not a number"),
}


@pytest.mark.parametrize("name", sorted(MALFORMED_WORKBOOKS))
def test_malformed_workbook_is_refused_at_its_cell(tmp_path: Path, name: str) -> None:
    fill, expected = MALFORMED_WORKBOOKS[name]
    path = workbook(tmp_path, name, fill)
    code, _, err = run("agreement", path)
    assert code == 2
    assert err.startswith(str(path) + ":") and expected in err
    assert len(err.strip().splitlines()) == 1


def test_workbook_sheet_option(tmp_path: Path) -> None:
    path = workbook(tmp_path, "ok.xlsx", lambda sheet: None)
    assert run_json("agreement", path, "--sheet", "Scores")["subjects"] == 3
    code, _, err = run("agreement", path, "--sheet", "Other")
    assert code == 2 and "no sheet 'Other' in the workbook; its sheets are 'Scores'" in err


def test_formula_with_stored_value_is_read_as_stored(tmp_path: Path) -> None:
    # A workbook saved by a spreadsheet program keeps each formula's last value beside it; the
    # test writes that value into the XML as such a program does.
    import zipfile

    path = workbook(tmp_path, "stored.xlsx", _formula)
    patched = tmp_path / "stored2.xlsx"
    with zipfile.ZipFile(path) as source, zipfile.ZipFile(patched, "w") as target:
        for item in source.infolist():
            data = source.read(item.filename)
            if item.filename == "xl/worksheets/sheet1.xml":
                data = data.replace(b"<f>B3+1</f><v></v>", b"<f>B3+1</f><v>4</v>").replace(b"<f>B3+1</f><v />", b"<f>B3+1</f><v>4</v>")
                assert b"<v>4</v>" in data, data
            target.writestr(item, data)
    report = run_json("agreement", patched)
    assert report["input"]["notes"] == ["1 formula cell read as the values the workbook stored (formulas are not evaluated)"]


def test_dataset_json_column_count_mismatch_is_located(tmp_path: Path) -> None:
    document = dataset_json(wide_frame().set_axis(["TARGET", "J1", "J2", "J3", "J4"], axis=1))
    document["rows"][2] = document["rows"][2][:-1]
    path = tmp_path / "bad.json"
    path.write_text(json.dumps(document), encoding="utf-8")
    code, _, err = run("agreement", path)
    assert code == 2 and err.strip() == f"{path}:row 3: the row has 4 values, the columns metadata lists 5"
    meta = {k: v for k, v in document.items() if k != "rows"}
    nd = tmp_path / "bad.ndjson"
    nd.write_text("\n".join([json.dumps(meta), *(json.dumps(r) for r in document["rows"])]) + "\n", encoding="utf-8")
    code, _, err = run("agreement", nd)
    assert code == 2 and err.strip() == f"{nd}:4:0: the row has 4 values, the columns metadata lists 5"


def test_dataset_json_truncated_and_old_version(tmp_path: Path) -> None:
    document = dataset_json(wide_frame().set_axis(["TARGET", "J1", "J2", "J3", "J4"], axis=1))
    text = json.dumps(document)
    cut = tmp_path / "cut.json"
    cut.write_text(text[: len(text) // 2], encoding="utf-8")
    code, _, err = run("agreement", cut)
    assert code == 2 and err.startswith(f"{cut}:1:") and "not valid JSON" in err
    short = dict(document, rows=document["rows"][:4])
    path = tmp_path / "short.json"
    path.write_text(json.dumps(short), encoding="utf-8")
    code, _, err = run("agreement", path)
    assert code == 2 and "'records' says 6 rows but the file holds 4" in err
    del short["records"]
    path.write_text(json.dumps(short), encoding="utf-8")
    code, _, err = run("agreement", path)
    assert code == 2 and err.strip() == f"{path}:0:0: 'records' is None; Dataset-JSON 1.1 requires the number of rows there"
    old = {"creationDateTime": "2023-01-01T00:00:00", "datasetJSONVersion": "1.0.0",
           "clinicalData": {"itemGroupData": {"IG.X": {"records": 0, "name": "X", "items": [], "itemData": []}}}}
    path = tmp_path / "old.json"
    path.write_text(json.dumps(old), encoding="utf-8")
    code, _, err = run("agreement", path)
    assert code == 2 and err.strip().startswith(f"{path}:0:0: Dataset-JSON version 1.0.0 is not read; export the dataset as Dataset-JSON 1.1")


def test_truncated_and_foreign_xpt_are_refused(tmp_path: Path) -> None:
    frame = wide_frame().set_axis(["TARGET", "J1", "J2", "J3", "J4"], axis=1)
    path = tmp_path / "ok.xpt"
    pyreadstat.write_xport(frame, str(path), table_name="RATINGS", file_format_version=5)
    data = path.read_bytes()
    cut = tmp_path / "cut.xpt"
    cut.write_bytes(data[:-37])
    code, _, err = run("agreement", cut)
    assert code == 2 and err.strip() == (f"{cut}:0:0: truncated SAS transport file: {len(data) - 37} bytes is not a whole "
                                         "number of 80-byte records")
    foreign = tmp_path / "foreign.xpt"
    foreign.write_bytes(b"subject,a,b\n1,2,3\n")
    code, _, err = run("agreement", foreign)
    assert code == 2 and "not a SAS transport (.xpt) file" in err


def test_where_needs_long_data_and_a_known_column(tmp_path: Path) -> None:
    code, _, err = run("agreement", SHROUT_FLEISS, "--where", "a=1")
    assert code == 2 and "--where applies to long data" in err


def test_errors_are_one_line_in_a_real_process(tmp_path: Path) -> None:
    path = workbook(tmp_path, "merged.xlsx", _merged)
    done = subprocess.run([sys.executable, "-m", "protolint", "agreement", str(path)], capture_output=True, text=True,
                          cwd=ROOT, timeout=120)
    assert done.returncode == 2 and "Traceback" not in done.stderr
    assert len(done.stderr.strip().splitlines()) == 1


def test_text_report_shows_what_was_read_and_skipped(tmp_path: Path) -> None:
    path = write_all_formats(sdtm_qs(), tmp_path, "qs")["xpt"]
    code, out, err = run("agreement", path, "--columns", "sdtm-qs", "--where", "QSCAT=INVENTED-8", "--where", "QSTESTCD=TOTAL")
    assert code == 0, err
    summary = " ".join(line.strip() for line in out.split("\n\n")[0].splitlines()[2:])
    assert ("Input: xpt (SAS transport v5, dataset RATINGS), long layout: 67 rows read, 16 used; skipped: 49 not selected by "
            "--where QSCAT=INVENTED-8 QSTESTCD=TOTAL, 1 not done (QSSTAT=NOT DONE), 1 missing score (QSSTRESN)") in summary
    assert max(len(line) for line in out.split("\n\n")[0].splitlines()[2:]) <= 100
    assert "Columns: subject=USUBJID, item=QSTESTCD, occasion=VISITNUM, rater=QSEVALID, score=QSSTRESN" in summary


def test_input_format_overrides_the_extension(tmp_path: Path) -> None:
    frame = wide_frame().set_axis(["TARGET", "J1", "J2", "J3", "J4"], axis=1)
    path = tmp_path / "export.dat"
    path.write_text(json.dumps(dataset_json(frame)), encoding="utf-8")
    report = run_json("agreement", path, "--input-format", "dataset-json")
    assert report["input"]["format"] == "dataset-json" and report["subjects"] == 6
    code, _, err = run("agreement", path, "--sheet", "Scores", "--input-format", "dataset-json")
    assert code == 2 and "--sheet applies to .xlsx workbooks only" in err


def test_read_records_gives_rows_of_text_with_places(tmp_path: Path) -> None:
    from protolint.data import ReadOptions, read_records

    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Monitoring"
    import datetime as dt

    for row in (["Rater", "Case", "Score", "Expert", "Rated on"], ["R1", "V01", 12, 11, dt.datetime(2026, 3, 2)],
                ["R2", "V01", None, 11, dt.datetime(2026, 3, 3)], ["R1", "V02", 20, 21, dt.datetime(2026, 3, 9)]):
        sheet.append(row)
    path = tmp_path / "monitoring.xlsx"
    book.save(path)
    options = ReadOptions(roles=(("reference", "Expert"), ("date", "Rated on")))
    records = read_records(str(path), options, roles=("rater", "case", "score", "reference", "date"),
                           required=("rater", "score", "date"))
    assert [r.values for r in records.rows] == [
        {"rater": "R1", "case": "V01", "score": "12", "reference": "11", "date": "2026-03-02"},
        {"rater": "R1", "case": "V02", "score": "20", "reference": "21", "date": "2026-03-09"},
    ]
    assert str(records.rows[1].where) == f"{path}:Monitoring!4:4"
    assert str(records.rows[1].cells["date"]) == f"{path}:Monitoring!E4"
    assert records.provenance.skipped == (("missing score (Score)", 1),)


def test_reader_options_refuses_an_unknown_role() -> None:
    from protolint.data.options import reader_options

    with pytest.raises(ValueError, match="unknown role"):
        reader_options(roles=("subject", "judge"))


def test_constant_column_refused_unless_allowed(tmp_path: Path) -> None:
    from protolint.data import read_rating_table

    path = tmp_path / "constant.tsv"
    path.write_text("subject\ta\tb\n1\t4\t3\n2\t4\t5\n3\t4\t1\n", encoding="utf-8")
    with pytest.raises(Exception, match=r"constant.tsv:1:0: rater column 'a' has the same value \(4\) in every row"):
        read_rating_table(str(path))
    table = read_rating_table(str(path), allow_constant=True)
    assert table.values[:, 0].tolist() == [4.0, 4.0, 4.0]


def test_read_role_rows_renames_columns_to_roles(tmp_path: Path) -> None:
    from protolint.data import ReadOptions, read_role_rows

    frame = long_frame(wide_frame())
    frame.columns = ["TARGET", "JUDGE", "SCORE"]
    path = write_all_formats(frame, tmp_path, "pilot")["xpt"]
    options = ReadOptions(roles=(("subject", "TARGET"), ("rater", "JUDGE"), ("score", "SCORE")))
    rows, provenance = read_role_rows(str(path), options, roles=("subject", "rater", "occasion", "score"))
    assert rows[0] == (0, ["subject", "rater", "score"])
    assert rows[1] == (1, ["1", "judge1", "9"])  # Shrout & Fleiss (1979) Table 2, target 1, judge 1
    assert len(rows) == 25 and provenance.rows_used == 24


def test_read_role_rows_keeps_named_columns(tmp_path: Path) -> None:
    from protolint.data import ReadOptions, read_role_rows

    path = tmp_path / "monitoring.csv"
    path.write_text("Rated,Rater,Case,Score,Expert,Kind\n2026-03-02,R1,V01,12,11,monitoring\n2026-03-03,R2,V01,,11,monitoring\n",
                    encoding="utf-8")
    rows, provenance = read_role_rows(str(path), ReadOptions(roles=(("date", "Rated"), ("reference", "Expert"))),
                                      roles=("date", "rater", "case", "score", "reference"), keep=("kind", "instrument"))
    assert rows == [(1, ["date", "rater", "case", "score", "reference", "kind"]),
                    (2, ["2026-03-02", "R1", "V01", "12", "11", "monitoring"])]
    assert provenance.skipped == (("missing score (Score)", 1),)


def _dsj(**changes) -> str:
    document = dataset_json(wide_frame().set_axis(["TARGET", "J1", "J2", "J3", "J4"], axis=1))
    document.update(changes)
    return json.dumps(document)


HOSTILE = {
    "list.json": "[1, 2, 3]",
    "columns.json": _dsj(columns="TARGET"),
    "nameless.json": _dsj(columns=[{"itemOID": "IT.X"}]),
    "object_cell.json": _dsj(rows=[[{"a": 1}, 1, 2, 3, 4]] * 6),
    "rows_object.json": _dsj(rows={"a": 1}),
    "version.json": _dsj(datasetJSONVersion="2.0"),
    "deep.json": "[" * 100_000 + "]" * 100_000,
    "line.ndjson": _dsj().replace("\n", " ").join(["", "\n{\"not\": \"an array\"}\n"]),
    "empty.ndjson": "\n\n",
    "zip.xlsx": b"PK\x03\x04 not really a workbook",
    "text.xlsx": "subject,a,b\n1,2,3\n",
    "empty.xpt": b"",
    "header_only.xpt": b"HEADER RECORD*******LIBRARY HEADER RECORD!!!!!!!000000000000000000000000000000  ",
    "latin1.csv": "subject,a,b\n1,2,3\n2,\xe9,4\n".encode("latin-1"),
    "old.xls": b"\xd0\xcf\x11\xe0",
}


@pytest.mark.parametrize("name", sorted(HOSTILE))
def test_hostile_files_give_one_line_and_exit_2(tmp_path: Path, name: str) -> None:
    content = HOSTILE[name]
    path = tmp_path / name
    path.write_bytes(content if isinstance(content, bytes) else content.encode("utf-8"))
    code, _, err = run("agreement", path)
    assert code == 2, err
    assert err.startswith(str(path)) and len(err.strip().splitlines()) == 1, err


def test_demo_qs_export_gives_the_csv_result(tmp_path: Path) -> None:
    target = tmp_path / "qs.ndjson"
    done = subprocess.run([sys.executable, str(ROOT / "demo_protocol" / "export_qs.py"), str(target)],
                          capture_output=True, text=True, timeout=60)
    assert done.returncode == 0, done.stderr
    from_csv = run_json("consistency", ROOT / "demo_protocol" / "data" / "items_hlsc8.csv")
    from_qs = run_json("consistency", target, "--columns", "sdtm-qs", "--where", "QSTESTCD!=HLSC8TOT")
    assert from_qs["cronbach_alpha"] == from_csv["cronbach_alpha"]
    assert from_qs["respondents"] == from_csv["respondents"] == 120
    assert from_qs["input"]["rows_skipped"] == {"not selected by --where QSTESTCD!=HLSC8TOT": 120,
                                                "not done (QSSTAT=NOT DONE)": 3}


def test_design_validation_takes_read_role_rows_from_a_workbook(tmp_path: Path) -> None:
    """The one-function plug-in DEVELOPERS.md describes: the design command's own validation
    of CSV rows accepts the shared reader's rows, here from an .xlsx with other column names."""
    from protolint.analysis import design
    from protolint.data import ReadOptions, read_role_rows

    csv_path = ROOT / "demo_protocol" / "pilot" / "pilot_hlsc8_simulated.csv"
    if not csv_path.exists():
        pytest.skip("the design command's demo pilot is not in this checkout")
    from_csv = design.pilot_from_rows(str(csv_path), design.read_rows(str(csv_path)))
    frame = pd.read_csv(csv_path, dtype=str, comment="#")
    frame = frame.rename(columns={"subject": "Participant", "rater": "Assessor", "occasion": "Session", "score": "Total"})
    xlsx = tmp_path / "pilot.xlsx"
    frame.to_excel(xlsx, index=False, engine="openpyxl")
    options = ReadOptions(roles=(("subject", "Participant"), ("rater", "Assessor"), ("occasion", "Session"), ("score", "Total")))
    rows, provenance = read_role_rows(str(xlsx), options, roles=("subject", "rater", "occasion", "score"), skip_missing_score=False)
    from_xlsx = design.pilot_from_rows(str(xlsx), rows)
    assert (from_xlsx.subjects, from_xlsx.raters, from_xlsx.occasions) == (from_csv.subjects, from_csv.raters, from_csv.occasions)
    assert from_xlsx.score.tolist() == from_csv.score.tolist() and from_xlsx.missing_scores == from_csv.missing_scores
    assert provenance.rows_used == provenance.rows_read == from_csv.n_ratings + from_csv.missing_scores


def test_text_starting_with_equals_is_text_not_a_formula(tmp_path: Path) -> None:
    def fill(sheet) -> None:
        sheet["A5"] = "C4"
        sheet["B5"], sheet["C5"], sheet["D5"] = 2, 2, 3
        cell = sheet["A5"]
        cell.value = "=x"
        cell.data_type = "s"  # stored as text, as a spreadsheet program does for a quoted '=x

    path = workbook(tmp_path, "text_equals.xlsx", fill)
    report = run_json("agreement", path)
    assert report["subjects"] == 4 and report["input"]["notes"] == []
