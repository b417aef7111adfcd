"""The gas schemes side by side: seasonal Vd by scheme and the budget difference."""
import json

import numpy as np
import pandas as pd
import pytest

from drydep.dry_synthetic import make_met, make_surfaces
from workbench.drydep import DryOptions, velocities
from workbench.ui import figures_schemes as fs


@pytest.fixture(scope="module")
def runs():
    surf = make_surfaces()
    met = make_met(surf, hours=24 * 365, seed=11)
    return {s: velocities(met, surf, DryOptions(gas_scheme=s, particles=()))
            for s in ("wesely1989", "zhang2003")}


def test_seasonal_vd_matches_a_direct_mean(runs):
    t = fs.seasonal_vd(runs, "bramble_moor", "grass")
    assert len(t) == 2 * 4 * len(fs.GASES)
    ds = runs["zhang2003"]
    v = ds["vd_SO2"].sel(site="bramble_moor", receptor="grass")
    jja = v.where(ds["time"].dt.month.isin([6, 7, 8])).mean().item() * 100
    row = t[(t.scheme == "zhang2003") & (t.season == "JJA") & (t.species == "SO2")]
    assert float(row["vd_cm_s"].iloc[0]) == pytest.approx(jja)
    assert (t["hours"] > 0).all()


def test_scheme_vd_figure(runs):
    spec = fs.scheme_vd_spec(runs, "alder_hill", "conifer_forest")
    assert len(spec["data"]) == 4 * 2
    assert {d["name"] for d in spec["data"]} == {"wesely1989", "zhang2003"}
    assert spec["layout"]["barmode"] == "group"
    fig = fs.scheme_vd(runs, "alder_hill", "conifer_forest")
    assert len(fig.data) == 8


def test_budget_difference_from_a_compared_table():
    rows = []
    for scheme, so2 in (("wesely1989", 2.0), ("zhang2003", 3.5)):
        for sp, v in (("SO2", so2), ("HNO3", 1.0), ("pSO4", 0.2)):
            rows.append({"site": "a", "receptor": "grass", "pathway": "dry", "species": sp,
                         "period": "span", "flux_kg_ha_yr": v, "scheme": scheme})
    t = pd.DataFrame(rows)
    wide = fs.budget_difference(t, "a", "grass")
    assert wide.loc["SO2", "difference"] == pytest.approx(1.5)
    assert wide.loc["HNO3", "difference"] == 0.0
    assert "pSO4" not in wide.index              # particles do not depend on the scheme
    spec = fs.budget_difference_spec(t, "a", "grass")
    assert [d["name"] for d in spec["data"]] == ["wesely1989", "zhang2003"]
    with pytest.raises(ValueError, match="compare_schemes"):
        fs.budget_difference(t.drop(columns="scheme"), "a", "grass")
    assert np.isfinite(wide.to_numpy()).all()


def test_spread_sentence_by_hand():
    """A made-up table: dry N 10 -> 12.3 (+23 %), dry S 2 -> 1.9 (-5 %)."""
    t = pd.DataFrame({"element": ["N", "S"], "wesely1989": [10.0, 2.0],
                      "zhang2003": [12.3, 1.9]}, index=["N dry", "S dry"])
    t["difference"] = t["zhang2003"] - t["wesely1989"]
    t["percent"] = 100 * t["difference"] / t["wesely1989"]
    s = fs.spread_sentence(t)
    assert s == ("Dry N differs by 23 % and dry S by 5 % between the two published gas "
                 "schemes (zhang2003 minus wesely1989: +2.3 kg N ha-1 yr-1, "
                 "-0.1 kg S ha-1 yr-1).")
    t.loc["N dry", ["wesely1989", "difference", "percent"]] = [0.0, 12.3, np.nan]
    # no percent of 0: the reason, and the difference beside the others' (it said
    # nothing of dry N before the 2026-12 review)
    assert fs.spread_sentence(t) == (
        "Dry N differs (no percent: the value under wesely1989 is 0) and dry S by 5 % "
        "between the two published gas schemes (zhang2003 minus wesely1989: "
        "+12.3 kg N ha-1 yr-1, -0.1 kg S ha-1 yr-1).")
    spec = fs.budget_change_spec(t, "a", "grass")
    assert spec["data"][0]["y"] == ["S dry", "N dry"]
    assert spec["data"][0]["text"] == ["-5 %", "no %"]
    assert spec["data"][0]["customdata"][1][3] == "no percent: the value under wesely1989 is 0"


