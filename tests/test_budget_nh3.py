"""The budget's NH3 exchange: net (bidirectional) beside deposition only.

The hand-worked case follows the single-layer canopy compensation point model of
Sutton et al. (1998, Atmos. Environ. 32, 473; equations recalled from memory):
chi_c = (chi_a g_ab + chi_s g_s)/(g_ab + g_s + g_w) and F = g_ab (chi_a - chi_c),
computed here with pencil-and-paper numbers.  Molar masses from the IUPAC atomic
weights (N 14.007, H 1.008 g/mol: NH3 17.031 g/mol).  Invented sites.
"""

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from workbench.budget import BudgetOptions, assemble
from workbench.budgetstatus import NH3_NET_EMISSION
from workbench.cli import run_scenario
from workbench.drycomponents import dry_components, dry_rows
from workbench.drydep import nh3_bidirectional as nh3
from workbench.errors import InputError
from workbench.io.sites import read_sites
from workbench.periods import make_periods
from workbench.tables import budget_table

M_NH3 = 17.031e-3          # kg mol-1
KG_N_HA = 14.007e-3 * 1e4  # mol N m-2 -> kg N ha-1
WEEK_S = 7 * 86400.0

SITE = """\
[[site]]
id = "gamma"
name = "Gamma Test Field"
latitude = 52.0
longitude = 5.0
elevation_m = 10.0
land_use = "crops"
canopy_height_m = 0.5
wind_height_m = 10.0
sampler_height_m = 3.0
utc_offset_h = 0
receptors = ["grass"]
"""


# ------------------------------------------------------------------ hand-worked

def test_hand_worked_compensation_point_above_air():
    """Ra + Rb = 50 s/m, R_s = 100 s/m, R_w = 200 s/m, chi_s = 5 and chi_a = 1 ug/m3:
    g_ab = 0.02, g_s = 0.01, g_w = 0.005 m/s; chi_c = (0.02 + 0.05)/0.035 = 2 ug/m3 (above
    the air: emission); F = 0.02 (1 - 2) = -0.02 ug m-2 s-1."""
    vd, e = nh3.exchange(30.0, 20.0, 100.0, 200.0, 5.0)
    assert nh3.canopy_concentration(1.0, 30.0, 20.0, 100.0, 200.0, 5.0) == pytest.approx(2.0)
    assert vd == pytest.approx(0.02 * 0.015 / 0.035)
    assert e == pytest.approx(5.0 * 0.02 * 0.01 / 0.035)
    assert nh3.net_flux(1.0, vd, e) == pytest.approx(-0.02)


def _air(conc_ug):
    """Four weekly NH3 samples at gamma, February 2021 [mol m-3]."""
    weeks = pd.date_range("2021-02-01", periods=5, freq="7D").values
    n = len(conc_ug)
    return xr.Dataset(
        {"NH3": ("period", np.asarray(conc_ug) * 1e-9 / M_NH3, {"quantity": "amount_density"}),
         "site": ("period", np.array(["gamma"] * n, object)),
         "sampler_id": ("period", np.array(["fp"] * n, object)),
         "start": ("period", weeks[:n]), "end": ("period", weeks[1:n + 1]),
         "line": ("period", np.arange(2, n + 2))})


def _vel(value, name):
    t = pd.date_range("2021-02-01T01:00", "2021-03-01T00:00", freq="h")
    da = xr.DataArray(np.full((1, 2, len(t)), value), dims=("site", "receptor", "time"),
                      coords={"site": ["gamma"], "receptor": ["crops", "grass"], "time": t.values})
    return (da, xr.zeros_like(da, dtype=bool), name)


def _hand_budget(tmp_path, conc_ug, chi_s_ug=5.0, vd_only=0.01):
    """The budget of the hand-worked exchange (the same resistances every hour)."""
    vd_bd, e_ug = nh3.exchange(30.0, 20.0, 100.0, 200.0, chi_s_ug)
    vel = {"NH3": _vel(vd_only, "fixed"), "NH3_bidirectional": _vel(vd_bd, "hand"),
           "NH3_emission": _vel(e_ug * 1e-9 / M_NH3, "hand")}
    (tmp_path / "sites.toml").write_text(SITE)
    cat = read_sites(tmp_path / "sites.toml")
    opts = BudgetOptions(require_all_seasons=False)
    rows = dry_rows(_air(conc_ug), vel, None, cat.ids, opts)
    periods = make_periods("2021-02-01", "2021-03-01", "month")
    dry = dry_components(rows, periods)
    ds = assemble(None, dry, cat, periods, opts, ["crops", "grass"])
    return ds, budget_table(ds)


