"""The full texts of the plan's SOPs: Markdown files the plan points to with ``text_file``.

A plan is edited by many hands and checked unattended, so a path in it is untrusted. A text
file is read only when it lies inside the plan's own folder (or below it):

* the path must be relative, written with ``/``, and may not contain ``..`` (even one that
  would come back inside: a reviewer should see at a glance where the file is);
* after every symbolic link is followed, the file must still be inside the plan's folder;
* it must be a regular file (never a FIFO or a device, which could block or never end), and
  it is opened without following a final symbolic link, so the file that was checked is the
  file that is read;
* it is read with a size limit enforced while reading, so an endless or huge file costs at most
  ``MAX_TEXT_BYTES`` of memory; it must be UTF-8 without NUL or other control characters.

A problem is a located finding at the ``text_file`` key (``schema/text-file-outside-folder`` or
``schema/text-file-unreadable``), so ``check`` reports it in CI and documents are not rendered
from such a plan. Runs on the raw data whether or not it matches the schema, like the reference
check, and looks only at values of the expected kind.

The texts (with their SHA-256) are what the SOP binder prints and records in its document
control; nothing else reads these files.
"""

from __future__ import annotations

import functools
import hashlib
import os
import re
import stat
from dataclasses import dataclass
from pathlib import Path as FilePath
from pathlib import PurePosixPath

from protolint.bounded import read_at_most
from protolint.findings import Finding, Severity, finding_at
from protolint.plan.source import CONTROL_CHARACTERS, LoadedSource, Path

MAX_TEXT_BYTES = 256 * 1024
"""Largest SOP text read (bytes). A long SOP is some tens of kilobytes of Markdown; at the limit,
hostile Markdown (a quarter of a million brackets) still renders within seconds."""

RULE_OUTSIDE = "schema/text-file-outside-folder"
RULE_UNREADABLE = "schema/text-file-unreadable"



@dataclass(frozen=True)
class SopText:
    """One SOP's text as read: which SOP, the path as the plan writes it, the text, its digest."""

    sop_id: str
    sop_index: int
    path: str
    text: str
    sha256: str
    size: int


class TextFileRefused(Exception):
    """A text file that may not or cannot be read; ``rule`` says which kind of problem."""

    def __init__(self, rule: str, message: str) -> None:
        super().__init__(message)
        self.rule = rule


def read_sop_texts(source: LoadedSource) -> tuple[tuple[SopText, ...], tuple[Finding, ...]]:
    """Every SOP text the plan points to, and a located finding for each one that is refused."""
    sops = source.data.get("sops") if isinstance(source.data, dict) else None
    if not isinstance(sops, list):
        return (), ()
    texts: list[SopText] = []
    problems: list[Finding] = []
    for index, sop in enumerate(sops):
        if not isinstance(sop, dict) or not isinstance(sop.get("text_file"), str):
            continue
        written = sop["text_file"]
        path: Path = ("sops", index, "text_file")
        try:
            raw = read_confined(plan_folder(source.file), written)
            text = decode_text(raw)
        except TextFileRefused as refused:
            problems.append(finding_at(source, path, refused.rule, Severity.ERROR,
                                       f"SOP text file {written!r}: {refused}", at_key=True))
            continue
        texts.append(SopText(sop_label(sop, index), index, written, text, hashlib.sha256(raw).hexdigest(), len(raw)))
    return tuple(texts), tuple(problems)


def sop_label(sop: dict, index: int) -> str:
    """How a text is named in reports: its SOP's id, or its place in the list when the id is
    missing or not text (a schema finding then says so)."""
    return sop["id"] if isinstance(sop.get("id"), str) else f"sops[{index}]"


def plan_folder(plan_file: str) -> FilePath:
    """The folder SOP text paths are relative to: the one holding the plan file."""
    if plan_file == "-":
        raise TextFileRefused(RULE_UNREADABLE, "a plan read from standard input has no folder to read text files from; "
                                               "check the plan file by its path")
    return FilePath(os.path.realpath(FilePath(plan_file).parent))


