"""The monitoring checklist: a form per round with a row per rater, per-site copies, bounds.

Plans are the invented minimal fixture with a site pool, a roster and a monitoring interval
written in; every check goes through the public ``render`` API or the command line.
"""

from __future__ import annotations

import io
import re
from pathlib import Path

import pytest

from protolint.plan import load_plan
from protolint.plan.source import load_source
from protolint.render import render
from protolint.render.checklist import GRID, ROWS_PER_BLOCK, checklist_context

FIXTURES = Path(__file__).resolve().parent / "fixtures"

# Weekly monitoring; first assessment 2026-03-02, 4 weeks of enrolment and 8 of treatment:
# ratings end 2026-05-25 (the last participant's day 57), which is the 12th weekly round.
POOL = """\
rater_pools:
  - id: POOL
    instruments: [SCORE]
    location: site
{extra}    monitoring: {{interval_weeks: 1, method: [co-rating], drift_threshold: {{max_deviation: 2}}}}
"""


def plan_text(sites: int = 2, roster: dict[str, int] | None = None, extra: str = "") -> str:
    text = (FIXTURES / "minimal.yaml").read_text(encoding="utf-8")
    text = text.replace("    - {id: A, name: Site A (invented)}\n",
                        "".join(f"    - {{id: S{i}, name: Site {i} (invented)}}\n" for i in range(1, sites + 1)))
    head, _ = text.split("rater_pools:\n")
    text = head + POOL.format(extra=extra)
    if roster:
        text += "roster:\n" + "".join(f"  - {{id: R-{site}-{k:02d}, pool: POOL, site: {site}}}\n"
                                      for site, count in roster.items() for k in range(1, count + 1))
    return text


def loaded(text: str):
    result = load_plan(load_source(text.encode("utf-8"), "plan.yaml"))
    assert result.plan is not None, result.findings
    return result


def markdown_forms(markdown: str) -> dict[tuple[str, str], list[str]]:
    """(site heading, round heading) -> the rater cell of every row of that round's table."""
    forms: dict[tuple[str, str], list[str]] = {}
    site = heading = ""
    for line in markdown.splitlines():
        if line.startswith("## "):
            site = line[3:]
        elif line.startswith("#### Round "):
            heading = line[5:]
            forms[(site, heading)] = []
        elif heading and line.startswith("| ") and "[ ] yes [ ] no" in line:
            forms[(site, heading)].append(line.split(" | ")[0][2:])
    return forms


def html_forms(html: str) -> list[tuple[str, list[str]]]:
    """(round title, rater of each row) for every printed round block of the HTML."""
    blocks = re.findall(r'<div class="form"><div class="title">(.*?)</div>.*?<div class="rows">(.*?)</div></div>',
                        html, flags=re.S)
    return [(title, [row.split("\t")[0].strip() for row in rows.split("\n")]) for title, rows in blocks]


def test_every_round_has_a_row_for_every_rostered_rater_of_its_site() -> None:
    plan = loaded(plan_text(roster={"S1": 3, "S2": 2}))
    forms = markdown_forms(render("checklist", "markdown", plan))
    assert len(forms) == 24  # 12 weekly rounds at each of two sites
    for (site, heading), raters in forms.items():
        expected = ["R-S1-01", "R-S1-02", "R-S1-03"] if "(site S1)" in site else ["R-S2-01", "R-S2-02"]
        assert raters == expected, (site, heading)
    assert "Round 1: due 2026-03-09, reviews ratings from 2026-03-02" in {h for _, h in forms}
    assert "Round 12: due 2026-05-25, reviews ratings from 2026-05-19" in {h for _, h in forms}


def test_html_and_markdown_print_the_same_rounds_and_rows() -> None:
    plan = loaded(plan_text(roster={"S1": 3, "S2": 2}))
    md = markdown_forms(render("checklist", "markdown", plan))
    html = html_forms(render("checklist", "html", plan))
    assert [raters for raters in md.values()] == [raters for _, raters in html]
    assert [h.split(":")[0] for _, h in md] == [t.split(" · ")[0] for t, _ in html]


