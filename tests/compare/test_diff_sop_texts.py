"""``protolint diff`` compares the SOP full texts the plans point to (``sops[].text_file``).

Each version lives in its own folder with its own copy of the demo's SOP texts, since a text
file is read relative to its plan. Every expected diff line and digest is written out or
computed here (hashlib on the files' bytes), independently of the code under test.
"""

from __future__ import annotations

import hashlib
import json
import re
from pathlib import Path

import pytest
from markdown_it import MarkdownIt

from protolint.compare import compare_plans
from protolint.compare.texts import MAX_DIFF_LINES, MAX_LINE_CHARACTERS
from protolint.pipeline import check_source
from protolint.plan import read_source
from tests.conftest import DEMO_PLAN, write_demo_plan

DEMO_TEXT = DEMO_PLAN.read_text(encoding="utf-8")
IMG = "sops/SOP-IMG-002.md"
IMG_LAST = "site repeats it at the next visit.\n"   # the last line of the demo's SOP-IMG-002 text
ADDED_LINE = "Photographs are kept for the invented trial's whole duration."


def version(tmp_path: Path, name: str, plan_text: str = DEMO_TEXT, texts: dict[str, str | None] | None = None) -> Path:
    """A plan in ``tmp_path/name`` with the demo's SOP texts, edited by ``texts`` (None deletes one)."""
    folder = tmp_path / name
    folder.mkdir()
    plan = write_demo_plan(folder / "plan.yaml", plan_text)
    for path, text in (texts or {}).items():
        if text is None:
            (folder / path).unlink()
        else:
            (folder / path).write_text(text, encoding="utf-8")
    return plan


def demo_text(path: str) -> str:
    return (DEMO_PLAN.parent / path).read_text(encoding="utf-8")


def with_added_line(text: str = "") -> str:
    text = text or demo_text(IMG)
    assert text.endswith(IMG_LAST)
    return text + "\n" + ADDED_LINE + "\n"


def compare(old: Path, new: Path):
    sources = read_source(str(old)), read_source(str(new))
    return compare_plans(*sources, *(check_source(source) for source in sources))


def digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def line_of(text: str, fragment: str) -> int:
    return text[: text.index(fragment)].count("\n") + 1


def test_a_changed_text_is_reported_although_the_plans_are_identical(tmp_path):
    old = version(tmp_path, "old")
    new = version(tmp_path, "new", texts={IMG: with_added_line()})
    comparison = compare(old, new)
    assert comparison.changes == () and comparison.patch == ()
    [change] = comparison.sop_texts
    assert change.kind == "changed" and change.sop_id == "SOP-IMG-002" and change.pointer == "/sops/1/text_file"
    assert change.old_sha256 == digest(old.parent / IMG) and change.new_sha256 == digest(new.parent / IMG)
    assert change.old_line == change.new_line == line_of(DEMO_TEXT, f"    text_file: {IMG}")
    assert (change.lines_added, change.lines_removed, change.diff_lines_omitted) == (2, 0, 0)
    context = demo_text(IMG).splitlines()[-3:]
    count = len(demo_text(IMG).splitlines())
    assert change.diff == (f"--- old/{IMG}", f"+++ new/{IMG}", f"@@ -{count - 2},3 +{count - 2},5 @@",
                           *(" " + line for line in context), "+", "+" + ADDED_LINE)
    assert change.sentence == f"text of SOP SOP-IMG-002 ({IMG}) changed: 2 lines added, 0 removed"
    assert comparison.text_counts() == {"added": 0, "removed": 0, "changed": 1, "unreadable": 0, "unchanged": 2}


