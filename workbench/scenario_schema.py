"""The schema of a scenario file: its sections and keys with their types and defaults
(the option sections from the options dataclasses), and the words of a wrong type.

Moved from :mod:`workbench.scenario` (which re-exports every name here).
"""
from __future__ import annotations


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
             else json.dumps(default) if isinstance(default, bool) else repr(default))
    text = f"{'an' if name[0] in 'aeiou' else 'a'} {name} like the default {shown}"
    if name == "array" and isinstance(value, str):
        text += f" (e.g. {json.dumps([value])})"
    if name == "boolean":         # before: "like the default False", which TOML refuses
        text += "; write true or false, lower case, without quotes"
        said = str(value).strip().lower()
        if said in ("true", "yes", "on", "1", "false", "no", "off", "0"):
            text += (f" ({json.dumps(value) if isinstance(value, str) else value} is "
                     f"{'true' if said in ('true', 'yes', 'on', '1') else 'false'})")
    return text


def _type_name(default) -> str:
    for t, name in ((bool, "boolean"), ((int, float), "number"), (str, "string"),
                    ((tuple, list), "array"), (dict, "table")):
        if isinstance(default, t):
            return name
    return "value"
