"""Sums of the budget's components and their status: the rule that combines the
statuses of a sum (:func:`combine_status`), the sum of the values present
(:func:`sum_present`), the per-element totals by pathway (:func:`add_totals`);
re-exported by :mod:`workbench.budget`.
"""
from __future__ import annotations

import numpy as np
import xarray as xr


def text_variable(dims, values, attrs=None) -> xr.Variable:
    """An xarray Variable of words (a numpy array of object dtype holding ``str``).

    xarray passes every object array it is given through pandas to turn date objects
    into datetime64 (``Variable`` without ``fastpath``): under pandas 3 that builds a
    string array of the words and an object array again, the same words, about a
    tenth of a millisecond an array, a dozen arrays a budget.  The words of the budget
    (statuses, notes, names, reasons) hold no date: they are wrapped as they are.
    Anything but an object array takes xarray's usual way.

    >>> v = text_variable(("x",), np.array(["complete", "missing"], dtype=object))
    >>> v.dtype, v.values.tolist()
    (dtype('O'), ['complete', 'missing'])
    """
    if type(values) is np.ndarray and values.dtype == object:
        return xr.Variable(dims, values, attrs, fastpath=True)
    return xr.Variable(dims, values, attrs)


def combine_status(statuses):
    """Status of a sum of components along the last axis.

    Precedence: ``missing`` (every component missing) > ``flagged`` (a present
    component fails completeness) > ``partial`` (some component missing) > ``filled``
    > ``complete``.

    Returns
    -------
    status : ndarray of str
    passes : ndarray of bool
        The present components pass completeness (status not flagged or missing).
    """
    s = np.asarray(statuses, dtype=object)
    missing = s == "missing"
    out = np.where((s == "filled").any(-1), "filled", "complete").astype(object)
    out = np.where(missing.any(-1), "partial", out)
    out = np.where((s == "flagged").any(-1), "flagged", out)
    out = np.where(missing.all(-1), "missing", out)
    return out, ~np.isin(out, ("flagged", "missing"))



def sum_present(values):
    """Sum along the last axis of the values present [unit of `values`]; NaN where
    every value is NaN (an empty selection too), never 0 for nothing.

    The one sum of the budget's components: the totals (:func:`_totals`), the derived
    sums (:func:`workbench.budget_derived.derived`) and the Monte Carlo's draws of them
    (:func:`workbench.analysis.sitedraws.totals_of`).

    >>> import numpy as np
    >>> sum_present(np.array([[1.0, np.nan], [np.nan, np.nan]])).tolist()
    [1.0, nan]
    """
    return np.where(np.isfinite(values).any(-1), np.nansum(values, -1), np.nan)


def _totals(dep, status, compl, element, pathway, species, fails=None, failure=None):
    """Per-element sums by pathway and their status, from the component arrays.

    Parameters
    ----------
    dep, status, compl : ndarray
        (..., component) deposition [mol m-2], status (str) and completeness [1].
    element, pathway, species : ndarray of str
        Per component.
    fails : ndarray of bool, optional
        (..., component): a present component fails completeness.  A component
        ``flagged`` for another reason (kept flagged samples, a sulfate basis that
        fell back) is named in ``total_flagged_components`` but does not make the
        sum fail.  Default: every ``flagged`` component fails.
    failure : ndarray of str, optional
        (..., component): where a component fails, the first criterion it fails in
        words (:func:`workbench.budgetstatus.wet_component`,
        :func:`workbench.budgetstatus.dry_failure_words`).

    Returns
    -------
    names : list of str
        ``S_wet`` ... ``N_total``.
    variables : dict
        ``total_deposition`` [mol m-2], ``total_status``, ``total_passes``,
        ``total_missing_components``, ``total_flagged_components``,
        ``total_completeness`` [1], ``total_completeness_failure`` (where the sum does
        not pass for a failing component: that of the first such component, after the
        species that fail for the same words, ``NO3 NH4: gauge record below minimum
        (49.7 % of the period; minimum 90 %)``; '' elsewhere) as xarray Variables
        with dims (site, receptor, period, total).
    """
    if fails is None:
        fails = np.asarray(status, dtype=object) == "flagged"
    if failure is None:
        failure = np.where(fails, "fails completeness", "").astype(object)
    out = {}
    for e in ("S", "N"):
        for p in ("wet", "dry", "total"):
            sel = (element == e) & ((pathway == p) if p != "total" else True)
            d = dep[..., sel]
            st = status[..., sel]
            total = sum_present(d)
            combined, _ = combine_status(st)
            passes = ~(fails[..., sel] & (st != "missing")).any(-1) & (combined != "missing")
            absent = _joined_names(st == "missing", species[sel])
            flagged = _joined_names(st == "flagged", species[sel])
            # np.fmin.reduce is what np.nanmin computes on a float array, without the
            # all-NaN warning: no catch_warnings (process-wide filters, not safe when
            # blocks of sites run on threads)
            with np.errstate(all="ignore"):
                worst = (np.fmin.reduce(np.where(st == "missing", np.nan, compl[..., sel]),
                                        axis=-1)
                         if (st != "missing").any() else np.full(total.shape, np.nan))
            out[f"{e}_{p}"] = (total, combined, passes, absent, worst, flagged,
                               _first_failure(fails[..., sel] & (st != "missing"),
                                              failure[..., sel], species[sel]))
    names = list(out)
    dims = ("site", "receptor", "period", "total")

    def stack(i):
        return np.stack([out[n][i] for n in names], -1)
    return names, {
        "total_deposition": xr.Variable(dims, stack(0), {"units": "mol m-2",
                                                         "long_name": "sum of components (element)"}),
        "total_status": text_variable(dims, stack(1)),
        "total_passes": xr.Variable(dims, stack(2), {
            "long_name": "present components pass completeness (a component flagged only "
                         "for kept flagged samples or a sulfate fallback passes)"}),
        "total_missing_components": text_variable(dims, stack(3),
                                                {"long_name": "components without data"}),
        "total_flagged_components": text_variable(dims, stack(5),
                                                {"long_name": "components with status flagged"}),
        "total_completeness": xr.Variable(dims, stack(4), {"units": "1"}),
        "total_completeness_failure": text_variable(dims, stack(6), {
            "long_name": "the first completeness criterion a component of the sum fails, "
                         "with its share and minimum, after the species failing for it"})}


