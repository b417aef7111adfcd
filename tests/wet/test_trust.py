"""No status says more than the samples: flagged samples, gross errors, the
biological screen without PO4, and non-sea-salt sulfate without a tracer.

Expected values are arithmetic on the inputs (umol/L x mm = umol m-2); the sea-salt
ratio SO4/Na = 0.0605 mol/mol is Keene et al. (1986), as in test_seasalt.py.
"""
import numpy as np
import pytest

from workbench.wet import WetOptions, screen, wet_deposition

from .wet_samples import make_samples, week

# An acid rain sample that balances (the same as GOOD of test_qa.py, umol/L).
GOOD = dict(pH=4.3, NH4=30, Na=20, K=2, Ca=5, Mg=3, SO4=30, NO3=35, Cl=23)
IONS = ("NH4", "Na", "K", "Ca", "Mg", "SO4", "NO3", "Cl")


def _month(samples, site="A", depths=(10.0, 20.0, 5.0, 5.0)):
    """Four weekly samples of June 2021 (plus two days of the next week, dry)."""
    rows = []
    for k, (depth, chem) in enumerate(zip(depths, samples)):
        s, e = week(f"2021-06-{1 + 7 * k:02d}")
        rows.append(dict(start=s, end=e, site=site, gauge_depth=depth, **chem))
    s, e = week("2021-06-29")
    rows.append(dict(start=s, end=e, site=site, gauge_depth=0.0))
    return rows


def _june(wet, var, site="A"):
    return wet[var].sel(site=site, period="2021-06").item()


def test_kept_flagged_samples_flag_the_period_with_their_share():
    """A sample failing the ion balance (NH4 130 umol/L: |ID| about 30 % > 15 % of its tier,
    below the 80 % gross limit) is kept: the period is flagged, not complete, with
    one flagged sample carrying 20 of the 40 mm."""
    bad = dict(GOOD, NH4=130)
    rows = _month([GOOD, bad, GOOD, GOOD])
    sc = screen(make_samples(rows, ions=IONS))
    assert sc["status"].values[1] == "flagged"
    wet = wet_deposition(sc, "month")
    assert _june(wet, "status") == "flagged"
    assert _june(wet, "n_flagged") == 1
    assert _june(wet, "flagged_precip_fraction") == pytest.approx(20 / 40)
    assert "1 flagged sample kept (50.0 % of precipitation)" in _june(wet, "completeness_reasons")
    assert not _june(wet, "completeness_failed")
    # the same month without the bad sample is complete
    clean = wet_deposition(screen(make_samples(_month([GOOD] * 4), ions=IONS)), "month")
    assert _june(clean, "status") == "complete"
    assert _june(clean, "flagged_precip_fraction") == 0.0


@pytest.mark.parametrize("change, reason", [
    ({"NH4": 9999.0}, "qa_gross_concentration"),      # a sentinel typed as a value
    ({"Na": 2000.0, "Cl": 23.0}, "qa_gross_ion_balance"),   # Na x 100 (a unit slip)
])
def test_gross_errors_are_excluded_by_default(change, reason):
    """NH4 = 9999 umol/L (above the 2000 umol/L maximum) and Na x 100 (|ID| about 89 %,
    beyond 80 %) are excluded by default; with on_gross_error = "flag" they are kept
    and flagged.  The wet NH4 of the month is then the PWM of the clean samples."""
    rows = _month([GOOD, dict(GOOD, **change), GOOD, GOOD])
    sc = screen(make_samples(rows, ions=IONS))
    assert bool(sc[reason].values[1])
    assert sc["status"].values[1] == "excluded"
    wet = wet_deposition(sc, "month")
    # PWM of the clean samples (30 umol/L) x all 40 mm = 1200 umol m-2
    assert _june(wet, "dep_NH4") == pytest.approx(30e-6 * 40)
    # 20 of 40 mm without valid chemistry: below 70 %, so the month fails completeness
    assert _june(wet, "status") == "flagged" and _june(wet, "completeness_failed")
    kept = screen(make_samples(rows, ions=IONS), WetOptions(on_gross_error="flag"))
    assert kept["status"].values[1] == "flagged"


def test_biological_screen_without_po4_flags_instead_of_excluding():
    """K 20 and NH4 150 umol/L (a farm-site sample): without PO4 it is flagged and kept;
    with PO4 >= 1 umol/L it is excluded; with PO4 measured low it is used."""
    farm = dict(GOOD, K=20, NH4=150, NO3=120, SO4=70)
    sc = screen(make_samples([dict(start="2021-06-01", end="2021-06-08", gauge_depth=10,
                                   **farm)], ions=IONS))
    assert sc["qa_bio_no_po4"].item() and not sc["qa_bio"].item()
    assert sc["status"].item() == "flagged"
    with_po4 = IONS + ("PO4",)
    rows = [dict(start="2021-06-01", end="2021-06-08", gauge_depth=10, PO4=p, **farm)
            for p in (5.0, 0.2, np.nan)]
    sc = screen(make_samples(rows, ions=with_po4))
    assert sc["qa_bio"].values.tolist() == [True, False, False]
    assert sc["status"].values.tolist() == ["excluded", "used", "flagged"]


def test_nss_sulfate_without_tracer_falls_back_to_total_and_is_never_negative():
    """Site B has no Na: its nss SO4 is total SO4 with nssSO4_total_used set.  At site C
    the Na of one sample is so high that the sea-salt SO4 (0.0605 Na) exceeds the
    measured SO4: nss SO4 is clipped at 0 and flagged, never negative."""
    no_na = dict(GOOD, Na=np.nan)
    salty = dict(GOOD, SO4=5.0)             # 0.0605 x 100 umol/L Na = 6.05 > 5
    salty["Na"] = 100.0
    rows = (_month([GOOD] * 4, "A") + _month([no_na] * 4, "B")
            + _month([salty] * 4, "C"))
    wet = wet_deposition(screen(make_samples(rows, ions=IONS),
                                WetOptions(on_ion_balance_fail="flag")), "month")
    assert not _june(wet, "nssSO4_total_used", "A")
    assert _june(wet, "nssSO4_total_used", "B")
    assert _june(wet, "dep_nssSO4", "B") == pytest.approx(_june(wet, "dep_SO4", "B"))
    assert _june(wet, "dep_nssSO4", "B") == pytest.approx(30e-6 * 40)
    assert _june(wet, "nssSO4_clipped", "C")
    assert _june(wet, "dep_nssSO4", "C") == 0.0
    assert (wet["dep_nssSO4"].values[np.isfinite(wet["dep_nssSO4"].values)] >= 0).all()
    # at A: 30 - 0.0605 x 20 umol/L, times 40 mm
    assert _june(wet, "dep_nssSO4", "A") == pytest.approx((30 - 0.0605 * 20) * 1e-6 * 40,
                                                          rel=1e-3)
