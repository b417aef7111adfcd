"""The columns and cells of the sample and air files: the species columns, the
concentrations in SI with their censored, sentinel and negative cells, the trace depths,
the flag words and the table of sampling intervals both readers start from.

Moved from :mod:`workbench.io.samples`, which re-exports them.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from .. import flags as _flags
from .. import species as _species
from ..errors import InputError, suggest
from ..units import concentration_kind, element_basis_header, to_amount
from . import plausible as _plausible
from .common import check_intervals, check_sites, join_reasons, reason_where, unit_error
from .table import RawTable
from .tabletimes import inclusive_end_notes, inclusive_ends


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


def _kind_or_none(unit: str) -> str | None:
    """:func:`workbench.units.concentration_kind` of a unit text, None if it is none."""
    try:
        return concentration_kind(unit)
    except ValueError:
        return None


def _basis_ratio(sp: str) -> float:
    """Mass of the species per mass of its element in it [-] (SO2/S 2.0, HNO3/N 4.5)."""
    info = _species.get(sp)
    return info.molar_mass / (_species.element_molar_mass(info.element) * info.atoms)


def _species_columns(tab: RawTable, allowed, what):
    """Map species -> column name, refusing two columns for one species, a species of
    the other file kind (``SO4`` in an air file) and a misspelt species (``S02``)."""
    out = {}
    choices = [f"{sp}{b}" for sp in allowed for b in ("", "_as_S", "_as_N")
               if not b or _species.get(sp).element == b[-1]]
    for name, h in tab.headers.items():
        basis = element_basis_header(h.name, h.unit)
        if basis is not None and basis[0] in allowed:
            sp, el, write = basis
            plain = write.split("[")[1].rstrip("]")
            if _kind_or_none(plain) in ("amount_density", "mixing_ratio"):
                raise InputError(f"{sp} on the element basis ({el}) written in a form not "
                                 "read", file=tab.path, line=tab.header_line,
                                 column=tab.raw_headers[name], value=tab.raw_headers[name],
                                 expected=f"'{sp} [{plain}]' (an amount or a mixing ratio "
                                 f"is the same number on either basis: 1 mol {sp} holds "
                                 f"{_species.get(sp).atoms} mol {el})")
            raise InputError(f"{sp} on the element basis ({el}) written in a form not read",
                             file=tab.path, line=tab.header_line,
                             column=tab.raw_headers[name], value=tab.raw_headers[name],
                             expected=f"{write!r} (the element basis goes in the name as "
                             f"'_as_{el}'); do not drop the {el}: under "
                             f"'{sp} [{write.split('[')[1]}' amounts of {el} are read "
                             f"{_basis_ratio(sp):.3g} x too low")
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


#: Names of the hydrogen ion as a column of its own (any case): the acidity is read
#: from the ``pH`` column only.
_H_ION_NAMES = ("h", "h+", "h3o", "h3o+", "h_plus", "hplus", "h_ion", "h+_ion", "hydrogen",
                "hydrogen_ion")
#: Units a ``pH`` header may carry: none (``pH``), ``pH [1]``, ``pH [-]``.
_PH_UNITS = (None, "", "1", "-")


def ph_from_h(ueq_l: float) -> float:
    """pH [-] of a hydrogen-ion concentration `ueq_l` [ueq/L = umol/L for H+]:
    pH = -log10(H+ [mol/L]) = 6 - log10(H+ [umol/L]).

    >>> round(ph_from_h(13.8), 2)
    4.86
    """
    return 6.0 - float(np.log10(ueq_l))


def check_acidity_headers(tab: RawTable) -> None:
    """Refuse the acidity of a precipitation file written in a form not read.

    The acidity is read from a ``pH`` column without a unit.  A column of the hydrogen
    ion (``H+ [ueq/L]``, ``H [umol/L]``, ``H3O+``) in a file without a ``pH`` column was
    left unused with a note (or refused as "species not measured") and the run went on
    without the sample's acidity (beside a ``pH`` column it stays a column not used);
    a ``pH`` header with a concentration unit (``pH [ueq/L]``) had its unit ignored, so
    H+ values written under it were read as pH.  Both are errors at the header naming
    the header to write and the conversion (pH = 6 - log10(H+ in ueq/L); ueq/L and
    umol/L are the same number for H+, of charge 1).
    """
    example = "e.g. 13.8 ueq/L is pH 4.86"
    for name, h in tab.headers.items():
        raw = tab.raw_headers[name]
        if h.name.strip().lower() in _H_ION_NAMES and not tab.has("pH"):
            raise InputError("the hydrogen ion as a concentration is not read (the acidity "
                             "is read from the pH)", file=tab.path, line=tab.header_line,
                             column=raw, value=raw,
                             expected="a column 'pH' (no unit) holding pH = 6 - log10(H+ "
                             f"in ueq/L or umol/L), {example}")
        if h.name.strip().lower() == "ph" and (h.name != "pH" or h.unit not in _PH_UNITS):
            raise InputError("pH written with a unit or in another case", file=tab.path,
                             line=tab.header_line, column=raw, value=raw,
                             expected="the header 'pH' (pH has no unit; values of H+ in "
                             "ueq/L or umol/L go in as pH = 6 - log10(H+), "
                             f"{example})")


#: A site's median pH below this reads as H+ in ueq/L under the pH header [-]
#: (precipitation's weekly pH lies about 3.5 to 7 even where most acidified; from
#: memory, common practice; 3 our choice).
PH_MEDIAN_FLOOR = 3.0


def ph_as_h_notes(file_name: str, sites, ph, rows) -> list[str]:
    """One note per site whose median pH over `rows` lies below :data:`PH_MEDIAN_FLOOR`:
    H+ in ueq/L written under the pH header (a clean site's H+, 1-14 ueq/L, passes the
    0-14 range of pH).  The values are used as read; the screening then fails their
    ion balance.

    >>> ph_as_h_notes("p.csv", np.array(["a", "a", "b"]), np.array([1.2, 1.6, 5.0]),
    ...               np.ones(3, bool))[0][:60]
    'p.csv: pH at a: median 1.4 over 2 samples, below any precipi'
    """
    ok = rows & ~np.isnan(ph)
    if not ok.any():
        return []
    med = pd.Series(ph[ok]).groupby(np.asarray(sites)[ok]).agg(["median", "size"])
    out = []
    for site, (m, k) in med[med["median"] < PH_MEDIAN_FLOOR].iterrows():
        out.append(f"{file_name}: pH at {site}: median {m:.3g} over {int(k)} samples, below "
                   f"any precipitation's (about 3.5 to 7; under {PH_MEDIAN_FLOOR:g} here): "
                   f"H+ in ueq/L or umol/L under the pH header? read so, the median is pH "
                   f"{ph_from_h(m):.2f}: write pH = 6 - log10(H+) (values used as read)")
    return out


#: Most negative concentration of an ion in precipitation kept as a blank-subtraction
#: result (censored as below detection) [mg/L of the ion] (0.5: ten times or more the
#: detection limits of the major ions by ion chromatography, about 0.01-0.05 mg/L, from
#: memory; our choice).  A larger negative value is no blank residue (a sign typed, a
#: cell of another column): it is masked with its reason, never read as below detection,
#: which the "zero" treatment of censored values would make a complete-looking 0.
PRECIP_NEGATIVE_TOL_MG_L = 0.5


def _concentrations(tab, cols, kinds_allowed, ledger_parts, n, groups=None, zero_ok=None,
                    negative_tol_mg_l=None, masked_why=None, plume=None):
    """Parse species columns into amounts, with censoring. Returns dict of arrays.

    `plume` (air files), a callable: species -> bool per row, the rows of sites that
    declare the species' samplers in a source's plume (``source_plume``).

    A missing-value code typed as a value (``-999``, ``9999``...) is masked and flagged;
    with `groups` (air files: one site-and-sampler label per row) the range and
    unit-slip checks of :mod:`workbench.io.plausible` run too.  A concentration of
    exactly 0 is never a measurement (every species here is present at some level): it
    is censored as below detection, as a negative one, with a reason naming it, except
    on the rows of `zero_ok` (bool [n]: the dry weeks of a precipitation file, and rows
    dropped as exact repeats).  With `negative_tol_mg_l` (precipitation) a value below
    minus that many mg/L of the species is masked with its reason.  A masked value is
    never censored: a value below detection that a check masks (the limit of a sampler
    judged in a unit 1000x smaller) is counted as masked, not as a detection limit.
    With `masked_why` (a dict) each species' reason per masked row is put in it ("" on
    the others).
    """
    data = {}
    for sp, name in cols.items():
        unit = tab.unit_of(name)
        raw, cens = tab.numbers(name, censoring=True, missing="samples")
        try:
            amount, kind = _to_amount_by_unit(tab, name, raw, sp)
        except ValueError as exc:
            raise unit_error(tab, name, exc, "a concentration unit such as mg/L, umol/L, "
                             "ueq/L (precipitation) or ug/m3, ppb (air)",
                             ("mg/L", "umol/L", "ppb")) from None
        if kind not in kinds_allowed:
            raise unit_error(tab, name, ValueError(f"a {kind.replace('_', ' ')}"),
                             " or ".join(k.replace("_", " ") for k in kinds_allowed))
        sentinel = ~cens & _plausible.sentinel_mask(raw)
        why_parts = [_sentinel_reasons(tab, name, sp, sentinel)]
        masked = sentinel
        if groups is not None:
            bad, why = _plausible.air_checks(sp, _plausible.as_ugm3(np.where(sentinel, np.nan, amount),
                                                                     kind, sp), cens, groups,
                                             unit=unit,
                                             plume=None if plume is None else plume(sp))
            masked = masked | bad
            why_parts.append(why)
        if negative_tol_mg_l is not None:
            with np.errstate(invalid="ignore"):    # mol m-3 x kg mol-1 = kg m-3 = 1e3 mg/L
                deep = (~cens & ~masked
                        & (amount * _species.get(sp).molar_mass * 1e3 < -negative_tol_mg_l))
            why_parts.append(reason_where(deep, f"{sp} negative beyond the blank tolerance "
                                          f"-{negative_tol_mg_l:g} mg/L (masked)"))
            masked = masked | deep
        ledger_parts.extend(why_parts)
        if masked_why is not None:
            masked_why[sp] = np.where(masked, join_reasons(why_parts), "").astype(object)
        cens = cens & ~masked            # a masked limit is no detection limit
        amount = np.where(masked, np.nan, amount)
        neg = (~cens) & (amount < 0)
        zero = (~cens) & (amount == 0)
        if zero_ok is not None:
            zero &= ~zero_ok
        value = np.where(cens | neg | zero, np.nan, amount)
        dl = np.where(cens, amount, np.nan)
        data[sp] = (value, cens | neg | zero, dl, kind)
        # one shared str a reason (reason_where), not a fixed-width text array of the
        # reason's length on every row: the parts of every column are held until joined
        ledger_parts.append(reason_where(cens, f"{sp} below detection"))
        ledger_parts.append(reason_where(neg, f"{sp} negative (censored)"))
        ledger_parts.append(reason_where(zero, f"{sp} reported as 0 (censored as below "
                                         f"detection: write '<limit', or leave empty if "
                                         f"not measured)"))
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
    sentinel = np.asarray(sentinel, dtype=bool)
    out = np.full(sentinel.shape, "", dtype=object)     # texts only on the flagged rows
    typed = tab.frame[name].to_numpy(dtype=object)[sentinel].astype(str)
    out[sentinel] = (f"{label} " + typed + " looks like a missing-value code (masked)"
                     ).astype(object)
    return out


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
    # an end inclusive to the minute (00:00 to 00:59) or the second (00:59:59): the
    # period ends on the hour, with a note; before, a 59-minute period and a minute's
    # gap to the next row.  A start written at that same label (00:59 to 01:59 after
    # 00:00 to 00:59) is the same whole hour (before: an overlap with the moved end)
    s_move, e_move = inclusive_ends(tab.frame["start"], tab.frame["end"], start, end,
                                    (sites, samplers))
    if e_move.any():
        tab.end_moves = e_move
        start = start + s_move.astype("timedelta64[s]")
        end = end + e_move.astype("timedelta64[s]")
        tab.minute_end_notes = inclusive_end_notes(
            tab.path.name, tab.raw_headers.get("end", "end"),
            tab.raw_headers.get("start", "start"), s_move, e_move, tab.lines)
    return tab, n, sites, start, end, samplers


#: Attribute of the air Dataset (JSON): species -> site -> why every value of the species
#: at the site was masked, for the sites with masked values and none left (a sampler
#: judged in ng/m3 under a ug/m3 header, say).  The budget's note of such a component
#: says the species was measured and masked, not that it was not measured
#: (:func:`workbench.dryrows.masked_notes`).
ALL_MASKED_ATTR = "all_masked"
#: Most distinct reasons named in one site's text of :data:`ALL_MASKED_ATTR` (our
#: choice: the ledger, input_rows.csv, names every row's).
ALL_MASKED_REASONS = 3


def all_masked(conc, masked_why, sites, rows) -> str:
    """:data:`ALL_MASKED_ATTR` of an air file as JSON.

    Parameters
    ----------
    conc : dict
        Species -> (value, censored, limit, kind), per row (:func:`_concentrations`).
    masked_why : dict
        Species -> the reason of each masked row ("" where not masked).
    sites : ndarray of str
        The site of each row.
    rows : ndarray of bool
        The rows that count (a dropped exact repeat does not).

    Returns
    -------
    str
        ``{"NH3": {"fell": "NH3 values look 1000x too high at this sampler: ..."}}``: the
        distinct reasons without their ``(masked)``, joined by " and " (at most
        :data:`ALL_MASKED_REASONS`, then how many more); "{}" when no site lost all.
    """
    import json

    out = {}
    sites = np.asarray(sites).astype(str)
    for sp, why in masked_why.items():
        v, c = conc[sp][0], conc[sp][1]
        kept = pd.Series((~np.isnan(v) | c) & rows).groupby(sites).any()
        hit = pd.Series((why != "") & rows).groupby(sites).any()
        gone = hit.index[hit.to_numpy() & ~kept.reindex(hit.index).to_numpy()]
        for site in gone:                 # the few sites that lost every value
            texts = pd.unique(pd.Series(why[(sites == site) & rows & (why != "")])
                              .str.replace(r" \(masked\)$", "", regex=True))
            more = len(texts) - ALL_MASKED_REASONS
            text = " and ".join(texts[:ALL_MASKED_REASONS]) + (
                f" and {more} other reason{'s' if more > 1 else ''} (input_rows.csv)"
                if more > 0 else "")
            out.setdefault(sp, {})[str(site)] = text
    return json.dumps(out, sort_keys=True)


#: Attribute of the air Dataset (JSON): the masked rows of each species in runs of one
#: site and reason (rows merged where each starts at or before the end of the one
#: before), ``{"reasons": [...], "runs": {species: {"site": [...], "start": [...],
#: "end": [...], "why": [...], "rows": [...]}}}``: start and end in seconds since
#: 1970-01-01 on the Dataset's own clock (its ``start`` and ``end``), ``why`` an index
#: into ``reasons`` (the reader's reason without its ``(masked)``), ``rows`` how many
#: rows the run holds.  The budget's note of a period whose values were all masked says
#: so with the reason (:func:`workbench.dryrows.masked_runs`), apart from a period with
#: no samples at all.
MASKED_RUNS_ATTR = "masked_runs"


def masked_runs(masked_why, sites, start, end, rows) -> str:
    """:data:`MASKED_RUNS_ATTR` of an air file as JSON.

    Parameters
    ----------
    masked_why : dict
        Species -> the reason of each masked row ("" where not masked;
        :func:`_concentrations`), with or without its ``(masked)``.
    sites : ndarray of str
        The site of each row.
    start, end : ndarray of datetime64
        The row's sampling period (as written to the Dataset).
    rows : ndarray of bool
        The rows that count (a dropped exact repeat does not).

    Returns
    -------
    str
        ``{"reasons": ["NH3 values look 1000x too high at this sampler: ..."], "runs":
        {"NH3": {"site": ["ridge"], "start": [1577977200], "end": [1610031600], "why":
        [0], "rows": [53]}}}``; ``{"reasons": [], "runs": {}}`` when no row was masked.
    """
    import json

    out, reasons = {}, {}
    for sp, why in masked_why.items():
        hit = (np.asarray(why) != "") & rows
        if not hit.any():
            continue
        text = pd.Series(np.asarray(why)[hit]).str.replace(r" \(masked\)$", "", regex=True)
        local, uniq = pd.factorize(text)                # the few distinct reasons
        code = np.asarray([reasons.setdefault(t, len(reasons)) for t in uniq], int)[local]
        f = pd.DataFrame({"site": np.asarray(sites)[hit].astype(str), "why": code,
                          "start": np.asarray(start)[hit].astype("datetime64[s]").astype(np.int64),
                          "end": np.asarray(end)[hit].astype("datetime64[s]").astype(np.int64)})
        f = f.sort_values(["site", "why", "start", "end"], kind="stable").reset_index(drop=True)
        reach = f.groupby(["site", "why"], sort=False)["end"].cummax().shift()
        same = (f["site"].eq(f["site"].shift()) & f["why"].eq(f["why"].shift())
                & (f["start"] <= reach))
        run = (~same).cumsum().to_numpy()
        g = f.groupby(run, sort=True)
        out[sp] = {"site": g["site"].first().tolist(), "start": g["start"].min().tolist(),
                   "end": g["end"].max().tolist(), "why": g["why"].first().tolist(),
                   "rows": g.size().tolist()}
    return json.dumps({"reasons": list(reasons), "runs": out}, sort_keys=True)
