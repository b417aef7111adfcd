"""Export of any figure of the workbench to PNG, SVG or a self-contained HTML file.

PNG and SVG go through plotly's static-image export (kaleido 1.x, which drives a
Chrome or Chromium already installed; install with ``pip install "deposition-workbench[export]"``).
HTML needs nothing more: plotly.js is written into the file, so it opens offline.

Several figures go through one kaleido session (:func:`export_figures`): kaleido starts
a browser for each call, and that start, not the drawing, took most of the 4-5 s of
each of the site explorer's seven PNGs (benchmarks/export_figures.py,
docs/performance.md, "Export figures").
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
    fmt = _format(path)
    fig = _figure(fig)
    if height is None:
        height = _height(fig)
    if fmt == "html":
        fig.write_html(path, include_plotlyjs="inline", full_html=True)
        return path
    _need_kaleido(fmt, path)
    try:
        _write_image(fig, path, fmt, width, height)
    except Exception as exc:           # kaleido reports a missing browser in many ways
        raise _failed(fmt, path, exc) from exc
    return path


def export_figures(items, width=WIDTH) -> list:
    """Write several figures to PNG or SVG through one kaleido session (one browser
    started for them all, where :func:`export_figure` starts one for each).

    Parameters
    ----------
    items : list of (figure, path)
        Each figure (a plotly Figure or a ``*_spec`` dict) and its file; every suffix
        ``.png`` or every one ``.svg``.
    width : int
        Width of every image [px]; each height is the figure's own when taller than
        :data:`HEIGHT`, as in :func:`export_figure`.

    Returns
    -------
    list of Path
        The paths, in the order given.

    Raises
    ------
    ExportError
        As :func:`export_figure`; also for ``.html`` or for mixed suffixes.  Some of the
        files may have been written: write them one by one with :func:`export_figure`
        to know which figure fails.
    """
    items = [(_figure(fig), Path(path)) for fig, path in items]
    if not items:
        return []
    fmts = {_format(path) for _, path in items}
    if len(fmts) != 1 or fmts & {"html"}:
        raise ExportError("figures are written together as PNG or SVG only, all in one "
                          f"format: got {', '.join(sorted('.' + f for f in fmts))}")
    fmt = fmts.pop()
    first = items[0][1]
    _need_kaleido(fmt, first)
    figs, paths = [f for f, _ in items], [p for _, p in items]
    try:
        _write_images(figs, paths, fmt, width, [_height(f) for f in figs])
    except Exception as exc:           # kaleido reports a missing browser in many ways
        raise _failed(fmt, first, exc) from exc
    return paths


def _format(path: Path) -> str:
    """The format of `path` by its suffix; an ExportError for an unknown one."""
    fmt = path.suffix.lower().lstrip(".")
    if fmt not in FORMATS:
        raise ExportError(f"cannot export a figure to {path.name}: expected a file name ending "
                          f"in {', '.join('.' + f for f in FORMATS)}")
    return fmt


def _figure(fig) -> go.Figure:
    """`fig` as a plotly Figure (a ``*_spec`` dict through :func:`from_spec`)."""
    if isinstance(fig, dict):
        return from_spec(fig)
    return fig if isinstance(fig, go.Figure) else go.Figure(fig)


def _height(fig) -> int:
    """The height of `fig`'s image [px]: its own when taller than :data:`HEIGHT`."""
    return max(HEIGHT, int(fig.layout.height or 0))


def _need_kaleido(fmt: str, path: Path):
    """An ExportError naming the extra when kaleido is not installed."""
    try:
        import kaleido  # noqa: F401
    except ImportError as exc:
        raise ExportError(f"{fmt.upper()} export needs kaleido (pip install "
                          "'deposition-workbench[export]') and a Chrome or Chromium; "
                          f"write {path.with_suffix('.html').name} instead") from exc


def _failed(fmt: str, path: Path, exc: Exception) -> ExportError:
    """The ExportError of a failed PNG or SVG export."""
    return ExportError(f"{fmt.upper()} export failed ({type(exc).__name__}: {exc}); "
                       "kaleido needs a Chrome or Chromium on this machine; write "
                       f"{path.with_suffix('.html').name} instead")


#: kaleido's exceptions that come from the browser page not being ready yet (seen on a
#: loaded machine: "kaleido_scopes is not defined"): worth one more try.
TRANSIENT_ERRORS = ("JavascriptError", "TimeoutError")


def _write_image(fig, path: Path, fmt: str, width, height, tries: int = 2):
    """``fig.write_image``, tried again once when kaleido's page was not ready."""
    _tried(lambda: fig.write_image(path, format=fmt, width=width, height=height,
                                   scale=PNG_SCALE if fmt == "png" else 1), tries)


def _write_images(figs, paths, fmt: str, width, heights, tries: int = 2):
    """plotly's ``write_images`` (one kaleido session for all), tried again once when
    kaleido's page was not ready."""
    import plotly.io as pio
    _tried(lambda: pio.write_images(figs, paths, format=fmt, width=width,
                                    height=list(heights),
                                    scale=PNG_SCALE if fmt == "png" else 1), tries)


def _tried(write, tries: int):
    """Call `write`; again (at most `tries` calls) after a :data:`TRANSIENT_ERRORS`."""
    for attempt in range(tries):
        try:
            write()
            return
        except Exception as exc:
            if attempt + 1 == tries or type(exc).__name__ not in TRANSIENT_ERRORS:
                raise
