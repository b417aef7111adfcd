"""A site of the catalogue: the keys of a ``[[site]]`` table (:data:`SITE_KEYS`), the
:class:`Site` record, and the record back as the table's keys (:func:`site_dict`).

Moved from :mod:`workbench.io.sites`, which re-exports them.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np


#: key -> (type(s), required, description)
SITE_KEYS = {
    "id": (str, True, "short identifier used in the data files"),
    "name": (str, True, "display name"),
    "latitude": ((int, float), True, "degrees north, -90..90"),
    "longitude": ((int, float), True, "degrees east, -180..180"),
    "elevation_m": ((int, float), True, "station elevation above sea level [m]"),
    "land_use": (str, True, "one of our land-use classes"),
    "canopy_height_m": ((int, float), True, "canopy height of the site's surface [m]"),
    "wind_height_m": ((int, float), True, "height of the wind measurement [m]"),
    "sampler_height_m": ((int, float), True, "height of the air sampler inlet [m]"),
    "utc_offset_h": ((int, float), True, "offset of naive timestamps from UTC [h]"),
    "lai": (list, False, "12 monthly leaf-area indices [m2 m-2]"),
    "lai_min": ((int, float), False, "smallest leaf-area index of the year [m2 m-2]"),
    "lai_max": ((int, float), False, "largest leaf-area index of the year [m2 m-2]"),
    "terrain_slope_deg": ((int, float), False, "terrain slope [degree], default 0"),
    "roughness_length_m": ((int, float), False, "override of z0 [m]"),
    "displacement_height_m": ((int, float), False, "override of d [m]"),
    "met_land_use": (str, False, "land use under the wind mast if not the site's"),
    "collector": (str, False, "'wet_only' (default) or 'bulk'"),
    "laboratory": (str, False, "id of the laboratory analysing the precipitation samples "
                   "(sites naming one id share its calibration bias in the Monte Carlo)"),
    "air_laboratory": (str, False, "id of the laboratory analysing the air samples "
                       "(the same id as a laboratory: one calibration bias per analyte)"),
    "receptors": (list, False, "further land-use classes for dry deposition"),
    "critical_loads": (dict, False, "table of critical loads [eq/ha/yr]"),
    "nh3_emission_potential": (dict, False, "table of stomatal NH3 emission potentials "
                               "Gamma_s [-] by receptor class (bidirectional NH3)"),
    "coast_distance_km": ((int, float), False, "distance to the sea coast [km] (coastal or "
                          "inland particle size split)"),
    "coarse_fraction": (dict, False, "coarse mass fraction 0-1 per particle species, "
                        "e.g. {pNO3 = 0.3}"),
    "ustar_transfer": (dict, False, "transfer of u* by the site's own surfaces, e.g. "
                       "{deciduous_forest = \"blending_height\"} (docs/methods_dry_particles.md)"),
    "source_plume": (list, False, "air species whose samplers at this site stand in the "
                     "plume of a nearby source, e.g. [\"NH3\"] beside livestock housing: "
                     "their high values are real, never judged a 1000x unit slip"),
    "met_wind_unit": (str, False, "the unit the met file's wind speed at this site is "
                      "written in where its header's unit is wrong: knots, mph or km/h "
                      "(converted to m/s when read)"),
    "met_precipitation": (str, False, "how the met file's precipitation at this site is "
                          "written: 'hourly' (default) or 'daily_counter' (the day's running "
                          "total, differenced into each hour's amount when read)"),
    "met_counter_restart_hour": (int, False, "hour of the day (0-23, the file's clock) at "
                                 "which a daily counter restarts (met_precipitation = "
                                 "'daily_counter'); default: the hour its falls come at"),
    "change": (list, False, "the site's history: [[site.change]] tables with date and what "
               "(docs/data_formats.md, \"A long record\")"),
}
#: Transfers of u* a site's ``ustar_transfer`` table may name (DryOptions.ustar_transfer).
USTAR_TRANSFERS = ("blending_height", "drag_law")
#: Particle species a ``coarse_fraction`` table may name.
PARTICLE_SPECIES = ("pSO4", "pNO3", "pNH4", "pNa", "pCl", "pCa")
#: Gamma_s above this is beyond the values reported for freshly fertilised crops
#: (order 1e4; Massad et al. 2010, from memory): a hint, not an error [-].
NH3_GAMMA_HINT = 1e5
COLLECTORS = ("wet_only", "bulk")
#: Units a site's ``met_wind_unit`` may name (pint reads each; metwind.SLIP_FACTORS).
MET_WIND_UNITS = ("knots", "mph", "km/h")
#: How a site's ``met_precipitation`` may say its met precipitation is written.
MET_PRECIPITATION_FORMS = ("hourly", "daily_counter")


@dataclass(frozen=True)
class Site:
    """One site of the catalogue. Heights [m], angles [degree], loads [eq ha-1 yr-1]."""

    id: str
    name: str
    latitude: float
    longitude: float
    elevation_m: float
    land_use: str
    canopy_height_m: float
    wind_height_m: float
    sampler_height_m: float
    utc_offset_h: float
    lai: tuple | None = None
    terrain_slope_deg: float = 0.0
    roughness_length_m: float | None = None
    displacement_height_m: float | None = None
    met_land_use: str | None = None
    collector: str = "wet_only"
    receptors: tuple = ()
    critical_loads: dict = field(default_factory=dict)
    nh3_emission_potential: dict = field(default_factory=dict)
    coast_distance_km: float | None = None
    coarse_fraction: dict = field(default_factory=dict)
    #: receptor class -> transfer of u* (``[site.ustar_transfer]``)
    ustar_transfer: dict = field(default_factory=dict)
    #: receptor -> {critical-load key: value} from ``[site.critical_loads.<receptor>]``
    receptor_critical_loads: dict = field(default_factory=dict)
    #: the declared history (``[[site.change]]``), :class:`.sitechanges.SiteChange` in
    #: date order
    changes: tuple = ()
    #: ids of the laboratories analysing the precipitation and the air samples (after
    #: the site's last laboratory change); None: not named (a laboratory of its own)
    laboratory: str | None = None
    air_laboratory: str | None = None
    #: air species whose samplers stand in a nearby source's plume (``source_plume``)
    source_plume: tuple = ()
    #: the unit the met file's wind speed is written in where its header's is wrong
    #: (``met_wind_unit``: knots, mph or km/h); None: the header's
    met_wind_unit: str | None = None
    #: how the met precipitation is written (``met_precipitation``): "hourly" or
    #: "daily_counter"; the counter's restart hour [h of the day, file's clock] or None
    #: (from the data)
    met_precipitation: str = "hourly"
    met_counter_restart_hour: int | None = None

    def critical_loads_for(self, receptor) -> dict:
        """Critical loads of a receptor [eq ha-1 yr-1]: the site's, with the receptor's
        own table (if any) taking precedence key by key."""
        return {**self.critical_loads, **self.receptor_critical_loads.get(receptor, {})}

    @property
    def surfaces(self) -> tuple:
        """The site's own land use followed by its further receptors."""
        return (self.land_use,) + tuple(r for r in self.receptors if r != self.land_use)


