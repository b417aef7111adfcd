"""The history of a site: ``[[site.change]]`` tables of the site catalogue.

A long record changes method: the laboratory's unit or detection limit, the gauge, the
sampler or collector, the place of the site, the surface around it.  A user declares
each change once, beside the site::

    [[site.change]]
    date = 2014-04-01                  # from this date on (UTC)
    what = "land_use"                  # one of CHANGE_KINDS
    from = "conifer_forest"            # land_use and collector: the class before ...
    to = "grass"                       # ... and after
    note = "forest clear-felled"       # optional words

The declarations are read here (errors located at the table's key); what the run does
with them is in :func:`workbench.analysis.trends.change_notes` (the trends that cross a
change say so), in :mod:`workbench.surfacehistory` (the engine follows a change of the
surface or of the collector in one run) and in :func:`surface_notes` (a run whose period
crosses such a change is told what the engine does with it).
"""
from __future__ import annotations

import datetime as _dt
import re
from dataclasses import dataclass

import numpy as np

from ..errors import suggest
from ..landuse import LAND_USE

#: What a change may be (docs/data_formats.md, "A long record: the site's history").
CHANGE_KINDS = ("land_use", "collector", "location", "sampler", "gauge", "laboratory",
                "units", "detection_limit", "other")
#: Keys of a ``[[site.change]]`` table.
CHANGE_KEYS = ("date", "what", "from", "to", "air_from", "air_to", "latitude", "longitude",
               "note")
#: A ``laboratory`` change may name the laboratories (ids of our users' own choosing):
#: ``from``/``to`` of the precipitation chemistry, ``air_from``/``air_to`` of the air
#: samples' extracts.  Sites naming the same laboratory share its calibration bias in
#: the Monte Carlo (docs/methods_uncertainty.md, "Laboratories shared by sites").
LAB_KEYS = ("from", "to", "air_from", "air_to")
#: Changes that alter what the engine computes (it follows them hour by hour or period by
#: period: workbench/surfacehistory.py).
ENGINE_KINDS = ("land_use", "collector")
#: A move farther than this is another site, not a move of the same one [km] (a site
#: moved "a few hundred metres" keeps its record; our choice).
MOVE_HINT_KM = 5.0
_EARTH_RADIUS_KM = 6371.0     # mean Earth radius [km] (common practice)


@dataclass(frozen=True)
class SiteChange:
    """One declared change of a site's method.  ``date`` is a UTC date."""

    date: _dt.date
    what: str
    before: str | None = None       #: ``from`` (land_use, collector; laboratory id)
    after: str | None = None        #: ``to``
    latitude: float | None = None   #: the new place (location) [degree north]
    longitude: float | None = None  #: [degree east]
    note: str = ""
    #: the air samples' laboratory before and after (``air_from``/``air_to``, laboratory)
    air_before: str | None = None
    air_after: str | None = None

    def describe(self) -> str:
        """``2014-04-01 land_use conifer_forest -> grass (forest clear-felled)``."""
        text = f"{self.date.isoformat()} {self.what}"
        if self.before or self.after:
            text += f" {self.before} -> {self.after}"
        if self.air_before or self.air_after:
            text += f" air {self.air_before} -> {self.air_after}"
        if self.latitude is not None:
            text += f" to {self.latitude:g} N {self.longitude:g} E"
        return text + (f" ({self.note})" if self.note else "")

    def as_dict(self) -> dict:
        """The ``[[site.change]]`` table of this change."""
        out = {"date": self.date.isoformat(), "what": self.what}
        for key, v in (("from", self.before), ("to", self.after),
                       ("air_from", self.air_before), ("air_to", self.air_after),
                       ("latitude", self.latitude), ("longitude", self.longitude)):
            if v is not None:
                out[key] = v
        if self.note:
            out["note"] = self.note
        return out


def change_key_line(text_lines, start, end, j, key):
    """Line (1-based) of `key` in the j-th ``[[site.change]]`` table between lines
    `start` and `end` (0-based) of the catalogue; the table's header without the key,
    the block's first line without the table."""
    head = re.compile(r"^\s*\[\[\s*site\.change\s*\]\]")
    heads = [i for i in range(start, end) if head.match(text_lines[i])]
    if j >= len(heads):
        return start + 1
    stop = heads[j + 1] if j + 1 < len(heads) else end
    pat = re.compile(rf"^\s*{re.escape(key)}\s*=")
    for i in range(heads[j] + 1, stop):
        if text_lines[i].lstrip().startswith("["):
            break
        if pat.match(text_lines[i]):
            return i + 1
    return heads[j] + 1


