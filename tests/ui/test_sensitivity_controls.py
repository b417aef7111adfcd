"""The sensitivity explorer's range and values controls say what is swept.

Found with the notebook in a browser: the range slider of z0 (0.0001..5 m by 0.01)
stood at 0.0001, 1.0001 and 2.0001 m (a slider's values are its minimum plus whole
steps) while its readout said "0.00 - 2.00"; a yes-or-no assumption was drawn and
named True/False where its control says yes/no; the baseline added as a point of its
own made 4 points of "values: 3" with nothing saying so.
"""
import math

import pytest

from workbench.ui.apps import SensitivityExplorer
from workbench.ui.assumptions import ASSUMPTIONS

pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")

NUMBERS = [k for k, a in ASSUMPTIONS.items() if a.kind in ("float", "optional_float")]


def _on_grid(x, lo, step):
    k = (x - lo) / step
    return math.isclose(k, round(k), abs_tol=1e-6)


@pytest.fixture(scope="module")
def app(session):
    return SensitivityExplorer(session, site="ridge", years=(2021, 2021), run=False)


@pytest.mark.parametrize("key", NUMBERS)
def test_range_slider_stands_where_its_readout_says(app, key):
    app.key_w.value = key
    w = app.range_w
    # a front end puts each handle on min + whole steps: the default sweep is there
    for x in (w.max, *w.value):
        assert _on_grid(x, w.min, w.step), (key, x, w.min, w.step)
    # and the readout writes the handles' values as they are (not 0.0001 as "0.00")
    for x in (w.min, w.max, *w.value):
        assert float(format(x, w.readout_format.lstrip("~"))) == pytest.approx(x, abs=1e-12), \
            (key, x, w.readout_format)
    assert float(format(w.step, w.readout_format)) == pytest.approx(w.step, abs=1e-12)


def test_a_sweep_of_z0_uses_the_values_of_the_readout(app):
    app.key_w.value = "site.roughness_length_m"
    w = app.range_w
    w.value = (w.min, 2.0)         # the lower handle to the slider's end (Home)
    app.steps_w.value = 3
    app.run()
    xs = sorted(float(x) for x in app.fig.data[0].x)
    lo, hi = (float(format(v, w.readout_format)) for v in w.value)
    assert xs[0] == pytest.approx(lo) and xs[-1] == pytest.approx(hi)
    assert xs[0] == pytest.approx(0.0001)        # z0 above zero (the assumption's least)


def test_a_yes_or_no_assumption_is_drawn_and_named_yes_and_no(app):
    app.key_w.value = "budget.require_all_seasons"
    app.run()
    assert list(app.fig.data[0].x) == ["yes", "no"]
    assert app.note_w.value.startswith("Baseline: yes (star).")
    assert "True" not in app.table_w.value and ">yes<" in app.table_w.value


def test_the_note_says_when_the_baseline_is_a_point_beside_the_values(app):
    a = ASSUMPTIONS["wet.min_gauge_fraction"]
    app.key_w.value = a.key
    base = a.get(app.settings, "ridge")
    app.range_w.value = (0.5, 1.0)
    app.steps_w.value = 3
    assert base not in (0.5, 0.75, 1.0)
    app.run()
    assert len(app.fig.data[0].x) == 4
    assert "Drawn: the 3 values swept, 0.5 to 1, and the baseline." in app.note_w.value
    lo = round(base - 0.2, 2)
    app.range_w.value = (lo - 0.1, lo)
    app.run()
    assert (f"Drawn: the 3 values swept, {lo - 0.1:g} to {lo:g}, and the baseline "
            "(outside that range).") in app.note_w.value
    app.range_w.value = (0.5, 1.0)
    app.steps_w.value = 6           # 0.5, 0.6 ... 1.0: the baseline 0.9 among them
    app.run()
    assert "Drawn:" not in app.note_w.value
    assert len(app.fig.data[0].x) == 6


def test_every_assumption_name_fits_under_a_panel_of_the_sweep():
    """Under the 540 px figure's two panels (legend beside them) a title's lines stand
    about 160 px apart: "every season has air data" on one line ran into the other
    panel's (seen in the browser; tests/test_browser_sensitivity.py measures it)."""
    import pandas as pd

    from workbench.ui.figures_curves import SWEEP_AXIS_CHARS, sensitivity_curves
    table = pd.DataFrame({"value": [0.1, 0.2] * 6,
                          "total": [f"{el}_{pw}" for el in "SN" for pw in ("wet", "dry", "total")
                                    for _ in range(2)],
                          "rate": 1.0, "status": "complete"})
    for a in ASSUMPTIONS.values():
        fig = sensitivity_curves(table, a.label, None)
        for axis in (fig.layout.xaxis, fig.layout.xaxis2):
            lines = axis.title.text.split("<br>")
            assert max(map(len, lines)) <= SWEEP_AXIS_CHARS, (a.key, lines)
            assert " ".join(lines) == a.label and axis.automargin is True
