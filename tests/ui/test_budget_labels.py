"""The period labels of the budget bars never touch: the figure drew its years along
a multi-category axis (element, then period), which plotly turned on end or to 30
degrees in the site explorer's 520 px, across the group lines between sulfur and
nitrogen.  Now each element has a panel with a category axis of its own (no group
line), and the labels are level, slanted or every k-th as the room allows; the room
is that of the narrowest figure the explorer draws and of the report's figures.

Sizes of the labels: plotly's 12 px font, measured in chromium (tests/test_browser.py
checks them in the page: ``test_budget_years_never_touch_at_1000_px``)."""
import numpy as np
import pytest

from workbench.report import REPORT_FIGURE_PX
from workbench.ui import figures
from workbench.ui.apps import FIGURE_WIDTH
from workbench.ui.figure_period import (CHAR_PX, LEVEL_GAP_PX, LINE_PX, label_pitch,
                                        period_ticks)
from workbench.ui.figures_budget import NARROWEST_PX, panel_px


def test_the_narrowest_width_is_the_explorers():
    assert NARROWEST_PX == FIGURE_WIDTH


@pytest.mark.parametrize("width", [NARROWEST_PX, REPORT_FIGURE_PX])
@pytest.mark.parametrize("labels", [[str(y) for y in range(2023 - n, 2024)]
                                    for n in (0, 1, 2, 4, 7, 11, 19, 29, 59)]
                         + [[f"2021-{m:02d}" for m in range(1, 13)],
                            ["2021-DJF", "2021-MAM", "2021-JJA", "2021-SON"]])
def test_labels_keep_their_room_at_the_chosen_angle(width, labels):
    room = panel_px(width)
    t = period_ticks(labels, room)
    assert t["type"] == "category" and t["categoryarray"] == labels
    shown = t["tickvals"]
    assert shown and set(shown) <= set(labels)
    idx = np.array([labels.index(v) for v in shown])
    steps = np.diff(idx)
    assert (steps == steps[0]).all() if len(steps) else True    # evenly spaced
    # centre-to-centre distance of two neighbouring labels [px]
    pitch = (steps.min() if len(steps) else len(labels)) * room / len(labels)
    chars = max(len(v) for v in shown)
    if t["tickangle"] == 0:
        assert pitch >= chars * CHAR_PX + LEVEL_GAP_PX       # side by side with a gap
    else:
        assert t["tickangle"] == -45
        # parallel lines LINE_PX high, at least 4 px apart across them
        assert pitch * np.sin(np.radians(45)) >= LINE_PX + 4 - 1e-9
        assert pitch >= label_pitch(-45) - 1e-9


def test_the_budget_bars_have_no_group_line_and_a_panel_per_element(session):
    res = session.run(session.baseline, "ridge", 2020, 2021, "year")
    spec = figures.budget_bars_spec(res.years, "ridge", "grass", None, "kg/ha/yr", FIGURE_WIDTH)
    lay = spec["layout"]
    for name, words in (("xaxis", "sulfur"), ("xaxis2", "nitrogen")):
        assert lay[name]["type"] == "category" and lay[name]["title"]["text"] == words
        assert lay[name]["tickvals"] == ["2020", "2021"]
    assert lay["xaxis"]["domain"][1] < lay["xaxis2"]["domain"][0]       # apart
    for t in spec["data"]:      # no multi-category x (a list of two lists)
        assert not (t["x"] and isinstance(t["x"][0], list)), t["name"]
        assert t["yaxis"] == "y"
