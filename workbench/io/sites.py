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

from ..errors import InputError, suggest, type_hint, type_words
from ..landuse import LAND_USE, class_hint
from ..surface.solar import DEGREES_PER_HOUR     # mean solar offset = longitude / 15 [h]

from .critical_loads import CRITICAL_LOAD_KEYS, check_critical_loads  # noqa: F401
from .sitechanges import change_key_line, check_changes
from .tomlfile import read_toml, toml_line

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
    notes : list of str
        Hints on doubtful values (see :func:`check_site`, :func:`zone_note`).
    zone_notes : dict
        site id -> its note of :func:`zone_note` (also in `notes`), which the met's clock
        check supersedes where it judges the site (:func:`workbench.io.inputs.load_inputs`).
    """

    def __init__(self, sites, path=None, notes=None, zone_notes=None):
        self.sites = {s.id: s for s in sites}
        self.path = Path(path) if path is not None else None
        #: Doubtful but usable values found when reading (plain-text hints).
        self.notes = list(notes or [])
        self.zone_notes = dict(zone_notes or {})

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

    def nh3_emission_potential(self) -> dict:
        """Every site's Gamma_s as ``{"<site>/<class>": value}`` [-], the keys of
        :attr:`workbench.drydep.DryOptions.nh3_emission_potential`."""
        return {f"{s.id}/{c}": v for s in self for c, v in s.nh3_emission_potential.items()}

    def ustar_transfer(self) -> dict:
        """Every site's u* transfer by surface as ``{"<site>/<class>": transfer}``."""
        return {f"{s.id}/{c}": v for s in self for c, v in s.ustar_transfer.items()}

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
                "coast_distance": ("site", arr(lambda x: np.nan if x.coast_distance_km is None
                                               else 1e3 * x.coast_distance_km),
                                   {"units": "m", "long_name": "distance to the coast (NaN: "
                                    "not given)"}),
                **{f"coarse_fraction_{sp}": ("site", arr(lambda x, sp=sp: x.coarse_fraction.get(
                    sp, np.nan)), {"units": "1", "long_name": f"coarse mass fraction of {sp} "
                                   "(NaN: the default rule)"})
                   for sp in PARTICLE_SPECIES if any(sp in x.coarse_fraction for x in s)},
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
        transfer = np.full((n_s, n_r), "", dtype=object)
        for i, s in enumerate(self.sites.values()):
            for j, r in enumerate(receptors):
                transfer[i, j] = s.ustar_transfer.get(r, "")
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
                "units": "m2 m-2", "long_name": "monthly leaf-area index (NaN: not given)"}),
            **({"ustar_transfer": xr.Variable(sr, transfer, {
                "long_name": "transfer of u* from the wind mast (empty: the option's)"})}
               if any(s.ustar_transfer for s in self.sites.values()) else {})})


def _key_line(text_lines, block_starts, k, key):
    """Line (1-based) of `key` within the k-th [[site]] block, or the block's line."""
    start = block_starts[k] if k < len(block_starts) else 0
    end = block_starts[k + 1] if k + 1 < len(block_starts) else len(text_lines)
    for path in (["site", key], ["site", "critical_loads", key]):  # a key, a [site.<key>]
        found = toml_line(text_lines, path, start, end)           # table, a dotted key, or
        if found is not None:                                     # a key of the site's
            return found                                          # critical loads
    pat = re.compile(rf"^\s*{re.escape(key)}\s*=")                # in a table of the block
    return next((i + 1 for i in range(start, end) if pat.match(text_lines[i])), start + 1)


