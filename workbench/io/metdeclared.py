"""What a site's catalogue entry says of how its met file is written, applied when read.

Two slips the met checks can only suspect (a unit doubt is kept and flagged,
:mod:`workbench.io.metwind`; a daily counter is masked, :mod:`workbench.io.metcounter`)
are put right once the user confirms them in ``sites.toml``:

- ``met_wind_unit = "knots"`` (or ``"mph"``, ``"km/h"``): the site's wind speed is
  written in that unit whatever its header says; it is converted once to m/s with pint
  (:func:`declared_wind`), and the unit check no longer judges the site;
- ``met_precipitation = "daily_counter"``: the site's precipitation is the day's running
  total, restarted at ``met_counter_restart_hour`` (the file's clock) or, without it, at
  the hour its falls come at (:func:`~workbench.io.metcounter.daily_reset_sites`); it is
  differenced back into each hour's amount (:func:`difference_daily_counter`): the first
  hour after a restart is its value itself, every other hour its value less the hour
  before's; a fall elsewhere (a manual reset, a slip) and an hour whose hour before is
  missing are masked with a reason, never guessed.

Each such site gets one note saying what was converted or differenced (counts of hours),
and :func:`suspected_notes` gives the notes of the sites still only suspected (counts
of the rows flagged or masked, and the key that acts on them).  numpy over rows, no loop
over hours.
"""
from __future__ import annotations

import numpy as np

from ..units import convert_plain
from .metcounter import FALL_MIN_MM, RESET_HOUR_SHARE, RESET_MIN_FALLS, site_hours
from .metwind import SLIP_FACTORS

#: Decimals [mm] a difference of two counter readings is rounded to: removes the
#: floating-point noise of the subtraction (0.3 - 0.1 = 0.19999999999999998), far below
#: any gauge's step (our choice).
DIFFERENCE_DECIMALS = 6


def declared_wind(ws, codes, names, catalogue, header_unit):
    """The wind speed of the sites declaring ``met_wind_unit``, converted to m/s.

    Parameters
    ----------
    ws : ndarray of float
        Wind speed of each row as read, its header's unit converted to m/s [m s-1].
    codes : ndarray of int
        Site code of each row (0 .. len(names) - 1).
    names : sequence of str
        Site id of each code.
    catalogue : SiteCatalogue
    header_unit : str
        The unit of the column's header ("" or None: m/s).

    Returns
    -------
    ws : ndarray of float
        The rows of a declaring site times (declared unit in m/s) / (header unit in m/s),
        both from pint; the others as given [m s-1].
    declared : ndarray of bool
        Per site: declares ``met_wind_unit``.
    notes : list of str
        One per declaring site: the unit, the header's, the factor and the values
        converted.

    >>> from workbench.io.sites import SiteCatalogue, Site
    >>> s = Site("a", "A", 54, -2, 300, "grass", 0.1, 10, 2, 0, met_wind_unit="knots")
    >>> u, d, notes = declared_wind(np.array([10.0, np.nan]), np.zeros(2, int), ["a"],
    ...                             SiteCatalogue([s]), "m/s")
    >>> [round(float(x), 4) for x in u], d.tolist()
    ([5.1444, nan], [True])
    """
    units = [catalogue[str(s)].met_wind_unit for s in names]
    declared = np.array([u is not None for u in units], bool)
    if not declared.any():
        return ws, declared, []
    head = str(header_unit or "").strip() or "m/s"
    per_number = float(convert_plain(1.0, head, "m/s"))     # m/s per number under the header
    factor = np.ones(len(names))
    for s in np.flatnonzero(declared):      # per site, not per hour
        factor[s] = float(convert_plain(1.0, units[s], "m/s")) / per_number
    out = ws * factor[codes]
    counts = np.bincount(codes[np.isfinite(ws)], minlength=len(names))
    notes = [f"met {names[s]}: wind_speed written in {units[s]} (met_wind_unit in the site "
             f"catalogue; the header says {head}): {int(counts[s]):,} values converted to "
             f"m/s (x {factor[s]:.4g}, pint), not judged by the wind unit check"
             for s in np.flatnonzero(declared & (counts > 0))]   # none: unused_notes
    return out, declared, notes


