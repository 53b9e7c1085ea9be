from __future__ import annotations

import subprocess
import sys

import pytest

from protolint.report import FORMATS, render_report


def test_every_format_renders_and_carries_the_caution(result, rules):
    from protolint import CAUTION

    first_words = " ".join(CAUTION.split()[:6])
    for fmt in FORMATS:
        text = render_report(fmt, result, rules)
        assert text.endswith("\n"), fmt
        # JSON/SARIF/JUnit carry the caution verbatim; text wraps it and markdown quotes it.
        assert first_words in " ".join(text.split()), fmt


def test_unknown_format_names_the_choices(result, rules):
    with pytest.raises(ValueError, match="text, json, sarif, junit, markdown.*'yaml'"):
        render_report("yaml", result, rules)


def test_text_report_does_not_import_xml_machinery():
    # The pre-commit path must stay light: rendering text must not pull in ElementTree.
    code = (
        "import sys\n"
        "from protolint.findings import CheckResult\n"
        "from protolint.report import render_report\n"
        "render_report('text', CheckResult(plans=(), tool_version='0'), [])\n"
        "print('xml.etree.ElementTree' in sys.modules)\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
