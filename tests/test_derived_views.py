"""Oxidized N, reduced N, the reduced share of N and the potential acidity where users
read them: report.html and the site explorer's table (the network overview's columns:
tests/ui/test_derived_split.py).  Before, only summary.csv carried these sums; the
report, the site explorer and the network overview showed the S and N totals only.

The run: the demo copy of tests/test_failing_totals.py whose mere site loses its
precipitation samples from 1 July 2023 (its 2023 wet ions fail the gauge record's
minimum, and so every derived sum of mere 2023); ridge 2020 is flagged but passing.
"""
import html
import re

import numpy as np
import pandas as pd
import periodictable
import pytest
import xarray as xr

import test_failing_totals as ft

OXIDIZED = ("NO3", "HNO3", "pNO3", "NO2")       # docs/budget.md
REDUCED = ("NH4", "NH3", "pNH4")


@pytest.fixture(scope="module")
def cut(tmp_path_factory):
    root = tmp_path_factory.mktemp("derived_views")
    ft._run(ft._copy(root / "cut", True), root / "run")
    return root / "run"


def _by_hand(folder) -> pd.DataFrame:
    """The derived sums as yearly rates from budget.csv's component rows, by pandas:
    kg/ha/yr of each form of N summed over the parts present, and the potential acidity
    2 S + N in eq with the molar masses of periodictable (S 32.06, N 14.007 g/mol; 2 eq
    per mol S as sulfate, 1 per mol N: common practice)."""
    b = pd.read_csv(folder / "budget.csv", dtype={"period": str})
    comp = b[(b["species"] != "all") & (b["period"] != "span")]
    key = ["site", "receptor", "period"]
    per = lambda mask: comp[mask].groupby(key)["flux_kg_ha_yr"].sum(min_count=1)  # noqa: E731
    ox = per(comp["species"].isin(OXIDIZED) & (comp["element"] == "N"))
    red = per(comp["species"].isin(REDUCED) & (comp["element"] == "N"))
    s = per(comp["element"] == "S")
    eq_s = s / (periodictable.S.mass / 1000) * 2            # kg/ha -> mol/ha -> eq/ha
    eq_n = (ox.fillna(0) + red.fillna(0)) / (periodictable.N.mass / 1000)
    return pd.DataFrame({"oxidized_N": ox, "reduced_N": red,
                         "reduced_share": 100 * red / (ox + red),
                         "potential_acidity": eq_s + eq_n}).reset_index()


def _cells(text: str):
    """report.html's derived table: {(site, receptor, sum words, period): (text, title)}."""
    part = text[text.index("id='derived'"):]
    table = part[part.index("<table"):part.index("</table>")]
    heads = re.findall(r"<th>([^<]*)</th>", table)[3:]
    out = {}
    for row in re.findall(r"<tr>(.*?)</tr>", table, flags=re.S)[1:]:
        cells = re.findall(r"<td( title='[^']*')?>([^<]*)</td>", row)
        site, rec, words = (html.unescape(c[1]) for c in cells[:3])
        for period, (title, value) in zip(heads, cells[3:]):
            out[(site, rec, words.split(" [")[0], period)] = (
                html.unescape(value), html.unescape(title[8:-1]) if title else "")
    return out


def _number(cell: str) -> float:
    return float(cell.split()[0].replace(",", "").rstrip("%"))


WORDS = {"oxidized_N": "Oxidized N", "reduced_N": "Reduced N",
         "reduced_share": "Reduced share of N", "potential_acidity": "Potential acidity"}


def test_report_shows_the_derived_sums_as_budget_csv_gives_them(cut):
    text = (cut / "report.html").read_text(encoding="utf-8")
    cells = _cells(text)
    hand = _by_hand(cut)
    assert len(hand) >= 50
    seen = 0
    for r in hand.itertuples(index=False):
        for name, words in WORDS.items():
            cell = cells.get((r.site, r.receptor, words, r.period))
            if cell is None:                       # a receptor no site asks for
                continue
            seen += 1
            want = getattr(r, name)
            if name == "reduced_share":            # whole percent
                assert abs(_number(cell[0]) - want) <= 0.5 + 1e-9, (r, cell)
            else:                                  # three significant digits
                assert _number(cell[0]) == pytest.approx(want, rel=6e-3), (r, name, cell)
    assert seen == len(cells) and seen >= 4 * 50


