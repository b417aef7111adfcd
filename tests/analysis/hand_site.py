"""Two invented sites for the hand audit of the Monte Carlo (test_uncertainty_hand_audit.py).

Wrenmoor Test Fen (``wren``) and Tarnbeck Test Moss (``tarn``), invented: the same
samples at both (so that only the site's own streams can make their draws differ),
December 2020 to February 2021 in monthly periods, so that December lies in one
calendar year and January and February in the next.  Every sample lies inside one
month (no sample straddles a period), the deposition velocities are fixed, and so
every component is a sum of per-sample products that arithmetic can follow:
dry = sum_n C_n Vd t_n, wet = sum_i P_i C_i (every sample valid).
"""
import numpy as np
import pandas as pd

from workbench.pipeline import Study
from workbench.scenario import load_scenario

SITES = {"wren": ("Wrenmoor Test Fen", 52.0), "tarn": ("Tarnbeck Test Moss", 53.0)}
#: Sample bounds: five samples in December and January, four in February (invented).
BOUNDS = pd.to_datetime(["2020-12-01", "2020-12-08", "2020-12-15", "2020-12-22",
                         "2020-12-29", "2021-01-01", "2021-01-08", "2021-01-15",
                         "2021-01-22", "2021-01-29", "2021-02-01", "2021-02-08",
                         "2021-02-15", "2021-02-22", "2021-03-01"])
#: The month (0 December, 1 January, 2 February) of each sample.
MONTH = np.array([0] * 5 + [1] * 5 + [2] * 4)
GAUGE = np.array([12.0, 3.0, 20.0, 7.0, 5.0, 9.0, 15.0, 2.0, 11.0, 6.0,
                  18.0, 4.0, 10.0, 8.0])                     # mm
SO4 = np.array([14.0, 30.0, 9.0, 22.0, 17.0, 12.0, 8.0, 35.0, 16.0, 20.0,
                10.0, 25.0, 13.0, 18.0])                     # umol/L
NO3 = np.array([20.0, 12.0, 26.0, 31.0, 15.0, 18.0, 22.0, 9.0, 27.0, 14.0,
                24.0, 11.0, 19.0, 28.0])
NH4 = np.array([28.0, 18.0, 16.0, 24.0, 30.0, 21.0, 13.0, 26.0, 19.0, 23.0,
                15.0, 29.0, 22.0, 17.0])
SO2 = np.array([2.5, 1.2, 3.1, 0.8, 2.0, 1.6, 2.9, 0.9, 1.4, 2.2,
                3.3, 1.1, 2.6, 1.8])                         # ug/m3
PSO4 = np.array([1.4, 2.1, 0.9, 1.7, 1.2, 2.4, 1.0, 1.6, 2.0, 1.3,
                 0.8, 1.9, 1.5, 1.1])
HNO3 = np.array([0.5, 0.7, 0.3, 0.9, 0.6, 0.4, 0.8, 0.5, 0.6, 0.7,
                 0.3, 0.5, 0.9, 0.4])
VD = {"SO2": 0.7, "pSO4": 0.15, "HNO3": 2.2}                 # cm/s, fixed
#: Molar masses [g/mol] to the precision used here (IUPAC atomic weights, from memory:
#: S 32.06, N 14.007, O 15.999, H 1.008).
MOLAR = {"SO2": 64.058, "pSO4": 96.06, "HNO3": 63.012}


