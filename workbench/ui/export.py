"""Export of any figure of the workbench to PNG, SVG or a self-contained HTML file.

PNG and SVG go through plotly's static-image export (kaleido 1.x, which drives a
Chrome or Chromium already installed; install with ``pip install "deposition-workbench[export]"``).
HTML needs nothing more: plotly.js is written into the file, so it opens offline.
"""
from __future__ import annotations

from pathlib import Path

import plotly.graph_objects as go

from ..errors import WorkbenchError
from .figures import from_spec

#: Formats by file suffix.
FORMATS = ("png", "svg", "html")
#: Size of an exported image [px] and the scale of a PNG (2: sharp on print) [1].
WIDTH, HEIGHT, PNG_SCALE = 900, 520, 2


class ExportError(WorkbenchError):
    """A figure cannot be written in the format asked for."""


def export_figure(fig, path, width=WIDTH, height=None) -> Path:
    """Write a figure (a plotly Figure or a ``*_spec`` dict) to `path`.

    Parameters
    ----------
    fig : plotly.graph_objects.Figure or dict
    path : str or Path
        Its suffix chooses the format: ``.png``, ``.svg`` or ``.html``.
    width, height : int
        Size of a PNG or SVG [px]; the height defaults to the figure's own when it is
        taller than :data:`HEIGHT` (a ranking of 30 sites drew its labels over each
        other at 520 px).

    Returns
    -------
    Path

    Raises
    ------
    ExportError
        For an unknown suffix, or when PNG/SVG export cannot run (kaleido not installed,
        or no Chrome/Chromium found); the message suggests ``.html``, which always works.
    """
    path = Path(path)
    fmt = path.suffix.lower().lstrip(".")
    if fmt not in FORMATS:
        raise ExportError(f"cannot export a figure to {path.name}: expected a file name ending "
                          f"in {', '.join('.' + f for f in FORMATS)}")
    if isinstance(fig, dict):
        fig = from_spec(fig)
    elif not isinstance(fig, go.Figure):
        fig = go.Figure(fig)
    if height is None:
        height = max(HEIGHT, int(fig.layout.height or 0))
    if fmt == "html":
        fig.write_html(path, include_plotlyjs="inline", full_html=True)
        return path
    try:
        import kaleido  # noqa: F401
    except ImportError as exc:
        raise ExportError(f"{fmt.upper()} export needs kaleido (pip install "
                          "'deposition-workbench[export]') and a Chrome or Chromium; "
                          f"write {path.with_suffix('.html').name} instead") from exc
    try:
        _write_image(fig, path, fmt, width, height)
    except Exception as exc:           # kaleido reports a missing browser in many ways
        raise ExportError(f"{fmt.upper()} export failed ({type(exc).__name__}: {exc}); "
                          "kaleido needs a Chrome or Chromium on this machine; write "
                          f"{path.with_suffix('.html').name} instead") from exc
    return path


#: kaleido's exceptions that come from the browser page not being ready yet (seen on a
#: loaded machine: "kaleido_scopes is not defined"): worth one more try.
TRANSIENT_ERRORS = ("JavascriptError", "TimeoutError")


def _write_image(fig, path: Path, fmt: str, width, height, tries: int = 2):
    """``fig.write_image``, tried again once when kaleido's page was not ready."""
    for attempt in range(tries):
        try:
            fig.write_image(path, format=fmt, width=width, height=height,
                            scale=PNG_SCALE if fmt == "png" else 1)
            return
        except Exception as exc:
            if attempt + 1 == tries or type(exc).__name__ not in TRANSIENT_ERRORS:
                raise
