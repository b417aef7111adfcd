"""Where the width of a Monte Carlo range comes from: each drawn factor's share of the
variance of a total (docs/methods_uncertainty.md, "Where a range's width comes from").

The draws of :func:`.montecarlo.monte_carlo` are redrawn with one factor's spread at a
time, every other spread set to its neutral value (0, a GSD of 1, a split range of
[0, 0]).  Every factor has streams of its own named by what it draws for
(:mod:`.noise`), so a factor drawn alone takes exactly the numbers it takes in the full
draw; its first-order share of a total Y is

.. math:: S_i = \\mathrm{Var}(Y \\mid \\text{factor } i \\text{ alone}) / \\mathrm{Var}(Y)

which for a sum of independent terms, :math:`Y = a + \\sum_i b_i X_i`, is
:math:`b_i^2 \\mathrm{Var}X_i / \\sum_j b_j^2 \\mathrm{Var}X_j` (the Sobol first-order
index of a linear model, Saltelli et al. 2008, Global Sensitivity Analysis: The
Primer, Wiley, ch. 1; from memory).  The rest, :math:`1 - \\sum_i S_i`, is what the
factors do together: products of factors (a Vd factor times an analytical error) and
the covariance of factors drawn correlated.  The Vd model factor ``vd_gsd`` is one
factor (its species are drawn correlated through ``vd_shared_fraction``), with each
species' part beside it (``part_of = "vd_gsd"``, not counted in the sum).

Units: the quantiles [kg ha-1 yr-1] of the element (S or N) for the span, [kg ha-1]
per period; shares [1].
"""
from __future__ import annotations

import dataclasses

import numpy as np
import pandas as pd

from ..budget_components import COMPONENTS
from ..units import element_deposition_in
from .layer import DRY_SPECIES, linear_layer
from .montecarlo import _span_draws
from .noise import site_noise
from .pairnoise import with_pair_shift
from .quantile_tables import QUANTILES, TOTALS
from .sitedraws import component_draws, totals_of
from .uncertainty_options import PAIR_SHIFT_PAIRS, UncertaintyOptions

#: The drawn factors of :class:`UncertaintyOptions`: option -> its neutral value (the
#: factor not drawn).  The other fields set how factors are drawn (seed, correlations,
#: ``systematic_errors``), not a spread.
FACTORS = {
    "vd_gsd": None,                      # every species' GSD 1 (see _neutral)
    "vd_site_gsd": 1.0,
    "air_rel_sd": 0.0,
    "lab_bias_air_rel_sd": 0.0,
    "censored_rel_sd": 0.0,
    "vd_fill_rel_sd": 0.0,
    "precip_conc_rel_sd": 0.0,
    "lab_bias_precip_rel_sd": 0.0,
    "gauge_catch_rel_sd": 0.0,
    "depth_rel_sd": 0.0,
    "pwm_fill_rel_sd": 0.0,
    "bulk_factor_rel_sd": 0.0,
    "nh3_gamma_gsd": 1.0,
    **{f"pair_shift_{p}": (0.0, 0.0) for p in PAIR_SHIFT_PAIRS},
}

#: The element (S or N) of each dry species.
_ELEMENT = {c[2]: c[0] for c in COMPONENTS if c[1] == "dry"}

#: A share at or below this fraction of the total's variance is 0 [1]: a factor that
#: moves nothing at a site still has a variance of its constant draws of rounding size
#: (np.var of 200 equal numbers x: up to about (2e-16 x)^2, a share near 1e-29), and
#: the rest 1 - the sum of the shares of a single factor is 0 to about 1e-16.  1e-12 is
#: our choice: far above the rounding, far below a share the tables show (3 decimals; a
#: factor whose spread alone is a millionth of the total's).
ZERO_SHARE_REL = 1e-12

#: The columns of :func:`variance_shares`' table.
COLUMNS = ("site", "receptor", "period", "total", "factor", "part_of", "variance_share",
           "log_variance_share", "alone_p05", "alone_p50", "alone_p95", "unit")


