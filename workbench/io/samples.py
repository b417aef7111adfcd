"""Readers of precipitation samples and air concentrations.

Both return ``(dataset, ledger)``; see ``docs/data_formats.md`` for the files and
``docs/data_model.md`` for the datasets.
"""
from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pandas as pd
import xarray as xr

from .. import flags as _flags
from .. import species as _species
from ..constants import GAS_CONSTANT
from ..errors import InputError, suggest
from ..units import MM_PER_M, Q_, convert_plain, parse_header, to_amount
from . import plausible as _plausible
from .common import (check_intervals, check_overlaps, check_sites, check_time_zones,
                     duplicate_rows, join_reasons, unit_error, unused_note)
from .gaugerows import check_gauge_sampler
from .ledger import Ledger
from .samplerids import check_spellings, typo_notes
from .shifted import check_shifted
from .table import RawTable

PRECIP_REQUIRED = ("site", "start", "end", "gauge_depth")
PRECIP_OPTIONAL = ("sample_depth", "sample_volume", "collector_area", "pH", "conductivity",
                   "sampler_id", "flags")
AIR_REQUIRED = ("site", "start", "end")
#: Headers shown for missing required columns of the sample and air files.
REQUIRED_EXAMPLES = {"gauge_depth": "gauge_depth [mm]"}
#: A file with one time label per row instead of periods (a monitor's hourly export).
PERIOD_HINTS = {(c, "start"): (f"a {c!r} column: one time label per row (an hourly monitor?): "
                               "give each row its period, 'start' and 'end' (an hour-ending "
                               "label 2022-01-01T01:00 is start 2022-01-01T00:00, end "
                               "2022-01-01T01:00; docs/data_formats.md, \"Setting up your own "
                               "site, step by step\")")
                for c in ("time", "date", "datetime", "timestamp")}
#: Columns with a unit that are not species even when their names look alike.
_NOT_SPECIES = ("gauge_depth", "sample_depth", "sample_volume", "collector_area", "ph",
                "conductivity")


def _species_columns(tab: RawTable, allowed, what):
    """Map species -> column name, refusing two columns for one species, a species of
    the other file kind (``SO4`` in an air file) and a misspelt species (``S02``)."""
    out = {}
    choices = [f"{sp}{b}" for sp in allowed for b in ("", "_as_S", "_as_N")
               if not b or _species.get(sp).element == b[-1]]
    for name, h in tab.headers.items():
        if h.species is not None and h.species not in allowed:
            raise InputError(f"species not measured in {what} files", file=tab.path,
                             line=tab.header_line, column=tab.raw_headers[name], value=h.species,
                             expected="one of " + ", ".join(allowed) + suggest(h.name, choices))
        if h.species is None and h.unit and suggest(h.name, choices) and \
                h.name.lower() not in _NOT_SPECIES:
            raise InputError("unknown species", file=tab.path, line=tab.header_line,
                             column=tab.raw_headers[name], value=h.name,
                             expected="one of " + ", ".join(allowed) + suggest(h.name, choices))
        if h.species in allowed:
            if h.species in out:
                raise InputError("two columns for one species", file=tab.path,
                                 line=tab.header_line, column=tab.raw_headers[name],
                                 expected=f"one column for {h.species} "
                                 f"(already given as {tab.raw_headers[out[h.species]]!r})")
            out[h.species] = name
    return out


#: Most negative concentration of an ion in precipitation kept as a blank-subtraction
#: result (censored as below detection) [mg/L of the ion] (0.5: ten times or more the
#: detection limits of the major ions by ion chromatography, about 0.01-0.05 mg/L, from
#: memory; our choice).  A larger negative value is no blank residue (a sign typed, a
#: cell of another column): it is masked with its reason, never read as below detection,
#: which the "zero" treatment of censored values would make a complete-looking 0.
PRECIP_NEGATIVE_TOL_MG_L = 0.5


