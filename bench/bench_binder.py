"""Benchmark: `protolint render binder` on the demo against WeasyPrint alone on the same HTML.

Both sides run as fresh processes, one after the other in each round (so load from other jobs
falls on both alike), and the medians of several rounds are compared, of the processor time
each process used (user + system, its children included) and of the wall time:

* **protolint**: `python -m protolint render binder demo_protocol/plan.yaml --output b.pdf`,
  the whole command (start-up, loading and checking the plan, the sample-size appendix, the
  check appendix, the templates, the PDF);
* **WeasyPrint alone**: a process that imports only WeasyPrint and lays out the HTML that
  `render binder --format html` wrote, with the same packaged fonts and the same PDF/A-3b
  variant, i.e. the least any tool must spend to produce that document.

Target (from the issue): the command within 1.3 x WeasyPrint alone, judged on wall time (what
the user waits for); the processor time is printed beside it, as both move with the load from
other jobs on a shared machine (measured on 2 cores: 1.22x-1.71x wall, 1.37x-1.43x processor
time; 1.74x wall before the sample-size chart stopped importing matplotlib). What the command
spends beyond WeasyPrint, in processor time: start-up and imports (click, PyYAML, the plan
model, jinja2, markdown-it-py: about 0.3 s), scipy.special for the exact noncentral-t sample
sizes of the appendix (about 0.25 s, the largest single part), checking the plan and building
the appendices (about 0.1 s). ``rows()`` returns the
rows (``measure | result | target | met``) for a combined benchmark table; running the script
prints them. ``--rounds N`` sets the number of rounds (default 5); ``--strict`` exits 1 when
the target is missed. A measurement, not a test.
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

BENCH = Path(__file__).resolve().parent
REPO = BENCH.parent
sys.path.insert(0, str(BENCH))
DEMO = REPO / "demo_protocol" / "plan.yaml"
TARGET_RATIO = 1.3

from _measure import Row, run_child  # noqa: E402  (the one row type and process measure of the benchmark tables)

# WeasyPrint alone: the fonts are served from the packaged files by a plain function (no
# protolint import), under the same URLs the document's stylesheet uses.
_WEASYPRINT_ALONE = r"""
import sys
from pathlib import Path
from weasyprint import CSS, HTML
from weasyprint.text.fonts import FontConfiguration
from weasyprint.urls import URLFetcher, URLFetcherResponse

html, fonts, css_file, out = sys.argv[1:5]
origin = "https://assets.invalid/fonts/"

class Fonts(URLFetcher):
    def fetch(self, url, headers=None):
        body = (Path(fonts) / url[len(origin):]).read_bytes()
        return URLFetcherResponse(url, body, {"Content-Type": "font/ttf"})