def counter_sites(names, catalogue):
    """Per site: declares ``met_precipitation = "daily_counter"``, and its restart hour
    (``met_counter_restart_hour``; -1: from the data)."""
    sites = [catalogue[str(s)] for s in names]
    declared = np.array([s.met_precipitation == "daily_counter" for s in sites], bool)
    hour = np.array([-1 if s.met_counter_restart_hour is None else int(s.met_counter_restart_hour)
                     for s in sites], np.int64)
    return declared, hour


def difference_daily_counter(pr, codes, t, offset_h, names, declared, given_hour, found,
                             header="column precipitation"):
    """Each hour's amount from a daily counter, at the declaring sites.

    Parameters
    ----------
    pr : ndarray of float
        Precipitation of each row as read [mm].
    codes : ndarray of int
        Site code of each row (0 .. len(names) - 1).
    t : ndarray of datetime64
        End of each row's hour [UTC].
    offset_h : ndarray of float
        Per site, the offset of its file's clock from UTC [h] (``utc_offset_h``).
    names : sequence of str
    declared : ndarray of bool
        Per site: its precipitation is a daily counter.
    given_hour : ndarray of int
        Per site, the restart hour of the day (file's clock) from the catalogue, -1 for
        none [h].
    found : tuple
        :func:`~workbench.io.metcounter.daily_reset_sites`'s result on `pr`: per site the
        hour end most falls come at, its share and the falls (the restart hour of a site
        that gives none).
    header : str
        The column as the reasons name it.

    Returns
    -------
    amounts : ndarray of float
        The declaring sites' rows: the hour's amount (NaN where masked); the others as
        read [mm].
    reasons : ndarray of object
        Per row, the reason a declaring site's row is masked ("" none; one text object
        per site and cause).
    notes : list of str
        One per declaring site: the restart hour and where it comes from, the hours
        differenced, taken as read and masked.

    >>> t = np.datetime64("2020-01-01T01:00") + np.arange(48) * np.timedelta64(1, "h")
    >>> hourly = np.tile(np.r_[0.2, 0, 0, 0.5, np.zeros(20)], 2)
    >>> counter = np.round(np.r_[np.cumsum(hourly[:24]), np.cumsum(hourly[24:])], 1)
    >>> a, m, n = difference_daily_counter(counter, np.zeros(48, int), t, np.zeros(1),
    ...                                    ["a"], np.ones(1, bool), np.zeros(1, int),
    ...                                    (np.zeros(1, int), np.zeros(1), np.zeros(1, int)))
    >>> bool((a == hourly).all()), int((m != "").sum())
    (True, 0)
    """
    n_sites = len(names)
    amounts = np.array(pr, float)
    rows = declared[codes]
    reasons = np.full(len(amounts), "", dtype=object)
    if not rows.any():
        return amounts, reasons, []
    top, share, falls = found
    from_data = given_hour < 0
    restart = np.where(from_data, (np.asarray(top) - 1) % 24, given_hour)
    unknown = from_data & (np.asarray(falls) == 0)
    chosen = np.flatnonzero(rows)
    order, c, local_hour, after = site_hours(codes[chosen], np.asarray(t)[chosen], offset_h)
    order = chosen[order]
    v = amounts[order]
    first = local_hour == (restart[c] + 1) % 24
    prev_ok = after.copy()
    prev_ok[1:] &= np.isfinite(v[:-1])
    diff = np.full(len(v), np.nan)
    diff[1:] = np.round(v[1:] - v[:-1], DIFFERENCE_DECIMALS)
    finite = np.isfinite(v)
    site_max = np.full(n_sites, -np.inf)
    np.maximum.at(site_max, c[finite], v[finite])
    dry_site = unknown & (site_max <= 0)       # never above 0: every amount is 0
    never_site = unknown & ~dry_site           # above 0, never falling: no restart seen
    rounding = prev_ok & (diff < 0) & (diff >= -FALL_MIN_MM)
    fall = finite & ~first & prev_ok & (diff < -FALL_MIN_MM) & ~unknown[c]
    orphan = finite & ~first & ~prev_ok & ~unknown[c]
    out = np.where(first, v, np.where(rounding, 0.0, diff))
    out = np.where(finite & ~fall & ~orphan, out, np.nan)
    out = np.where(dry_site[c] & finite, 0.0, np.where(never_site[c], np.nan, out))
    amounts[order] = out
    count = lambda sel: np.bincount(c[sel], minlength=n_sites)  # noqa: E731
    n_first = count(first & finite)
    n_diff = count(~first & finite & ~fall & ~orphan)
    n_fall, n_orphan, n_read = count(fall), count(orphan), count(finite)
    notes = []
    for s in np.flatnonzero(declared & (n_read > 0)):   # per site (none read: unused_notes)
        name, r = names[s], int(restart[s])
        if dry_site[s]:
            notes.append(f"met {name}: precipitation declared a daily counter (met_precipitation "
                         f"in the site catalogue), never above 0 in its record: "
                         f"{int(n_read[s]):,} hours read as 0 mm")
            continue
        if never_site[s]:
            reasons[order[finite & (c == s)]] = (f"{header} at site {name} is declared a daily "
                               "counter (met_precipitation in the site catalogue) but never "
                               "falls from one hour to the next: its restart hour cannot be "
                               "told from the data, give met_counter_restart_hour (masked)")
            notes.append(f"met {name}: precipitation declared a daily counter, "
                         f"{int(n_read[s]):,} hours masked: no restart in its record, give "
                         "met_counter_restart_hour in the site catalogue")
            continue
        if n_fall[s]:
            reasons[order[fall & (c == s)]] = (f"{header} at site {name}, a daily counter "
                               f"restarted at {r:02d}:00 (met_precipitation in the site "
                               "catalogue), falls from the hour before at an hour that is not "
                               "the first after its restart: a manual reset, a slip or another "
                               "restart hour? not differenced (masked)")
        if n_orphan[s]:
            reasons[order[orphan & (c == s)]] = (f"{header} at site {name}, a daily counter "
                               f"restarted at {r:02d}:00 (met_precipitation in the site "
                               "catalogue): the hour before is missing, so this hour's amount "
                               "cannot be told from the counter (masked)")
        if from_data[s]:
            src = (f"the hour from the data: {float(share[s]):.0%} of its {int(falls[s]):,} "
                   f"falls at the hour ending {(r + 1) % 24:02d}:00")
        else:
            src = "met_counter_restart_hour"
            if (falls[s] >= RESET_MIN_FALLS and share[s] >= RESET_HOUR_SHARE
                    and int(top[s]) != (r + 1) % 24):
                src += (f"; its falls come at the hour ending {int(top[s]):02d}:00 "
                        f"({float(share[s]):.0%} of {int(falls[s]):,}): check the hour")
        masked = [f"{k:,} hour{'s' * (k != 1)} {words}" for k, words in (
            (int(n_fall[s]), "falling from the hour before elsewhere than after the restart"),
            (int(n_orphan[s]), "whose hour before is missing")) if k]
        masked = "; masked: " + ", ".join(masked) if masked else ""
        notes.append(f"met {name}: precipitation read as a daily counter restarted at "
                     f"{r:02d}:00, the file's clock (met_precipitation in the site "
                     f"catalogue; {src}): {int(n_diff[s]):,} hours differenced into each "
                     f"hour's amount, {int(n_first[s]):,} first hours after a restart "
                     f"taken as read{masked}")
    return amounts, reasons, notes


