"""The site catalogue (``sites.toml``): one ``[[site]]`` table per site.

See ``docs/data_formats.md`` for the keys.  Heights are in metres, angles in degrees,
critical loads in eq/ha/yr.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import xarray as xr

from ..errors import InputError, suggest
from ..landuse import LAND_USE

from .tomlfile import read_toml

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
    "receptors": (list, False, "further land-use classes for dry deposition"),
    "critical_loads": (dict, False, "table of critical loads [eq/ha/yr]"),
}
CRITICAL_LOAD_KEYS = ("cl_max_s", "cl_min_n", "cl_max_n", "cl_nut_n")
COLLECTORS = ("wet_only", "bulk")


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
    #: receptor -> {critical-load key: value} from ``[site.critical_loads.<receptor>]``
    receptor_critical_loads: dict = field(default_factory=dict)

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


class SiteCatalogue:
    """The sites of a study, read from ``sites.toml``.

    Attributes
    ----------
    sites : dict
        id -> :class:`Site`, in file order.
    path : Path or None
    """

    def __init__(self, sites, path=None):
        self.sites = {s.id: s for s in sites}
        self.path = Path(path) if path is not None else None

    def __iter__(self):
        return iter(self.sites.values())

    def __len__(self):
        return len(self.sites)

    def __contains__(self, site_id):
        return site_id in self.sites

    def __getitem__(self, site_id) -> Site:
        return self.sites[site_id]

    @property
    def ids(self) -> list[str]:
        return list(self.sites)

    def utc_offsets(self, site_ids) -> np.ndarray:
        """Offsets [h] of the given site ids (array of str)."""
        table = {k: s.utc_offset_h for k, s in self.sites.items()}
        return np.array([table[s] for s in site_ids], dtype=float)

    def to_dataset(self) -> xr.Dataset:
        """Site-level variables on a ``site`` dimension (see docs/data_model.md)."""
        s = list(self.sites.values())

        def arr(f, dtype=float):
            return np.array([f(x) for x in s], dtype=dtype)

        ds = xr.Dataset(
            {
                "name": ("site", arr(lambda x: x.name, object)),
                "latitude": ("site", arr(lambda x: x.latitude), {"units": "degree_north"}),
                "longitude": ("site", arr(lambda x: x.longitude), {"units": "degree_east"}),
                "elevation": ("site", arr(lambda x: x.elevation_m), {"units": "m"}),
                "land_use": ("site", arr(lambda x: x.land_use, object)),
                "canopy_height": ("site", arr(lambda x: x.canopy_height_m), {"units": "m"}),
                "wind_height": ("site", arr(lambda x: x.wind_height_m), {"units": "m"}),
                "sampler_height": ("site", arr(lambda x: x.sampler_height_m), {"units": "m"}),
                "utc_offset_h": ("site", arr(lambda x: x.utc_offset_h), {"units": "h"}),
                "terrain_slope": ("site", arr(lambda x: x.terrain_slope_deg), {"units": "degree"}),
                "met_land_use": ("site", arr(lambda x: x.met_land_use or x.land_use, object)),
                "collector": ("site", arr(lambda x: x.collector, object)),
            },
            coords={"site": [x.id for x in s]},
        )
        return ds

    def surfaces(self) -> xr.Dataset:
        """Receptor surfaces on (``site``, ``receptor``) dims (see docs/data_model.md)."""
        receptors = []
        for s in self.sites.values():
            for r in s.surfaces:
                if r not in receptors:
                    receptors.append(r)
        n_s, n_r = len(self.sites), len(receptors)
        active = np.zeros((n_s, n_r), bool)
        own = np.zeros((n_s, n_r), bool)
        height = np.empty((n_s, n_r))
        z0 = np.full((n_s, n_r), np.nan)
        d = np.full((n_s, n_r), np.nan)
        lai = np.full((n_s, n_r, 12), np.nan)
        for i, s in enumerate(self.sites.values()):
            for j, r in enumerate(receptors):
                active[i, j] = r in s.surfaces
                own[i, j] = r == s.land_use
                height[i, j] = s.canopy_height_m if own[i, j] else LAND_USE[r][1]
                if own[i, j]:
                    z0[i, j] = np.nan if s.roughness_length_m is None else s.roughness_length_m
                    d[i, j] = np.nan if s.displacement_height_m is None else s.displacement_height_m
                    if s.lai is not None:
                        lai[i, j] = s.lai
        ds = self.to_dataset()
        sr = ("site", "receptor")
        return ds.assign_coords(receptor=receptors, month=np.arange(1, 13)).assign({
            "active": xr.Variable(sr, active),
            "is_site_surface": xr.Variable(sr, own),
            "canopy_height": xr.Variable(sr, height, {"units": "m"}),
            "roughness_length": xr.Variable(sr, z0, {
                "units": "m", "long_name": "roughness length override (NaN: from land use)"}),
            "displacement_height": xr.Variable(sr, d, {
                "units": "m", "long_name": "displacement height override (NaN: from land use)"}),
            "lai": xr.Variable(sr + ("month",), lai, {
                "units": "m2 m-2", "long_name": "monthly leaf-area index (NaN: not given)"})})


def _key_line(text_lines, block_starts, k, key):
    """Line (1-based) of `key` within the k-th [[site]] block, or the block's line."""
    start = block_starts[k] if k < len(block_starts) else 0
    end = block_starts[k + 1] if k + 1 < len(block_starts) else len(text_lines)
    pat = re.compile(rf"^\s*{re.escape(key)}\s*=")
    for i in range(start, end):
        if pat.match(text_lines[i]):
            return i + 1
    return start + 1


