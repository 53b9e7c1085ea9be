"""Plans and data files refuse the same control characters, from one definition.

The set (C0 controls other than tab, line feed and carriage return; DEL; C1 controls) is
written out here by code point, independently of the pattern, and each reader is asked about
every code point below U+00A0 and a few above.
"""

from __future__ import annotations

import pytest

from protolint import errors
from protolint.data import rawfile
from protolint.data.where import DataError
from protolint.errors import LocatedError
from protolint.plan import source

REFUSED = {*range(0x00, 0x09), 0x0B, 0x0C, *range(0x0E, 0x20), *range(0x7F, 0xA0)}
CODE_POINTS = [*range(0x00, 0xA0), 0xA0, 0xE9, 0x2028, 0x2029, 0xFEFF]


def _plan_refuses(code: int) -> bool:
    # Written as an escape in a double-quoted value, the way a control character gets past
    # the YAML reader's own refusal of raw ones.
    escape = f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"
    try:
        source.load_source(f'study: "a{escape}b"\n'.encode("ascii"), "plan.yaml")
    except LocatedError as error:
        assert "control character" in str(error.message), error.message
        return True
    return False


def _data_refuses(code: int) -> bool:
    raw = rawfile.RawFile("ratings.csv", f"subject,r1\nS1,a{chr(code)}b\n".encode("utf-8"))
    try:
        rawfile.decode_text(raw)
    except DataError as error:
        # NUL has its own message (a binary file, or UTF-16 without a byte-order mark).
        assert ("NUL byte" if code == 0 else f"control character U+{code:04X}") in str(error), error
        return True
    return False


def test_both_readers_use_the_one_definition() -> None:
    assert rawfile.CONTROL_CHARACTERS is errors.CONTROL_CHARACTERS
    assert source.CONTROL_CHARACTERS is errors.CONTROL_CHARACTERS


@pytest.mark.parametrize("reader", [_plan_refuses, _data_refuses], ids=["plan", "data"])
def test_each_reader_refuses_exactly_the_control_characters(reader) -> None:
    refused = {code for code in CODE_POINTS if reader(code)}
    assert refused == REFUSED
