"""The draws of every component of one site and their totals (the Monte Carlo of
:mod:`.uncertainty`, whose docstring gives the equations).

:func:`component_draws` applies a site's drawn factors (:mod:`.noise`) to the pieces
of the linear layer (:mod:`.layer`): the dry side through :mod:`.drydraws`, the wet
side through :mod:`.wetdraws` and a bulk collector's part through :mod:`.bulk`;
:func:`totals_of` sums the drawn components into the budget's totals.

Units: deposition [mol m-2], potential acidity [eq ha-1], factors and ratios [1].
"""
from __future__ import annotations

import numpy as np

from ..budget_components import COMPONENTS
# the sums of the budget's own totals and derived quantities (one definition)
from ..budget_derived import nitrogen_forms, potential_acidity
from ..budget_totals import sum_present
from .bulk import HELD, PRECIP, apply_bulk
from .drydraws import dry_ratio, nh3_net_draws, nss_dry_draws
from .layer import DRY_SPECIES, LinearLayer
from .noise import SiteNoise
from .pairdraws import apply_pair_shift
from .wetdraws import _gauge_by_piece, wet_ratios


def component_draws(layer: LinearLayer, site: int, noise: SiteNoise, year0: int) -> np.ndarray:
    """Draws of every component at one site: (D, R, P, C) [mol m-2].

    Parameters
    ----------
    layer : LinearLayer
    site : int
        Row of the site in ``layer.budget.site``.
    noise : SiteNoise
    year0 : int
        Year of the first entry of the year axis of `noise`.
    """
    ds = layer.budget
    point = ds["deposition"].values[site]                            # (R, P, C)
    n_r, n_p, n_c = point.shape
    d = noise.vd.shape[0]
    yi = layer.period_year - year0
    ratio = np.ones((d, n_r, n_p, n_c))
    ls = layer.sites[site]
    dry = {}
    for j, (_, path, sp) in enumerate(COMPONENTS):
        if path == "dry" and sp in ls.dry:
            dry[j] = dry_draws(layer, site, noise, sp, noise.air, year0)
    if ls.wet is not None:
        wanted = set(layer.wet_component.values())
        gauge, piece = noise.gauge[:, yi], None
        gp = noise.gauge_periods
        if gp is not None and gp.shape[2] > 1 and ls.wet.start is not None:
            gauge, piece = _gauge_by_piece(ls, gp, yi, ds)
        parts = getattr(ls, "bulk_part", {})
        # a period holding a collector change: its bulk share redrawn with the samples
        beta = getattr(ls, "bulk_beta", None)
        keys = sorted({("precip" if m == PRECIP else layer.wet_component[j])
                       for j, p in parts.items() for m in np.unique(p.redraw) if m != HELD})
        bulk = (beta, keys) if beta is not None and keys else None
        wr = wet_ratios(ls.wet, ls.pwm, ls.wet_filled, gauge, noise.depth,
                        noise.pconc, noise.pwm_fill, n_p, wanted, layer.tracer, piece, bulk)
        wr, shares = wr if bulk is not None else (wr, {})
        for j, ion in layer.wet_component.items():
            if ion in wr:
                r = wr[ion]
                p = parts.get(j)
                if p is not None and (noise.bulk is not None or shares):
                    # the bulk samples' part takes the drawn bulk_wet_factor (and, in a
                    # period holding a collector change, its drawn share)
                    sh = (np.where(p.redraw[None, :] == PRECIP, shares.get("precip", np.nan),
                                   shares.get(ion, np.nan)) if shares else None)
                    u = noise.bulk
                    if isinstance(u, dict):       # each ion its own factor (its component's)
                        u = u.get(COMPONENTS[j][2])
                    r = apply_bulk(r, p, None if u is None else u[:, yi], sh)
                ratio[..., j] = r[:, None, :]
    out = point[None] * ratio
    for j, drawn in dry.items():
        out[..., j] = drawn
    if getattr(noise, "pair_shift", None):
        # the drawn gas/particle split of a filter pack's pairs (pair_shift_<pair>)
        apply_pair_shift(layer, site, noise, year0, out,
                         lambda sp, air: dry_draws(layer, site, noise, sp, air, year0))
    return out


