"""A control of the sweep or of the Sobol analysis changed after the last run: the
figure keeps what it showed (it is recomputed only by its Run button), names it, and
the progress line says so (a figure that silently stayed on the old site looked like
the answer for the new one, or drew nothing under the new site's title)."""
import pytest

from workbench.ui.app_sobol import SobolExplorer
from workbench.ui.apps import SensitivityExplorer

pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")


def test_sweep_says_when_its_controls_differ_from_the_figure(session):
    app = SensitivityExplorer(session, site="ridge", years=(2021, 2021), run=False)
    app.steps_w.value = 2
    app.run()
    assert "ridge · conifer_forest · 2021" in app.fig.layout.title.text
    assert "sweep done" in app.progress.label.value
    before = [list(t.y) for t in app.fig.data]
    app.receptor_w.value = "grass"
    assert app.progress.label.value.startswith("changed: press Run sweep")
    assert "ridge · conifer_forest · 2021" in app.progress.label.value
    assert app.progress.bar.value == 0.0
    assert [list(t.y) for t in app.fig.data] == before          # not redrawn until run
    app.run()
    assert "ridge · grass · 2021" in app.fig.layout.title.text
    assert "sweep done" in app.progress.label.value


def test_sobol_figure_keeps_the_analysed_receptor_until_run(session):
    app = SobolExplorer(session, site="ridge", years=(2021, 2021), output="S dry", samples=16)
    assert "conifer_forest" in app.fig.layout.title.text and len(app.fig.data[0].y)
    app.receptor_w.value = "grass"
    assert app.progress.label.value.startswith("changed: press Run analysis")
    assert "ridge · conifer_forest · 2021)" in app.progress.label.value     # one year: "2021"
    app.output_w.value = "S total"       # redrawn from the analysis that was run
    assert "conifer_forest" in app.fig.layout.title.text
    assert len(app.fig.data[0].y) > 0                      # not an empty figure
    app.run()
    assert "grass" in app.fig.layout.title.text and len(app.fig.data[0].y) > 0
