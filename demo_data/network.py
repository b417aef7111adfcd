"""The four invented sites of the demo network and the parameters that generate their data.

Every name here is invented.  The catalogue fields (``CATALOGUE_KEYS``) are written to
``sites.toml``; ``climate``, ``chemistry`` and ``air`` only drive the generator.
Magnitudes are typical of a moderately polluted temperate maritime region in the
2010s (common practice; see the docstring of make_demo.py).
"""
from __future__ import annotations

CATALOGUE_KEYS = ("id", "name", "latitude", "longitude", "elevation_m", "land_use",
                  "canopy_height_m", "wind_height_m", "sampler_height_m", "utc_offset_h",
                  "lai", "lai_min", "lai_max", "terrain_slope_deg", "met_land_use",
                  "collector", "receptors")

#: species -> (median at the start, trend per year, peak day of year, seasonal log
#: amplitude, log sigma of daily values); ug/m3 except NO2 in ppb.
def _air(so2, hno3, nh3, pso4, pno3, pnh4, pna, no2=None, so2_trend=-0.06, so2_sigma=0.55):
    out = {
        "SO2": (so2, so2_trend, 20.0, 0.30, so2_sigma),
        "HNO3": (hno3, -0.02, 190.0, 0.30, 0.40),
        "NH3": (nh3, 0.005, 100.0, 0.40, 0.45),
        "pSO4": (pso4, -0.04, 130.0, 0.20, 0.45),
        "pNO3": (pno3, -0.015, 80.0, 0.35, 0.50),
        "pNH4": (pnh4, -0.02, 100.0, 0.30, 0.45),
        "pNa": (pna, 0.0, 15.0, 0.40, 0.55),
    }
    if no2 is not None:
        out["NO2"] = (no2, -0.02, 15.0, 0.35, 0.35)
    return out