def test_hand_worked_net_emission_in_the_budget(tmp_path):
    """1 ug/m3 each week: net = -0.02 ug m-2 s-1 for 28 days, deposition only 0.01 cm/s
    ... 1 ug/m3 x 0.01 m/s; both reported, the net is negative (not clipped) and flagged."""
    ds, table = _hand_budget(tmp_path, [1.0, 1.0, 1.0, 1.0])
    row = table[(table.species == "NH3") & (table.receptor == "crops")].iloc[0]
    net = -0.02e-9 / M_NH3 * 4 * WEEK_S * KG_N_HA
    only = 1.0e-9 / M_NH3 * 0.01 * 4 * WEEK_S * KG_N_HA
    assert row["flux_kg_ha"] == pytest.approx(net, rel=1e-9)
    assert row["nh3_net_kg_ha"] == pytest.approx(net, rel=1e-9)
    assert row["nh3_deposition_only_kg_ha"] == pytest.approx(only, rel=1e-9)
    assert row["status"] == "flagged" and NH3_NET_EMISSION in row["note"]
    assert bool(row["passes"])                      # read with care, not incomplete
    assert ds.attrs["nh3_figure"] == "net"


def test_hand_worked_sign_flip_only_where_the_net_is_an_emission(tmp_path):
    """Week concentrations 1, 1, 10, 10 ug/m3: each week's net is (C vd - E) dt with
    vd = 0.3/35 m/s and E = 1/35 ug m-2 s-1; the month sums to a deposition (no flag),
    while chi_s = 0 makes it a plain deposition C vd_bd (E = 0; vd_bd does not depend
    on chi_s)."""
    ds, table = _hand_budget(tmp_path, [1.0, 1.0, 10.0, 10.0])
    vd_bd, e = 0.3 / 35.0, 1.0 / 35.0
    net = sum(c * vd_bd - e for c in (1.0, 1.0, 10.0, 10.0)) * 1e-9 / M_NH3 * WEEK_S * KG_N_HA
    row = table[(table.species == "NH3") & (table.receptor == "crops")].iloc[0]
    assert net > 0 and row["flux_kg_ha"] == pytest.approx(net, rel=1e-9)
    assert row["status"] == "complete" and NH3_NET_EMISSION not in str(row["note"])
    _, table0 = _hand_budget(tmp_path, [1.0, 1.0, 10.0, 10.0], chi_s_ug=0.0)
    row0 = table0[(table0.species == "NH3") & (table0.receptor == "crops")].iloc[0]
    assert row0["flux_kg_ha"] == pytest.approx(22.0 * vd_bd * 1e-9 / M_NH3 * WEEK_S * KG_N_HA,
                                               rel=1e-9)


def test_totals_name_the_nh3_figure_and_keep_the_other(tmp_path):
    ds, table = _hand_budget(tmp_path, [1.0, 1.0, 1.0, 1.0])
    crops = table[(table.receptor == "crops") & (table.element == "N")]
    nh3_row = crops[crops.species == "NH3"].iloc[0]
    for pathway in ("dry", "total"):
        tot = crops[(crops.pathway == pathway) & (crops.species == "all")].iloc[0]
        assert tot["nh3_figure"] == "net"
        assert tot["flux_kg_ha"] == pytest.approx(nh3_row["nh3_net_kg_ha"])     # only NH3
        assert tot["flux_kg_ha_nh3_deposition_only"] == pytest.approx(
            nh3_row["nh3_deposition_only_kg_ha"])
        assert "NH3" in tot["flagged_components"]
    assert (table[table.element == "S"]["nh3_figure"] == "").all()


# ------------------------------------------------------------------ through a run

