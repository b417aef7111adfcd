"""The notes on components in report.html name the periods they hold for: the demo's
report listed "farm NH4: 1 flagged samples kept (0.6 % of precipitation)" and, on the next
line, the same words with 5.9 %, which read as a repeat with a changed number (one was
the year 2017, the other the whole span)."""
import html
import re

from workbench.cli import main

from ui.demo_subset import write_demo_subset


def test_notes_name_their_periods(tmp_path):
    scenario = write_demo_subset(tmp_path / "farm", ("farm",), 2016, 2017)
    out = tmp_path / "out"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    text = html.unescape((out / "report.html").read_text(encoding="utf-8"))
    part = text[text.index("<h2>Notes on components"):text.index("<h2>Figures")]
    items = re.findall(r"<li>(.*?)</li>", part)
    kept = [i for i in items if re.search(r"flagged samples? kept", i)]
    assert kept, items
    for item in kept:          # "farm NH4 (2017): ..." or "farm NH4 (whole span): ..."
        assert re.match(r"farm \w+ \((\d{4}|whole span)(, (\d{4}|whole span))*\): ", item), item
    assert len(set(kept)) == len(kept)


def test_tables_have_no_empty_column_and_slopes_have_units(tmp_path):
    """The input-rows table began with an empty "status" column (the name of a pivot's
    columns) and the trend table's slope read "sen_slope_per_yr -0.213" without a unit."""
    scenario = write_demo_subset(tmp_path / "ridge", ("ridge",), 2020, 2021)
    out = tmp_path / "out"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    text = html.unescape((out / "report.html").read_text(encoding="utf-8"))
    rows = text[text.index("<h2>Input rows"):]
    head = rows[:rows.index("</thead>")]
    assert re.findall(r"<th title='(.*?)'>", head)[0] == "file"
    assert "<th></th>" not in rows[:rows.index("</table>")]
    trends = text[text.index("<h2>Trends"):]
    assert "Sen slope [kg S or N/ha/yr per yr]" in trends and "Sen slope [% per yr]" in trends


def test_exceedance_legend_explains_region_minus_one_when_shown():
    """The demo's fell rows (N partial, no NO2) show region -1 in report.html; the
    legend listed regions 0-4 only, so the -1 in the table was unexplained."""
    import pandas as pd

    from workbench.analysis.exceedance import REGIONS
    from workbench.report import _exceedance_html

    def row(region):
        return dict(period="span", site="fell", receptor="grass", s_dep_eq_ha_yr=509.0,
                    n_dep_eq_ha_yr=974.0, ex_acidity_eq_ha_yr=float("nan"), region=region,
                    ex_nutrient_n_eq_ha_yr=float("nan"), status="flagged", note="N total partial")
    html_text = "".join(_exceedance_html(None, None, ex=pd.DataFrame([row(-1), row(3)])))
    assert "-1 " + REGIONS[-1].split(" (")[0] in html_text, html_text
    html_text = "".join(_exceedance_html(None, None, ex=pd.DataFrame([row(3)])))
    assert "-1 " not in html_text          # no -1 in the table: the legend does not list it
