"""The apps' "Export figures" button draws in a browser kept between clicks
(workbench/ui/export.py, ``keep=True``): each click started a headless browser of its
own, and that start, not the drawing, was most of a click (docs/performance.md,
"Export figures: a browser kept between clicks").  The kept browser writes the same
files, is closed at the process's exit, and one that fails is closed and the export
done as before."""
import os
import subprocess
import sys
import textwrap
import time

import plotly.graph_objects as go
import pytest

from workbench.ui import export
from workbench.ui.export import ExportError
from workbench.ui.export_controls import FigureExport


def _fig(n=3):
    return go.Figure(go.Bar(x=list(range(n)), y=list(range(1, n + 1))))


@pytest.fixture()
def works(tmp_path):
    """kaleido and a Chrome/Chromium run here (else the test is skipped)."""
    try:
        export.export_figure(_fig(), tmp_path / "probe.png")
    except ExportError as exc:
        pytest.skip(f"PNG export cannot run here: {exc}")
    yield
    export.close_kept_browser()


def test_clicks_of_the_button_share_one_browser(works, tmp_path):
    figs = {"a": _fig(2), "b": _fig(4)}
    control = FigureExport(lambda: figs, "demo", folder=lambda: tmp_path / "out")
    first = control.export("png")
    kept = export._kept
    assert kept is not None and kept._kaleido.subprocess.poll() is None   # still running
    second = control.export("svg")
    assert export._kept is kept                         # the same browser, not a new one
    assert [p.name for p in first] == ["demo-a.png", "demo-b.png"]
    assert [p.name for p in second] == ["demo-a.svg", "demo-b.svg"]
    # the files as the browser of a call of its own writes them: a PNG at scale 2
    alone = export.export_figure(figs["a"], tmp_path / "alone.png")
    assert first[0].read_bytes()[16:24] == alone.read_bytes()[16:24]    # width, height
    assert second[0].read_text().lstrip().startswith("<svg")
    one = FigureExport(lambda: {"a": figs["a"]}, "one", folder=lambda: tmp_path / "out")
    one.export("png")                                    # one figure: the same browser
    assert export._kept is kept
    export.close_kept_browser()
    assert export._kept is None and kept._kaleido.subprocess.poll() is not None


def test_a_failing_kept_browser_is_closed_and_the_export_done_as_before(works, tmp_path,
                                                                        monkeypatch):
    export.export_figures([(_fig(), tmp_path / "a.png")], keep=True)
    kept = export._kept

    def broken(*a, **k):
        raise RuntimeError("the browser went away (test)")
    monkeypatch.setattr(kept, "write", broken)
    paths = export.export_figures([(_fig(), tmp_path / "b.png"), (_fig(5), tmp_path / "c.png")],
                                  keep=True)
    assert all(p.stat().st_size > 1000 for p in paths)    # written by a call of their own
    assert export._kept is None and kept._kaleido.subprocess.poll() is not None


def test_no_browser_is_left_when_the_process_exits(works, tmp_path):
    code = textwrap.dedent(f"""
        import plotly.graph_objects as go
        from workbench.ui import export
        export.export_figure(go.Figure(go.Bar(x=[1], y=[2])), {str(tmp_path / "x.png")!r},
                             keep=True)
        k = export._kept._kaleido
        print(k._html_tmp_dir.path, k.subprocess.pid, flush=True)
    """)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         timeout=120, env=dict(os.environ))
    assert out.returncode == 0, out.stderr[-2000:]
    page, pid = out.stdout.split()[-2], int(out.stdout.split()[-1])
    deadline = time.monotonic() + 10
    while _alive(pid) and time.monotonic() < deadline:
        time.sleep(0.2)
    assert not _alive(pid), f"the browser {pid} outlived its process"
    # closed, not only ended: kaleido's page folder is removed by the browser's close
    assert not os.path.exists(page), page


def _alive(pid) -> bool:
    try:
        with open(f"/proc/{pid}/stat") as f:
            return f.read().split(")")[-1].split()[0] != "Z"      # not a zombie
    except FileNotFoundError:
        return False
