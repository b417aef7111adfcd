"""What a new user tripped on in the apps (a walk through the notebooks in a browser):
a cut control label, no dry-N bracket beside the bars, a gas-schemes tab speaking of
"A" and "B" that nothing on screen named, "emission offsets 0 %" beside a bar that
changed, numbers without units, and a plain table of the network's totals in which a
partial total read like a complete one."""
import re
import warnings

import numpy as np
import pytest

from ui.demo_subset import write_demo_subset

#: Molar mass of nitrogen [g/mol]: IUPAC standard atomic weight of N, 14.007 (conventional
#: value; 14.0067 from memory of the 2013 table).
M_N = 14.0067


@pytest.fixture(scope="module")
def ridge_app(session):
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return SiteExplorer(session, site="ridge", years=(2021, 2021))


@pytest.fixture(scope="module")
def farm_session(tmp_path_factory):
    from workbench.ui.session import Session
    sc = write_demo_subset(tmp_path_factory.mktemp("farm_nu"), ("farm",), 2021, 2021)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return Session.open(sc)


def _number_after(text, word):
    m = re.search(word + r" (-?[\d,]+\.?\d*)", text)
    assert m, (word, text)
    return float(m.group(1).replace(",", ""))


def test_long_control_labels_may_wrap(ridge_app):
    """The assumptions box carries the class that the app's style rule lets wrap, and the
    rule is in the app (the browser test checks that no label is cut)."""
    from workbench.ui.controls import WRAP_LABELS_CSS
    def walk(w):
        yield w
        for c in getattr(w, "children", ()):
            yield from walk(c)
    acc, = [w for w in walk(ridge_app) if "wb-assumptions" in w._dom_classes]
    assert "wb-wrap-labels" in acc._dom_classes
    styles = [w for w in ridge_app.children if getattr(w, "value", None) == WRAP_LABELS_CSS]
    assert len(styles) == 1
    assert ".wb-wrap-labels .widget-label" in WRAP_LABELS_CSS and "white-space: normal" in WRAP_LABELS_CSS


def test_dry_n_bracket_line_beside_the_bars(ridge_app):
    """The line gives the dry N of the bars and both ends of the bracket; each end equals
    the dry N of a run with the pairs moved to that phase (the same engine by another
    path: the "gas/particle pairs" control), in kg/ha/yr and in eq/ha/yr."""
    app = ridge_app
    text = app.bracket_w.value
    assert "as measured" in text and "bracket" in text
    shown = _number_after(text, "Dry N")
    low = _number_after(text, "bracket")
    high = _number_after(text, "to")
    assert shown == pytest.approx(app._totals.loc["N_dry", "value"], abs=0.051)
    assert low < shown < high
    for split, end in (("all_gas", high), ("all_particle", low)):
        app.controls["budget.pair_split"].value = split
        assert _number_after(app.bracket_w.value, "Dry N") == pytest.approx(end, abs=0.051)
        assert {"all_gas": "pairs all as gas", "all_particle": "pairs all as particle"}[split] \
            in app.bracket_w.value
    app.controls["budget.pair_split"].value = "measured"
    app.unit_w.value = "eq/ha/yr"
    try:
        eq_high = _number_after(app.bracket_w.value, "to")
        # 1 kg N = 1000 / M_N mol N = 1000 / M_N eq (N counts one charge, as NO3- or NH4+)
        assert eq_high == pytest.approx(high * 1000.0 / M_N, rel=0.01)
    finally:
        app.unit_w.value = "kg/ha/yr"


def test_dry_n_bracket_across_samplers_and_not_computed_says_so(farm_session):
    """The demo farm's NH3 (monthly passive) and pNH4 (weekly filters) come from
    different samplers: the bracket is combined across them (drypairs), so the line gives
    both ends; where a bracket has no value the line says so instead of a number."""
    from workbench.ui.bracket import BRACKET_VARS, bracket_line, dry_n_bracket
    r = farm_session.run(farm_session.baseline, "farm", 2021, 2021, "year", "crops")
    b = dry_n_bracket(r.years, r.derived, "farm", "crops")
    assert b["computed"] and b["all_particle"] < b["shown"] < b["all_gas"]
    text = bracket_line(r.years, r.derived, "farm", "crops")
    assert "not computed" not in text and "pair all as particle" in text
    gone = r.derived.copy()
    for v in BRACKET_VARS:
        gone[v] = gone[v] * np.nan
    text = bracket_line(r.years, gone, "farm", "crops")
    assert "not computed" in text and "the dry N shown stands" in text


def test_scheme_tab_names_the_chosen_scheme(ridge_app):
    app = ridge_app
    app.tabs.selected_index = list(app.tabs.children).index(app.schemes.page)
    chosen = app.settings.dry.gas_scheme
    text = app.schemes.chosen_w.value
    other = [s for s in app.schemes.runs if s != chosen]
    assert f"uses <b>{chosen}</b>" in text and other and f"<b>{other[0]}</b>" in text
    assert " A " not in text and "B the other" not in app.schemes.page.children[0].value
    app.tabs.selected_index = 0


