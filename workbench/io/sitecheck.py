"""The check of one ``[[site]]`` table: the types and ranges of its keys, its receptors,
tables and history, read into a :class:`~.siterecord.Site` (:func:`check_site`).

Moved from :mod:`workbench.io.sites`, which re-exports them.
"""
from __future__ import annotations

from .. import species as _species
from ..errors import suggest, type_hint, type_words
from ..landuse import LAND_USE, class_hint
from .critical_loads import check_critical_loads
from .sitechanges import check_changes
from .sitegeometry import ELEVATION_RANGE, _geometry, _mast_history_geometry
from .siterecord import (COLLECTORS, MET_PRECIPITATION_FORMS, MET_WIND_UNITS, NH3_GAMMA_HINT,
                         PARTICLE_SPECIES, SITE_KEYS, Site, USTAR_TRANSFERS, _monthly_lai)


def _type_check(t, err):
    for key, v in t.items():
        if key not in SITE_KEYS:
            if isinstance(v, dict):     # a table [site.<key>]: name the site's tables
                tables = [k for k, (typ, _, _) in SITE_KEYS.items() if typ is dict]
                raise err("unknown table", key, expected="one of the site's tables: "
                          + ", ".join(f"[site.{k}]" for k in tables) + suggest(key, tables)
                          + " (docs/data_formats.md, section 1)")
            raise err("unknown key", key, expected="one of the documented site keys"
                      + suggest(key, SITE_KEYS) + " (docs/data_formats.md, section 1)")
        typ, _, desc = SITE_KEYS[key]
        if isinstance(v, bool) or not isinstance(v, typ):
            raise err("wrong type", key, v, f"{type_words(typ)} ({desc})" + type_hint(v))



#: A leaf-area index above the first bound is doubtful (a hint), above the second
#: impossible for a canopy (an error) [m2 m-2]: closed stands commonly reach 3-8 and
#: the densest conifer stands about 10-15 (from memory: the global compilation of
#: Asner, Scurlock and Hicke 2003, Global Ecol. Biogeogr. 12, 191); a satellite
#: product's LAI stored as integers x10 (0-100 for 0-10), or a percent cover typed
#: as LAI, lands far above them.
LAI_DOUBTFUL, LAI_MAX = 12.0, 20.0


def _lai_scale(t, key, top, err, notes, label):
    """The error of a leaf-area index above :data:`LAI_MAX`, the hint of one above
    :data:`LAI_DOUBTFUL` (`top` the largest value of `key`)."""
    if top > LAI_MAX:
        raise err("leaf-area index larger than any canopy's", key, t[key],
                  "m2 of leaf per m2 of ground, at most about 15 (a closed stand 3-8); "
                  "values scaled by 10 (as some satellite products store them: "
                  f"{top:g} is {top / 10:g}) or by 100 (a percent: {top / 100:g})? write "
                  "the index itself")
    if top > LAI_DOUBTFUL:
        notes.append(f"{label}: {key} reaches {top:g}, above {LAI_DOUBTFUL:g} m2 m-2, "
                     "reached only by the densest conifer stands: a value stored x10 "
                     f"({top / 10:g})? (used as written)")