SITES = [
    {
        "id": "ridge", "name": "Tarnwick Ridge plantation", "latitude": 54.512,
        "longitude": 7.236, "elevation_m": 420.0, "land_use": "conifer_forest",
        "canopy_height_m": 14.0, "wind_height_m": 10.0, "sampler_height_m": 1.5,
        "utc_offset_h": 1.0,
        "lai": [5.6, 5.6, 5.8, 6.0, 6.4, 6.8, 7.0, 7.0, 6.8, 6.4, 6.0, 5.8],
        "terrain_slope_deg": 8.0, "met_land_use": "grass", "collector": "wet_only",
        "receptors": ["moorland", "grass"],
        "critical_loads": {"cl_max_s": 950.0, "cl_min_n": 357.0, "cl_max_n": 1420.0,
                           "cl_nut_n": 714.0},
        "precip_sampler": ("RDG-P1", "RDG-P2"), "air_sampler": "RDG-F1",
        "collector_area_cm2": 314.16,
        "climate": {"annual_precip_mm": 1450.0, "wet_share": 0.93, "shower_share": 0.010,
                    "cloud_bias": 0.6, "sea_level_t_mean": 9.6, "t_amplitude": 6.2,
                    "diurnal_t": 2.6, "dew_depression": 1.9, "wind_mean": 5.2,
                    "weibull_k": 2.0, "wind_diurnal": 0.15, "sonic": True,
                    "wind_height": 10.0},
        "chemistry": {"nss_so4": 44.0, "so4_trend": -0.045, "no3": 27.0, "no3_trend": -0.015,
                      "nh4": 30.0, "nh4_season": 0.30, "na": 28.0, "nss_ca": 4.0,
                      "nss_k": 1.2, "nss_mg": 0.8, "nss_cl": 6.0, "po4_mgl": 0.012,
                      "depth_ref_mm": 25.0},
        "air": _air(3.0, 0.85, 1.1, 2.0, 2.3, 1.2, 0.55, no2=5.5, so2_trend=-0.07,
                    so2_sigma=0.7),
    },
    {
        "id": "fell", "name": "Skelvane Fell grassland", "latitude": 54.588,
        "longitude": 7.112, "elevation_m": 560.0, "land_use": "grass",
        "canopy_height_m": 0.12, "wind_height_m": 10.0, "sampler_height_m": 1.0,
        "utc_offset_h": 1.0, "lai_min": 0.6, "lai_max": 2.4, "terrain_slope_deg": 5.0,
        "collector": "wet_only", "receptors": ["moorland"],
        "critical_loads": {"cl_max_s": 1480.0, "cl_min_n": 286.0, "cl_max_n": 1850.0,
                           "cl_nut_n": 1071.0},
        "precip_sampler": ("FEL-P1",), "air_sampler": "FEL-F1",
        "collector_area_cm2": 314.16,
        "climate": {"annual_precip_mm": 1750.0, "wet_share": 0.95, "shower_share": 0.020,
                    "cloud_bias": 0.8, "sea_level_t_mean": 9.9, "t_amplitude": 5.8,
                    "diurnal_t": 2.3, "dew_depression": 1.5, "wind_mean": 6.3,
                    "weibull_k": 2.2, "wind_diurnal": 0.10, "wind_height": 10.0},
        "chemistry": {"nss_so4": 30.0, "so4_trend": -0.04, "no3": 22.0, "no3_trend": -0.015,
                      "nh4": 22.0, "nh4_season": 0.30, "na": 36.0, "nss_ca": 3.0,
                      "nss_k": 1.0, "nss_mg": 0.7, "nss_cl": 1.0, "po4_mgl": 0.010,
                      "depth_ref_mm": 30.0},
        "air": _air(1.2, 0.6, 0.8, 1.6, 1.8, 0.9, 0.75),
    },
    {
        "id": "mere", "name": "Orrimere Moss wetland", "latitude": 54.421,
        "longitude": 6.948, "elevation_m": 85.0, "land_use": "wetland",
        "canopy_height_m": 0.8, "wind_height_m": 6.0, "sampler_height_m": 1.5,
        "utc_offset_h": 1.0, "lai_min": 0.8, "lai_max": 3.2, "collector": "bulk",
        "receptors": ["water"],
        "critical_loads": {"cl_max_s": 700.0, "cl_min_n": 214.0, "cl_max_n": 1000.0,
                           "cl_nut_n": 500.0},
        "precip_sampler": ("MER-B1",), "air_sampler": "MER-F1",
        "collector_area_cm2": 490.87,
        "climate": {"annual_precip_mm": 1050.0, "wet_share": 0.88, "shower_share": 0.005,
                    "cloud_bias": 0.5, "sea_level_t_mean": 9.9, "t_amplitude": 5.8,
                    "diurnal_t": 2.9, "dew_depression": 2.1, "wind_mean": 4.6,
                    "weibull_k": 2.0, "wind_diurnal": 0.20, "wind_height": 6.0},
        "chemistry": {"nss_so4": 28.0, "so4_trend": -0.04, "no3": 20.0, "no3_trend": -0.015,
                      "nh4": 24.0, "nh4_season": 0.35, "na": 85.0, "nss_ca": 6.0,
                      "nss_k": 2.0, "nss_mg": 1.2, "nss_cl": 1.0, "po4_mgl": 0.018,
                      "depth_ref_mm": 20.0},
        "air": _air(0.7, 0.5, 1.0, 1.5, 1.6, 0.8, 1.8),
    },
    {
        "id": "farm", "name": "Quellby Grange arable farm", "latitude": 54.455,
        "longitude": 7.389, "elevation_m": 60.0, "land_use": "crops",
        "canopy_height_m": 0.6, "wind_height_m": 10.0, "sampler_height_m": 1.5,
        "utc_offset_h": 1.0,
        "lai": [0.4, 0.4, 0.7, 1.6, 3.2, 4.5, 4.0, 1.2, 0.3, 0.5, 0.6, 0.5],
        "collector": "wet_only", "receptors": ["deciduous_forest", "grass"],
        "critical_loads": {"cl_max_s": 1900.0, "cl_min_n": 428.0, "cl_max_n": 2500.0,
                           "cl_nut_n": 1071.0},
        "precip_sampler": ("FRM-P1",), "air_sampler": "FRM-F1", "passive_sampler": "FRM-N1",
        "collector_area_cm2": 314.16,
        "climate": {"annual_precip_mm": 820.0, "wet_share": 0.85, "shower_share": 0.004,
                    "cloud_bias": 0.4, "sea_level_t_mean": 10.0, "t_amplitude": 6.4,
                    "diurnal_t": 3.5, "dew_depression": 2.6, "wind_mean": 4.0,
                    "weibull_k": 1.9, "wind_diurnal": 0.25, "wind_height": 10.0},
        "chemistry": {"nss_so4": 36.0, "so4_trend": -0.04, "no3": 28.0, "no3_trend": -0.015,
                      "nh4": 42.0, "nh4_season": 0.45, "na": 32.0, "nss_ca": 5.0,
                      "nss_k": 2.5, "nss_mg": 1.2, "nss_cl": 1.5, "po4_mgl": 0.020,
                      "depth_ref_mm": 15.0},
        "air": _air(1.0, 0.75, 9.0, 1.7, 2.8, 1.6, 0.7, no2=7.0),
    },
]

#: Detection limits of the laboratory [mg/L] (precipitation) and [ug/m3] (air), as
#: written after "<" (common practice for ion chromatography and filter packs).
DETECTION_LIMIT_PRECIP = {"SO4": 0.03, "NO3": 0.01, "NH4": 0.01, "Cl": 0.03, "Na": 0.01,
                          "K": 0.01, "Ca": 0.01, "Mg": 0.005, "PO4": 0.005}
DETECTION_LIMIT_AIR = {"SO2": 0.05, "HNO3": 0.03, "NH3": 0.05, "pSO4": 0.03, "pNO3": 0.03,
                       "pNH4": 0.03, "pNa": 0.02}
#: Bottle capacity of the precipitation collectors [mL] (a 3.3 L bottle: the wettest
#: weeks of the record overflow it, so the demo holds overflowed samples).
BOTTLE_ML = 3300.0
#: Below this gauge depth [mm] the sample is too small for analysis (flag ``trace``).
TRACE_MM = 0.5
#: The operator's weekly round, local time (our choice; nothing special about the day):
#: Thursday afternoon, the precipitation collector changed at 14:00 and the filter
#: pack an hour later, at 15:00, on the way back down.
CHANGE_WEEKDAY = 3            # Monday = 0
PRECIP_CHANGE_HOUR = 14
AIR_CHANGE_HOUR = 15