def test_nh3_share_under_one_percent_has_a_decimal(ridge_app):
    """A conifer forest's NH3 emission is small: the share shows a decimal, never
    "offsets 0 %" beside a bar that moved."""
    app = ridge_app
    app.controls["dry.nh3_treatment"].value = "bidirectional"
    try:
        text = app.nh3_w.value
        share = re.search(r"emission offsets (-?[\d.]+) %", text)
        assert share, text
        net = _number_after(text, r"Dry NH3 \(as N\):")
        if abs(float(share.group(1))) < 1:
            assert "." in share.group(1)
        assert float(share.group(1)) != 0.0 or net == 0.0
    finally:
        app.controls["dry.nh3_treatment"].value = "deposition_only"


def test_network_totals_carry_status_and_unit(two_sites_2021):
    """mere has no NO2: its N total is partial, and the table says so beside the value."""
    from workbench.ui.apps import NetworkOverview
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        net = NetworkOverview.from_scenario(two_sites_2021)
    t = net.totals()
    assert {"S total [kg/ha/yr]", "S status", "N total [kg/ha/yr]", "N status",
            "N without data"} <= set(t.columns)
    mere = t.xs("mere", level="site").iloc[0]
    assert mere["N status"] == "partial" and "NO2" in mere["N without data"]
    assert t.xs("ridge", level="site").iloc[0]["N without data"] == "-"
    # whether each total passes completeness (a flagged one may pass or fail)
    assert {"S completeness", "N completeness"} <= set(t.columns)
    assert set(t["S completeness"]) <= {"passes", "-"} or any(
        str(v).startswith("fails: ") for v in t["S completeness"])
    assert t.xs("ridge", level="site").iloc[0]["S completeness"] == "passes"
    assert "eq/ha/yr" in " ".join(net.totals("eq/ha/yr").columns)
    box, = [w for w in net.children if "wb-input-rows" in getattr(w, "_dom_classes", ())]
    assert "Input rows:" in box.value and " read" in box.value


def test_sensitivity_table_says_units(session):
    from workbench.ui.apps import SensitivityExplorer
    sens = SensitivityExplorer(session, site="ridge", years=(2021, 2021), key="fixed_velocity.SO2")
    head = sens.table_w.value.split("</thead>")[0]
    assert "S total [kg/ha/yr]" in head and "S wet deposition [kg/ha/yr]" in head
    assert "_" not in re.sub(r"<[^>]*>", "", head) and "fixed Vd of SO2 [cm/s]" in head


def test_a_duplicated_upload_is_told_in_the_explorer(tmp_path):
    """The air file uploaded twice: the repeats are dropped by the reader, and the
    explorer says so under its caution (counts, and one reason row for all repeats)
    instead of a budget that looks as if nothing happened."""
    from workbench.ui.apps import SiteExplorer
    sc = write_demo_subset(tmp_path, ("ridge",), 2021, 2021)
    air = sc.parent / "air.csv"
    lines = air.read_text().splitlines(keepends=True)
    body = [ln for ln in lines if ln[:1] not in ("#", "s") and ln.strip()]
    air.write_text("".join(lines + body))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SiteExplorer.from_scenario(sc, site="ridge", years=(2021, 2021))
    box, = [w for w in app.children if "wb-input-rows" in getattr(w, "_dom_classes", ())]
    assert f"{len(body):,} rejected" in box.value
    assert box.value.count("exact repeat of an earlier line (dropped)") == 1
    assert f"<td>{len(body)}</td>" in box.value
    # the first lines of the repeats, as input_rows.csv has them
    assert "<th>first lines</th>" in box.value and "lines " in box.value.split(
        "exact repeat of an earlier line (dropped)")[1].split("</tr>")[0]


def test_line_numbers_of_reasons_are_counted_together():
    from workbench.ui.inputs_box import LINE_NUMBER
    assert LINE_NUMBER.sub(r"\1 n", "exact repeat of line 1203 (dropped)") == \
        "exact repeat of line n (dropped)"
    assert LINE_NUMBER.sub(r"\1 n", "overlaps lines 12-14") == "overlaps lines n"
    assert LINE_NUMBER.sub(r"\1 n", "PO4 below detection") == "PO4 below detection"


def test_resistance_axes_label_whole_values_inside_the_data(ridge_app):
    """A log axis of resistances labelled 100, 2, 5, 1000 read like a scale break, and one
    labelled at powers of ten only showed a single label ("100") for a day between 20
    and 300 s m-1: the ticks are 1-2-5 values written whole, at least two of them inside
    the curves' range."""
    import numpy as np
    from workbench.ui import figures_dry
    r = ridge_app.result
    spec = figures_dry.resistance_breakdown_spec(r.velocities, "ridge", "conifer_forest", "SO2")
    axes = [v for k, v in spec["layout"].items() if k.startswith("yaxis")]
    assert axes and all(a.get("type") == "log" for a in axes)
    for a in axes:
        assert a["ticktext"] == [f"{v:g}" for v in a["tickvals"]]     # "200", never "2"
    ys = np.array([v for t in spec["data"] for v in t["y"] if v is not None], float)
    inside = [v for v in axes[0]["tickvals"] if ys.min() <= v <= ys.max()]
    assert len(inside) >= 2, (ys.min(), ys.max(), inside)


