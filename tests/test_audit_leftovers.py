"""Leftovers of the wet, budget and dry-output audit (2026-12, branch qc-audit).

Every expected value is worked out here by hand (numpy or arithmetic) from a named
source, never by calling the code under test for it.  Sites, dates and concentrations
are invented.
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

sys.path.insert(0, str(Path(__file__).parent))

from workbench import species as _species  # noqa: E402
from workbench import units as _units  # noqa: E402

# IUPAC standard atomic weights, abridged, conventional values for the elements given as
# intervals (from memory; Prohaska et al. 2022, Pure Appl. Chem. 94, 573) [g mol-1]
IUPAC_FROM_MEMORY = {"H": 1.008, "C": 12.011, "N": 14.007, "O": 15.999, "Na": 22.990,
                     "Mg": 24.305, "S": 32.06, "Cl": 35.45, "K": 39.098, "Ca": 40.078}


# ---------------------------------------------------------------- 5. one source of constants
def test_atomic_weights_are_the_iupac_standard_values():
    # from memory (above); periodictable and molmass check the formula masses elsewhere
    # (tests/test_species.py)
    for el, w in IUPAC_FROM_MEMORY.items():
        assert _species.ATOMIC_WEIGHT[el] == pytest.approx(w, abs=5e-4), el
        assert _species.element_molar_mass(el) == pytest.approx(w * 1e-3, abs=5e-7)


def test_unit_factors_come_from_pint():
    # SI prefixes and the hectare (BIPM SI Brochure, 9th ed., Tables 7 and 8)
    assert _units.UG_PER_KG == 1e9 and _units.M2_PER_HA == 1e4 and _units.MM_PER_M == 1e3


def test_total_nitrate_in_ug_n_follows_the_species_table(tmp_path, monkeypatch):
    # HNO3 + pNO3 as ug N/m3 in summary.csv (budget.derived): the molar mass of N is read
    # from the species table (one source), not written by hand (it was 14.007e-3 * 1e9
    # in budget.py): with N at 15.000 g/mol the figure scales by 15.000 / 14.007
    from test_budget import _write

    from workbench.budget import derived
    from workbench.cli import run_scenario
    sc = _write(tmp_path)
    air = tmp_path / "air.csv"
    lines = air.read_text().splitlines()
    lines[1] += ",pNO3 [ug/m3]"
    lines[2:] = [ln + ",1.0" for ln in lines[2:]]
    air.write_text("\n".join(lines) + "\n")
    sc.write_text(sc.read_text().replace("SO2 = 0.5", "SO2 = 0.5\npNO3 = 0.2"))
    _, result, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    base = derived(result.budget)["total_nitrate_ug_N_m3"].values
    # by hand: HNO3 0.5, 0.6, 0.4, 0.5 ug/m3 (63.012 g/mol, from memory of IUPAC) and
    # pNO3 1.0 ug/m3 (62.004 g/mol) each week, as N (14.007)
    hno3 = np.mean([0.5, 0.6, 0.4, 0.5]) / 63.012 * 14.007
    assert base.ravel()[0] == pytest.approx(hno3 + 1.0 / 62.004 * 14.007, rel=1e-3)
    monkeypatch.setitem(_species.ATOMIC_WEIGHT, "N", 15.0)
    moved = derived(result.budget)["total_nitrate_ug_N_m3"].values
    np.testing.assert_allclose(moved, base * 15.0 / 14.007, rtol=1e-12)


# ------------------------------------------------- 2. the seasonal fill leaves its period out
def _three_years():
    """Monthly samples Dec 2020 - Nov 2023 at site A (depths and SO4 from a seeded
    generator); January 2022 is a valid 1-25 Jan sample of 8 mm and a contaminated
    25 Jan - 1 Feb sample of 200 mm, so January 2022 and winter 2021/22 fail the
    valid-chemistry share (docs/methods_wet.md section 7)."""
    rng = np.random.default_rng(7)
    starts = pd.date_range("2020-12-01", "2023-11-01", freq="MS")
    rows = []
    for s in starts:
        e = s + pd.offsets.MonthBegin(1)
        if s == pd.Timestamp("2022-01-01"):
            rows.append(dict(start=str(s), end="2022-01-25", gauge_depth=8.0, SO4=90.0))
            rows.append(dict(start="2022-01-25", end=str(e), gauge_depth=200.0, SO4=900.0,
                             flags="contaminated"))
            continue
        rows.append(dict(start=str(s), end=str(e), gauge_depth=float(rng.uniform(10, 60)),
                         SO4=float(rng.uniform(5, 40))))
    return pd.DataFrame(rows), rows


@pytest.mark.parametrize("resolution", ["month", "season"])
def test_the_seasonal_fill_is_the_pwm_of_the_other_samples_of_its_season(resolution):
    from wet.wet_samples import make_samples

    from workbench import periods as P
    from workbench.wet import WetOptions, screen, wet_deposition
    frame, rows = _three_years()
    o = WetOptions(period_fill="seasonal")
    per = P.make_periods("2020-12-01", "2023-12-01", resolution)
    wet = wet_deposition(screen(make_samples(rows, ions=("SO4", "NO3", "NH4", "Na")), o),
                         per, o).sel(site="A")
    p0 = pd.Timestamp("2022-01-01" if resolution == "month" else "2021-12-01")
    p1 = pd.Timestamp("2022-02-01" if resolution == "month" else "2022-03-01")
    label = per.loc[per["start"] == p0, "label"].item()
    cell = wet.sel(period=label)
    assert cell["status"].item() == "filled"
    # by hand, numpy only: the used winter samples (Dec, Jan, Feb starts; every sample
    # lies in one month) that do not overlap the period, depth-weighted (section 5)
    st = pd.to_datetime(frame["start"], format="ISO8601").to_numpy()
    en = pd.to_datetime(frame["end"], format="ISO8601").to_numpy()
    month = pd.DatetimeIndex(st).month.to_numpy()
    used = ~frame.get("flags", pd.Series("", index=frame.index)).fillna("").astype(bool).to_numpy()
    winter = np.isin(month, [12, 1, 2])
    own = (st < np.datetime64(p1)) & (en > np.datetime64(p0))
    take = used & winter & ~own
    d, c = frame["gauge_depth"].to_numpy(), frame["SO4"].to_numpy()
    loo = np.sum(d[take] * c[take]) / np.sum(d[take])                   # umol/L
    assert cell["pwm_SO4"].item() == pytest.approx(loo * 1e-3, rel=1e-12)
    # the old rule (its own valid 8 mm of 90 umol/L inside the season's mean) differs
    with_own = used & winter
    old = np.sum(d[with_own] * c[with_own]) / np.sum(d[with_own])
    assert abs(old - loo) > 1e-3 * loo
    # its flux: the filled PWM times the period's own rain, all of it
    rain = np.sum(d[own])
    assert cell["dep_SO4"].item() == pytest.approx(loo * 1e-3 * rain * 1e-3, rel=1e-12)


def test_a_record_of_one_season_leaves_no_fill():
    # one winter: January's fill would rest on December and February of the same winter
    # only; a record with January alone has nothing else: no fill, the month stays
    # flagged (never a fill made of its own samples)
    from wet.wet_samples import make_samples

    from workbench import periods as P
    from workbench.wet import WetOptions, screen, wet_deposition
    rows = [dict(start="2021-01-01", end="2021-01-25", gauge_depth=8.0, SO4=90.0),
            dict(start="2021-01-25", end="2021-02-01", gauge_depth=200.0, SO4=900.0,
                 flags="contaminated")]
    o = WetOptions(period_fill="seasonal")
    wet = wet_deposition(screen(make_samples(rows, ions=("SO4", "NO3", "NH4", "Na")), o),
                         P.make_periods("2021-01-01", "2021-02-01", "month"), o)
    jan = wet.sel(site="A", period="2021-01")
    assert jan["status"].item() == "flagged" and not bool(jan["filled"].item())
    assert jan["pwm_SO4"].item() == pytest.approx(90e-3)
