"""Maps of a gridded run (workbench.ui.figures_grid), on a hand-made 2 x 3 output."""
import numpy as np
import pytest
import xarray as xr

from workbench.ui.figures_grid import grid_map, grid_map_spec


@pytest.fixture
def out():
    y, x = np.array([0.0, 1000.0]), np.array([0.0, 1000.0, 2000.0])
    dry_n = np.arange(12, dtype=float).reshape(2, 2, 3)
    dry_n[1, 1, 0] = np.nan
    vd = np.full((2, 2, 3), 0.004)
    ds = xr.Dataset(
        {"dry_N": (("time", "y", "x"), dry_n, {"units": "1e-4 kg m-2", "long_name":
                                                "total dry deposition of N over the period"}),
         "vd_SO2": (("time", "y", "x"), vd, {"units": "m s-1"}),
         "land_use": (("y", "x"), np.array([[3.0, 7.0, np.nan], [0.0, 3.0, 3.0]]),
                      {"flag_values": np.array([0, 3, 7]),
                       "flag_meanings": "conifer_forest grass water"}),
         "period": ("time", ["2021-07", "2021-08"])},
        coords={"y": ("y", y, {"standard_name": "projection_y_coordinate", "units": "m"}),
                "x": ("x", x, {"standard_name": "projection_x_coordinate", "units": "m"}),
                "lat": (("y", "x"), np.full((2, 3), 54.5), {"standard_name": "latitude"}),
                "lon": (("y", "x"), np.full((2, 3), 7.2), {"standard_name": "longitude"})})
    return ds


def test_map_of_total_n(out):
    spec = grid_map_spec(out, "dry_N", "2021-08")
    t = spec["data"][0]
    assert t["type"] == "heatmap"
    assert t["z"][0] == [6.0, 7.0, 8.0] and t["z"][1][0] is None      # NaN: blank cell
    assert t["x"] == [0.0, 1.0, 2.0] and t["y"] == [0.0, 1.0]          # km
    assert [c[2] for c in t["customdata"][0]] == ["grass", "water", "no class"]
    assert t["colorbar"]["title"]["text"] == "kg N/ha"      # the element in the unit
    assert "2021-08" in spec["layout"]["title"]["text"]
    assert spec["layout"]["yaxis"]["scaleanchor"] == "x"               # square cells
    fig = grid_map(out, "dry_N", 0)
    assert fig.data[0].z[0][1] == 1.0


def test_vd_map_in_cm_per_s(out):
    t = grid_map_spec(out, "vd_SO2", 1)["data"][0]
    assert t["z"][0][0] == pytest.approx(0.4)
    assert t["colorbar"]["title"]["text"] == "cm/s"
    assert grid_map_spec(out, "vd_SO2", 1)["layout"]["title"]["text"] == \
        "deposition velocity of SO2 (period mean), 2021-08"


def test_unknown_variable(out):
    with pytest.raises(ValueError, match="dry_S.*choose one of dry_N, vd_SO2"):
        grid_map_spec(out, "dry_S")


def test_demo_grid_shown_instead_of_a_scenario_without_grid_says_so(out, monkeypatch,
                                                                     tmp_path):
    """A site network's scenario in the grid notebook: the maps were the invented demo
    grid under titles that read as the scenario's own (one printed line above said so)."""
    import workbench.grid_demo
    from ui.demo_subset import write_demo_subset
    from workbench.ui.figures_grid import open_maps
    asked = []
    monkeypatch.setattr(workbench.grid_demo, "open_run",
                        lambda sc=None, **kw: asked.append(sc) or out.copy())
    sc = write_demo_subset(tmp_path, ("ridge",), 2021, 2021)        # no [grid] section
    maps = open_maps(sc)
    assert asked == [None]                                          # the demo grid ran
    title = grid_map_spec(maps, "dry_N", 0)["layout"]["title"]["text"]
    assert "invented demo grid" in title and "has no [grid] section" in title
    plain = grid_map_spec(open_maps(None), "dry_N", 0)["layout"]["title"]["text"]
    assert "demo grid" not in plain


@pytest.mark.parametrize("period", [5, "7", "2021-09", "july", -3, 1.5j])
def test_a_period_the_grid_has_not_is_one_located_line(out, period):
    """The notebook's PERIOD out of range or mistyped: one InputError naming PERIOD and
    the periods there are (before: IndexError or "'2021-09' is not in list" tracebacks),
    as the notebook's variable set in its first cell (it read "column 'PERIOD'", as if
    PERIOD were a column of a file)."""
    from workbench.errors import InputError
    with pytest.raises(InputError) as exc:
        grid_map_spec(out, "dry_N", period)
    assert str(exc.value) == (
        f"PERIOD (set in the notebook's first cell): no such reporting period: got "
        f"'{period}', expected a position "
        "0 to 1 or a label of the 2 period(s): 0 ('2021-07'), 1 ('2021-08')")


@pytest.mark.parametrize("period, k", [(1, 1), ("1", 1), ("2021-08", 1), (-1, 1), (-2, 0)])
def test_a_period_by_position_or_label(out, period, k):
    assert grid_map_spec(out, "dry_N", period)["layout"]["title"]["text"].endswith(
        ("2021-07", "2021-08")[k])


def test_a_mistyped_grid_name_suggests_none_for_the_demo_grid(tmp_path):
    """The grid notebook's SCENARIO mistyped: the message told to write "demo" (the
    site network, which has no grid) although None gives the demo grid there."""
    from workbench.errors import ScenarioError
    from workbench.ui.figures_grid import open_maps
    with pytest.raises(ScenarioError) as exc:
        open_maps(str(tmp_path / "gird.toml"))
    text = str(exc.value)
    assert text.startswith(f"SCENARIO = '{tmp_path / 'gird.toml'}': no such file or folder")
    assert "to None for the invented demo grid" in text
    assert '"demo"' not in text
    assert "grid.nc of a finished `workbench grid` run" in text


def test_the_grid_notebook_opens_a_grid_nc_or_its_run_folder(out, tmp_path, monkeypatch):
    """Its first cell offers "the grid.nc of a finished `workbench grid` run": that path
    was read as a scenario file ("not UTF-8 text"), and its folder was refused."""
    import workbench.grid_demo
    from workbench.errors import ScenarioError
    from workbench.ui.figures_grid import open_maps
    (tmp_path / "run").mkdir()
    out.to_netcdf(tmp_path / "run" / "grid.nc")
    for given in (tmp_path / "run" / "grid.nc", tmp_path / "run"):
        maps = open_maps(str(given))
        np.testing.assert_array_equal(maps["dry_N"].values, out["dry_N"].values)
    with pytest.raises(ScenarioError, match="a folder without grid.nc"):
        open_maps(str(tmp_path))
    asked = []                          # "demo" there: the demo grid, as None
    monkeypatch.setattr(workbench.grid_demo, "open_run",
                        lambda sc=None, **kw: asked.append(sc) or out.copy())
    maps = open_maps("demo")
    assert asked == [None] and not maps.attrs.get("workbench_shown_instead")
