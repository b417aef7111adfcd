"""report.html read as a colleague would before it is sent on (the demo's report):

- the dry-nitrogen bracket table was 1,368 px wide in a 1,280 px window and pushed the
  page sideways: every table now scrolls inside the page's width;
- the settings line read "Gas scheme: wesely1989", an option value where a reader
  expects the method's name (Wesely 1989, Atmos. Environ. 23, 1293-1304);
- the trend table's "valid" column read Python's "True"/"False".
"""
import html
import re

import pytest

from workbench.cli import main

from ui.demo_subset import write_demo_subset


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("reading")
    scenario = write_demo_subset(tmp / "ridge", ("ridge",), 2020, 2021)
    out = tmp / "out"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    return (out / "report.html").read_text(encoding="utf-8")


def test_tables_scroll_inside_the_page(report):
    style = report[report.index("<style>"):report.index("</style>")]
    rule = re.search(r"(?<![\w-])\.tab\{([^}]*)\}", style).group(1)
    assert "overflow-x:auto" in rule and "display:block" in rule, rule
    # printed, a table is a table again (a block would clip it to the first page width)
    assert re.search(r"@media print\{.*\.tab\{[^}]*display:table", style)


def test_gas_scheme_named_by_its_source(report):
    text = html.unescape(report)
    line = re.search(r"<p class='settings'>(.*?)</p>", text).group(1)
    assert "Wesely (1989)" in line, line
    assert not re.search(r"Gas scheme:</b> wesely1989", line), line


def test_trend_validity_in_words(report):
    text = html.unescape(report)
    trends = text[text.index("<h2>Trends"):]
    table = trends[:trends.index("</table>")]
    cells = re.findall(r"<td>(.*?)</td>", table)
    assert "True" not in cells and "False" not in cells
    assert "no" in cells            # two years: too few for a valid trend


def test_bracket_of_0_says_why(tmp_path):
    """At the demo's bulk-collector site the particle bracket read a bare 0 for every
    period; the reason (the pair counted in the wet deposition) was only in budget.nc.
    The report now lists each bracket note under the table, with the option that made it
    written as a setting (bulk_correction = "exclude_particles"), not as two bare words."""
    scenario = write_demo_subset(tmp_path / "mere", ("mere",), 2020, 2021)
    out = tmp_path / "out"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    text = html.unescape((out / "report.html").read_text(encoding="utf-8"))
    part = text[text.index("<h2>Dry nitrogen"):]
    part = part[:part.index("<h2>", 5)]
    table = part[part.index("<table"):part.index("</table>")]
    assert re.search(r"<td>mere</td>\s*<td>wetland</td>.*?<td>0</td>", table, re.S)
    notes = part[part.index("</table>"):]
    item = re.search(r"<li><b>[^<]*</b> \(<code>dry_N_all_particle_kg_ha</code>\) at "
                     r"[^<]*mere · wetland[^<]*</li>", notes)
    assert item and "caught by the bulk collector" in item.group(0), notes
    assert 'bulk_correction = "exclude_particles"' in item.group(0)
    assert "(bulk_correction exclude_particles)" not in text


def test_trend_notes_without_the_variant_key(report):
    """The trend table and figure legends began every note with "values: all", the name
    of trends.csv's ``values`` column and its value; the report shows that variant only
    and says so in its paragraph."""
    text = html.unescape(report)
    trends = text[text.index("<h2>Trends"):]
    trends = trends[:trends.index("<h2>", 5)]
    assert "values: all" not in trends
    assert "filled years included" in trends
    table = trends[:trends.index("</table>")]
    assert "fewer than 10 complete years" in table
