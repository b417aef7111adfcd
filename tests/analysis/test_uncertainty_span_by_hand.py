"""The 5-95 % range of a span mean against one year's, checked by hand from the outside.

This file imports nothing of the workbench: it writes an invented site (``Holloway Test
Carr``, six whole years 2017-2022, every year the same 52 samples, a fixed Vd) and its
scenario, runs ``python -m workbench run`` in a subprocess and reads budget.csv, as a
user would.  The expected ratios come from the law of propagation of uncertainty
(JCGM 100:2008, "GUM", 5.1.2 eq. (10) for uncorrelated and 5.2.2 for correlated input
quantities; equation numbers from memory): for the mean of Y years
x = (1/Y) sum_y x_y with the same relative standard uncertainty u in each year,

    u(x)^2 = (1/Y^2) sum_y sum_z u_y u_z r(y, z),

so u(x)/x = u with r = 1 (a systematic error, the same every year: a Vd scheme's bias,
a gauge's catch) and u/sqrt(Y) with r = 0 (a random error, independent per sample or
per year).  A 5-95 % range of a normal (or of a log-normal factor F on the span: the
span is F times the mean point) scales as its standard deviation, so the span's
relative range over one year's is 1 for the systematic factor and 1/sqrt(Y) for the
random one.  Tolerance: the quantile standard error sqrt(q (1 - q)/n)/f(z_q) of each
end (common practice), 5 of it on a ratio of widths.
"""
import os
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest

YEARS = list(range(2017, 2023))           # Y = 6, 2020 a leap year
N = 20000

SITES = """[[site]]
id = "hollo"
name = "Holloway Test Carr"
latitude = 54.0
longitude = 5.0
elevation_m = 20.0
land_use = "grass"
canopy_height_m = 0.1
wind_height_m = 10.0
sampler_height_m = 3.0
utc_offset_h = 0
"""


def _bounds():
    """52 samples a year: 51 weeks from 1 January, the 52nd to the next 1 January (8
    or 9 days), so that no sample straddles two years and every year holds the same
    samples (invented)."""
    out = []
    for y in YEARS:
        start = pd.Timestamp(f"{y}-01-01T00:00")
        b = [start + pd.Timedelta(days=7 * k) for k in range(52)]
        out += list(zip(b, b[1:] + [pd.Timestamp(f"{y + 1}-01-01T00:00")]))
    return out


def _write(d, uncertainty: str):
    d.mkdir(parents=True, exist_ok=True)
    (d / "sites.toml").write_text(SITES)
    prec = ["site,start,end,gauge_depth [mm],sample_depth [mm],pH,SO4 [umol/L],"
            "NO3 [umol/L],NH4 [umol/L]"]
    air = ["# reference_state: ambient", "site,start,end,SO2 [ug/m3],pSO4 [ug/m3],HNO3 [ug/m3]"]
    for s, e in _bounds():
        s, e = f"{s:%Y-%m-%dT%H:%M}", f"{e:%Y-%m-%dT%H:%M}"
        # the same depth and chemistry every sample: a year's wet SO4 is 52 equal terms
        prec.append(f"hollo,{s},{e},10.0,9.5,4.6,20.0,15.0,12.0")
        air.append(f"hollo,{s},{e},2.0,1.0,0.5")
    (d / "precip.csv").write_text("\n".join(prec) + "\n")
    (d / "air.csv").write_text("\n".join(air) + "\n")
    t = pd.date_range(f"{YEARS[0]}-01-01T01:00", f"{YEARS[-1] + 1}-01-01T00:00", freq="h")
    pd.DataFrame({"site": "hollo", "time": t.strftime("%Y-%m-%dT%H:%M"),
                  "wind_speed [m/s]": 3.0, "temperature [degC]": 8.0,
                  "relative_humidity [%]": 80.0, "solar_radiation [W/m2]": 0.0,
                  "precipitation [mm]": 0.1, "pressure [hPa]": 1012.0}).to_csv(
        d / "met.csv", index=False)
    (d / "scenario.toml").write_text(f"""
[inputs]
sites = "sites.toml"
precipitation = "precip.csv"
air = "air.csv"
met = "met.csv"

[period]
start = "{YEARS[0]}-01-01"
end = "{YEARS[-1] + 1}-01-01"
resolution = "year"

[budget]
sulfate_basis = "total"

[dry.fixed_velocity]
SO2 = 0.7
pSO4 = 0.15
HNO3 = 2.2

[uncertainty]
draws = {N}
seed = 4
air_rel_sd = 0.0
precip_conc_rel_sd = 0.1
gauge_catch_rel_sd = 0.0
depth_rel_sd = 0.0
censored_rel_sd = 0.0
vd_fill_rel_sd = 0.0
pwm_fill_rel_sd = 0.0
lab_bias_precip_rel_sd = 0.0
lab_bias_air_rel_sd = 0.0
vd_site_gsd = 1.0
lab_bias_filter_pack = false
bulk_factor_rel_sd = 0.0
{uncertainty}

[uncertainty.vd_gsd]
SO2 = 1.5
pSO4 = 1.0
HNO3 = 1.0
pNO3 = 1.0
pNH4 = 1.0
NH3 = 1.0
NO2 = 1.0
""")
    return d / "scenario.toml"