def _concentrations(tab, cols, kinds_allowed, ledger_parts, n, groups=None, zero_ok=None,
                    negative_tol_mg_l=None):
    """Parse species columns into amounts, with censoring. Returns dict of arrays.

    A missing-value code typed as a value (``-999``, ``9999``...) is masked and flagged;
    with `groups` (air files: one site-and-sampler label per row) the range and
    unit-slip checks of :mod:`workbench.io.plausible` run too.  A concentration of
    exactly 0 is never a measurement (every species here is present at some level): it
    is censored as below detection, as a negative one, with a reason naming it, except
    on the rows of `zero_ok` (bool [n]: the dry weeks of a precipitation file, and rows
    dropped as exact repeats).  With `negative_tol_mg_l` (precipitation) a value below
    minus that many mg/L of the species is masked with its reason.
    """
    data = {}
    for sp, name in cols.items():
        unit = tab.unit_of(name)
        raw, cens = tab.numbers(name, censoring=True, missing="samples")
        try:
            amount, kind = _to_amount_by_unit(tab, name, raw, sp)
        except ValueError as exc:
            raise unit_error(tab, name, exc, "a concentration unit such as mg/L, umol/L, "
                             "ueq/L (precipitation) or ug/m3, ppb (air)") from None
        if kind not in kinds_allowed:
            raise unit_error(tab, name, ValueError(f"a {kind.replace('_', ' ')}"),
                             " or ".join(k.replace("_", " ") for k in kinds_allowed))
        sentinel = ~cens & _plausible.sentinel_mask(raw)
        ledger_parts.append(_sentinel_reasons(tab, name, sp, sentinel))
        masked = sentinel
        if groups is not None:
            bad, why = _plausible.air_checks(sp, _plausible.as_ugm3(np.where(sentinel, np.nan, amount),
                                                                     kind, sp), cens, groups,
                                             unit=unit)
            masked = masked | bad
            ledger_parts.append(why)
        if negative_tol_mg_l is not None:
            with np.errstate(invalid="ignore"):    # mol m-3 x kg mol-1 = kg m-3 = 1e3 mg/L
                deep = (~cens & ~masked
                        & (amount * _species.get(sp).molar_mass * 1e3 < -negative_tol_mg_l))
            ledger_parts.append(np.where(deep, f"{sp} negative beyond the blank tolerance "
                                         f"-{negative_tol_mg_l:g} mg/L (masked)", ""))
            masked = masked | deep
        amount = np.where(masked, np.nan, amount)
        neg = (~cens) & (amount < 0)
        zero = (~cens) & (amount == 0)
        if zero_ok is not None:
            zero &= ~zero_ok
        value = np.where(cens | neg | zero, np.nan, amount)
        dl = np.where(cens, amount, np.nan)
        data[sp] = (value, cens | neg | zero, dl, kind)
        ledger_parts.append(np.where(cens, f"{sp} below detection", ""))
        ledger_parts.append(np.where(neg, f"{sp} negative (censored)", ""))
        ledger_parts.append(np.where(zero, f"{sp} reported as 0 (censored as below detection:"
                                     f" write '<limit', or leave empty if not measured)", ""))
    return data


def _to_amount_by_unit(tab, name, raw, sp):
    """:func:`workbench.units.to_amount` of column `name`'s numbers `raw` [as written],
    each row from the unit of the column it was written in (one unit, or the units of
    a switch, :meth:`RawTable.unit_groups`): converted once, with pint, never through
    the other unit.  Returns (amount [mol m-3 or mol mol-1], kind); ValueError for a
    unit that is no concentration of `sp`."""
    groups = tab.unit_groups(name)
    if len(groups) == 1:
        return to_amount(raw, groups[0][0].unit, sp, groups[0][0].basis)
    amount, kinds = np.full(len(raw), np.nan), set()
    for h, rows in groups:          # a few units, never a loop over rows
        part, kind = to_amount(raw[rows], h.unit, sp, h.basis)
        amount[rows] = part
        kinds.add(kind)
    return amount, kinds.pop()      # one kind: two were refused by the switch


