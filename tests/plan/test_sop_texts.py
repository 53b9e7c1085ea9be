"""SOP texts (``sops[].text_file``): read only from inside the plan's folder, bounded while read,
refused with a finding located at the key, through the loader, ``check`` and ``render``."""

from __future__ import annotations

import hashlib
import json
import os
import re
import tracemalloc
from pathlib import Path

import pytest

from protolint.plan import load_plan, read_source
from protolint.plan.sop_texts import MAX_TEXT_BYTES, read_sop_texts

REPO = Path(__file__).resolve().parents[2]
DEMO = REPO / "demo_protocol" / "plan.yaml"
TEXT_KEY = "    text_file: sops/SOP-RAT-001.md\n"


def plan_folder(tmp_path: Path, text_file: str | None = "sops/SOP-RAT-001.md", body: bytes | None = None) -> Path:
    """The demo plan in ``tmp_path/plan`` with its first SOP pointing to ``text_file``."""
    folder = tmp_path / "plan"
    (folder / "sops").mkdir(parents=True)
    text = DEMO.read_text(encoding="utf-8")
    assert TEXT_KEY in text
    text = text.replace(TEXT_KEY, f"    text_file: {json.dumps(text_file)}\n" if text_file is not None else "")
    # The other two SOPs keep their texts: copy them.
    for name in ("SOP-IMG-002.md", "SOP-MON-003.md"):
        (folder / "sops" / name).write_bytes((DEMO.parent / "sops" / name).read_bytes())
    if body is not None:
        (folder / "sops" / "SOP-RAT-001.md").write_bytes(body)
    (folder / "plan.yaml").write_text(text, encoding="utf-8")
    return folder / "plan.yaml"


def text_problems(plan: Path) -> list:
    return [p for p in load_plan(read_source(str(plan))).problems if p.rule.startswith("schema/text-file")]


def key_line(plan: Path) -> int:
    return next(n for n, line in enumerate(plan.read_text(encoding="utf-8").splitlines(), 1)
                if line.startswith("    text_file:"))


def test_a_text_inside_the_folder_is_read_with_its_digest(tmp_path: Path) -> None:
    body = "# Scope\n\nInvented test text.\n".encode()
    plan = plan_folder(tmp_path, body=body)
    loaded = load_plan(read_source(str(plan)))
    assert loaded.problems == () and loaded.plan is not None
    first = loaded.sop_texts[0]
    assert (first.sop_id, first.path, first.text, first.size) == ("SOP-RAT-001", "sops/SOP-RAT-001.md", body.decode(), len(body))
    assert first.sha256 == hashlib.sha256(body).hexdigest()
    assert loaded.plan.sops[0].text_file == "sops/SOP-RAT-001.md"


def test_a_link_that_stays_inside_the_folder_is_followed(tmp_path: Path) -> None:
    plan = plan_folder(tmp_path, "current.md", body=b"# Text\n")
    (plan.parent / "current.md").symlink_to(plan.parent / "sops" / "SOP-RAT-001.md")
    assert text_problems(plan) == []


def test_a_byte_order_mark_is_allowed(tmp_path: Path) -> None:
    plan = plan_folder(tmp_path, body="\ufeff# Text\n".encode())
    assert load_plan(read_source(str(plan))).sop_texts[0].text == "# Text\n"


@pytest.mark.parametrize("written, rule, words", [
    ("/etc/passwd", "outside-folder", "an absolute path is not allowed"),
    ("~/notes.md", "outside-folder", "an absolute path is not allowed"),
    ("C:/sops/x.md", "outside-folder", "an absolute path is not allowed"),
    ("../outside.md", "outside-folder", "'..' is not allowed"),
    ("sops/../../outside.md", "outside-folder", "'..' is not allowed"),
    ("sops/../sops/SOP-RAT-001.md", "outside-folder", "'..' is not allowed"),
    ("sops\\SOP-RAT-001.md", "outside-folder", "with '/' between folders"),
    ("sops/missing.md", "unreadable", "no such file in the plan's folder"),
    ("sops", "unreadable", "is a folder"),
])
def test_paths_that_lead_out_or_nowhere_are_refused_at_the_key(tmp_path: Path, written: str, rule: str, words: str) -> None:
    (tmp_path / "outside.md").write_text("outside the plan folder", encoding="utf-8")
    plan = plan_folder(tmp_path, written, body=b"# Text\n")
    [problem] = text_problems(plan)
    assert problem.rule == f"schema/text-file-{rule}" and words in problem.message
    assert (problem.location.line, problem.location.column) == (key_line(plan), 5)
    assert problem.pointer == "/sops/0/text_file"