def check_site(t: dict, err, notes: list, label: str, table_err=None,
               change_err=None) -> Site:
    """Validate one site's keys (a ``[[site]]`` table, or one with scenario overrides).

    Parameters
    ----------
    t : dict
        Key -> value as in :data:`SITE_KEYS`; heights [m], angles [degree].
    err : callable
        ``err(problem, key, value=None, expected=None)`` -> an InputError located in
        the file that holds `key`.
    notes : list
        Hints on doubtful values are appended here.
    label : str
        Names the site in the hints.
    table_err : callable, optional
        ``table_err(problem, receptor, key, value=None, expected=None)`` -> an error
        located in a ``[site.critical_loads.<receptor>]`` table (default: `err`).
        Without it (the scenario's check of a catalogue site with its overrides, which
        cannot change critical loads) the critical-load hints are not noted again.
    change_err : callable, optional
        ``change_err(problem, j, key, value=None, expected=None)`` -> an error located at
        `key` of the j-th ``[[site.change]]`` table (default: `err` at ``change``).

    Returns
    -------
    Site

    Raises
    ------
    InputError
        From `err`, for the first impossible value (see docs/data_formats.md).
    """
    _type_check(t, err)
    if not -90 <= t["latitude"] <= 90:
        raise err("latitude out of range", "latitude", t["latitude"], "-90 to 90 degrees")
    if not -180 <= t["longitude"] <= 360:
        raise err("longitude out of range", "longitude", t["longitude"],
                  "-180 to 180 degrees east (or 0 to 360)")
    if not ELEVATION_RANGE[0] <= t["elevation_m"] <= ELEVATION_RANGE[1]:
        raise err("elevation out of range", "elevation_m", t["elevation_m"],
                  f"{ELEVATION_RANGE[0]:g} to {ELEVATION_RANGE[1]:g} m above sea level "
                  "(a height in feet?)")
    for key in ("canopy_height_m", "wind_height_m", "sampler_height_m"):
        if t[key] < 0:
            raise err("negative height", key, t[key], "a height >= 0 m")
    for key in ("wind_height_m", "sampler_height_m"):
        if t[key] == 0:
            raise err("zero measurement height", key, t[key], "a height > 0 m")
    if not -14 <= t["utc_offset_h"] <= 14:
        raise err("UTC offset out of range", "utc_offset_h", t["utc_offset_h"], "-14 to 14 h")
    if t["utc_offset_h"] * 4 != round(t["utc_offset_h"] * 4):
        raise err("UTC offset not a whole quarter hour", "utc_offset_h", t["utc_offset_h"],
                  "hours in steps of 0.25 (e.g. 1, -3.5, 5.75)")
    for key in ("land_use", "met_land_use"):
        if key in t and t[key] not in LAND_USE:
            raise err("unknown land-use class", key, t[key],
                      "one of " + ", ".join(LAND_USE) + class_hint(t[key]))
    receptors = t.get("receptors", [])
    for r in receptors:
        if not isinstance(r, str) or r not in LAND_USE:
            raise err("unknown land-use class", "receptors", r,
                      "one of " + ", ".join(LAND_USE) + class_hint(r))
    twice = [r for i, r in enumerate(receptors) if r in receptors[:i]]
    if twice:          # each row of exceedance.csv came once per naming, squared
        raise err("receptor named twice in receptors", "receptors", twice[0],
                  "each surface once (receptors = "
                  + str(list(dict.fromkeys(receptors))).replace("'", '"') + ")")
    collector = t.get("collector", "wet_only")
    if collector not in COLLECTORS:
        raise err("unknown collector", "collector", collector, "'wet_only' or 'bulk'"
                  + suggest(collector, COLLECTORS))
    lai = None
    if "lai" in t:
        v = t["lai"]
        if len(v) != 12 or not all(isinstance(x, (int, float)) and not isinstance(x, bool)
                                   and x >= 0 for x in v):
            raise err("bad leaf-area index list", "lai", v, "12 monthly values >= 0")
        lai = tuple(float(x) for x in v)
        if "lai_min" in t or "lai_max" in t:
            raise err("both lai and lai_min/lai_max given", "lai", expected="one of them")
        _lai_scale(t, "lai", max(lai), err, notes, label)
    elif "lai_min" in t or "lai_max" in t:
        if not ("lai_min" in t and "lai_max" in t):
            raise err("lai_min and lai_max must come together", "lai_min" if "lai_min" in t else "lai_max")
        if t["lai_min"] < 0:
            raise err("negative leaf-area index", "lai_min", t["lai_min"],
                      "0 <= lai_min <= lai_max")
        if not t["lai_min"] <= t["lai_max"]:
            raise err("lai_min above lai_max", "lai_min", t["lai_min"], "0 <= lai_min <= lai_max"
                      f" (swapped? lai_min = {t['lai_max']:g} and lai_max = {t['lai_min']:g})")
        _lai_scale(t, "lai_max", t["lai_max"], err, notes, label)
        lai = _monthly_lai(float(t["lai_min"]), float(t["lai_max"]), t["latitude"])
    cl_notes = notes             # without table_err: the scenario's re-check of a site
    if table_err is None:        # read from the catalogue, whose hints are noted already
        cl_notes = []            # (and would blame an unrelated override's line)

        def table_err(problem, receptor, key, value=None, expected=None):
            return err(problem, "critical_loads", value, expected)
    surfaces = [t["land_use"]] + [r for r in receptors if r != t["land_use"]]
    cl, per_receptor = check_critical_loads(t, surfaces, err, table_err, cl_notes, t["id"])
    gamma = _nh3_emission_potential(t, err, notes, label, receptors)
    coarse = dict(t.get("coarse_fraction", {}))
    for key, v in coarse.items():
        if key not in PARTICLE_SPECIES:
            raise err("unknown particle species in coarse_fraction", "coarse_fraction", key,
                      "one of " + ", ".join(PARTICLE_SPECIES) + suggest(key, PARTICLE_SPECIES))
        if isinstance(v, bool) or not isinstance(v, (int, float)):
            raise err("wrong type in coarse_fraction", "coarse_fraction",
                      f"{key} = {v!r}" if isinstance(v, str) else f"{key} = {v}",
                      "a number from 0 to 1 without quotes (e.g. {" + key + " = 0.3})")
        if not 0 <= v <= 1:
            raise err("bad coarse fraction", "coarse_fraction", f"{key} = {v}",
                      "a mass fraction from 0 to 1"
                      + (f" (a percent? {v:g} % is {key} = {v / 100:g})"
                         if 2 <= v <= 100 else ""))
    transfer = dict(t.get("ustar_transfer", {}))
    own = (t["land_use"],) + tuple(receptors)
    for key, v in transfer.items():
        if key not in own:
            raise err("ustar_transfer for a surface the site does not have", "ustar_transfer",
                      key, "one of the site's surfaces " + ", ".join(dict.fromkeys(own))
                      + suggest(key, own))
        if v not in USTAR_TRANSFERS:
            raise err("unknown transfer of u*", "ustar_transfer", f"{key} = {v!r}",
                      "one of " + ", ".join(USTAR_TRANSFERS) + suggest(str(v), USTAR_TRANSFERS))
    plume = t.get("source_plume", [])
    air_species = _species.AIR_GASES + _species.AIR_PARTICLES
    for sp in plume:
        if sp not in air_species:
            raise err("unknown air species in source_plume", "source_plume", sp,
                      "one of " + ", ".join(air_species) + suggest(str(sp), air_species))
    _met_writing(t, err)
    for key in ("displacement_height_m", "terrain_slope_deg", "coast_distance_km"):
        if key in t and t[key] < 0:
            raise err("negative value", key, t[key], "a value >= 0")
    _geometry(t, err, notes, label)
    if change_err is None:
        def change_err(problem, j, key, value=None, expected=None):
            return err(problem, "change", value, expected)
    changes = check_changes(t, change_err, cl_notes, label)
    _mast_history_geometry(t, changes, change_err, cl_notes, label)
    return Site(
        id=t["id"], name=t["name"], latitude=float(t["latitude"]),
        longitude=float(t["longitude"]), elevation_m=float(t["elevation_m"]),
        land_use=t["land_use"], canopy_height_m=float(t["canopy_height_m"]),
        wind_height_m=float(t["wind_height_m"]),
        sampler_height_m=float(t["sampler_height_m"]),
        utc_offset_h=float(t["utc_offset_h"]), lai=lai,
        terrain_slope_deg=float(t.get("terrain_slope_deg", 0.0)),
        roughness_length_m=t.get("roughness_length_m"),
        displacement_height_m=t.get("displacement_height_m"),
        met_land_use=t.get("met_land_use"), collector=collector,
        receptors=tuple(receptors), critical_loads=cl,
        coast_distance_km=None if "coast_distance_km" not in t else float(t["coast_distance_km"]),
        coarse_fraction={k2: float(v) for k2, v in coarse.items()},
        receptor_critical_loads=per_receptor,
        nh3_emission_potential=gamma, ustar_transfer={k2: str(v) for k2, v in transfer.items()},
        changes=changes,
        laboratory=t["laboratory"].strip() if t.get("laboratory") else None,
        air_laboratory=t["air_laboratory"].strip() if t.get("air_laboratory") else None,
        source_plume=tuple(dict.fromkeys(plume)), met_wind_unit=t.get("met_wind_unit"),
        met_precipitation=t.get("met_precipitation", "hourly"),
        met_counter_restart_hour=t.get("met_counter_restart_hour"))