def _neutral(opt: UncertaintyOptions) -> dict:
    """The option values that draw no factor at all."""
    out = {k: v for k, v in FACTORS.items() if k != "vd_gsd"}
    out["vd_gsd"] = {sp: 1.0 for sp in opt.vd_gsd}
    return out


def _drawn(opt: UncertaintyOptions, elements=("S", "N")) -> list:
    """``(name, part_of, overrides)`` of each factor `opt` draws: the overrides switch
    on that factor alone over :func:`_neutral`; the Vd species' parts of the species of
    `elements` only."""
    neutral = _neutral(opt)
    out = []
    for name in FACTORS:
        value = getattr(opt, name)
        if value == neutral[name]:
            continue
        out.append((name, "", {name: value}))
        if name == "vd_gsd":
            out += [(f"vd_gsd.{sp}", "vd_gsd", {"vd_gsd": {**neutral["vd_gsd"], sp: opt.gsd(sp)}})
                    for sp in DRY_SPECIES if opt.gsd(sp) > 1.0 and _ELEMENT[sp] in elements]
    return out


def first_order_shares(full: np.ndarray, alone: dict, log: bool = False) -> tuple:
    """First-order variance shares of draws (the draws along axis 0).

    Parameters
    ----------
    full : ndarray (D, ...)
        Draws of a quantity with every factor drawn [any unit].
    alone : dict
        Factor -> ndarray (D, ...): the draws of the same quantity with that factor
        alone drawn (the same numbers as in `full`) [the unit of `full`].
    log : bool
        Shares of the variance of ln Y rather than of Y (NaN where a draw, of `full` or
        of a factor alone, is not above 0).  For a product of independent factors
        :math:`Y = a \\prod_i F_i` they add to 1 exactly: :math:`\\ln Y = \\ln a +
        \\sum_i \\ln F_i`; and the 5-95 % width of a log-normal total,
        :math:`\\ln(p_{95}/p_{05}) = 3.29 \\sigma_{\\ln}`, is shared as its square.

    Returns
    -------
    (dict, ndarray)
        Factor -> share (...) [1], Var(alone) / Var(full); and the rest 1 - the sum of
        the shares (...) [1].  NaN where `full` does not vary (or is not finite).  A
        share or a rest within :data:`ZERO_SHARE_REL` of 0 is exactly 0 (a factor that
        moves nothing: its constant draws have a variance of rounding size only).
    """
    if log:
        pos = (full > 0).all(0) & np.logical_and.reduce([(a > 0).all(0) for a in alone.values()]
                                                         or [True])
        with np.errstate(divide="ignore", invalid="ignore"):
            full = np.where(pos, np.log(np.where(full > 0, full, 1.0)), np.nan)
            alone = {k: np.where(pos, np.log(np.where(a > 0, a, 1.0)), np.nan)
                     for k, a in alone.items()}
    v = np.var(full, axis=0)
    ok = np.isfinite(v) & (v > 0)
    den = np.where(ok, v, 1.0)
    shares = {k: zero_to_rounding(np.where(ok, np.var(a, axis=0) / den, np.nan))
              for k, a in alone.items()}
    rest = (zero_to_rounding(1.0 - sum(shares.values())) if shares
            else np.where(ok, 1.0, np.nan))
    return shares, rest


def zero_to_rounding(share):
    """`share` [1] (a share of a variance, or the rest 1 - a sum of shares) with values
    within :data:`ZERO_SHARE_REL` of 0 set to exactly 0.0 (NaN and the others kept).

    >>> zero_to_rounding(np.array([2.3e-29, -1.1e-16, 0.25, 1e-9, np.nan])).tolist()
    [0.0, 0.0, 0.25, 1e-09, nan]
    """
    s = np.asarray(share, dtype=float)
    return np.where(np.abs(s) <= ZERO_SHARE_REL, 0.0, s)


