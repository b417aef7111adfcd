"""The shared figure export of the apps: one file per figure, in the output folder."""
import warnings

import plotly.graph_objects as go
import pytest

from workbench.ui import export_controls
from workbench.ui.export import ExportError, export_figure
from workbench.ui.export_controls import FigureExport, file_stem


def _apps(session, two_sites):
    from workbench.ui.apps import SiteExplorer
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.apps_more import NetworkOverview, SensitivityExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        yield SiteExplorer(session, site="ridge", years=(2021, 2021))
        yield SensitivityExplorer(session, site="ridge", years=(2021, 2021), run=False)
        yield CriticalLoadsExplorer(session, site="ridge", years=(2021, 2021))
        yield NetworkOverview(Session.open(two_sites))


def test_every_app_writes_one_file_per_figure(session, two_sites_2021, tmp_path, monkeypatch):
    monkeypatch.setenv("WORKBENCH_OUTPUT", str(tmp_path / "out"))
    for app in _apps(session, two_sites_2021):
        control = app.figure_export
        assert control in app.children                      # shown in the app
        figs = control._figures()
        assert figs and all(isinstance(f, go.FigureWidget) for f in figs.values())
        control.format_w.value = "html"
        control.button_w.click()
        paths = control.written
        assert len(paths) == len(figs) == len({p.name for p in paths})
        for p in paths:
            assert p.parent == tmp_path / "out" and p.suffix == ".html"
            assert p.name.startswith(control.prefix + "-")
            assert "plotly" in p.read_text(encoding="utf-8")[:200000].lower()
        assert str(tmp_path / "out") in control.message_w.value
        assert f"{len(paths)} figure" in control.message_w.value
    names = {p.name for p in (tmp_path / "out").iterdir()}
    assert "site-explorer-ridge-conifer-forest-2021-budget.html" in names
    assert "critical-loads-ridge-2021.html" in names
    assert {"network-totals.html", "network-s.html", "network-n.html"} <= names


def _kaleido_works(tmp_path):
    try:
        export_figure(go.Figure(go.Scatter(x=[0, 1], y=[1, 0])), tmp_path / "probe.svg")
    except ExportError as exc:
        pytest.skip(f"SVG export cannot run here: {exc}")


def test_svg_export_of_an_app(session, tmp_path):
    _kaleido_works(tmp_path)
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = CriticalLoadsExplorer(session, site="ridge", years=(2021, 2021))
    control = FigureExport(lambda: {"function": app.fig}, "clf", folder=lambda: tmp_path / "svg")
    (path,) = control.export("svg")
    text = path.read_text(encoding="utf-8")
    assert path.suffix == ".svg" and text.lstrip().startswith("<svg")
    assert "Critical load" in text or "critical load" in text


def test_html_instead_when_the_image_export_fails(tmp_path, monkeypatch):
    def no_image(fig, path, **kw):
        if str(path).endswith(".png"):
            raise ExportError("no browser (test)")
        return export_figure(fig, path, **kw)
    def no_images(items, **kw):               # the one session fails too
        raise ExportError("no browser (test)")
    monkeypatch.setattr(export_controls, "export_figure", no_image)
    monkeypatch.setattr(export_controls, "export_figures", no_images)
    figs = {"a": go.Figure(go.Bar(x=[1], y=[2])), "b b": {"data": [], "layout": {}}}
    control = FigureExport(lambda: figs, "Demo App", folder=lambda: tmp_path)
    paths = control.export("png")
    assert [p.name for p in paths] == ["demo-app-a.html", "demo-app-b-b.html"]
    assert all(p.exists() for p in paths)
    assert "as HTML instead of PNG" in control.message_w.value
    assert "no browser (test)" in control.message_w.value


def test_file_stem():
    assert file_stem("site-explorer", "ridge deposition velocity") == \
        "site-explorer-ridge-deposition-velocity"
    assert file_stem("", "%%") == "figure"
