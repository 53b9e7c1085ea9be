"""`check --format json` and `--format sarif` record every SOP text the check read, with its SHA-256.

The digests are computed here with hashlib from the files' bytes, independently of the reader,
so a report that named the wrong file or hashed the decoded text would fail.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import jsonschema
import pytest

from tests.conftest import DEMO_PLAN, write_demo_plan

from .conftest import SCHEMAS

TEXTS = {"SOP-RAT-001": "sops/SOP-RAT-001.md", "SOP-IMG-002": "sops/SOP-IMG-002.md", "SOP-MON-003": "sops/SOP-MON-003.md"}


def digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.fixture
def plan(tmp_path: Path) -> Path:
    """The demo plan and its SOP texts in tmp_path/trial, one text edited (so its digest is not the demo's)."""
    folder = tmp_path / "trial"
    folder.mkdir()
    path = write_demo_plan(folder / "plan.yaml", DEMO_PLAN.read_text(encoding="utf-8"))
    edited = folder / "sops" / "SOP-IMG-002.md"
    edited.write_bytes(b"\xef\xbb\xbf" + edited.read_bytes() + "Invented sentence for the test, caf\u00e9.\n".encode())
    return path


def json_report(cli, plan: Path, *extra: str) -> dict:
    return json.loads(cli("check", plan, "--format", "json", "--fail-on", "never", *extra).output)


def test_json_lists_each_text_with_its_path_and_the_digest_of_its_bytes(cli, plan):
    [entry] = json_report(cli, plan)["plans"]
    records = {record["sop"]: record for record in entry["sop_texts"]}
    assert list(records) == list(TEXTS)
    for sop, written in TEXTS.items():
        on_disk = plan.parent / written
        assert records[sop] == {"sop": sop, "text_file": written, "file": str(on_disk), "sha256": digest(on_disk),
                                "bytes": on_disk.stat().st_size}
    # The edited text has a byte-order mark: the digest is of the file's bytes, not of the decoded text.
    assert records["SOP-IMG-002"]["sha256"] != hashlib.sha256(DEMO_PLAN.parent.joinpath(TEXTS["SOP-IMG-002"]).read_bytes()).hexdigest()


def test_json_records_the_path_beside_the_plan_as_the_plan_was_named(cli, plan, monkeypatch):
    monkeypatch.chdir(plan.parent.parent)
    [entry] = json_report(cli, "trial/plan.yaml")["plans"]
    assert [record["file"] for record in entry["sop_texts"]] == [f"trial/{path}" for path in TEXTS.values()]


def test_a_text_that_cannot_be_read_is_a_finding_not_a_record(cli, plan):
    (plan.parent / "sops" / "SOP-MON-003.md").unlink()
    [entry] = json_report(cli, plan)["plans"]
    assert [record["sop"] for record in entry["sop_texts"]] == ["SOP-RAT-001", "SOP-IMG-002"]
    [problem] = [f for f in entry["findings"] if f["rule"] == "schema/text-file-unreadable"]
    assert problem["pointer"] == "/sops/2/text_file" and "no such file" in problem["message"]


def test_texts_read_are_recorded_when_the_plan_has_schema_problems(cli, plan):
    plan.write_text(plan.read_text(encoding="utf-8").replace("interval_weeks: 52", "interval_weeks: fifty-two"),
                    encoding="utf-8")
    [entry] = json_report(cli, plan)["plans"]
    assert entry["rules_not_run"] and [record["sop"] for record in entry["sop_texts"]] == list(TEXTS)


def test_a_plan_without_text_files_has_an_empty_list(cli, tmp_path, starter_text):
    path = tmp_path / "plan.yaml"
    path.write_text(starter_text, encoding="utf-8")
    assert "\n    text_file:" not in starter_text   # the starter shows the key only in a comment
    [entry] = json_report(cli, path)["plans"]
    assert entry["sop_texts"] == []


def test_sarif_artifacts_carry_each_text_with_its_hash_and_stay_valid(cli, plan):
    log = json.loads(cli("check", plan, "--format", "sarif", "--fail-on", "never").output)
    jsonschema.Draft4Validator(json.loads((SCHEMAS / "sarif-schema-2.1.0.json").read_text(encoding="utf-8"))).validate(log)
    [run] = log["runs"]
    artifacts = run["artifacts"]
    assert artifacts[0]["location"]["uri"] == f"file://{plan}" and artifacts[0]["hashes"] == {"sha-256": digest(plan)}
    texts = [artifact for artifact in artifacts if "sop" in artifact.get("properties", {})]
    assert [artifact["properties"]["sop"] for artifact in texts] == list(TEXTS)
    for artifact in texts:
        on_disk = plan.parent / artifact["properties"]["textFile"]
        assert artifact["location"]["uri"] == f"file://{on_disk}"
        assert artifact["hashes"] == {"sha-256": digest(on_disk)} and artifact["length"] == on_disk.stat().st_size
        assert artifact["properties"]["plan"] == artifacts[0]["location"]["uri"]


def test_sarif_lists_a_text_shared_by_two_plans_once(cli, plan, tmp_path, monkeypatch):
    second = plan.parent / "second.yaml"
    second.write_text(plan.read_text(encoding="utf-8"), encoding="utf-8")
    monkeypatch.chdir(plan.parent)
    log = json.loads(cli("check", "plan.yaml", "second.yaml", "--format", "sarif", "--fail-on", "never").output)
    uris = [artifact["location"]["uri"] for artifact in log["runs"][0]["artifacts"]]
    assert uris == ["plan.yaml", "second.yaml", *TEXTS.values()]
    # Every result still points at a valid artifact index after the texts were appended.
    for result in log["runs"][0]["results"]:
        location = result["locations"][0]["physicalLocation"]["artifactLocation"]
        assert uris[location["index"]] == location["uri"]


def test_text_markdown_and_html_name_each_text_with_the_start_of_its_digest(cli, plan):
    short = {path: digest(plan.parent / path)[:12] for path in TEXTS.values()}
    text = cli("check", plan, "--fail-on", "never").output
    line = " ".join(text[text.index("SOP texts read (SHA-256): "):].split("\n\n")[0].split())
    assert line == "SOP texts read (SHA-256): " + ", ".join(f"{path} {short[path]}…" for path in TEXTS.values())
    markdown = cli("check", plan, "--fail-on", "never", "--format", "markdown").output
    assert "SOP texts read (SHA-256): " + ", ".join(f"{path} {short[path]}…" for path in TEXTS.values()) in markdown
    html = cli("check", plan, "--fail-on", "never", "--format", "html").output
    # Each text on one line in the browser: a name never breaks at its hyphens.
    assert ("<dt>SOP texts read (SHA-256)</dt><dd>"
            + ", ".join(f'<span class="sop-text">{p} {short[p]}…</span>' for p in TEXTS.values()) + "</dd>") in html


def test_a_hostile_text_file_name_is_escaped_in_markdown_and_html(cli, plan):
    name = "sops/<img src=x>_*a*.md"
    (plan.parent / name).write_bytes((plan.parent / TEXTS["SOP-MON-003"]).read_bytes())
    plan.write_text(plan.read_text(encoding="utf-8").replace(f"text_file: {TEXTS['SOP-MON-003']}", f"text_file: '{name}'"),
                    encoding="utf-8")
    markdown = cli("check", plan, "--fail-on", "never", "--format", "markdown").output
    assert "sops/&lt;img src=x&gt;\\_\\*a\\*.md" in markdown and "<img" not in markdown
    html = cli("check", plan, "--fail-on", "never", "--format", "html").output
    assert "sops/&lt;img src=x&gt;_*a*.md" in html and "<img" not in html
