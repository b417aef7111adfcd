"""The scenario file (TOML): which inputs, which period, which options.

A scenario is data, never code: it is parsed with :mod:`tomllib` and checked against
the schema (:mod:`workbench.scenario_schema`).  An unknown key or a wrong type is an
error that names the key and its line, with the nearest valid key suggested.  Paths
are relative to the scenario file.  See ``docs/scenario.md``.

Where the parts are: the schema (:data:`SCHEMA`, :data:`SITE_OVERRIDES`,
:func:`option_sections`) in :mod:`workbench.scenario_schema`; the checks of each part
of a file (sections, names, particle modes, [grid], period, the sites' own geometry)
in :mod:`workbench.scenario_check`; here the :class:`Scenario`, :func:`validate`,
:func:`load_scenario` and :func:`save_scenario`.  This module re-exports the moved
names, so that ``workbench.scenario.<name>`` keeps working.
"""
from __future__ import annotations

import copy
from dataclasses import dataclass, field
from pathlib import Path

from .constants import MAX_FIXED_VD_CM_S
from .errors import ScenarioError, missing_file_hint, suggest
# the checks of the parts of a file (defined here before)
from .scenario_check import missing_input_expected
from .scenario_check import (_END_OF_DAY, _GEOMETRY_KEYS, _GRID_FILES,  # noqa: F401
                             _check_grid, _check_names, _check_option_section,
                             _check_period, _check_plain_section, _check_site_overrides,
                             _line_of, _particle_modes, _period_text)
# the schema (defined here before)
from .scenario_schema import (SCHEMA, SITE_OVERRIDES, _expected_like,  # noqa: F401
                              _type_name, _type_ok, option_sections)


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
        """The scenario with every default and absolute paths, for provenance.

        ``[uncertainty] vd_follows_air`` is written only when true: a run that does not
        use it keeps the provenance (and report) bytes of the runs before it existed."""
        import dataclasses
        d = copy.deepcopy(self.data)
        d["inputs"] = {k: str(v) for k, v in self.input_paths().items()}
        for name, obj in self.options.items():
            d[name] = obj.to_dict() if hasattr(obj, "to_dict") else dataclasses.asdict(obj)
        if d.get("uncertainty", {}).get("vd_follows_air") is False:
            del d["uncertainty"]["vd_follows_air"]
        d.setdefault("dry", {})["fixed_velocity"] = dict(self.fixed_velocity)
        return d


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
    if "uncertainty" in objects and "dry" in objects:
        from .analysis.uncertainty_options import pair_shift_refusal
        refused = pair_shift_refusal(objects["dry"], objects["uncertainty"])
        if refused is not None:
            key = refused[0]
            raise ScenarioError(refused[1], file=path, line=_line_of(lines, "uncertainty", key),
                                column=f"uncertainty.{key}",
                                value=list(objects["uncertainty"].pair_shift(key[11:])),
                                expected="[0, 0] (the split as measured), or a fixed "
                                "[dry] nh3_acid_ratio (nh3_acid_ratio_from_air = false)")
        from .analysis.airvd import refusal as air_vd_refusal
        why = air_vd_refusal(objects["dry"], objects.get("budget"), objects["uncertainty"])
        if why is not None:
            raise ScenarioError("vd_follows_air = true does not apply: " + why, file=path,
                                line=_line_of(lines, "uncertainty", "vd_follows_air"),
                                column="uncertainty.vd_follows_air", value=True,
                                expected="false, or the [dry] and [budget] options it "
                                "applies to (docs/methods_uncertainty.md, \"Velocities that "
                                "depend on the air\")")
    site_over = raw.get("sites", {})
    for sid, table in site_over.items():
        if not isinstance(table, dict):
            raise ScenarioError("not a table", file=path, column=f"sites.{sid}",
                                expected=f"a [sites.{sid}] table of overrides")
        for key in table:
            if key not in SITE_OVERRIDES:
                where = ("; critical loads are set in the site catalogue only, in the "
                         f"site's [site.critical_loads] tables (sites.toml)"
                         if key == "critical_loads" else
                         "; how a site's met file is written is said in the site catalogue "
                         "only (sites.toml), read with the file before any run"
                         if key in ("met_wind_unit", "met_precipitation",
                                    "met_counter_restart_hour") else "")
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
                                value=sc.data["inputs"][role],
                                expected=missing_input_expected(sc.data["inputs"][role],
                                                                sc.base))
        if p.is_dir() and require_inputs and role != "met":    # met: a zarr store may be
            raise ScenarioError("a folder, not a file", file=path,
                                line=_line_of(lines, "inputs", role), column=f"inputs.{role}",
                                value=sc.data["inputs"][role],
                                expected=f"the path of the {role} file in the folder {p}")
    _check_period(data["period"], path, lines)
    if require_inputs or (sc.input_path("sites") is not None and sc.input_path("sites").exists()):
        sc.notes = _check_site_overrides(sc, path, lines)
    return sc


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
    given, path = Path(path), Path(path).resolve()
    with recording() as seen:            # the SHA-256 of the very bytes parsed
        raw, text = read_toml(path, ScenarioError, "scenario file not found",
                              expected=_scenario_expected(given, path))
    sc = validate(raw, path, text, require_inputs=require_inputs)
    sc.sha256 = seen.get(path_key(path))
    return sc


def _scenario_expected(given: Path, path: Path) -> str:
    """What the message of a scenario file that is not found expects: an existing TOML
    file, with the nearest name in its folder or that the folder is not there
    (:func:`workbench.errors.missing_file_hint`), and, for the demo's
    ``demo_data/scenario.toml`` typed in another folder than the repository's, that
    ``workbench demo`` runs it from any folder."""
    text = "an existing TOML file" + missing_file_hint(path)  # its path leads the message
    if not given.is_absolute() and given.parts[-2:] == ("demo_data", "scenario.toml"):
        text += ("; demo_data/ is a folder of the repository: run from there, or "
                 "`workbench demo` runs the bundled demo from any folder")
    return text


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
