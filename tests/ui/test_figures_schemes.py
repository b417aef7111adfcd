"""The gas schemes side by side: seasonal Vd by scheme and the budget difference."""
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
                 "schemes (zhang2003 minus wesely1989: +2.30 kg N ha-1 yr-1, "
                 "-0.10 kg S ha-1 yr-1).")
    t.loc["N dry", ["wesely1989", "percent"]] = [0.0, np.nan]
    assert fs.spread_sentence(t).startswith("Dry S differs by 5 %")
    spec = fs.budget_change_spec(t, "a", "grass")
    assert spec["data"][0]["y"] == ["S dry", "N dry"]
    assert spec["data"][0]["text"] == ["-5 %", ""]
