"""Fixtures for the document tests: loaded plans and one PDF render of the demo per session."""

from __future__ import annotations

from pathlib import Path

import pytest

FIXTURES = Path(__file__).resolve().parent / "fixtures"
REPO = Path(__file__).resolve().parents[2]


@pytest.fixture(scope="session")
def demo_loaded():
    from protolint.plan import read_plan_file

    return read_plan_file(str(REPO / "demo_protocol" / "plan.yaml"))


@pytest.fixture(scope="session")
def minimal_loaded():
    from protolint.plan import read_plan_file

    return read_plan_file(str(FIXTURES / "minimal.yaml"))


@pytest.fixture(scope="session")
def demo_binder_pdf(demo_loaded) -> bytes:
    from protolint.render import render

    return render("binder", "pdf", demo_loaded)


@pytest.fixture(autouse=True)
def _no_source_date_epoch(monkeypatch: pytest.MonkeyPatch) -> None:
    # Documents take their date from SOURCE_DATE_EPOCH when set; tests choose it explicitly.
    monkeypatch.delenv("SOURCE_DATE_EPOCH", raising=False)
