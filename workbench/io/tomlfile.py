"""Reading a TOML file (site catalogue, scenario) with located errors."""
from __future__ import annotations

import re
from pathlib import Path

from ..errors import InputError

try:  # Python >= 3.11
    import tomllib
except ModuleNotFoundError:  # pragma: no cover
    import tomli as tomllib


def read_toml(path, error=InputError, missing="file not found", expected="an existing TOML file"):
    """Parse a TOML file; data only, nothing is executed.

    Parameters
    ----------
    path : str or Path
    error : type
        The InputError subclass to raise.
    missing, expected : str
        Wording of the error for a file that does not exist.

    Returns
    -------
    data : dict
    text : str
        The file's text (for finding the line of a key).
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise error(missing, file=path, expected=expected) from None
    try:
        return tomllib.loads(text), text
    except tomllib.TOMLDecodeError as exc:
        m = re.search(r"line (\d+)", str(exc))
        raise error(f"invalid TOML ({exc})", file=path,
                    line=int(m.group(1)) if m else None) from None
