"""The scenario file (TOML): which inputs, which period, which options.

A scenario is data, never code: it is parsed with :mod:`tomllib` and checked against
the schema below.  An unknown key or a wrong type is an error that names the key and
its line, with the nearest valid key suggested.  Paths are relative to the scenario
file.  See ``docs/scenario.md``.
"""
from __future__ import annotations

import copy
import re
from dataclasses import dataclass, field
from pathlib import Path

from .constants import MAX_FIXED_VD_CM_S
from .errors import ScenarioError, suggest, type_hint, type_words


#: section -> key -> (types, default, description).  A default of None means "not set".
#: The sections [wet], [dry] and [budget] are filled from the options dataclasses of
#: those chains (see :func:`option_sections`), so that every option has exactly one
#: default, stated where it is used.
SCHEMA: dict = {
    "inputs": {
        "sites": (str, None, "site catalogue (TOML), required"),
        "precipitation": (str, None, "precipitation samples (CSV)"),
        "air": (str, None, "air concentrations (CSV)"),
        "met": (str, None, "hourly meteorology (CSV, NetCDF or a zarr store)"),
        "flag_map": (str, None, "mapping of a lab's own sample flag codes to the flag words "
                     "(TOML, see docs/data_formats.md)"),
    },
    "period": {
        "start": (str, None, "first instant of the budget (ISO 8601, UTC); default: the data"),
        "end": (str, None, "end of the budget, exclusive (ISO 8601, UTC); default: the data"),
        "resolution": (str, "year", "'month', 'season', 'year' or 'hydro_year'"),
    },
    "air": {
        "reference_state": (str, None, "reference state of mass concentrations when the "
                            "air file states none: 'ambient' or '<T> degC, <p> hPa'"),
    },
    "grid": {
        "met": (str, None, "hourly met on (time, y, x), CF NetCDF or zarr (docs/data_formats.md)"),
        "air": (str, None, "air concentrations on (time, y, x) with time bounds, CF NetCDF "
                "or zarr"),
        "land_use": (str, None, "land-use classes on (y, x), CF NetCDF or zarr, flag_values/"
                     "flag_meanings"),
    },
    "compare": {
        "common_receptor": (str, None, "land-use class on which every site's annual totals "
                            "are also computed, side by side in common_surface.csv"),
    },
    "trends": {
        "serial_correction": (str, None, "'hamed_rao': the annual Mann-Kendall test also "
                              "with the variance correction of Hamed and Rao (1998) for "
                              "serially correlated years (extra columns of trends.csv)"),
    },
}

#: Keys allowed in a [sites.<id>] table: per-site overrides of the catalogue.
SITE_OVERRIDES = ("canopy_height_m", "roughness_length_m", "displacement_height_m",
                  "terrain_slope_deg", "lai", "lai_min", "lai_max", "collector",
                  "receptors", "met_land_use", "wind_height_m", "sampler_height_m",
                  "coast_distance_km", "coarse_fraction", "ustar_transfer")


def option_sections() -> dict:
    """Scenario sections built from the options dataclasses: name -> dataclass."""
    from .budget import BudgetOptions
    from .drydep import DryOptions
    from .analysis.sensitivity_options import SensitivityOptions
    from .analysis.uncertainty import UncertaintyOptions
    from .wet import WetOptions
    return {"wet": WetOptions, "dry": DryOptions, "budget": BudgetOptions,
            "uncertainty": UncertaintyOptions, "sensitivity": SensitivityOptions}


def _type_ok(value, default) -> bool:
    """A scenario value fits an option whose default is `default`."""
    if default is None:
        return True
    if isinstance(default, bool):
        return isinstance(value, bool)
    if isinstance(default, (int, float)):
        return isinstance(value, (int, float)) and not isinstance(value, bool)
    if isinstance(default, str):
        return isinstance(value, str)
    if isinstance(default, (tuple, list)):
        return isinstance(value, list)
    if isinstance(default, dict):
        return isinstance(value, dict)
    return True


def _expected_like(value, default) -> str:
    """``an array like the default [] (e.g. ["fell"])``: the type a key wants, its default
    as TOML writes it, and for a lone text where an array is wanted the array of it.
    Before: "a array like the default ()" (Python's tuple, for ``sites = "fell"``)."""
    import json
    name = _type_name(default)
    shown = (json.dumps(list(default)) if isinstance(default, (tuple, list))
             else repr(default))
    text = f"{'an' if name[0] in 'aeiou' else 'a'} {name} like the default {shown}"
    if name == "array" and isinstance(value, str):
        text += f" (e.g. {json.dumps([value])})"
    return text