def read_confined(folder: FilePath, written: str, limit: int = MAX_TEXT_BYTES) -> bytes:
    """The bytes of ``written`` (relative to ``folder``), refused when it leads out of the folder,
    is not a regular file, or is larger than ``limit`` bytes (checked while reading)."""
    relative = _relative_path(written)
    candidate = folder.joinpath(*relative.parts)
    resolved = FilePath(os.path.realpath(candidate))
    if resolved != folder and folder not in resolved.parents:
        raise TextFileRefused(RULE_OUTSIDE, "a symbolic link on the way leads out of the plan's folder; "
                                            "keep SOP texts inside the plan's folder")
    flags = os.O_RDONLY | getattr(os, "O_NOFOLLOW", 0) | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_CLOEXEC", 0)
    try:
        descriptor = os.open(resolved, flags)
    except FileNotFoundError:
        raise TextFileRefused(RULE_UNREADABLE, "no such file in the plan's folder") from None
    except IsADirectoryError:
        raise TextFileRefused(RULE_UNREADABLE, "is a folder, not a Markdown file") from None
    except OSError as error:
        raise TextFileRefused(RULE_UNREADABLE, f"cannot read: {error.strerror}") from None
    try:
        mode = os.fstat(descriptor).st_mode
        if stat.S_ISDIR(mode):
            raise TextFileRefused(RULE_UNREADABLE, "is a folder, not a Markdown file")
        if not stat.S_ISREG(mode):
            raise TextFileRefused(RULE_UNREADABLE, "is not a regular file (a device, a pipe or a socket)")
        return _read_bounded(descriptor, limit)
    finally:
        os.close(descriptor)


def _relative_path(written: str) -> PurePosixPath:
    if not written.strip():
        raise TextFileRefused(RULE_UNREADABLE, "the path is empty")
    if "\\" in written:
        raise TextFileRefused(RULE_OUTSIDE, "write the path with '/' between folders, relative to the plan's folder")
    relative = PurePosixPath(written)
    if relative.is_absolute() or written.startswith("~") or re.match(r"^[A-Za-z]:", written):
        raise TextFileRefused(RULE_OUTSIDE, "an absolute path is not allowed; give the path relative to the plan's folder")
    if ".." in relative.parts:
        raise TextFileRefused(RULE_OUTSIDE, "'..' is not allowed; SOP texts must be inside the plan's folder or below it")
    return relative


def _read_bounded(descriptor: int, limit: int) -> bytes:
    try:
        raw = read_at_most(functools.partial(os.read, descriptor), limit)
    except OSError as error:
        raise TextFileRefused(RULE_UNREADABLE, f"cannot read: {error.strerror}") from None
    if len(raw) > limit:
        raise TextFileRefused(RULE_UNREADABLE, f"larger than {limit:,} bytes, the limit for an SOP text")
    return raw


def decode_text(raw: bytes) -> str:
    """UTF-8 text (a byte-order mark is allowed and dropped) without control characters."""
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as error:
        line = raw[:error.start].count(b"\n") + 1
        raise TextFileRefused(RULE_UNREADABLE, f"line {line}: not UTF-8 text (byte 0x{raw[error.start]:02x}); "
                                               "save the file as UTF-8") from None
    bad = CONTROL_CHARACTERS.search(text)
    if bad:
        line = text.count("\n", 0, bad.start()) + 1
        raise TextFileRefused(RULE_UNREADABLE, f"line {line}: control character U+{ord(bad.group()):04X} "
                                               "is not allowed in an SOP text")
    return text


def text_file_path(plan_file: str, written: str) -> str:
    """The path of a text file named ``written`` in the plan ``plan_file``, as seen from where the
    plan was named (``plans/plan.yaml`` and ``sops/A.md`` give ``plans/sops/A.md``): what a report
    records, so a reader finds the file the check read."""
    return os.path.join(os.path.dirname(plan_file), *PurePosixPath(written).parts)


def text_for(texts: tuple[SopText, ...], sop_index: int) -> SopText | None:
    """The text read for the SOP at position ``sop_index`` of the plan's list, if any."""
    return next((text for text in texts if text.sop_index == sop_index), None)