def _mask_sentinels(tab, name, raw, values, parts):
    """`values` with the missing-value codes of column `name` masked (NaN).

    The codes are those of :func:`workbench.io.plausible.sentinel_mask`, compared with
    the number as typed (`raw`, in the column's own unit); each masked row gets the
    reason ``<column> <value> looks like a missing-value code (masked)``, appended to
    `parts` (the per-row reasons of the reader).  The same rule as the ion columns.

    Parameters
    ----------
    raw : ndarray of float
        The numbers as typed [the column's unit].
    values : ndarray of float
        The same numbers, possibly converted [any unit].

    Returns
    -------
    ndarray of float
        `values` with NaN at the codes [same unit as `values`].
    """
    sentinel = _plausible.sentinel_mask(raw)
    if not sentinel.any():
        return values
    parts.append(_sentinel_reasons(tab, name, name.replace("_", " "), sentinel))
    return np.where(sentinel, np.nan, values)


def _sentinel_reasons(tab, name, label, sentinel):
    """The ledger reason of each row whose column `name` holds a missing-value code
    (``<label> <value as typed> looks like a missing-value code (masked)``; "" else)."""
    return np.where(sentinel, f"{label} " + tab.frame[name].to_numpy(dtype=object).astype(str)
                    + " looks like a missing-value code (masked)", "")


#: Texts a gauge or collector record may hold for a trace of precipitation.
_TRACE_TEXTS = ("trace", "tr", "t")


def _trace_depth_error(exc: InputError) -> InputError:
    """`exc`, or for a trace typed as text in a depth column ('trace', 'T') the error with
    the advice to write 0: an empty cell would make a measured (near) dry week a missing
    gauge reading, a gap in the gauge record and the coverage (docs/methods_wet.md 7)."""
    if str(exc.value).strip().lower() not in _TRACE_TEXTS:
        return exc
    return InputError("a trace of precipitation typed as text", file=exc.file, line=exc.line,
                      column=exc.column, value=exc.value,
                      expected="a depth in mm: 0 for a trace (a measured dry or trace week "
                      "counts as covered; an empty cell is a missing reading, a gap), with "
                      "the flag 'trace' when the sample was too small to analyse")


def _flag_words(tab, flag_text, flag_map):
    """The flags column as our words, space-joined per row (lab codes translated).

    Returns ``(words, note)``: an object array (one text per row) and a ledger note
    naming the lab codes translated and their row counts ("" when none were).
    Raises a located error for a code that is neither a word of ours nor a code of
    the mapping file.
    """
    if flag_map is not None and not isinstance(flag_map, dict):
        map_name = Path(flag_map).name
        flag_map = _flags.read_flag_map(flag_map)
    else:
        map_name = "the flag mapping"
    codes = pd.Series(flag_text, dtype=object).str.replace(r"[,;]", " ", regex=True).str.split()
    each = codes.explode()
    lab = each.isin(list(flag_map)) if flag_map else pd.Series(False, index=each.index)
    bad = each.notna() & ~each.isin(list(_flags.FLAGS)) & ~lab
    if bad.any():
        i = int(bad.index[np.flatnonzero(bad.to_numpy())[0]])
        hint = (f" or a code of {map_name}" if flag_map else
                " (a lab's own codes can be translated with a mapping file named as "
                "[inputs] flag_map in the scenario, see docs/data_formats.md)")
        raise tab.error("unknown flag code", row=i, column="flags", value=each[bad].iloc[0],
                        expected=_flags.words_hint() + hint)
    if not lab.any():
        return codes.str.join(" ").to_numpy(dtype=object), ""
    used = each[lab].groupby(level=0).unique().explode().value_counts(sort=False)
    note = f"lab flag codes translated with {map_name}: " + ", ".join(
        f"{c} -> {' '.join(flag_map[c]) or '(nothing)'} ({k} row{'s' * (k != 1)})"
        for c, k in used.items())
    words = each.where(~lab, each.map({c: " ".join(w) for c, w in flag_map.items()}))
    words = words.str.split().explode().dropna()
    joined = words.groupby(level=0).agg(" ".join)
    return joined.reindex(range(len(codes)), fill_value="").to_numpy(dtype=object), note


