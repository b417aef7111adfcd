"""precipitation_annual.csv: every precipitation-weighted mean with its own status and
valid share, by the rule of the budget's wet components (docs/methods_wet.md section 7,
docs/budget.md "Status").

The expected shares are counted by hand from the invented samples (equal 10 mm weeks:
the share is the number of weeks with a value over the number of weeks).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from wet.wet_samples import make_samples, week

from workbench import periods as P
from workbench.analysis.outputs import ion_status, precipitation_annual
from workbench.budget import BudgetOptions
from workbench.budgetstatus import wet_component
from workbench.wet import WetOptions, screen, wet_deposition

IONS = ("SO4", "NO3", "NH4", "Na")


def _wet():
    """Site A: ten 10 mm weeks of March-May 2021, SO4 analysed in 4 of them (40 % of
    the rain), NO3, NH4 and Na in all, then a dry week. Site B: the same weeks with no
    NH4 ever measured."""
    rows = []
    for site in ("A", "B"):
        for k in range(11):
            s, e = week(pd.Timestamp("2021-03-01") + pd.Timedelta(days=7 * k))
            r = dict(site=site, start=s, end=e, gauge_depth=10.0 if k < 10 else 0.0)
            if k < 10:
                r.update(NO3=20.0, Na=10.0)
                if site == "A":
                    r["NH4"] = 30.0
                if k < 4 or site == "B":
                    r["SO4"] = 25.0
            rows.append(r)
    per = P.make_periods(None, None, "custom",
                         ranges=[("2021-03-01", "2021-05-10", "wet"),
                                 ("2021-05-10", "2021-05-17", "dry")])
    o = WetOptions()
    return wet_deposition(screen(make_samples(rows, ions=IONS), o), per, o)


def test_an_ion_valid_for_40_percent_of_the_rain_is_flagged_in_its_own_column():
    wet = _wet()
    # the period itself passes: every week is used, the NO3 etc. carry it
    assert wet["status"].sel(site="A", period="wet").item() == "complete"
    t = precipitation_annual(wet).set_index(["site", "period"])
    a = t.loc[("A", "wet")]
    assert a["status"] == "complete"                     # the period's status, kept
    assert a["pwm_SO4_valid_share"] == pytest.approx(0.4)
    assert a["pwm_SO4_status"] == "flagged"
    assert a["pwm_NO3_valid_share"] == pytest.approx(1.0)
    assert a["pwm_NO3_status"] == "complete"
    # non-sea-salt sulfate: the smaller share of SO4 (0.4) and its tracer Na (1.0)
    assert a["pwm_nssSO4_valid_share"] == pytest.approx(0.4)
    assert a["pwm_nssSO4_status"] == "flagged"
    # site B never measured NH4: missing in its wet period (valid for 0 % of the rain)
    # and in its dry one (no share: nothing measured, nothing to be valid about)
    b, bd = t.loc[("B", "wet")], t.loc[("B", "dry")]
    assert b["pwm_NH4_status"] == "missing" and b["pwm_NH4_valid_share"] == 0.0
    assert bd["pwm_NH4_status"] == "missing" and np.isnan(bd["pwm_NH4_valid_share"])
    # a dry week at a site that measures the ion: nothing to be valid about (share 1,
    # as the period's valid_precip_fraction)
    d = t.loc[("A", "dry")]
    assert d["pwm_SO4_status"] == "complete" and d["pwm_SO4_valid_share"] == 1.0
    assert wet["valid_precip_fraction"].sel(site="A", period="dry").item() == 1.0


def test_the_ion_status_is_the_budget_wet_component_status():
    """The same rule as budget.csv's wet rows (workbench.budgetstatus.wet_component)."""
    wet = _wet()
    w_status = wet["status"].values.astype(object)
    for sp in ("SO4", "NO3", "NH4"):
        st, _, _, _ = wet_component(wet, sp, BudgetOptions(sulfate_basis="total"), w_status,
                                    wet["completeness_failed"].values)
        assert ion_status(wet, sp)[0].tolist() == st.tolist(), sp
    st, _, _, _ = wet_component(wet, "SO4", BudgetOptions(sulfate_basis="nss"), w_status,
                                wet["completeness_failed"].values)
    assert ion_status(wet, "nssSO4")[0].tolist() == st.tolist()


def test_the_written_file_keeps_its_columns_and_adds_each_ions(analysis_run):
    out, result, _ = analysis_run
    f = pd.read_csv(out / "precipitation_annual.csv", keep_default_na=False, na_values=[""])
    first = ["site", "period", "precipitation_mm", "precipitation_valid_mm"]
    assert list(f.columns[:4]) == first
    means = [c[4:-6] for c in f.columns if c.endswith("_ueq_l")]
    assert {"SO4", "NO3", "NH4", "H"} <= set(means)
    for name in means:
        assert f[f"pwm_{name}_status"].isin(["complete", "flagged", "filled", "missing"]).all()
        share = f[f"pwm_{name}_valid_share"].dropna()
        assert ((share >= 0) & (share <= 1)).all()
    # the budget's wet rows of the same sites and years say the same per ion
    b = pd.read_csv(out / "budget.csv", keep_default_na=False, na_values=[""])
    b = b[(b["pathway"] == "wet") & b["species"].isin(["NO3", "NH4"])]
    b = b.drop_duplicates(["site", "period", "species"]).astype({"period": str})
    m = b.merge(f.astype({"period": str}), on=["site", "period"])
    assert len(m) > 0
    for sp in ("NO3", "NH4"):
        rows = m[m["species"] == sp]
        assert (rows["status_x"] == rows[f"pwm_{sp}_status"]).all(), sp


def test_one_function_holds_the_rule_for_both(monkeypatch):
    """precipitation_annual.csv's per-ion status and the budget's wet rows call the same
    function (workbench.budgetstatus.wet_mean_status): the rule is written once, and
    both follow a change of it."""
    import workbench.budgetstatus as bs
    wet = _wet()
    calls = []
    real = bs.wet_mean_status

    def spy(w, name, w_status, fallback=False):
        calls.append(name)
        st, *rest = real(w, name, w_status, fallback)     # low, notes, share, gone, words
        return (np.where(st == "complete", "changed", st).astype(object), *rest)
    monkeypatch.setattr(bs, "wet_mean_status", spy)
    assert ion_status(wet, "nssSO4")[0][0, 1] == "changed"        # site A, its dry week
    w_status = wet["status"].values.astype(object)
    st, _, _, _ = wet_component(wet, "SO4", BudgetOptions(sulfate_basis="nss"), w_status,
                                wet["completeness_failed"].values)
    assert st[0, 1] == "changed"
    assert calls == ["nssSO4", "nssSO4"]