def test_without_a_roster_rounds_have_numbered_blank_rows_as_many_as_raters_per_site() -> None:
    plan = loaded(plan_text(extra="    raters_per_site: 3\n"))
    forms = markdown_forms(render("checklist", "markdown", plan))
    assert forms and all(raters == ["1.", "2.", "3."] for raters in forms.values())
    html = render("checklist", "html", plan)
    assert "each round has 3 numbered blank rows" in html


def test_without_roster_or_raters_per_site_the_default_number_of_blank_rows() -> None:
    from protolint.render.checklist import DEFAULT_BLANK_ROWS

    forms = markdown_forms(render("checklist", "markdown", loaded(plan_text())))
    assert all(len(raters) == DEFAULT_BLANK_ROWS for raters in forms.values())


def test_a_round_with_more_raters_than_a_page_holds_continues_in_a_second_block() -> None:
    plan = loaded(plan_text(sites=1, roster={"S1": ROWS_PER_BLOCK + 5}))
    blocks = html_forms(render("checklist", "html", plan))
    first = [b for b in blocks if b[0].startswith("Round 1,") or b[0].startswith("Round 1 ")]
    assert [title.split(" · ")[0] for title, _ in first] == ["Round 1, part 1 of 2", "Round 1, part 2 of 2"]
    assert [len(raters) for _, raters in first] == [ROWS_PER_BLOCK, 5]
    assert first[1][1][-1] == f"R-S1-{ROWS_PER_BLOCK + 5:02d}"


def test_form_lines_reach_each_column_by_one_tab_and_cut_long_ids() -> None:
    line = GRID.line("R-1", "", "☐ yes  ☐ no")
    assert line.split("\t") == [" R-1", "", " ☐ yes  ☐ no", "", "", "", ""]
    long_id = "R-" + "x" * 40
    cell = GRID.line(long_id).split("\t")[0]
    assert cell == " " + long_id[:GRID.cell_characters - 1] + "…"
    assert GRID.edges_px == tuple(GRID.column_px * k for k in range(1, GRID.columns))


def test_the_column_rules_image_has_one_rule_at_every_column_edge_and_stretches_to_the_form() -> None:
    from xml.etree import ElementTree

    image = GRID.column_rules_image
    assert GRID.column_rules_url.endswith("/" + image.name)
    svg = ElementTree.fromstring(image.svg)
    assert svg.get("viewBox") == f"0 0 {GRID.width_px} 1" and svg.get("preserveAspectRatio") == "none"
    rules = [(float(r.get("x")), float(r.get("width"))) for r in svg]  # type: ignore[arg-type]
    assert [x + width / 2 for x, width in rules] == [float(edge) for edge in GRID.edges_px]
    assert {r.get("fill") for r in svg} == {GRID.rule_colour}


def test_only_the_pdf_edition_refers_to_the_generated_rules_and_the_html_file_rules_by_backgrounds() -> None:
    from protolint.render import render_html

    plan = loaded(plan_text(sites=1, roster={"S1": 2}))
    for_pdf = render_html("checklist", plan, pdf_edition=True)
    html_file = render("checklist", "html", plan)
    assert f'url("{GRID.column_rules_url}")' in for_pdf and "text-decoration: underline" in for_pdf
    # A browser cannot load the PDF's generated image, and does not underline tabs: the HTML
    # file draws both rules as backgrounds and asks for them to be printed.
    assert "assets.invalid" not in html_file and "text-decoration: underline" not in html_file
    assert "repeat-y" in html_file and "print-color-adjust: exact" in html_file


def test_the_pdf_has_a_row_for_every_rostered_rater_in_every_round() -> None:
    pypdf = pytest.importorskip("pypdf")
    plan = loaded(plan_text(sites=1, roster={"S1": 3}))
    pdf = render("checklist", "pdf", plan)
    text = "\n".join(page.extract_text() for page in pypdf.PdfReader(io.BytesIO(pdf)).pages)
    assert text.count("R-S1-02") == 12 + 1  # every round, and the roster line above the forms
    assert len(re.findall(r"Round \d+( \(close-out\))? · due", text)) == 12