def _type_name(default) -> str:
    for t, name in ((bool, "boolean"), ((int, float), "number"), (str, "string"),
                    ((tuple, list), "array"), (dict, "table")):
        if isinstance(default, t):
            return name
    return "value"


@dataclass
class Scenario:
    """A validated scenario.

    Attributes
    ----------
    path : Path or None
        The scenario file (None when built in memory).
    data : dict
        Section -> key -> value, with every default filled in.
    given : dict
        The sections and keys as written in the file.
    """

    path: Path | None
    data: dict
    given: dict = field(default_factory=dict)
    options: dict = field(default_factory=dict)
    fixed_velocity: dict = field(default_factory=dict)
    #: Hints on doubtful override values (added to the ledger notes when read).
    notes: list = field(default_factory=list)
    #: The folder relative input paths start from when there is no file (a run exported
    #: from the apps: the folder of the scenario the app opened); None: the working
    #: directory.
    folder: Path | None = None
    #: SHA-256 (hex) of the bytes the scenario was parsed from (None when built in
    #: memory): what provenance.json records for it.
    sha256: str | None = None

    @property
    def base(self) -> Path:
        if self.path is not None:
            return self.path.parent
        return Path(self.folder) if self.folder is not None else Path.cwd()

    def input_path(self, role: str) -> Path | None:
        """Absolute path of an input (``sites``, ``precipitation``, ``air``, ``met``)."""
        v = self.data["inputs"].get(role)
        if v is None:
            return None
        p = Path(v)
        return p if p.is_absolute() else (self.base / p).resolve()

    def input_paths(self) -> dict:
        return {r: self.input_path(r) for r in SCHEMA["inputs"] if self.input_path(r) is not None}

    def resolved(self) -> dict:
        """The scenario with every default and absolute paths, for provenance."""
        import dataclasses
        d = copy.deepcopy(self.data)
        d["inputs"] = {k: str(v) for k, v in self.input_paths().items()}
        for name, obj in self.options.items():
            d[name] = obj.to_dict() if hasattr(obj, "to_dict") else dataclasses.asdict(obj)
        d.setdefault("dry", {})["fixed_velocity"] = dict(self.fixed_velocity)
        return d


def _line_of(text_lines, section, key=None):
    """1-based line of `[section]` or of `key` inside it (best effort)."""
    sec_pat = re.compile(rf"^\s*\[\s*{re.escape(section)}\s*\]")
    start = next((i for i, ln in enumerate(text_lines) if sec_pat.match(ln)), None)
    if key is not None:   # a table option written as its own [section.key] table
        sub = re.compile(rf"^\s*\[\s*{re.escape(section)}\.{re.escape(key)}\s*[\].]")
        found = next((i for i, ln in enumerate(text_lines) if sub.match(ln)), None)
        if found is not None:
            return found + 1
    if key is None or start is None:
        return None if start is None else start + 1
    key_pat = re.compile(rf"^\s*\"?{re.escape(key)}\"?\s*=")
    for i in range(start + 1, len(text_lines)):
        if re.match(r"^\s*\[", text_lines[i]):
            break
        if key_pat.match(text_lines[i]):
            return i + 1
    return start + 1


def _check_plain_section(section, keys, given, path, lines):
    out = {}
    for key, value in given.items():
        if key not in keys:
            raise ScenarioError("unknown key", file=path, line=_line_of(lines, section, key),
                                column=f"{section}.{key}", expected="one of "
                                + ", ".join(keys) + suggest(key, keys))
        typ, _, desc = keys[key]
        if isinstance(value, bool) and typ is not bool or not isinstance(value, typ):
            raise ScenarioError("wrong type", file=path, line=_line_of(lines, section, key),
                                column=f"{section}.{key}", value=value,
                                expected=f"{type_words(typ)} ({desc})" + type_hint(value))
        out[key] = value
    for key, (_, default, _) in keys.items():
        out.setdefault(key, copy.deepcopy(default))
    return out