def _interval_table(path, catalogue, required):
    """Read a file of intervals: checked sites, UTC start and end, sampler ids."""
    tab = RawTable.read(path)
    tab.require(required, examples=REQUIRED_EXAMPLES, hints=PERIOD_HINTS)
    n = len(tab.frame)
    sites = check_sites(tab, catalogue)
    off = catalogue.utc_offsets(sites)
    start, end = tab.times("start", off), tab.times("end", off)
    check_intervals(tab, start, end)
    samplers = tab.text("sampler_id") if tab.has("sampler_id") else np.full(n, "", object)
    return tab, n, sites, start, end, samplers


def read_precipitation(path, catalogue, flag_map=None):
    """Read precipitation samples.

    Parameters
    ----------
    path : str or Path
        CSV file, one row per sample (see docs/data_formats.md).
    catalogue : SiteCatalogue
        For the site ids and their UTC offsets.
    flag_map : str or Path or dict, optional
        A mapping file of a lab's own flag codes (:func:`workbench.flags.read_flag_map`),
        or its content (lab code -> tuple of flag words).  Without it the ``flags``
        column holds the flag words of :data:`workbench.flags.FLAGS` only.

    Returns
    -------
    samples : xarray.Dataset
        Dim ``sample``; depths [mm], ions [mol m-3] (see docs/data_model.md).
    ledger : Ledger

    Raises
    ------
    InputError
        Missing column, bad unit, text in a numeric column (``NA``, ``N/A``, ``NaN``,
        ``-`` are missing, counted in the ledger notes), negative depth, pH outside
        0-14, end before start, overlapping samples, time labels of a site mixing zoned
        and naive timestamps, unknown site or flag code, empty file.

    Notes
    -----
    A likely unit slip (most samples of a site failing the ion balance or the capture
    check together, mended by another unit of one column) is named in the ledger notes
    (:func:`workbench.wet.unitslip.unit_slip_notes`).
    """
    tab, n, sites, start, end, samplers = _interval_table(path, catalogue, PRECIP_REQUIRED)
    repeat, repeat_why, repeat_note = duplicate_rows(tab, sites, samplers, start, end,
                                                     "sample")
    check_time_zones(tab, sites, mask=~repeat)
    check_spellings(tab, sites, samplers, start, end, rows=~repeat)
    check_overlaps(tab, sites, samplers, start, end, mask=~repeat)
    parts = [repeat_why]

    def depth(name):
        try:
            raw = tab.numbers(name, missing="samples")
        except InputError as exc:
            raise _trace_depth_error(exc) from None
        unit = tab.unit_of(name)
        try:
            v = convert_plain(raw, unit, "mm")
        except ValueError as exc:
            raise unit_error(tab, name, exc, "a depth unit such as mm") from None
        v = _mask_sentinels(tab, name, raw, v, parts)
        if (v < 0).any():
            i = int(np.flatnonzero(v < 0)[0])
            raise tab.error("negative depth", row=i, column=name, value=tab.frame[name].iloc[i],
                            expected="a depth >= 0")
        return v

    gauge = depth("gauge_depth")
    if tab.has("sample_depth"):
        sample = depth("sample_depth")
    elif tab.has("sample_volume") and tab.has("collector_area"):
        raw_vol = tab.numbers("sample_volume", missing="samples")
        raw_area = tab.numbers("collector_area", missing="samples")
        u_vol, u_area = tab.unit_of("sample_volume"), tab.unit_of("collector_area")
        try:
            vol = convert_plain(raw_vol, u_vol, "m**3")
        except ValueError as exc:
            raise unit_error(tab, "sample_volume", exc, "a volume unit such as mL") from None
        try:
            area = convert_plain(raw_area, u_area, "m**2")
        except ValueError as exc:
            raise unit_error(tab, "collector_area", exc, "an area unit such as cm2") from None
        vol = _mask_sentinels(tab, "sample_volume", raw_vol, vol, parts)
        area = _mask_sentinels(tab, "collector_area", raw_area, area, parts)
        for name, v in (("sample_volume", vol), ("collector_area", area)):
            if (v < 0).any():
                i = int(np.flatnonzero(v < 0)[0])
                raise tab.error(f"negative {name.replace('_', ' ')}", row=i, column=name,
                                value=tab.frame[name].iloc[i], expected="a value >= 0")
        with np.errstate(divide="ignore", invalid="ignore"):
            sample = np.where(area > 0, vol / area * MM_PER_M, np.nan)
    else:
        sample = np.full(n, np.nan)
        parts.append(np.full(n, "no sample depth or volume column", object))
    if tab.has("pH"):
        raw_ph = tab.numbers("pH", missing="samples")
        ph = _mask_sentinels(tab, "pH", raw_ph, raw_ph, parts)
    else:
        ph = np.full(n, np.nan)
    bad = (ph < 0) | (ph > 14)
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise tab.error("pH outside 0-14", row=i, column="pH", value=tab.frame["pH"].iloc[i],
                        expected="a pH between 0 and 14")
    if tab.has("conductivity"):
        raw_cond = tab.numbers("conductivity", missing="samples")
        u_cond = tab.unit_of("conductivity")
        try:
            cond = convert_plain(raw_cond, u_cond, "uS/cm")
        except ValueError as exc:
            raise unit_error(tab, "conductivity", exc, "a conductivity unit such as uS/cm") from None
        cond = _mask_sentinels(tab, "conductivity", raw_cond, cond, parts)
        if (cond < 0).any():
            i = int(np.flatnonzero(cond < 0)[0])
            raise tab.error("negative conductivity", row=i, column="conductivity",
                            value=tab.frame["conductivity"].iloc[i], expected="a value >= 0")
    else:
        cond = np.full(n, np.nan)
    flag_text = tab.text("flags") if tab.has("flags") else np.full(n, "", object)
    flag_norm, flag_note = _flag_words(tab, flag_text, flag_map)
    parts.append(np.where(flag_norm != "", "flags " + flag_norm.astype(str), ""))
    ion_cols = _species_columns(tab, _species.PRECIP_IONS, "precipitation")
    conc = _concentrations(tab, ion_cols, ("amount_density",), parts, n,
                           zero_ok=(gauge == 0) | repeat,      # a dry week, a dropped repeat
                           negative_tol_mg_l=PRECIP_NEGATIVE_TOL_MG_L)
    check_shifted(tab, {ion_cols[sp]: ~np.isnan(v) | c for sp, (v, c, _, _) in conc.items()},
                  rows=~repeat)
    parts.append(np.where(np.isnan(gauge), "gauge depth missing", ""))
    known = set(PRECIP_REQUIRED + PRECIP_OPTIONAL) | set(ion_cols.values())
    unknown = tab.unknown_columns(known)
    has_chem = np.zeros(n, bool)
    for v, c, _, _ in conc.values():
        has_chem |= ~np.isnan(v) | c
    check_gauge_sampler(tab, sites, samplers, gauge, has_chem | ~np.isnan(ph) | ~np.isnan(cond),
                        flag_norm, rows=~repeat)
    empty = np.isnan(gauge) & np.isnan(sample) & ~has_chem & np.isnan(ph)
    reasons = join_reasons(parts)
    reasons = np.where(empty, join_reasons([reasons, np.full(n, "no values in the row", object)]),
                       reasons)
    empty = empty | repeat
    ledger = Ledger.for_rows(tab.path, tab.lines, sites, reasons, empty)
    if repeat_note:
        ledger.notes.append(repeat_note)
    if unknown:
        ledger.notes.append(unused_note(tab.path.name, unknown))
    if tab.missing_note():
        ledger.notes.append(tab.missing_note())
    if tab.meta_again_note():
        ledger.notes.append(tab.meta_again_note())
    if tab.header_again_note():
        ledger.notes.append(tab.header_again_note())
    if tab.end_of_day_note():
        ledger.notes.append(tab.end_of_day_note())
    if flag_note:
        ledger.notes.append(f"{tab.path.name}: {flag_note}")
    keep = ~empty
    neg_notes = np.full(n, "", object)
    for sp, (v, c, dl, _) in conc.items():
        neg_notes = join_reasons([neg_notes, np.where(c & np.isnan(dl), f"{sp} negative, censored", "")])
    dvars = {
        "site": ("sample", sites[keep].astype(str)),
        "start": ("sample", start[keep]),
        "end": ("sample", end[keep]),
        "line": ("sample", tab.lines[keep]),
        "sampler_id": ("sample", samplers[keep].astype(str)),
        "flags": ("sample", flag_norm[keep].astype(str)),
        "notes": ("sample", neg_notes[keep].astype(str)),
        "gauge_depth": ("sample", gauge[keep], {"units": "mm", "long_name": "gauge precipitation depth"}),
        "sample_depth": ("sample", sample[keep], {"units": "mm", "long_name": "collected sample depth"}),
        "pH": ("sample", ph[keep], {"units": "1", "long_name": "pH"}),
        "conductivity": ("sample", cond[keep], {"units": "uS cm-1", "long_name": "measured conductivity at 25 degC"}),
    }
    for sp, (v, c, dl, _) in conc.items():
        ln = _species.get(sp).long_name
        dvars[sp] = ("sample", v[keep], {"units": "mol m-3", "long_name": f"{ln} (amount of ion)"})
        dvars[f"{sp}_censored"] = ("sample", c[keep])
        dvars[f"{sp}_detection_limit"] = ("sample", dl[keep], {"units": "mol m-3"})
    ds = xr.Dataset(dvars, attrs={"source_file": str(tab.path)})
    ledger.notes.extend(tab.unit_switch_notes + _unit_slips(tab, ds, ion_cols, keep=keep))
    ledger.notes.extend(typo_notes(tab.path.name, sites[keep], samplers[keep], tab.lines[keep]))
    return ds, ledger


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