def _first_failure(fails, words, species):
    """The first failing component's words after the species that fail for the same
    words ("NO3 NH4: gauge record below minimum (...)"); '' where none fails.

    Parameters
    ----------
    fails : ndarray of bool (..., component)
    words : ndarray of str (..., component)
    species : ndarray of str (component,)

    Returns
    -------
    ndarray of str (...)
    """
    words = np.where(fails, np.asarray(words, dtype=object), "")
    words = np.where(fails & (words == ""), "fails completeness", words)
    shape = fails.shape[:-1]
    first = np.full(shape, "", dtype=object)
    for k in range(fails.shape[-1]):                 # over the components, a few
        first = np.where((first == "") & fails[..., k], words[..., k], first)
    names = _joined_names(fails & (words == first[..., None]) & (first != "")[..., None],
                          species)
    return np.where(first == "", "", names + ": " + first).astype(object)


def _joined_names(mask, names) -> np.ndarray:
    """The `names` where `mask` holds along the last axis, in their order, joined by one
    space ('' where none), over whole arrays: each distinct row of `mask` is joined
    once (a few: one per combination met), and the rows take theirs by index.

    Parameters
    ----------
    mask : ndarray of bool (..., name)
    names : sequence of str (name,)

    Returns
    -------
    ndarray of str (...), object dtype

    >>> _joined_names(np.array([[True, False, True], [False, False, False]]),
    ...               ("NO3", "HNO3", "NO2")).tolist()
    ['NO3 NO2', '']
    """
    mask = np.asarray(mask, dtype=bool)
    names = list(names)
    if mask.size == 0:                              # no rows, or no names
        return np.full(mask.shape[:-1], "", dtype=object)
    flat = mask.reshape(-1, len(names))
    packed = np.packbits(flat, axis=1)              # each row's bits as bytes, one key
    key = np.ascontiguousarray(packed).view(f"V{packed.shape[1]}").ravel()
    _, first, index = np.unique(key, return_index=True, return_inverse=True)
    joined = np.array([" ".join(names[k] for k in np.flatnonzero(flat[i])) for i in first],
                      dtype=object)
    return joined[index.reshape(mask.shape[:-1])]


def add_totals(ds: xr.Dataset) -> xr.Dataset:
    """Per-element sums by pathway (wet, dry, total), their status and completeness.

    Parameters
    ----------
    ds : xarray.Dataset
        Components (dims site, receptor, period, component): ``deposition`` [mol m-2],
        ``status``, ``completeness`` [1], coordinates ``element``, ``pathway``,
        ``species``.

    Returns
    -------
    xarray.Dataset
        `ds` with the variables of :func:`_totals` and the coordinate ``total``.
    """
    order = ("site", "receptor", "period", "component")
    names, totals = _totals(ds["deposition"].transpose(*order).values,
                            ds["status"].transpose(*order).values,
                            ds["completeness"].transpose(*order).values,
                            ds["element"].values, ds["pathway"].values, ds["species"].values)
    return ds.assign_coords(total=names).assign(totals)
