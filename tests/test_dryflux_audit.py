"""The dry flux chain checked against hand-worked cases (concentration x hourly Vd ->
sampling periods -> reporting periods -> status and yearly rate).

Every expected value is computed in the test from the rule it documents, independently
of the code: SI arithmetic (1 ug/m3 = 1e-9 kg/m3, 1 cm/s = 0.01 m/s, 1 ha = 1e4 m2),
molar masses from the IUPAC standard atomic weights (S 32.06, N 14.007, O 15.999,
H 1.008 g/mol; IUPAC 2021 abridged table, conventional values), and the rules stated
in docs/budget.md.  Concentrations and sites are invented.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from workbench.budget import BudgetOptions, annual_factor
from workbench.budgetstatus import dry_status
from workbench.drycomponents import dry_components, dry_rows
from workbench.dryflux import period_deposition
from workbench.periods import make_periods
from workbench.units import element_deposition_in, to_amount

S, N, O, H = 32.06, 14.007, 15.999, 1.008          # g/mol, IUPAC (conventional values)
HOUR = 3600.0


# --------------------------------------------------------------------------- helpers
def _vd(values, start, sites=("a",), species=("SO2",), filled=None):
    """(vd, was_filled, source) per species on an hourly axis of end-of-hour labels."""
    values = np.asarray(values, float)
    t = pd.date_range(start, periods=values.shape[-1], freq="h").values
    data = np.broadcast_to(values, (len(sites), 1, values.shape[-1])).copy()
    da = xr.DataArray(data, dims=("site", "receptor", "time"),
                      coords={"site": list(sites), "receptor": ["grass"], "time": t})
    was = xr.zeros_like(da, dtype=bool)
    if filled is not None:
        was[0, 0, :] = np.asarray(filled, bool)
    return {sp: (da, was, "test") for sp in species}


def _air(rows, species="SO2", censored=None, limit=None, samplers=None):
    """Air Dataset of (site, start, end, value [mol m-3]) rows, as the reader makes it:
    a value below detection is NaN with its limit beside it."""
    df = pd.DataFrame(rows, columns=["site", "start", "end", "value"])
    n = len(df)
    return xr.Dataset({
        "site": ("period", df["site"].values.astype(str)),
        "start": ("period", pd.to_datetime(df["start"]).values),
        "end": ("period", pd.to_datetime(df["end"]).values),
        "line": ("period", np.arange(n) + 2),
        "sampler_id": ("period", np.asarray(samplers or ["s1"] * n)),
        species: ("period", df["value"].values.astype(float), {"quantity": "amount_density"}),
        f"{species}_censored": ("period", np.zeros(n, bool) if censored is None
                                else np.asarray(censored, bool)),
        f"{species}_detection_limit": ("period", np.full(n, np.nan) if limit is None
                                       else np.asarray(limit, float))})


def _dry(air, vel, periods, options=BudgetOptions(), sites=("a",)):
    return dry_components(dry_rows(air, vel, None, list(sites), options), periods)


def _status(d, sp="SO2", options=BudgetOptions()):
    """(status, note) of a dry component (site a, receptor grass, each period)."""
    k = list(d["species"].values).index(sp)
    cov = d["coverage"].values[:, None, :, k]
    st, _, note = dry_status(cov, d["vd_coverage"].values[..., k],
                             d["vd_filled_share"].values[..., k],
                             d["flux_coverage"].values[..., k],
                             d["measured"].values[:, None, None, k] & np.ones(cov.shape, bool),
                             np.ones(cov.shape, bool), False, options)
    return st[0, 0].tolist(), note[0, 0].tolist()


def _dep(d, sp="SO2"):
    return d["deposition"].sel(species=sp).values[0, 0]


def _weeks(first, n, value):
    t = pd.date_range(first, periods=n + 1, freq="7D")
    return [("a", t[i], t[i + 1], value) for i in range(n)]


# ------------------------------------------------------------------ units end to end
def test_one_microgram_at_one_cm_per_second_for_a_year():
    """1 ug/m3 x 1 cm/s over a Julian year (31 557 600 s) is 1e-9 kg/m3 x 0.01 m/s x
    31 557 600 s x 1e4 m2/ha = 3.15576 kg/ha of the species.  Over the calendar year
    2021 (8760 h, the rate of a whole year is its deposition) 3.1536 kg/ha.  Through
    the reader's unit conversion, the flux integration and the element conversion:
    S in SO2 x 32.06/64.058, N in HNO3 x 14.007/63.012, N in NH4+ x 14.007/18.038."""
    assert 1e-9 * 0.01 * 31_557_600 * 1e4 == pytest.approx(3.15576)
    year = make_periods("2021-01-01", "2022-01-01", "year")
    assert annual_factor(year).tolist() == [1.0]
    species_kg = 1e-9 * 0.01 * 8760 * HOUR * 1e4            # kg species / ha / yr
    masses = {"SO2": S + 2 * O, "HNO3": H + N + 3 * O, "pNH4": N + 4 * H}
    element = {"SO2": ("S", S), "HNO3": ("N", N), "pNH4": ("N", N)}
    for sp, m in masses.items():
        conc = to_amount(1.0, "ug/m3", sp)[0]                 # mol m-3
        assert conc == pytest.approx(1e-9 / (m * 1e-3), rel=1e-4)
        vel = _vd(np.full(8760, 0.01), "2021-01-01T01:00", species=(sp,))
        air = _air([("a", "2021-01-01", "2022-01-01", float(conc))], species=sp)
        mol = _dep(_dry(air, vel, year), sp)[0]               # mol m-2 of the species
        el, m_el = element[sp]
        kg = float(element_deposition_in(mol, el, "kg_ha"))
        assert kg == pytest.approx(species_kg * m_el / m, rel=1e-4), sp
    assert species_kg * S / (S + 2 * O) == pytest.approx(1.5783, abs=1e-4)  # kg S/ha/yr


# ------------------------------------------------ a sample's concentration on hourly Vd
def test_weekly_sample_takes_the_mean_vd_of_the_hours_whose_middle_lies_in_it():
    """A sample from 2021-03-01 00:45 to 03-08 00:45 holds the hours whose midpoints
    (hh:30) lie in it: mids from 03-01 01:30 (hour ending 02:00; the hour ending 01:00,
    mid 00:30, is out) to 03-08 00:30 (hour ending 01:00; mid 00:30 < 00:45), 168 hours.
    D = C x mean(Vd over those hours) x 168 h (the real length)."""
    n = 24 * 10
    t = pd.date_range("2021-03-01T01:00", periods=n, freq="h")
    vd = 0.001 + 0.0001 * (np.arange(n) % 17)              # varies hour to hour
    mid = t - pd.Timedelta("30min")
    t0, t1 = pd.Timestamp("2021-03-01T00:45"), pd.Timestamp("2021-03-08T00:45")
    inside = (mid >= t0) & (mid < t1)                       # the rule, by hand
    assert inside.sum() == 168
    c = 2e-8
    expected = c * vd[inside].mean() * 168 * HOUR
    rows, _ = period_deposition(_air([("a", t0, t1, c)]), "SO2",
                                _vd(vd, "2021-03-01T01:00")["SO2"][0], None)
    assert rows["deposition"].values[0, 0] == pytest.approx(expected, rel=1e-12)
    assert rows["vd_hours"].values[0, 0] == 168


def test_sample_across_the_year_end_is_split_by_hourly_vd():
    """A sample 2020-12-29 00:00 to 2021-01-05 00:00 (168 h), Vd 0.006 m/s in its 72
    hours of 2020 and 0.002 in its 96 hours of 2021: D = C (72 x 0.006 + 96 x 0.002)
    3600 s; 2020 takes 0.432/0.624 of it and 2021 0.192/0.624.  Each year is then
    scaled by its length over its covered hours (8784/72 for leap 2020, 8760/96)."""
    vd = np.r_[np.full(72, 0.006), np.full(96, 0.002)]
    vel = _vd(vd, "2020-12-29T01:00")
    c = 1e-8
    d_sample = c * (72 * 0.006 + 96 * 0.002) * HOUR
    years = make_periods("2020-01-01", "2022-01-01", "year")
    d = _dry(_air([("a", "2020-12-29", "2021-01-05", c)]), vel, years)
    got = _dep(d)
    assert got[0] == pytest.approx(d_sample * 0.432 / 0.624 * 8784 / 72, rel=1e-12)
    assert got[1] == pytest.approx(d_sample * 0.192 / 0.624 * 8760 / 96, rel=1e-12)
    np.testing.assert_allclose(d["coverage"].values[0, :, 0], [72 / 8784, 96 / 8760])


def test_unsorted_rows_and_gaps_between_samples():
    """Weeks 4, 1, 3 of February 2021 in that order (week 2 missing), Vd 0.01 m/s:
    D_Feb = (C1 + C3 + C4) x 0.01 x 168 h x 3600 x 672/504, coverage 504/672 = 0.75,
    which passes min_air_coverage 0.75 (inclusive) and fails 0.8."""
    wk = _weeks("2021-02-01", 4, 0.0)
    c = {0: 1e-8, 2: 3e-8, 3: 5e-8}
    rows = [(s, a, b, c[i]) for i, (s, a, b, _) in enumerate(wk) if i in c]
    rows = [rows[2], rows[0], rows[1]]
    feb = make_periods("2021-02-01", "2021-03-01", "month")
    d = _dry(_air(rows), _vd(np.full(672, 0.01), "2021-02-01T01:00"), feb)
    assert _dep(d)[0] == pytest.approx(9e-8 * 0.01 * 168 * HOUR * 672 / 504, rel=1e-12)
    assert d["coverage"].values[0, 0, 0] == 0.75
    assert _status(d)[0] == ["complete"]
    assert _status(d, options=BudgetOptions(min_air_coverage=0.8))[0] == ["flagged"]


def test_sample_longer_than_the_period():
    """A sample from 2021-01-25 to 2021-03-08 (42 d) with constant Vd: February takes
    672/1008 of it, covers all of February, and D_Feb = C Vd 672 h (no scaling)."""
    vel = _vd(np.full(1008, 0.004), "2021-01-25T01:00")
    feb = make_periods("2021-02-01", "2021-03-01", "month")
    d = _dry(_air([("a", "2021-01-25", "2021-03-08", 2e-8)]), vel, feb)
    assert _dep(d)[0] == pytest.approx(2e-8 * 0.004 * 672 * HOUR, rel=1e-12)
    assert d["coverage"].values[0, 0, 0] == 1.0


def test_two_backup_samplers_in_one_gap_count_its_hours_once():
    """Sampler A (primary: most hours) has weeks 1-2 of February 2021; back-ups B and C
    both have week 3; week 4 has nothing.  Covered: 504 of 672 h (0.75), not 672 (1.0):
    the hours of week 3 count once.  B (first by name among equal back-ups) fills the
    gap: D = (2 x C_A + C_B) x Vd x 168 h x 672/504.  Before the fix both B and C were
    kept: coverage 1.0 and the month 'complete' at min_air_coverage 0.8."""
    wk = _weeks("2021-02-01", 3, 0.0)
    rows = [(*wk[0][:3], 1e-8), (*wk[1][:3], 1e-8), (*wk[2][:3], 2e-8), (*wk[2][:3], 4e-8)]
    air = _air(rows, samplers=["A", "A", "B", "C"])
    feb = make_periods("2021-02-01", "2021-03-01", "month")
    d = _dry(air, _vd(np.full(672, 0.01), "2021-02-01T01:00"), feb)
    assert d["coverage"].values[0, 0, 0] == pytest.approx(0.75)
    assert _dep(d)[0] == pytest.approx(4e-8 * 0.01 * 168 * HOUR * 672 / 504, rel=1e-12)
    assert _status(d, options=BudgetOptions(min_air_coverage=0.8))[0] == ["flagged"]


def test_hourly_and_weekly_concentrations_agree_for_a_constant_concentration():
    """168 hourly rows of C and one weekly row of C on the same varying Vd give the
    same deposition: sum_h C Vd_h 3600 = C mean(Vd) 168 h 3600."""
    vd = 0.002 + 0.001 * np.sin(np.arange(168) / 5.0)
    vel = _vd(vd, "2021-06-07T01:00")
    t = pd.date_range("2021-06-07", periods=169, freq="h")
    hourly = _air([("a", t[i], t[i + 1], 3e-8) for i in range(168)])
    weekly = _air([("a", t[0], t[-1], 3e-8)])
    custom = make_periods(None, None, "custom", ranges=[(t[0], t[-1], "w")])
    by_hand = 3e-8 * vd.sum() * HOUR
    for air in (hourly, weekly):
        assert _dep(_dry(air, vel, custom))[0] == pytest.approx(by_hand, rel=1e-12)


# ------------------------------------------------------------- gaps in Vd and status
def test_an_hour_without_vd_takes_the_mean_of_the_others():
    """A week with Vd 0.01 except one hour with none (unfillable): the mean over the
    167 valid hours is 0.01, so D = C 0.01 x 168 h; the flux is known for the week."""
    vd = np.full(168, 0.01)
    vd[40] = np.nan
    rows, _ = period_deposition(_air([("a", "2021-06-07", "2021-06-14", 1e-8)]), "SO2",
                                _vd(vd, "2021-06-07T01:00")["SO2"][0], None)
    assert rows["deposition"].values[0, 0] == pytest.approx(1e-8 * 0.01 * 168 * HOUR)
    assert rows["vd_hours"].values[0, 0] == 167


def test_filled_vd_is_a_share_of_the_covered_hours():
    """docs/budget.md: a component whose covered hours have more than 10 % filled Vd is
    'filled'.  Three weeks of February covered (504 h), 55 filled hours inside them:
    55/504 = 0.109 > 0.1 -> filled (the period's share, 55/672 = 0.082, said complete
    before the fix).  The same 55 hours in the uncovered week touch no flux -> complete
    (the period's share, 168/672 with the whole week filled, said filled before)."""
    feb = make_periods("2021-02-01", "2021-03-01", "month")
    air = _air(_weeks("2021-02-01", 3, 1e-8))
    inside = np.zeros(672, bool)
    inside[:55] = True
    d = _dry(air, _vd(np.full(672, 0.01), "2021-02-01T01:00", filled=inside), feb)
    assert d["vd_filled_share"].values[0, 0, 0, 0] == pytest.approx(55 / 504)
    assert _status(d)[0] == ["filled"]
    outside = np.zeros(672, bool)
    outside[504:] = True
    d = _dry(air, _vd(np.full(672, 0.01), "2021-02-01T01:00", filled=outside), feb)
    assert d["vd_filled_share"].values[0, 0, 0, 0] == 0.0
    assert _status(d)[0] == ["complete"]


def test_filled_share_exactly_at_the_bound_is_not_more_than_it():
    """A 10-day period, all covered (240 h): 24 filled hours are 10 %, not 'more than
    10 %' (min_vd_coverage 0.9; 1 - 0.9 is 0.09999999999999998 in floating point) ->
    complete; 25 filled hours (10.4 %) -> filled."""
    p = make_periods(None, None, "custom", ranges=[("2021-05-01", "2021-05-11", "p")])
    air = _air([("a", "2021-05-01", "2021-05-11", 1e-8)])
    for n_filled, want in ((24, "complete"), (25, "filled")):
        mask = np.zeros(240, bool)
        mask[:n_filled] = True
        d = _dry(air, _vd(np.full(240, 0.01), "2021-05-01T01:00", filled=mask), p)
        assert _status(d)[0] == [want], n_filled


def test_air_coverage_exactly_at_the_bound_passes_to_rounding():
    """min_air_coverage is inclusive (docs: 'at least').  A 10-week custom period with
    7 weeks covered has coverage 7/10 = 0.7 and passes min_air_coverage = 0.7;
    with 0.71 it is flagged.  A share that the division leaves a rounding below its
    bound passes too (0.3 of 1680 h = 504 h: one correctly rounded division, so
    equal here; the slack guards sums of fractional hours)."""
    p = make_periods(None, None, "custom", ranges=[("2021-03-01", "2021-05-10", "p")])
    vel = _vd(np.full(1680, 0.01), "2021-03-01T01:00")
    d7 = _dry(_air(_weeks("2021-03-01", 7, 1e-8)), vel, p)
    assert _status(d7, options=BudgetOptions(min_air_coverage=0.7))[0] == ["complete"]
    assert _status(d7, options=BudgetOptions(min_air_coverage=0.71))[0] == ["flagged"]
    d3 = _dry(_air(_weeks("2021-03-01", 3, 1e-8)), vel, p)
    assert _status(d3, options=BudgetOptions(min_air_coverage=0.3))[0] == ["complete"]


# ----------------------------------------------------------- yearly rates, leap years
def test_yearly_rate_of_a_whole_leap_year_a_partial_year_and_a_month():
    """Constant C = 1e-8 mol/m3 at 0.005 m/s: the whole leap year 2020 deposits
    C Vd 8784 h and that is its yearly rate (factor 1); the year clipped to its second
    half (4416 h) deposits C Vd 4416 h, rate x 8784/4416; February 2020 (696 h)
    x 8784/696.  Each rate is C Vd 8784 h."""
    vel = _vd(np.full(8784, 0.005), "2020-01-01T01:00")
    air = _air([("a", "2020-01-01", "2021-01-01", 1e-8)])
    rate = 1e-8 * 0.005 * 8784 * HOUR
    whole = make_periods("2020-01-01", "2021-01-01", "year")
    half = make_periods("2020-07-01", "2021-01-01", "year", clip=True)
    feb = make_periods("2020-02-01", "2020-03-01", "month")
    for periods, hours in ((whole, 8784), (half, 4416), (feb, 696)):
        got = _dep(_dry(air, vel, periods))[0]
        assert got == pytest.approx(1e-8 * 0.005 * hours * HOUR, rel=1e-12)
        assert got * annual_factor(periods)[0] == pytest.approx(rate, rel=1e-12)


# ---------------------------------------------------- below detection, negative, none
def test_below_detection_enters_as_half_the_limit_and_a_negative_as_zero():
    """docs: a value below detection enters with the substitute of air_censored (half
    the limit by default); the reader censors a negative value with no limit (NaN),
    which enters as 0.  Weeks of February: <2e-9 (-> 1e-9), 4e-9, negative (-> 0),
    4e-9, Vd 0.01: D = (1e-9 + 4e-9 + 0 + 4e-9) x 0.01 x 168 h, status complete."""
    air = _air([(*w[:3], v) for w, v in zip(_weeks("2021-02-01", 4, 0),
                                             (np.nan, 4e-9, np.nan, 4e-9))],
               censored=[True, False, True, False], limit=[2e-9, np.nan, np.nan, np.nan])
    feb = make_periods("2021-02-01", "2021-03-01", "month")
    vel = _vd(np.full(672, 0.01), "2021-02-01T01:00")
    d = _dry(air, vel, feb)
    assert _dep(d)[0] == pytest.approx(9e-9 * 0.01 * 168 * HOUR, rel=1e-12)
    assert _status(d)[0] == ["complete"]
    d = _dry(air, vel, feb, BudgetOptions(air_censored="limit"))
    assert _dep(d)[0] == pytest.approx(10e-9 * 0.01 * 168 * HOUR, rel=1e-12)


def test_a_site_with_every_value_below_detection_is_measured():
    """Four weeks all below 2e-9 mol/m3: the species was measured; the flux is the
    substitute's, (1e-9) x 0.01 x 672 h, with the status of its coverage (complete),
    as for any week below detection.  Before the fix the site counted as 'not
    measured': status missing, no number, although the flux was computed."""
    air = _air([(*w[:3], np.nan) for w in _weeks("2021-02-01", 4, 0)],
               censored=[True] * 4, limit=[2e-9] * 4)
    feb = make_periods("2021-02-01", "2021-03-01", "month")
    d = _dry(air, _vd(np.full(672, 0.01), "2021-02-01T01:00"), feb)
    assert bool(d["measured"].sel(species="SO2").values[0])
    assert _dep(d)[0] == pytest.approx(1e-9 * 0.01 * 672 * HOUR, rel=1e-12)
    assert _status(d)[0] == ["complete"]


def test_a_species_without_air_data_is_missing_never_zero():
    """NO2 with a Vd but no column in the air file, and SO2 at a site without rows:
    deposition NaN and status missing with the reason, never a complete-looking 0."""
    feb = make_periods("2021-02-01", "2021-03-01", "month")
    vel = _vd(np.full(672, 0.01), "2021-02-01T01:00", sites=("a", "b"), species=("SO2", "NO2"))
    d = _dry(_air(_weeks("2021-02-01", 4, 1e-8)), vel, feb, sites=("a", "b"))
    assert np.isnan(d["deposition"].sel(species="NO2").values).all()
    assert not d["measured"].sel(species="NO2").values.any()
    assert np.isnan(d["deposition"].sel(species="SO2", site="b").values).all()
    st, note = _status(d.sel(site=["b"]))
    assert st == ["missing"] and "not measured" in note[0]
    st, note = _status(d, "NO2")
    assert st == ["missing"]


def test_hours_without_vd_on_one_side_of_a_month_end_keep_their_share():
    """A sample 2021-01-29 to 02-05 (168 h: 72 in January, 96 in February), Vd 0.01 m/s
    but none (unfillable) on January 29 and 30.  Its deposition is C mean(Vd) 168 h,
    the missing hours taking the mean of the others; the split must treat them alike:
    January holds 72/168 of it, February 96/168, each scaled by its covered hours
    (744/72, 672/96).  Before the fix the split gave the missing hours no Vd, so
    January got 24/168 and February 144/168 (February +50 % over its share)."""
    v = np.full(744 + 672, 0.01)
    v[24 * 28:24 * 30] = np.nan                               # Jan 29 and 30
    vel = _vd(v, "2021-01-01T01:00")
    months = make_periods("2021-01-01", "2021-03-01", "month")
    d = _dry(_air([("a", "2021-01-29", "2021-02-05", 1e-8)]), vel, months)
    total = 1e-8 * 0.01 * 168 * HOUR
    np.testing.assert_allclose(_dep(d), [total * 72 / 168 * 744 / 72,
                                         total * 96 / 168 * 672 / 96], rtol=1e-12)


def test_hours_without_any_vd_inside_sampled_weeks_count_as_not_modelled():
    """Four weeks of February sampled; in each, the 6 hours 00-05 UTC have no Vd at all
    (unfillable: the slot has no data in any year), 24 % of the hours behind the flux.
    Their Vd is the week's mean of the others (D = C mean(Vd) dt), so they are not
    modelled: share 24/96 = 0.25 > 0.1 -> 'filled', not 'complete' (before the fix the
    share counted diurnal fills only: 0, complete).  A week with no Vd at all adds no
    hours behind the flux (its absence is the flux coverage's business)."""
    feb = make_periods("2021-02-01", "2021-03-01", "month")
    hour = np.arange(672) % 24                                 # hour ending 01:00 -> 0
    v = np.where(hour < 6, np.nan, 0.01)
    d = _dry(_air(_weeks("2021-02-01", 4, 1e-8)), _vd(v, "2021-02-01T01:00"), feb)
    assert d["vd_filled_share"].values[0, 0, 0, 0] == pytest.approx(6 / 24)
    assert _dep(d)[0] == pytest.approx(4e-8 * 0.01 * 168 * HOUR, rel=1e-12)
    assert _status(d)[0] == ["filled"]
    v = np.full(672, 0.01)
    v[:168] = np.nan                                           # week 1 without any Vd
    d = _dry(_air(_weeks("2021-02-01", 4, 1e-8)), _vd(v, "2021-02-01T01:00"), feb)
    assert d["vd_filled_share"].values[0, 0, 0, 0] == 0.0
    assert d["flux_coverage"].values[0, 0, 0, 0] == pytest.approx(0.75)
    assert _status(d)[0] == ["complete"]


def test_dry_n_total_without_nh3_and_no2_is_partial_and_names_them():
    """Dry N of HNO3 1, pNO3 2, pNH4 3 mmol/m2 (complete) with NH3 and NO2 missing:
    the sum of the present ones, 6 mmol/m2, status 'partial', missing 'NH3 NO2'
    (docs/budget.md, status of a sum); every dry N component missing: NaN, 'missing',
    never a complete-looking 0."""
    from workbench.budget import COMPONENTS, _totals
    el = np.array([c[0] for c in COMPONENTS])
    pw = np.array([c[1] for c in COMPONENTS])
    sp = np.array([c[2] for c in COMPONENTS])
    given = {"HNO3": 1e-3, "pNO3": 2e-3, "pNH4": 3e-3}
    dep = np.array([given.get(s, np.nan) for s in sp])[None, None, None, :]
    st = np.array(["complete" if s in given else "missing" for s in sp],
                  dtype=object)[None, None, None, :]
    names, out = _totals(dep, st, np.where(np.isfinite(dep), 1.0, np.nan), el, pw, sp)
    k = names.index("N_dry")
    assert out["total_deposition"].values[0, 0, 0, k] == pytest.approx(6e-3)
    assert out["total_status"].values[0, 0, 0, k] == "partial"
    assert out["total_missing_components"].values[0, 0, 0, k].split() == ["NH3", "NO2"]
    none = np.full(dep.shape, np.nan)
    _, out = _totals(none, np.full(dep.shape, "missing", dtype=object), none, el, pw, sp)
    assert np.isnan(out["total_deposition"].values[0, 0, 0, k])
    assert out["total_status"].values[0, 0, 0, k] == "missing"


def test_to_periods_splits_hours_without_vd_as_the_pipeline_does():
    """The public pair period_deposition -> to_periods gives the same split as the
    pipeline above (the running count of hours with a Vd travels with the rows):
    January 72/168 of the sample, February 96/168, each scaled to its month."""
    from workbench.dryflux import to_periods
    v = np.full(744 + 672, 0.01)
    v[24 * 28:24 * 30] = np.nan                               # Jan 29 and 30
    vd = _vd(v, "2021-01-01T01:00")["SO2"][0]
    rows, cs = period_deposition(_air([("a", "2021-01-29", "2021-02-05", 1e-8)]), "SO2",
                                 vd, None)
    assert "vd_hours_cumulative" in rows
    months = make_periods("2021-01-01", "2021-03-01", "month")
    out = to_periods(rows, cs, ["a"], months, vd["time"].values)
    total = 1e-8 * 0.01 * 168 * HOUR
    np.testing.assert_allclose(out["deposition"].values[0, 0],
                               [total * 72 / 168 * 744 / 72, total * 96 / 168 * 672 / 96],
                               rtol=1e-12)


def test_a_sample_shorter_than_an_hour_without_an_hour_middle_adds_no_hours():
    """February 2021 (672 h), Vd 1 cm/s every hour.  Weeks 1-3 sampled at 1e-8 mol/m3
    (504 h); on 02-25 a 30-minute sample 10:10-10:40 at 5e-8 holds the middle (10:30)
    of the hour ending 11:00: D = 5e-8 x 0.01 x 0.5 h, 0.5 covered hour; on 02-26 a
    45-minute sample 10:35-11:20 holds no hour's middle (10:30 < 10:35, 11:30 >= 11:20):
    no Vd hour, no flux, and now no covered hours either (before: its 0.75 h counted in
    the coverage though no flux stood behind them).  By hand:
    coverage = 504.5 / 672, D_month = (3 x 1e-8 x 0.01 x 168 h + 5e-8 x 0.01 x 0.5 h)
    x 3600 s/h x 672 / 504.5."""
    feb = make_periods("2021-02-01", "2021-03-01", "month")
    rows = _weeks("2021-02-01", 3, 1e-8) + [
        ("a", pd.Timestamp("2021-02-25T10:10"), pd.Timestamp("2021-02-25T10:40"), 5e-8),
        ("a", pd.Timestamp("2021-02-26T10:35"), pd.Timestamp("2021-02-26T11:20"), 5e-8)]
    vel = _vd(np.full(672, 0.01), "2021-02-01T01:00")
    d = _dry(_air(rows), vel, feb)
    assert d["coverage"].values[0, 0, 0] == pytest.approx(504.5 / 672, rel=1e-12)
    expected = (3 * 1e-8 * 0.01 * 168 + 5e-8 * 0.01 * 0.5) * HOUR * 672 / 504.5
    assert _dep(d)[0] == pytest.approx(expected, rel=1e-12)
    assert d["flux_coverage"].values[0, 0, 0, 0] == pytest.approx(504.5 / 672, rel=1e-12)
    # the mean concentration over the covered hours leaves it out too
    assert d["concentration"].values[0, 0, 0] == pytest.approx(
        (3 * 168 * 1e-8 + 0.5 * 5e-8) / 504.5, rel=1e-12)
    r, _ = period_deposition(_air(rows), "SO2", vel["SO2"][0], None)
    assert r["vd_hours"].values[3:, 0].tolist() == [1, 0]
    assert r["deposition"].values[3, 0] == pytest.approx(5e-8 * 0.01 * 0.5 * HOUR)
    assert np.isnan(r["deposition"].values[4, 0])
    note = ("SO2: 1 air sample shorter than an hour holds no hour's middle (hh:30) "
            "(line 6): no deposition, and not counted in the covered hours")
    assert note in r.attrs["notes"]
    assert note in dry_rows(_air(rows), vel, None, ["a"], BudgetOptions())["notes"]
