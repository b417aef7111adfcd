"""Demo figures of docs/methods_uncertainty.md measured on the demo's farm site: the
table and figures of "A wide exceedance range: the demo's farm (measured)" and the table
of "The net NH3 exchange (bidirectional)".

Every number is a run of the engine on a copy of the demo scenario holding the farm
alone (``tests/ui/demo_subset.py``; the draws of a site come from streams named by the
site, so the farm's draws alone are those of the whole demo's run), then
:func:`workbench.analysis.uncertainty.with_uncertainty` with the draws and seed the
document names (2,000 draws, seed 12345 unless stated) and
:func:`workbench.analysis.exceedance.exceedance_table` for the exceedances.

* :func:`exceedance_rows`: the span row of the farm's crops, S / N / acidity exceedance as
  5 / 50 / 95 % [eq/ha/yr] and p_exceed_acidity, for each set of factors drawn
  (:data:`EXCEEDANCE_CASES`);
* :func:`span_figures`: the point values and the NH3 and N 95 % of the section's prose;
  :func:`draw_count_figures` the 95 % of the exceedance at other numbers of draws;
  :func:`bidirectional_figures` the net NH3 against the deposition-only and its N range;
* :func:`gamma_rows`: the farm's crops under ``nh3_treatment = "bidirectional"`` with
  ``nh3_gamma_gsd`` 1 and 3, [kg N/ha] 5 / 50 / 95 %.

``tests/test_docs_uncertainty_farm.py``, ``test_docs_uncertainty_draws.py``,
``test_docs_uncertainty_bidirectional.py`` and ``test_docs_uncertainty_gamma.py``
compute the same and fail when the document's numbers are not what they give.
Run ``python docs/make_uncertainty_figures.py`` (about a minute) to print them.
"""
from __future__ import annotations

import sys
import tempfile
import types
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))

DRAWS = 2000
SEED = 12345
#: Invented emission potential of crops for the table's second case [-].
GAMMA_CROPS = 50000.0


def _off():
    from workbench.analysis import uncertainty as U
    return dict(vd_gsd={sp: 1.0 for sp in U.DEFAULT_VD_GSD}, air_rel_sd=0.0,
                precip_conc_rel_sd=0.0, gauge_catch_rel_sd=0.0, depth_rel_sd=0.0,
                censored_rel_sd=0.0, vd_fill_rel_sd=0.0, pwm_fill_rel_sd=0.0,
                lab_bias_precip_rel_sd=0.0, lab_bias_air_rel_sd=0.0, vd_site_gsd=1.0,
                lab_bias_filter_pack=False, bulk_factor_rel_sd=0.0, nh3_gamma_gsd=1.0)


def exceedance_cases():
    """{row label of the document's table: UncertaintyOptions keywords}."""
    from workbench.analysis import uncertainty as U
    d = dict(U.DEFAULT_VD_GSD)
    off = _off()
    return {
        "the defaults": {},
        "the defaults, NH3 GSD 1": dict(vd_gsd={**d, "NH3": 1.0}),
        "the defaults, NH3 GSD 1 and `vd_site_gsd` 1": dict(vd_gsd={**d, "NH3": 1.0},
                                                              vd_site_gsd=1.0),
        "the NH3 factor (GSD 2) alone": dict(off, vd_gsd={**off["vd_gsd"], "NH3": 2.0}),
        'the defaults, `systematic_errors = "each_year"`': dict(systematic_errors="each_year"),
    }


