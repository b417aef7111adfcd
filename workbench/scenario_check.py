"""Checks of the parts of a scenario file, each error located (file, line, key) with the
nearest valid key suggested: the plain and option sections, the names, the particle
modes, the [grid] files, the period and the sites' own geometry.

Moved from :mod:`workbench.scenario` (which re-exports every name here).
"""
from __future__ import annotations

import copy
import re
from pathlib import Path

from .errors import ScenarioError, missing_file_hint, suggest, type_hint, type_words
from .scenario_schema import _expected_like, _type_ok


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


#: What each file of the [grid] section holds (for messages).
_GRID_FILES = {"met": "hourly met on (time, y, x)",
               "air": "air concentrations on (time, y, x)",
               "land_use": "land-use grid of our classes"}


def _date_hint(v) -> str:
    """The readings of a `[period]` date written day/month or month/day, the files'
    hint (before, the scenario's error gave none)."""
    from .io.tabletimes import day_month_readings
    both = day_month_readings(str(v))
    if both:
        return f" (a date in day/month or month/day order? write year-month-day: {both})"
    if re.search(r"[T ](?:24:(?!00)\d\d|2[5-9]:\d\d|[3-9]\d:\d\d)", str(v)):
        return " (an hour of 24 or more? hours run 00-23; only 24:00 may end a day)"
    return ""


def missing_input_expected(value, base: Path, cwd: Path | None = None) -> str:
    """What a scenario's input path that does not exist should be: where it was looked
    for (`base`, the scenario file's folder) and a slip that explains it: a path that
    exists from the current folder `cwd` (written relative to where the command was
    typed), backslashes between folders, a file of its name in the scenario's folder.

    Before, "expected a path relative to the scenario file, or absolute" only."""
    cwd = Path.cwd() if cwd is None else cwd
    text = str(value)
    looked = (base / text).resolve() if not Path(text).is_absolute() else Path(text)
    # the nearest name beside it, or that its folder is not there, and where it was
    # looked for when the path is relative (errors.missing_file_hint)
    out = "a path relative to the scenario file, or absolute" + missing_file_hint(looked, text)
    if Path(text).is_absolute():
        return out
    here = (cwd / text).resolve()
    if here.exists() and here != looked:
        import os
        out += (f"; {text!r} exists from the current folder ({here}), but paths are read "
                f"from the scenario file's folder: write {os.path.relpath(here, base)!r}")
    elif "\\" in text and (base / text.replace("\\", "/")).exists():
        out += f"; write '/' between folders: {text.replace(chr(92), '/')!r}"
    elif (base / Path(text).name).exists() and Path(text).name != text:
        out += (f"; a file {Path(text).name!r} is in the scenario file's folder: "
                f"write {Path(text).name!r}?")
    return out


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
        full = p if p.is_absolute() else (base / p).resolve()
        if not full.exists():
            raise ScenarioError("input file does not exist", file=path,
                                line=_line_of(lines, "grid", key), column=f"grid.{key}",
                                value=grid[key],
                                expected=missing_input_expected(grid[key], base))


#: A time of 24:00 (the end of the day), as the readers of the sample files take it.
_END_OF_DAY = re.compile(r"^\s*(\d{4}-\d\d-\d\d)[T ]24:00(:00)?\s*$")
#: A date-time with a zone: a trailing ``Z`` (UTC) or an offset ``+hh:mm``.
_ZONED = re.compile(r"^\s*\d{4}-\d\d-\d\d[T ]\d\d:\d\d(:\d\d(\.\d+)?)?"
                    r"(Z|[+-]\d\d:?\d\d)\s*$")
#: The end of a day, 24:00, with a zone (``2021-12-31T24:00Z``, ``...24:00+02:00``).
_END_OF_DAY_ZONED = re.compile(r"^\s*(\d{4}-\d\d-\d\d)[T ]24:00(?::00(?:\.0+)?)?"
                               r"(Z|[+-]\d\d:?\d\d)\s*$")


def _period_text(period: dict) -> dict:
    """``[period]`` with a TOML date or date-time (``end = 2021-12-31``, unquoted) as the
    ISO text the quoted form gives (``"2021-12-31"``): both read alike. A date-time with
    an offset is taken to UTC; ``"2021-12-31T24:00"`` (the end of that day) is
    ``"2022-01-01T00:00"``, as the sample files' 24:00 labels are read; a quoted time with
    a trailing ``Z`` (UTC) or an offset is taken to UTC too. The value keeps
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
        elif isinstance(v, str) and _ZONED.match(v):
            # "2021-01-01T00:00Z" (Z is UTC) or "...+01:00": taken to UTC as the
            # unquoted form is; before, a quoted Z was refused ("not a date").  A day's
            # end, "2021-12-31T24:00Z", is the next day's 00:00 in its zone (before:
            # "not a date", though the naive 24:00 was read)
            eod = _END_OF_DAY_ZONED.match(v)
            try:
                if eod:
                    t = _dt.datetime.fromisoformat(f"{eod.group(1)}T00:00{eod.group(2)}") \
                        + _dt.timedelta(days=1)
                else:
                    t = _dt.datetime.fromisoformat(v.strip())
            except ValueError:
                continue                     # not a date: said by _check_period
            t = t.astimezone(_dt.timezone.utc).replace(tzinfo=None)
            out[key] = t.isoformat(timespec="minutes" if not (t.second or t.microsecond)
                                   else "auto")
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
                                expected="an ISO 8601 date or time in UTC, e.g. 2020-01-01 "
                                "or 2020-01-01T00:00 (or 2020-01-01T00:00Z)"
                                + _date_hint(v)) from None
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
