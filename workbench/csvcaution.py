"""The caution of the CSV outputs, in a text file beside them.

report.html, the apps and the NetCDF files (their ``comment`` attribute) carry the
caution (:data:`workbench.report.CAUTION`); a CSV file handed on alone carried none.  A
line of its own in the CSV (``# caution: ...``) would break the readers it is meant for
(pandas takes it as the header, a spreadsheet as a row), so every folder the command line
writes CSV files into gets ``CAUTION.txt`` with the caution and the names of the files it
covers, and a CSV written alone (``workbench compare --csv FILE``) gets
``<FILE stem>.CAUTION.txt`` beside it.  The CSV files stay plain: one header line, then
the rows.
"""
from __future__ import annotations

from pathlib import Path

#: The file beside the CSV files of a run folder or a sensitivity folder.
CAUTION_FILE = "CAUTION.txt"


def caution_text(covers: str) -> str:
    """The text of a caution file.

    Parameters
    ----------
    covers : str
        What it covers, e.g. ``"every CSV file of this folder"`` or ``"diff.csv"``.

    >>> "methods your authority requires" in caution_text("x.csv")
    True
    """
    from .report import CAUTION
    return (f"Caution ({covers})\n\n{CAUTION}\n\n"
            "The CSV files hold their header line and their rows only, so that pandas, R "
            "and spreadsheets read them as they are; this caution travels beside them. "
            "Hand it on with any of them. report.html and the NetCDF files (their "
            "'comment' attribute) carry the same words.\n")


def write_folder_caution(folder, atomic_write) -> Path:
    """``CAUTION.txt`` in `folder`, covering every CSV file of it; returns its path."""
    path = Path(folder) / CAUTION_FILE
    text = caution_text("every CSV file of this folder: budget.csv, summary.csv, "
                        "samples.csv, input_rows.csv, the analysis tables, sensitivity.csv, "
                        "tornado.csv, whichever it holds")
    return atomic_write(path, lambda t: Path(t).write_text(text, encoding="utf-8"))


def sidecar_path(csv_path) -> Path:
    """The caution file of a CSV written alone: ``diff.csv`` -> ``diff.CAUTION.txt``.

    >>> sidecar_path("/tmp/diff.csv").name
    'diff.CAUTION.txt'
    """
    p = Path(csv_path)
    return p.with_name(f"{p.stem}.{CAUTION_FILE}")


def write_sidecar_caution(csv_path, atomic_write) -> Path:
    """The caution file beside a CSV written alone; returns its path."""
    path = sidecar_path(csv_path)
    text = caution_text(Path(csv_path).name)
    return atomic_write(path, lambda t: Path(t).write_text(text, encoding="utf-8"))