def _table_key_line(text_lines, block_starts, k, receptor, key):
    """Line (1-based) of `key` in the ``[site.critical_loads.<receptor>]`` table of the
    k-th [[site]] block (the table's header line when the key is not found)."""
    start = block_starts[k] if k < len(block_starts) else 0
    end = block_starts[k + 1] if k + 1 < len(block_starts) else len(text_lines)
    for path in (["site", "critical_loads", receptor, key], ["site", "critical_loads", receptor]):
        found = toml_line(text_lines, path, start, end)
        if found is not None:
            return found
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
        With ``notes`` holding the hints on doubtful values.

    Raises
    ------
    InputError
        For invalid TOML, a missing or unknown key, a wrong type, a value out of range,
        an impossible geometry (:func:`check_site`), an unknown land-use class or
        collector, or a duplicate id.
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
                         line=toml_line(lines, [extra[0]]),
                         expected="only [[site]] tables, each with the site keys and its "
                         "[site.critical_loads] (and [site.critical_loads.<receptor>]) tables"
                         + suggest(extra[0], ["site"]))
    tables = data.get("site")
    if not isinstance(tables, list) or not tables:
        raise InputError("no sites", file=path, expected="one or more [[site]] tables")
    sites, seen, notes, zone_notes = [], {}, [], {}
    for k, t in enumerate(tables):
        def err(problem, key, value=None, expected=None, k=k):
            return InputError(problem, file=path, line=_key_line(lines, starts, k, key),
                              column=key, value=value, expected=expected)
        for key, (typ, req, desc) in SITE_KEYS.items():
            if req and key not in t:
                raise InputError("missing required key", file=path,
                                 line=(starts[k] + 1) if k < len(starts) else None,
                                 column=key, expected=desc)
        sid = t["id"]
        if isinstance(sid, str) and (sid != sid.strip() or not sid):
            raise err("site id with blanks at its ends" if sid else "empty site id", "id", sid,
                      "an id without leading or trailing blanks (the data files' cells are "
                      f"read stripped, so {sid.strip()!r} there would never match it)")
        if isinstance(sid, str) and sid.startswith("#"):
            raise err("site id starting with '#'", "id", sid,
                      "an id starting with a letter or digit (a data file's line starting "
                      f"with '#' is a comment or a '# key: value' line, so a row of {sid!r} "
                      "would never be read as data); e.g. "
                      f"{(sid.lstrip('#').strip() or 'S1')!r}")
        if isinstance(sid, str) and sid in seen:
            raise err("duplicate site id", "id", sid, f"ids unique (first at site {seen[sid] + 1})")
        def table_err(problem, receptor, key, value=None, expected=None, k=k):
            return InputError(problem, file=path, value=value, expected=expected, column=key,
                              line=_table_key_line(lines, starts, k, receptor, key))
        def change_err(problem, j, key, value=None, expected=None, k=k):
            end = starts[k + 1] if k + 1 < len(starts) else len(lines)
            return InputError(problem, file=path, value=value, expected=expected,
                              column=f"change.{key}",
                              line=change_key_line(lines, starts[k] if k < len(starts) else 0,
                                                   end, j, key))
        sites.append(check_site(t, err, notes, f"{path.name}, site {sid!r}", table_err,
                                change_err))
        seen[sid] = k
        zone = zone_note(sites[-1], f"{path.name}, site {sid!r}")
        if zone:
            notes.append(zone)
            zone_notes[sid] = zone
    return SiteCatalogue(sites, path, notes, zone_notes)


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
    elif "lai_min" in t or "lai_max" in t:
        if not ("lai_min" in t and "lai_max" in t):
            raise err("lai_min and lai_max must come together", "lai_min" if "lai_min" in t else "lai_max")
        if not 0 <= t["lai_min"] <= t["lai_max"]:
            raise err("lai_min above lai_max", "lai_min", t["lai_min"], "0 <= lai_min <= lai_max")
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
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not 0 <= v <= 1:
            raise err("bad coarse fraction", "coarse_fraction", f"{key} = {v}",
                      "a mass fraction from 0 to 1")
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
        air_laboratory=t["air_laboratory"].strip() if t.get("air_laboratory") else None)


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