def _date(v):
    if isinstance(v, _dt.datetime):
        return v.date() if v.time() == _dt.time(0) else None
    if isinstance(v, _dt.date):
        return v
    if isinstance(v, str):
        try:
            return _dt.date.fromisoformat(v.strip())
        except ValueError:
            return None
    return None


def _distance_km(lat1, lon1, lat2, lon2) -> float:
    """Great-circle distance [km] (haversine; common practice)."""
    p1, p2 = np.deg2rad(lat1), np.deg2rad(lat2)
    a = (np.sin((p2 - p1) / 2) ** 2
         + np.cos(p1) * np.cos(p2) * np.sin(np.deg2rad(lon2 - lon1) / 2) ** 2)
    return float(2 * _EARTH_RADIUS_KM * np.arcsin(np.sqrt(a)))


def check_changes(t: dict, err, notes: list, label: str) -> tuple:
    """The site's ``change`` tables as :class:`SiteChange`, in date order.

    Parameters
    ----------
    t : dict
        The site's keys; ``t["change"]`` a list of tables (``[[site.change]]``).
    err : callable
        ``err(problem, j, key, value=None, expected=None)`` -> an InputError located at
        `key` of the j-th change table.
    notes : list
        Hints (a move farther than :data:`MOVE_HINT_KM`) are appended here.
    label : str
        Names the site in the hints.

    Raises
    ------
    InputError
        An unknown key or kind, a date that is not a date, a ``from``/``to`` that is not a
        class of the kind, two changes of one kind on one date, a chain of surface (or
        collector) changes that does not follow on (one change's ``to`` is not the next
        one's ``from``) or does not end at the site's own ``land_use`` (``collector``),
        a location without both coordinates or outside the globe.
    """
    tables = t.get("change", [])
    out = []
    for j, c in enumerate(tables):
        if not isinstance(c, dict):
            raise err("a change is not a table", j, "change", c,
                      "[[site.change]] tables with date and what")
        for key in c:
            if key not in CHANGE_KEYS:
                raise err("unknown key of a change", j, key, None,
                          "one of " + ", ".join(CHANGE_KEYS) + suggest(key, CHANGE_KEYS))
        for key in ("date", "what"):
            if key not in c:
                raise err("missing key of a change", j, key, None,
                          "date (2014-04-01) and what (" + ", ".join(CHANGE_KINDS) + ")")
        d = _date(c["date"])
        if d is None:
            from .table import day_month_readings
            both = day_month_readings(str(c["date"]).split(" ")[0].split("T")[0])
            hint = (f" (a date in day/month or month/day order? write year-month-day: {both})"
                    if both else "")
            raise err("change date is not a date" + hint, j, "date", c["date"],
                      "a date such as 2014-04-01 (the first day of the new method, UTC)")
        what = c["what"]
        if what not in CHANGE_KINDS:
            raise err("unknown kind of change", j, "what", what,
                      "one of " + ", ".join(CHANGE_KINDS) + suggest(str(what), CHANGE_KINDS))
        classes = LAND_USE if what == "land_use" else ("wet_only", "bulk")
        if what in ENGINE_KINDS:
            for key in ("from", "to"):
                if key not in c:
                    raise err(f"a {what} change without '{key}'", j, key, None,
                              "from and to, each one of " + ", ".join(classes))
                if c[key] not in classes:
                    raise err(f"unknown {what.replace('_', ' ')} class", j, key, c[key],
                              "one of " + ", ".join(classes) + suggest(str(c[key]), classes))
            if c["from"] == c["to"]:
                raise err(f"a {what} change to the same class", j, "to", c["to"],
                          f"a class other than from = {c['from']!r}")
        elif what == "laboratory":
            for key in LAB_KEYS:
                if key in c and (not isinstance(c[key], str) or not c[key].strip()):
                    raise err("laboratory id is not text", j, key, c[key],
                              "the laboratory's id in quotes, e.g. \"lab-a\" (the same id "
                              "at every site it analyses for)")
        elif "from" in c or "to" in c:
            raise err(f"'from'/'to' on a {what} change", j, "from" if "from" in c else "to",
                      c.get("from", c.get("to")),
                      "from and to only on land_use, collector and laboratory changes "
                      "(words go in note)")
        if what != "laboratory" and ("air_from" in c or "air_to" in c):
            key = "air_from" if "air_from" in c else "air_to"
            raise err(f"'{key}' on a {what} change", j, key, c[key],
                      "air_from and air_to only on laboratory changes")
        lat, lon = c.get("latitude"), c.get("longitude")
        if what == "location":
            for key, v, lim in (("latitude", lat, 90), ("longitude", lon, 360)):
                if v is None:
                    raise err("a location change without its new coordinates", j, key, None,
                              "latitude and longitude of the new place [degree]")
                if isinstance(v, bool) or not isinstance(v, (int, float)) or \
                        not -min(lim, 180) <= v <= lim:
                    raise err(f"{key} of a location change out of range", j, key, v,
                              f"degrees, -{min(lim, 180)} to {lim}")
        elif lat is not None or lon is not None:
            raise err(f"coordinates on a {what} change", j,
                      "latitude" if lat is not None else "longitude", lat if lat is not None else lon,
                      "coordinates only on a location change")
        note = c.get("note", "")
        if not isinstance(note, str):
            raise err("change note is not text", j, "note", note, "words in quotes")
        lab = {k: (c[k].strip() if isinstance(c.get(k), str) else None) for k in LAB_KEYS}
        out.append((d, j, SiteChange(d, what, lab["from"] if what == "laboratory" else c.get("from"),
                                     lab["to"] if what == "laboratory" else c.get("to"),
                                     None if lat is None else float(lat),
                                     None if lon is None else float(lon), note.strip(),
                                     lab["air_from"], lab["air_to"])))
    out.sort(key=lambda x: (x[0], x[1]))
    seen = {}
    for d, j, ch in out:
        if (d, ch.what) in seen:
            raise err(f"two {ch.what} changes on one date", j, "date", d.isoformat(),
                      f"one change of a kind per date (the other is change {seen[(d, ch.what)] + 1}"
                      " of this site)")
        seen[(d, ch.what)] = j
    own = {"land_use": t.get("land_use"), "collector": t.get("collector", "wet_only")}
    for what in ENGINE_KINDS:
        chain = [(j, ch) for _, j, ch in out if ch.what == what]
        for (j0, a), (j1, b) in zip(chain, chain[1:]):
            if a.after != b.before:
                raise err(f"{what} changes do not follow on", j1, "from", b.before,
                          f"{a.after!r}, the 'to' of the {what} change of {a.date.isoformat()}"
                          " (periods of a surface must not overlap nor leave a hole)")
        if chain and chain[-1][1].after != own[what]:
            j, last = chain[-1]
            raise err(f"the last {what} change does not end at the site's {what}", j, "to",
                      last.after, f"{own[what]!r}, the site's {what} (the catalogue describes "
                      "the site as it is after its last change)")
    _check_laboratory_chain(t, out, err)
    prev = (t.get("latitude"), t.get("longitude"))
    moves = [ch for _, _, ch in out if ch.what == "location"]
    if moves and isinstance(prev[0], (int, float)) and isinstance(prev[1], (int, float)):
        last = moves[-1]
        if (last.latitude, last.longitude) != (float(prev[0]), float(prev[1])):
            j = next(j for _, j, ch in out if ch is last)
            raise err("the last location change does not end at the site's coordinates", j,
                      "latitude", f"{last.latitude:g}, {last.longitude:g}",
                      f"the site's latitude and longitude ({prev[0]:g}, {prev[1]:g}): the "
                      "catalogue describes the site as it is after its last move")
        for a, b in zip(moves, moves[1:]):
            km = _distance_km(a.latitude, a.longitude, b.latitude, b.longitude)
            if km > MOVE_HINT_KM:
                notes.append(f"{label}: moved {km:.1f} km on {b.date.isoformat()}: a site more "
                             f"than {MOVE_HINT_KM:g} km away is another site (give it its own id)")
    return tuple(ch for _, _, ch in out)