def test_added_and_removed_texts_and_an_unchanged_renamed_one(tmp_path):
    old = version(tmp_path, "old")
    # SOP-RAT-001 loses its text, SOP-MON-003 is renamed with the same bytes, and a new SOP brings one.
    start, end = DEMO_TEXT.index("  - id: SOP-MON-003\n"), DEMO_TEXT.index("\ndeviations:")
    added_sop = DEMO_TEXT[start:end].replace("SOP-MON-003", "SOP-MON-009").replace("sops/SOP-MON-009.md", "sops/new.md")
    new_text = (DEMO_TEXT[:end] + "\n" + added_sop.rstrip("\n") + DEMO_TEXT[end:]).replace(
        "    text_file: sops/SOP-RAT-001.md\n", "").replace("text_file: sops/SOP-MON-003.md", "text_file: sops/monitoring.md")
    new = version(tmp_path, "new", new_text)
    (new.parent / "sops" / "monitoring.md").write_bytes((DEMO_PLAN.parent / "sops/SOP-MON-003.md").read_bytes())
    (new.parent / "sops" / "new.md").write_text("# An invented new procedure\n", encoding="utf-8")
    comparison = compare(old, new)
    kinds = [(c.kind, c.sop_id, c.old_text_file, c.new_text_file) for c in comparison.sop_texts]
    assert kinds == [("removed", "SOP-RAT-001", "sops/SOP-RAT-001.md", None), ("added", "SOP-MON-009", None, "sops/new.md")]
    removed, added = comparison.sop_texts
    assert removed.pointer == "/sops/0/text_file" and removed.new_line is None and removed.new_sha256 is None
    assert removed.old_sha256 == digest(old.parent / "sops/SOP-RAT-001.md") and removed.diff == ()
    assert added.new_sha256 == hashlib.sha256(b"# An invented new procedure\n").hexdigest() and added.old_line is None
    assert added.new_line == line_of(new_text, "text_file: sops/new.md")
    # The rename keeps the bytes, so it is no text change; the plan comparison shows the new path.
    assert comparison.sop_texts_unchanged == 2
    assert "text file of SOP SOP-MON-003: sops/SOP-MON-003.md → sops/monitoring.md" in {c.sentence for c in comparison.changes}


def test_a_text_that_cannot_be_read_is_reported_located_and_not_compared(tmp_path, cli_process):
    old = version(tmp_path, "old", DEMO_TEXT.replace(f"text_file: {IMG}", "text_file: ../outside.md"))
    new = version(tmp_path, "new", texts={IMG: None})
    comparison = compare(old, new)
    [change] = comparison.sop_texts
    line = line_of(DEMO_TEXT, f"    text_file: {IMG}")
    assert change.kind == "unreadable" and change.old_sha256 is None and change.new_sha256 is None and change.diff == ()
    assert change.problems == (
        f"{old}:{line}:5: SOP text file '../outside.md': '..' is not allowed; SOP texts must be inside the plan's folder or below it",
        f"{new}:{line}:5: SOP text file '{IMG}': no such file in the plan's folder",
    )
    run = cli_process("diff", old, new)
    assert run.returncode == 0 and "Traceback" not in run.stderr and run.stderr == ""
    assert "  unreadable text of SOP SOP-IMG-002 could not be read, so it was not compared" in run.stdout
    assert change.problems[1] in run.stdout and "1 not compared (unreadable)" in run.stdout


def test_the_diff_of_a_rewritten_text_is_bounded_but_its_counts_are_not(tmp_path):
    old_body = "".join(f"Old invented line {n}.\n" for n in range(2000))
    new_body = "".join(f"New invented line {n}.\n" for n in range(2000)) + "x" * 5000 + "\n"
    old = version(tmp_path, "old", texts={IMG: old_body})
    new = version(tmp_path, "new", texts={IMG: new_body})
    [change] = compare(old, new).sop_texts
    assert (change.lines_removed, change.lines_added) == (2000, 2001)
    total = 3 + 2000 + 2001   # two file headers, one hunk header, every line removed and added
    assert len(change.diff) == MAX_DIFF_LINES and change.diff_lines_omitted == total - MAX_DIFF_LINES
    assert change.diff[3] == "-Old invented line 0."
    assert max(len(line) for line in change.diff) <= MAX_LINE_CHARACTERS