def test_a_site_copy_names_its_site_at_the_top_of_every_page() -> None:
    pypdf = pytest.importorskip("pypdf")
    plan = loaded(plan_text(sites=3, roster={"S1": 2, "S2": 12, "S3": 2}))
    pdf = render("checklist", "pdf", plan, site="S2")
    pages = [page.extract_text() for page in pypdf.PdfReader(io.BytesIO(pdf)).pages]
    assert len(pages) >= 4 and "Copy for site S2 — Site 2 (invented)" in pages[0]
    for number, text in enumerate(pages, start=1):
        assert "Site S2 · Site 2 (invented)" in text, f"page {number}"
    assert not any("R-S1-" in text or "R-S3-" in text for text in pages)


def test_the_whole_study_copy_has_no_site_mark() -> None:
    html = render("checklist", "html", loaded(plan_text(roster={"S1": 1, "S2": 1})))
    assert "Copy for site" not in html and "string(site)" not in html


def test_an_unknown_site_is_refused_with_the_known_ids() -> None:
    plan = loaded(plan_text(sites=3))
    with pytest.raises(ValueError, match=r"unknown site 'S4'.*the plan's sites are: S1, S2, S3$"):
        checklist_context(plan, site="S4")


def test_a_known_site_without_rounds_gets_a_copy_that_says_so() -> None:
    text = plan_text(sites=2).replace("    location: site\n", "    location: site\n    sites: [S1]\n")
    markdown = render("checklist", "markdown", loaded(text), site="S2")
    assert "The plan sets no monitoring rounds for this site." in markdown
    assert "#### Round" not in markdown


def test_absurd_raters_per_site_is_refused_at_its_line_before_any_row_is_made(cli_process, tmp_path: Path) -> None:
    # The loader refuses a whole number beyond 2**53 - 1, and the schema a count above 100
    # raters per site, so neither reaches the checklist; both are one located line.
    for value, words in (("1000000000000000000", "is too large"), ("1e18", "it must be at most 100")):
        text = plan_text(extra=f"    raters_per_site: {value}\n")
        plan = tmp_path / "plan.yaml"
        plan.write_text(text, encoding="utf-8")
        line = text.splitlines().index(f"    raters_per_site: {value}") + 1
        result = cli_process("render", "checklist", str(plan), "--format", "markdown", cwd=tmp_path)
        assert result.returncode == 2 and "Traceback" not in result.stderr
        assert result.stderr.startswith(f"{plan}:{line}:22: ") and words in result.stderr
        assert len(result.stderr.strip().splitlines()) == 1 and result.stdout == ""


def test_a_checklist_beyond_its_row_limit_is_refused_at_the_monitoring_interval(monkeypatch) -> None:
    from protolint.errors import LocatedError
    from protolint.render import checklist

    monkeypatch.setattr(checklist, "MAX_FORM_ROWS", 50)  # 2 sites x 12 rounds x (4 rows + heading) = 120
    text = plan_text()
    with pytest.raises(LocatedError) as caught:
        checklist_context(loaded(text))
    line = next(n for n, row in enumerate(text.splitlines(), start=1) if "interval_weeks: 1" in row)
    assert (caught.value.line, caught.value.file) == (line, "plan.yaml")
    assert "would have 120 rows" in caught.value.reason and "more than the 50" in caught.value.reason
    # One site's copy is 60 rows, still over; its message does not suggest --site again.
    with pytest.raises(LocatedError) as caught:
        checklist_context(loaded(text), site="S1")
    assert "would have 60 rows" in caught.value.reason and "--site" not in caught.value.reason


def test_absurd_raters_per_site_is_refused_where_a_site_has_no_roster_entries(monkeypatch) -> None:
    from protolint.errors import LocatedError
    from protolint.render import checklist

    # The schema keeps raters_per_site at most 100, the checklist's own bound; a lower bound
    # shows the checklist's guard at work behind it.
    monkeypatch.setattr(checklist, "MAX_BLANK_ROWS", 3)
    text = plan_text(roster={"S1": 2}, extra="    raters_per_site: 4\n")
    with pytest.raises(LocatedError) as caught:
        checklist_context(loaded(text))
    assert caught.value.line == text.splitlines().index("    raters_per_site: 4") + 1
    assert "where the roster lists none" in caught.value.reason
    # S1's copy has rostered rows only, so it is made.
    assert checklist_context(loaded(text), site="S1").round_count == 12