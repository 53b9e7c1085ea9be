"""The ``protolint design`` report as HTML and PDF.

Same machinery as the plan documents: the one Jinja environment (autoescaped, strict), matplotlib
charts drawn to deterministic inline SVG with the style of ``render.charts``, and the locked-down
PDF/A writer of ``render.pdf``, which embeds the pilot data file that produced the report.
"""

from __future__ import annotations

import math
import os
import re
from dataclasses import dataclass
from datetime import date, datetime, timezone
from typing import Any

from protolint import CAUTION, __version__
from protolint.analysis.design import COMPONENT_KEYS, COMPONENT_WORDS, DesignReport
from protolint.render.charts import MATPLOTLIB_STYLE, inline_svg
from protolint.render.document import Fact, document_libraries, source_date_epoch
from protolint.wording import plural

_BLUE, _RED, _GOLD, _GREY = "#1f4e79", "#b03a2e", "#7a5c00", "#8a949e"


@dataclass(frozen=True)
class DesignControl:
    """What base.html.j2 and the document-control table need."""

    title: str
    running_title: str
    study_id: str
    study_title: str
    sponsor: str | None
    data_file: str
    data_sha256: str
    plan_file: str | None
    plan_sha256: str | None
    document_date: date
    date_basis: str
    tool_version: str
    libraries: tuple[Fact, ...]
    """Installed versions of the libraries that computed, drew and laid out the report."""
    paper: str
    caution: str


def document_date(report: DesignReport) -> tuple[date, str]:
    """The plan's date, else SOURCE_DATE_EPOCH, else the pilot file's modification date: never the clock."""
    if report.plan is not None:
        return report.plan.plan_date, "plan date"
    epoch = source_date_epoch()
    if epoch is not None:
        return epoch, "SOURCE_DATE_EPOCH"
    stamp = os.stat(report.file).st_mtime
    return datetime.fromtimestamp(stamp, tz=timezone.utc).date(), "modification date of the data file"


def _control(report: DesignReport, paper: str) -> DesignControl:
    day, basis = document_date(report)
    plan = report.plan
    study_id = plan.study_id if plan else "pilot"
    study_title = plan.study_title if plan else f"Pilot ratings {os.path.basename(report.file)}"
    return DesignControl(
        title="Measurement design report", running_title=f"{study_id} · measurement design report",
        study_id=study_id, study_title=study_title, sponsor=plan.sponsor if plan else None,
        data_file=report.file, data_sha256=report.sha256, plan_file=plan.file if plan else None,
        plan_sha256=plan.sha256 if plan else None, document_date=day, date_basis=basis,
        tool_version=__version__, libraries=document_libraries("design"), paper={"a4": "A4", "letter": "letter"}[paper], caution=CAUTION)


def _figure(width: float, height: float):  # noqa: ANN202 - matplotlib objects
    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    return plt, plt.subplots(figsize=(width, height))


_ID = re.compile(r'(\sid="|href="#|url\(#)([^")]+)')


def _svg(plt: Any, figure: Any, prefix: str) -> str:
    """Inline SVG whose element ids carry ``prefix``: matplotlib numbers ids per figure, and
    several charts in one HTML document must not define the same id twice."""
    import io

    buffer = io.StringIO()
    try:
        figure.savefig(buffer, format="svg", bbox_inches="tight", metadata={"Date": None})
    finally:
        plt.close(figure)
    return _ID.sub(lambda m: f"{m.group(1)}{prefix}-{m.group(2)}", inline_svg(buffer.getvalue()))


def components_chart(report: DesignReport) -> str:
    """Horizontal bars: each component's share of the variance of one rating."""
    import matplotlib

    g = report.g
    with matplotlib.rc_context(MATPLOTLIB_STYLE):  # type: ignore[arg-type]
        plt, (figure, axes) = _figure(6.2, 0.45 * len(g.components) + 0.8)
        labels = [f"{COMPONENT_KEYS[c.effect]} ({c.effect})" for c in g.components][::-1]
        shares = [g.share(c.effect) * 100 if g.total > 0 else 0.0 for c in g.components][::-1]
        colours = [_BLUE if c.effect == "p" else (_GREY if c.set_to_zero else _RED) for c in g.components][::-1]
        axes.barh(labels, shares, color=colours)
        for y, (share, c) in enumerate(zip(shares, g.components[::-1])):
            text = "0 (negative estimate)" if c.set_to_zero else f"{share:.1f} %"
            axes.annotate(text, (share, y), textcoords="offset points", xytext=(4, -3), fontsize=8)
        axes.set_xlabel("share of the variance of a single rating (%)")
        axes.set_xlim(0, max(max(shares) * 1.25, 10))
        axes.grid(True, axis="x", color="#dddddd", linewidth=0.6)
        return _svg(plt, figure, "components")


