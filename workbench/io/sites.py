"""The site catalogue (``sites.toml``): one ``[[site]]`` table per site.

See ``docs/data_formats.md`` for the keys.  Heights are in metres, angles in degrees,
critical loads in eq/ha/yr.

Where the parts are: the keys of a site's table, :class:`Site` and :func:`site_dict` in
:mod:`workbench.io.siterecord`; :func:`check_site` in :mod:`workbench.io.sitecheck`; the
plausible geometry and :func:`zone_note` in :mod:`workbench.io.sitegeometry`.  This
module re-exports them, so that ``workbench.io.sites.<name>`` keeps working.
"""
from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import xarray as xr

from ..errors import InputError, suggest
from ..landuse import LAND_USE
from .critical_loads import CRITICAL_LOAD_KEYS, check_critical_loads  # noqa: F401
from .sitechanges import change_key_line
from .tomlfile import read_toml, toml_line
# a site's keys and its record (defined here before)
from .siterecord import (COLLECTORS, NH3_GAMMA_HINT, PARTICLE_SPECIES, SITE_KEYS, Site,  # noqa: F401
                         USTAR_TRANSFERS, _monthly_lai, site_dict)
# the check of a site's table (defined here before)
from .sitecheck import _nh3_emission_potential, _type_check, check_site  # noqa: F401
# the site's geometry and zone notes (defined here before)
from .sitegeometry import (ELEVATION_RANGE, MAX_CANOPY_M, STEEP_SLOPE_DEG, TALL_MAST_M,  # noqa: F401
                           VEGETATED, ZONE_NOTE_H, _d_rule, _geometry, _mast_history_geometry,
                           _zone_gap, zone_note)


#: Keys of a [[site]] whose line the catalogue keeps (:attr:`SiteCatalogue.key_lines`):
#: the met reader notes where one declared acts on nothing.
PLACED_KEYS = ("met_wind_unit", "met_precipitation")


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

    def __init__(self, sites, path=None, notes=None, zone_notes=None, key_lines=None):
        self.sites = {s.id: s for s in sites}
        self.path = Path(path) if path is not None else None
        #: Doubtful but usable values found when reading (plain-text hints).
        self.notes = list(notes or [])
        self.zone_notes = dict(zone_notes or {})
        #: (site id, key) -> the 1-based line of sites.toml writing the key, for the keys
        #: of :data:`PLACED_KEYS` a site gives (the met reader's notes on them say where).
        self.key_lines = dict(key_lines or {})

    def key_place(self, site_id, key) -> str:
        """Where `key` of site `site_id` is written, for a note: ``"sites.toml, line 75,
        site 'farm'"`` (without the line where it is not known)."""
        name = self.path.name if self.path is not None else "the site catalogue"
        line = self.key_lines.get((str(site_id), key))
        return f"{name}, " + (f"line {line}, " if line else "") + f"site {str(site_id)!r}"

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
    flag = coast_flag_note(path.name, [(s.id, s.coast_distance_km) for s in sites],
                           [_key_line(lines, starts, k, "coast_distance_km")
                            for k in range(len(sites))])
    if flag:
        notes.append(flag)
    key_lines = {(str(t["id"]), key): _key_line(lines, starts, k, key)
                 for k, t in enumerate(tables) for key in PLACED_KEYS if key in t}
    return SiteCatalogue(sites, path, notes, zone_notes, key_lines)


def coast_flag_note(file_name: str, given, lines) -> str:
    """The note of a catalogue whose ``coast_distance_km`` is 0 or 1 at every site that
    gives it (a yes/no coastal flag?), or "".  A note, not an error: 0 and 1 km are
    distances; both are read as written (0: on the coast).

    Parameters
    ----------
    file_name : str
    given : list of (str, float or None)
        Site id and its ``coast_distance_km`` [km] (None: not given).
    lines : list of int or None
        The line of each site's key.

    >>> coast_flag_note("s.toml", [("a", 1.0), ("b", None), ("c", 0.0)], [9, None, 30])
    "s.toml, line 9: coast_distance_km is 0 or 1 at every site that gives it (a 1, c 0): read as distances in km (0 is on the coast; below [dry] coastal_distance, 50 km by default, a site takes the coastal particle split); a yes/no coastal flag? write each site's distance to the sea coast in km, or leave the key out at an inland site (the inland split)"
    >>> coast_flag_note("s.toml", [("a", 1.0), ("c", 12.5)], [9, 30])
    ''
    """
    have = [(sid, v, ln) for (sid, v), ln in zip(given, lines) if v is not None]
    if not have or any(v not in (0, 1) for _, v, _ in have):
        return ""
    shown = ", ".join(f"{sid} {v:g}" for sid, v, _ in have[:6]) + (
        f", ... ({len(have) - 6} more)" if len(have) > 6 else "")
    where = f"{file_name}, line {have[0][2]}" if have[0][2] else file_name
    return (f"{where}: coast_distance_km is 0 or 1 at every site that gives it ({shown}): "
            "read as distances in km (0 is on the coast; below [dry] coastal_distance, "
            "50 km by default, a site takes the coastal particle split); a yes/no coastal "
            "flag? write each site's distance to the sea coast in km, or leave the key "
            "out at an inland site (the inland split)")