def _scenario(tmp_path, treatment, site_extra="", gamma_crops=3000):
    (tmp_path / "sites.toml").write_text(SITE + site_extra)
    weeks = pd.date_range("2021-06-01", periods=5, freq="7D")
    air = ["# reference_state: ambient", "site,start,end,NH3 [ug/m3],SO2 [ug/m3]"]
    for i, c in enumerate([2.0, 0.5, 4.0, 1.0]):
        air.append(f"gamma,{weeks[i]:%Y-%m-%dT%H:%M},{weeks[i + 1]:%Y-%m-%dT%H:%M},{c},1.0")
    (tmp_path / "air.csv").write_text("\n".join(air) + "\n")
    t = pd.date_range("2021-06-01T01:00", "2021-06-29T00:00", freq="h")
    h = (t - pd.Timedelta("30min")).hour.to_numpy()
    met = pd.DataFrame({"site": "gamma", "time": t.strftime("%Y-%m-%dT%H:%M"),
                        "wind_speed [m/s]": 3.0,
                        "temperature [degC]": 18 + 6 * np.sin((h - 9) / 24 * 2 * np.pi),
                        "relative_humidity [%]": 70.0,
                        "solar_radiation [W/m2]":
                            np.clip(np.sin((h - 6) / 12 * np.pi), 0, None) * 700,
                        "precipitation [mm]": 0.0, "pressure [hPa]": 1012.0})
    met.to_csv(tmp_path / "met.csv", index=False)
    (tmp_path / "scenario.toml").write_text(f"""
[inputs]
sites = "sites.toml"
air = "air.csv"
met = "met.csv"
[period]
start = "2021-06-01"
end = "2021-06-29"
resolution = "month"
[dry]
nh3_treatment = "{treatment}"
nh3_emission_potential = {{crops = {gamma_crops}}}
""")
    return tmp_path / "scenario.toml"


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    out = {}
    for treat in ("deposition_only", "bidirectional"):
        d = tmp_path_factory.mktemp(treat)
        written, result, _ = run_scenario(_scenario(d, treat), d / "out", quiet=True)
        out[treat] = (pd.read_csv(written["budget.csv"]), pd.read_csv(written["summary.csv"]),
                      result, written)
    return out


def _nh3(table, receptor):
    return table[(table.species == "NH3") & (table.receptor == receptor)].iloc[0]


def test_run_deposition_only_figure_equals_the_old_budget(runs):
    old, new = runs["deposition_only"][0], runs["bidirectional"][0]
    for rec in ("crops", "grass"):
        assert _nh3(new, rec)["nh3_deposition_only_kg_ha"] == pytest.approx(
            _nh3(old, rec)["flux_kg_ha"], rel=1e-9)
        assert _nh3(old, rec)["nh3_figure"] == "deposition_only"
        assert np.isnan(_nh3(old, rec)["nh3_net_kg_ha"])


def test_run_net_is_c_vd_minus_e_over_the_weeks(runs):
    """Net recomputed with plain numpy from the hourly velocities written by the run,
    scaled from the 28 sampled days to the 30 days of June as every dry component is."""
    table, _, result, _ = runs["bidirectional"]
    v = result.velocities
    conc = np.array([2.0, 0.5, 4.0, 1.0]) * 1e-9 / M_NH3
    for rec in ("crops", "grass"):
        vd = v["vd_NH3_bidirectional"].sel(site="gamma", receptor=rec).values.reshape(4, 168)
        e = v["nh3_emission_flux"].sel(site="gamma", receptor=rec).values.reshape(4, 168)
        net = ((conc * vd.mean(1) - e.mean(1)) * WEEK_S).sum() * KG_N_HA * 30 / 28
        assert _nh3(table, rec)["flux_kg_ha"] == pytest.approx(net, rel=1e-9)
    # fertilised crops (Gamma_s 3000) emit; unfertilised grass (50) takes NH3 up
    assert _nh3(table, "crops")["flux_kg_ha"] < 0 < _nh3(table, "grass")["flux_kg_ha"]
    assert _nh3(table, "crops")["status"] == "flagged"
    assert NH3_NET_EMISSION in _nh3(table, "crops")["note"]
    assert _nh3(table, "grass")["status"] == "complete"
    # the site-year, computed on its own, carries the flag too
    year = result.years.sel(site="gamma", component="N/dry/NH3")
    assert str(year["status"].sel(receptor="crops").item()) == "flagged"
    assert NH3_NET_EMISSION in str(year["note"].sel(receptor="crops").item())
    assert float(year["deposition"].sel(receptor="crops").item()) < 0


