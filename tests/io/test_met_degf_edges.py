"""Runs of hours in degF under a degC header found by their edges (metdegf.fahrenheit_edges).

Before, the daily test alone judged: a run of a few hours (a day's mean moves little)
and any run on days whose 121-day median is below -5 degC went unseen.  A logger's
switch to degF writes, at its first hour, 1.8 x (the hour's degC) + 32: a rise of 0.8 T
+ 32 (28 K at -5 degC, 24 K at -10 degC, from degF = 1.8 degC + 32, common practice),
and the drop back at its end the inverse; the run between, read as degF, matches the
hours around it.  False alarms and detection on invented climates, with and without
abrupt natural spells: benchmarks/met_degf.py.
"""
import gzip
from pathlib import Path

import numpy as np
import pytest
from scipy.signal import lfilter

from workbench.constants import ZERO_CELSIUS
from workbench.io import read_met, read_sites
from workbench.io.metdegf import fahrenheit_days, fahrenheit_edges

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
REASON = ("temperature looks like degF although the header says degC: the run's first "
          "hour is 1.8 x the hour before + 32")


def _to_f(c):
    return c * 1.8 + 32.0           # degF from degC (common practice)


@pytest.fixture(scope="module")
def demo():
    lines = gzip.open(DEMO / "met.csv.gz", "rt").read().splitlines()
    head = next(i for i, ln in enumerate(lines) if ln.startswith("site,"))
    j = next(k for k, h in enumerate(lines[head].split(",")) if h.startswith("temperature"))
    return lines, head, j, read_sites(DEMO / "sites.toml")


def test_six_hours_in_degf_are_masked_with_their_reason(tmp_path, demo):
    """Old code: the day's mean rose by about a quarter of the jump, under the daily
    test's 20 K; the six hours were read as degC."""
    lines, head, j, cat = demo
    out, changed = list(lines), []
    for i in range(head + 1, len(out)):
        c = out[i].split(",")
        if c[0] == "mere" and "2020-03-11T09:00" <= c[1][:16] <= "2020-03-11T14:00" and c[j]:
            c[j] = f"{_to_f(float(c[j])):.1f}"
            out[i] = ",".join(c)
            changed.append(i + 1)
    assert len(changed) == 6
    p = tmp_path / "met.csv"
    p.write_text("\n".join(out) + "\n")
    _, led = read_met(p, cat)
    t = led.table
    hit = t[t["reason"].str.contains(REASON, regex=False)]
    assert sorted(hit["line"].astype(int)) == changed          # those six lines only
    assert set(hit["site"]) == {"mere"} and set(hit["status"]) == {"flagged"}
    assert hit["reason"].str.endswith("(masked)").all()


def _cold_record(seed=0, days=120):
    """An invented winter: daily mean -8 degC (below the daily test's -5), synoptic AR(1) of sd 4 K and 3 days'
    memory, a diurnal cycle of 3 K [degC] per hour."""
    rng = np.random.default_rng(seed)
    n = 24 * days
    a = np.exp(-1 / 72)
    x = (-8 + lfilter([np.sqrt(1 - a * a)], [1, -a], rng.normal(0, 4, n))
         - 3 * np.cos(2 * np.pi * (np.arange(n) % 24 - 3) / 24))
    t = np.datetime64("2021-11-01T01:00") + np.arange(n) * np.timedelta64(1, "h")
    return t, x


@pytest.mark.parametrize("start, hours", [(1207, 30), (400, 72), (1500, 60)])
def test_cold_runs_below_minus_five_are_found(start, hours):
    t, x = _cold_record()
    y = x.copy()
    y[start:start + hours] = _to_f(y[start:start + hours])
    codes = np.zeros(len(t), np.int64)
    assert not fahrenheit_days(y + ZERO_CELSIUS, codes, t).any()     # the old test: none
    hit = fahrenheit_edges(y + ZERO_CELSIUS, codes, t)
    assert hit[start:start + hours].all() and hit.sum() == hours


def test_natural_steps_of_another_size_and_clean_records_are_not_masked():
    t, x = _cold_record(seed=1)
    codes = np.zeros(len(t), np.int64)
    assert not fahrenheit_edges(x + ZERO_CELSIUS, codes, t).any()
    y = x.copy()
    y[1000:1040] += 12.0        # a foehn of 12 K in an hour: smaller than 0.8 T + 32
    y[2000:2030] -= 15.0        # a cold pool: the wrong way
    assert not fahrenheit_edges(y + ZERO_CELSIUS, codes, t).any()


def test_two_sites_and_gaps_do_not_join_edges():
    t, x = _cold_record(seed=2, days=60)
    y = x.copy()
    y[700:760] = _to_f(y[700:760])
    codes = np.zeros(len(t), np.int64)
    codes[730:] = 1                     # the run's end belongs to another site
    assert not fahrenheit_edges(y + ZERO_CELSIUS, codes, t).any()
    t2 = t.copy()
    t2[730:] += np.timedelta64(5, "h")  # a gap inside the run
    assert not fahrenheit_edges(y + ZERO_CELSIUS, np.zeros(len(t), np.int64), t2).any()


