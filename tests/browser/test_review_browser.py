"""The review report in a real browser: headless Chromium driven by Selenium.

Chromium and its driver come from the Debian packages ``chromium`` and ``chromium-driver``
(``.ci/run`` installs them); nothing is downloaded at run time: the driver path is given, so
Selenium Manager is not consulted, and the browser runs with its background networking off.
Every test skips, with the reason, where Chromium, the driver or Selenium is missing.

The screenshot and the printed PDFs are written to the test's folder, and also to
``$PROTOLINT_BROWSER_ARTIFACTS`` when that is set (CI keeps them for a person to look at).
"""

from __future__ import annotations

import base64
import io
import json
import os
import shutil
from pathlib import Path

import pytest

selenium = pytest.importorskip("selenium", reason="Selenium is not installed (test extra)")

from selenium import webdriver  # noqa: E402
from selenium.webdriver.chrome.service import Service  # noqa: E402
from selenium.webdriver.common.by import By  # noqa: E402
from selenium.webdriver.common.print_page_options import PrintOptions  # noqa: E402

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
DRIVER = shutil.which("chromedriver") or ("/usr/bin/chromedriver" if Path("/usr/bin/chromedriver").exists() else None)

pytestmark = pytest.mark.skipif(CHROMIUM is None or DRIVER is None,
                                reason="headless tests need the Debian packages chromium and chromium-driver")

DEMO = Path(__file__).resolve().parents[2] / "demo_protocol" / "plan.yaml"


def _demo_findings() -> list[tuple[str, str]]:
    """(severity or "waived", family) of every demo finding, in report order, from the JSON report."""
    from click.testing import CliRunner

    from protolint.cli import main

    report = json.loads(CliRunner().invoke(main, ["check", str(DEMO), "--format", "json"]).output)
    findings = report["plans"][0]["findings"]
    ordered = sorted(findings, key=lambda f: (f["line"], f["column"], f["rule"], f["message"]))
    return [("waived" if f["waived"] else f["severity"], f["rule"].split("/")[0]) for f in ordered]


DEMO_FINDINGS = _demo_findings()
FINDINGS_IN_DEMO = len(DEMO_FINDINGS)
ERRORS_IN_DEMO = sum(1 for severity, _ in DEMO_FINDINGS if severity == "error")


def _options(profile: Path, *, script: bool = True) -> webdriver.ChromeOptions:
    options = webdriver.ChromeOptions()
    options.binary_location = CHROMIUM
    for flag in ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-extensions",
                 "--disable-default-apps", f"--user-data-dir={profile}", "--window-size=1280,1000"):
        options.add_argument(flag)
    options.set_capability("goog:loggingPrefs", {"browser": "ALL", "performance": "ALL"})
    if not script:
        options.add_experimental_option("prefs", {"profile.managed_default_content_settings.javascript": 2})
    return options


def _start(profile: Path, *, script: bool = True) -> webdriver.Chrome:
    # An explicit driver path: Selenium then never looks for, or downloads, a driver itself.
    return webdriver.Chrome(service=Service(executable_path=DRIVER), options=_options(profile, script=script))


@pytest.fixture(scope="module")
def report(tmp_path_factory) -> Path:
    from click.testing import CliRunner

    from protolint.cli import main

    out = tmp_path_factory.mktemp("report") / "review.html"
    result = CliRunner().invoke(main, ["check", str(DEMO), "--format", "html", "--output", str(out)])
    assert result.exit_code == 1, result.output   # the demo has errors on purpose
    return out


@pytest.fixture(scope="module")
def browser(tmp_path_factory):
    driver = _start(tmp_path_factory.mktemp("profile"))
    yield driver
    driver.quit()


@pytest.fixture(scope="module")
def loaded(browser, report):
    """The report opened once; the console and network logs of that load."""
    # Start from a blank page and drain the logs, so they hold this page's load alone (the
    # browser's own start-up pages are not the report's requests).
    browser.get("about:blank")
    browser.get_log("browser")
    browser.get_log("performance")
    browser.get(report.as_uri())
    console = browser.get_log("browser")
    performance = [json.loads(entry["message"])["message"] for entry in browser.get_log("performance")]
    return {"console": console, "network": performance}


def _artifact(tmp_path: Path, name: str, data: bytes) -> Path:
    path = tmp_path / name
    path.write_bytes(data)
    folder = os.environ.get("PROTOLINT_BROWSER_ARTIFACTS")
    if folder:
        Path(folder).mkdir(parents=True, exist_ok=True)
        shutil.copy(path, Path(folder) / name)
    return path


def test_page_loads_without_console_messages(loaded, browser):
    # A CSP violation (e.g. the script's hash out of date) or a script error shows up here.
    problems = [entry for entry in loaded["console"] if entry["level"] in ("SEVERE", "WARNING")]
    assert problems == []
    assert browser.title.startswith("protolint review report")