def _table_key_line(text_lines, block_starts, k, receptor, key):
    """Line (1-based) of `key` in the ``[site.critical_loads.<receptor>]`` table of the
    k-th [[site]] block (the table's header line when the key is not found)."""
    start = block_starts[k] if k < len(block_starts) else 0
    end = block_starts[k + 1] if k + 1 < len(block_starts) else len(text_lines)
    head = re.compile(rf"^\s*\[\s*site\.critical_loads\.{re.escape(receptor)}\s*\]")
    pat = re.compile(rf"^\s*{re.escape(key)}\s*=")
    for i in range(start, end):
        if head.match(text_lines[i]):
            for j in range(i + 1, end):
                if text_lines[j].lstrip().startswith("["):
                    break
                if pat.match(text_lines[j]):
                    return j + 1
            return i + 1
    return _key_line(text_lines, block_starts, k, key)


def read_sites(path) -> SiteCatalogue:
    """Read and validate a site catalogue.

    Parameters
    ----------
    path : str or Path
        A TOML file with ``[[site]]`` tables.

    Returns
    -------
    SiteCatalogue

    Raises
    ------
    InputError
        For invalid TOML, a missing or unknown key, a wrong type, a value out of range,
        an unknown land-use class or collector, or a duplicate id.
    """
    path = Path(path)
    data, text = read_toml(path, expected="an existing sites.toml")
    if not text.strip():
        raise InputError("empty file", file=path, expected="[[site]] tables")
    lines = text.splitlines()
    starts = [i for i, ln in enumerate(lines) if re.match(r"^\s*\[\[\s*site\s*\]\]", ln)]
    extra = [k for k in data if k != "site"]
    if extra:
        raise InputError("unknown top-level key", file=path, column=extra[0],
                         expected="only [[site]] tables" + suggest(extra[0], ["site"]))
    tables = data.get("site")
    if not isinstance(tables, list) or not tables:
        raise InputError("no sites", file=path, expected="one or more [[site]] tables")
    sites, seen = [], {}
    for k, t in enumerate(tables):
        def err(problem, key, value=None, expected=None):
            return InputError(problem, file=path, line=_key_line(lines, starts, k, key),
                              column=key, value=value, expected=expected)
        for key in t:
            if key not in SITE_KEYS:
                raise err("unknown key", key, expected="one of the documented site keys"
                          + suggest(key, SITE_KEYS))
        for key, (typ, req, desc) in SITE_KEYS.items():
            if req and key not in t:
                raise InputError("missing required key", file=path,
                                 line=(starts[k] + 1) if k < len(starts) else None,
                                 column=key, expected=desc)
            if key in t:
                v = t[key]
                if isinstance(v, bool) or not isinstance(v, typ):
                    names = typ.__name__ if isinstance(typ, type) else " or ".join(x.__name__ for x in typ)
                    raise err("wrong type", key, v, f"a {names} ({desc})")
        sid = t["id"]
        if sid in seen:
            raise err("duplicate site id", "id", sid, f"ids unique (first at site {seen[sid] + 1})")
        seen[sid] = k
        if not -90 <= t["latitude"] <= 90:
            raise err("latitude out of range", "latitude", t["latitude"], "-90 to 90 degrees")
        if not -180 <= t["longitude"] <= 360:
            raise err("longitude out of range", "longitude", t["longitude"], "-180 to 180 degrees")
        for key in ("canopy_height_m", "wind_height_m", "sampler_height_m"):
            if t[key] < 0:
                raise err("negative height", key, t[key], "a height >= 0 m")
        for key in ("wind_height_m", "sampler_height_m"):
            if t[key] == 0:
                raise err("zero measurement height", key, t[key], "a height > 0 m")
        if not -14 <= t["utc_offset_h"] <= 14:
            raise err("UTC offset out of range", "utc_offset_h", t["utc_offset_h"], "-14 to 14 h")
        for key in ("land_use", "met_land_use"):
            if key in t and t[key] not in LAND_USE:
                raise err("unknown land-use class", key, t[key],
                          "one of " + ", ".join(LAND_USE) + suggest(t[key], LAND_USE))
        receptors = t.get("receptors", [])
        for r in receptors:
            if r not in LAND_USE:
                raise err("unknown land-use class", "receptors", r,
                          "one of " + ", ".join(LAND_USE) + suggest(r, LAND_USE))
        collector = t.get("collector", "wet_only")
        if collector not in COLLECTORS:
            raise err("unknown collector", "collector", collector, "'wet_only' or 'bulk'")
        lai = None
        if "lai" in t:
            v = t["lai"]
            if len(v) != 12 or not all(isinstance(x, (int, float)) and x >= 0 for x in v):
                raise err("bad leaf-area index list", "lai", v, "12 monthly values >= 0")
            lai = tuple(float(x) for x in v)
            if "lai_min" in t or "lai_max" in t:
                raise err("both lai and lai_min/lai_max given", "lai", expected="one of them")
        elif "lai_min" in t or "lai_max" in t:
            if not ("lai_min" in t and "lai_max" in t):
                raise err("lai_min and lai_max must come together", "lai_min" if "lai_min" in t else "lai_max")
            if not 0 <= t["lai_min"] <= t["lai_max"]:
                raise err("lai_min above lai_max", "lai_min", t["lai_min"], "0 <= lai_min <= lai_max")
            lai = _monthly_lai(float(t["lai_min"]), float(t["lai_max"]), t["latitude"])
        cl = dict(t.get("critical_loads", {}))
        per_receptor = {r: cl.pop(r) for r in list(cl) if isinstance(cl[r], dict)}
        surfaces = [t["land_use"]] + list(receptors)
        for r, table in per_receptor.items():
            def rerr(problem, key, value=None, expected=None, r=r):
                return InputError(problem, file=path, value=value, expected=expected,
                                  line=_table_key_line(lines, starts, k, r, key), column=key)
            if r not in surfaces:
                raise rerr("critical loads for a receptor the site does not have",
                          "critical_loads", r, "one of the site's surfaces: " + ", ".join(surfaces)
                          + suggest(r, surfaces))
            for key, v in table.items():
                if key not in CRITICAL_LOAD_KEYS:
                    raise rerr(f"unknown critical-load key in [site.critical_loads.{r}]", key,
                              expected="one of " + ", ".join(CRITICAL_LOAD_KEYS)
                              + suggest(key, CRITICAL_LOAD_KEYS))
                if isinstance(v, bool) or not isinstance(v, (int, float)) or v < 0:
                    raise rerr(f"bad critical load in [site.critical_loads.{r}]", key, v,
                              "a number >= 0 in eq/ha/yr")
        for key, v in cl.items():
            if key not in CRITICAL_LOAD_KEYS:
                raise err("unknown critical-load key", key, expected="one of "
                          + ", ".join(CRITICAL_LOAD_KEYS) + suggest(key, CRITICAL_LOAD_KEYS))
            if isinstance(v, bool) or not isinstance(v, (int, float)) or v < 0:
                raise err("bad critical load", key, v, "a number >= 0 in eq/ha/yr")
        for r in [None] + list(per_receptor):
            merged = {**cl, **(per_receptor[r] if r else {})}
            if merged.get("cl_max_n", np.inf) < merged.get("cl_min_n", -np.inf):
                where = f"[site.critical_loads.{r}]" if r else "[site.critical_loads]"
                line = (_table_key_line(lines, starts, k, r, "cl_max_n") if r else
                        _key_line(lines, starts, k, "cl_max_n"))
                raise InputError(f"impossible critical load function in {where}: cl_max_n below "
                                 "cl_min_n", file=path, line=line, column="cl_max_n",
                                 value=merged["cl_max_n"],
                                 expected=f"cl_max_n >= cl_min_n = {merged['cl_min_n']:g} eq/ha/yr")
        for key in ("roughness_length_m", "displacement_height_m", "terrain_slope_deg"):
            if key in t and t[key] < 0:
                raise err("negative value", key, t[key], "a value >= 0")
        sites.append(Site(
            id=sid, name=t["name"], latitude=float(t["latitude"]),
            longitude=float(t["longitude"]), elevation_m=float(t["elevation_m"]),
            land_use=t["land_use"], canopy_height_m=float(t["canopy_height_m"]),
            wind_height_m=float(t["wind_height_m"]),
            sampler_height_m=float(t["sampler_height_m"]),
            utc_offset_h=float(t["utc_offset_h"]), lai=lai,
            terrain_slope_deg=float(t.get("terrain_slope_deg", 0.0)),
            roughness_length_m=t.get("roughness_length_m"),
            displacement_height_m=t.get("displacement_height_m"),
            met_land_use=t.get("met_land_use"), collector=collector,
            receptors=tuple(receptors), critical_loads={k2: float(v) for k2, v in cl.items()},
            receptor_critical_loads={r: {k2: float(v) for k2, v in tb.items()}
                                     for r, tb in per_receptor.items()}))
    return SiteCatalogue(sites, path)
