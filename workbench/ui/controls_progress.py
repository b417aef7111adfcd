"""Progress of a long step, the workbench's errors as one line in a notebook, and the
line a saved notebook keeps in place of an app.

Moved from :mod:`workbench.ui.controls` (which re-exports every name here).
"""
from __future__ import annotations

import time

import ipywidgets as widgets

from .controls_widgets import _walk


class Progress(widgets.HBox):
    """A progress bar with a line of text; ``step(text, fraction)`` moves it."""

    def __init__(self):
        self.bar = widgets.FloatProgress(value=0.0, min=0.0, max=1.0, bar_style="info",
                                         layout=widgets.Layout(width="240px"))
        self.label = widgets.Label("")
        super().__init__([self.bar, self.label])
        self.add_class("wb-progress")
        self.started = time.perf_counter()

    def _repr_mimebundle_(self, **kwargs):
        """The bar in the page; nothing in a saved notebook's plain text (ipywidgets'
        own was the repr cut at 110 characters, ``Progress(children=(FloatProgress(...``,
        left in place of the bar of a failed open)."""
        data = super()._repr_mimebundle_(**kwargs)
        if data is not None:
            data["text/plain"] = ""
        return data

    def step(self, text, fraction=None):
        if fraction is not None:
            self.bar.value = max(0.0, min(1.0, float(fraction)))
        self.bar.bar_style = "success" if self.bar.value >= 1.0 else "info"
        self.label.value = text

    def start(self, text):
        self.started = time.perf_counter()
        self.step(text, 0.05)

    def done(self, text="ready"):
        self.step(f"{text} ({time.perf_counter() - self.started:.2f} s)", 1.0)

    def counted(self, items, what, span=(0.05, 1.0), echo=None, every_s=0.2):
        """Iterate over `items`, showing the count done in words ("engine runs: 40 of
        100"), with the bar moved across `span` of its length.

        Parameters
        ----------
        items : iterable
            Taken as a list (its length is the count shown).
        what : str
            What is counted (the text before the count).
        span : (float, float)
            Fractions [1] of the bar at the first and the last item.
        echo : callable, optional
            Also given each text shown (e.g. a label of the app).
        every_s : float
            Shortest time between two updates [s]; the first and the last count are
            always shown.

        Yields
        ------
        The items, in order; the count moves when the caller has taken the next one.
        """
        items = list(items)
        n, (lo, hi) = len(items), span

        def show(i):
            text = f"{what}: {i} of {n}"
            self.step(text, lo + (hi - lo) * i / n if n else hi)
            if echo is not None:
                echo(text)

        show(0)
        last = time.perf_counter()
        for i, item in enumerate(items, 1):
            yield item
            now = time.perf_counter()
            if i == n or now - last >= every_s:
                show(i)
                last = now


def short_errors() -> bool:
    """Show the workbench's own errors (:class:`~workbench.errors.WorkbenchError`: bad
    input, bad scenario) in this IPython session as their one located message, without
    a traceback: the message names the file, line, column, value and what was expected,
    and 13 lines of the workbench's own frames above it only hid it.  The cell still
    fails (Run All stops there); any other error keeps its traceback.  What the failed
    cell did not make stands as a :class:`~workbench.ui.unopened.NotOpened`: a later cell
    that uses it says in one line that there is nothing to show until the input is fixed
    (no ``NameError``, and no app left from an earlier run of other inputs).

    Returns
    -------
    bool
        False outside IPython (nothing done).
    """
    try:
        from IPython import get_ipython
    except ImportError:
        return False
    shell = get_ipython()
    if shell is None:
        return False
    from ..errors import WorkbenchError
    from .unopened import NothingToShow, bind_unmade

    def one_line(self, etype, value, tb, tb_offset=None):
        text = str(value) if issubclass(etype, NothingToShow) else f"{etype.__name__}: {value}"
        self._showtraceback(etype, value, [text])
        bind_unmade(self.user_ns, tb)

    shell.set_custom_exc((WorkbenchError,), one_line)
    return True