def _run(d, uncertainty="", cwd=None):
    sc = _write(d, uncertainty)
    out = d / "run"
    env = dict(os.environ)
    subprocess.run([sys.executable, "-m", "workbench", "run", str(sc), "--out", str(out)],
                   check=True, capture_output=True, env=env, timeout=900, cwd=cwd)
    t = pd.read_csv(out / "budget.csv", comment="#", dtype={"period": str})
    return t[t["receptor"] == t["receptor"].iloc[0]]


def _rel_width(t, species, pathway, period):
    row = t[(t["species"] == species) & (t["pathway"] == pathway)
            & (t["period"] == period)].iloc[0]
    return (row["flux_kg_ha_yr_p95"] - row["flux_kg_ha_yr_p05"]) / row["flux_kg_ha_yr"]


def _tolerance(rel_sd):
    """5 standard errors of a ratio of two 5-95 % widths of normals of relative SD
    `rel_sd`, each end's error sqrt(q (1 - q) / n) / phi(1.645) (common practice)."""
    se_end = np.sqrt(0.05 * 0.95 / N) / (np.exp(-1.645 ** 2 / 2) / np.sqrt(2 * np.pi))
    se_ratio = np.sqrt(4) * se_end / (2 * 1.645)          # two ends of two widths
    return 5 * se_ratio


@pytest.fixture(scope="module")
def shared(tmp_path_factory):
    return _run(tmp_path_factory.mktemp("span_shared"))


def test_a_systematic_factor_does_not_narrow_over_the_span(shared):
    """The SO2 Vd factor alone (log-sd ln 1.5) on dry SO2: the span mean's relative
    5-95 % range equals each year's (GUM with r = 1: ratio 1).  On the old code each
    year drew its own factor and the span's range was about 1/sqrt(6) of a year's."""
    for y in YEARS:
        ratio = _rel_width(shared, "SO2", "dry", "span") / _rel_width(shared, "SO2", "dry",
                                                                       str(y))
        assert ratio == pytest.approx(1.0, abs=_tolerance(np.log(1.5))), (y, ratio)
    # and the factor has the spread it was given: the 5-95 % of a log-normal of median 1
    # and log-sd ln 1.5 around the point is exp(+-1.645 ln 1.5) (from memory)
    want = np.exp(1.645 * np.log(1.5)) - np.exp(-1.645 * np.log(1.5))
    assert _rel_width(shared, "SO2", "dry", "span") == pytest.approx(want, rel=0.03)


def test_a_random_factor_narrows_by_one_over_root_y(shared):
    """The analysis error of precipitation SO4 (relative SD 0.1, random per sample) on
    wet SO4, 52 equal samples a year: one year's relative SD 0.1/sqrt(52), the span's
    0.1/sqrt(6 x 52), their ratio 1/sqrt(6) (GUM with r = 0)."""
    y = len(YEARS)
    for year in YEARS:
        ratio = _rel_width(shared, "SO4", "wet", "span") / _rel_width(shared, "SO4", "wet",
                                                                       str(year))
        assert ratio == pytest.approx(1 / np.sqrt(y), abs=_tolerance(0.1) / np.sqrt(y)), \
            (year, ratio)
    want = 2 * 1.645 * 0.1 / np.sqrt(52)                  # one year, a normal's 5-95 %
    assert _rel_width(shared, "SO4", "wet", "2019") == pytest.approx(want, rel=0.03)


def test_each_year_option_keeps_the_old_independent_draws(tmp_path):
    """``systematic_errors = "each_year"`` (for comparison): the SO2 Vd factor is drawn
    anew each year, and the span mean of six independent log-normal factors (log-sd
    ln 1.5) has the 5-95 % range of that mean, computed here by a Monte Carlo of our own
    with numpy (200 000 draws, seed 1), well under one year's."""
    t = _run(tmp_path / "each", 'systematic_errors = "each_year"')
    rng = np.random.default_rng(1)
    f = np.exp(np.log(1.5) * rng.standard_normal((200000, len(YEARS))))
    # the span is the mean of the years' rates, each times its own factor (the rates
    # as budget.csv gives them: a leap year may differ)
    rate = np.array([t[(t["species"] == "SO2") & (t["pathway"] == "dry")
                       & (t["period"] == str(y))]["flux_kg_ha_yr"].iloc[0] for y in YEARS])
    m = (f * rate).sum(1) / rate.sum()
    q = np.quantile(m, [0.05, 0.95])
    want = q[1] - q[0]
    span = _rel_width(t, "SO2", "dry", "span")
    assert span == pytest.approx(want, rel=0.04)
    year = _rel_width(t, "SO2", "dry", "2019")
    assert span / year < 0.5


def test_a_seed_gives_the_same_numbers_from_another_folder(shared, tmp_path):
    """The same scenario written into another folder and run from there (another
    working directory): the same quantiles, to the last digit budget.csv writes (the
    random streams are named by the seed and the site, never by a path)."""
    again = _run(tmp_path / "elsewhere" / "copy", cwd=tmp_path)
    cols = [c for c in shared if c.endswith(("_p05", "_p50", "_p95"))]
    assert cols
    pd.testing.assert_frame_equal(shared[cols].reset_index(drop=True),
                                  again[cols].reset_index(drop=True))