def _check_laboratory_chain(t, out, err):
    """The laboratory ids named on a site's laboratory changes follow on (one change's
    ``to`` is the next one's ``from`` where both are given) and the last ``to`` is the
    site's ``laboratory`` (``air_to``: ``air_laboratory``) where both are given."""
    chain = [(j, ch) for _, j, ch in out if ch.what == "laboratory"]
    for pre, now_key, key_to in (("", "laboratory", "to"), ("air_", "air_laboratory", "air_to")):
        get = (lambda ch: (ch.before, ch.after)) if not pre else (
            lambda ch: (ch.air_before, ch.air_after))
        for (j0, a), (j1, b) in zip(chain, chain[1:]):
            if get(a)[1] and get(b)[0] and get(a)[1] != get(b)[0]:
                raise err("laboratory changes do not follow on", j1, pre + "from", get(b)[0],
                          f"{get(a)[1]!r}, the '{key_to}' of the laboratory change of "
                          f"{a.date.isoformat()}")
        now = t.get(now_key)
        if chain and now is not None and get(chain[-1][1])[1] not in (None, now):
            j, last = chain[-1]
            raise err("the last laboratory change does not end at the site's laboratory", j,
                      key_to, get(last)[1], f"{now!r}, the site's {now_key} (the catalogue "
                      "describes the site as it is after its last change)")