def test_report_numbers_are_summary_csv_as_yearly_rates(cut):
    s = pd.read_csv(cut / "summary.csv", dtype={"period": str}, keep_default_na=False)
    with xr.open_dataset(cut / "budget.nc") as ds:
        fac = dict(zip(ds["period"].values.astype(str), ds["annual_factor"].values))
    cells = _cells((cut / "report.html").read_text(encoding="utf-8"))
    for r in s.itertuples(index=False):
        pa = cells[(r.site, r.receptor, "Potential acidity", r.period)]
        assert _number(pa[0]) == pytest.approx(r.potential_acidity_eq_ha * fac[r.period],
                                               rel=6e-3)
        ox = cells[(r.site, r.receptor, "Oxidized N", r.period)]
        assert _number(ox[0]) == pytest.approx(r.oxidized_N_kg_ha * fac[r.period], rel=6e-3)


def test_report_marks_failing_and_flagged_derived_sums(cut):
    text = (cut / "report.html").read_text(encoding="utf-8")
    cells = _cells(text)
    share = 100 * ft._gauge_share_by_hand("mere", 2023)
    gauge = f"gauge record below minimum ({share:.1f} % of the period; minimum 90 %)"
    for rec in ("water", "wetland"):
        for words, parts in (("Oxidized N", "NO3"), ("Reduced N", "NH4"),
                             ("Reduced share of N", "NO3"),
                             ("Potential acidity", "SO4 NO3 NH4")):
            value, title = cells[("mere", rec, words, "2023")]
            assert " x" in value, (rec, words, value)
            assert title == f"fails completeness: {parts}: {gauge}"
            assert " x" not in cells[("mere", rec, words, "2022")][0]
    # ridge 2020: flagged (kept flagged samples) but passing
    value, title = cells[("ridge", "grass", "Potential acidity", "2020")]
    assert value.endswith(" f") and title == ""
    # the reasons written out too (a printed page has no tooltip), and the definitions
    plain = html.unescape(text)
    assert f"mere 2023 (water, wetland): Oxidized N, Reduced share of N: NO3: {gauge}" in plain
    assert "Potential acidity</b> = 2 S + oxidized N + reduced N in eq" in plain
    assert "NO3 (wet) + HNO3 + pNO3 + NO2 (dry)" in plain
    # exactly the failing cells: 2 surfaces x 4 sums
    assert sum(" x" in v for v, _ in cells.values()) == 8


def test_site_explorer_split_of_cut_run(cut):
    """The site explorer's table (workbench.ui.derived_split) on budget.nc of the run:
    the numbers of summary.csv, the failing year marked with its reason."""
    from workbench.ui.derived_split import n_split_html, n_split_table
    with xr.open_dataset(cut / "budget.nc") as ds:
        ds = ds.load()
    # budget.csv's rows give the parts' completeness (the app builds them from its run)
    rows = pd.read_csv(cut / "budget.csv", dtype={"period": str}, keep_default_na=False)
    t = n_split_table(ds, "mere", "water", table=rows)
    hand = _by_hand(cut)
    hand = hand[(hand["site"] == "mere") & (hand["receptor"] == "water")]
    assert list(t["period"]) == list(hand["period"])
    for name in WORDS:
        np.testing.assert_allclose(t[name], hand[name], rtol=1e-6)
    assert list(t["potential_acidity_passes"]) == [p != "2023" for p in t["period"]]
    text = n_split_html(ds, "mere", "water", table=rows)
    assert "fails completeness: SO4 NO3 NH4: gauge record below minimum" in text
    assert "2023 oxidized N, reduced share fails completeness: NO3: gauge" in text
    row23 = re.search(r"<tr><td>2023</td>(.*?)</tr>", text).group(1)
    assert len(re.findall(r" x( p)?</td>", row23)) == 4
    row22 = re.search(r"<tr><td>2022</td>(.*?)</tr>", text).group(1)
    assert not re.search(r" x( p)?</td>", row22)
    # in eq/ha/yr the N forms follow the unit; the acidity stays eq/ha/yr
    eq = n_split_table(ds, "mere", "water", "eq/ha/yr", table=rows)
    np.testing.assert_allclose(eq["oxidized_N"],
                               t["oxidized_N"] / (periodictable.N.mass / 1000), rtol=1e-4)
