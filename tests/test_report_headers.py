"""report.html's tables headed in words with units, the CSV name kept on each heading
(its ``title`` and a small second line): the headings were the bare CSV names
(``dry_N_all_gas_kg_ha``). One mapping (workbench.column_labels) heads every table; the
numbers under the headings are still those of the CSV files."""
import csv
import html
import re

import pandas as pd
import pytest

from workbench.column_labels import COLUMN_LABELS
from workbench.report import plain

#: Columns a table of the report heads in its own words (the rest: COLUMN_LABELS).
OWN_WORDS = {"flux_kg_ha"}


@pytest.fixture(scope="module")
def run(two_site_run):
    return two_site_run         # tests/conftest.py: one run for this module and others


def _csv_columns(folder) -> set:
    names = set()
    for f in folder.glob("*.csv"):
        with open(f, newline="", encoding="utf-8") as fh:
            names |= set(next(csv.reader(fh)))
    return names


def _tables(text):
    """(header cells as HTML, rows of cell texts) of each table of the page."""
    for t in re.findall(r"<table.*?</table>", text, flags=re.S):
        heads = re.findall(r"<th(?: title='([^']*)')?>(.*?)</th>", t[:t.index("</thead>")],
                           flags=re.S)
        rows = [[html.unescape(re.sub(r"<[^>]+>", "", c)).strip()
                 for c in re.findall(r"<td.*?>(.*?)</td>", r, flags=re.S)]
                for r in re.findall(r"<tr>(.*?)</tr>", t[t.index("<tbody>"):], flags=re.S)]
        yield heads, rows


def test_every_heading_has_words_with_units_and_its_csv_name(run):
    text = (run / "report.html").read_text(encoding="utf-8")
    columns = _csv_columns(run)
    seen = 0
    for heads, _ in _tables(text):
        for name, inner in heads:
            if not name:            # a period label, a count: never a bare CSV name
                assert html.unescape(inner) not in columns, inner
                assert inner[:1].isupper() or inner[:1].isdigit(), inner   # words
                continue
            name = html.unescape(name)
            words, small = inner.split("<br>")
            assert name in columns, name                      # a column of a CSV file
            assert html.unescape(small) == f"<span class='csv'>{name}</span>"
            assert html.unescape(words) != name and "_" not in words, words
            if name not in OWN_WORDS:
                assert html.unescape(words) == COLUMN_LABELS[name]
            seen += 1
    assert seen > 40, seen
    # the units are in the headings, e.g. the whole span's deposition
    assert "Deposition [kg S or N/ha/yr]<br><span class='csv'>flux_kg_ha_yr</span>" in text


def test_the_numbers_under_the_headings_are_those_of_the_csv_files(run):
    text = (run / "report.html").read_text(encoding="utf-8")
    budget = pd.read_csv(run / "budget.csv", dtype={"period": str})
    span = budget[(budget["period"] == "span") & (budget["species"] == "all")
                  & (budget["pathway"] == "total")]
    whole = next(rows for heads, rows in _tables(text)
                 if "years_used" in [n for n, _ in heads])
    assert len(whole) == len(span)
    for row in whole:
        site, rec, el, kg, eq = row[:5]
        csv_row = span[(span["site"] == site) & (span["receptor"] == rec)
                       & (span["element"] == el)].iloc[0]
        assert kg == plain(csv_row["flux_kg_ha_yr"]) and eq == plain(csv_row["flux_eq_ha_yr"])
        assert row[5] == csv_row["status"]
    ex = pd.read_csv(run / "exceedance.csv", dtype={"period": str})
    ex = ex[ex["period"] == "span"]
    table = next(rows for heads, rows in _tables(text)
                 if "ex_acidity_eq_ha_yr" in [n for n, _ in heads])
    assert len(table) == len(ex)
    for row, (_, e) in zip(table, ex.iterrows()):
        assert row[:2] == [e["site"], e["receptor"]]
        assert row[2:5] == [plain(e["s_dep_eq_ha_yr"]), plain(e["n_dep_eq_ha_yr"]),
                            plain(e["ex_acidity_eq_ha_yr"])]
