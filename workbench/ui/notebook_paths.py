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
    path = Path(value).expanduser()
    notebook = notebook_file() if notebook is None else Path(notebook)
    cwd = Path.cwd() if cwd is None else Path(cwd)
    if path.is_absolute():
        places = [path]
    else:
        places = ([notebook.parent / path] if notebook is not None else []) + [cwd / path]
    for p in places:
        if p.is_file():
            return p.resolve()
    if path.is_dir() or any(p.is_dir() for p in places):
        hint = " It is a folder: name the scenario's .toml file inside it."
    else:
        hint = ""
    looked = " and ".join(f"'{p}'" for p in dict.fromkeys(places))
    where = ("beside this notebook (or absolute)" if notebook is not None
             else "in the folder the kernel runs in (or absolute)")
    raise ScenarioError(
        f"SCENARIO = '{value}': no such scenario file (looked at {looked}).{hint} In the "
        f"first cell, set SCENARIO to the path of your scenario file, {where}, or to "
        f"\"demo\" for the invented demo network shipped with the workbench.")
