"""Unit slips in the sample and air files: the rows of a table by the units their cells
were written in (:func:`unit_segments`), and the notes on a likely slip of the
precipitation and the air readers.

Moved from :mod:`workbench.io.samples`, which re-exports them.
"""
from __future__ import annotations

import numpy as np

from ..units import parse_header


def unit_segments(tab, cols, keep) -> list:
    """The rows of a table by the units their cells were written in.

    A column with a unit switch (:mod:`workbench.io.unitswitch`) holds cells of two or
    more units; a unit-slip hint about some of its rows must name the unit those rows
    were written in, not the first column's.  The kept rows are split by the
    combination of units of every column of `cols` (one part for a file without a
    switch), each part with the header and unit of each column in it.

    Parameters
    ----------
    tab : RawTable
    cols : dict
        Key (species) -> column name in `tab`.
    keep : ndarray of bool
        The table's rows that are in the Dataset (in order).

    Returns
    -------
    list of (ndarray of int or None, dict)
        Positions in the Dataset of the part's rows (None: every row, no switch) and
        key -> (header as typed, unit as typed, element basis or None).
    """
    keep = np.asarray(keep, bool)
    first = {sp: (tab.raw_headers[name], tab.unit_of(name), tab.headers[name].basis)
             for sp, name in cols.items()}
    seg, choices = {}, {}
    for sp, name in cols.items():
        later = tab.switched.get(name, ())
        if not later:
            continue
        k = np.zeros(len(keep), int)
        for j, (col, mask) in enumerate(later, start=1):
            k[np.asarray(mask, bool)] = j
        seg[sp] = k[keep]
        choices[sp] = [first[sp]] + [(col, parse_header(col).unit, parse_header(col).basis)
                                     for col, _ in later]
    if not seg:
        return [(None, first)]
    code = np.zeros(int(keep.sum()), np.int64)
    for sp in seg:
        code = code * len(choices[sp]) + seg[sp]
    parts = []
    for c in np.unique(code):
        idx = np.flatnonzero(code == c)
        units = dict(first)
        for sp in seg:
            units[sp] = choices[sp][int(seg[sp][idx[0]])]
        parts.append((idx, units))
    return parts


def _unit_slips(tab, ds, ion_cols, options=None, keep=None) -> list[str]:
    """Notes on a likely unit slip in a column (:func:`workbench.wet.unitslip.unit_slip_notes`),
    judged on the rows of each unit of a column with a unit switch apart
    (:func:`unit_segments`): each note names the unit its rows were written in."""
    from ..wet.options import WetOptions
    from ..wet.unitslip import unit_slip_notes
    depth = {col: (tab.raw_headers[col], tab.unit_of(col), None)
             for col in ("gauge_depth", "sample_depth") if tab.has(col)}
    keep = np.ones(ds.sizes["sample"], bool) if keep is None else keep
    notes = []
    for idx, units in unit_segments(tab, ion_cols, keep):
        part = ds if idx is None else ds.isel(sample=idx)
        notes += unit_slip_notes(part, {**units, **depth}, tab.path.name,
                                 options or WetOptions())
    return notes


def _air_slips(tab, ds, cols, keep) -> list[str]:
    """Notes on a likely unit slip that stays in range (:mod:`workbench.io.airslip`), on
    the rows of each unit of a column with a unit switch apart (:func:`unit_segments`);
    rows of one sampler a unit factor off its other rows (:mod:`workbench.io.airstep`),
    or off the rest of its own record when it is the gas's only sampler in the file
    (:mod:`workbench.io.airownstep`); a gas on the other basis at one sampler, against
    the file's other sites (:mod:`workbench.io.airgasbasis`)."""
    from .airgasbasis import gas_basis_notes
    from .airslip import air_slip_notes
    from .airownstep import own_step_notes
    from .airstep import sampler_step_notes
    notes = []
    cells = {sp: tab.text(name)[keep] for sp, name in cols.items()}
    for idx, units in unit_segments(tab, cols, keep):
        part = ds if idx is None else ds.isel(period=idx)
        notes += air_slip_notes(part, units, tab.path.name)
        notes += gas_basis_notes(part, units, tab.path.name)
        typed = cells if idx is None else {sp: c[idx] for sp, c in cells.items()}
        notes += sampler_step_notes(part, units, tab.path.name, typed)
        notes += own_step_notes(part, units, tab.path.name, typed)
    return notes