def laboratory_ids(site, air: bool = False) -> list:
    """The laboratory id of each laboratory period of `site` (split at its laboratory
    changes, in date order; None where the catalogue names none): the first change's
    ``from`` (``air_from``), then each change's ``to`` (``air_to``), the last period
    the site's ``laboratory`` (``air_laboratory``) when its change names none."""
    chain = [ch for ch in getattr(site, "changes", ()) or () if ch.what == "laboratory"]
    now = getattr(site, "air_laboratory" if air else "laboratory", None)
    pick = (lambda ch: (ch.air_before, ch.air_after)) if air else (
        lambda ch: (ch.before, ch.after))
    if not chain:
        return [now]
    ids = [pick(chain[0])[0]]
    for k, ch in enumerate(chain):
        after = pick(ch)[1]
        if after is None and k + 1 < len(chain):
            after = pick(chain[k + 1])[0]
        ids.append(after)
    if ids[-1] is None:
        ids[-1] = now
    return ids


def changes_in(site, start, end) -> tuple:
    """The changes of `site` dated inside ``(start, end]`` [datetime64 or str]: those a
    record from `start` to `end` crosses."""
    s, e = np.datetime64(start, "D"), np.datetime64(end, "D")
    return tuple(ch for ch in getattr(site, "changes", ())
                 if s < np.datetime64(ch.date.isoformat(), "D") <= e)


def surface_notes(catalogue, start, end) -> list[str]:
    """Lines for records from `start` to `end` that cross a change of a site's surface
    or collector: what the run does with it (:mod:`workbench.surfacehistory`)."""
    out = []
    for site in catalogue:
        for ch in changes_in(site, start, end):
            if ch.what not in ENGINE_KINDS:
                continue
            d = ch.date.isoformat()
            if ch.what == "land_use":
                how = (f"its own surface ({site.land_use!r} row) is computed as {ch.before!r} "
                       f"until {d} 00:00 UTC and {ch.after!r} from then on ({ch.before!r} with "
                       "the class defaults of the land-use table); a period holding the change "
                       "sums both parts and its note says so")
                if site.met_land_use is None:
                    how += (f"; the wind mast (met_land_use not given) stands over that "
                            f"surface and follows it too ({ch.before!r} until {d}: its z0 "
                            "and d carry u* to the receptors); give met_land_use if the "
                            "mast stood over another surface all along")
            else:
                how = (f"each precipitation sample is budgeted under the collector in force "
                       f"over its dates ({ch.before!r} until {d}, {ch.after!r} from then "
                       "on; a sample ending on that day is the old collector's, one starting "
                       "on it the new one's); a period holding the change sums its samples "
                       "under their own rules, and only a sample holding the whole day is "
                       "split by its hours (flagged)")
            out.append(f"site {site.id}: {ch.what} changed on {d} ({ch.before} -> {ch.after}): "
                       f"{how} (docs/data_formats.md, \"A long record\")")
    return out


#: Changes of how a sample is taken: one inside a sample's period is said.
SAMPLE_KINDS = {"precipitation": ("location", "sampler", "collector"),
                "air": ("location", "sampler")}


def sample_notes(ds, catalogue, role, file_name) -> list[str]:
    """Located lines for samples that hold the whole day of a declared change of how
    they are taken (:data:`SAMPLE_KINDS`): a sample is taken with one method at one
    place, so such a change belongs between samples.

    Parameters
    ----------
    ds : xarray.Dataset
        Samples or air periods with ``site``, ``start``, ``end`` and ``line``.
    role : str
        ``precipitation`` or ``air``.
    """
    if ds is None or "line" not in ds:
        return []
    site = ds["site"].values.astype(str)
    start, end = ds["start"].values, ds["end"].values
    line = ds["line"].values
    out = []
    for s in catalogue:
        for ch in getattr(s, "changes", ()):
            if ch.what not in SAMPLE_KINDS[role]:
                continue
            d0 = np.datetime64(ch.date.isoformat(), "ns")     # the change's day, whole,
            d1 = d0 + np.timedelta64(1, "D")                  # inside the sample
            inside = np.flatnonzero((site == s.id) & (start < d0) & (end > d1))
            if inside.size:
                lines = ", ".join(str(int(v)) for v in line[inside][:3])
                more = f" and {inside.size - 3} more" if inside.size > 3 else ""
                out.append(f"{file_name}, line {lines}{more}: {role} sample of site {s.id} "
                           f"from {str(start[inside[0]])[:16]} to {str(end[inside[0]])[:16]} "
                           f"holds the {ch.what} change of {ch.date.isoformat()} (sites.toml):"
                           " a sample is taken with one method at one place; date the change "
                           "on the day one sample ends and the next starts (read as it is)")
    return out