def unused_notes(values, codes, names, catalogue, raw_units=None):
    """One located note per declaration of the site catalogue that acts on nothing.

    ``met_precipitation = "daily_counter"`` where the met file holds no precipitation
    value at the site (no column, or its cells empty at every one of the site's rows)
    has nothing to difference, and ``met_wind_unit`` nothing to convert where it holds no
    wind speed there; before, the first said "never above 0 in its record: 0 hours read
    as 0 mm" and the second "0 values converted", neither where the key is written.

    Parameters
    ----------
    values : dict
        Variable -> (rows,) as read (before the declarations act) [internal units].
    codes : ndarray of int
        Site code of each row (0 .. len(names) - 1).
    names : sequence of str
    catalogue : SiteCatalogue
        Its :meth:`~workbench.io.sites.SiteCatalogue.key_place` says where each key is.
    raw_units : dict, optional
        Variable -> the unit of its header, to name the column.

    Returns
    -------
    list of str
        "sites.toml, line 75, site 'farm': met_precipitation = "daily_counter" declared,
        but ...: nothing differenced; expected ...".

    >>> from workbench.io.sites import SiteCatalogue, Site
    >>> s = Site("a", "A", 54, -2, 300, "grass", 0.1, 10, 2, 0, met_wind_unit="knots")
    >>> note = unused_notes({"wind_speed": np.array([np.nan])}, np.zeros(1, int), ["a"],
    ...                     SiteCatalogue([s]))[0]
    >>> print(note.split(" declared")[0])
    the site catalogue, site 'a': met_wind_unit = "knots"
    """
    raw_units = raw_units or {}
    notes = []
    for var, key, done, expected in (
            ("precipitation", "met_precipitation", "nothing differenced",
             "the day's running total in the met file's precipitation column at this site's "
             "rows, or no met_precipitation key (each hour's amount, the default)"),
            ("wind_speed", "met_wind_unit", "nothing converted",
             "the site's wind speed in the met file's wind_speed column, or no "
             "met_wind_unit key (the header's unit)")):
        given = [getattr(catalogue[str(u)], key, None) for u in names]
        if var == "precipitation":
            given = [g if g == "daily_counter" else None for g in given]
        if not any(g is not None for g in given):
            continue
        v = values.get(var)
        counts = (np.bincount(codes[np.isfinite(v)], minlength=len(names)) if v is not None
                  else np.zeros(len(names), np.int64))
        rows = np.bincount(codes, minlength=len(names))
        unit = str(raw_units.get(var, "")).strip()
        column = f"'{var}" + (f" [{unit}]" if unit else "") + "'"
        for s in np.flatnonzero([g is not None for g in given]):
            if counts[s]:
                continue
            held = (f"its column {column} empty at all {int(rows[s]):,} of the site's rows"
                    if v is not None else f"no column {var}")
            notes.append(f"{catalogue.key_place(names[s], key)}: {key} = \"{given[s]}\" "
                         f"declared, but the met file holds no {var.replace('_', ' ')} "
                         f"at the site ({held}): {done}; expected {expected}")
    return notes


