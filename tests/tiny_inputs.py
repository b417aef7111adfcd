"""Tiny input files for reader tests (invented sites)."""
import numpy as np
import pandas as pd

from workbench.io.metchecks import solar_elevation_deg



def alpha_site(receptor="conifer_forest") -> str:
    """The [[site]] table of the invented grass site "alpha" (12 lines, ending with its
    receptors), without critical loads."""
    return f"""\
[[site]]
id = "alpha"
name = "Alpha Test Field"
latitude = 52.0
longitude = 5.0
elevation_m = 20.0
land_use = "grass"
canopy_height_m = 0.1
wind_height_m = 10.0
sampler_height_m = 3.0
utc_offset_h = 1
receptors = ["{receptor}"]
"""


def grass_sites(rows, elevation_m=30.0) -> str:
    """sites.toml text of invented grass sites, one per (id, name, latitude [deg],
    longitude [deg], utc_offset_h [h]) row."""
    return "\n".join(f"""\
[[site]]
id = "{i}"
name = "{n}"
latitude = {la}
longitude = {lo}
elevation_m = {elevation_m}
land_use = "grass"
canopy_height_m = 0.1
wind_height_m = 10.0
sampler_height_m = 3.0
utc_offset_h = {off}
""" for i, n, la, lo, off in rows)


def located_error(fn, path, cat) -> str:
    """The message of the InputError that ``fn(path, cat)`` raises; it starts with the
    file and its line."""
    import pytest

    from workbench.errors import InputError
    with pytest.raises(InputError) as exc:
        fn(path, cat)
    msg = str(exc.value)
    assert msg.startswith(f"{path}, line "), msg
    return msg


SITES = alpha_site() + """
[site.critical_loads]
cl_max_s = 1200.0
cl_nut_n = 900.0

[[site]]
id = "beta"
name = "Beta Test Wood"
latitude = 53.0
longitude = 6.0
elevation_m = 400.0
land_use = "deciduous_forest"
canopy_height_m = 20.0
wind_height_m = 30.0
sampler_height_m = 25.0
utc_offset_h = 0
lai_min = 0.5
lai_max = 5.0
"""

PRECIP = """\
site,start,end,sampler_id,gauge_depth [mm],sample_depth [mm],pH,conductivity [uS/cm],SO4 [mg/L],NO3_as_N [mg/L],NH4 [ueq/L],Cl [mg/L],Na [mg/L],flags
alpha,2020-01-07T09:00,2020-01-14T09:00,w1,12.0,11.0,4.8,20.0,1.5,0.3,25.0,1.0,0.6,
alpha,2020-01-14T09:00,2020-01-21T09:00,w1,0.0,0.0,,,,,,,,
alpha,2020-01-21T09:00,2020-01-28T09:00,w1,5.0,4.5,5.1,12.0,<0.05,0.2,10.0,0.5,0.3,trace
beta,2020-01-07T09:00+00:00,2020-01-14T09:00+00:00,,20.0,19.0,4.6,25.0,2.0,0.4,30.0,2.0,1.2,
"""

AIR = """\
# reference_state: ambient
site,start,end,sampler_id,SO2 [ug/m3],HNO3_as_N [ug/m3],NH3 [ug/m3],pSO4 [ug/m3],NO2 [ppb],method_NH3
alpha,2020-01-07T09:00,2020-01-14T09:00,fp1,2.0,0.1,1.5,1.2,5.0,filter pack
alpha,2020-01-14T09:00,2020-01-21T09:00,fp1,<0.1,0.2,1.0,1.0,4.0,filter pack
beta,2020-01-07T09:00,2020-01-14T09:00,fp2,3.0,0.3,,2.0,,
"""


def met_text(n_hours=48, site="alpha", start="2020-01-07T01:00", rh_unit="%", rh_scale=1.0):
    t = pd.date_range(start, periods=n_hours, freq="h")
    rows = ["# time_label: end",
            f"site,time,wind_speed [m/s],temperature [degC],relative_humidity [{rh_unit}],"
            "solar_radiation [W/m2],precipitation [mm],pressure [hPa],cloud_cover [1]"]
    for i, ti in enumerate(t):
        # daytime radiation only between 09 and 15 local (= UTC+1) to stay plausible in January
        local = (ti.hour) % 24
        sr = 200.0 if 10 <= local <= 14 else 0.0
        rows.append(f"{site},{ti:%Y-%m-%dT%H:%M},{3 + (i % 5) * 0.5},{5 + np.sin(i / 4):.2f},"
                    f"{(80 + 10 * np.cos(i / 5)) * rh_scale:.3f},{sr},{0.5 if i % 7 == 0 else 0.0},"
                    f"1010.0,0.5")
    return "\n".join(rows) + "\n"


def plausible_met_csv(tmp_path, n_days=3, site="alpha", offset=1, **cols):
    """met.csv of a plausible hourly record for the invented site alpha (lat 52, lon 5, UTC+1);
    `cols` replace columns (a scalar or one value per hour)."""
    t_local = pd.date_range("2020-06-01T01:00", periods=24 * n_days, freq="h")
    t_utc = t_local - pd.Timedelta(hours=offset)
    elev = solar_elevation_deg((t_utc - pd.Timedelta("30min")).values, 52.0, 5.0)
    df = pd.DataFrame({
        "site": site, "time": t_local.strftime("%Y-%m-%dT%H:%M"),
        "wind_speed [m/s]": 3.0, "temperature [degC]": 15.0, "relative_humidity [%]": 70.0,
        "solar_radiation [W/m2]": np.round(np.clip(900 * np.sin(np.deg2rad(elev)), 0, None), 1),
        "precipitation [mm]": np.where(np.arange(len(t_local)) % 17 == 0, 1.0, 0.0),
        "pressure [hPa]": 1010.0})
    for k, v in cols.items():
        df[k] = v
    p = tmp_path / "met.csv"
    df.to_csv(p, index=False)
    return p


def ledger_reasons(led):
    """The set of single reasons in a ledger's table."""
    return set(led.table["reason"].str.split("; ").explode()) - {""}


def make_analyst_network(out_dir, **kw):
    """The invented network of benchmarks/analyst_network.py written into `out_dir`
    (keywords: n_sites, years, imperfections); returns the scenario path."""
    import importlib.util
    from pathlib import Path
    path = Path(__file__).resolve().parents[1] / "benchmarks" / "analyst_network.py"
    spec = importlib.util.spec_from_file_location("bench_analyst_network", path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module.make_analyst_network(out_dir, **kw)


def ridge_part_study():
    """The demo's ridge from 2020-11-15 to 2021-08-15 as a Study, with the scenario it
    came from: a part-year of one site, small enough for tests of the stage graph."""
    import warnings
    from pathlib import Path

    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    sc = load_scenario(Path(__file__).resolve().parents[1] / "demo_data" / "scenario.toml")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        whole = Study.from_scenario(sc)
    inputs = whole.inputs.subset(["ridge"], np.datetime64("2020-11-15"),
                                 np.datetime64("2021-08-15"))
    return Study(inputs, whole.site_overrides), sc
