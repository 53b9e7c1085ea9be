"""The benchmark collector (bench/run_all.py) puts every module's rows in one table and keeps
going when a module is missing, has no rows() or fails. No timing is asserted here."""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]


def collector():
    spec = importlib.util.spec_from_file_location("run_all_under_test", REPO / "bench" / "run_all.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_rows_one_failure_and_a_script_without_rows(tmp_path: Path) -> None:
    (tmp_path / "bench_quick.py").write_text(
        "from _measure import Row\n"
        "def rows(quick=False):\n    return [Row('a', '1 s', '<= 2 s', True), Row('b', '3 s', '<= 2 s', quick)]\n")
    (tmp_path / "bench_objects.py").write_text(
        "from _measure import Row\n"
        "def rows():\n    return [Row('c', 'x', 'y', True), Row('d', 'x', 'y', False, why='too few cores')]\n")
    (tmp_path / "bench_broken.py").write_text("def rows():\n    raise RuntimeError('no data')\n")
    (tmp_path / "bench_plain.py").write_text("print('a script of its own')\n")
    run_all = collector()
    paths = sorted(tmp_path.glob("bench_*.py"))
    table, without, reasons = run_all.collect(paths, quick=True)
    assert ("a", "1 s", "<= 2 s", "yes") in table and ("b", "3 s", "<= 2 s", "yes") in table
    assert ("c", "x", "y", "yes") in table and ("d", "x", "y", "NO") in table
    assert ("bench_broken.py: could not measure", "RuntimeError: no data", "-", "NO") in table
    assert without == ["bench_plain.py"]
    assert reasons == [("d", "too few cores")]  # only a missed row that says why
    text = run_all.format_table(table)
    assert text.splitlines()[0].split(" | ")[0].strip() == "measure" and len(text.splitlines()) == len(table) + 2


def test_the_repository_benchmarks_are_collected_in_the_issue_order() -> None:
    names = [path.stem for path in collector().modules()]
    assert names[:4] == ["bench_check", "bench_stats", "bench_design", "bench_drift"]
    sys.modules.pop("run_all_under_test", None)
