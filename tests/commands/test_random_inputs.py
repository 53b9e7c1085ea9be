"""Property-based tests (hypothesis) of the analysis commands on random and mutated input:
whatever the data file or the options, ``agreement``, ``consistency``, ``drift``, ``design``
and ``size`` end with exit code 0, 1 or 2, never with an exception, and exit code 2 comes
with exactly one line on stderr.

The files are built from cells that make trouble in practice (empty, quoted, other delimiters,
number look-alikes, control and wide characters, huge and tiny numbers), or are the demo's
own files with random bytes changed. Commands run in-process; few examples each, so ``make
test`` stays fast.
"""

from __future__ import annotations

import os
from pathlib import Path

from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from protolint.cli import main

ROOT = Path(__file__).parents[2]
DEMO = ROOT / "demo_protocol"
SETTINGS = settings(max_examples=int(os.environ.get("PROTOLINT_FUZZ_EXAMPLES", "20")), deadline=None,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])

AWKWARD_CELLS = st.one_of(
    st.integers(-3, 12).map(str),
    st.sampled_from(["", " ", "1.5", "1e305", "-1e-320", "1_00", "\uff13", "nan", "inf", "0x1F", "3,5", '"4"',
                     '"a""b"', "=1+1", "\u202e2", "\x1b[1m", "é", "2026-01-05", "2026-W01-1", "NOT DONE", "9" * 400]),
    st.text(alphabet=st.characters(codec="utf-8", exclude_categories=("Cs",)), max_size=6),
)


@st.composite
def delimited_files(draw: st.DrawFn, header: list[str] | None = None) -> str:
    columns = header or draw(st.lists(st.sampled_from(["subject", "r1", "r2", "r3", "item", "score", ""]),
                                      min_size=1, max_size=5))
    rows = draw(st.lists(st.lists(AWKWARD_CELLS, min_size=max(1, len(columns) - 1), max_size=len(columns) + 1),
                         max_size=12))
    delimiter = draw(st.sampled_from([",", ",", ",", ";", "\t"]))
    newline = draw(st.sampled_from(["\n", "\r\n"]))
    return newline.join(delimiter.join(row) for row in [columns, *rows]) + newline


def _check(args: list[str]) -> None:
    result = CliRunner().invoke(main, args)
    if result.exception is not None and not isinstance(result.exception, SystemExit):
        raise AssertionError(f"{args}: raised {type(result.exception).__name__}: {result.exception}") from result.exception
    assert result.exit_code in (0, 1, 2), (args, result.exit_code, result.stderr)
    assert "Traceback" not in result.stderr
    if result.exit_code == 2:
        assert len(result.stderr.splitlines()) == 1, (args, result.stderr)


def _write(tmp_path: Path, name: str, content: str | bytes) -> Path:
    path = tmp_path / name
    path.write_bytes(content if isinstance(content, bytes) else content.encode("utf-8", "surrogatepass"))
    return path


def _mutated(data: bytes, edits: list[tuple[int, int]]) -> bytes:
    out = bytearray(data)
    for position, value in edits:
        out[position % len(out)] = value
    return bytes(out)


BYTE_EDITS = st.lists(st.tuples(st.integers(0, 10**6), st.integers(0, 255)), min_size=1, max_size=8)


@SETTINGS
@given(delimited_files(), st.sampled_from(["interval", "ordinal", "nominal"]))
def test_agreement_on_random_files(tmp_path: Path, content: str, scale: str) -> None:
    _check(["agreement", str(_write(tmp_path, "ratings.csv", content)), "--scale", scale, "--bootstrap", "0"])


@SETTINGS
@given(BYTE_EDITS, st.sampled_from(["interval", "ordinal"]))
def test_agreement_on_mutated_demo_data(tmp_path: Path, edits: list[tuple[int, int]], scale: str) -> None:
    data = (DEMO / "data" / "certification_hlsc8.csv").read_bytes()
    _check(["agreement", str(_write(tmp_path, "ratings.csv", _mutated(data, edits))), "--scale", scale,
            "--bootstrap", "20"])


@SETTINGS
@given(st.one_of(delimited_files(), BYTE_EDITS.map(lambda e: _mutated((DEMO / "data" / "items_hlsc8.csv").read_bytes(), e))))
def test_consistency_on_random_and_mutated_files(tmp_path: Path, content: str | bytes) -> None:
    _check(["consistency", str(_write(tmp_path, "items.csv", content))])


@SETTINGS
@given(st.one_of(delimited_files(["date", "site", "rater", "case", "score", "reference", "kind"]),
                 BYTE_EDITS.map(lambda e: _mutated((DEMO / "data" / "drift_hlsc8.csv").read_bytes(), e))))
def test_drift_on_random_and_mutated_files(tmp_path: Path, content: str | bytes) -> None:
    _check(["drift", str(_write(tmp_path, "drift.csv", content)), "--fail-on", "never"])


@SETTINGS
@given(st.one_of(delimited_files(["subject", "rater", "occasion", "score"]),
                 BYTE_EDITS.map(lambda e: _mutated((DEMO / "pilot" / "pilot_hlsc8_simulated.csv").read_bytes(), e))))
def test_design_on_random_and_mutated_files(tmp_path: Path, content: str | bytes) -> None:
    _check(["design", str(_write(tmp_path, "pilot.csv", content)), "--effect-size", "0.4", "--cost-participant", "100",
            "--max-raters", "3", "--max-occasions", "2"])


NUMBERS = st.one_of(st.floats(allow_nan=True, allow_infinity=True), st.floats(-2, 2),
                    st.sampled_from([0.0, 1e-300, 1e300, 5e-324, 1.7e308]))


@settings(max_examples=3 * int(os.environ.get("PROTOLINT_FUZZ_EXAMPLES", "20")), deadline=None)
@given(NUMBERS, NUMBERS, st.one_of(st.none(), NUMBERS), st.one_of(st.none(), NUMBERS), st.one_of(st.none(), NUMBERS),
       st.sampled_from(["two-group", "correlation"]), st.one_of(st.none(), st.integers(-5, 10**9)))
def test_size_on_random_options(effect: float, ratio: float, reliability: float | None, alpha: float | None,
                                dropout: float | None, design: str, raters: int | None) -> None:
    args = ["size", "--effect-size", repr(effect), "--design", design]
    if design == "two-group":
        args += ["--ratio", repr(ratio)]
    if raters is not None:
        args += ["--single-reliability", repr(reliability if reliability is not None else 0.7), "--raters", str(raters)]
    elif reliability is not None:
        args += ["--reliability", repr(reliability)]
    for option, value in (("--alpha", alpha), ("--dropout", dropout)):
        if value is not None:
            args += [option, repr(value)]
    _check(args)
