"""The drift report for the trial master file: HTML, or PDF/A-3b with the rating data attached.

Rendered with the documents' Jinja environment (autoescaping, ``StrictUndefined``), their
stylesheet and their locked-down PDF writer; charts are matplotlib SVG made safe to inline by
the documents' chart helper. Rater, site and case names come from the data file and are
untrusted: they reach the page only through autoescaped template variables, and in the charts
only as text matplotlib draws as paths.
"""

from __future__ import annotations

import io
import re
from dataclasses import dataclass
from datetime import date
from typing import TYPE_CHECKING, Any

from protolint import CAUTION, __version__
from protolint.render.charts import MATPLOTLIB_STYLE, inline_svg
from protolint.render.document import Fact, document_libraries

if TYPE_CHECKING:
    from protolint.analysis.drift import DriftReport, RaterResult

TITLE = "Rater certification and drift report"


@dataclass(frozen=True)
class DriftControl:
    """What the shared layout (``base.html.j2``) and the document-control block need."""

    title: str
    study_id: str
    study_title: str
    sponsor: str | None
    data_file: str
    data_sha256: str
    plan_file: str | None
    plan_sha256: str | None
    as_of: date
    tool_version: str
    libraries: tuple[Fact, ...]
    """Installed versions of the libraries that computed, drew and laid out the report."""
    paper: str
    caution: str = CAUTION

    @property
    def document_date(self) -> date:
        # The report describes the data as of this date; never the wall clock.
        return self.as_of

    @property
    def running_title(self) -> str:
        return f"{self.study_id} · {self.title} · as of {self.as_of.isoformat()}"


def _figure(width: float, height: float) -> tuple[Any, Any]:
    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    return plt, plt.subplots(1, 2, figsize=(width, height))


def rater_charts(rater: RaterResult, report: DriftReport) -> str:
    """One SVG per rater: the control chart of the rounds (left), the Bland–Altman plot (right)."""
    import matplotlib

    settings = report.chart.settings
    with matplotlib.rc_context(MATPLOTLIB_STYLE):  # type: ignore[arg-type]  # matplotlib types keys as a Literal
        plt, (figure, (chart, ba)) = _figure(7.0, 2.5)
        try:
            days = [r.day for r in rater.rounds]
            values = [r.chart for r in rater.rounds]
            if settings.method == "cusum":
                limit = settings.h or 0.0
                chart.axhline(limit, color="#b03a2e", linestyle="--", linewidth=1, label=f"h = {limit:.2f}")
                chart.set_ylabel("CUSUM, larger side (SD)")
                chart.set_ylim(bottom=0, top=max([limit * 1.3] + [v * 1.1 for v in values]))
            else:
                from protolint.stats.drift import ewma_limit

                limit = ewma_limit(settings.lam or 0.2, settings.L or 3.0)
                for sign in (1, -1):
                    chart.axhline(sign * limit, color="#b03a2e", linestyle="--", linewidth=1)
                chart.axhline(0, color="#888888", linewidth=0.6)
                chart.set_ylabel("EWMA of z")
            if days:
                chart.plot(days, values, marker="o", markersize=3, color="#1f4e79", linewidth=1.2)
                if rater.first_signal is not None:
                    index = days.index(rater.first_signal)
                    chart.plot([days[index]], [values[index]], marker="D", markersize=7, color="#b03a2e",
                               linestyle="none", label=f"first signal {rater.first_signal.isoformat()}")
                import matplotlib.dates as mdates

                chart.xaxis.set_major_formatter(mdates.DateFormatter("%Y-%m"))
                chart.xaxis.set_major_locator(mdates.AutoDateLocator(minticks=3, maxticks=6))
                chart.tick_params(axis="x", labelrotation=30)
            else:
                chart.text(0.5, 0.5, "no monitoring rounds", transform=chart.transAxes, ha="center", color="#555555")
                chart.set_xticks([])
            chart.set_title("Drift chart", fontsize=9)
            chart.grid(True, color="#dddddd", linewidth=0.6)
            if chart.get_legend_handles_labels()[0]:
                chart.legend(frameon=False, fontsize=7, loc="upper left")

            if rater.points:
                xs = [p[0] for p in rater.points]
                ys = [p[1] for p in rater.points]
                ba.scatter(xs, ys, s=9, color="#1f4e79", alpha=0.6, linewidths=0)
            limits = rater.bland_altman
            if limits is not None:
                ba.axhline(limits.bias, color="#1a1a1a", linewidth=1, label=f"bias {limits.bias:+.2f}")
                for index, value in enumerate(limits.loa):
                    ba.axhline(value, color="#b03a2e", linestyle="--", linewidth=1,
                               label="95 % limits (shaded: exact CI)" if index == 0 else None)
                ba.axhspan(limits.lower_ci[0], limits.lower_ci[1], color="#b03a2e", alpha=0.08, linewidth=0)
                ba.axhspan(limits.upper_ci[0], limits.upper_ci[1], color="#b03a2e", alpha=0.08, linewidth=0)
                ba.legend(frameon=True, framealpha=0.85, edgecolor="none", fontsize=6.5, loc="best")
            ba.axhline(0, color="#888888", linewidth=0.6)
            ba.set_xlabel("reference score")
            ba.set_ylabel("score − reference")
            ba.set_title("Bland–Altman", fontsize=9)
            ba.grid(True, color="#dddddd", linewidth=0.6)
            figure.tight_layout()
            buffer = io.StringIO()
            figure.savefig(buffer, format="svg", bbox_inches="tight", metadata={"Date": None})
        finally:
            plt.close(figure)
    return inline_svg(buffer.getvalue())