def test_a_symbolic_link_out_of_the_folder_is_refused(tmp_path: Path) -> None:
    secret = tmp_path / "secret.md"
    secret.write_text("not for the binder", encoding="utf-8")
    plan = plan_folder(tmp_path, "sops/linked.md")
    (plan.parent / "sops" / "linked.md").symlink_to(secret)
    [problem] = text_problems(plan)
    assert problem.rule == "schema/text-file-outside-folder" and "symbolic link" in problem.message


def test_a_linked_folder_out_of_the_plan_folder_is_refused(tmp_path: Path) -> None:
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    (elsewhere / "x.md").write_text("# x\n", encoding="utf-8")
    plan = plan_folder(tmp_path, "shared/x.md")
    (plan.parent / "shared").symlink_to(elsewhere, target_is_directory=True)
    [problem] = text_problems(plan)
    assert problem.rule == "schema/text-file-outside-folder"


def test_a_pipe_is_refused_without_waiting_for_a_writer(tmp_path: Path) -> None:
    plan = plan_folder(tmp_path, "sops/pipe.md")
    os.mkfifo(plan.parent / "sops" / "pipe.md")
    [problem] = text_problems(plan)
    assert problem.rule == "schema/text-file-unreadable" and "not a regular file" in problem.message


def test_a_huge_file_is_refused_after_reading_no_more_than_the_limit(tmp_path: Path) -> None:
    plan = plan_folder(tmp_path, body=b"")
    with open(plan.parent / "sops" / "SOP-RAT-001.md", "wb") as handle:
        handle.truncate(2 * 1024 ** 3)  # 2 GiB, sparse: nothing on disk, all of it readable
    source = read_source(str(plan))  # the plan itself is read before memory is counted
    tracemalloc.start()
    try:
        _, [problem] = read_sop_texts(source)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert problem.rule == "schema/text-file-unreadable" and f"larger than {MAX_TEXT_BYTES:,} bytes" in problem.message
    assert peak < 4 * MAX_TEXT_BYTES  # the limit and its chunks, never the file


@pytest.mark.parametrize("body, words", [
    ("# Text\n".encode("utf-16"), "not UTF-8 text"),
    (b"# Text\n\xff\xfe\n", "line 2: not UTF-8 text"),
    (b"# Text\n\nA NUL \x00 here\n", "line 3: control character U+0000"),
    (b"\x1b[31mred\x1b[0m\n", "control character U+001B"),
    # A C1 control (here CSI, U+009B) is refused as in a plan's own values.
    ("# Text\n\u009b31mred\n".encode("utf-8"), "line 2: control character U+009B"),
])
def test_text_that_is_not_plain_utf8_is_refused(tmp_path: Path, body: bytes, words: str) -> None:
    plan = plan_folder(tmp_path, body=body)
    [problem] = text_problems(plan)
    assert problem.rule == "schema/text-file-unreadable" and words in problem.message


def test_a_plan_from_standard_input_cannot_name_text_files(cli) -> None:
    result = cli("check", "-", "--format", "json", input=DEMO.read_bytes())
    findings = json.loads(result.output)["plans"][0]["findings"]
    assert {f["rule"] for f in findings if f["pointer"].endswith("/text_file")} == {"schema/text-file-unreadable"}
    assert all("standard input has no folder" in f["message"] for f in findings if f["pointer"].endswith("/text_file"))
    assert result.exit_code == 1


def test_check_reports_it_and_render_refuses_with_one_located_line(cli_process, tmp_path: Path) -> None:
    plan = plan_folder(tmp_path, "../../etc/passwd")
    checked = cli_process("check", plan)
    assert checked.returncode == 1 and "schema/text-file-outside-folder" in checked.stdout
    assert f"plan.yaml:{key_line(plan)}:5:" in checked.stdout
    target = tmp_path / "binder.pdf"
    rendered = cli_process("render", "binder", plan, "--output", target)
    assert rendered.returncode == 2 and "Traceback" not in rendered.stderr
    assert re.fullmatch(rf".*plan\.yaml:{key_line(plan)}:5: SOP text file '\.\./\.\./etc/passwd': '\.\.' is not allowed.*\n",
                        rendered.stderr)
    assert not target.exists() and "root:" not in rendered.stderr + rendered.stdout


def test_the_checks_are_listed_with_the_other_loader_checks(cli) -> None:
    listing = json.loads(cli("rules", "--format", "json").output)
    ids = {entry["id"] for entry in (listing if isinstance(listing, list) else listing["rules"])}
    assert {"schema/text-file-outside-folder", "schema/text-file-unreadable"} <= ids
