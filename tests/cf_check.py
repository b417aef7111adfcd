"""Run the CF checker (cfchecker, the reference checker of the CF community, on PyPI)
on a NetCDF file, offline.

The checker reads three tables: the CF standard name table (taken from the copy that the
compliance-checker package ships, version named in the result), and the area-type and
standardized-region tables, which the workbench's files do not use (no ``area_type`` or
``region`` variables): empty tables stand in for them so that nothing is downloaded.
"""
from __future__ import annotations

from pathlib import Path

import pytest

_EMPTY_TABLE = ('<?xml version="1.0"?>\n<table><version_number>none</version_number>'
                '<date>none</date></table>\n')


def standard_name_table() -> Path:
    """The CF standard name table XML shipped by compliance-checker (skip without it)."""
    cc = pytest.importorskip("compliance_checker")
    path = Path(cc.__file__).parent / "data" / "cf-standard-name-table.xml"
    if not path.is_file():
        pytest.skip("compliance-checker ships no CF standard name table")
    return path


def cf_check(path, tmp_path, version="auto") -> dict:
    """Errors and warnings of cfchecker on `path`: {"errors": [...], "warnings": [...]},
    each message prefixed with its variable name ("global" for the file).

    `version` "auto" checks against the CF version in the file's ``Conventions``."""
    pytest.importorskip("netCDF4")
    try:
        from cfchecker.cfchecks import CFChecker, CFVersion
    except (ImportError, OSError, FileNotFoundError) as exc:   # cfunits needs UDUNITS-2
        pytest.skip(f"cfchecker unusable here: {exc}")
    tables = {}
    for name in ("area", "region"):
        tables[name] = Path(tmp_path) / f"empty_{name}_table.xml"
        tables[name].write_text(_EMPTY_TABLE)
    checker = CFChecker(silent=True, version=CFVersion() if version == "auto" else version,
                        cfStandardNamesXML=str(standard_name_table()),
                        cfAreaTypesXML=str(tables["area"]),
                        cfRegionNamesXML=str(tables["region"]))
    res = checker.checker(str(path))
    out = {"errors": [], "warnings": []}
    scopes = [("global", res["global"])] + list(res["variables"].items())
    for var, r in scopes:
        for key, cat in (("errors", "FATAL"), ("errors", "ERROR"), ("warnings", "WARN")):
            out[key] += [f"{var}: {m}" for m in r.get(cat, [])]
    return out
