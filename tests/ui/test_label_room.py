"""Control labels whole: the Sobol analysis showed "base sam..." (ipywidgets cuts a
description longer than its default 80 px label with an ellipsis; seen in the browser)."""
import warnings

from workbench.ui.controls import cut_descriptions, fit_descriptions


def test_no_app_label_is_cut(session):
    from workbench.ui.app_sobol import SobolExplorer
    from workbench.ui.apps import SensitivityExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        apps = [SobolExplorer(session, years=(2021, 2021), run=False),
                SensitivityExplorer(session, years=(2021, 2021), run=False)]
    for app in apps:
        assert cut_descriptions(app) == [], type(app).__name__


def test_fit_descriptions_widens_only_long_labels():
    import ipywidgets as widgets
    long = widgets.Dropdown(options=[1], description="base samples")
    short = widgets.Dropdown(options=[1], description="site")
    box = widgets.VBox([widgets.HBox([long]), short])
    assert cut_descriptions(box) == ["base samples"]
    fit_descriptions(box)
    assert long.style.description_width == "initial" and short.style.description_width == ""
    assert cut_descriptions(box) == []


def test_every_option_of_an_assumption_shows_whole_in_its_closed_box():
    """Seen in the browser: the seasonal category showed "automatic (surface state, n"
    and the roughness check box "roughness length z0 of the sit..." (its unit cut)."""
    from workbench.ui.assumptions import ASSUMPTIONS
    from workbench.ui.controls import WRAP_LABELS_CSS, select_room
    room = select_room()
    long = [(k, str(lab)) for k, a in ASSUMPTIONS.items() if a.kind == "choice"
            for lab, _ in a.choices if len(str(lab)) > room]
    assert not long, (room, long)
    assert ".wb-wrap-labels .widget-label-basic" in WRAP_LABELS_CSS   # check-box labels wrap