_ID = re.compile(r'\bid="([^"]+)"')


def _unique_ids(svg: str, prefix: str) -> str:
    """Prefix every element id (and every reference to it) so that many charts can share one
    page: matplotlib numbers ids per figure, so two figures would define the same anchors."""
    ids = set(_ID.findall(svg))
    if not ids:
        return svg
    pattern = re.compile(r'(\bid="|#)(' + "|".join(re.escape(i) for i in sorted(ids, key=len, reverse=True)) + r')(?=[")])')
    return pattern.sub(lambda m: m.group(1) + prefix + m.group(2), svg)


def _control(report: DriftReport, study_title: str | None, sponsor: str | None, paper: str) -> DriftControl:
    return DriftControl(
        title=TITLE, study_id=report.study or "Study not given", study_title=study_title or "No plan given",
        sponsor=sponsor, data_file=report.data_file, data_sha256=report.data_sha256, plan_file=report.plan_file,
        plan_sha256=report.plan_sha256, as_of=report.as_of, tool_version=__version__, libraries=document_libraries("drift"), paper=paper)


def render_drift(report: DriftReport, fmt: str, attachment_text: str | None = None,
                 study_title: str | None = None, sponsor: str | None = None, paper: str = "a4") -> str | bytes:
    """The report as HTML text, or as PDF/A-3b bytes with the rating data file attached."""
    from markupsafe import Markup

    from protolint.analysis.drift import STATUS_WORDS
    from protolint.render.environment import make_env

    control = _control(report, study_title, sponsor, paper)
    charts = {(r.rater, r.instrument): Markup(_unique_ids(rater_charts(r, report), f"c{index}-"))
              for index, r in enumerate(report.raters)}
    html = make_env().get_template("drift.html.j2").render(
        control=control, report=report, charts=charts, status_words=STATUS_WORDS,
        plain_words=[(rule.pool, report.plain_words(rule)) for rule in report.rules])
    if fmt == "html":
        return html
    if fmt != "pdf":
        raise ValueError(f"format must be html or pdf, got {fmt!r}")
    from pathlib import PurePath

    from protolint.render.pdf import PdfSource, attachment_if_text, html_to_pdf

    source = PdfSource(report.as_of, attachment_if_text(PurePath(report.data_file).name, attachment_text,
                                                        "The rating data this report was computed from"))
    return html_to_pdf(html, source, paper)
