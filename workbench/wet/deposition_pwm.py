"""The precipitation-weighted means of :func:`~workbench.wet.deposition.wet_deposition`:
per site and period, the climatology of a site's own samples and the same with a
period's own samples left out (split from :mod:`workbench.wet.deposition`, which
re-exports every name).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .. import periods as _periods
from .deposition_pieces import _piece_weights, _split
from .pwm import group_sums, precipitation_weighted_mean


_N_SEASONS = len(_periods.SEASON_NAMES)


def _weighted(table, screened, weight_all, used, flat, n_flat, species):
    """PWM of each species per flat (site, period) cell [mol m-3], with its numerator
    [mol m-3 mm] and denominator [mm]: :func:`~workbench.wet.pwm.precipitation_weighted_mean`
    over the used samples, each weighted by its share of the cell's depth."""
    pwm, num, den = {}, {}, {}
    depth = np.where(used, weight_all, np.nan)
    for sp in species:
        c = np.asarray(screened.variables[sp].values, dtype=float)[table["interval"].values]
        pwm[sp], num[sp], den[sp] = precipitation_weighted_mean(
            c, depth, groups=flat, n_groups=n_flat, with_sums=True)
    return pwm, num, den


def _climatology(screened, opt, met, site_idx, n_site, species, gauge_prof):
    """Sums of the multi-year PWM per site and season, and of each sample's part of them.

    Returns
    -------
    num, den : dict
        species -> (site, season) sums :math:`\\sum w C` [mol m-3 mm] and
        :math:`\\sum w` [mm] over the used samples of the whole record.
    own_num, own_den : dict
        species -> (sample, season) the same sums of each sample alone, to leave a
        period's own samples out of its fill (:func:`_leave_out`).
    """
    t0, t1 = screened.variables["start"].values.min(), screened.variables["end"].values.max()
    seasons = _periods.make_periods(t0, t1, "season")
    table = _split(screened, seasons, opt, met)
    i = table["interval"].values
    used = screened.variables["used"].values.astype(bool)[i]
    weight = np.where(used, _piece_weights(
        table, screened.variables["gauge_valid"].values.astype(bool),
        screened.variables["gauge_depth_used"].values.astype(float), gauge_prof, site_idx), 0.0)
    s_of = pd.Index(_periods.SEASON_NAMES).get_indexer(seasons["season"].values)
    shape = (n_site, _N_SEASONS)
    n_samp = screened.sizes["sample"]
    flat = site_idx[i] * _N_SEASONS + s_of[table["period"].values]
    by_sample = i * _N_SEASONS + s_of[table["period"].values]
    _, num, den = _weighted(table, screened, weight, used, flat, n_site * _N_SEASONS, species)
    _, o_num, o_den = _weighted(table, screened, weight, used, by_sample, n_samp * _N_SEASONS,
                                species)
    return ({sp: num[sp].reshape(shape) for sp in species},
            {sp: den[sp].reshape(shape) for sp in species},
            {sp: o_num[sp].reshape(n_samp, _N_SEASONS) for sp in species},
            {sp: o_den[sp].reshape(n_samp, _N_SEASONS) for sp in species})


def _leave_out(clim, table, site_idx, cat, has_season, n_site, n_per, species):
    """The seasonal fill of each (site, period) without the period's own samples [mol m-3].

    The fill of a period estimates its PWM from other data: the used samples of the same
    season in the record (the whole record for a year or a custom range), less every
    sample that overlaps the period (a sample straddling its edge included), so that
    none of the failed period's own chemistry enters its fill (docs/methods_wet.md
    section 7).  NaN where nothing else is left.
    """
    num, den, o_num, o_den = clim
    i = table["interval"].values
    p = table["period"].values
    # each (sample, period) once: a sample's pieces in a period are one row of the split
    key = np.unique(i * n_per + p)
    si, pi = key // n_per, key % n_per
    flat = site_idx[si] * n_per + pi
    sel = np.clip(cat[pi], 0, _N_SEASONS - 1)
    out = {}
    for sp in species:
        own_n = np.where(has_season[pi], o_num[sp][si, sel], o_num[sp][si].sum(1))
        own_d = np.where(has_season[pi], o_den[sp][si, sel], o_den[sp][si].sum(1))
        own_n = group_sums(own_n, flat, n_site * n_per).reshape(n_site, n_per)
        own_d = group_sums(own_d, flat, n_site * n_per).reshape(n_site, n_per)
        all_n = np.where(has_season[None, :], num[sp][:, np.clip(cat, 0, _N_SEASONS - 1)],
                         num[sp].sum(1)[:, None])
        all_d = np.where(has_season[None, :], den[sp][:, np.clip(cat, 0, _N_SEASONS - 1)],
                         den[sp].sum(1)[:, None])
        rest_n, rest_d = all_n - own_n, all_d - own_d
        # to rounding: nothing left once the own samples are taken out
        left = rest_d > 1e-9 * np.maximum(all_d, 1.0)
        out[sp] = np.where(left, rest_n / np.where(left, rest_d, 1.0), np.nan)
    return out