def _check_option_section(section, cls, given, path, lines):
    """Check a section against an options dataclass; return the options object."""
    import dataclasses
    fields = {f.name: f for f in dataclasses.fields(cls)}
    defaults = {}
    for name, f in fields.items():
        if f.default is not dataclasses.MISSING:
            defaults[name] = f.default
        elif f.default_factory is not dataclasses.MISSING:  # type: ignore[misc]
            defaults[name] = f.default_factory()
        else:
            defaults[name] = None
    for key, value in given.items():
        if key not in fields:
            raise ScenarioError("unknown key", file=path, line=_line_of(lines, section, key),
                                column=f"{section}.{key}", expected="one of "
                                + ", ".join(fields) + suggest(key, fields))
        if not _type_ok(value, defaults[key]):
            raise ScenarioError("wrong type", file=path, line=_line_of(lines, section, key),
                                column=f"{section}.{key}", value=value,
                                expected=_expected_like(value, defaults[key]))
    try:
        if hasattr(cls, "from_dict"):
            return cls.from_dict(dict(given))
        conv = {k: tuple(v) if isinstance(defaults[k], tuple) else v for k, v in given.items()}
        if "particle_modes" in conv:
            conv["particle_modes"] = _particle_modes(conv["particle_modes"], defaults["particle_modes"])
        if isinstance(conv.get("seasonal_category"), list):
            conv["seasonal_category"] = tuple(conv["seasonal_category"])
        return cls(**conv)
    except (ValueError, TypeError) as exc:
        item = getattr(exc, "option_item", None)
        if item is not None:          # one entry of a table option (a [sensitivity] factor)
            key = exc.option_key
            line = (_line_of(lines, f"{section}.{key}", item)
                    or _line_of(lines, section, key))
            raise ScenarioError(f"invalid value ({exc})", file=path, line=line,
                                column=f"{section}.{key}.{item}") from None
        key = next(iter(given), None)
        for k in given:
            if k in str(exc):
                key = k
                break
        raise ScenarioError(f"invalid value ({exc})", file=path,
                            line=_line_of(lines, section, key) if key else _line_of(lines, section),
                            column=f"{section}.{key}" if key else section) from None


def _check_names(section, given: dict, path, lines):
    """Species and land-use names inside option values (``[dry] gases``,
    ``[dry] roughness``, ``[budget] preferred_method``...): an unknown name is an
    error with the nearest valid one, not an option silently without effect."""
    from . import species as _species
    from .landuse import LAND_USE
    air = list(_species.AIR_GASES + _species.AIR_PARTICLES)
    rules = {("dry", "gases"): (list(_species.AIR_GASES), "values", "gas"),
             ("dry", "particles"): (list(_species.AIR_PARTICLES), "values", "particle species"),
             ("dry", "roughness"): (list(LAND_USE), "keys", "land-use class"),
             ("budget", "preferred_method"): (air, "keys", "air species"),
             ("budget", "diurnal_profile"): (air, "keys", "air species")}
    for (sec, key), (choices, where, what) in rules.items():
        if sec != section or key not in given:
            continue
        value = given[key]
        names = list(value) if isinstance(value, (list, dict)) else []
        for name in names:
            if not isinstance(name, str) or name not in choices:
                raise ScenarioError(f"unknown {what}", file=path, line=_line_of(lines, section, key),
                                    column=f"{section}.{key}", value=name,
                                    expected="one of " + ", ".join(choices) + suggest(name, choices))


def _particle_modes(given: dict, defaults: dict) -> dict:
    """Particle size distributions from a scenario table, over the defaults.

    ``[dry.particle_modes.pNO3]`` may set ``fine_fraction`` and ``fine`` / ``coarse``
    tables with ``mmd`` [m], ``gsd`` [-], ``density`` [kg m-3] and ``growth``.
    """
    import dataclasses
    out = dict(defaults)
    for sp, table in given.items():
        if sp not in defaults:
            raise ValueError(f"particle_modes: unknown species {sp!r}{suggest(sp, defaults)}")
        if not isinstance(table, dict):
            raise ValueError(f"particle_modes.{sp} must be a table")
        spec = defaults[sp]
        changes = {}
        for key, value in table.items():
            if key in ("fine", "coarse"):
                if not isinstance(value, dict):
                    raise ValueError(f"particle_modes.{sp}.{key} must be a table")
                bad = [k for k in value if k not in ("mmd", "gsd", "density", "growth")]
                if bad:
                    raise ValueError(f"particle_modes.{sp}.{key}: unknown key {bad[0]!r}"
                                     + suggest(bad[0], ("mmd", "gsd", "density", "growth")))
                changes[key] = dataclasses.replace(getattr(spec, key), **value)
            elif key == "fine_fraction":
                changes[key] = float(value)
            else:
                raise ValueError(f"particle_modes.{sp}: unknown key {key!r}"
                                 + suggest(key, ("fine", "coarse", "fine_fraction")))
        out[sp] = dataclasses.replace(spec, **changes)
    return out