def test_no_request_leaves_the_file(loaded, report):
    requests = [event["params"]["request"]["url"] for event in loaded["network"]
                if event["method"] == "Network.requestWillBeSent"]
    assert report.as_uri() in requests          # the recording works: the page itself was requested
    assert [url for url in requests if url != report.as_uri()] == []


def _visible(browser) -> list[tuple[str, str]]:
    return [(item.get_attribute("data-severity"), item.get_attribute("data-family"))
            for item in browser.find_elements(By.CSS_SELECTOR, "article.finding") if item.is_displayed()]


def _box(browser, name: str, value: str):
    return browser.find_element(By.CSS_SELECTOR, f'#filters input[name="{name}"][value="{value}"]')


def test_filters_hide_and_show_the_right_findings(loaded, browser):
    everything = _visible(browser)
    assert everything == DEMO_FINDINGS and FINDINGS_IN_DEMO > 20
    assert browser.find_element(By.ID, "filters").is_displayed()
    assert browser.find_element(By.ID, "shown").text == f"{FINDINGS_IN_DEMO} of {FINDINGS_IN_DEMO} findings shown"

    for severity in ("warning", "note", "waived"):
        _box(browser, "severity", severity).click()
    errors_only = _visible(browser)
    assert errors_only == [pair for pair in everything if pair[0] == "error"] and len(errors_only) == ERRORS_IN_DEMO > 0
    assert browser.find_element(By.ID, "shown").text == f"{ERRORS_IN_DEMO} of {FINDINGS_IN_DEMO} findings shown"

    _box(browser, "family", "evidence").click()       # errors outside the evidence family
    assert _visible(browser) == [pair for pair in everything if pair[0] == "error" and pair[1] != "evidence"]

    for severity in ("warning", "note", "waived"):
        _box(browser, "severity", severity).click()
    _box(browser, "family", "evidence").click()
    assert _visible(browser) == everything


def test_screenshot_and_printed_pdfs(loaded, browser, tmp_path):
    from pypdf import PdfReader

    screenshot = _artifact(tmp_path, "review-screen.png", browser.get_screenshot_as_png())
    assert screenshot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"

    # Filter the screen down to errors: paper still shows every finding.
    for severity in ("warning", "note", "waived"):
        _box(browser, "severity", severity).click()
    try:
        for paper, (width, height) in (("a4", (21.0, 29.7)), ("letter", (21.59, 27.94))):
            options = PrintOptions()
            options.page_width, options.page_height = width, height
            options.background = True
            pdf = _artifact(tmp_path, f"review-{paper}.pdf", base64.b64decode(browser.print_page(options)))
            reader = PdfReader(io.BytesIO(pdf.read_bytes()))
            text = " ".join(" ".join(page.extract_text().split()) for page in reader.pages)
            for rule in ("schedule/rating-before-raters-ready", "documents/deviations-incomplete",
                         "monitoring/no-duplicate-ratings", "sop/effective-too-late"):
                assert rule in text, (paper, rule)
            assert "Severity" not in text.split("demo_protocol/plan.yaml")[0]   # no filter form on paper
            assert "does not replace the trial statistician" in text
            box = reader.pages[0].mediabox
            assert abs(float(box.width) - width / 2.54 * 72) < 2 and abs(float(box.height) - height / 2.54 * 72) < 2
            # Findings flow on from page to page: about two thirds of a page each when this was
            # written (27 findings, 18 A4 pages). A layout that gives each finding a page of its
            # own (an earlier draft: 26 pages for 23 findings) fails here.
            assert len(reader.pages) <= 0.8 * FINDINGS_IN_DEMO + 2, (paper, len(reader.pages))
    finally:
        for severity in ("warning", "note", "waived"):
            _box(browser, "severity", severity).click()


def test_print_gives_findings_the_width_of_the_page(loaded, browser):
    browser.execute_cdp_cmd("Emulation.setEmulatedMedia", {"media": "print"})
    try:
        widths = browser.execute_script(
            "var body = document.body.getBoundingClientRect().width;"
            "return Array.from(document.querySelectorAll('article.finding p.message'))"
            ".map(function (p) { return p.getBoundingClientRect().width / body; });")
        assert len(widths) == FINDINGS_IN_DEMO and min(widths) > 0.9
        assert not browser.find_element(By.ID, "filters").is_displayed()
    finally:
        browser.execute_cdp_cmd("Emulation.setEmulatedMedia", {"media": ""})


def test_without_script_every_finding_is_visible_and_no_filter_shows(report, tmp_path):
    driver = _start(tmp_path / "profile", script=False)
    try:
        driver.get(report.as_uri())
        assert len(_visible(driver)) == FINDINGS_IN_DEMO
        assert not driver.find_element(By.ID, "filters").is_displayed()
        assert driver.find_element(By.ID, "shown").text == ""    # the script did not run
    finally:
        driver.quit()