def _monthly_lai(lai_min, lai_max, latitude):
    """A smooth seasonal LAI from its extremes, peaking in mid-July (mid-January in
    the southern hemisphere); common practice for deciduous canopies."""
    month = np.arange(1, 13)
    peak = 7 if latitude >= 0 else 1
    phase = np.cos(2 * np.pi * (month - peak) / 12.0)
    return tuple(float(v) for v in lai_min + (lai_max - lai_min) * (1 + phase) / 2)


def site_dict(site: Site) -> dict:
    """A site's keys as in a ``[[site]]`` table (the inverse of :func:`check_site`)."""
    out = {"id": site.id, "name": site.name, "latitude": site.latitude,
           "longitude": site.longitude, "elevation_m": site.elevation_m,
           "land_use": site.land_use, "canopy_height_m": site.canopy_height_m,
           "wind_height_m": site.wind_height_m, "sampler_height_m": site.sampler_height_m,
           "utc_offset_h": site.utc_offset_h, "terrain_slope_deg": site.terrain_slope_deg,
           "collector": site.collector, "receptors": list(site.receptors),
           "critical_loads": {**site.critical_loads,
                              **{r: dict(tb) for r, tb in site.receptor_critical_loads.items()}}}
    if site.coarse_fraction:
        out["coarse_fraction"] = dict(site.coarse_fraction)
    for key in ("roughness_length_m", "displacement_height_m", "met_land_use",
                "coast_distance_km", "laboratory", "air_laboratory", "met_wind_unit",
                "met_counter_restart_hour"):
        if getattr(site, key) is not None:
            out[key] = getattr(site, key)
    if site.lai is not None:
        out["lai"] = list(site.lai)
    if site.nh3_emission_potential:
        out["nh3_emission_potential"] = dict(site.nh3_emission_potential)
    if site.ustar_transfer:
        out["ustar_transfer"] = dict(site.ustar_transfer)
    if site.met_precipitation != "hourly":
        out["met_precipitation"] = site.met_precipitation
    if site.source_plume:
        out["source_plume"] = list(site.source_plume)
    if site.changes:
        out["change"] = [c.as_dict() for c in site.changes]
    return out