def write_site(d, bounds=BOUNDS, fixed=None, met_gaps=()):
    """Write the scenario into folder `d`; return (scenario, study, result).  `bounds`
    replaces the sample bounds (as many as :data:`BOUNDS`, same first and last);
    `fixed` the fixed Vd (default :data:`VD`; a species left out is modelled);
    `met_gaps` lists (start, end) of hours left out of the met file (end excluded)."""
    fixed = VD if fixed is None else fixed
    d.mkdir(parents=True, exist_ok=True)
    sites = []
    for sid, (name, lat) in SITES.items():
        sites.append(f'[[site]]\nid = "{sid}"\nname = "{name}"\nlatitude = {lat}\n'
                     'longitude = 5.0\nelevation_m = 20.0\nland_use = "grass"\n'
                     'canopy_height_m = 0.1\nwind_height_m = 10.0\nsampler_height_m = 3.0\n'
                     'utc_offset_h = 0\n')
    (d / "sites.toml").write_text("\n".join(sites))
    prec = ["site,start,end,gauge_depth [mm],sample_depth [mm],pH,SO4 [umol/L],"
            "NO3 [umol/L],NH4 [umol/L],Na [umol/L]"]
    air = ["# reference_state: ambient", "site,start,end,SO2 [ug/m3],pSO4 [ug/m3],HNO3 [ug/m3]"]
    for sid in SITES:
        for i in range(len(GAUGE)):
            s, e = f"{bounds[i]:%Y-%m-%dT%H:%M}", f"{bounds[i + 1]:%Y-%m-%dT%H:%M}"
            h = 2 * SO4[i] + NO3[i] - NH4[i]
            prec.append(f"{sid},{s},{e},{GAUGE[i]},{GAUGE[i] * 0.95},"
                        f"{-np.log10(h * 1e-6):.4f},{SO4[i]},{NO3[i]},{NH4[i]},0.0")
            air.append(f"{sid},{s},{e},{SO2[i]},{PSO4[i]},{HNO3[i]}")
    (d / "precip.csv").write_text("\n".join(prec) + "\n")
    (d / "air.csv").write_text("\n".join(air) + "\n")
    t = pd.date_range(BOUNDS[0] + pd.Timedelta("1h"), BOUNDS[-1], freq="h")
    met = pd.concat([pd.DataFrame({"site": sid, "time": t.strftime("%Y-%m-%dT%H:%M"),
                                   "wind_speed [m/s]": 3.0, "temperature [degC]": 4.0,
                                   "relative_humidity [%]": 85.0,
                                   "solar_radiation [W/m2]": 0.0, "precipitation [mm]": 0.1,
                                   "pressure [hPa]": 1010.0}) for sid in SITES])
    when = pd.to_datetime(met["time"])
    if met_gaps:           # a sun by day (a modelled Vd needs one here), the same each day
        met["solar_radiation [W/m2]"] = np.where((when.dt.hour >= 8) & (when.dt.hour <= 16),
                                                 400.0, 0.0)
    for a, b in met_gaps:
        met = met[~((when >= pd.Timestamp(a)) & (when < pd.Timestamp(b)))]
        when = pd.to_datetime(met["time"])
    met.to_csv(d / "met.csv", index=False)
    fixed = "\n".join(f"{k} = {v}" for k, v in fixed.items())
    (d / "scenario.toml").write_text(f"""
[inputs]
sites = "sites.toml"
precipitation = "precip.csv"
air = "air.csv"
met = "met.csv"

[period]
start = "2020-12-01"
end = "2021-03-01"
resolution = "month"

[budget]
sulfate_basis = "total"

[dry.fixed_velocity]
{fixed}
""")
    sc = load_scenario(d / "scenario.toml")
    study = Study.from_scenario(sc)
    res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                    sc.fixed_velocity, "month", "2020-12-01", "2021-03-01")
    return sc, study, res


def dry_parts(species):
    """Each sample's dry deposition [mol m-2 of the species]: C Vd t, computed by hand."""
    conc = {"SO2": SO2, "pSO4": PSO4, "HNO3": HNO3}[species]
    seconds = np.diff(BOUNDS).astype("timedelta64[s]").astype(float)
    return conc * 1e-6 / MOLAR[species] * VD[species] / 100.0 * seconds


def wet_parts(conc):
    """Each sample's wet deposition [mol m-2 of the ion]: P C (mm x umol/L = umol/m2)."""
    return GAUGE * conc * 1e-6


