"""A value equal to its threshold, in the decimals a person types, is on the side the
docs say (docs/methods_wet.md: "allowed" bounds and minimums are inclusive), although
binary floating point may put the computed value a few units in the last place beyond
(5.4 mm / 4.5 mm = 1.2000000000000002; 2.4 / (2.4 + 0.8) = 0.7499999999999999).

Every expected value here is decimal arithmetic on the inputs, done by hand in the
comments. The acceptance tiers are those of WMO GAW Report No. 160 (2004), Section 8
(from memory), as in test_qa.py; the screens' thresholds are the documented defaults
(K 10, NH4 100, PO4 1 umol/L; pH 6.0 with Ca 50 umol/L; snow share 0.8).
"""
import numpy as np
import pandas as pd
import pytest
from wet.wet_samples import make_met, make_samples, week

from workbench.wet import WetOptions, qa, screen, wet_deposition


def _bal(so4, no3, nh4):
    """Composition whose free acidity closes the balance: H+ = 2 SO4 + NO3 - NH4 (umol/L)."""
    return dict(SO4=so4, NO3=no3, NH4=nh4, pH=-np.log10((2 * so4 + no3 - nh4) * 1e-6))


def test_ion_difference_equal_to_its_limit_passes():
    # pH 4.0 -> H+ 100 ueq/L; CE = 100 + NH4 15 + Na 435 = 550 ueq/L;
    # AN = 2 x SO4 100.5 + NO3 249 = 450 ueq/L (no bicarbonate);
    # ID = 100 x 100 / 1000 = 10.0 %, CE + AN = 1000 > 500 -> allowed 10 %: inside.
    s, e = week("2021-06-01")
    row = dict(start=s, end=e, gauge_depth=5.0, pH=4.0, NH4=15.0, Na=435.0, SO4=100.5,
               NO3=249.0)
    sc = screen(make_samples([row], ions=("SO4", "NO3", "NH4", "Na")),
                WetOptions(bicarbonate=False))
    assert sc["ion_difference"].item() == pytest.approx(10.0, rel=1e-12)
    assert sc["ion_balance_limit"].item() == 10.0
    assert sc["ion_balance_check"].item() == "pass"
    assert sc["status"].item() == "used"


def test_tier_bound_is_inclusive_after_rounding():
    # CE + AN = 50 ueq/L belongs to the first tier (<= 50: 60 %) even when the sum of
    # converted ions lands at 50.000000000000007
    tiers = WetOptions().ion_balance_tiers
    assert qa.tier_limit(50.0 * (1 + 1e-15), tiers) == 60.0
    assert qa.tier_limit(50.01, tiers) == 30.0


def test_capture_ratio_equal_to_the_upper_end_passes():
    # 5.4 mm in the collector, 4.5 mm in the gauge: r = 1.2, the upper end of the
    # range (no meteorology: "unknown", 0.5 - 1.2)
    s, e = week("2021-06-01")
    sc = screen(make_samples([dict(start=s, end=e, gauge_depth=4.5, sample_depth=5.4,
                                   **_bal(20, 20, 10))], ions=("SO4", "NO3", "NH4")))
    assert sc["capture_ratio"].item() == pytest.approx(1.2)
    assert sc["capture_check"].item() == "pass"
    assert sc["status"].item() == "used"


def test_snow_share_of_exactly_one_fifth_is_rain():
    # rain in 5 hours of the week, one of them at -2 degC: share 1/5 = 0.2 <= 1 - 0.8
    # -> rain (docs: "rain when s <= 0.2"), so a capture of 0.6 is low (rain 0.7 - 1.2)
    s, e = week("2021-03-01")
    wet_hours = pd.date_range("2021-03-02T01:00", periods=5, freq="h")
    precip = lambda t: np.where(t.isin(wet_hours), 1.0, 0.0)
    temp = lambda t: np.where(t == wet_hours[0], 271.15, 280.15)
    met = make_met(["A"], "2021-02-28", "2021-03-09", temperature=temp, precipitation=precip)
    sc = screen(make_samples([dict(start=s, end=e, gauge_depth=5.0, sample_depth=3.0,
                                   **_bal(20, 20, 10))], ions=("SO4", "NO3", "NH4")), met=met)
    assert sc["snow_share"].item() == pytest.approx(0.2)
    assert sc["precip_type"].item() == "rain"
    assert sc["capture_check"].item() == "low"