def _moves_nothing(noise) -> bool:
    """Whether a site's drawn factors (:class:`.noise.SiteNoise`) are all neutral: every
    factor 1 (a fill error 0), no bulk, Gamma_s or split factor drawn."""
    if noise.bulk is not None or noise.nh3_gamma or noise.pair_shift:
        return False
    ones = [noise.vd, noise.gauge, noise.gauge_periods, noise.depth,
            *noise.pconc.values(), *noise.air.values(), *noise.pwm_fill.values(),
            *noise.vd_class.values(), *noise.air_seasalt.values()]
    return (all(a is None or np.all(np.asarray(a) == 1.0) for a in ones)
            and all(np.all(a == 0.0) for a in noise.vd_fill.values()))


def _totals(lay, k, opt, n_years, year0, which, shift, still=None):
    """(D, R, P', T) draws of the totals of site `k` [mol m-2 (yr-1 for the span)];
    `still`, the draws with no factor drawn, is returned as it is where `opt` moves
    nothing at this site (a factor the site does not have: no component is drawn)."""
    ds = lay.budget
    key = (opt.seed, str(ds["site"].values[k]))
    noise = site_noise(lay.sites[k], opt, opt.draws, n_years, ds.sizes["period"], key, year0,
                       (ds["period_start"].values, ds["period_end"].values))
    if shift and opt.shifts_pairs:
        with_pair_shift(noise, lay.sites[k], opt, key, n_years, year0)
    if still is not None and _moves_nothing(noise):
        return still
    comp = component_draws(lay, k, noise, year0)
    tot = totals_of(comp)
    if which == "span":
        _, t = _span_draws(ds.isel(site=k), comp, tot)            # (D, R, T)
        return t[:, :, None, :]
    return np.stack([tot[n] for n in TOTALS], -1)                 # (D, R, P, T)


