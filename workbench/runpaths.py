"""Paths as a run folder writes them: relative to the scenario's folder.

A run folder is handed to a colleague with its scenario and inputs, often at another
path (another machine, another home folder).  The files a user reads and compares
(``input_rows.csv``, ``report.html``, the notes of ``provenance.json``) name the inputs
relative to the scenario's folder, as the scenario's ``[inputs]`` does, so that the same
run made in two places writes the same bytes; ``provenance.json`` keeps the absolute
path of each input beside its relative forms (docs/run_folder.md).

>>> base = Path("/home/ann/study")
>>> shown_path("/home/ann/study/data/air.csv", base)
'data/air.csv'
>>> shown_path("/srv/shared/met.csv", base)
'/srv/shared/met.csv'
>>> shown_text("/home/ann/study/data/air.csv: 2 exact repeats dropped", base)
'data/air.csv: 2 exact repeats dropped'
"""
from __future__ import annotations

import os
from pathlib import Path, PurePath

__all__ = ["scenario_base", "shown_path", "shown_text", "relative_from"]


def scenario_base(scenario) -> Path | None:
    """The folder of a scenario's file; for a scenario without a file (a run exported
    from the apps) the folder its relative inputs start from (``Scenario.folder``, the
    folder of the scenario the app opened); None for one built in memory."""
    path = getattr(scenario, "path", None)
    if path is not None:
        return Path(path).parent
    folder = getattr(scenario, "folder", None)
    return Path(folder) if folder is not None else None


def shown_path(path, base) -> str:
    """`path` relative to folder `base` when it lies inside it (POSIX separators),
    otherwise as given; `path` unchanged when `base` is None."""
    if base is None or path is None:
        return str(path)
    try:
        return PurePath(path).relative_to(base).as_posix()
    except ValueError:
        return str(path)


def shown_text(text: str, base) -> str:
    """`text` with every path inside folder `base` written relative to it (a note
    naming an input file)."""
    if base is None:
        return text
    prefix = str(base).rstrip(os.sep) + os.sep
    return text.replace(prefix, "") if prefix != os.sep else text


def relative_from(path, folder) -> str | None:
    """`path` relative to `folder` (``../data/air.csv``), POSIX separators; None where
    there is no relative path (another drive)."""
    try:
        return Path(os.path.relpath(path, folder)).as_posix()
    except ValueError:
        return None
