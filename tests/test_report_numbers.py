"""report.html writes a quantity with its thousands separated (280,344 rows read; 2,257
eq/ha), by one helper (workbench.report_numbers.number), and a number that names
something (a year, a period, a code, a line of a file) as it is. Before, the counts of
the input rows and samples printed bare (280344) beside separated fluxes. The comma
every three digits is the English-language convention of the report's other numbers
(common practice; the Chicago Manual of Style, 9.55, from memory)."""
import html
import re

import pandas as pd
import pytest

from workbench.report_numbers import is_quantity, name_text, number


def test_number_separates_the_thousands_of_a_quantity():
    assert number(280344) == "280,344"
    assert number(1638) == "1,638"
    assert number(999) == "999"
    assert number(2257.205) == "2,257"       # three significant digits, as plain
    assert number(24.56) == "24.6"
    assert number(float("nan")) == "–"


def test_names_are_written_as_they_are():
    assert name_text(2021) == "2021" and name_text(2021.0) == "2021"
    for col in ("period", "region", "first_year", "2021", "seed", "line", "site"):
        assert not is_quantity(col), col
    for col in ("flux_eq_ha_yr", "Samples", "Rows read", "n_years", "rows", "Years"):
        assert is_quantity(col), col


def test_table_of_the_report_separates_counts_not_years_or_codes():
    from workbench.report import _table_html
    frame = pd.DataFrame({"file": ["met.csv"], "Rows read": [280344], "Accepted": [279600],
                          "first_year": [2016.0], "region": pd.Series([3], dtype="int8"),
                          "flux_eq_ha_yr": [2257.2], "n_years": [8]})
    cells = [html.unescape(re.sub(r"<[^>]+>", "", c)).strip()
             for c in re.findall(r"<td.*?>(.*?)</td>", _table_html(frame), flags=re.S)]
    assert cells == ["met.csv", "280,344", "279,600", "2016", "3", "2,257", "8"]


def test_sentences_of_the_report_separate_their_counts():
    from workbench.analysis.uncertainty import UncertaintyOptions
    from workbench.analysis.quantile_tables import draws_in_force
    from workbench.report import _figures_limited
    from workbench.report_network import fold
    assert "the first 12 of 1,200 sites only" in _figures_limited(1200, 12, "Budget figures are")
    assert "(1,500 rows)" in fold("<table></table>", 1500, "every row")
    assert "(10,000 draws, seed 7)" in draws_in_force(UncertaintyOptions(draws=10000, seed=7))


@pytest.fixture(scope="module")
def report(two_site_run):
    # tests/conftest.py: the run shared with tests/test_report_headers.py
    return (two_site_run / "report.html").read_text(encoding="utf-8")


def test_report_counts_its_input_rows_with_separators(report):
    """The met file's rows (two sites, two years of hours: over 35,000) read with their
    thousands separated; no table cell holds a bare number of four digits or more but a
    year (the periods' headings and cells) or a line of a file."""
    sec = report[report.index("<h2>Input rows</h2>"):]
    rows = [[html.unescape(re.sub(r"<[^>]+>", "", c)).strip()
             for c in re.findall(r"<td.*?>(.*?)</td>", r, flags=re.S)]
            for r in re.findall(r"<tr>(.*?)</tr>", sec[:sec.index("</table>")], flags=re.S)]
    met = next(r for r in rows if r and r[0].startswith("met"))
    assert re.fullmatch(r"\d{2},\d{3}", met[1]), met
    body = re.sub(r"<script.*?</script>", "", report, flags=re.S)
    for cell in re.findall(r"<td.*?>(.*?)</td>", body, flags=re.S):
        text = html.unescape(re.sub(r"<[^>]+>", "", cell)).strip()
        for n in re.findall(r"(?<![\d,.])\d{4,}(?![\d,])", text):
            assert re.fullmatch(r"(19|20)\d\d", n) or "line" in text, (n, text)
