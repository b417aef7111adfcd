"""Export of any figure of the workbench to PNG, SVG or a self-contained HTML file.

PNG and SVG go through plotly's static-image export (kaleido 1.x, which drives a
Chrome or Chromium already installed; install with ``pip install "deposition-workbench[export]"``).
HTML needs nothing more: plotly.js is written into the file, so it opens offline.

Several figures go through one kaleido session (:func:`export_figures`): kaleido starts
a browser for each call, and that start, not the drawing, took most of the 4-5 s of
each of the site explorer's seven PNGs (benchmarks/export_figures.py,
docs/performance.md, "Export figures").

With ``keep=True`` (the apps' "Export figures" button) the browser is started at the
first export and kept for the next ones of the same Python process (the notebook's
kernel): a second click pays the drawing only.  It is closed when the process exits
(:mod:`atexit`), or by :func:`close_kept_browser`; a kept browser that fails or does
not answer in time is closed and the export is done as without it.
"""
from __future__ import annotations

import atexit
import threading
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


#: Most seconds for the kept browser to start, and for one export through it (a
#: figure draws in 0.2-0.6 s; kaleido's own limit is 90 s an image).
KEPT_START_S, KEPT_CALL_S = 60.0, 180.0


def export_figure(fig, path, width=WIDTH, height=None, keep=False) -> Path:
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
    keep : bool
        Draw a PNG or SVG in the browser kept between exports (started by the first;
        see the module's docstring) instead of one started for this call.

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
    if keep and _write_kept([fig], [path], fmt, width, [height]):
        return path
    try:
        _write_image(fig, path, fmt, width, height)
    except Exception as exc:           # kaleido reports a missing browser in many ways
        raise _failed(fmt, path, exc) from exc
    return path


def export_figures(items, width=WIDTH, keep=False) -> list:
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
    keep : bool
        Draw them in the browser kept between exports, as in :func:`export_figure`.

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
    if keep and _write_kept(figs, paths, fmt, width, [_height(f) for f in figs]):
        return paths
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


class _KeptBrowser:
    """A kaleido browser kept open between exports: an asyncio loop on a thread of its
    own holds one ``kaleido.Kaleido`` (kaleido 1.x), and each export waits at most
    :data:`KEPT_CALL_S` for it."""

    def __init__(self):
        import asyncio

        import kaleido
        self._loop = asyncio.new_event_loop()
        self._thread = threading.Thread(target=self._loop.run_forever, daemon=True,
                                        name="workbench-kaleido")
        self._thread.start()
        self._kaleido = kaleido.Kaleido(**_plotly_kopts())
        try:
            self._run(self._kaleido.open(), KEPT_START_S)
        except BaseException:
            self.close()
            raise

    def _run(self, coro, timeout):
        import asyncio
        return asyncio.run_coroutine_threadsafe(coro, self._loop).result(timeout)

    def write(self, figs, paths, fmt, width, heights):
        specs = [{"fig": fig.to_dict(), "path": Path(path),
                  "opts": {"format": fmt, "width": width, "height": height,
                           "scale": PNG_SCALE if fmt == "png" else 1}}
                 for fig, path, height in zip(figs, paths, heights)]
        self._run(self._kaleido.write_fig_from_object(specs, cancel_on_error=True),
                  KEPT_CALL_S)

    def close(self):
        """Close the browser and end the loop's thread (at most a few seconds)."""
        try:
            if self._loop.is_running():
                self._run(self._kaleido.close(), 10.0)
        except Exception:  # noqa: BLE001   (a browser already gone)
            pass
        finally:
            self._loop.call_soon_threadsafe(self._loop.stop)
            self._thread.join(timeout=5.0)


_kept: _KeptBrowser | None = None
_kept_lock = threading.Lock()


def _plotly_kopts() -> dict:
    """The browser options plotly's own export gives kaleido (its local plotly.js or
    MathJax where set), so that a kept browser draws as ``write_image`` does."""
    from plotly.io._defaults import defaults
    return {k: getattr(defaults, k) for k in ("plotlyjs", "mathjax", "headers")
            if getattr(defaults, k, None)}


def _write_kept(figs, paths, fmt, width, heights) -> bool:
    """Write through the kept browser, started here at the first call; False (the
    browser closed, nothing raised) when it cannot start or fails, for the caller to
    write as without it."""
    global _kept
    with _kept_lock:
        try:
            if _kept is None:
                _kept = _KeptBrowser()
            _kept.write(figs, paths, fmt, width, heights)
            return True
        except Exception:  # noqa: BLE001   (the one-shot path says what fails)
            _close_kept()
            return False


def _close_kept():
    global _kept
    if _kept is not None:
        kept, _kept = _kept, None
        kept.close()


def close_kept_browser() -> None:
    """Close the browser kept between exports (none: nothing to do).  Called at the
    process's exit; the next export with ``keep=True`` starts a new one."""
    with _kept_lock:
        _close_kept()


atexit.register(close_kept_browser)       # no browser left behind by the kernel
