"""The Monte Carlo of a run summarised: its quantiles and the draws kept of the annual
totals (:mod:`.uncertainty` gives the equations).

:func:`monte_carlo` draws every site of the linear layer (:mod:`.layer`) with
:func:`.sitedraws.component_draws` and keeps the 5, 50 and 95 % quantiles of every
component and total per period, and of the mean yearly rate over the years that pass
completeness, in a :class:`BudgetQuantiles`, with the draws themselves of the annual
S and N totals (:func:`annual_total_draws`).

Units: deposition [mol m-2] per period, [mol m-2 yr-1] for the span; potential
acidity [eq ha-1]; the kept draws [eq ha-1 yr-1].
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import xarray as xr

from ..budget import COMPONENTS
from ..units import element_deposition_in
from .layer import linear_layer
from .noise import site_noise
from .pairnoise import with_pair_shift
from .quantile_tables import QUANTILES, TOTALS
from .sitedraws import component_draws, totals_of
from .uncertainty_options import UncertaintyOptions, pair_shift_refusal


@dataclass
class BudgetQuantiles:
    """5, 50 and 95 % quantiles of the draws of a run.

    ``budget`` (None when asked for the years only) and ``years``: Datasets with a
    ``quantile`` dimension first and the dims
    of the budget (``deposition`` [mol m-2] per component, ``total_deposition`` per
    total, ``oxidized_N``, ``reduced_N`` [mol m-2], ``potential_acidity`` [eq ha-1]);
    ``span``: the same for the mean yearly rate of the years that pass completeness
    (dims quantile, site, receptor, component / total) [mol m-2 yr-1].
    """

    budget: xr.Dataset
    years: xr.Dataset
    span: xr.Dataset
    options: UncertaintyOptions
    #: The draws themselves of the annual S and N totals, see :func:`annual_total_draws`.
    total_draws: xr.Dataset | None = None
    #: Whether a bulk collector's factor was drawn at any site (``bulk_correction =
    #: "scale_wet"``, a site with a bulk part and ``bulk_factor_rel_sd`` > 0): the
    #: report names the factor only then.
    bulk_drawn: bool = False
    #: Whether the stomatal NH3 emission potential's factor was drawn at any site
    #: (``nh3_treatment = "bidirectional"``, a site whose NH3 has an emission part, and
    #: ``nh3_gamma_gsd`` > 1): the report names the factor only then.
    nh3_gamma_drawn: bool = False
    #: The pairs whose gas/particle split was drawn at some site (``pair_shift_<pair>``
    #: not [0, 0], both members measured, ``pair_split = "measured"``).
    pair_shift_drawn: tuple = ()
    #: The ``[dry]`` options whose velocity the draws followed on the grid of the air
    #: ratio (``vd_follows_air``, :mod:`.airvd`): ``so2_codeposition``,
    #: ``nh3_acid_ratio_from_air``.
    air_vd_followed: tuple = ()
    #: The draws whose velocity was held at the grid's end (the factor of the ratio over
    #: a sample outside ``airvd.GRID_FACTORS``): ``(site, species, draws, held draws,
    #: held sample draws, sample draws)`` of each site and species with one
    #: (:func:`.airvd.held`; named in the report and on the console).
    air_vd_held: tuple = ()


def _span_draws(ds, comp, tot):
    """Mean yearly rate over the years whose element total passes (as span_table).

    A year passes as in :func:`workbench.tables.span_table`: the budget's own
    ``total_passes`` (a total ``flagged`` only for kept flagged samples or a sulfate
    fallback passes), else a total neither ``flagged`` nor ``missing``; of those, the
    years whose total holds every component the others hold
    (:func:`workbench.tables.fullest_years`).
    """
    fac = ds["annual_factor"].values                             # (Y,)
    status = ds["total_status"].values                           # (R, Y, T) of one site
    passes = ds["total_passes"].values.astype(bool) if "total_passes" in ds else None
    names = list(ds["total"].values)
    out_c, out_t = [], []
    el_c = np.array([c[0] for c in COMPONENTS])
    for e in ("S", "N"):
        k = names.index(f"{e}_total")
        ok = (passes[..., k] if passes is not None
              else ~np.isin(status[..., k], ["flagged", "missing"]))   # (R, Y)
        if "total_missing_components" in ds:       # years of a smaller sum left out
            from ..tables import fullest_years
            ok = fullest_years(ok, ds["total_missing_components"].values[..., k])
        out_c.append((e, ok))
    comp_y = comp * fac[None, None, :, None]
    with np.errstate(invalid="ignore"):
        c_mean = np.full(comp.shape[:2] + comp.shape[3:], np.nan)
        t_mean = {}
        for e, ok in out_c:
            w = np.where(ok, 1.0, np.nan)[None, :, :]                # (1, R, Y)
            sel = el_c == e
            v = comp_y[..., sel] * w[..., None]
            has = ok.any(-1)[None, :, None]
            c_mean[..., sel] = np.where(has, _nanmean(v, 2), np.nan)
            for p in ("wet", "dry", "total"):
                t_mean[f"{e}_{p}"] = np.where(ok.any(-1)[None], _nanmean(
                    tot[f"{e}_{p}"] * fac[None, None, :] * w, 2), np.nan)
    out_t = np.stack([t_mean[n] for n in TOTALS], -1)
    return c_mean, out_t


def _nanmean(v, axis):
    n = np.isfinite(v).sum(axis)
    s = np.nansum(v, axis)
    return np.where(n > 0, s / np.maximum(n, 1), np.nan)


def monte_carlo(result, study, options: UncertaintyOptions, layers=None, overrides=None,
                years_only=False) -> BudgetQuantiles:
    """Quantiles of every component and total of a run, from ``options.draws`` draws.

    Parameters
    ----------
    result : workbench.pipeline.Result
    study : workbench.pipeline.Study
        The study that computed `result` (only its cached stages are read).
    options : UncertaintyOptions
    layers : dict, optional
        ``{"budget": LinearLayer, "years": LinearLayer}`` already built.
    overrides : dict, optional
        The site overrides `result` was run with (the apps' ``Study.run(overrides=)``).
    years_only : bool
        The yearly budget and the span only (``budget`` of the result is None).

    Returns
    -------
    BudgetQuantiles
    """
    if options.draws < 1:
        raise ValueError("UncertaintyOptions.draws must be >= 1 for a Monte Carlo")
    refused = pair_shift_refusal(result.options.get("dry"), options)
    if refused is not None:
        raise ValueError(f"UncertaintyOptions.{refused[0]}: {refused[1]}; use a fixed "
                         "nh3_acid_ratio or leave the split as measured ([0, 0])")
    from .airvd import TARGETS, refusal
    why = refusal(result.options.get("dry"), result.options.get("budget"), options)
    if why is not None:
        raise ValueError(f"UncertaintyOptions.vd_follows_air = true: {why}")
    follow = bool(options.vd_follows_air)
    if layers is None:
        shift = options.shifts_pairs          # the rows a drawn gas/particle split moves
        layers = ({} if years_only else
                  {"budget": linear_layer(result, study, "budget", overrides, shift, follow)})
        layers["years"] = (layers["budget"] if result.years is result.budget and not years_only
                           else linear_layer(result, study, "years", overrides, shift, follow))
    else:
        layers = _layers_as_asked(layers, follow)
    years = np.concatenate([lay.period_year for lay in layers.values()])
    year0, n_years = int(years.min()), int(years.max() - years.min() + 1)
    q = np.asarray(QUANTILES)
    out = {}
    span_c, span_t, kept = [], [], []
    bulk_drawn = gamma_drawn = False
    shift_drawn = set()
    held = []
    for which, lay in sorted(layers.items(), key=lambda kv: kv[0] != "years"):
        if which == "budget" and lay is layers.get("years"):
            out[which] = out["years"]                # a yearly run: the same draws
            continue
        ds = lay.budget
        n_s, n_r, n_p, n_c = ds["deposition"].shape
        comp_q = np.full((len(q), n_s, n_r, n_p, n_c), np.nan)
        tot_q = {name: np.full((len(q), n_s, n_r, n_p), np.nan)
                 for name in TOTALS + ("oxidized_N", "reduced_N", "potential_acidity")}
        for k in range(n_s):
            key = (options.seed, str(ds["site"].values[k]))
            noise = site_noise(lay.sites[k], options, options.draws, n_years, n_p, key, year0,
                               (ds["period_start"].values, ds["period_end"].values))
            if options.shifts_pairs:
                with_pair_shift(noise, lay.sites[k], options, key, n_years, year0)
            bulk_drawn |= noise.bulk is not None
            gamma_drawn |= noise.nh3_gamma is not None
            shift_drawn.update(noise.pair_shift or ())
            if follow and which == "years" and getattr(lay.sites[k], "air_vd", None):
                from .airvd import held as _held       # counted once, on the years' draws
                held.extend(_held(ds["site"].values[k], lay.sites[k].air_vd, noise.air))
            comp = component_draws(lay, k, noise, year0)
            tot = totals_of(comp)
            comp_q[:, k] = np.quantile(comp, q, axis=0)
            for name, v in tot.items():
                tot_q[name][:, k] = np.quantile(v, q, axis=0)
            if which == "years":
                c, t = _span_draws(ds.isel(site=k), comp, tot)
                span_c.append(np.quantile(c, q, axis=0))
                span_t.append(np.quantile(t, q, axis=0))
                kept.append(_annual_draws(tot, t, ds["annual_factor"].values))
        dims = ("quantile", "site", "receptor", "period")
        out[which] = xr.Dataset(
            {"deposition": (dims + ("component",), comp_q, {"units": "mol m-2"}),
             "total_deposition": (dims + ("total",), np.stack([tot_q[n] for n in TOTALS], -1),
                                  {"units": "mol m-2"}),
             "oxidized_N": (dims, tot_q["oxidized_N"], {"units": "mol m-2"}),
             "reduced_N": (dims, tot_q["reduced_N"], {"units": "mol m-2"}),
             "potential_acidity": (dims, tot_q["potential_acidity"], {"units": "eq ha-1"})},
            coords={"quantile": q, "site": ds["site"].values, "receptor": ds["receptor"].values,
                    "period": ds["period"].values, "component": ds["component"].values,
                    "total": list(TOTALS)})
    yds = layers["years"].budget
    span = xr.Dataset(
        {"deposition": (("quantile", "site", "receptor", "component"),
                        np.stack(span_c, 1), {"units": "mol m-2 yr-1"}),
         "total_deposition": (("quantile", "site", "receptor", "total"), np.stack(span_t, 1),
                              {"units": "mol m-2 yr-1"})},
        coords={"quantile": q, "site": yds["site"].values, "receptor": yds["receptor"].values,
                "component": yds["component"].values, "total": list(TOTALS)})
    per = [str(p) for p in yds["period"].values] + ["span"]
    kept = np.stack(kept, 2)                                     # (2, D, S, R, P + 1)
    draws = xr.Dataset(
        {f"{e}_dep_eq_ha_yr": (("draw", "site", "receptor", "period"), kept[i],
                               {"units": "eq ha-1 yr-1"}) for i, e in enumerate("sn")},
        coords={"draw": np.arange(options.draws), "site": yds["site"].values,
                "receptor": yds["receptor"].values, "period": per})
    followed = tuple(k for k in TARGETS if follow and getattr(result.options.get("dry"), k, False))
    return BudgetQuantiles(out.get("budget"), out["years"], span, options, draws, bulk_drawn,
                           gamma_drawn, tuple(sorted(shift_drawn)), followed,
                           tuple(held))


def _layers_as_asked(layers: dict, follow: bool) -> dict:
    """The layers handed to :func:`monte_carlo`, checked against ``vd_follows_air``.

    On, a layer built without the grid of the air ratio is refused: its draws would
    keep the velocities of the measured air while the run, its report and its console
    said they follow the drawn air.  Refused rather than reported as held, as the
    module does with every other case where the option cannot do what it says
    (:func:`.airvd.refusal`, the grid's samples differing from the point's in
    :func:`.airvd.grid_pieces`): the option is asked for by name, the report and
    budget.nc's attributes read it from the options, and a layer without the grid is
    a mistake of the caller, not a property of the data.  Off, a layer built with the
    grid is used without it (a copy; the caller's is not changed), so that the draws
    are those of a layer built without it (:func:`.sitedraws.dry_draws` takes a grid
    wherever a site holds one)."""
    if follow:
        bare = [w for w, lay in layers.items() if not getattr(lay, "air_vd_grid", False)]
        if bare:
            raise ValueError(
                "UncertaintyOptions.vd_follows_air = true: the layers handed to monte_carlo "
                f"({', '.join(sorted(bare))}) were built without the grid of the air ratio, "
                "so the draws would keep the velocities of the measured air; build them "
                "with linear_layer(result, study, which, overrides, pair_shift, "
                "air_vd=True), or leave layers=None")
        return layers
    if not any(getattr(lay, "air_vd_grid", False) for lay in layers.values()):
        return layers
    import dataclasses
    out = {}
    for which, lay in layers.items():
        # a layer shared by two names (the budget's as the years') stays shared
        same = next((out[w] for w in out if layers[w] is lay), None)
        out[which] = same if same is not None else dataclasses.replace(
            lay, sites=[dataclasses.replace(s, air_vd={}) for s in lay.sites],
            air_vd_grid=False)
    return out


def _annual_draws(tot, span_t, annual_factor):
    """The draws of the S and N totals of one site as yearly rates: (2, D, R, P + 1)
    [eq ha-1 yr-1], the calendar years then the span mean (``tot`` (D, R, P) [mol m-2],
    ``span_t`` (D, R, T) [mol m-2 yr-1])."""
    out = []
    for e in ("S", "N"):
        yearly = tot[f"{e}_total"] * annual_factor[None, None, :]
        both = np.concatenate([yearly, span_t[..., TOTALS.index(f"{e}_total"), None]], -1)
        out.append(element_deposition_in(both, e, "eq_ha"))
    return np.stack(out)


def annual_total_draws(result) -> xr.Dataset | None:
    """The Monte Carlo draws of the annual S and N totals of a run, or None.

    Parameters
    ----------
    result : workbench.pipeline.Result
        As returned by :func:`.uncertainty.with_uncertainty` (its
        ``options["uncertainty"]``).

    Returns
    -------
    Dataset or None
        ``s_dep_eq_ha_yr`` and ``n_dep_eq_ha_yr`` [eq ha-1 yr-1] with dims (draw, site,
        receptor, period), the periods being the calendar years (as in budget.csv) and
        ``span`` (the mean yearly rate of the years that pass completeness); None when
        the run carries no draws (``[uncertainty] draws = 0``).  The same draws as the
        quantiles of budget.csv, not new ones.
    """
    q = result.options.get("uncertainty") if hasattr(result, "options") else None
    return getattr(q, "total_draws", None)
