"""Leftovers of the wet, budget and dry-output audit (2026-12).

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


# ----------------------------------------- 1. a sample without the sea-salt tracer is named
def test_a_precipitation_sample_without_na_is_named_and_its_sea_salt_estimated(tmp_path):
    # the invented tiny site of tests/test_budget.py: weeks of 10, 0 (dry), 20 and 5 mm
    # with SO4 20, -, 10, 40 umol/L; Na 50, -, (none), 50 umol/L. The nss PWM is the SO4
    # PWM less 0.0605 x the Na PWM of the samples that have Na (Keene et al. 1986, SO4/Na
    # 0.121 eq/eq, from memory): the 20 mm week takes the period's Na PWM of its other
    # samples (50 umol/L). Its Na share is 15/35 = 0.43 < 0.7, so the row also fails as
    # before; what is new is the note naming the sample (line 4, from 2021-02-15).
    from test_budget import GAUGE, SO4_UMOL, _get, _write

    from workbench.cli import run_scenario
    sc = _write(tmp_path)
    sc.write_text(sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"'))
    precip = tmp_path / "precip.csv"
    lines = precip.read_text().splitlines()
    na = {1: "50.0", 3: "", 4: "50.0"}                     # file lines 2, 4, 5
    for r, v in na.items():
        lines[r] = lines[r].rsplit(",", 1)[0] + "," + v
    precip.write_text("\n".join(lines) + "\n")
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    so4 = _get(pd.read_csv(written["budget.csv"]), "S", "wet", "SO4")
    wet = [(c, p) for c, p in zip(SO4_UMOL, GAUGE) if p > 0]
    pwm_so4 = sum(c * p for c, p in wet) / sum(p for _, p in wet)
    nss = pwm_so4 - 0.121 / 2 * 50.0                                       # umol/L
    assert so4["flux_kg_ha"] == pytest.approx(nss * 1e-6 * sum(GAUGE) * 32.06e-3 * 1e4,
                                              rel=1e-6)
    assert ("Na missing in 1 sample with SO4 (from 2021-02-15 line 4; 57.1 % of the "
            "precipitation): sea salt taken as the period's Na PWM of its other samples"
            in so4["note"]), so4["note"]


@pytest.mark.parametrize("missing", [[1], [0, 1, 2, 3]])
def test_weeks_of_particulate_sulfate_without_sodium_are_named(tmp_path, missing):
    # pSO4 2.0 ug/m3 and pNa 1.0 ug/m3 every week of February 2021 at Vd 0.2 cm/s, pNa
    # missing in the weeks `missing`: their total pSO4 (sea salt included) stands for the
    # non-sea-salt part, as before, but now the row is flagged and names them (before:
    # 'complete', no word). nss pSO4 = pSO4 - 0.0605 pNa (Keene et al. 1986, from
    # memory); IUPAC molar masses from memory: SO4 96.056, Na 22.990 g/mol.
    from test_budget import WEEKS, _get, _with_particles

    from workbench.cli import run_scenario
    sc = _with_particles(tmp_path)
    sc.write_text(sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"'))
    air = tmp_path / "air.csv"
    lines = air.read_text().splitlines()
    for w in missing:
        lines[2 + w] = lines[2 + w].rsplit(",", 1)[0] + ","
    air.write_text("\n".join(lines) + "\n")
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    row = _get(pd.read_csv(written["budget.csv"]), "S", "dry", "pSO4")
    so4, na = 2.0e-6 / 96.056, 1.0e-6 / 22.990                           # mol/m3
    week = 0.2e-2 * 7 * 86400                                            # m of air
    by_hand = sum((so4 if w in missing else so4 - 0.121 / 2 * na) * week
                  for w in range(4)) * 32.06e-3 * 1e4                   # kg S/ha
    assert row["flux_kg_ha"] == pytest.approx(by_hand, rel=1e-3)
    days = ", ".join(f"{WEEKS[w]:%Y-%m-%d}" for w in missing)
    if len(missing) < 4:
        # weeks without pNa among weeks with it: flagged, the weeks named
        assert row["status"] == "flagged"
        assert (f"pNa missing in {len(missing)} of 4 pSO4 samples (from {days}): total "
                "pSO4 used for them (sea salt included)") in row["note"], row["note"]
    else:
        # no pNa at the site at all: one basis over the record, said, not flagged (a
        # flag in every period would leave the site's S out of every trend)
        assert row["status"] == "complete"
        assert ("no pNa measured at the site: total pSO4 used in place of non-sea-salt "
                "pSO4 (sea salt included, an upper bound; small inland)") in row["note"]
        assert "pNa missing" not in row["note"]
    tot = _get(pd.read_csv(written["budget.csv"]), "S", "total", "all")
    assert bool(tot["passes"])                  # flagged for the basis, not for coverage


def test_a_site_with_every_week_of_sodium_says_nothing(tmp_path):
    from test_budget import _get, _with_particles

    from workbench.cli import run_scenario
    sc = _with_particles(tmp_path)
    sc.write_text(sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"'))
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    row = _get(pd.read_csv(written["budget.csv"]), "S", "dry", "pSO4")
    assert row["status"] == "complete" and "pNa missing" not in str(row["note"])


# ------------------------------- 3. Monte Carlo of a dry nss pSO4 period clipped at 0
def _nss_near_zero(tmp_path, excess=0.01):
    """The tiny site of tests/test_budget.py with pSO4 2.0 ug/m3 every week of February
    2021 at Vd 0.2 cm/s and pNa such that its sea-salt sulfate is (1 + excess) x the
    pSO4 (molar masses IUPAC, from memory: SO4 96.056, Na 22.990 g/mol; SO4/Na 0.0605
    mol/mol, Keene et al. 1986, from memory): the month's nss sum is below 0 and
    clipped in the budget. Returns (study, result, T_n [kg S/ha per week])."""
    from test_budget import _with_particles

    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    sc = _with_particles(tmp_path)
    sc.write_text(sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"'))
    so4_mol = 2.0e-6 / 96.056                                            # mol/m3
    na_ug = (1 + excess) * so4_mol / (0.121 / 2) * 22.990e6                # ug/m3
    air = tmp_path / "air.csv"
    lines = air.read_text().splitlines()
    lines[2:] = [ln.rsplit(",", 1)[0] + f",{na_ug:.9f}" for ln in lines[2:]]
    air.write_text("\n".join(lines) + "\n")
    s = load_scenario(sc)
    study = Study.from_scenario(s)
    res = study.run(s.options["wet"], s.options["dry"], s.options["budget"], s.fixed_velocity,
                    "month", "2021-02-01", "2021-03-01")
    t_week = so4_mol * 0.2e-2 * 7 * 86400 * 32.06e-3 * 1e4               # kg S/ha
    return study, res, t_week


def test_a_clipped_dry_nss_period_gets_an_honest_interval(tmp_path):
    # Only the air analyses err (5 %, pSO4 and pNa apart; every other spread 0). A draw
    # is max(0, sum_n d_n T_n - e_n S_n) with T_n the week's total pSO4 and S_n = 1.01
    # T_n its sea-salt sulfate: by hand a normal of mean -0.04 T and standard deviation
    # 0.05 T sqrt(4 + 4 x 1.01^2) = 0.1421 T, clipped at 0, so its 5 and 50 % quantiles
    # are 0 and its 95 % quantile is -0.04 T + 1.6449 x 0.1421 T = 0.194 T (normal
    # quantile 1.6449, common practice). Before, the clipped period's point was 0 and
    # every draw 0 x ratio = 0: a 5-95 % range of [0, 0], as if known exactly.
    import sys as _sys
    _sys.path.insert(0, str(Path(__file__).parent / "analysis"))
    from tiny_site import OFF

    from workbench.analysis import uncertainty as U
    from workbench.analysis.quantile_tables import quantile_table  # noqa: F401
    study, res, t = _nss_near_zero(tmp_path)
    row = res.table[(res.table["species"] == "pSO4") & (res.table["pathway"] == "dry")]
    assert row["flux_kg_ha"].iloc[0] == 0.0 and "clipped" in row["note"].iloc[0]
    opt = U.UncertaintyOptions(draws=4000, seed=11, **{**OFF, "air_rel_sd": 0.05})
    q = U.monte_carlo(res, study, opt)
    dep = q.budget["deposition"].sel(site="alpha", component="S/dry/pSO4").isel(period=0)
    kg = dep.values[:, 0] * 32.06e-3 * 1e4                        # (quantile,) kg S/ha
    sd = 0.05 * t * np.sqrt(4 + 4 * 1.01 ** 2)
    p95 = -0.04 * t + 1.6449 * sd
    assert kg[0] == 0.0 and kg[1] == 0.0
    assert kg[2] == pytest.approx(p95, rel=0.08)
    assert (dep.values >= 0).all()                                # never a negative draw


def test_a_dry_nss_period_above_zero_draws_its_two_analyses_apart(tmp_path):
    # the same with sea salt 0.8 x pSO4: the nss sum 0.2 x 4 T is kept, and its spread is
    # that of the difference, 0.05 T sqrt(4 + 4 x 0.64) = 0.1281 T (by hand), not 5 % of
    # the nss value (0.04 T, the old draws): p95 - p05 = 2 x 1.6449 x 0.1281 T
    import sys as _sys
    _sys.path.insert(0, str(Path(__file__).parent / "analysis"))
    from tiny_site import OFF

    from workbench.analysis import uncertainty as U
    study, res, t = _nss_near_zero(tmp_path, excess=-0.2)
    opt = U.UncertaintyOptions(draws=4000, seed=11, **{**OFF, "air_rel_sd": 0.05})
    q = U.monte_carlo(res, study, opt)
    dep = q.budget["deposition"].sel(site="alpha", component="S/dry/pSO4").isel(period=0)
    kg = dep.values[:, 0] * 32.06e-3 * 1e4
    assert kg[1] == pytest.approx(0.8 * t, rel=0.03)
    sd = 0.05 * t * np.sqrt(4 + 4 * 0.8 ** 2)
    assert kg[2] - kg[0] == pytest.approx(2 * 1.6449 * sd, rel=0.08)