def validate(raw: dict, path=None, text: str = "", require_inputs: bool = True,
             folder=None) -> Scenario:
    """Check a parsed scenario against the schema and fill in the defaults.

    `folder` is where relative input paths start from when `path` is None (default: the
    working directory); a scenario file's paths start from its own folder.

    Raises
    ------
    ScenarioError
        For an unknown section or key (with a suggestion), a wrong type, an invalid
        option value, or an input path that does not exist.
    """
    from . import species as _species
    lines = text.splitlines()
    options = option_sections()
    known = list(SCHEMA) + list(options) + ["sites"]
    if "site" in raw and "inputs" not in raw:       # [[site]] tables: a site catalogue
        raise ScenarioError("a site catalogue, not a scenario", file=path,
                            line=_line_of(lines, "site"), column="site",
                            expected="the scenario file, whose [inputs] names this catalogue "
                            "as sites = ...")
    for section, value in raw.items():
        if section not in known:
            raise ScenarioError("unknown section", file=path, line=_line_of(lines, section),
                                column=section, expected="one of " + ", ".join(known)
                                + suggest(section, known))
        if not isinstance(value, dict):
            raise ScenarioError("not a table", file=path, column=section,
                                expected=f"a [{section}] table")
    data = {}
    for section, keys in SCHEMA.items():
        given = raw.get(section, {})
        if section == "period":
            given = _period_text(given)
        data[section] = _check_plain_section(section, keys, given, path, lines)
    if data["period"]["resolution"] not in ("month", "season", "year", "hydro_year"):
        raise ScenarioError("unknown resolution", file=path,
                            line=_line_of(lines, "period", "resolution"), column="period.resolution",
                            value=data["period"]["resolution"],
                            expected="'month', 'season', 'year' or 'hydro_year'"
                            + suggest(data["period"]["resolution"], ["month", "season", "year", "hydro_year"]))
    common = data["compare"]["common_receptor"]
    if common is not None:
        from .landuse import LAND_USE
        if common not in LAND_USE:
            raise ScenarioError("unknown land-use class", file=path,
                                line=_line_of(lines, "compare", "common_receptor"),
                                column="compare.common_receptor", value=common,
                                expected="one of " + ", ".join(LAND_USE) + suggest(common, LAND_USE))
    serial = data["trends"]["serial_correction"]
    if serial is not None:
        from .analysis.trends import SERIAL_CORRECTIONS
        named = [c for c in SERIAL_CORRECTIONS if c is not None]
        if serial not in named:
            raise ScenarioError("unknown serial correction", file=path,
                                line=_line_of(lines, "trends", "serial_correction"),
                                column="trends.serial_correction", value=serial,
                                expected="one of " + ", ".join(repr(c) for c in named)
                                + " (or no key for the plain test)" + suggest(serial, named))
    objects = {}
    fixed = {}
    for section, cls in options.items():
        given = dict(raw.get(section, {}))
        if section == "dry":
            fixed = given.pop("fixed_velocity", {})
            if not isinstance(fixed, dict):
                raise ScenarioError("not a table", file=path, column="dry.fixed_velocity",
                                    expected="a [dry.fixed_velocity] table of species = cm/s")
            for sp, v in fixed.items():
                if sp not in _species.SPECIES or _species.SPECIES[sp].phase == "ion":
                    choices = list(_species.AIR_GASES + _species.AIR_PARTICLES)
                    raise ScenarioError("unknown species", file=path,
                                        line=_line_of(lines, "dry.fixed_velocity", sp),
                                        column=f"dry.fixed_velocity.{sp}",
                                        expected="one of " + ", ".join(choices) + suggest(sp, choices))
                if isinstance(v, bool) or not isinstance(v, (int, float)):
                    raise ScenarioError("wrong type", file=path,
                                        line=_line_of(lines, "dry.fixed_velocity", sp),
                                        column=f"dry.fixed_velocity.{sp}", value=v,
                                        expected="a deposition velocity >= 0 in cm/s")
                if not 0 <= v <= MAX_FIXED_VD_CM_S:
                    raise ScenarioError("out of range", file=path,
                                        line=_line_of(lines, "dry.fixed_velocity", sp),
                                        column=f"dry.fixed_velocity.{sp}", value=v,
                                        expected=f"a deposition velocity of 0 to "
                                                 f"{MAX_FIXED_VD_CM_S:g} cm/s (a value in mm/s "
                                                 "or m/s? the key is in cm/s)")
        _check_names(section, given, path, lines)
        objects[section] = _check_option_section(section, cls, given, path, lines)
    site_over = raw.get("sites", {})
    for sid, table in site_over.items():
        if not isinstance(table, dict):
            raise ScenarioError("not a table", file=path, column=f"sites.{sid}",
                                expected=f"a [sites.{sid}] table of overrides")
        for key in table:
            if key not in SITE_OVERRIDES:
                where = ("; critical loads are set in the site catalogue only, in the "
                         f"site's [site.critical_loads] tables (sites.toml)"
                         if key == "critical_loads" else "")
                raise ScenarioError("unknown key", file=path,
                                    line=_line_of(lines, f"sites.{sid}", key),
                                    column=f"sites.{sid}.{key}", expected="one of "
                                    + ", ".join(SITE_OVERRIDES) + suggest(key, SITE_OVERRIDES)
                                    + where)
    data["sites"] = copy.deepcopy(site_over)
    _check_grid(data["grid"], raw.get("grid"), path, lines)
    if data["inputs"]["sites"] is None and raw.get("grid") is None:
        raise ScenarioError("missing required key", file=path, line=_line_of(lines, "inputs"),
                            column="inputs.sites", expected="the path of the site catalogue")
    sc = Scenario(Path(path) if path is not None else None, data, raw, objects,
                  {k: float(v) for k, v in fixed.items()},
                  folder=Path(folder) if folder is not None and path is None else None)
    for role, p in sc.input_paths().items():
        if not p.exists() and require_inputs:
            raise ScenarioError("input file does not exist", file=path,
                                line=_line_of(lines, "inputs", role), column=f"inputs.{role}",
                                value=sc.data["inputs"][role], expected="a path relative to the "
                                "scenario file, or absolute")
    _check_period(data["period"], path, lines)
    if require_inputs or (sc.input_path("sites") is not None and sc.input_path("sites").exists()):
        sc.notes = _check_site_overrides(sc, path, lines)
    return sc


