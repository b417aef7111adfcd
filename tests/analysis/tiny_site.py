"""A tiny invented site with fixed deposition velocities for the analysis tests: every
component is a sum of per-sample products that arithmetic can follow (dry = sum_n C_n Vd
t_n, wet = sum_i C_i P_i with all samples valid)."""
import numpy as np
import pandas as pd

from workbench.analysis import uncertainty as U
from workbench.analysis.layer import linear_layer
from workbench.pipeline import Study
from workbench.scenario import load_scenario

SITES = """\
[[site]]
id = "quill"
name = "Quill Test Heath"
latitude = 51.0
longitude = 4.0
elevation_m = 15.0
land_use = "grass"
canopy_height_m = 0.1
wind_height_m = 10.0
sampler_height_m = 3.0
utc_offset_h = 0
"""
WEEKS = pd.date_range("2021-02-01", periods=5, freq="7D")   # four weeks = February 2021
GAUGE = [8.0, 12.0, 4.0, 16.0]           # mm per week
SO4 = [15.0, 30.0, 10.0, 20.0]           # umol/L
NO3 = [20.0, 10.0, 25.0, 30.0]
NH4 = [30.0, 20.0, 15.0, 25.0]
SO2 = [3.0, 1.0, 2.0, 4.0]               # ug/m3
PSO4 = [1.5, 2.5, 1.0, 2.0]
HNO3 = [0.4, 0.8, 0.5, 0.3]
VD = {"SO2": 0.6, "pSO4": 0.2, "HNO3": 2.5}   # cm/s, fixed
OFF = dict(vd_gsd={sp: 1.0 for sp in U.DEFAULT_VD_GSD}, air_rel_sd=0.0, precip_conc_rel_sd=0.0,
           gauge_catch_rel_sd=0.0, depth_rel_sd=0.0, censored_rel_sd=0.0, vd_fill_rel_sd=0.0,
           pwm_fill_rel_sd=0.0, lab_bias_precip_rel_sd=0.0, lab_bias_air_rel_sd=0.0, vd_site_gsd=1.0,
           lab_bias_filter_pack=False, bulk_factor_rel_sd=0.0, nh3_gamma_gsd=1.0)


def make_tiny(d):
    """Write the tiny scenario into folder `d`; return (scenario, study, result, layer)."""
    (d / "sites.toml").write_text(SITES)
    rows = ["site,start,end,gauge_depth [mm],sample_depth [mm],pH,SO4 [umol/L],NO3 [umol/L],"
            "NH4 [umol/L],Na [umol/L]"]
    for i in range(4):
        h = 2 * SO4[i] + NO3[i] - NH4[i]
        rows.append(f"quill,{WEEKS[i]:%Y-%m-%dT%H:%M},{WEEKS[i + 1]:%Y-%m-%dT%H:%M},{GAUGE[i]},"
                    f"{GAUGE[i] * 0.95},{-np.log10(h * 1e-6):.4f},{SO4[i]},{NO3[i]},{NH4[i]},0.0")
    (d / "precip.csv").write_text("\n".join(rows) + "\n")
    air = ["# reference_state: ambient", "site,start,end,SO2 [ug/m3],pSO4 [ug/m3],HNO3 [ug/m3]"]
    for i in range(4):
        air.append(f"quill,{WEEKS[i]:%Y-%m-%dT%H:%M},{WEEKS[i + 1]:%Y-%m-%dT%H:%M},"
                   f"{SO2[i]},{PSO4[i]},{HNO3[i]}")
    (d / "air.csv").write_text("\n".join(air) + "\n")
    t = pd.date_range("2021-02-01T01:00", "2021-03-01T00:00", freq="h")
    met = pd.DataFrame({"site": "quill", "time": t.strftime("%Y-%m-%dT%H:%M"),
                        "wind_speed [m/s]": 3.0, "temperature [degC]": 5.0,
                        "relative_humidity [%]": 80.0, "solar_radiation [W/m2]": 0.0,
                        "precipitation [mm]": 0.1, "pressure [hPa]": 1012.0})
    met.to_csv(d / "met.csv", index=False)
    fixed = "\n".join(f"{k} = {v}" for k, v in VD.items())
    (d / "scenario.toml").write_text(f"""
[inputs]
sites = "sites.toml"
precipitation = "precip.csv"
air = "air.csv"
met = "met.csv"

[period]
start = "2021-02-01"
end = "2021-03-01"
resolution = "month"

[budget]
sulfate_basis = "total"

[dry.fixed_velocity]
{fixed}

[uncertainty]
draws = 200
seed = 7

[sensitivity]
samples = 8

[sensitivity.factors]
vd_SO2 = [0.5, 1.5]
gauge_catch = [0.9, 1.1]
wetness_rule = ["met", "always_wet"]
""")
    sc = load_scenario(d / "scenario.toml")
    study = Study.from_scenario(sc)
    res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"], sc.fixed_velocity,
                    "month", "2021-02-01", "2021-03-01")
    return sc, study, res, linear_layer(res, study)