def _saturation_hpa(c):
    """Saturation vapour pressure over water [hPa] at `c` [degC] (Magnus formula,
    WMO-No. 8 (2008) Annex 4.B)."""
    return 6.112 * np.exp(17.62 * c / (243.12 + c))


def _colder_record(seed=0, days=120, mean=-20.0):
    """As _cold_record at a mean of -20 degC, with a relative humidity [1] of about 0.8
    whose vapour pressure follows the temperature."""
    t, x = _cold_record(seed, days)
    x = x - (-8.0) + mean
    rng = np.random.default_rng(seed + 100)
    rh = np.clip(0.8 + rng.normal(0, 0.02, len(x)), 0.0, 0.93)
    return t, x, rh


@pytest.mark.parametrize("start, hours", [(1207, 30), (400, 72), (1500, 60)])
def test_runs_below_minus_ten_are_found_with_a_steady_humidity(start, hours):
    """Old code: below -10 degC the degF edge (0.8 T + 32: 16 K at -20 degC) is under
    the 24 K floor, and the run was read as degC.  The relative humidity, which a unit
    switch leaves as it was, holds steady across both edges."""
    t, x, rh = _colder_record()
    y = x.copy()
    y[start:start + hours] = _to_f(y[start:start + hours])
    codes = np.zeros(len(t), np.int64)
    assert not fahrenheit_edges(y + ZERO_CELSIUS, codes, t).any()   # no humidity: none
    hit = fahrenheit_edges(y + ZERO_CELSIUS, codes, t, rh)
    assert hit[start:start + hours].all() and hit.sum() == hours


def test_a_natural_spell_of_the_degf_size_changes_the_humidity_and_is_not_masked():
    """A warm spell that lands on 1.8 x the hour before + 32 (16 K at -20 degC) but
    brings its warmth at the same vapour pressure: the relative humidity falls to about
    a quarter (Magnus formula), so the edge is not taken; saturated air (relative
    humidity near 1 on both sides) is not taken either."""
    t, x, rh = _colder_record(seed=3)
    codes = np.zeros(len(t), np.int64)
    y, r = x.copy(), rh.copy()
    a, b = 1207, 1237
    y[a:b] = _to_f(y[a:b])                           # the same temperatures as a slip
    r[a:b] = rh[a:b] * _saturation_hpa(x[a:b]) / _saturation_hpa(y[a:b])
    assert r[a] < 0.4
    assert not fahrenheit_edges(y + ZERO_CELSIUS, codes, t, r).any()
    sat = np.full(len(t), 0.99)
    assert not fahrenheit_edges(y + ZERO_CELSIUS, codes, t, sat).any()
    assert fahrenheit_edges(y + ZERO_CELSIUS, codes, t, rh)[a:b].all()   # the control


def test_the_reader_passes_the_humidity_to_the_cold_edges(tmp_path, demo):
    """Old code: the reader masked no hour of a run at -20 degC."""
    *_, cat = demo
    t, x, rh = _colder_record(seed=4, days=90)
    y = x.copy()
    y[700:748] = _to_f(y[700:748])
    stamp = np.datetime_as_string(t, "m")
    rows = [f"mere,{s},3.0,{v:.1f},{100 * h:.0f},0,0.0,990.0"
            for s, v, h in zip(stamp, y, rh)]
    p = tmp_path / "met.csv"
    p.write_text("site,time,wind_speed [m/s],temperature [degC],relative_humidity [%],"
                 "solar_radiation [W/m2],precipitation [mm],pressure [hPa]\n"
                 + "\n".join(rows) + "\n")
    _, led = read_met(p, cat)
    tab = led.table
    hit = tab[tab["reason"].str.contains(REASON, regex=False)]
    assert sorted(hit["line"].astype(int)) == list(range(702, 750))    # header is line 1


@pytest.mark.parametrize("start, hours", [(1207, 30), (400, 72), (1500, 60)])
def test_runs_below_minus_fifty_are_found_by_their_reversed_edges(start, hours):
    """Old code: below -40 degC the degF reading lies below the degC one (-58 at -50
    degC, from degF = 1.8 degC + 32, common practice), so a run starts with a drop and
    ends with a rise, and no edge was taken.  Reflected about -40 degC (C -> -80 - C,
    under which the conversion keeps its form) the run is the rule's own case: found
    with a steady relative humidity.  A clean record as cold, and a natural cold spell
    of the same size whose relative humidity rises (the same vapour pressure in colder
    air, Magnus formula), are not masked."""
    t, x, rh = _colder_record(mean=-58.0)
    codes = np.zeros(len(t), np.int64)
    assert not fahrenheit_edges(x + ZERO_CELSIUS, codes, t, rh).any()       # clean
    y = x.copy()
    y[start:start + hours] = _to_f(y[start:start + hours])
    assert (y[start] - x[start - 1]) < -8                                    # a drop
    hit = fahrenheit_edges(y + ZERO_CELSIUS, codes, t, rh)
    assert hit[start:start + hours].all() and hit.sum() == hours
    r = rh.copy()
    r[start:start + hours] = np.minimum(
        rh[start:start + hours] * _saturation_hpa(x[start:start + hours])
        / _saturation_hpa(y[start:start + hours]), 1.0)
    assert not fahrenheit_edges(y + ZERO_CELSIUS, codes, t, r).any()