#: What each file of the [grid] section holds (for messages).
_GRID_FILES = {"met": "hourly met on (time, y, x)",
               "air": "air concentrations on (time, y, x)",
               "land_use": "land-use grid of our classes"}


def _check_grid(grid: dict, given, path, lines):
    """A [grid] section names all three files, and each exists (paths relative to the
    scenario file)."""
    if given is None:
        return
    base = Path(path).parent if path is not None else Path.cwd()
    for key in ("met", "air", "land_use"):
        if grid[key] is None:
            raise ScenarioError("missing required key", file=path, line=_line_of(lines, "grid"),
                                column=f"grid.{key}", expected="the path of the "
                                + _GRID_FILES[key] + " (CF NetCDF, docs/data_formats.md "
                                "section 5)")
    for key in ("met", "air", "land_use"):
        p = Path(grid[key])
        if not (p if p.is_absolute() else base / p).exists():
            raise ScenarioError("input file does not exist", file=path,
                                line=_line_of(lines, "grid", key), column=f"grid.{key}",
                                value=grid[key], expected="a path relative to the scenario "
                                "file, or absolute")


#: A time of 24:00 (the end of the day), as the readers of the sample files take it.
_END_OF_DAY = re.compile(r"^\s*(\d{4}-\d\d-\d\d)[T ]24:00(:00)?\s*$")


