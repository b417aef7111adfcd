"""The scenario a notebook names, found the way its first cell says: a path relative to
the notebook (wherever the kernel was started), absolute, or ``"demo"``.

A notebook shared with a colleague runs in another folder or on another machine, and
sometimes in a kernel whose working directory is not the notebook's (papermill, a
kernel started elsewhere): :func:`scenario_path` looks beside the notebook first, then
in the working directory, and otherwise says where it looked and what to write.
"""
from __future__ import annotations

import os
from pathlib import Path

from ..errors import ScenarioError

#: Values of a notebook's ``SCENARIO`` that mean the invented demo network shipped with
#: the package (its files are installed with it: ``workbench.demo_data``).
DEMO_NAMES = ("demo",)


def notebook_file(namespace=None) -> Path | None:
    """The notebook the running kernel belongs to, where the front end tells.

    JupyterLab and Jupyter Server start a kernel with ``JPY_SESSION_NAME`` (the
    notebook's path; ipykernel also sets ``__session__``); VS Code sets
    ``__vsc_ipynb_file__``.  None elsewhere (nbclient, a console).

    Parameters
    ----------
    namespace : dict, optional
        The user namespace (default: IPython's, when running).
    """
    if namespace is None:
        try:
            from IPython import get_ipython
            shell = get_ipython()
        except ImportError:
            shell = None
        namespace = shell.user_ns if shell is not None else {}
    for value in (namespace.get("__vsc_ipynb_file__"), namespace.get("__session__"),
                  os.environ.get("JPY_SESSION_NAME")):
        if value and str(value).endswith(".ipynb") and Path(value).is_absolute():
            return Path(value)
    return None


def demo_scenario() -> Path:
    """The scenario file of the invented demo network shipped with the package."""
    from ..cli import DEMO_SCENARIO
    return DEMO_SCENARIO


def scenario_path(value, notebook=None, cwd=None) -> Path:
    """The scenario file a notebook's ``SCENARIO`` names.

    Parameters
    ----------
    value : str or Path
        ``"demo"`` (the invented demo shipped with the package), an absolute path, or a
        path relative to the notebook.
    notebook : Path, optional
        The notebook file (default: :func:`notebook_file`).
    cwd : Path, optional
        The working directory (default: the kernel's).

    Returns
    -------
    Path
        An existing file: beside the notebook first, then in the working directory.

    Raises
    ------
    ScenarioError
        When no such file exists; the message names the places looked at and what to
        write in the first cell.
    """
    if str(value).strip().lower() in DEMO_NAMES:
        return demo_scenario()
    found, places, notebook = _find(value, notebook, cwd, folders=False)
    if found is not None:
        return found
    if any(p.is_dir() for p in places):
        hint = " It is a folder: name the scenario's .toml file inside it."
    else:
        hint = ""
    raise ScenarioError(
        f"SCENARIO = '{value}': no such scenario file (looked at {_looked(places)}).{hint} "
        f"In the first cell, set SCENARIO to the path of your scenario file, "
        f"{_where(notebook)}, or to \"demo\" for the invented demo network shipped with the "
        "workbench.")


def _find(value, notebook, cwd, folders):
    """(the existing file, or folder when `folders`, else None; the places looked at;
    the notebook file or None)."""
    path = Path(value).expanduser()
    notebook = notebook_file() if notebook is None else Path(notebook)
    cwd = Path.cwd() if cwd is None else Path(cwd)
    if path.is_absolute():
        places = [path]
    else:
        places = ([notebook.parent / path] if notebook is not None else []) + [cwd / path]
    for p in places:
        if p.is_file() or (folders and p.is_dir()):
            return p.resolve(), places, notebook
    return None, places, notebook


def _looked(places) -> str:
    return " and ".join(f"'{p}'" for p in dict.fromkeys(places))


def _where(notebook) -> str:
    return ("beside this notebook (or absolute)" if notebook is not None
            else "in the folder the kernel runs in (or absolute)")


def grid_path(value, notebook=None, cwd=None) -> Path | None:
    """What the grid notebook's ``SCENARIO`` names: None for the invented demo grid
    (also for ``"demo"``: the demo network has no grid, so the demo grid is what it
    can mean there), else an existing scenario file, ``grid.nc`` or run folder, found
    as :func:`scenario_path` finds a scenario.

    Raises
    ------
    ScenarioError
        When nothing is there; the message says what the grid notebook takes (a
        mistyped name was told to write "demo", the site network, not the grid).
    """
    if value is None or str(value).strip().lower() in DEMO_NAMES:
        return None
    from ..grid_output import GRID_FILE
    found, places, notebook = _find(value, notebook, cwd, folders=True)
    if found is not None and (found.is_file() or (found / GRID_FILE).is_file()):
        return found
    what = (f"a folder without {GRID_FILE}" if found is not None
            else "no such file or folder")
    raise ScenarioError(
        f"SCENARIO = '{value}': {what} (looked at {_looked(places)}). In the "
        "first cell, set SCENARIO to a scenario file with a [grid] section, or to the "
        f"grid.nc of a finished `workbench grid` run or its folder, {_where(notebook)}; or "
        "to None for the invented demo grid.")
