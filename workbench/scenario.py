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

from .errors import ScenarioError, suggest

try:  # Python >= 3.11
    import tomllib
except ModuleNotFoundError:  # pragma: no cover
    import tomli as tomllib

#: section -> key -> (types, default, description).  A default of None means "not set".
SCHEMA: dict = {
    "inputs": {
        "sites": (str, None, "site catalogue (TOML), required"),
        "precipitation": (str, None, "precipitation samples (CSV)"),
        "air": (str, None, "air concentrations (CSV)"),
        "met": (str, None, "hourly meteorology (CSV or NetCDF)"),
    },
    "air": {
        "reference_state": (str, None, "reference state of mass concentrations when the "
                            "air file states none: 'ambient' or '<T> degC, <p> hPa'"),
    },
}


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

    @property
    def base(self) -> Path:
        return self.path.parent if self.path is not None else Path.cwd()

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
        d = copy.deepcopy(self.data)
        d["inputs"] = {k: str(v) for k, v in self.input_paths().items()}
        return d


def _line_of(text_lines, section, key=None):
    """1-based line of `[section]` or of `key` inside it (best effort)."""
    sec_pat = re.compile(rf"^\s*\[\s*{re.escape(section)}\s*\]")
    start = next((i for i, ln in enumerate(text_lines) if sec_pat.match(ln)), None)
    if key is None or start is None:
        return None if start is None else start + 1
    key_pat = re.compile(rf"^\s*\"?{re.escape(key)}\"?\s*=")
    for i in range(start + 1, len(text_lines)):
        if re.match(r"^\s*\[", text_lines[i]):
            break
        if key_pat.match(text_lines[i]):
            return i + 1
    return start + 1


def validate(raw: dict, path=None, text: str = "") -> Scenario:
    """Check a parsed scenario against :data:`SCHEMA` and fill in the defaults.

    Raises
    ------
    ScenarioError
        For an unknown section or key (with a suggestion) or a wrong type.
    """
    lines = text.splitlines()
    data = {}
    for section, value in raw.items():
        if section not in SCHEMA:
            raise ScenarioError("unknown section", file=path, line=_line_of(lines, section),
                                column=section, expected="one of " + ", ".join(SCHEMA)
                                + suggest(section, SCHEMA))
        if not isinstance(value, dict):
            raise ScenarioError("not a table", file=path, column=section,
                                expected=f"a [{section}] table")
    for section, keys in SCHEMA.items():
        given = raw.get(section, {})
        out = {}
        for key, value in given.items():
            if key not in keys:
                raise ScenarioError("unknown key", file=path, line=_line_of(lines, section, key),
                                    column=f"{section}.{key}", expected="one of "
                                    + ", ".join(keys) + suggest(key, keys))
            typ, _, desc = keys[key]
            if isinstance(value, bool) and typ is not bool or not isinstance(value, typ):
                names = typ.__name__ if isinstance(typ, type) else " or ".join(t.__name__ for t in typ)
                raise ScenarioError("wrong type", file=path, line=_line_of(lines, section, key),
                                    column=f"{section}.{key}", value=value,
                                    expected=f"a {names} ({desc})")
            out[key] = value
        for key, (_, default, _) in keys.items():
            out.setdefault(key, copy.deepcopy(default))
        data[section] = out
    if data["inputs"]["sites"] is None:
        raise ScenarioError("missing required key", file=path, line=_line_of(lines, "inputs"),
                            column="inputs.sites", expected="the path of the site catalogue")
    sc = Scenario(Path(path) if path is not None else None, data, raw)
    for role, p in sc.input_paths().items():
        if not p.exists():
            raise ScenarioError("input file does not exist", file=path,
                                line=_line_of(lines, "inputs", role), column=f"inputs.{role}",
                                value=sc.data["inputs"][role], expected="a path relative to the "
                                "scenario file, or absolute")
    return sc


def load_scenario(path) -> Scenario:
    """Read and validate a scenario file.

    Parameters
    ----------
    path : str or Path
        A TOML file.

    Returns
    -------
    Scenario
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise ScenarioError("scenario file not found", file=path, expected="an existing TOML file") from None
    try:
        raw = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        m = re.search(r"line (\d+)", str(exc))
        raise ScenarioError(f"invalid TOML ({exc})", file=path,
                            line=int(m.group(1)) if m else None) from None
    return validate(raw, path, text)


def load_scenario_inputs(scenario: Scenario, progress=None):
    """Read the inputs named by a scenario (see :func:`workbench.io.load_inputs`)."""
    from .io import load_inputs
    paths = scenario.input_paths()
    return load_inputs(paths["sites"], paths.get("precipitation"), paths.get("air"),
                       paths.get("met"), reference_state=scenario.data["air"]["reference_state"],
                       progress=progress)