def test_no_percent_of_a_dry_n_below_zero(monkeypatch):
    """Review of the scheme tab: a dry N below 0 under A (net NH3 emission larger than
    the deposition of the other gases) gave a percent of a negative base, its sign
    flipped: -2 -> -1 (B deposits 1 more, by hand) read "-50 %".  Now no percent, the
    reason in the table, the bar's hover and the sentence; a base above 0 keeps its
    percent (by hand 100 x (12 - 10) / 10 = +20 %).  Old code: -50 and no
    percent_note."""
    from workbench.ui import summaries
    values = {"wesely1989": {"N_dry": -2.0, "S_dry": 10.0},
              "zhang2003": {"N_dry": -1.0, "S_dry": 12.0}}

    def mean_totals(ds, *args):          # the scheme's totals as the table reads them
        return pd.DataFrame({"value": pd.Series(values[ds])})

    def component_rates(ds, *args):       # no dry component rows
        return pd.DataFrame(columns=["pathway", "element", "species", "value"])
    monkeypatch.setattr(summaries, "mean_totals", mean_totals)
    monkeypatch.setattr(summaries, "component_rates", component_rates)
    t = fs.scheme_budget_table({s: s for s in values}, "a", "grass")
    t = t.loc[["N dry", "S dry"]]
    assert t.loc["N dry", "percent_note"] == ("no percent: the value under wesely1989 is "
                                              "below 0, a net emission")
    assert np.isnan(t.loc["N dry", "percent"])
    assert t.loc["S dry", "percent"] == pytest.approx(20.0)
    s = fs.spread_sentence(t)
    assert s.startswith("Dry N differs (no percent: the value under wesely1989 is below 0, "
                        "a net emission) and dry S by 20 %"), s
    assert "+1 kg N ha-1 yr-1" in s
    spec = fs.budget_change_spec(t, "a", "grass")
    assert spec["data"][0]["text"] == ["+20 %", "no %"]
    assert "-50" not in json.dumps(spec)


def test_small_differences_keep_their_digits():
    """Browser trial (the demo's farm, 2022-2023): dry S 0.682129 -> 0.678358 kg S/ha/yr
    read "dry S by 1 % ... -0.00 kg S ha-1 yr-1" and the S total's bar "-0 %"; the
    numbers keep three (amounts) or two (percentages under 1 %) significant digits, and
    an unchanged component reads "0 %" (it read "+0 %")."""
    t = pd.DataFrame({"element": ["N", "S", "S", "S"],
                      "wesely1989": [22.002648, 0.682129, 4.828588, 0.146111],
                      "zhang2003": [20.788265, 0.678358, 4.824817, 0.146111]},
                     index=["N dry", "S dry", "S total", "dry pSO4"])
    t["difference"] = t["zhang2003"] - t["wesely1989"]
    t["percent"] = 100 * t["difference"] / t["wesely1989"]
    s = fs.spread_sentence(t)
    # by hand: 100 x 0.003771 / 0.682129 = 0.553 %; 0.003771 to 3 significant digits
    assert "dry S by 0.55 %" in s and "-0.00377 kg S ha-1 yr-1" in s, s
    assert "Dry N differs by 6 %" in s and "-1.21 kg N ha-1 yr-1" in s, s
    assert "-0.00 " not in s
    text = dict(zip(fs.budget_change_spec(t, "a", "grass")["data"][0]["y"],
                    fs.budget_change_spec(t, "a", "grass")["data"][0]["text"]))
    # 100 x 0.003771 / 4.828588 = 0.0781 %
    assert text == {"dry pSO4": "0 %", "S total": "-0.078 %", "S dry": "-0.55 %",
                    "N dry": "-6 %"}
