"""Every hostile or careless plan and policy of tests/corpus/plans, through every command that reads one.

The manifest (tests/corpus/plans/manifest.yaml) gives each case its expected exit code and the
one-line located message a protocol writer must see. For every case and command this checks:
the exit code; on exit 2 exactly one line ``file:line:column: message`` on standard error with
the expected place and words, and no traceback; no output file left behind (not even a hidden
temporary one); and, for plans that load, that documents and the calendar are rendered with
every piece of plan text kept as text (no live link to javascript:, data: or file: URLs, no
element or calendar component injected). Cases that amplify (alias bombs, endless and sparse
files, plans that multiply into millions of rows) run in a child process under a memory limit
and a timeout, so a regression fails the test instead of the machine.
"""

from __future__ import annotations

import json
import re
import resource
import subprocess
import sys
from html.parser import HTMLParser
from pathlib import Path

import pytest
import yaml
from click.testing import CliRunner

from protolint.report import FAILURE_FORMATS, FORMATS

CORPUS = Path(__file__).resolve().parent / "plans"
BASE = CORPUS / "base.yaml"
MANIFEST = yaml.safe_load((CORPUS / "manifest.yaml").read_text(encoding="utf-8"))["cases"]
DOCUMENTS = [(kind, fmt) for kind in ("manual", "checklist", "binder") for fmt in ("html", "markdown")]
MEMORY_LIMIT = 1536 * 1024 * 1024  # bytes of address space a child may use
TIME_LIMIT = 120  # seconds per child process; the cases take well under a second each


# ---------------------------------------------------------------- inputs made at test time

def _replace(text: str, old: str, new: str) -> str:
    assert old in text, f"the corpus base plan no longer contains {old!r}"
    return text.replace(old, new, 1)


def _base() -> str:
    return BASE.read_text(encoding="utf-8")


def _sites(count: int) -> str:
    return "".join(f"    - {{id: X{i:04d}, name: Invented site {i}}}\n" for i in range(count))