def test_a_long_line_is_cut_where_it_is_shown(tmp_path):
    old = version(tmp_path, "old")
    new = version(tmp_path, "new", texts={IMG: demo_text(IMG) + "y" * 1000 + "\n"})
    [change] = compare(old, new).sop_texts
    assert change.diff[-1] == "+" + "y" * (MAX_LINE_CHARACTERS - 2) + "…" and len(change.diff[-1]) == MAX_LINE_CHARACTERS


def test_reordered_sops_with_the_same_texts_are_no_text_change(tmp_path):
    start, middle = DEMO_TEXT.index("  - id: SOP-RAT-001\n"), DEMO_TEXT.index("  - id: SOP-IMG-002\n")
    swapped = DEMO_TEXT[:start] + DEMO_TEXT[middle:DEMO_TEXT.index("  - id: SOP-MON-003\n")] + DEMO_TEXT[start:middle] \
        + DEMO_TEXT[DEMO_TEXT.index("  - id: SOP-MON-003\n"):]
    assert swapped != DEMO_TEXT and len(swapped) == len(DEMO_TEXT)
    comparison = compare(version(tmp_path, "old"), version(tmp_path, "new", swapped))
    assert comparison.sop_texts == () and comparison.sop_texts_unchanged == 3


HOSTILE = "<script>alert(1)</script> ```` and ``` fences & *stars*"


@pytest.fixture
def hostile_pair(tmp_path) -> tuple[Path, Path]:
    return version(tmp_path, "old"), version(tmp_path, "new", texts={IMG: with_added_line().replace(ADDED_LINE, HOSTILE)})


def test_text_format(cli, hostile_pair):
    old, new = hostile_pair
    output = cli("diff", old, new).output
    assert "SOP texts: 1 changed, 0 added, 0 removed, 2 unchanged" in output.splitlines()[1]
    block = output[output.index("Changes in the SOP texts\n"):output.index("\nFindings introduced")]
    assert f"  changed    text of SOP SOP-IMG-002 ({IMG}) changed: 2 lines added, 0 removed" in block
    assert f"SHA-256 {digest(old.parent / IMG)} → {digest(new.parent / IMG)}" in block
    assert f"             --- old/{IMG}\n" in block and f"             +{HOSTILE}\n" in block


def test_json_format(cli, hostile_pair):
    old, new = hostile_pair
    report = json.loads(cli("diff", old, new, "--format", "json").output)
    assert report["sop_text_counts"] == {"added": 0, "removed": 0, "changed": 1, "unreadable": 0, "unchanged": 2}
    [entry] = report["sop_texts"]
    assert entry == {**entry, "kind": "changed", "sop": "SOP-IMG-002", "pointer": "/sops/1/text_file",
                     "old_text_file": IMG, "new_text_file": IMG, "old_sha256": digest(old.parent / IMG),
                     "new_sha256": digest(new.parent / IMG), "lines_added": 2, "lines_removed": 0,
                     "diff_lines_omitted": 0, "problems": []}
    assert entry["diff"][-1] == "+" + HOSTILE and entry["description"].startswith("text of SOP SOP-IMG-002")
    assert report["patch"] == [] and report["changes"] == []


def test_markdown_format_keeps_the_diff_inside_its_fence(cli, hostile_pair):
    old, new = hostile_pair
    markdown = cli("diff", old, new, "--format", "markdown").output
    assert "## Changes in the SOP texts" in markdown
    assert "| changed | text of SOP SOP-IMG-002 (sops/SOP-IMG-002.md) changed: 2 lines added, 0 removed |" in markdown
    # The text holds a run of four backticks: the fence is five long, so no line of the text closes it.
    assert "\n`````diff\n" in markdown and f"\n+{HOSTILE}\n`````\n" in markdown
    page = MarkdownIt("commonmark").render(markdown)
    assert "<script" not in page and "&lt;script&gt;alert(1)&lt;/script&gt; ```` and ``` fences" in page
    [code] = re.findall(r'<pre><code class="language-diff">(.*?)</code></pre>', page, re.S)
    assert code.splitlines()[0] == f"--- old/{IMG}" and code.splitlines()[-1].startswith("+&lt;script&gt;")