def test_screens_hit_at_their_thresholds():
    # K 10, NH4 100, PO4 1 umol/L: every ">=" of the biological screen holds;
    # pH 6.0 with Ca 50 umol/L: the dust screen holds
    s, e = week("2021-06-01")
    rows = [dict(start=s, end=e, gauge_depth=5.0, K=10.0, NH4=100.0, PO4=1.0, pH=5.0,
                 SO4=20.0),
            dict(start=s, end=e, sampler_id="B", gauge_depth=5.0, Ca=50.0, pH=6.0, SO4=20.0)]
    sc = screen(make_samples(rows, ions=("K", "NH4", "PO4", "Ca", "SO4")))
    assert sc["qa_bio"].values.tolist() == [True, False]
    assert sc["qa_dust"].values.tolist() == [False, True]
    assert bool(qa.biological_screen(0.010, 0.100, 0.001, 0.010, 0.100, 0.001))


@pytest.mark.parametrize("valid, other, minimum", [(5.81, 2.49, 0.70), (2.4, 0.8, 0.75)])
def test_valid_precipitation_fraction_equal_to_its_minimum_passes(valid, other, minimum):
    # 5.81 of 8.30 mm = 70.0 %; 2.4 of 3.2 mm = 75.0 % (the annual criterion some
    # networks use): equal to the minimum, so the criterion holds
    rows = [dict(start="2021-06-01", end="2021-06-16", gauge_depth=valid, **_bal(20, 20, 10)),
            dict(start="2021-06-16", end="2021-07-01", gauge_depth=other, flags="contaminated")]
    opt = WetOptions(min_valid_precip_fraction=minimum, min_coverage_fraction=0.5)
    wet = wet_deposition(screen(make_samples(rows, ions=("SO4", "NO3", "NH4"))), "month", opt)
    june = wet.sel(site="A", period="2021-06")
    assert june["valid_precip_fraction"].item() == pytest.approx(minimum)
    assert june["coverage_fraction"].item() == pytest.approx(0.5)
    assert june["completeness_reasons"].item() == ""
    assert june["status"].item() == "complete"


def test_one_comparison_rule():
    # the helpers: equal (to rounding) is inside; a real difference is not
    assert not qa.exceeds(1.2000000000000002, 1.2) and qa.exceeds(1.2001, 1.2)
    assert not qa.falls_short(0.7499999999999999, 0.75) and qa.falls_short(0.7499, 0.75)
    assert qa.at_least(0.009999999999999998, 0.010) and not qa.at_least(0.0099, 0.010)
    assert qa.at_most(0.2, 1.0 - 0.8) and not qa.at_most(0.2001, 0.2)
    assert not qa.exceeds(np.inf, np.inf) and qa.exceeds(np.inf, 10.0)
    assert not qa.exceeds(np.nan, 1.0) and not qa.falls_short(np.nan, 1.0)


def test_budget_per_ion_fraction_equal_to_its_minimum_is_not_flagged():
    # SO4 measured in 5.81 of the 8.30 mm (70.0 %), NO3 and NH4 in all: the budget's
    # per-ion check (docs/budget.md, wet components) takes 70.0 % as meeting 70 %
    from workbench.budget import BudgetOptions
    from workbench.budgetstatus import wet_component
    rows = [dict(start="2021-06-01", end="2021-06-16", gauge_depth=5.81, **_bal(20, 20, 10)),
            dict(start="2021-06-16", end="2021-07-01", gauge_depth=2.49,
                 **dict(_bal(20, 20, 10), SO4=np.nan))]
    wet = wet_deposition(screen(make_samples(rows, ions=("SO4", "NO3", "NH4"))), "month")
    frac = wet["ion_valid_precip_fraction"].sel(ion="SO4").item()
    assert frac == pytest.approx(0.70)
    status = wet["status"].values.astype(object)
    assert status.tolist() == [["complete"]]
    st, note, _, fails = wet_component(wet, "SO4", BudgetOptions(sulfate_basis="total"),
                                       status, wet["completeness_failed"].values)
    assert st.tolist() == [["complete"]] and not fails.any()
    assert note.tolist() == [[""]]


def test_budget_dry_component_with_exactly_a_tenth_filled_vd_is_not_filled():
    # docs/budget.md: "more than 10 % filled Vd (min_vd_coverage = 0.9) has status
    # filled"; 72 filled of the 720 hours of June is 10 %, not more (1 - 0.9 is
    # 0.09999999999999998 in binary); 73 hours is more
    from workbench.budget import BudgetOptions
    from workbench.budgetstatus import dry_status
    share = np.array([72 / 720, 73 / 720])
    ones = np.ones(2)
    status, fails, _ = dry_status(ones, 1 - share, share, ones, np.ones(2, bool),
                                  np.ones(2, bool), False, BudgetOptions())
    assert status.tolist() == ["complete", "filled"] and not fails.any()
    # coverage equal to min_air_coverage (0.75: 540 of 720 h) passes
    cov = np.array([540 / 720, 539 / 720])
    status, fails, _ = dry_status(cov, ones, 0 * ones, cov, np.ones(2, bool),
                                  np.ones(2, bool), False, BudgetOptions())
    assert status.tolist() == ["complete", "flagged"] and fails.tolist() == [False, True]