def _period_text(period: dict) -> dict:
    """``[period]`` with a TOML date or date-time (``end = 2021-12-31``, unquoted) as the
    ISO text the quoted form gives (``"2021-12-31"``): both read alike. A date-time with
    an offset is taken to UTC; ``"2021-12-31T24:00"`` (the end of that day) is
    ``"2022-01-01T00:00"``, as the sample files' 24:00 labels are read. The value keeps
    its meaning: a date is its first instant (``end`` exclusive; docs/scenario.md)."""
    import datetime as _dt
    out = dict(period)
    for key in ("start", "end"):
        v = out.get(key)
        if isinstance(v, _dt.datetime):
            if v.tzinfo is not None:
                v = v.astimezone(_dt.timezone.utc).replace(tzinfo=None)
            out[key] = v.isoformat(timespec="minutes" if not (v.second or v.microsecond)
                                   else "auto")
        elif isinstance(v, _dt.date):
            out[key] = v.isoformat()
        elif isinstance(v, str):             # "2021-12-31T24:00": the end of that day
            m = _END_OF_DAY.match(v)
            if m:
                try:
                    day = _dt.date.fromisoformat(m.group(1))
                except ValueError:
                    continue                 # not a date: said by _check_period
                out[key] = (day + _dt.timedelta(days=1)).isoformat() + "T00:00"
    return out


def _check_period(period: dict, path, lines):
    """Start and end of the budget: dates numpy reads the way the study will, end after
    start."""
    import warnings

    import numpy as np
    times = {}
    for key in ("start", "end"):
        v = period.get(key)
        if v is None:
            continue
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("error")
                t = np.datetime64(v, "ns")
            if np.isnat(t):
                raise ValueError(v)
        except (ValueError, TypeError, Warning):
            raise ScenarioError("not a date", file=path, line=_line_of(lines, "period", key),
                                column=f"period.{key}", value=v,
                                expected="an ISO 8601 date or time in UTC without offset, "
                                "e.g. 2020-01-01 or 2020-01-01T00:00") from None
        times[key] = t
    if len(times) == 2 and not times["end"] > times["start"]:
        raise ScenarioError("period end not after its start", file=path,
                            line=_line_of(lines, "period", "end"), column="period.end",
                            value=period["end"], expected=f"a time after start = {period['start']}")


#: Override keys that enter the wind-profile geometry checks.
_GEOMETRY_KEYS = ("canopy_height_m", "displacement_height_m", "roughness_length_m",
                  "wind_height_m", "sampler_height_m", "met_land_use")


def _check_site_overrides(sc: "Scenario", path, lines) -> list:
    """Check each ``[sites.<id>]`` table against the catalogue: the id exists, the keys
    and types are right, and the site with its overrides passes the catalogue checks
    (:func:`workbench.io.sites.check_site`).  ``lai_min``/``lai_max`` become the
    monthly ``lai`` they stand for.  Returns the hints on doubtful values."""
    from .errors import InputError
    from .io.sites import check_site, read_sites, site_dict
    over = sc.data.get("sites") or {}
    notes = []
    if not over or sc.input_path("sites") is None:
        return notes
    cat = read_sites(sc.input_path("sites"))
    for sid, table in over.items():
        if sid not in cat:
            raise ScenarioError("unknown site id", file=path, line=_line_of(lines, f"sites.{sid}"),
                                column=f"sites.{sid}", value=sid, expected="a site of "
                                f"{cat.path.name}: " + ", ".join(cat.ids) + suggest(sid, cat.ids))
        base = site_dict(cat[sid])
        if "lai_min" in table or "lai_max" in table:
            base.pop("lai", None)
        merged = {**base, **table}

        def err(problem, key, value=None, expected=None, sid=sid, table=table):
            if key in table:
                return ScenarioError(problem, file=path, line=_line_of(lines, f"sites.{sid}", key),
                                     column=f"sites.{sid}.{key}", value=value, expected=expected)
            moved = [g for g in _GEOMETRY_KEYS if g in table]
            if moved:   # the catalogue's value clashes with an overridden one: blame the override
                g = moved[0]
                return ScenarioError(f"{problem} (with {key} = {value} from {cat.path.name})",
                                     file=path, line=_line_of(lines, f"sites.{sid}", g),
                                     column=f"sites.{sid}.{g}", value=table[g], expected=expected)
            return InputError(problem + f" (with the overrides of [sites.{sid}] in {path})",
                              file=cat.path, column=key, value=value, expected=expected)
        site = check_site(merged, err, notes, f"scenario [sites.{sid}]")
        if "lai_min" in table or "lai_max" in table:
            table.pop("lai_min", None), table.pop("lai_max", None)
            table["lai"] = list(site.lai)
    return notes