def test_html_format_escapes_the_text_and_marks_each_line(cli, hostile_pair):
    old, new = hostile_pair
    page = cli("diff", old, new, "--format", "html").output
    assert "<script" not in page and not re.search(r'\b(src|href)=', page)
    assert '<span class="add">+&lt;script&gt;alert(1)&lt;/script&gt; ```` and ``` fences &amp; *stars*</span>\n' in page
    assert f'<span class="file">--- old/{IMG}</span>\n<span class="file">+++ new/{IMG}</span>\n<span class="hunk">@@ ' in page
    assert f"<code>{digest(old.parent / IMG)}</code> → <code>{digest(new.parent / IMG)}</code>" in page


def test_every_format_reports_an_unreadable_text(cli, tmp_path):
    old, new = version(tmp_path, "old"), version(tmp_path, "new", texts={IMG: None})
    located = f"{new}:{line_of(DEMO_TEXT, f'    text_file: {IMG}')}:5: SOP text file '{IMG}': no such file in the plan's folder"
    report = json.loads(cli("diff", old, new, "--format", "json").output)
    assert [(t["kind"], t["problems"]) for t in report["sop_texts"]] == [("unreadable", [located])]
    assert located in cli("diff", old, new).output
    assert located.replace("'", "&#39;") in cli("diff", old, new, "--format", "html").output
    markdown = cli("diff", old, new, "--format", "markdown").output
    assert "| unreadable | text of SOP SOP-IMG-002 could not be read, so it was not compared |" in markdown
    assert "- " + located.replace("_", "\\_") in markdown


def test_the_readme_ci_recipe_compares_a_base_exported_with_its_texts(tmp_path, cli_process):
    """README's recipe exports the target branch's plan folder with `git archive`: the base then
    loads with its SOP texts, so an edited text is the one difference and no finding is new.
    A lone copy of the plan file (``git show branch:plan.yaml``) has no texts beside it."""
    import shutil
    import subprocess

    if shutil.which("git") is None:
        pytest.skip("git is not installed")
    repo = tmp_path / "repo"
    repo.mkdir()
    version(repo, "plans")   # repo/plans/plan.yaml and repo/plans/sops/
    git = ["git", "-C", str(repo), "-c", "user.name=Test", "-c", "user.email=test@example.org"]
    for args in (["init", "-q"], ["add", "-A"], ["commit", "-q", "-m", "base"]):
        subprocess.run(git + args, check=True, capture_output=True)
    (repo / "plans" / IMG).write_text(with_added_line(), encoding="utf-8")
    base = tmp_path / "base"
    base.mkdir()
    archive = subprocess.run(git + ["archive", "HEAD", "plans"], check=True, capture_output=True).stdout
    subprocess.run(["tar", "-x", "-C", str(base)], input=archive, check=True)
    run = cli_process("diff", base / "plans" / "plan.yaml", repo / "plans" / "plan.yaml", "--fail-on-new", "error",
                      "--format", "json")
    report = json.loads(run.stdout)
    assert run.returncode == 0 and report["counts"]["introduced"] == 0 and report["counts"]["unchanged"] > 20
    assert [(t["kind"], t["sop"]) for t in report["sop_texts"]] == [("changed", "SOP-IMG-002")]
    lone = tmp_path / "lone.yaml"
    lone.write_bytes(subprocess.run(git + ["show", "HEAD:plans/plan.yaml"], check=True, capture_output=True).stdout)
    report = json.loads(cli_process("diff", lone, repo / "plans" / "plan.yaml", "--format", "json").stdout)
    assert report["sop_text_counts"]["unreadable"] == 3 and report["counts"]["introduced"] > 20