def generate(name: str, folder: Path) -> Path:
    """Write the generated input ``name`` into ``folder`` (or name a device) and return its path."""
    path = folder / f"{name}.yaml"
    if name == "alias-bomb":  # "billion laughs": ten aliases of ten aliases, nine levels deep
        lines = ["format_version: 1", 'l0: &l0 ["lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol"]']
        lines += [f"l{i}: &l{i} [{', '.join([f'*l{i - 1}'] * 10)}]" for i in range(1, 10)]
        path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    elif name == "alias-amplification":  # under the node limit, but gigabytes of text once expanded
        path.write_text("format_version: 1\nlong: &s " + "x" * 300_000 + "\nmany: [" + ", ".join(["*s"] * 150_000) + "]\n",
                        encoding="utf-8")
    elif name == "deep-nesting":
        path.write_text("format_version: 1\nextra: " + "[" * 20_000 + "]" * 20_000 + "\n", encoding="utf-8")
    elif name == "big-file":  # a plan padded past the limit with comments
        path.write_bytes(_base().encode("utf-8") + b"# padding\n" * (3 * 1024 * 1024 // 10))
    elif name == "endless-file":
        return Path("/dev/zero")
    elif name == "sparse-file":  # 3 GB on paper, nothing on disk: must not be read whole
        with open(path, "wb") as stream:
            stream.truncate(3 * 1024**3)
    elif name == "utf8-bom":
        path.write_bytes(b"\xef\xbb\xbf" + _base().encode("utf-8"))
    elif name == "huge-integer":
        path.write_text(_replace(_base(), "  stated_n_total: 180\n", "  stated_n_total: " + "9" * 5000 + "\n"), encoding="utf-8")
    elif name == "long-title":
        path.write_text(_replace(_base(), "  title: Invented test trial\n", "  title: " + "Invented " * 5000 + "\n"), encoding="utf-8")
    elif name == "too-many-sites":
        path.write_text(_replace(_base(), "    - {id: S01, name: Invented site one}\n", _sites(2001) + "    - {id: S01, name: Invented site one}\n"),
                        encoding="utf-8")
    elif name == "too-many-signoff-rows":  # 1,000 sites keeping 100 raters each: 100,000 rows per SOP
        text = _replace(_base(), "    - {id: S01, name: Invented site one}\n", _sites(1000) + "    - {id: S01, name: Invented site one}\n")
        path.write_text(_replace(text, "    raters_per_site: 2\n", "    raters_per_site: 100\n"), encoding="utf-8")
    elif name == "too-many-rounds":  # 1,900 sites, a round every week for ten years
        text = _replace(_base(), "    - {id: S01, name: Invented site one}\n", _sites(1900) + "    - {id: S01, name: Invented site one}\n")
        text = _replace(_replace(text, "      interval_weeks: 12\n", "      interval_weeks: 1\n"), "  enrolment_weeks: 52\n", "  enrolment_weeks: 520\n")
        path.write_text(text, encoding="utf-8")
    else:
        raise KeyError(f"no generator named {name!r}")
    return path


ISOLATED = {"alias-bomb", "alias-amplification", "deep-nesting", "big-file", "endless-file", "sparse-file",
            "too-many-sites", "too-many-rounds", "too-many-signoff-rows"}
"""Generated inputs that would exhaust memory or time if a bound broke: run in a limited child."""


def materialise(case: dict, folder: Path) -> Path:
    if "file" in case:
        return CORPUS / case["file"]
    if "generate" in case:
        return generate(case["generate"], folder)
    path = folder / f"{case['name']}.yaml"
    path.write_text(_replace(_base(), case["edit"]["old"], case["edit"]["new"]), encoding="utf-8")
    return path


def cases(kind: str, isolated: bool | None = None) -> list:
    chosen = [c for c in MANIFEST if c.get("kind", "plan") == kind]
    if isolated is not None:
        chosen = [c for c in chosen if (c.get("generate") in ISOLATED) == isolated]
    return [pytest.param(c, id=c["name"]) for c in chosen]


# ---------------------------------------------------------------- running the commands

class Run:
    def __init__(self, code: int, stdout: str, stderr: str) -> None:
        self.code, self.stdout, self.stderr = code, stdout, stderr


def run_in_process(*args: object) -> Run:
    from protolint.cli import main

    result = CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)
    return Run(result.exit_code, result.stdout, result.stderr)


def _limits() -> None:
    resource.setrlimit(resource.RLIMIT_AS, (MEMORY_LIMIT, MEMORY_LIMIT))


def run_limited(*args: object) -> Run:
    done = subprocess.run([sys.executable, "-m", "protolint", *map(str, args)], capture_output=True, text=True,
                          timeout=TIME_LIMIT, preexec_fn=_limits, cwd=Path(__file__).resolve().parents[2])
    return Run(done.returncode, done.stdout, done.stderr)


def assert_located(run: Run, path: Path, case: dict) -> None:
    """Exit 2 with exactly one line `file:line:column: message`, in the manifest's place and words."""
    assert run.code == 2, (run.code, run.stderr[-2000:])
    assert "Traceback" not in run.stderr
    lines = run.stderr.splitlines()
    assert len(lines) == 1, lines[:5]
    match = re.match(rf"^{re.escape(str(path))}:(\d+):(\d+): (.+)$", lines[0])
    assert match, lines[0]
    if "line" in case:
        assert int(match.group(1)) == case["line"], lines[0]
    assert case["message"] in match.group(3), lines[0]


def assert_findings(run: Run, case: dict) -> None:
    """A JSON report of exit 1 or 0 whose findings include the manifest's message at its line."""
    assert run.code == case["exit"], (run.code, run.stderr[-2000:])
    report = json.loads(run.stdout)
    findings = [f for plan in report["plans"] for f in plan["findings"]]
    assert all("\n" not in f["message"] and "\x1b" not in f["message"] for f in findings)
    if case["message"]:
        hits = [f for f in findings if case["message"] in f["message"]]
        assert hits, [f["message"] for f in findings][:10]
        if "line" in case:
            assert case["line"] in [f["line"] for f in hits], [(f["line"], f["message"]) for f in hits]


def assert_nothing_left(folder: Path, before: set[str]) -> None:
    assert {p.name for p in folder.iterdir()} == before, "an output or temporary file was left behind"


# ---------------------------------------------------------------- what "kept as text" means

DANGEROUS_URL = re.compile(r"^\s*(?:javascript|vbscript|data|file):", re.IGNORECASE)


class _Elements(HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.tags: list[str] = []
        self.urls: list[str] = []
        self.fetched: list[str] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.tags.append(tag)
        self.urls += [value or "" for name, value in attrs if name in ("href", "src", "action", "formaction", "xlink:href")]
        self.fetched += [value or "" for name, value in attrs if name in ("src", "srcset", "poster", "data")]
        assert not any(name.startswith("on") for name, _ in attrs), (tag, attrs)


def elements(html: str) -> _Elements:
    parser = _Elements()
    parser.feed(html)
    return parser


def naive_markdown_html(markdown: str) -> str:
    """The Markdown as a renderer without its own URL filter and with raw HTML on would show it."""
    from markdown_it import MarkdownIt

    md = MarkdownIt("commonmark", {"html": True})
    md.validateLink = lambda url: True  # the careless renderer: every link is kept
    return md.render(markdown)


def assert_text_stays_text(document: str, fmt: str, clean: str, draft: bool = False) -> None:
    """No hostile URL is a link and no element appears that the clean plan's document lacks
    (``draft``: the plan has errors, so the document also lists them)."""
    html = document if fmt == "html" else naive_markdown_html(document)
    base_html = clean if fmt == "html" else naive_markdown_html(clean)
    found = elements(html)
    assert not [url for url in found.urls if DANGEROUS_URL.match(url)]
    # Plan Markdown may link to http(s) pages (a link is not fetched); nothing may be loaded from one.
    assert not [url for url in found.fetched if "example.invalid" in url]
    # The inline elements plan Markdown may make; a draft's list of open errors marks its file
    # and rule ids with spans, which the clean base (no errors) has nowhere.
    allowed = {"p", "ul", "li", "em", "strong", "code", "a"} | ({"span"} if draft else set())
    assert set(found.tags) <= set(elements(base_html).tags) | allowed, \
        set(found.tags) - set(elements(base_html).tags)
    assert "\x1b" not in document


# ---------------------------------------------------------------- the manifest itself

def test_the_corpus_is_large_and_every_file_is_used():
    names = [c["name"] for c in MANIFEST]
    assert len(names) == len(set(names)) and len(names) >= 60
    used = {c["file"] for c in MANIFEST if "file" in c}
    present = {p.name for p in CORPUS.iterdir()} - {"base.yaml", "manifest.yaml"}
    assert used == present
    for case in MANIFEST:
        assert case["exit"] in (0, 1, 2) and isinstance(case["message"], str)
        assert case["exit"] != 2 or case["message"], case["name"]


def test_the_base_plan_is_clean(tmp_path):
    run = run_in_process("check", BASE, "--format", "json")
    assert run.code == 0 and json.loads(run.stdout)["summary"]["error"] == 0


# ---------------------------------------------------------------- plans, in process

@pytest.fixture(scope="module")
def clean_documents(tmp_path_factory):
    folder = tmp_path_factory.mktemp("clean")
    documents = {}
    for kind, fmt in DOCUMENTS:
        target = folder / f"{kind}.{fmt}"
        assert run_in_process("render", kind, BASE, "--format", fmt, "--output", target).code == 0
        documents[kind, fmt] = target.read_text(encoding="utf-8")
    return documents


@pytest.mark.parametrize("case", cases("plan", isolated=False))
def test_check_in_every_format(case, tmp_path):
    path = materialise(case, tmp_path)
    for fmt in FORMATS:
        run = run_in_process("check", path, "--format", fmt, "--fail-on", "error")
        if case["exit"] == 2:
            assert_located(run, path, case)
            if fmt in FAILURE_FORMATS:
                assert "false" in run.stdout or "<error" in run.stdout or "::error" in run.stdout
            else:
                assert run.stdout == ""
        else:
            assert run.code == case["exit"], (fmt, run.code, run.stderr[-2000:])
            assert "Traceback" not in run.stderr
    if case["exit"] != 2:
        assert_findings(run_in_process("check", path, "--format", "json"), case)


@pytest.mark.parametrize("case", cases("plan", isolated=False))
def test_documents_calendar_and_diff(case, tmp_path, clean_documents):
    path = materialise(case, tmp_path)
    out = tmp_path / "out"
    out.mkdir()
    valid = case.get("valid", False)
    jobs = [("render", kind, fmt) for kind, fmt in DOCUMENTS] + [("calendar", None, "ics")]
    if case.get("pdf"):
        jobs.append(("render", "binder", "pdf"))
    for command, kind, fmt in jobs:
        target = out / f"{kind or command}.{fmt}"
        args = ["render", kind, path, "--format", fmt] if command == "render" else ["calendar", path]
        run = run_in_process(*args, "--output", target)
        if not valid:
            # The first problem of a plan that does not load, or of one the schema rejects.
            assert run.code == 2 and "Traceback" not in run.stderr, (command, kind, fmt, run.stderr[-2000:])
            [line] = run.stderr.splitlines()
            assert line.startswith(f"{path}:")
            if case["exit"] == 2:
                assert_located(run, path, case)
            assert_nothing_left(out, set())
            continue
        assert run.code == 0, (command, kind, fmt, run.stderr[-2000:])
        if fmt in ("html", "markdown"):
            assert_text_stays_text(target.read_text(encoding="utf-8"), fmt, clean_documents[kind, fmt],
                                   draft=case["exit"] == 1)
        elif fmt == "ics":
            assert_calendar_components_are_ours(target.read_bytes())
    diff = run_in_process("diff", BASE, path, "--format", "json")
    if case["exit"] == 2:
        assert_located(diff, path, case)
    else:
        assert diff.code == 0 and "Traceback" not in diff.stderr
        json.loads(diff.stdout)


def assert_calendar_components_are_ours(data: bytes) -> None:
    from icalendar import Calendar

    calendar = Calendar.from_ical(data)
    assert {component.name for component in calendar.walk()} <= {"VCALENDAR", "VEVENT"}


REPO = Path(__file__).resolve().parents[2]
ANALYSES = (["drift", REPO / "demo_protocol" / "data" / "drift_hlsc8.csv"],
            ["design", REPO / "demo_protocol" / "pilot" / "pilot_hlsc8_simulated.csv"])


@pytest.mark.parametrize("case", [c for c in cases("plan", isolated=False) if not c.values[0].get("valid")])
def test_analyses_refuse_a_plan_that_does_not_load(case, tmp_path):
    path = materialise(case, tmp_path)
    for command in ANALYSES:
        run = run_in_process(*command, "--plan", path, "--format", "json")
        assert run.code == 2 and "Traceback" not in run.stderr, (command[0], run.stderr[-2000:])
        [line] = run.stderr.splitlines()
        assert line.startswith(f"{path}:"), line
        if case["exit"] == 2:
            assert_located(run, path, case)


# ---------------------------------------------------------------- policies

@pytest.mark.parametrize("case", cases("policy"))
def test_policy_in_every_format(case, tmp_path):
    path = materialise(case, tmp_path)
    formats = FORMATS if case.get("generate") not in ISOLATED else ("text", "sarif")
    for fmt in formats:
        run = (run_limited if case.get("generate") in ISOLATED else run_in_process)(
            "check", BASE, "--policy", path, "--format", fmt)
        assert_located(run, path, case)
        if fmt == "sarif":
            assert json.loads(run.stdout)["runs"][0]["invocations"][0]["executionSuccessful"] is False


# ---------------------------------------------------------------- amplifying inputs, in a limited child

@pytest.mark.parametrize("case", cases("plan", isolated=True))
def test_amplifying_inputs_are_refused_within_bounds(case, tmp_path):
    path = materialise(case, tmp_path)
    out = tmp_path / "out"
    out.mkdir()
    for args in (["check", path], ["check", path, "--format", "sarif"],
                 ["render", "manual", path, "--format", "markdown", "--output", out / "manual.md"],
                 ["render", "binder", path, "--format", "html", "--output", out / "binder.html"],
                 ["calendar", path, "--output", out / "duties.ics"], ["diff", BASE, path]):
        run = run_limited(*args)
        assert "Traceback" not in run.stderr and "MemoryError" not in run.stderr, run.stderr[-2000:]
        if case["exit"] == 2:
            assert_located(run, path, case)
        elif args[0] == "check":
            assert run.code == case["exit"], run.stderr[-2000:]
            assert args[-1] == "sarif" or case["message"] in " ".join(run.stdout.split())
        elif args[0] in ("render", "calendar"):
            [line] = run.stderr.splitlines()
            assert run.code == 2 and case["message"] in line and line.startswith(f"{path}:")
        assert_nothing_left(out, set())
