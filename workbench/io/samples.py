"""Readers of precipitation samples and air concentrations.

Both return ``(dataset, ledger)``; see ``docs/data_formats.md`` for the files and
``docs/data_model.md`` for the datasets.

Where the parts are: the species columns, the concentrations and the interval table in
:mod:`workbench.io.samplecolumns`; the unit slips in :mod:`workbench.io.sampleunits`.
This module re-exports them, so that ``workbench.io.samples.<name>`` keeps working.
"""
from __future__ import annotations

import re

import numpy as np
import xarray as xr

from .. import species as _species
from ..constants import GAS_CONSTANT
from ..errors import InputError
from ..units import MM_PER_M, Q_, convert_plain
from .common import (check_overlaps, check_time_zones, duplicate_rows, join_reasons, reason_where,
                     repeat_reasons, unit_error, unused_note)
from .gaugerows import check_gauge_sampler
from .gaugetotal import running_totals
from .ledger import Ledger
from .samplerids import check_spellings, typo_notes
from .shifted import check_shifted
# the columns and cells of the sample files (defined here before)
from .samplecolumns import (ALL_MASKED_ATTR, MASKED_RUNS_ATTR, PERIOD_HINTS,  # noqa: F401
                            masked_runs,
                            PRECIP_NEGATIVE_TOL_MG_L, REQUIRED_EXAMPLES, _NOT_SPECIES, all_masked, _TRACE_TEXTS, _concentrations, _flag_words,
                            _interval_table, _mask_sentinels, _sentinel_reasons,
                            _species_columns, _to_amount_by_unit, _trace_depth_error,
                            check_acidity_headers, ph_as_h_notes,
                            ph_from_h)
# the unit slips of the sample files (defined here before)
from .sampleunits import _air_slips, _unit_slips, unit_segments  # noqa: F401


PRECIP_REQUIRED = ("site", "start", "end", "gauge_depth")
PRECIP_OPTIONAL = ("sample_depth", "sample_volume", "collector_area", "pH", "conductivity",
                   "sampler_id", "flags")