def dstudy_chart(report: DesignReport) -> str:
    """Coefficient against raters, one line per number of occasions (solid: the coefficient used)."""
    import matplotlib

    rows = report.dstudy
    occasions = sorted({m for _, m, _, _ in rows})
    palette = [_BLUE, _RED, _GOLD, "#2e7d32", "#6a1b9a", "#00838f", "#5d4037", "#ad1457", "#455a64", "#9e9d24"]
    with matplotlib.rc_context(MATPLOTLIB_STYLE):  # type: ignore[arg-type]
        plt, (figure, axes) = _figure(6.2, 2.8)
        for index, m in enumerate(occasions):
            ks = [k for k, mm, _, _ in rows if mm == m]
            g = [e for _, mm, e, _ in rows if mm == m]
            phi = [p for _, mm, _, p in rows if mm == m]
            colour = palette[index % len(palette)]
            used, other = (g, phi) if report.coefficient == "g" else (phi, g)
            axes.plot(ks, used, color=colour, linewidth=1.6, marker="o", markersize=3,
                      label=plural(m, "occasion"))
            axes.plot(ks, other, color=colour, linewidth=0.9, linestyle="--")
        name = "Eρ²" if report.coefficient == "g" else "Φ"
        other_name = "Φ" if report.coefficient == "g" else "Eρ²"
        axes.set_xlabel("raters per assessment (k)")
        axes.set_ylabel(f"{name} (solid), {other_name} (dashed)")
        finite = [v for _, _, e, p in rows for v in (e, p) if v == v]
        low = min(finite, default=0.0)
        # Start the axis a little below the lowest value so that the curves are told apart.
        axes.set_ylim(max(0.0, math.floor(low * 10) / 10 - 0.1), 1.0)
        axes.set_xticks(sorted({k for k, _, _, _ in rows}))
        axes.grid(True, color="#dddddd", linewidth=0.6)
        axes.legend(frameon=False, loc="upper center", bbox_to_anchor=(0.5, -0.2), ncol=min(len(occasions), 5), fontsize=8)
        return _svg(plt, figure, "dstudy")


def frontier_chart(report: DesignReport) -> str:
    """Total cost against participants to enrol for every design; the frontier joined, the optimum marked."""
    import matplotlib

    opt = report.optimisation
    assert opt is not None
    feasible = [p for p in opt.frontier if p.cost is not None]
    with matplotlib.rc_context(MATPLOTLIB_STYLE):  # type: ignore[arg-type]
        plt, (figure, axes) = _figure(6.2, 2.9)
        axes.scatter([p.n_total_enrolled for p in feasible], [p.cost for p in feasible], s=12, color=_GREY,
                     label="design (k raters, m occasions)")
        front = sorted((p for p in feasible if p.efficient), key=lambda p: p.n_total_enrolled or 0)
        axes.plot([p.n_total_enrolled for p in front], [p.cost for p in front], color=_BLUE, linewidth=1.4,
                  marker="o", markersize=4, label="cost frontier")
        if opt.optimum is not None:
            best = opt.optimum
            axes.plot([best.n_total_enrolled], [best.cost], marker="*", markersize=12, color=_GOLD, linestyle="none",
                      label=f"cheapest: k = {best.raters}, m = {best.occasions}")
        point = report.plan_point
        if point is not None and point.cost is not None:
            axes.plot([point.n_total_enrolled], [point.cost], marker="D", markersize=6, color=_RED, linestyle="none",
                      label=f"the plan: k = {point.raters}, m = {point.occasions}")
        axes.set_xlabel("participants to enrol")
        axes.set_ylabel("total cost")
        axes.grid(True, color="#dddddd", linewidth=0.6)
        from matplotlib.ticker import FuncFormatter

        axes.yaxis.set_major_formatter(FuncFormatter(lambda value, _: f"{value:,.0f}"))
        axes.legend(frameon=False, loc="upper center", bbox_to_anchor=(0.5, -0.2), ncol=2, fontsize=8)
        return _svg(plt, figure, "frontier")


def context(report: DesignReport, paper: str) -> dict[str, Any]:
    from protolint.commands._shared import _finite

    data = _finite(report.to_json())  # undefined numbers print as blanks, not "nan"
    words = {COMPONENT_KEYS[effect]: text for effect, text in COMPONENT_WORDS.items()}
    return {
        "control": _control(report, paper),
        "r": data,
        "component_words": words,
        "charts": {
            "components": components_chart(report),
            "dstudy": dstudy_chart(report),
            "frontier": frontier_chart(report) if report.optimisation is not None else None,
        },
    }


def render_html(report: DesignReport, paper: str = "a4") -> str:
    from protolint.render.environment import make_env

    return make_env().get_template("design.html.j2").render(**context(report, paper))


def render_pdf(report: DesignReport, paper: str = "a4") -> bytes:
    from protolint.render.pdf import PdfSource, attachment_if_text, html_to_pdf

    html = render_html(report, paper)
    day, _ = document_date(report)
    from protolint.data.rawfile import text_attachment

    # The pilot file within the data readers' limits; a workbook or transport file is named, not attached.
    pilot_text = text_attachment(report.file)
    return html_to_pdf(html, PdfSource(day, attachment_if_text(
        os.path.basename(report.file), pilot_text, "The pilot ratings this report was computed from")), paper=paper)
