"""One control shared by the apps: write every figure of the app to a file.

:class:`FigureExport` is a format dropdown and a button; the button writes each figure
the app shows into :func:`workbench.ui.session.output_dir` and says where: PNG and SVG
all through one kaleido session (:func:`workbench.ui.export.export_figures`), in a
browser kept for the next click (``keep=True``), HTML one by one
(:func:`workbench.ui.export.export_figure`).  When PNG or SVG export cannot run
(kaleido or a Chrome/Chromium missing), the figure is written as a self-contained HTML
file instead, and the message says so.
"""
from __future__ import annotations

import html
import re
from pathlib import Path
from typing import Callable

import ipywidgets as widgets

from .controls import shown_figure
from .export import FORMATS, ExportError, export_figure, export_figures
from .session import output_dir


def file_stem(*parts) -> str:
    """A file name stem from words: lower case, runs of other characters as one ``-``."""
    text = "-".join(str(p) for p in parts if str(p))
    return re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-") or "figure"


class FigureExport(widgets.HBox):
    """Format dropdown + button writing every figure of an app into the output folder.

    Parameters
    ----------
    figures : callable
        Returns ``{name: figure}`` (plotly Figure, FigureWidget or ``*_spec`` dict) of
        what the app shows now; called at each click, so the files hold the current state.
    prefix : str
        First part of the file names (e.g. the app's name), followed by each figure's name.
    folder : callable, optional
        Returns the folder to write into (default :func:`output_dir`, read at each
        click so that ``$WORKBENCH_OUTPUT`` set later is honoured).
    note : callable, optional
        Returns a sentence added to the message after each export (e.g. which figures
        are not written and why); empty for none.

    Attributes
    ----------
    written : list of Path
        The files of the last export.
    """

    def __init__(self, figures: Callable[[], dict], prefix: str,
                 folder: Callable[[], Path] = output_dir,
                 note: Callable[[], str] | None = None):
        self._figures, self.prefix, self._folder = figures, prefix, folder
        self._note = note
        self.format_w = widgets.Dropdown(options=list(FORMATS), value="png",
                                         description="figures as",
                                         layout=widgets.Layout(width="180px"))
        self.button_w = widgets.Button(description="Export figures", icon="image",
                                       tooltip="write every figure of this app into the "
                                               "output folder")
        self.message_w = widgets.HTML("")
        self.written: list = []
        self.button_w.on_click(lambda _: self.export())
        # wraps: a long message goes under the button, never past the app's width
        super().__init__([self.format_w, self.button_w, self.message_w],
                         layout=widgets.Layout(flex_flow="row wrap", max_width="100%"))

    def export(self, fmt: str | None = None) -> list:
        """Write every figure as ``<folder>/<prefix>-<name>.<fmt>``; returns the paths.

        A figure that cannot be written as PNG/SVG is written as HTML (noted in the
        message); files of the same name are replaced.  A FigureWidget is written as the
        app last drew it (:func:`~workbench.ui.controls.shown_figure`).
        """
        fmt = fmt or self.format_w.value
        folder = Path(self._folder())
        folder.mkdir(parents=True, exist_ok=True)
        figures = self._figures()
        # said at once, the button off while the files are written: PNGs take seconds
        # (kaleido; seven took 35 s in the site explorer, one browser each, and about
        # 8 s in one session), with nothing on the page
        self.message_w.value = (f"writing {len(figures)} figure{'s' if len(figures) != 1 else ''}"
                                f" as {html.escape(fmt.upper())} into "
                                f"{html.escape(str(folder))} ...")
        self.button_w.disabled = True
        try:
            written, fallback = self._write(figures, folder, fmt)
        except Exception as exc:     # not "writing ..." left on the page
            self.message_w.value = (f"<span style='color:#D55E00'>figures not written: "
                                    f"{html.escape(str(exc))}</span>")
            raise
        finally:
            self.button_w.disabled = False
        self.written = written
        return self._finish(written, fallback, folder, fmt)

    def _write(self, figures: dict, folder: Path, fmt: str):
        """Write `figures` into `folder`; returns the paths and the reasons of the
        figures written as HTML instead of `fmt`.

        PNG and SVG go through one kaleido session; when that fails they are written one
        by one, so that each figure that cannot be written is written as HTML (with its
        reason) and the others in `fmt`."""
        items = [(fig if isinstance(fig, dict) else shown_figure(fig),
                  folder / f"{file_stem(self.prefix, name)}.{fmt}")
                 for name, fig in figures.items()]
        if fmt != "html" and len(items) > 1:
            try:
                return export_figures(items, keep=True), []
            except ExportError:
                pass             # one by one below, each failure said
        written, fallback = [], []
        for fig, path in items:
            try:
                written.append(export_figure(fig, path, keep=True))
            except ExportError as exc:
                written.append(export_figure(fig, path.with_suffix(".html")))
                fallback.append(str(exc))
        return written, fallback

    def _finish(self, written, fallback, folder, fmt):
        """Say what was written where (and what not, and what as HTML instead)."""
        text = (f"{len(written)} figure{'s' if len(written) != 1 else ''} written to "
                f"{html.escape(str(folder))}: "
                + ", ".join(html.escape(p.name) for p in written))
        extra = self._note() if self._note is not None else ""
        if extra:
            text += f"<br><i>Not written: {html.escape(extra)}.</i>"
        if fallback:
            text += (f"<br><span style='color:#D55E00'>as HTML instead of {fmt.upper()}: "
                     f"{html.escape(fallback[0])}</span>")
        self.message_w.value = text
        return written