AIR_REQUIRED = ("site", "start", "end")


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
    check_acidity_headers(tab)
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
            raise unit_error(tab, name, exc, "a depth unit such as mm",
                             ("mm",)) from None
        v = _mask_sentinels(tab, name, raw, v, parts)
        if (v < 0).any():
            i = int(np.flatnonzero(v < 0)[0])
            raise tab.error("negative depth", row=i, column=name, value=tab.frame[name].iloc[i],
                            expected="a depth >= 0")
        return v

    gauge = depth("gauge_depth")
    # a gauge's running total written as each sample's depth: masked with its reason
    # (before: read as the depths, the wet deposition many times too high in silence)
    total, total_why, total_notes = running_totals(tab.path.name, sites, samplers, start,
                                                   gauge, tab.lines, rows=~repeat)
    if total.any():
        gauge = np.where(total, np.nan, gauge)
        parts.append(total_why)
    if tab.has("sample_depth"):
        sample = depth("sample_depth")
    elif tab.has("sample_volume") and tab.has("collector_area"):
        raw_vol = tab.numbers("sample_volume", missing="samples")
        raw_area = tab.numbers("collector_area", missing="samples")
        u_vol, u_area = tab.unit_of("sample_volume"), tab.unit_of("collector_area")
        try:
            vol = convert_plain(raw_vol, u_vol, "m**3")
        except ValueError as exc:
            raise unit_error(tab, "sample_volume", exc, "a volume unit such as mL",
                             ("mL",)) from None
        try:
            area = convert_plain(raw_area, u_area, "m**2")
        except ValueError as exc:
            raise unit_error(tab, "collector_area", exc, "an area unit such as cm2",
                             ("cm**2",)) from None
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
        hint = ""
        if ph[i] > 14:      # H+ of 14-1e6 ueq/L: pH 6 down to 0
            hint = (f" (H+ in ueq/L or umol/L under the pH header? {ph[i]:g} ueq/L is pH "
                    f"{ph_from_h(ph[i]):.2f}: write pH = 6 - log10(H+))")
        raise tab.error("pH outside 0-14" + hint, row=i, column="pH",
                        value=tab.frame["pH"].iloc[i], expected="a pH between 0 and 14")
    if tab.has("conductivity"):
        raw_cond = tab.numbers("conductivity", missing="samples")
        u_cond = tab.unit_of("conductivity")
        try:
            cond = convert_plain(raw_cond, u_cond, "uS/cm")
        except ValueError as exc:
            raise unit_error(tab, "conductivity", exc, "a conductivity unit such as uS/cm",
                             ("uS/cm",)) from None
        cond = _mask_sentinels(tab, "conductivity", raw_cond, cond, parts)
        if (cond < 0).any():
            i = int(np.flatnonzero(cond < 0)[0])
            raise tab.error("negative conductivity", row=i, column="conductivity",
                            value=tab.frame["conductivity"].iloc[i], expected="a value >= 0")
    else:
        cond = np.full(n, np.nan)
    flag_text = tab.text("flags") if tab.has("flags") else np.full(n, "", object)
    flag_norm, flag_note = _flag_words(tab, flag_text, flag_map)
    flagged = flag_norm != ""
    parts.append(reason_where(flagged, np.where(flagged, "flags " + flag_norm.astype(str), "")))
    ion_cols = _species_columns(tab, _species.PRECIP_IONS, "precipitation")
    conc = _concentrations(tab, ion_cols, ("amount_density",), parts, n,
                           zero_ok=(gauge == 0) | repeat,      # a dry week, a dropped repeat
                           negative_tol_mg_l=PRECIP_NEGATIVE_TOL_MG_L)
    check_shifted(tab, {ion_cols[sp]: ~np.isnan(v) | c for sp, (v, c, _, _) in conc.items()},
                  rows=~repeat)
    parts.append(reason_where(np.isnan(gauge), "gauge depth missing"))
    known = set(PRECIP_REQUIRED + PRECIP_OPTIONAL) | set(ion_cols.values())
    unknown = tab.unknown_columns(known)
    has_chem = np.zeros(n, bool)
    for v, c, _, _ in conc.values():
        has_chem |= ~np.isnan(v) | c
    check_gauge_sampler(tab, sites, samplers, gauge, has_chem | ~np.isnan(ph) | ~np.isnan(cond),
                        flag_norm, rows=~repeat)
    # no water collected, yet analysed: the 0 is a volume not recorded (a ratio of 0
    # would read as a sampler catching nothing); masked with its reason.  A dry week
    # (gauge 0) keeps its zeros: the screening judges chemistry on a dry week
    dry_sample = (sample == 0) & has_chem & ~repeat & ~(gauge == 0)
    if dry_sample.any():
        col = "sample_depth" if tab.has("sample_depth") else "sample_volume"
        parts.append(reason_where(dry_sample, f"{col} 0 with concentrations present (a "
                                  "volume not recorded, written as 0?): read as missing"))
        sample = np.where(dry_sample, np.nan, sample)
    empty = np.isnan(gauge) & np.isnan(sample) & ~has_chem & np.isnan(ph)
    reasons = join_reasons(parts)
    reasons = np.where(empty, join_reasons([reasons, np.full(n, "no values in the row", object)]),
                       reasons)
    empty = empty | repeat
    reasons = repeat_reasons(reasons, repeat, repeat_why)
    ledger = Ledger.for_rows(tab.path, tab.lines, sites, reasons, empty)
    if repeat_note:
        ledger.notes.append(repeat_note)
    ledger.notes.extend(total_notes)
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
    ledger.notes.extend(tab.minute_end_notes)
    if flag_note:
        ledger.notes.append(f"{tab.path.name}: {flag_note}")
    keep = ~empty
    neg_notes = np.full(n, "", object)
    for sp, (v, c, dl, _) in conc.items():
        neg_notes = join_reasons([neg_notes, reason_where(c & np.isnan(dl), f"{sp} negative, censored")])
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
    ledger.notes.extend(ph_as_h_notes(tab.path.name, sites, ph, keep))
    ledger.notes.extend(typo_notes(tab.path.name, sites[keep], samplers[keep], tab.lines[keep]))
    return ds, ledger


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
    masked_why = {}
    site_ids = sites.astype(str)

    def plume(sp):               # rows of sites whose sp samplers stand in a plume
        declared = [s.id for s in catalogue if sp in s.source_plume]
        return np.isin(site_ids, declared) if declared else None
    conc = _concentrations(tab, cols, ("amount_density", "mixing_ratio"), parts, n, groups,
                           zero_ok=repeat, masked_why=masked_why,   # zero: a dropped repeat
                           plume=plume)
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
    reasons = repeat_reasons(reasons, repeat, repeat_why)
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
    ledger.notes.extend(tab.minute_end_notes)
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
                                  "reference_state": str(ref_text) if needs_ref else "none needed",
                                  ALL_MASKED_ATTR: all_masked(conc, masked_why, sites, ~repeat),
                                  MASKED_RUNS_ATTR: masked_runs(masked_why, sites, start, end,
                                                                ~repeat)})
    ledger.notes.extend(tab.unit_switch_notes + _air_slips(tab, ds, cols, keep))
    ledger.notes.extend(typo_notes(tab.path.name, sites[keep], samplers[keep], tab.lines[keep]))
    return ds, ledger


