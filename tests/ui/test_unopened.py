"""After a bad input, a notebook's later cells say there is nothing to show until the
input is fixed, in one line: no NameError traceback, no app left from an earlier run."""
import pytest

from workbench.ui.unopened import NothingToShow, NotOpened, unmade_names


def test_unmade_names_from_the_failing_statement_on():
    cell = ("from workbench.ui.apps import SiteExplorer\n"
            "x = 1\n"
            "app = SiteExplorer.from_scenario(\n    SCENARIO)\n"
            "app\n"
            "a, (b, c) = app.pair()\n"
            "n: int = 3\n")
    assert unmade_names(cell, 4) == ["app", "a", "b", "c", "n"]    # inside the call's lines
    assert unmade_names(cell, 2) == ["x", "app", "a", "b", "c", "n"]
    assert unmade_names("def f(:\n", 1) == []


def test_not_opened_says_nothing_to_show_on_every_use():
    app = NotOpened("app")
    for use in (lambda: app.statement, lambda: app["x"], lambda: app(), lambda: list(app),
                lambda: app.result.table):
        with pytest.raises(NothingToShow, match="Nothing to show: 'app' was not made"):
            use()
    assert "Fix the input in the first cell" in repr(app)
    assert not hasattr(app, "_repr_html_")          # IPython shows the sentence


@pytest.fixture
def shell():
    from IPython.core.interactiveshell import InteractiveShell

    from workbench.ui.controls import short_errors
    sh = InteractiveShell.instance()
    assert short_errors()
    yield sh
    sh.set_custom_exc((), None)
    InteractiveShell.clear_instance()


BAD_OPEN = ("from workbench.errors import InputError\n"
            "def open_app():\n"
            "    raise InputError('not a number', file='air.csv', line=5, column='SO2',\n"
            "                     value='-999x', expected='a number')\n"
            "app = open_app()\n"
            "app\n")


def test_later_cells_after_a_bad_input_say_nothing_to_show(shell, capsys):
    """The notebooks' later cells (`print(app.statement)`, `app.result.table...`,
    `SobolExplorer(sens.session)`) after the open cell failed; before, a NameError."""
    shell.run_cell("app = 'the app of an earlier run, on other inputs'")
    res = shell.run_cell(BAD_OPEN)
    out = capsys.readouterr().out
    assert "InputError: air.csv, line 5, column 'SO2': not a number" in out
    assert "Traceback" not in out
    for later in ("print(app.statement)", "app.result.table.query('x == 1')",
                  "sobol = dict(session=app.session)"):
        res = shell.run_cell(later)
        out = capsys.readouterr().out
        assert isinstance(res.error_in_exec, NothingToShow), later
        assert out.strip().splitlines() == [
            "Nothing to show: 'app' was not made, because the input did not open (the "
            "message above says what to mend). Fix the input in the first cell, then run "
            "the cells again from the top."], out
    res = shell.run_cell("sobol")                 # made by no cell either: the same line
    assert "Nothing to show: 'sobol' was not made" in capsys.readouterr().out
    res = shell.run_cell("undefined_name")        # a user's own slip: Python's message
    assert isinstance(res.error_in_exec, NameError)


def test_a_failed_open_leaves_no_raw_widget_line(shell, capsys, tmp_path):
    """The progress bar of a failed open stays in the cell's output; a saved notebook
    shows its plain text where no widget is drawn, and that read
    "Progress(children=(FloatProgress(value=0.0, ..." (ipywidgets' repr, cut)."""
    bad = tmp_path / "scenario.toml"
    bad.write_text('[inputs]\nsites = "no_such_sites.toml"\n')
    shell.run_cell("from workbench.ui.apps_analysis import CriticalLoadsExplorer\n"
                   f"app = CriticalLoadsExplorer.from_scenario(r'{bad}')\n")
    out = capsys.readouterr().out
    assert "Error" in out                              # the one located message
    assert "Progress(" not in out and "children=" not in out, out
    assert "Traceback" not in out


def test_the_progress_bar_has_no_plain_text():
    from workbench.ui.controls import Progress
    data = Progress()._repr_mimebundle_()
    assert "application/vnd.jupyter.widget-view+json" in data
    assert data["text/plain"] == ""


def test_an_app_shown_leaves_a_hint_for_the_notebook_opened_again(two_sites_2021):
    """Defect (browser: open, run, save, close, open again): the app's place read "Error
    displaying widget: model not found".  The app is shown with a second output, its
    plain line as HTML with a style that hides it while the app is drawn (the app's
    class) and hides the widget manager's line where the app is not."""
    import warnings

    from IPython.core.interactiveshell import InteractiveShell

    from workbench.ui.apps import NetworkOverview
    from workbench.ui.saved_hint import APP_CLASS, HINT_CLASS, HINT_CSS
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        net = NetworkOverview(Session.open(two_sites_2021))
    shell = InteractiveShell.instance()
    shown = []
    pub = shell.display_pub
    old = pub.publish
    pub.publish = lambda data, metadata=None, **kw: shown.append(data)
    try:
        from IPython.display import display
        display(net)
    finally:
        pub.publish = old
        InteractiveShell.clear_instance()
    assert len(shown) == 2, shown
    assert "application/vnd.jupyter.widget-view+json" in shown[0]
    assert shown[0]["text/plain"] == net.saved_text()
    assert APP_CLASS in net._dom_classes
    hint = shown[1]["text/html"]
    assert f"class='{HINT_CLASS}'" in hint and HINT_CSS in hint
    assert "Run the notebook&#x27;s cells" in hint and "Network overview" in hint
    # the style: hidden beside a drawn app; the manager's line hidden where none is
    assert f".jp-OutputArea:has(.{APP_CLASS}) .{HINT_CLASS} {{display: none;}}" in HINT_CSS
    assert ":has(" not in HINT_CSS.split(":has(", 1)[1].split(")")[0]   # no :has in :has
    # the widgets' state saved with the notebook (an app drawn, but dead): the hint
    # shown, a line over the app, ipywidgets' broken-link signs inside it hidden (seen in
    # chromium with JupyterLab's "Save Widget State Automatically")
    from workbench.ui.saved_hint import DISCONNECTED
    assert (f".jp-OutputArea:has(.{APP_CLASS}.{DISCONNECTED}) .{HINT_CLASS} {{display: block;}}"
            in HINT_CSS)
    assert f".{APP_CLASS}.{DISCONNECTED} .{DISCONNECTED}::before {{display: none;}}" in HINT_CSS
    assert f".{APP_CLASS}.{DISCONNECTED}::before {{content: 'Not running" in HINT_CSS