def _met_writing(t, err):
    """The keys that say how the site's met file is written (``met_wind_unit``,
    ``met_precipitation``, ``met_counter_restart_hour``): one located error for a value
    that is none of the expected."""
    unit = t.get("met_wind_unit")
    if unit is not None and unit not in MET_WIND_UNITS:
        raise err("unknown wind unit in met_wind_unit", "met_wind_unit", unit,
                  "one of " + ", ".join(f'"{u}"' for u in MET_WIND_UNITS) + " (the unit the "
                  "met file's wind speed is written in where its header says m/s)"
                  + suggest(str(unit), MET_WIND_UNITS))
    form = t.get("met_precipitation", "hourly")
    if form not in MET_PRECIPITATION_FORMS:
        raise err("unknown form in met_precipitation", "met_precipitation", form,
                  '"hourly" (each hour\'s amount, the default) or "daily_counter" (the day\'s '
                  "running total, restarted each day)"
                  + suggest(str(form), MET_PRECIPITATION_FORMS))
    hour = t.get("met_counter_restart_hour")
    if hour is not None:
        if not 0 <= hour <= 23:
            raise err("restart hour out of range", "met_counter_restart_hour", hour,
                      "a whole hour of the day from 0 to 23 (the file's clock: 0 for a counter "
                      "restarted at midnight, 9 at 09:00)")
        if form != "daily_counter":
            raise err("met_counter_restart_hour without a daily counter",
                      "met_counter_restart_hour", hour,
                      'met_precipitation = "daily_counter" beside it (the hour is that '
                      "counter's restart)")


def _nh3_emission_potential(t, err, notes, label, receptors) -> dict:
    """The site's ``nh3_emission_potential`` table: receptor class -> Gamma_s [-].

    Each key must be one of the site's own surfaces (its land use or receptors: a
    value for another surface would be silently unused), each value a number >= 0;
    above :data:`NH3_GAMMA_HINT` a hint is noted.
    """
    gamma = dict(t.get("nh3_emission_potential", {}))
    own = (t["land_use"],) + tuple(receptors)
    for key, v in gamma.items():
        if key not in own:
            raise err("nh3_emission_potential for a surface the site does not have",
                      "nh3_emission_potential", key, "one of the site's surfaces "
                      + ", ".join(dict.fromkeys(own)) + suggest(key, own))
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not v >= 0:
            raise err("bad NH3 emission potential", "nh3_emission_potential",
                      f"{key} = {v!r}", "a number >= 0 (Gamma_s = [NH4+]/[H+], no unit)")
        if v > NH3_GAMMA_HINT:
            notes.append(f"{label}: nh3_emission_potential {key} = {v:g} is above the values "
                         "reported for freshly fertilised crops (order 1e4): a typing error?")
    return {k: float(v) for k, v in gamma.items()}