#: Station elevations possible on land [m] (lowest shore about -430 m, highest summit
#: about 8850 m; from memory, rounded outward).
ELEVATION_RANGE = (-450.0, 9000.0)
#: Canopies taller than this are impossible [m] (the tallest measured trees are about
#: 116 m; from memory).
MAX_CANOPY_M = 120.0
#: A mast higher than this is doubtful at a deposition site (a height in feet?) [m]
#: (common practice).
TALL_MAST_M = 150.0
#: A terrain slope steeper than this is doubtful (a percent grade?) [degree]
#: (common practice).
STEEP_SLOPE_DEG = 45.0
VEGETATED = ("conifer_forest", "deciduous_forest", "mixed_forest", "grass", "crops",
             "moorland", "wetland")


def _geometry(t, err, notes, label):
    """Heights and angles that make the wind profile impossible (errors) or doubtful
    (hints in `notes`); the mast's z0 and d follow the drydep rules
    (:func:`workbench.surface.roughness.land_use_roughness`)."""
    from ..landuse import FOREST_CLASSES
    from ..surface.roughness import land_use_roughness
    lu, h = t["land_use"], float(t["canopy_height_m"])
    z0_given = t.get("roughness_length_m")
    if z0_given is not None and z0_given <= 0:
        raise err("roughness length not positive", "roughness_length_m", z0_given,
                  "z0 > 0 m (or no roughness_length_m: z0 from the land use and canopy height)")
    slope = t.get("terrain_slope_deg", 0.0)
    if not 0 <= slope < 90:
        raise err("terrain slope outside 0-90 degrees", "terrain_slope_deg", slope,
                  "an angle in degrees from 0 to below 90 (a grade of 100 % is 45 degrees)")
    if slope > STEEP_SLOPE_DEG:
        notes.append(f"{label}: terrain_slope_deg {slope:g} is steeper than "
                     f"{STEEP_SLOPE_DEG:g} degrees: a percent grade written as degrees?")
    if h > MAX_CANOPY_M:
        raise err("canopy taller than any tree", "canopy_height_m", h,
                  f"a height below {MAX_CANOPY_M:g} m (a height in feet or cm?)")
    if h == 0 and lu in FOREST_CLASSES:
        raise err("canopy height 0 for a forest", "canopy_height_m", h,
                  f"the mean tree height in m (default for {lu}: {LAND_USE[lu][1]:g} m)")
    if h == 0 and lu in VEGETATED:
        notes.append(f"{label}: canopy_height_m is 0 for the vegetated class {lu!r}: left "
                     f"blank? (default {LAND_USE[lu][1]:g} m; z0 falls back to a smooth surface)")
    z_wind = float(t["wind_height_m"])
    if z_wind > TALL_MAST_M:
        notes.append(f"{label}: wind_height_m {z_wind:g} is above {TALL_MAST_M:g} m: a height in feet?")
    mast = t.get("met_land_use") or lu
    own = mast == lu
    h_m = h if own else LAND_USE[mast][1]
    z0_m, d_m = land_use_roughness(
        mast, h_m, np.nan if not own or z0_given is None else float(z0_given),
        np.nan if not own or t.get("displacement_height_m") is None
        else float(t["displacement_height_m"]))
    z0_m, d_m = float(z0_m), float(d_m)
    d_key = "displacement_height_m" if own and "displacement_height_m" in t else "wind_height_m"
    if z_wind <= d_m:
        raise err("anemometer at or below the displacement height", d_key, t.get(d_key),
                  f"wind_height_m {z_wind:g} m above the displacement height d = {d_m:.3g} m "
                  f"of the mast's surface {mast!r} ({_d_rule(d_key, d_m, h_m, mast)})")
    if np.isfinite(z0_m) and z_wind - d_m <= z0_m:
        raise err("anemometer within the roughness length above d", "wind_height_m", z_wind,
                  f"wind_height_m - d ({z_wind - d_m:.3g} m) larger than z0 = {z0_m:.3g} m")
    if z_wind < h_m:
        notes.append(f"{label}: the anemometer ({z_wind:g} m) is below the canopy top "
                     f"({h_m:g} m) of the mast's surface {mast!r}: the log wind profile is "
                     "doubtful there (roughness sublayer)")
    if float(t["sampler_height_m"]) <= d_m:
        notes.append(f"{label}: the air sampler inlet ({t['sampler_height_m']:g} m) is at or "
                     f"below the displacement height ({d_m:.3g} m) of the mast's surface "
                     f"{mast!r}: an in-canopy concentration?")
    if t["latitude"] == 0 and t["longitude"] == 0:
        notes.append(f"{label}: latitude and longitude are both 0: a placeholder?")


