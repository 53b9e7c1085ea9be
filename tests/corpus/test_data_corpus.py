"""The hostile-data corpus: every malformed or hostile data file, through every command that
reads that kind of file, ends with its expected exit code and one located line that names the
problem: no traceback, no output file left behind, bounded time and memory.

``tests/corpus/data/manifest.yaml`` lists the cases: a committed file under ``files/`` or a
file written at test time by ``binaries.py`` (workbooks and SAS transport files with the
libraries' own writers; endless, sparse and very large inputs). Each case names, per command,
the exit code, the place the message must point at (``line:column``, a workbook cell, a record,
or ``null`` for a message that is not about a place in the file) and a fragment of the message.
Cases marked ``process: true`` run in a child process under an address-space limit and a
timeout; the rest run in-process, where an exception escaping the command fails the test.
"""

from __future__ import annotations

import resource
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest
import yaml
from click.testing import CliRunner

from protolint.cli import main

HERE = Path(__file__).parent / "data"
MANIFEST = yaml.safe_load((HERE / "manifest.yaml").read_text(encoding="utf-8"))
COMMANDS = ("agreement", "consistency", "drift", "design")

# The bound a hostile input must stay under in a child process: address space and seconds.
MEMORY_LIMIT = 1536 * 1024 * 1024
TIME_LIMIT = 120

sys.path.insert(0, str(HERE))
from binaries import GENERATORS  # noqa: E402


def _cases() -> list[Any]:
    params = []
    for case in MANIFEST["cases"]:
        for command, expected in case["expect"].items():
            assert command in COMMANDS, f"{case['id']}: unknown command {command}"
            params.append(pytest.param(case, command, expected, id=f"{case['id']}-{command}"))
    return params


def _input(case: dict[str, Any], folder: Path) -> Path:
    if "file" in case:
        return HERE / "files" / case["file"]
    return GENERATORS[case["generate"]](folder)


def _limit_memory() -> None:
    resource.setrlimit(resource.RLIMIT_AS, (MEMORY_LIMIT, MEMORY_LIMIT))


def _run(args: list[str], in_process: bool) -> tuple[int, str]:
    if in_process:
        result = CliRunner().invoke(main, args)
        if result.exception is not None and not isinstance(result.exception, SystemExit):
            raise AssertionError(f"the command raised {type(result.exception).__name__}: {result.exception}") \
                from result.exception
        return result.exit_code, result.stderr
    process = subprocess.run([sys.executable, "-m", "protolint", *args], capture_output=True, text=True,
                             timeout=TIME_LIMIT, preexec_fn=_limit_memory)
    return process.returncode, process.stderr


def test_the_corpus_is_large_and_covers_every_format() -> None:
    cases = MANIFEST["cases"]
    assert len(cases) >= 50
    names = [case.get("file") or case["generate"] for case in cases]
    assert len(set(names)) == len(names), "a file is listed twice"
    suffixes = {name.rsplit(".", 1)[-1] if "." in name else name.split("_")[0] for name in names}
    assert {"csv", "tsv", "json", "ndjson", "xlsx", "xpt"} <= suffixes
    committed = {path.name for path in (HERE / "files").iterdir()}
    assert committed == {case["file"] for case in cases if "file" in case}, "every committed file has a case"
    assert set(GENERATORS) == {case["generate"] for case in cases if "generate" in case}


@pytest.mark.parametrize("case, command, expected", _cases())
def test_hostile_data_file(tmp_path: Path, case: dict[str, Any], command: str, expected: dict[str, Any]) -> None:
    path = _input(case, tmp_path)
    out = tmp_path / "out"
    out.mkdir()
    code, stderr = _run([command, str(path), "--output", str(out / "report.txt")], not case.get("process", False))
    assert "Traceback" not in stderr
    assert code == expected["exit"], stderr
    lines = stderr.splitlines()
    assert len(lines) == 1, f"expected one line, got: {stderr!r}"
    line = lines[0]
    if expected.get("at") is None:
        assert line.startswith("protolint: "), line
    else:
        assert line.startswith(f"{path}:{expected['at']}: "), line
    assert expected["message"] in line
    assert list(out.iterdir()) == [], "an output file was left behind"