_REF = re.compile(r"^\s*(?P<t>[-+\d.eE]+)\s*(?P<tu>degC|K|°C)\s*[,;]\s*(?P<p>[-+\d.eE]+)\s*(?P<pu>Pa|hPa|kPa|atm|mbar)\s*$")


def parse_reference_state(text):
    """Parse a reference state: ``"ambient"`` or ``"20 degC, 1013.25 hPa"``.

    Returns
    -------
    None for ambient, else (temperature [K], pressure [Pa]).

    >>> parse_reference_state("ambient") is None
    True
    >>> parse_reference_state("0 degC, 1 atm")
    (273.15, 101325.0)
    """
    s = str(text).strip()
    if s.lower() == "ambient":
        return None
    m = _REF.match(s)
    if not m:
        raise ValueError(f"unknown reference state {text!r}")
    t = Q_(float(m.group("t")), "degC" if m.group("tu") in ("degC", "°C") else "K").to("K").magnitude
    p = Q_(float(m.group("p")), m.group("pu")).to("Pa").magnitude
    return (round(float(t), 6), round(float(p), 6))


def read_air(path, catalogue, reference_state=None):
    """Read air concentrations, one row per sampling period.

    Parameters
    ----------
    path : str or Path
    catalogue : SiteCatalogue
    reference_state : str, optional
        ``"ambient"`` or ``"<T> degC, <p> hPa"``; used when the file states none
        (a ``# reference_state: ...`` line in the file wins).

    Returns
    -------
    concentrations : xarray.Dataset
        Dim ``period``; amounts [mol m-3] at ambient state, or mixing ratios [mol mol-1].
    ledger : Ledger

    Notes
    -----
    A likely unit slip that keeps the values in range (a particle column in the other
    element/species basis, seen in the particle ion balance; a gas of two samplers at
    one site whose ratio is a ppb <-> ug/m3 or basis factor) is named in the ledger
    notes (:func:`workbench.io.airslip.air_slip_notes`).
    """
    tab, n, sites, start, end, samplers = _interval_table(path, catalogue, AIR_REQUIRED)
    cols = _species_columns(tab, _species.AIR_GASES + _species.AIR_PARTICLES, "air")
    if not cols:
        raise InputError("no species columns", file=tab.path, line=tab.header_line,
                         expected="at least one of " + ", ".join(_species.AIR_GASES + _species.AIR_PARTICLES))
    repeat, repeat_why, repeat_note = duplicate_rows(tab, sites, samplers, start, end,
                                                     "air")
    check_time_zones(tab, sites, mask=~repeat)
    for sp, name in cols.items():
        u = tab.headers[name].unit or ""
        if re.search(r"/\s*[munµ]?[lL]\b", u):
            raise InputError("a liquid concentration unit in an air file", file=tab.path,
                             line=tab.header_line, column=tab.raw_headers[name], value=u,
                             expected="an air concentration unit such as ug/m3 or ppb")
    parts = [repeat_why]
    groups = np.char.add(np.char.add(sites.astype(str), "\x1f"), samplers.astype(str))
    conc = _concentrations(tab, cols, ("amount_density", "mixing_ratio"), parts, n, groups,
                           zero_ok=repeat)                     # a dropped repeat
    check_shifted(tab, {cols[sp]: ~np.isnan(v) | c for sp, (v, c, _, _) in conc.items()},
                  rows=~repeat, groups=groups, what="concentration")
    ref_text = tab.meta.get("reference_state", reference_state)
    needs_ref = any(k == "amount_density" for *_, k in conc.values())
    ref = None
    if needs_ref:
        if ref_text is None:
            raise InputError("reference state of mass concentrations not stated", file=tab.path,
                             line=1, column="reference_state",
                             expected="a first line '# reference_state: ambient' (or "
                             "'# reference_state: 20 degC, 1013.25 hPa'), or [air] "
                             "reference_state in the scenario")
        try:
            ref = parse_reference_state(ref_text)
        except ValueError:
            in_file = "reference_state" in tab.meta
            raise InputError("unknown reference state" + ("" if in_file else
                             " (from the scenario's [air] reference_state)"), file=tab.path,
                             line=tab.meta_lines.get("reference_state") if in_file else None,
                             column="reference_state" if in_file else "air.reference_state",
                             value=ref_text,
                             expected="'ambient' or '<T> degC, <p> hPa'") from None
    method_all = tab.text("method") if tab.has("method") else None
    methods = {}
    for sp in cols:
        for name in (f"method_{sp}", f"{sp}_method"):
            if tab.has(name):
                methods[sp] = tab.text(name)
        if sp not in methods and method_all is not None:
            methods[sp] = method_all
    check_spellings(tab, sites, samplers, start, end, rows=~repeat)
    for sp in cols:
        v, c, _, _ = conc[sp]
        check_overlaps(tab, sites, samplers, start, end, mask=(~np.isnan(v) | c) & ~repeat,
                       what=f"{sp} period")
    has_val = np.zeros(n, bool)
    for v, c, _, _ in conc.values():
        has_val |= ~np.isnan(v) | c
    reasons = join_reasons(parts)
    empty = ~has_val
    reasons = np.where(empty, join_reasons([reasons, np.full(n, "no values in the row", object)]), reasons)
    empty = empty | repeat
    ledger = Ledger.for_rows(tab.path, tab.lines, sites, reasons, empty)
    known = set(AIR_REQUIRED) | {"sampler_id", "method"} | set(cols.values()) | {
        f"method_{s}" for s in cols} | {f"{s}_method" for s in cols}
    unknown = tab.unknown_columns(known)
    if repeat_note:
        ledger.notes.append(repeat_note)
    if unknown:
        ledger.notes.append(unused_note(tab.path.name, unknown))
    if tab.missing_note():
        ledger.notes.append(tab.missing_note())
    if tab.meta_again_note():
        ledger.notes.append(tab.meta_again_note())
    if tab.header_again_note():
        ledger.notes.append(tab.header_again_note())
    if tab.end_of_day_note():
        ledger.notes.append(tab.end_of_day_note())
    keep = ~empty
    dvars = {
        "site": ("period", sites[keep].astype(str)),
        "start": ("period", start[keep]),
        "end": ("period", end[keep]),
        "line": ("period", tab.lines[keep]),
        "sampler_id": ("period", samplers[keep].astype(str)),
    }
    for sp, (v, c, dl, kind) in conc.items():
        if kind == "amount_density" and ref is not None:
            # stated at (T_ref, p_ref): the exact mixing ratio is c_ref R T_ref / p_ref
            factor = GAS_CONSTANT * ref[0] / ref[1]
            v, dl, kind = v * factor, dl * factor, "mixing_ratio"
        unit = "mol m-3" if kind == "amount_density" else "mol mol-1"
        ln = _species.get(sp).long_name
        attrs = {"units": unit, "quantity": kind, "long_name": ln,
                 "reference_state": "ambient" if kind == "amount_density" else
                 ("mixing ratio" if ref is None else f"converted from {ref_text}")}
        dvars[sp] = ("period", v[keep], attrs)
        dvars[f"{sp}_censored"] = ("period", c[keep])
        dvars[f"{sp}_detection_limit"] = ("period", dl[keep], {"units": unit})
        if sp in methods:
            dvars[f"{sp}_method"] = ("period", methods[sp][keep].astype(str))
    ds = xr.Dataset(dvars, attrs={"source_file": str(tab.path),
                                  "reference_state": str(ref_text) if needs_ref else "none needed"})
    ledger.notes.extend(tab.unit_switch_notes + _air_slips(tab, ds, cols, keep))
    ledger.notes.extend(typo_notes(tab.path.name, sites[keep], samplers[keep], tab.lines[keep]))
    return ds, ledger


def _air_slips(tab, ds, cols, keep) -> list[str]:
    """Notes on a likely unit slip that stays in range (:mod:`workbench.io.airslip`), on
    the rows of each unit of a column with a unit switch apart (:func:`unit_segments`);
    rows of one sampler a unit factor off its other rows (:mod:`workbench.io.airstep`),
    or off the rest of its own record when it is the gas's only sampler in the file
    (:mod:`workbench.io.airownstep`)."""
    from .airslip import air_slip_notes
    from .airownstep import own_step_notes
    from .airstep import sampler_step_notes
    notes = []
    cells = {sp: tab.text(name)[keep] for sp, name in cols.items()}
    for idx, units in unit_segments(tab, cols, keep):
        part = ds if idx is None else ds.isel(period=idx)
        notes += air_slip_notes(part, units, tab.path.name)
        typed = cells if idx is None else {sp: c[idx] for sp, c in cells.items()}
        notes += sampler_step_notes(part, units, tab.path.name, typed)
        notes += own_step_notes(part, units, tab.path.name, typed)
    return notes
