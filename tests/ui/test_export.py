"""Figures written together (workbench/ui/export.py, export_figures): the apps' "Export
figures" button wrote each PNG through a kaleido call of its own, which started a browser
for each (seven PNGs of the site explorer took 30-37 s, most of it in those starts;
benchmarks/export_figures.py).  Now PNG and SVG go through one kaleido session; the
sizes, the scale and the fallbacks stay those of one figure written alone."""
import struct

import plotly.graph_objects as go
import pytest

from workbench.ui import export, export_controls
from workbench.ui.export import ExportError
from workbench.ui.export_controls import FigureExport


def _tall():
    return go.Figure(go.Bar(x=[1, 2], y=[3, 4]), layout={"height": 900})


def test_the_figures_go_to_one_call_with_their_own_sizes(tmp_path, monkeypatch):
    pytest.importorskip("kaleido")
    calls = []
    monkeypatch.setattr(export, "_write_images",
                        lambda figs, paths, fmt, w, hs: calls.append((len(figs), paths, fmt,
                                                                      w, list(hs))))
    spec = {"data": [{"type": "bar", "x": [1], "y": [2]}], "layout": {}}
    items = [(go.Figure(), tmp_path / "a.png"), (_tall(), tmp_path / "b.png"),
             (spec, tmp_path / "c.png")]
    assert export.export_figures(items) == [p for _, p in items]
    # one call: one kaleido session; heights as export_figure gives them one by one
    assert calls == [(3, [p for _, p in items], "png", export.WIDTH,
                      [export.HEIGHT, 900, export.HEIGHT])]


def test_mixed_or_html_files_are_refused(tmp_path):
    with pytest.raises(ExportError, match="all in one format"):
        export.export_figures([(go.Figure(), tmp_path / "a.png"),
                               (go.Figure(), tmp_path / "b.svg")])
    with pytest.raises(ExportError, match="all in one format"):
        export.export_figures([(go.Figure(), tmp_path / "a.html")])
    with pytest.raises(ExportError, match="expected a file name ending in"):
        export.export_figures([(go.Figure(), tmp_path / "a.jpg")])
    assert export.export_figures([]) == []


def test_a_failed_session_is_one_export_error_naming_html(tmp_path, monkeypatch):
    pytest.importorskip("kaleido")

    def no_browser(*a, **k):
        raise RuntimeError("no Chrome found")
    monkeypatch.setattr(export, "_write_images", no_browser)
    with pytest.raises(ExportError, match=r"PNG export failed \(RuntimeError: no Chrome "
                                          r"found\).*write a\.html instead"):
        export.export_figures([(go.Figure(), tmp_path / "a.png"),
                               (go.Figure(), tmp_path / "b.png")])


class JavascriptError(Exception):
    pass


def test_a_transient_failure_of_the_session_is_tried_again(tmp_path, monkeypatch):
    import plotly.io as pio
    calls = []

    def flaky(figs, paths, **kw):
        calls.append(kw)
        if len(calls) == 1:
            raise JavascriptError("ReferenceError: kaleido_scopes is not defined")
    monkeypatch.setattr(pio, "write_images", flaky)
    export._write_images([go.Figure()], [tmp_path / "a.png"], "png", 900, [520])
    assert len(calls) == 2 and calls[0]["scale"] == export.PNG_SCALE
    assert calls[0]["height"] == [520] and calls[0]["width"] == 900


def test_the_button_writes_its_pngs_in_one_session(tmp_path, monkeypatch):
    batches, single = [], []

    def batch(items, *a, **k):
        batches.append([p.name for _, p in items])
        for _, p in items:
            p.write_bytes(b"png")
        return [p for _, p in items]
    monkeypatch.setattr(export_controls, "export_figures", batch)
    monkeypatch.setattr(export_controls, "export_figure",
                        lambda fig, path, *a, **k: single.append(path) or path)
    figs = {"a": go.Figure(), "b": go.FigureWidget(), "c": {"data": [], "layout": {}}}
    control = FigureExport(lambda: figs, "app", folder=lambda: tmp_path)
    assert [p.name for p in control.export("png")] == ["app-a.png", "app-b.png", "app-c.png"]
    assert batches == [["app-a.png", "app-b.png", "app-c.png"]] and single == []
    assert control.message_w.value.startswith("3 figures written to")
    # HTML needs no kaleido: one by one, as before
    control.export("html")
    assert len(batches) == 1 and [p.name for p in single] == ["app-a.html", "app-b.html",
                                                              "app-c.html"]


def test_when_the_session_fails_each_figure_is_tried_alone(tmp_path, monkeypatch):
    """One figure kaleido cannot draw: that one is written as HTML with its reason, the
    others as PNG (as when each was written alone)."""
    def batch(items, *a, **k):
        raise ExportError("PNG export failed (test)")

    def one(fig, path, *a, **k):
        if path.suffix == ".png" and path.stem.endswith("-bad"):
            raise ExportError("PNG export failed (bad figure)")
        path.write_bytes(b"x")
        return path
    monkeypatch.setattr(export_controls, "export_figures", batch)
    monkeypatch.setattr(export_controls, "export_figure", one)
    figs = {"good": go.Figure(), "bad": go.Figure()}
    control = FigureExport(lambda: figs, "app", folder=lambda: tmp_path)
    assert [p.name for p in control.export("png")] == ["app-good.png", "app-bad.html"]
    assert "as HTML instead of PNG: PNG export failed (bad figure)" in control.message_w.value


def _png_size(path):
    """Width and height of a PNG from its IHDR chunk (PNG specification, ISO/IEC
    15948:2004, section 11.2.2: width and height as 4-byte big-endian integers after
    the 8-byte signature and the chunk's length and type)."""
    data = path.read_bytes()[:24]
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def test_pngs_written_together_are_those_written_alone(tmp_path):
    """Real kaleido (skipped where it cannot run): the same pixel sizes, scale 2."""
    fig = go.Figure(go.Scatter(x=[0, 1], y=[1, 0]))
    try:
        export.export_figure(fig, tmp_path / "alone.png")
    except ExportError as exc:
        pytest.skip(f"PNG export cannot run here: {exc}")
    paths = export.export_figures([(fig, tmp_path / "a.png"), (_tall(), tmp_path / "b.png")])
    assert _png_size(paths[0]) == _png_size(tmp_path / "alone.png") == (
        export.WIDTH * export.PNG_SCALE, export.HEIGHT * export.PNG_SCALE)
    assert _png_size(paths[1]) == (export.WIDTH * export.PNG_SCALE, 900 * export.PNG_SCALE)
