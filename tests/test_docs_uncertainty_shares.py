"""Demo numbers of docs/methods_uncertainty.md, "Where a range's width comes from: each
factor's share (the demo's farm, measured)": the farm's span dry N over grass (its point
and components, the 5 / 50 / 95 % at 1,000 draws) and the 1,000-draw columns of the
shares table (variance share and log-variance share of each factor, seed 12345), with
the crops' and deciduous forest's log shares beside it, recomputed with
:func:`workbench.analysis.variance_shares.variance_shares` on the demo's farm
(docs/make_uncertainty_figures.py's ``farm_run``). The 4,000-draw columns and seed 7's
are not recomputed here (four times the draws; they are measured as the table says).
The reference is the engine itself (measured numbers; the method's checks are in
tests/analysis/test_variance_shares.py). Numbers as written (Python's format, common
practice; a minus sign as U+2212).
"""
from __future__ import annotations

import re
from pathlib import Path

import pytest

DOC = Path(__file__).resolve().parents[1] / "docs" / "methods_uncertainty.md"
ROWS = {"`vd_gsd` (every species)": "vd_gsd", "of which `vd_gsd.NH3`": "vd_gsd.NH3",
        "of which `vd_gsd.NO2`": "vd_gsd.NO2", "`vd_site_gsd`": "vd_site_gsd",
        "`lab_bias_air_rel_sd`": "lab_bias_air_rel_sd", "together": "together"}


def _section() -> str:
    text = DOC.read_text(encoding="utf-8")
    a = text.index("### Where a range's width comes from")
    return text[a:text.index("### A wide exceedance range", a)]


@pytest.fixture(scope="module")
def shares(farm_span):
    from workbench.analysis import uncertainty as U
    from workbench.analysis.variance_shares import variance_shares
    study, res = farm_span
    df = variance_shares(res, study, U.UncertaintyOptions(draws=1000, seed=12345),
                         totals=("N_dry",))
    return df[df["site"] == "farm"].set_index(["receptor", "factor"])


def _f(x: float, digits: int) -> str:
    return f"{x:.{digits}f}".replace("-", "−")


def test_the_point_and_the_range_of_the_farm(farm_span, shares):
    _, res = farm_span
    t = res.table
    g = t[(t["site"] == "farm") & (t["receptor"] == "grass") & (t["period"] == "span")
          & (t["element"] == "N") & (t["pathway"] == "dry")].set_index("species")[
        "flux_kg_ha_yr"]
    allrow = shares.loc[("grass", "all")]
    text = re.sub(r"\s+", " ", _section())
    assert (f"we measured {allrow['alone_p05']:.2f} / {allrow['alone_p50']:.2f} / "
            f"{allrow['alone_p95']:.2f} kg N/ha/yr (5 / 50 / 95 %) at 1,000 draws") in text
    assert (f"The point value is {g['all']:.2f} (NH3 {g['NH3']:.2f}, NO2 {g['NO2']:.2f}, "
            f"HNO3 {g['HNO3']:.2f}, pNO3 {g['pNO3']:.2f}, pNH4 {g['pNH4']:.2f})") in text
    assert f"so NH3 is {100 * g['NH3'] / g['all']:.0f} % of the dry N" in text


def test_the_1000_draw_columns_of_the_table(shares):
    written = {}
    for line in _section().splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 4 and cells[0] in ROWS:
            written[cells[0]] = (cells[1].split(" / ")[0], cells[2].split(" / ")[0])
    assert set(written) == set(ROWS)
    for label, factor in ROWS.items():
        row = shares.loc[("grass", factor)]
        v, lv = written[label]
        digits = len(v.split(".")[1])
        assert v == _f(row["variance_share"], digits), (label, v, row["variance_share"])
        digits = len(lv.split(".")[1])
        assert lv == _f(row["log_variance_share"], digits), (label, lv,
                                                             row["log_variance_share"])


def test_the_crops_and_the_deciduous_forest(shares):
    c, d = "crops", "deciduous_forest"
    text = re.sub(r"\s+", " ", _section())
    assert (f"log shares for `vd_gsd` of {shares.loc[(c, 'vd_gsd'), 'log_variance_share']:.3f} "
            f"and {shares.loc[(d, 'vd_gsd'), 'log_variance_share']:.3f}, of which NH3 "
            f"{shares.loc[(c, 'vd_gsd.NH3'), 'log_variance_share']:.3f} and "
            f"{shares.loc[(d, 'vd_gsd.NH3'), 'log_variance_share']:.3f}, and for "
            f"`vd_site_gsd` {shares.loc[(c, 'vd_site_gsd'), 'log_variance_share']:.3f} and "
            f"{shares.loc[(d, 'vd_site_gsd'), 'log_variance_share']:.3f}, at 1,000 draws") in text
