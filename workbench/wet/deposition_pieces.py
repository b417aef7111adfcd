"""The (sample, period) pieces of the screened samples and their precipitation weights
(:func:`sample_weights`), the period table and the split of the samples among the
periods (split from :mod:`workbench.wet.deposition`, which re-exports every name).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from .. import periods as _periods
from ..species import PRECIP_IONS
from .hourly import site_positions, window_sums
from .options import WetOptions
from .pwm import CoverageProfile


def _periods_table(periods, screened, opt):
    if isinstance(periods, str):
        start = screened["start"].values.min()
        end = screened["end"].values.max()
        return _periods.make_periods(start, end, periods, hydro_start_month=opt.hydro_start_month)
    return periods.reset_index(drop=True)


def _met_fractions(table, screened, met):
    """Share of each sample's hourly met precipitation in each of its periods (NaN if none)."""
    i = table["interval"].values
    site = screened["site"].values.astype(str)[i]
    pos = site_positions(site, met["site"].values)
    sub, n_sub, h_sub = window_sums(met["precipitation"], pos, table["start"].values,
                                    table["end"].values)
    tot, n_tot, h_tot = window_sums(met["precipitation"], pos, screened["start"].values[i],
                                    screened["end"].values[i])
    ok = (n_tot == h_tot) & (h_tot > 0) & (tot > 0) & (n_sub == h_sub)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(ok, sub / np.where(ok, tot, 1.0), np.nan)


def _split(screened, ptable, opt, met):
    """Long table of (sample, period) rows with the precipitation share of each."""
    table = _periods.split_intervals(screened.variables["start"].values, screened.variables["end"].values, ptable)
    frac = table["fraction"].values
    method = np.full(len(table), "hours", dtype=object)
    if opt.straddle == "met" and met is not None and "precipitation" in met:
        fm = _met_fractions(table, screened, met)
        method = np.where(np.isfinite(fm), "met", method)
        frac = np.where(np.isfinite(fm), fm, frac)
    table["share"] = frac
    table["share_method"] = method
    return table


def _join(acc, mask, label):
    add = np.where(acc == "", label, acc + "; " + label)
    return np.where(mask, add, acc).astype(object)


def _species_list(screened):
    return [i for i in PRECIP_IONS if i in screened] + ["H"]


def sample_weights(screened: xr.Dataset, ptable: pd.DataFrame, options: WetOptions,
                   met: xr.Dataset | None = None):
    """The (sample, period) pieces of the screened samples and their precipitation weights.

    Parameters
    ----------
    screened : xarray.Dataset
        Output of :func:`workbench.wet.screen` (dim ``sample``).
    ptable : pandas.DataFrame
        A period table (:func:`workbench.periods.make_periods`), index 0..P-1.
    options : WetOptions
    met : xarray.Dataset, optional
        Hourly ``precipitation`` [mm] for the ``straddle="met"`` rule.

    Returns
    -------
    table : pandas.DataFrame
        One row per piece: ``interval`` (sample index), ``period`` (row of `ptable`),
        ``share`` [1] of the sample in the period.
    weight : ndarray
        :math:`w_{ip} = P_i f_{ip} \\langle 1/m \\rangle_{ip}` [mm] per piece (0 where the
        gauge is not valid), with :math:`\\langle 1/m \\rangle_{ip}` the mean over the piece
        of one over the number of gauge-valid samples running at each instant.
    gauge_profile : CoverageProfile
        Hours covered by gauge-valid samples.
    origin : numpy.datetime64
    span : float
        Origin and length [h] of the hour axis of the profiles.
    mult : ndarray
        Mean multiplicity :math:`m_i` of each sample [1] (collocated samplers).
    """
    sites = np.unique(screened.variables["site"].values.astype(str))
    site_idx = pd.Index(sites).get_indexer(screened.variables["site"].values.astype(str))
    gauge_ok = screened.variables["gauge_valid"].values.astype(bool)
    depth = screened.variables["gauge_depth_used"].values.astype(float)
    s_all = screened.variables["start"].values.astype("datetime64[ns]")
    e_all = screened.variables["end"].values.astype("datetime64[ns]")
    p_s = ptable["start"].values.astype("datetime64[ns]")
    p_e = ptable["end"].values.astype("datetime64[ns]")
    origin = min(s_all.min(), p_s.min()) if len(s_all) else p_s.min()
    span = (max(e_all.max() if len(e_all) else p_e.max(), p_e.max()) - origin) / np.timedelta64(1, "h")
    gauge_prof = CoverageProfile(site_idx[gauge_ok], s_all[gauge_ok], e_all[gauge_ok], len(sites),
                                 origin, span)
    mult = np.where(gauge_ok, gauge_prof.mean_multiplicity(site_idx, s_all, e_all), 1.0)
    mult = np.where(mult >= 1.0, mult, 1.0)
    table = _split(screened, ptable, options, met)
    weight = _piece_weights(table, gauge_ok, depth, gauge_prof, site_idx)
    return table, weight, gauge_prof, origin, span, mult


def _piece_weights(table, gauge_ok, depth, gauge_prof, site_idx):
    """w_ip = P_i f_ip <1/m>_ip [mm]: the depth, its share in the period and the mean of
    1/m over the piece (collocated samplers averaged where they ran together)."""
    i = table["interval"].values
    inv = gauge_prof.mean_inverse_multiplicity(
        site_idx[i], table["start"].values.astype("datetime64[ns]"),
        table["end"].values.astype("datetime64[ns]"))
    return np.where(gauge_ok[i], depth[i] * table["share"].values * inv, 0.0)