def test_excluded_samples_table_says_time_zone_and_units(session):
    """The file says 14:00 local standard time, the table 13:00: the header says UTC; the
    gauge depth carries its unit and the line number says it is the file's."""
    from workbench.ui.apps import SiteExplorer
    app = SiteExplorer(session, site="ridge", years=(2020, 2020))
    head = app.excluded_w.value.split("</thead>")[0]
    for col in ("start (UTC)", "end (UTC)", "file line", "gauge depth [mm]"):
        assert f"<th>{col}</th>" in head, (col, head)


def test_no_excluded_sample_is_said_in_the_plot(session):
    """Years without a flagged or excluded sample: the figure says so instead of empty
    axes running from -0.5 to 0.5; a later change back to samples shows the axes again."""
    from workbench.ui import figures_wet
    from workbench.ui.apps import SiteExplorer
    spec = figures_wet.excluded_by_reason_spec(None, "ridge")
    assert spec["layout"]["title"]["text"].startswith("No sample excluded or flagged")
    assert spec["layout"]["xaxis"]["visible"] is False and spec["layout"]["annotations"]
    app = SiteExplorer(session, site="ridge", years=(2020, 2020))   # a poor ion balance
    from workbench.ui.apps import TABS
    app.tabs.selected_index = TABS.index("excluded samples")
    fig = app.figs["excluded samples"]
    assert fig.layout.title.text.startswith("Samples not used")
    from workbench.ui.controls import refresh
    refresh(fig, {**spec, "layout": {**spec["layout"], "width": 660}})
    assert fig.layout.xaxis.visible is False and len(fig.layout.annotations) == 1
    refresh(fig, app._figure("excluded samples"))
    assert fig.layout.xaxis.visible is not False and len(fig.layout.annotations) == 0


def test_gas_control_says_it_is_for_the_resistances_tab(ridge_app):
    app = ridge_app
    assert "resistances" in app.gas_w.description
    bars = [list(d.y) for d in app.figs["budget"].data]
    app.gas_w.value = "NH3"
    try:
        assert [list(d.y) for d in app.figs["budget"].data] == bars     # the bars stay
    finally:
        app.gas_w.value = "SO2"


def test_what_if_sentence_reads_plainly():
    """"leaves a acidity exceedance (air concentrations only (wet deposition unchanged))"
    was what a user read; the article and the brackets now read as English."""
    from workbench.analysis.whatif import plain_statement
    parts = {"S_wet": 300.0, "S_dry": 300.0, "NOx_wet": 400.0, "NOx_dry": 400.0,
             "NHx_wet": 400.0, "NHx_dry": 400.0}
    loads = {"cl_max_s": 100.0, "cl_min_n": 0.0, "cl_max_n": 200.0, "cl_nut_n": 100.0}
    text = plain_statement(parts, {"S": 0.1}, loads, mode="air_only", where="x")
    assert "leaves an acidity exceedance" in text and "leaves a nutrient-N exceedance" in text
    assert "((" not in text and "))" not in text


def test_long_assumption_names_wrap_in_the_sensitivity_figure(session):
    """The gas/particle split's name ran past the figure's edge in the title and the
    two panels' axis titles ran into each other: both wrap at a space."""
    from workbench.ui.apps import SensitivityExplorer
    from workbench.ui.figures import AXIS_CHARS, TITLE_CHARS
    sens = SensitivityExplorer(session, site="ridge", years=(2021, 2021), key="budget.pair_split")
    lay = sens.fig.layout
    title = lay.title.text
    assert "<br>" in title and all(len(p) <= TITLE_CHARS for p in title.split("<br>"))
    assert "gas/particle split of the nitrate and ammonium pairs" in title.replace("<br>", " ")
    assert lay.margin.t >= 100 + 50 * (title.count("<br>") - 1)      # room above "sulfur"
    for ax in (lay.xaxis, lay.xaxis2):
        parts = ax.title.text.split("<br>")
        assert len(parts) > 1 and all(len(p) <= AXIS_CHARS for p in parts)


def test_years_readout_has_room_in_every_app(session):
    """"2023 – 2023" lost its last digit in the sensitivity explorer's squeezed row."""
    from workbench.ui.apps import SensitivityExplorer
    from workbench.ui.app_sobol import SobolExplorer
    from workbench.ui.controls import WRAP_LABELS_CSS
    assert ".wb-years .widget-readout {min-width: 7.5em" in WRAP_LABELS_CSS
    sens = SensitivityExplorer(session, site="ridge", years=(2021, 2021), run=False)
    sob = SobolExplorer(session, site="ridge", years=(2021, 2021))
    for app in (sens, sob):
        assert "wb-years" in app.years_w._dom_classes
        assert any(getattr(w, "value", None) == WRAP_LABELS_CSS for w in app.children)
        head = next(w for w in app.children if app.years_w in getattr(w, "children", ()))
        assert head.layout.flex_flow == "row wrap"
