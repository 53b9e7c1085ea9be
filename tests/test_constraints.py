"""The lock file: constraints.txt pins every distribution `.[all,test]` installs, and it is what
`make install` (so `make demo`, `make test` and `.ci/run`) installs from.

Same bytes on every machine need the same layout, PDF and font libraries; the documents record
the installed versions (tests/render/test_document_status.py), and this checks those are the
pinned ones.
"""

from __future__ import annotations

import importlib.util
import re
from importlib import metadata
from pathlib import Path

from packaging.utils import canonicalize_name

from protolint.render.document import COMPUTING_LIBRARIES, RENDERING_LIBRARIES

REPO = Path(__file__).resolve().parents[1]
PIN = re.compile(r"^([A-Za-z0-9][A-Za-z0-9._-]*)==([^\s;]+)$")


def _pins() -> dict[str, str]:
    pins = {}
    for line in (REPO / "constraints.txt").read_text(encoding="utf-8").splitlines():
        if not line or line.startswith("#"):
            continue
        match = PIN.match(line)
        assert match, f"not an exact pin: {line!r}"
        pins[canonicalize_name(match.group(1))] = match.group(2)
    return pins


def _writer():
    spec = importlib.util.spec_from_file_location("write_constraints", REPO / "tools" / "write_constraints.py")
    assert spec and spec.loader
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_every_line_is_an_exact_pin_and_the_rendering_libraries_are_pinned() -> None:
    pins = _pins()
    assert len(pins) >= 20
    computing = [name for names in COMPUTING_LIBRARIES.values() for name in names]
    for name in (*RENDERING_LIBRARIES, *computing, "icalendar", "pyyaml", "jsonschema", "click"):
        assert canonicalize_name(name) in pins, name


def test_everything_all_and_test_install_is_pinned_at_the_installed_version() -> None:
    writer = _writer()
    needed = writer.closure(writer.project_requirements(("all", "test")))
    pins = _pins()
    assert set(needed) - set(pins) == set(), "run tools/write_constraints.py (make constraints)"
    assert {name: pins[name] for name in needed} == {name: metadata.version(name) for name in needed}


def test_make_install_uses_the_lock_and_ci_runs_through_it() -> None:
    makefile = (REPO / "Makefile").read_text(encoding="utf-8")
    assert re.search(r"^LOCK\s*:=\s*constraints\.txt$", makefile, re.M)
    install = makefile.split("$(STAMP):", 1)[1].split("\n\n", 1)[0]
    assert "$(LOCK)" in install.splitlines()[0]  # a new lock reinstalls
    assert "pip install --quiet -c $(LOCK) -e '.[all,test]'" in install
    # demo and test install first (they depend on the stamp); CI runs make test.
    assert re.search(r"^demo: \$\(STAMP\)$", makefile, re.M)
    assert re.search(r"^test: \$\(STAMP\)$", makefile, re.M)
    ci = (REPO / ".ci" / "run").read_text(encoding="utf-8")
    assert re.search(r"^make test$", ci, re.M)
    assert "pip install" not in ci  # nothing installed around the lock