def test_run_summary_and_netcdf_carry_both_figures(runs):
    _, summary, result, written = runs["bidirectional"]
    crops = summary[summary.receptor == "crops"].iloc[0]
    assert crops["nh3_figure"] == "net"
    assert crops["N_total_kg_ha"] == pytest.approx(crops["NH3_net_kg_ha"])
    assert crops["N_total_kg_ha_NH3_deposition_only"] == pytest.approx(
        crops["NH3_deposition_only_kg_ha"])
    assert crops["N_total_flagged_components"] == "NH3"
    nc = xr.open_dataset(written["budget.nc"])
    assert {"nh3_net", "nh3_deposition_only"} <= set(nc.data_vars)
    assert nc.attrs["nh3_figure"] == "net"
    nc.close()


def test_tiny_budget_unchanged_by_the_bidirectional_option(tmp_path):
    """No NH3 measured: the option changes nothing (the tiny scenario of test_budget)."""
    from tests.test_budget import _write
    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    a = run_scenario(_write(tmp_path / "a"), tmp_path / "a" / "out", quiet=True)[0]
    b = run_scenario(_write(tmp_path / "b", budget='[dry]\nnh3_treatment = "bidirectional"'),
                     tmp_path / "b" / "out", quiet=True)[0]
    ta, tb = pd.read_csv(a["budget.csv"]), pd.read_csv(b["budget.csv"])
    cols = ["flux_kg_ha", "status", "completeness"]
    pd.testing.assert_frame_equal(ta[cols], tb[cols])


# ------------------------------------------------------------------ sites.toml

def test_site_emission_potential_from_the_catalogue(tmp_path):
    """Grazed grass at gamma (Gamma_s 3000 in sites.toml) emits where the class default
    (50) takes NH3 up; the value reaches the model as a "site/class" key."""
    sc = _scenario(tmp_path, "bidirectional",
                   site_extra="\n[site.nh3_emission_potential]\ngrass = 3000\n")
    cat = read_sites(tmp_path / "sites.toml")
    assert cat.nh3_emission_potential() == {"gamma/grass": 3000.0}
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    table = pd.read_csv(written["budget.csv"])
    assert _nh3(table, "grass")["flux_kg_ha"] < 0
    assert NH3_NET_EMISSION in _nh3(table, "grass")["note"]


@pytest.mark.parametrize("extra, fragment", [
    ("forest = 30", "a surface the site does not have"),
    ('grass = "high"', "bad NH3 emission potential"),
    ("grass = -5", "bad NH3 emission potential"),
])
def test_site_emission_potential_errors(tmp_path, extra, fragment):
    (tmp_path / "sites.toml").write_text(SITE + f"\n[site.nh3_emission_potential]\n{extra}\n")
    with pytest.raises(InputError, match=fragment):
        read_sites(tmp_path / "sites.toml")


def test_hand_worked_emission_shared_by_its_own_hours(tmp_path):
    """One weekly sample (2 ug/m3) across two reporting halves of 84 h; Vd_bd = 0.01 m/s
    all week, E = 0.05 ug m-2 s-1 in the first 84 h only.  The deposition part splits
    evenly (by Vd), the emission part all into the first half (by E):
    first = (2 x 0.01 - 0.05) 84 h, second = 2 x 0.01 x 84 h [ug m-2]."""
    (tmp_path / "sites.toml").write_text(SITE)
    cat = read_sites(tmp_path / "sites.toml")
    da, was, _ = _vel(0.01, "hand")
    e = da.copy(data=np.zeros(da.shape))
    e[..., :84] = 0.05e-9 / M_NH3
    vel = {"NH3": _vel(0.01, "fixed"), "NH3_bidirectional": (da, was, "hand"),
           "NH3_emission": (e, was, "hand")}
    opts = BudgetOptions(require_all_seasons=False)
    rows = dry_rows(_air([2.0]), vel, None, cat.ids, opts)
    t0 = pd.Timestamp("2021-02-01")
    periods = make_periods(t0, t0 + pd.Timedelta("7D"), "custom", ranges=[
        (t0, t0 + pd.Timedelta("84h"), "first"), (t0 + pd.Timedelta("84h"), t0 + pd.Timedelta("7D"),
                                                  "second")])
    dry = dry_components(rows, periods)
    net = dry["nh3_net"].sel(site="gamma", receptor="crops").values * M_NH3 * 1e9   # ug m-2
    h84 = 84 * 3600.0
    np.testing.assert_allclose(net, [(2 * 0.01 - 0.05) * h84, 2 * 0.01 * h84], rtol=1e-9)