class SavedText:
    """Mixin of the apps: the line a saved notebook keeps in place of the app.

    A notebook opened without running it (a colleague's copy, with its outputs) shows
    a widget's plain-text form where the widget cannot be drawn; ipywidgets' own is the
    widget's repr cut at 110 characters (``SiteExplorer(children=(HTML(value='<h3>...``).
    The apps give :meth:`saved_text` instead.
    """

    #: What the app is, in words (the start of the line).
    title = "workbench app"

    def shown_what(self) -> str:
        """What the app shows (site, years...), or ``""``."""
        return ""

    def saved_text(self) -> str:
        what = self.shown_what()
        return (f"[{self.title}{' · ' + what if what else ''}: an interactive app. Run the "
                "notebook's cells (Run > Run All Cells) to show and use it.]")

    def _repr_mimebundle_(self, **kwargs):
        data = super()._repr_mimebundle_(**kwargs)
        data["text/plain"] = self.saved_text()
        return data

    def _ipython_display_(self):
        """The app, then :func:`saved_hint` (a second output, hidden while the app is
        drawn).

        Defect: a notebook saved and opened again showed "Error displaying widget:
        model not found" in place of the app (JupyterLab draws the widget's output
        with the widget manager, never its plain text, and the app's widgets die with
        the kernel).  The hint's own style hides that line and shows the app's
        :meth:`saved_text` instead; while the app is drawn its class
        (:data:`~workbench.ui.saved_hint.APP_CLASS`) hides the hint."""
        from IPython.display import display

        from .saved_hint import APP_CLASS, saved_hint
        self.add_class(APP_CLASS)
        display(self._repr_mimebundle_(), raw=True)
        text = self.saved_text()
        handle = display(saved_hint(text), raw=True, display_id=True)
        if handle is None:                       # no IPython display (a plain script)
            return
        # the hint follows what the app shows: a notebook saved after the site or year
        # was changed named the state of the first drawing ("2023" over an app left on
        # 2018, seen in chromium after Save and opening again)
        hints = self.__dict__.setdefault("_saved_hints", [])
        hints.append([handle, text])
        if len(hints) == 1:
            for w in _walk(self):
                if isinstance(w, widgets.ValueWidget):
                    w.observe(self._renew_saved_hints, "value")

    def _renew_saved_hints(self, change=None):
        """Update each :func:`saved_hint` shown of this app whose text is no longer
        :meth:`saved_text` (one message per change of what the app shows)."""
        from .saved_hint import saved_hint
        text = self.saved_text()
        for entry in self.__dict__.get("_saved_hints", []):
            if entry[1] != text:
                entry[0].update(saved_hint(text), raw=True)
                entry[1] = text


def open_with_progress(cls, scenario_path, **kw):
    """Open a scenario with a progress bar shown while the inputs are read, then `cls`
    (a bad input or scenario is shown as its one located message, :func:`short_errors`).

    `scenario_path` is found as a notebook's first cell says
    (:func:`workbench.ui.notebook_paths.scenario_path`): ``"demo"``, absolute, or
    relative to the notebook (then to the working directory)."""
    from ..errors import WorkbenchError
    from .notebook_paths import scenario_path as find
    from .session import Session
    from IPython.display import display
    short_errors()
    scenario_path = find(scenario_path)       # beside the notebook, or a clear message
    prog = Progress()
    handle = display(prog, display_id=True)
    prog.start("opening the scenario")
    try:
        session = Session.open(scenario_path, progress=prog.step)
    except WorkbenchError:
        prog.step("not opened: the message below says what to mend", 0.0)
        raise
    try:
        session.check_site(kw.get("site"))      # one line, not ipywidgets' TraitError
    except WorkbenchError:
        prog.step("not opened: the message below says what to mend", 0.0)
        raise
    prog.step("first run", 0.85)
    app = cls(session, progress=prog, **kw)
    prog.done("ready")
    if handle is not None:      # no bar left behind (and no "HTML(value='')" in a saved file)
        handle.update({"text/plain": ""}, raw=True)
    return app