fetch = Fonts()
config = FontConfiguration()
css = CSS(string=Path(css_file).read_text(), url_fetcher=fetch, font_config=config)
HTML(filename=html, url_fetcher=fetch).write_pdf(out, stylesheets=[css], font_config=config, pdf_variant="pdf/a-3b")
"""


def _environment(pycache: Path) -> dict[str, str]:
    """The environment of both sides: the repository on the path, no SOURCE_DATE_EPOCH, and
    Python's bytecode cache on, in a folder of the benchmark's own (``PYTHONPYCACHEPREFIX``).

    An installed protolint runs from compiled bytecode (pip compiles on install, an editable
    install on first import), as WeasyPrint already does from its own ``__pycache__``. A shell
    with ``PYTHONDONTWRITEBYTECODE`` set (common in containers and CI images) would otherwise
    have the command compile every protolint module from source on every run, some 0.2 s the
    user of an installed copy never pays. The warm-up run fills the cache for both sides, and
    nothing is written into the repository.
    """
    env = {**os.environ, "PYTHONPATH": str(REPO), "PYTHONPYCACHEPREFIX": str(pycache)}
    env.pop("SOURCE_DATE_EPOCH", None)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    return env


def _run(command: list[str], env: dict[str, str]) -> tuple[float, float]:
    """(processor seconds, wall seconds) of one fresh process."""
    child = run_child(command, env)
    return child.cpu, child.wall


def _medians(runs: list[tuple[float, float]]) -> tuple[float, float]:
    return statistics.median(r[0] for r in runs), statistics.median(r[1] for r in runs)


def measure(rounds: int = 5) -> tuple[tuple[float, float], tuple[float, float], int]:
    """Median (processor, wall) seconds of the whole command and of WeasyPrint alone, and the
    PDF's page count."""
    sys.path.insert(0, str(REPO))
    from protolint.render.pdf import font_css, page_size_css
    from protolint.resources import templates_dir

    with tempfile.TemporaryDirectory() as folder:
        work = Path(folder)
        env = _environment(work / "pycache")
        html, css = work / "binder.html", work / "fonts.css"
        subprocess.run([sys.executable, "-m", "protolint", "render", "binder", str(DEMO), "--format", "html",
                        "--output", str(html)], check=True, cwd=REPO, env=env, stderr=subprocess.DEVNULL)
        css.write_text(font_css() + page_size_css("a4"), encoding="utf-8")
        ours = [sys.executable, "-m", "protolint", "render", "binder", str(DEMO), "--output", str(work / "ours.pdf")]
        alone = [sys.executable, "-c", _WEASYPRINT_ALONE, str(html), str(templates_dir() / "fonts"), str(css),
                 str(work / "alone.pdf")]
        _run(ours, env), _run(alone, env)  # warm the file and bytecode caches for both
        times_ours, times_alone = [], []
        for _ in range(rounds):
            times_ours.append(_run(ours, env))
            times_alone.append(_run(alone, env))
        import pypdf

        pages = len(pypdf.PdfReader(str(work / "ours.pdf")).pages)
        if len(pypdf.PdfReader(str(work / "alone.pdf")).pages) != pages:
            raise SystemExit("the two PDFs differ in length: the comparison would not be like for like")
    return _medians(times_ours), _medians(times_alone), pages


def rows(quick: bool = False, rounds: int | None = None) -> list[Row]:
    """The table's rows; ``quick`` (the collector's --quick) takes 3 rounds instead of 5."""
    (ours_cpu, ours_wall), (alone_cpu, alone_wall), pages = measure(rounds or (3 if quick else 5))
    ratio = ours_wall / alone_wall
    return [
        Row(f"render binder, demo ({pages} pages), whole process",
            f"{ours_cpu:.2f} s CPU, {ours_wall:.2f} s wall", "", True),
        Row("WeasyPrint alone, same HTML, fonts and PDF/A variant",
            f"{alone_cpu:.2f} s CPU, {alone_wall:.2f} s wall", "", True),
        Row("render binder / WeasyPrint alone (wall time)", f"{ratio:.2f}x", f"<= {TARGET_RATIO}x", ratio <= TARGET_RATIO,
            why=f"the command spends {ours_wall - alone_wall:.2f} s beyond WeasyPrint: numpy and scipy.special for the "
                "appendix's exact noncentral-t sample sizes (about 0.27 s), start-up and imports (about 0.3 s), the "
                "plan's check and the templates (about 0.2 s); on 2 cores the ratio has moved between 1.15x and "
                "1.44x from run to run, so the target sits inside that spread"),
        Row("render binder / WeasyPrint alone (processor time, for information)", f"{ours_cpu / alone_cpu:.2f}x", "", True),
    ]


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=5, help="fresh-process rounds per side (median taken)")
    parser.add_argument("--strict", action="store_true", help="exit 1 when the target is missed")
    args = parser.parse_args()
    table = rows(rounds=args.rounds)
    from _table import print_table

    return print_table(f"binder benchmark, median of {args.rounds} rounds", [r.cells() for r in table], all(r.met for r in table), args.strict)


if __name__ == "__main__":
    raise SystemExit(main())
