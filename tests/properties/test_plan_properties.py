"""Property-based tests: random and mutated plans never get anything but exit 0, 1 or 2 with a message.

Each example is the corpus base plan with a few values replaced by hostile ones (numbers at
and past the float and integer limits, NaN, dates in any year, YAML tags and anchors, text with
control characters, line breaks and markup) or lines deleted or repeated, or random bytes. The
loader must return a mapping or raise one located one-line error; check, render, calendar and
diff must exit 0, 1 or 2, never with a traceback, and exit 2 must print exactly one located
line. `make test` runs a few examples per property; `make fuzz` sets PROTOLINT_FUZZ_EXAMPLES
for many more.
"""

from __future__ import annotations

import json
import os
import re
from pathlib import Path

from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from protolint.errors import LocatedError
from protolint.plan.source import load_source
from tests.conftest import assert_one_line_error

BASE = Path(__file__).resolve().parents[1] / "corpus" / "plans" / "base.yaml"
BASE_TEXT = BASE.read_text(encoding="utf-8")
BASE_LINES = BASE_TEXT.splitlines(keepends=True)
VALUE_LINES = [i for i, line in enumerate(BASE_LINES) if re.match(r"^\s*(?:- )?[a-z_]+: \S", line)]
EXAMPLES = int(os.environ.get("PROTOLINT_FUZZ_EXAMPLES", "15"))
SETTINGS = settings(max_examples=EXAMPLES, deadline=None, derandomize=EXAMPLES <= 15,
                    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])

numbers = st.one_of(
    st.integers(min_value=-(10**30), max_value=10**30).map(str),
    st.sampled_from(["9" * 5000, "0x" + "f" * 300, "9007199254740992", "1e999", "-1e999", "1e-400", "5e-324",
                     "1.7e308", ".inf", "-.inf", ".nan", "1_00", "１２", "0o777", "0x1F", "-0", "1e18"]),
    st.floats(allow_nan=False, allow_infinity=False).map(repr),
)
dates = st.dates().map(lambda d: d.isoformat())
yaml_tokens = st.sampled_from(["!!seq x", "!!map x", "!!str", "!!int three", "!!float 1e400", "!!binary aGk=",
                               "!!python/name:os.system", "&a x", "*a", "[", "{", "}", "~", "''", "|", ">-",
                               "<<", "- - -", "? x", "&a [*a]", "!custom x", "!!timestamp 2026-01-01"])
texts = st.text(alphabet=st.characters(codec="utf-8"), max_size=40).map(lambda s: json.dumps(s, ensure_ascii=False))
markup = st.sampled_from(['"<script>alert(1)</script>"', '"[x](javascript:alert(1))"', '"- [g]: javascript:x"',
                          '"![i](file:///etc/passwd)"', '"line\\nbreak"', '"\\e[31m"', '"\\u2028"', '"a: b"'])
values = st.one_of(numbers, dates, yaml_tokens, texts, markup)

edits = st.lists(st.tuples(st.sampled_from(VALUE_LINES), st.sampled_from(["value", "delete", "repeat"]), values),
                 min_size=1, max_size=3)


def mutated(changes: list[tuple[int, str, str]]) -> str:
    lines = list(BASE_LINES)
    for index, action, value in changes:
        line = lines[index]
        if ": " not in line:  # deleted by an earlier change
            continue
        if action == "value":
            head = line[: line.index(": ") + 2]
            lines[index] = head + value + "\n"
        elif action == "delete":
            lines[index] = ""
        else:
            lines[index] = line + line
    return "".join(lines)


def assert_one_located_line(exit_code: int, stderr: str, path: Path) -> None:
    assert_one_line_error(exit_code, stderr)
    assert re.match(rf"^{re.escape(str(path))}:\d+:\d+: \S", stderr), stderr


def run(*args: object):
    from protolint.cli import main

    return CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)


@SETTINGS
@given(st.binary(max_size=2000))
def test_the_loader_returns_a_mapping_or_one_located_line(raw):
    try:
        source = load_source(raw, "random.yaml")
    except LocatedError as error:
        assert "\n" not in error.format_message() and error.line >= 0 and error.column >= 0
    else:
        assert isinstance(source.data, dict)


@SETTINGS
@given(edits)
def test_the_loader_on_mutated_plans(changes):
    try:
        source = load_source(mutated(changes).encode("utf-8"), "plan.yaml")
    except LocatedError as error:
        assert "\n" not in error.format_message() and 0 <= error.line <= len(BASE_LINES) + 10
    else:
        assert isinstance(source.data, dict)


@SETTINGS
@given(edits)
def test_check_render_calendar_and_diff_exit_0_1_or_2(tmp_path_factory, changes):
    folder = tmp_path_factory.mktemp("mutant")
    path = folder / "plan.yaml"
    path.write_text(mutated(changes), encoding="utf-8")
    check = run("check", path, "--format", "json")
    assert check.exit_code in (0, 1, 2), check.stderr[-2000:]
    if check.exit_code == 2:
        assert_one_located_line(check.exit_code, check.stderr, path)
        assert json.loads(check.stdout)["execution_successful"] is False
    else:
        report = json.loads(check.stdout)
        assert all("\n" not in f["message"] for plan in report["plans"] for f in plan["findings"])
    for args in (["render", "manual", path, "--format", "markdown", "--output", folder / "manual.md"],
                 ["render", "binder", path, "--format", "html", "--output", folder / "binder.html"],
                 ["calendar", path, "--output", folder / "duties.ics"],
                 ["diff", BASE, path, "--format", "json"]):
        result = run(*args)
        assert result.exit_code in (0, 1, 2), (args[:2], result.stderr[-2000:])
        if result.exit_code == 2:
            assert_one_located_line(result.exit_code, result.stderr, path)
            if args[0] != "diff":
                assert not Path(args[-1]).exists()