def suspected_notes(names, rows_per_site, found_wind, median_wind_sites, counter_found,
                    counter_hours):
    """Input notes of the met slips only suspected: per site, the rows flagged or masked
    and the catalogue key that acts on them.

    Parameters
    ----------
    names : sequence of str
    rows_per_site : ndarray of int
        Per site, its rows (each flag or mask below takes every row of its site).
    found_wind : list of (int, str)
        :func:`~workbench.io.metwind.wind_unit_findings`' sites and reasons.
    median_wind_sites : ndarray of int
        Sites flagged by the median rule (km/h or knots?).
    counter_found : ndarray of int
        Sites whose precipitation was masked as a daily counter.
    counter_hours : ndarray of int
        Per site, the hour end most of its falls come at (file's clock).

    Returns
    -------
    list of str

    >>> suspected_notes(["a"], np.array([8760]), [], np.array([], int), np.array([0]),
    ...                 np.array([1]))[0][:62]
    'met a: precipitation masked at 8,760 hours: a gauge counter re'
    """
    notes = []
    named = dict(found_wind)
    for s in sorted(set(named) | {int(x) for x in median_wind_sites}):
        text = named.get(s, "km/h (x 3.6) or knots (x 1.94)")
        units = [k for k in SLIP_FACTORS if f"{k} under" in text or f"{k} (x" in text]
        keys = f'met_wind_unit = "{units[0]}"' + "".join(f' (or "{k}")' for k in units[1:])
        notes.append(f"met {names[s]}: wind_speed flagged at {int(rows_per_site[s]):,} hours, "
                     f"kept as read: {' or '.join(units)} under an m/s header? (the rows' "
                     f"reason says why); if so, {keys} for the site in the site catalogue "
                     "converts it to m/s when read")
    for s in counter_found:
        r = (int(counter_hours[s]) - 1) % 24
        notes.append(f"met {names[s]}: precipitation masked at {int(rows_per_site[s]):,} hours: "
                     f"a gauge counter restarted each day at {r:02d}:00? (the rows' reason says "
                     'why); if so, met_precipitation = "daily_counter" for the site in the site '
                     "catalogue differences it into each hour's amount when read")
    return notes