def load_scenario(path, require_inputs: bool = True) -> Scenario:
    """Read and validate a scenario file.

    Parameters
    ----------
    path : str or Path
        A TOML file.
    require_inputs : bool
        Refuse a scenario whose input files do not exist (False: read its options only,
        e.g. to compare them with a run's, :mod:`workbench.runcheck`).

    Returns
    -------
    Scenario
    """
    from .io.readbytes import path_key, recording
    from .io.tomlfile import read_toml
    path = Path(path).resolve()
    with recording() as seen:            # the SHA-256 of the very bytes parsed
        raw, text = read_toml(path, ScenarioError, "scenario file not found")
    sc = validate(raw, path, text, require_inputs=require_inputs)
    sc.sha256 = seen.get(path_key(path))
    return sc


def load_scenario_inputs(scenario: Scenario, progress=None):
    """Read the inputs named by a scenario (see :func:`workbench.io.load_inputs`)."""
    from .io import load_inputs
    paths = scenario.input_paths()
    if "sites" not in paths:           # a scenario with a [grid] section only
        raise ScenarioError("no site catalogue", file=scenario.path, column="inputs.sites",
                            expected="[inputs] sites for the site commands; the [grid] "
                            "section runs with `workbench grid SCENARIO --out DIR`")
    inputs = load_inputs(paths["sites"], paths.get("precipitation"), paths.get("air"),
                         paths.get("met"), reference_state=scenario.data["air"]["reference_state"],
                         progress=progress, flag_map=paths.get("flag_map"))
    inputs.ledger.notes.extend(scenario.notes)
    return inputs


def _plain(value):
    """Options values as TOML-writable data (tuples -> lists, dataclasses -> tables)."""
    import dataclasses
    import math
    if dataclasses.is_dataclass(value):
        return {k: _plain(v) for k, v in dataclasses.asdict(value).items()}
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (tuple, list)):
        return [_plain(v) for v in value]
    if isinstance(value, float) and math.isinf(value):
        return "inf"
    return value


def scenario_dict(inputs: dict, period=None, options=None, fixed_velocity=None,
                  site_overrides=None, air=None, base=None) -> dict:
    """A scenario as a TOML-ready dict that :func:`load_scenario` reads back.

    Only options that differ from their defaults are written, so the file stays short
    and says what was changed.

    Parameters
    ----------
    inputs : dict
        role -> path; written relative to `base` when possible.
    period : dict, optional
        ``start``, ``end``, ``resolution``.
    options : dict, optional
        ``{"wet": WetOptions, "dry": DryOptions, "budget": BudgetOptions}``.
    fixed_velocity : dict, optional
        species -> cm/s.
    site_overrides : dict, optional
        site id -> {key: value}.
    air : dict, optional
        The ``[air]`` section (``reference_state``).
    base : Path, optional
        Folder the scenario will be saved in.
    """
    import dataclasses
    import os
    out = {"inputs": {}}
    for role, p in inputs.items():
        if p is None:
            continue
        p = Path(p)
        if base is not None:
            try:
                p = Path(os.path.relpath(p, base))
            except ValueError:
                pass
        out["inputs"][role] = p.as_posix()
    if period:
        out["period"] = {k: v for k, v in period.items() if v is not None}
    if air and air.get("reference_state"):
        out["air"] = {"reference_state": air["reference_state"]}
    for name, obj in (options or {}).items():
        default = type(obj)()
        changed = {}
        for f in dataclasses.fields(obj):
            v, d = getattr(obj, f.name), getattr(default, f.name)
            if v != d and v is not None:
                changed[f.name] = _plain(v)
        if name == "dry" and "particle_modes" in changed:
            dm = default.particle_modes
            changed["particle_modes"] = {sp: _plain(spec) for sp, spec in obj.particle_modes.items()
                                         if dm.get(sp) != spec}
        if changed:
            out[name] = changed
    if fixed_velocity:
        out.setdefault("dry", {})["fixed_velocity"] = {k: float(v) for k, v in fixed_velocity.items()}
    if site_overrides:
        out["sites"] = _plain({k: v for k, v in site_overrides.items() if v})
    return out


def save_scenario(path, **kwargs) -> Path:
    """Write :func:`scenario_dict` (same keyword arguments) as TOML, atomically."""
    import tomli_w
    from .runfolder import atomic_write
    path = Path(path)
    data = scenario_dict(base=path.parent.resolve(), **kwargs)
    text = "# Scenario written by the deposition workbench\n" + tomli_w.dumps(data)
    return atomic_write(path, lambda tmp: tmp.write_text(text, encoding="utf-8"))