#: ``utc_offset_h`` further than this from longitude / 15 (modulo 24 h) gives a note [h].
#: Civil standard times differ from local mean solar time by up to about 3 h in practice
#: (common practice): the largest gap on inhabited land that we know of is about 3.1 h,
#: at the western end of China on UTC+8 (from memory); the far west of Spain on summer
#: time is about 2.6 h.  A few zones lie further: Antarctic stations keeping their supply
#: base's time (New Zealand time at the South Pole), and a logger set to a distant zone on
#: purpose.  3.5 h keeps half an hour beyond the inhabited extremes (our choice); a
#: deliberate offset stays usable, so this is a note, not an error.
ZONE_NOTE_H = 3.5


def _zone_gap(offset_h, longitude):
    """``utc_offset_h`` minus the mean solar offset longitude / 15, wrapped to
    [-12, 12) h (UTC+13 at 172 W is 0.5 h from its sun, not 24.5 h) [h]."""
    return (offset_h - longitude / DEGREES_PER_HOUR + 12.0) % 24.0 - 12.0


def zone_note(site: Site, label: str) -> str:
    """A note when the site's ``utc_offset_h`` is far from the offset its longitude
    implies (more than :data:`ZONE_NOTE_H` from longitude / 15, modulo 24 h) [text];
    "" when it is not.

    The catalogue's own check of the coordinates, for a site whose met has no radiation
    (the clock check of :mod:`.metclock` measures the same against the sun and
    supersedes it where it judges the site).  It names the longitude, the mean solar
    offset it implies and the gap, and a slip that makes the offset plausible: latitude
    and longitude typed in each other's place (when the longitude can be a latitude,
    within +-90 degrees) or the longitude's sign lost.  A site on UTC
    (``utc_offset_h = 0``) gets none: UTC labels are a common choice anywhere and say
    nothing of the site's place.

    Parameters
    ----------
    site : Site
        Longitude [degree east], latitude [degree north], ``utc_offset_h`` [h].
    label : str
        Names the site in the note.
    """
    lat, lon, off = site.latitude, site.longitude, site.utc_offset_h
    gap = _zone_gap(off, lon)
    if abs(gap) <= ZONE_NOTE_H or off == 0:     # UTC labels: a choice, not a place
        return ""
    tries = []
    if abs(lon) <= 90 and lat != lon:
        tries.append(("latitude and longitude typed in each other's place", lon, lat))
    if lon != 0 and abs(lon) <= 180:
        tries.append(("the longitude's sign lost (east is positive, west negative)", lat, -lon))
    fits = sorted((abs(_zone_gap(off, lo2)), what, la2, lo2) for what, la2, lo2 in tries)
    why = "".join(f" {what[:1].upper()}{what[1:]}? (at latitude {la2:g}, longitude {lo2:g} "
                  f"the offset is {g:.1f} h from the sun's)."
                  for g, what, la2, lo2 in fits if g <= ZONE_NOTE_H)
    solar = (lon / DEGREES_PER_HOUR + 12.0) % 24.0 - 12.0
    size = f"{abs(gap):.1f}" if round(abs(gap), 1) > ZONE_NOTE_H else f"{abs(gap):.2f}"
    return (f"{label}: utc_offset_h = {off:g} is {size} h from the offset of mean solar "
            f"time at its longitude {lon:g} (longitude / 15: UTC{solar:+.1f} h; civil time "
            f"zones keep within about 3 h of it, this note comes beyond {ZONE_NOTE_H:g} h): "
            f"a logger kept on a distant zone's time on purpose, or utc_offset_h or the "
            f"longitude typed wrong?{why} Kept as written")