def farm_run(folder, first_year=2016, last_year=2023, dry=""):
    """(study, result) of the demo's farm alone over the years, with `dry` (TOML lines)
    as the scenario's ``[dry]`` section."""
    from ui.demo_subset import study_and_args, write_demo_subset
    sc = write_demo_subset(folder, ("farm",), first_year, last_year)
    if dry:
        sc.write_text(sc.read_text(encoding="utf-8").replace(
            "[budget]", f"[dry]\n{dry}\n\n[budget]"), encoding="utf-8")
    study, args = study_and_args(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return study, study.run(*args)


def drawn(study, res, draws=DRAWS, seed=SEED, **kw):
    """The result with the quantiles of `draws` draws (UncertaintyOptions `kw`)."""
    from workbench.analysis import uncertainty as U
    opt = U.UncertaintyOptions(draws=draws, seed=seed, **kw)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return U.with_uncertainty(res, study, types.SimpleNamespace(
            options={"uncertainty": opt}))


def _span_exceedance(study, r):
    from workbench.analysis.exceedance import exceedance_table
    ex = exceedance_table(r, study.catalogue())
    return ex[(ex["site"] == "farm") & (ex["receptor"] == "crops")
              & (ex["period"] == "span")].iloc[0]


def _q(row, name, fmt="{:,.0f}"):
    vals = [fmt.format(row[f"{name}_{q}"]) for q in ("p05", "p50", "p95")]
    return vals[0] if len(set(vals)) == 1 else " / ".join(vals)


def exceedance_rows(study, res, defaults=None):
    """{label: "S | N | exceedance | p_exceed"} as the document's table writes them;
    `defaults` the result of ``drawn(study, res)`` when already at hand."""
    out = {}
    for label, kw in exceedance_cases().items():
        r = defaults if (defaults is not None and not kw) else drawn(study, res, **kw)
        row = _span_exceedance(study, r)
        out[label] = " | ".join((_q(row, "s_dep_eq_ha_yr"), _q(row, "n_dep_eq_ha_yr"),
                                 _q(row, "ex_acidity_eq_ha_yr"),
                                 f"{row['p_exceed_acidity']:.2f}"))
    return out


def _span_rows(res):
    t = res.table
    return t[(t["site"] == "farm") & (t["receptor"] == "crops") & (t["period"] == "span")]


def span_figures(study, res, defaults=None):
    """The point figures of the section's prose and the 2,000 draws' NH3 and N 95 %
    (a dict; see the keys) [kg N/ha/yr or eq/ha/yr as named]; `defaults` as in
    :func:`exceedance_rows`."""
    out = {}
    r = defaults if defaults is not None else drawn(study, res)
    row = _span_exceedance(study, r)
    out["point_exceedance"] = float(row["ex_acidity_eq_ha_yr"])
    out["n95"] = float(row["n_dep_eq_ha_yr_p95"])
    nh3 = _span_rows(r)
    nh3 = nh3[nh3["species"] == "NH3"].iloc[0]
    out["nh3_eq_p50"] = float(nh3["flux_eq_ha_yr_p50"])
    out["nh3_eq_p95"] = float(nh3["flux_eq_ha_yr_p95"])
    s = _span_rows(res)
    n_rows = s[s["element"] == "N"].set_index(["pathway", "species"])
    out["n_total_kg"] = float(n_rows.loc[("total", "all"), "flux_kg_ha_yr"])
    out["n_total_eq"] = float(n_rows.loc[("total", "all"), "flux_eq_ha_yr"])
    out["s_total_eq"] = float(s[(s["element"] == "S") & (s["pathway"] == "total")]
                              ["flux_eq_ha_yr"].iloc[0])
    out["nh3_kg"] = float(n_rows.loc[("dry", "NH3"), "flux_kg_ha_yr"])
    out["nh3_eq"] = float(n_rows.loc[("dry", "NH3"), "flux_eq_ha_yr"])
    out["wet_n_kg"] = float(n_rows.loc[("wet", "all"), "flux_kg_ha_yr"])
    out["other_dry_n_kg"] = float(n_rows.loc[("dry", "all"), "flux_kg_ha_yr"]) - out["nh3_kg"]
    return out


#: The numbers of draws of the section's "95 % of a few draws" figures.
DRAW_COUNTS = (100, 200, 500, 5000)


def draw_count_figures(study, res):
    """{draws: 95 % of the span's acidity exceedance [eq/ha/yr]} for :data:`DRAW_COUNTS`."""
    return {n: float(_span_exceedance(study, drawn(study, res, draws=n))
                     ["ex_acidity_eq_ha_yr_p95"]) for n in DRAW_COUNTS}


def bidirectional_figures(bstudy, bres):
    """The farm's crops under the bidirectional NH3: the least and largest yearly share
    net / deposition-only [-] and the 95 % of the span's N total at 2,000 draws
    [eq/ha/yr]."""
    t = bres.table
    y = t[(t["site"] == "farm") & (t["receptor"] == "crops") & (t["species"] == "NH3")
          & (t["period"] != "span")]
    share = (y["nh3_net_kg_ha"] / y["nh3_deposition_only_kg_ha"]).to_numpy()
    return {"net_share_min": float(share.min()), "net_share_max": float(share.max()),
            "n95": float(_span_exceedance(bstudy, drawn(bstudy, bres))["n_dep_eq_ha_yr_p95"])}


def farm_ranges(r, receptor):
    """{(period, element): "p05-p95"} of the total S and N [kg/ha/yr], 2 decimals, of the
    farm's `receptor` in the drawn result `r`, for the span and 2020."""
    t = r.table
    out = {}
    for period in ("span", "2020"):
        for element in ("S", "N"):
            row = t[(t["site"] == "farm") & (t["receptor"] == receptor)
                    & (t["period"].astype(str) == period) & (t["element"] == element)
                    & (t["pathway"] == "total")].iloc[0]
            out[period, element] = (f"{row['flux_kg_ha_yr_p05']:.2f}-"
                                    f"{row['flux_kg_ha_yr_p95']:.2f}")
    return out


def farm_grass_ranges(r):
    """:func:`farm_ranges` of the farm's grass (the systematic errors' tables)."""
    return farm_ranges(r, "grass")


def gamma_rows(default_run, high_run):
    """{case: (gsd 1 cell, gsd 3 cell)} of the document's table [kg N/ha], 5/50/95 %:
    `default_run` the farm's 2020 under the bidirectional NH3 with the class default,
    `high_run` its 2023 with Gamma_s of crops :data:`GAMMA_CROPS`."""
    out = {}
    for (study, res), year, nh3_fmt, label in (
            (default_run, "2020", "{:.2f}", "default"), (high_run, "2023", "{:.1f}", "high")):
        cells = {"NH3": [], "N": []}
        for gsd in (1.0, 3.0):
            t = drawn(study, res, nh3_gamma_gsd=gsd).table
            t = t[(t["site"] == "farm") & (t["receptor"] == "crops")
                  & (t["period"].astype(str) == year)]
            nh3 = t[t["species"] == "NH3"].iloc[0]
            tot = t[(t["element"] == "N") & (t["pathway"] == "total")].iloc[0]
            cells["NH3"].append(_q(nh3, "flux_kg_ha", nh3_fmt).replace("-", "−"))
            cells["N"].append(_q(tot, "flux_kg_ha", nh3_fmt).replace("-", "−"))
        out[label, "NH3"] = tuple(cells["NH3"])
        out[label, "N"] = tuple(cells["N"])
        t = res.table
        row = t[(t["site"] == "farm") & (t["receptor"] == "crops") & (t["species"] == "NH3")
                & (t["period"].astype(str) == year)].iloc[0]
        out[label, "net_share"] = float(row["nh3_net_kg_ha"] / row["nh3_deposition_only_kg_ha"])
    return out


def gamma_runs(folder):
    """The two runs of :func:`gamma_rows` (folders under `folder`)."""
    folder = Path(folder)
    bi = 'nh3_treatment = "bidirectional"'
    return (farm_run(folder / "default", 2020, 2020, bi),
            farm_run(folder / "high", 2023, 2023,
                     f"{bi}\nnh3_emission_potential = {{ crops = {GAMMA_CROPS} }}"))


def main():
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        study, res = farm_run(tmp / "farm")
        defaults = drawn(study, res)
        for label, cells in exceedance_rows(study, res, defaults).items():
            print(f"| {label} | {cells} |")
        print("farm grass", farm_grass_ranges(defaults))
        print("farm crops", farm_ranges(defaults, "crops"))
        for key, value in span_figures(study, res, defaults).items():
            print(f"{key}: {value:.4f}")
        for n, value in draw_count_figures(study, res).items():
            print(f"95 % of the exceedance, {n} draws: {value:.1f}")
        bi = farm_run(tmp / "bi", dry='nh3_treatment = "bidirectional"')
        for key, value in bidirectional_figures(*bi).items():
            print(f"bidirectional {key}: {value:.4f}")
        for key, value in gamma_rows(*gamma_runs(tmp / "gamma")).items():
            print(key, value)


if __name__ == "__main__":
    main()