def variance_shares(result, study, options: UncertaintyOptions, which: str = "span",
                    sites=None, totals=("S_dry", "N_dry", "S_total", "N_total"),
                    overrides=None, layer=None) -> pd.DataFrame:
    """Each drawn factor's share of the variance of the Monte Carlo draws of the totals.

    Parameters
    ----------
    result : workbench.pipeline.Result
    study : workbench.pipeline.Study
        The study that computed `result` (its cached stages are read, nothing re-run).
    options : UncertaintyOptions
        With ``draws`` >= 2 (the same draws and seed as the run's Monte Carlo give the
        same full draws as its quantiles).
    which : {"span", "budget"}
        The span's mean yearly rate (as the span rows of budget.csv, period "span") or
        each period of the budget.
    sites : sequence of str, optional
        The sites (default: every site).
    totals : sequence of str
        Of :data:`.quantile_tables.TOTALS`.
    overrides : dict, optional
        The site overrides `result` was run with.
    layer : LinearLayer, optional
        The linear layer already built (of the years for "span", of the budget else).

    Returns
    -------
    pandas.DataFrame
        :data:`COLUMNS`: per site, receptor, period and total, a row per drawn factor
        (``variance_share`` its first-order share of the variance [1],
        ``log_variance_share`` of the variance of the logarithm, NaN where a draw is not
        above 0 [1]; ``alone_p05`` ... ``alone_p95``
        the quantiles of the total with that factor alone drawn [``unit``]), a row
        ``all`` (every factor: share 1 and the run's own quantiles) and a row
        ``together`` (1 - the sum of the factors' shares, the parts not counted: what
        the factors do jointly).  Receptors whose total is not drawn (NaN) are left
        out.
    """
    if which not in ("span", "budget"):
        raise ValueError(f"variance_shares: which = {which!r}; expected 'span' or 'budget'")
    if options.draws < 2:
        raise ValueError("variance_shares needs UncertaintyOptions.draws >= 2")
    bad = [t for t in totals if t not in TOTALS]
    if bad:
        raise ValueError(f"variance_shares: unknown total {bad[0]!r}; expected one of "
                         f"{', '.join(TOTALS)}")
    shift = options.shifts_pairs
    if layer is None:
        layer = linear_layer(result, study, "years" if which == "span" else "budget",
                             overrides, shift, options.vd_follows_air)
    ds = layer.budget
    year0 = int(layer.period_year.min())
    n_years = int(layer.period_year.max()) - year0 + 1
    names = [str(s) for s in ds["site"].values]
    wanted = names if sites is None else list(sites)
    missing = [s for s in wanted if s not in names]
    if missing:
        raise ValueError(f"variance_shares: site {missing[0]!r} is not in the run")
    neutral = _neutral(options)
    factors = _drawn(options, {t[0] for t in totals})
    ti = [TOTALS.index(t) for t in totals]
    periods = ["span"] if which == "span" else [str(p) for p in ds["period"].values]
    unit = "kg ha-1 yr-1" if which == "span" else "kg ha-1"
    q = np.asarray(QUANTILES)
    frames = []
    for site in wanted:
        k = names.index(site)
        # a species the site does not sample has no part of its own
        here = [f for f in factors if f[1] != "vd_gsd"
                or f[0].split(".", 1)[1] in layer.sites[k].dry]
        full = _totals(layer, k, options, n_years, year0, which, shift)[..., ti]
        still = _totals(layer, k, dataclasses.replace(options, **neutral), n_years, year0,
                        which, shift)
        alone = {name: _totals(layer, k, dataclasses.replace(options, **{**neutral, **on}),
                               n_years, year0, which, shift, still)[..., ti]
                 for name, _, on in here}
        part_of = {name: p for name, p, _ in here}
        main = [n for n in alone if not part_of[n]]
        lin, rest = first_order_shares(full, alone)
        lg, rest_lg = first_order_shares(full, alone, log=True)
        if main:
            rest = zero_to_rounding(1.0 - sum(lin[n] for n in main))
            rest_lg = zero_to_rounding(1.0 - sum(lg[n] for n in main))
        one = (np.where(np.isfinite(rest), 1.0, np.nan), np.where(np.isfinite(rest_lg), 1.0,
                                                                  np.nan))
        rows = [("all", "", one, full)]
        rows += [(n, part_of[n], (lin[n], lg[n]), alone[n]) for n in alone]
        rows.append(("together", "", (rest, rest_lg), None))
        r_idx, p_idx, t_idx = np.meshgrid(np.arange(full.shape[1]), np.arange(full.shape[2]),
                                          np.arange(len(ti)), indexing="ij")
        finite = np.isfinite(full).all(0)
        for name, of, share, draws in rows:
            if draws is None:
                qs = np.full((3,) + full.shape[1:], np.nan)
            else:
                with np.errstate(invalid="ignore"):
                    qs = np.quantile(draws, q, axis=0)
                for j, t in enumerate(totals):
                    qs[..., j] = element_deposition_in(qs[..., j], t[0], "kg_ha")
            frames.append(pd.DataFrame({
                "site": site, "receptor": np.asarray(ds["receptor"].values)[r_idx[finite]],
                "period": np.asarray(periods)[p_idx[finite]],
                "total": np.asarray(totals)[t_idx[finite]], "factor": name, "part_of": of,
                "variance_share": np.broadcast_to(share[0], full.shape[1:])[finite],
                "log_variance_share": np.broadcast_to(share[1], full.shape[1:])[finite],
                "alone_p05": qs[0][finite], "alone_p50": qs[1][finite], "alone_p95": qs[2][finite],
                "unit": unit}))
    out = pd.concat(frames, ignore_index=True) if frames else pd.DataFrame(columns=COLUMNS)
    order = {n: i for i, n in enumerate(["all"] + [f for f, _, _ in factors] + ["together"])}
    out = out.assign(_o=out["factor"].map(order)).sort_values(
        ["site", "receptor", "period", "total", "_o"], kind="stable").drop(columns="_o")
    return out.reset_index(drop=True)[list(COLUMNS)]