def _mast_history_geometry(t, changes, change_err, notes, label):
    """The anemometer against every class the wind mast's surface takes in the site's
    history: without ``met_land_use`` the mast stands over the site's own surface, which
    before a land-use change was the ``from`` class, with its class defaults
    (workbench/surfacehistory.py, ``mast_in_force``).  An error located at the change's
    ``from`` names the class and the period; a doubtful height is a hint."""
    if t.get("met_land_use") is not None:
        return
    from ..surface.roughness import land_use_roughness
    lu_changes = [c for c in changes if c.what == "land_use"]
    tables = t.get("change", [])
    z_wind = float(t["wind_height_m"])
    start = None
    for c in lu_changes:
        mast = c.before
        z0_m, d_m = land_use_roughness(mast, LAND_USE[mast][1], np.nan, np.nan)
        z0_m, d_m = float(z0_m), float(d_m)
        when = (f"until {c.date.isoformat()}" if start is None
                else f"from {start} until {c.date.isoformat()}")
        j = next((k for k, tb in enumerate(tables) if isinstance(tb, dict)
                  and tb.get("what") == "land_use" and tb.get("from") == c.before
                  and str(tb.get("date")) == c.date.isoformat()), 0)
        if z_wind <= d_m:
            raise change_err("anemometer at or below the displacement height of the mast's "
                             "surface before a land-use change", j, "from", mast,
                             f"wind_height_m {z_wind:g} m above the displacement height "
                             f"d = {d_m:.3g} m of the mast's surface {mast!r} {when} (class "
                             "defaults; met_land_use is not given, so the mast follows the "
                             "site's land use), or met_land_use = the class that stood under "
                             "the mast")
        if np.isfinite(z0_m) and z_wind - d_m <= z0_m:
            raise change_err("anemometer within the roughness length above d of the mast's "
                             "surface before a land-use change", j, "from", mast,
                             f"wind_height_m - d ({z_wind - d_m:.3g} m) larger than z0 = "
                             f"{z0_m:.3g} m of {mast!r} {when}, or met_land_use given")
        if z_wind < LAND_USE[mast][1]:
            notes.append(f"{label}: the anemometer ({z_wind:g} m) is below the canopy top "
                         f"({LAND_USE[mast][1]:g} m) of the mast's surface {mast!r} {when}: "
                         "the log wind profile is doubtful there (roughness sublayer)")
        start = c.date.isoformat()


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
                "coast_distance_km", "laboratory", "air_laboratory"):
        if getattr(site, key) is not None:
            out[key] = getattr(site, key)
    if site.lai is not None:
        out["lai"] = list(site.lai)
    if site.nh3_emission_potential:
        out["nh3_emission_potential"] = dict(site.nh3_emission_potential)
    if site.ustar_transfer:
        out["ustar_transfer"] = dict(site.ustar_transfer)
    if site.changes:
        out["change"] = [c.as_dict() for c in site.changes]
    return out


def _d_rule(d_key, d_m, h_m, mast) -> str:
    """Where the displacement height of an error came from: given, or the class rule
    (d/h = 0.772 for forests, 2/3 for short vegetation, 0.5 urban:
    docs/methods_dry_particles.md section 3; the message said "d/h = 2/3" for all)."""
    if d_key == "displacement_height_m":
        return "given as displacement_height_m"
    if h_m > 0:
        return (f"d = {d_m / h_m:.3g} h, the rule of class {mast!r}, "
                "docs/methods_dry_particles.md section 3, unless displacement_height_m is given")
    return f"the rule of class {mast!r}"
