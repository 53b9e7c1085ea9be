"""Coverage-guided fuzzing of the plan loader (atheris): bytes -> located tree -> schema,
references, typed plan and its size limits.

Run by `make fuzz` for a fixed number of iterations (FUZZ_RUNS); not part of `make test`.
By hand:

    PYTHONPATH=. python fuzz/fuzz_plan_loader.py -runs=20000

The seeds are the hostile corpus of tests/corpus/plans (copied to a temporary folder, since
libFuzzer writes new inputs into its first corpus folder). Anything but a loaded plan or one
located one-line error is a crash: an exception other than LocatedError, a message over
several lines, or a plan that loads but cannot be validated, resolved and built.
"""

from __future__ import annotations

import shutil
import sys
import tempfile
from pathlib import Path

import atheris

with atheris.instrument_imports():
    from protolint.errors import LocatedError
    from protolint.plan import load_plan
    from protolint.plan.source import load_source

SEEDS = Path(__file__).resolve().parents[1] / "tests" / "corpus" / "plans"


def test_one_input(data: bytes) -> None:
    try:
        source = load_source(data, "fuzz.yaml")
    except LocatedError as error:
        message = error.format_message()
        if "\n" in message or error.line < 0 or error.column < 0:
            raise AssertionError(f"not a one-line located message: {message!r}") from None
        return
    if not isinstance(source.data, dict):
        raise AssertionError(f"the loader returned {type(source.data).__name__}, not a mapping")
    loaded = load_plan(source)  # schema, references, the typed model and its size limits
    for problem in loaded.problems:
        if "\n" in problem.message:
            raise AssertionError(f"a finding over several lines: {problem.message!r}")


def seed_folder() -> str:
    folder = Path(tempfile.mkdtemp(prefix="protolint-fuzz-plan-"))
    for seed in SEEDS.glob("*.yaml"):
        shutil.copy(seed, folder / seed.name)
    return str(folder)


def main() -> None:
    args = list(sys.argv)
    if not any(not arg.startswith("-") for arg in args[1:]):
        args.append(seed_folder())
    atheris.Setup(args, test_one_input)
    atheris.Fuzz()


if __name__ == "__main__":
    main()