def dry_draws(layer: LinearLayer, site: int, noise: SiteNoise, sp: str, air: dict,
              year0: int) -> np.ndarray:
    """Draws of the dry component of species `sp` at one site: (D, R, P) [mol m-2].

    `air` species -> (D, n) the multiplicative errors of each row's concentration
    [1] (``noise.air``, or those of a drawn gas/particle split,
    :func:`.pairdraws.apply_pair_shift`).  The point times the drawn ratio
    (:func:`.drydraws.dry_ratio`), but the non-sea-salt pSO4 and the net NH3 exchange
    drawn directly where the point is that sum."""
    ds = layer.budget
    j = [c[1:] for c in COMPONENTS].index(("dry", sp))
    pt = ds["deposition"].values[site][..., j]                       # (R, P)
    yi = layer.period_year - year0
    ls = layer.sites[site]
    k = DRY_SPECIES.index(sp)
    pc = ls.dry[sp]
    cf = ({c: f[:, yi, k] for c, f in noise.vd_class.items()}
          if noise.vd_class and pc.klass is not None else None)
    grid = getattr(ls, "air_vd", {}).get(sp)
    if grid is not None:
        # its Vd follows the drawn air ([uncertainty] vd_follows_air): each row's part
        # from the grid of the air ratio at the draw's factor of the ratio
        from .airvd import dry_ratio_on_grid
        out = pt[None] * dry_ratio_on_grid(pc, noise.vd[:, yi, k], air[sp],
                                           noise.vd_fill[sp], grid.basis(air), cf)
    else:
        out = pt[None] * dry_ratio(pc, noise.vd[:, yi, k], air[sp], noise.vd_fill[sp], cf)
    drawn = same = None
    if (sp == "NH3" and getattr(pc, "exchange", None) is not None
            and ds.attrs.get("nh3_figure") == "net"):
        # the net exchange: the concentration errors on its deposition part only,
        # where the point is that net (not where the budget set it otherwise)
        lin = (pc.exchange.sum(0) - pc.emission.sum(0)).T                 # (R, P)
        same = np.isfinite(pt) & np.isclose(pt, lin, rtol=1e-9, atol=1e-300)
        if same.any():
            g = getattr(noise, "nh3_gamma", None)
            g = None if not g else {c: f[:, yi] for c, f in g.items()}
            drawn = nh3_net_draws(pc, noise.vd[:, yi, k], air[sp], noise.vd_fill[sp], cf, g)
    if pc.seasalt is not None and sp in noise.air_seasalt:
        # non-sea-salt pSO4: drawn as the difference of its two analyses and clipped at
        # 0 as the budget's sum, where the point is that clipped sum (not where the
        # budget set it otherwise, e.g. caught by a bulk collector)
        lin = np.maximum(pc.contrib.sum(0).T, 0.0)                        # (R, P)
        same = np.isfinite(pt) & np.isclose(pt, lin, rtol=1e-9, atol=1e-300)
        if same.any():
            drawn = nss_dry_draws(pc, noise.vd[:, yi, k], air[sp], noise.air_seasalt[sp],
                                  noise.vd_fill[sp], cf)
    if drawn is not None:
        out = np.where(same[None], drawn, out)
    return out


def totals_of(comp: np.ndarray) -> dict:
    """The totals and derived sums of component draws (..., C) [mol m-2].

    Returns
    -------
    dict
        ``S_wet`` ... ``N_total`` [mol m-2], ``oxidized_N``, ``reduced_N`` [mol m-2],
        ``potential_acidity`` [eq ha-1], as in :func:`workbench.budget.derived`
        (the same functions: :func:`workbench.budget_totals.sum_present`,
        :func:`workbench.budget_derived.nitrogen_forms` and
        :func:`workbench.budget_derived.potential_acidity`).
    """
    el = np.array([c[0] for c in COMPONENTS])
    path = np.array([c[1] for c in COMPONENTS])
    sp = np.array([c[2] for c in COMPONENTS])
    out = {}
    for e in ("S", "N"):
        for p in ("wet", "dry", "total"):
            out[f"{e}_{p}"] = sum_present(comp[..., (el == e) & ((path == p) if p != "total"
                                                               else True)])
    out["oxidized_N"], out["reduced_N"] = nitrogen_forms(comp, el, sp)
    out["potential_acidity"] = potential_acidity(out["S_total"], out["oxidized_N"],
                                                 out["reduced_N"])
    return out