def write_two_years(d, resolution="year", no_chemistry=None, period_fill="none"):
    """One invented site (``wren``) with weekly samples over the whole of 2020 and
    2021 (values from a seeded generator, invented), fixed Vd, yearly periods: both
    years complete, so the span row is their mean.  Returns (scenario, study, result).

    `no_chemistry` (start, end): the precipitation samples starting then keep their
    depth but lose their chemistry (a period that fails its valid-precipitation
    share); `period_fill` is ``[wet] period_fill``."""
    d.mkdir(parents=True, exist_ok=True)
    name, lat = SITES["wren"]
    (d / "sites.toml").write_text(
        f'[[site]]\nid = "wren"\nname = "{name}"\nlatitude = {lat}\nlongitude = 5.0\n'
        'elevation_m = 20.0\nland_use = "grass"\ncanopy_height_m = 0.1\n'
        'wind_height_m = 10.0\nsampler_height_m = 3.0\nutc_offset_h = 0\n')
    weeks = pd.date_range("2019-12-30", "2022-01-03", freq="7D")
    rng = np.random.default_rng(2024)
    n = len(weeks) - 1
    gauge = rng.uniform(2, 25, n)
    so4, no3, nh4 = (rng.uniform(5, 35, n) for _ in range(3))
    so2, pso4, hno3 = rng.uniform(0.5, 3.5, n), rng.uniform(0.5, 2.5, n), rng.uniform(0.2, 1, n)
    prec = ["site,start,end,gauge_depth [mm],sample_depth [mm],pH,SO4 [umol/L],NO3 [umol/L],"
            "NH4 [umol/L]"]
    air = ["# reference_state: ambient", "site,start,end,SO2 [ug/m3],pSO4 [ug/m3],HNO3 [ug/m3]"]
    for i in range(n):
        s, e = f"{weeks[i]:%Y-%m-%dT%H:%M}", f"{weeks[i + 1]:%Y-%m-%dT%H:%M}"
        h = max(2 * so4[i] + no3[i] - nh4[i], 1.0)
        chem = (f"{-np.log10(h * 1e-6):.4f},{so4[i]:.2f},{no3[i]:.2f},{nh4[i]:.2f}"
                if no_chemistry is None or not (pd.Timestamp(no_chemistry[0]) <= weeks[i]
                                                < pd.Timestamp(no_chemistry[1]))
                else ",,,")
        prec.append(f"wren,{s},{e},{gauge[i]:.2f},{gauge[i] * 0.95:.2f},{chem}")
        air.append(f"wren,{s},{e},{so2[i]:.3f},{pso4[i]:.3f},{hno3[i]:.3f}")
    (d / "precip.csv").write_text("\n".join(prec) + "\n")
    (d / "air.csv").write_text("\n".join(air) + "\n")
    t = pd.date_range(weeks[0] + pd.Timedelta("1h"), weeks[-1], freq="h")
    pd.DataFrame({"site": "wren", "time": t.strftime("%Y-%m-%dT%H:%M"),
                  "wind_speed [m/s]": 3.0, "temperature [degC]": 8.0,
                  "relative_humidity [%]": 80.0, "solar_radiation [W/m2]": 0.0,
                  "precipitation [mm]": 0.1, "pressure [hPa]": 1012.0}).to_csv(
        d / "met.csv", index=False)
    fixed = "\n".join(f"{k} = {v}" for k, v in VD.items())
    (d / "scenario.toml").write_text(f"""
[inputs]
sites = "sites.toml"
precipitation = "precip.csv"
air = "air.csv"
met = "met.csv"

[period]
start = "2020-01-01"
end = "2022-01-01"
resolution = "{resolution}"

[wet]
period_fill = "{period_fill}"

[budget]
sulfate_basis = "total"

[dry.fixed_velocity]
{fixed}
""")
    sc = load_scenario(d / "scenario.toml")
    study = Study.from_scenario(sc)
    res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                    sc.fixed_velocity, resolution, "2020-01-01", "2022-01-01")
    return sc, study, res
