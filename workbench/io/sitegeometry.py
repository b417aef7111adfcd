"""Where a site stands: the plausible elevations, canopy and mast heights and slopes
of a site and of its mast's history, and the note of a time zone far from the
longitude's (:func:`zone_note`).

Moved from :mod:`workbench.io.sites`, which re-exports them.
"""
from __future__ import annotations

import numpy as np

from ..landuse import LAND_USE
from ..surface.solar import DEGREES_PER_HOUR     # mean solar offset = longitude / 15 [h]
from .siterecord import Site


#: Station elevations possible on land [m] (lowest shore about -430 m, highest summit
#: about 8850 m; from memory, rounded outward).
ELEVATION_RANGE = (-450.0, 9000.0)
#: Canopies taller than this are impossible [m] (the tallest measured trees are about
#: 116 m; from memory).
MAX_CANOPY_M = 120.0
#: A mast higher than this is doubtful at a deposition site (a height in feet?) [m]
#: (common practice).
TALL_MAST_M = 150.0
#: A terrain slope steeper than this is doubtful (a percent grade?) [degree]
#: (common practice).
STEEP_SLOPE_DEG = 45.0
#: Canopies of the short-vegetation classes taller than this are no longer of the class
#: [m] (our choice above the tallest of each, from memory: tall tropical grasses about
#: 3 m, maize and sugar cane 3-5 m, reed beds about 4 m, tall shrubland about 6 m): a
#: height in cm (12 for 0.12 m) lands above them.
SHORT_CANOPY_MAX_M = {"grass": 3.0, "crops": 6.0, "moorland": 8.0, "wetland": 6.0}
VEGETATED = ("conifer_forest", "deciduous_forest", "mixed_forest", "grass", "crops",
             "moorland", "wetland")


def _geometry(t, err, notes, label):
    """Heights and angles that make the wind profile impossible (errors) or doubtful
    (hints in `notes`); the mast's z0 and d follow the drydep rules
    (:func:`workbench.surface.roughness.land_use_roughness`)."""
    from ..landuse import FOREST_CLASSES
    from ..surface.roughness import land_use_roughness
    lu, h = t["land_use"], float(t["canopy_height_m"])
    z0_given = t.get("roughness_length_m")
    if z0_given is not None and z0_given <= 0:
        raise err("roughness length not positive", "roughness_length_m", z0_given,
                  "z0 > 0 m (or no roughness_length_m: z0 from the land use and canopy height)")
    slope = t.get("terrain_slope_deg", 0.0)
    if not 0 <= slope < 90:
        raise err("terrain slope outside 0-90 degrees", "terrain_slope_deg", slope,
                  "an angle in degrees from 0 to below 90 (a grade of 100 % is 45 degrees)")
    if slope > STEEP_SLOPE_DEG:
        notes.append(f"{label}: terrain_slope_deg {slope:g} is steeper than "
                     f"{STEEP_SLOPE_DEG:g} degrees: a percent grade written as degrees?")
    if h > MAX_CANOPY_M:
        raise err("canopy taller than any tree", "canopy_height_m", h,
                  f"a height below {MAX_CANOPY_M:g} m (a height in feet or cm?)")
    top = SHORT_CANOPY_MAX_M.get(lu)
    if top is not None and h > top:
        raise err(f"canopy too tall for the class {lu!r}", "canopy_height_m", h,
                  f"a height in m up to about {top:g} m for {lu} (default "
                  f"{LAND_USE[lu][1]:g} m): a height in cm ({h:g} cm is {h / 100:g} m)? "
                  "or a taller stand of another class (a forest, conifer_forest ...)?")
    if h == 0 and lu in FOREST_CLASSES:
        raise err("canopy height 0 for a forest", "canopy_height_m", h,
                  f"the mean tree height in m (default for {lu}: {LAND_USE[lu][1]:g} m)")
    if h == 0 and lu in VEGETATED:
        notes.append(f"{label}: canopy_height_m is 0 for the vegetated class {lu!r}: left "
                     f"blank? (default {LAND_USE[lu][1]:g} m; z0 falls back to a smooth surface)")
    z_wind = float(t["wind_height_m"])
    if z_wind > TALL_MAST_M:
        notes.append(f"{label}: wind_height_m {z_wind:g} is above {TALL_MAST_M:g} m: a height in feet?")
    mast = t.get("met_land_use") or lu
    own = mast == lu
    h_m = h if own else LAND_USE[mast][1]
    z0_m, d_m = land_use_roughness(
        mast, h_m, np.nan if not own or z0_given is None else float(z0_given),
        np.nan if not own or t.get("displacement_height_m") is None
        else float(t["displacement_height_m"]))
    z0_m, d_m = float(z0_m), float(d_m)
    d_key = "displacement_height_m" if own and "displacement_height_m" in t else "wind_height_m"
    if z_wind <= d_m:
        raise err("anemometer at or below the displacement height", d_key, t.get(d_key),
                  f"wind_height_m {z_wind:g} m above the displacement height d = {d_m:.3g} m "
                  f"of the mast's surface {mast!r} ({_d_rule(d_key, d_m, h_m, mast)})")
    if np.isfinite(z0_m) and z_wind - d_m <= z0_m:
        raise err("anemometer within the roughness length above d", "wind_height_m", z_wind,
                  f"wind_height_m - d ({z_wind - d_m:.3g} m) larger than z0 = {z0_m:.3g} m")
    if z_wind < h_m:
        notes.append(f"{label}: the anemometer ({z_wind:g} m) is below the canopy top "
                     f"({h_m:g} m) of the mast's surface {mast!r}: the log wind profile is "
                     "doubtful there (roughness sublayer)")
    if float(t["sampler_height_m"]) <= d_m:
        notes.append(f"{label}: the air sampler inlet ({t['sampler_height_m']:g} m) is at or "
                     f"below the displacement height ({d_m:.3g} m) of the mast's surface "
                     f"{mast!r}: an in-canopy concentration?")
    if t["latitude"] == 0 and t["longitude"] == 0:
        notes.append(f"{label}: latitude and longitude are both 0: a placeholder?")


#: ``utc_offset_h`` further than this from longitude / 15 (modulo 24 h) gives a note [h].
#: Civil standard times differ from local mean solar time by up to about 3 h in practice
#: (common practice): the largest gap on inhabited land that we know of is about 3.1 h,
#: at the western end of China on UTC+8 (from memory); the far west of Spain on summer
#: time is about 2.6 h.  A few zones lie further: Antarctic stations keeping their supply
#: base's time (New Zealand time at the South Pole), and a logger set to a distant zone on
#: purpose.  3.5 h keeps half an hour beyond the inhabited extremes (our choice); a
#: deliberate offset stays usable, so this is a note, not an error.
ZONE_NOTE_H = 3.5


def _zone_gap(offset_h, longitude):
    """``utc_offset_h`` minus the mean solar offset longitude / 15, wrapped to
    [-12, 12) h (UTC+13 at 172 W is 0.5 h from its sun, not 24.5 h) [h]."""
    return (offset_h - longitude / DEGREES_PER_HOUR + 12.0) % 24.0 - 12.0


def zone_note(site: Site, label: str) -> str:
    """A note when the site's ``utc_offset_h`` is far from the offset its longitude
    implies (more than :data:`ZONE_NOTE_H` from longitude / 15, modulo 24 h) [text];
    "" when it is not.

    The catalogue's own check of the coordinates, for a site whose met has no radiation
    (the clock check of :mod:`.metclock` measures the same against the sun and
    supersedes it where it judges the site).  It names the longitude, the mean solar
    offset it implies and the gap, and a slip that makes the offset plausible: latitude
    and longitude typed in each other's place (when the longitude can be a latitude,
    within +-90 degrees) or the longitude's sign lost.  A site on UTC
    (``utc_offset_h = 0``) gets none: UTC labels are a common choice anywhere and say
    nothing of the site's place.

    Parameters
    ----------
    site : Site
        Longitude [degree east], latitude [degree north], ``utc_offset_h`` [h].
    label : str
        Names the site in the note.
    """
    lat, lon, off = site.latitude, site.longitude, site.utc_offset_h
    gap = _zone_gap(off, lon)
    if abs(gap) <= ZONE_NOTE_H or off == 0:     # UTC labels: a choice, not a place
        return ""
    tries = []
    if abs(lon) <= 90 and lat != lon:
        tries.append(("latitude and longitude typed in each other's place", lon, lat))
    if lon != 0 and abs(lon) <= 180:
        tries.append(("the longitude's sign lost (east is positive, west negative)", lat, -lon))
    fits = sorted((abs(_zone_gap(off, lo2)), what, la2, lo2) for what, la2, lo2 in tries)
    why = "".join(f" {what[:1].upper()}{what[1:]}? (at latitude {la2:g}, longitude {lo2:g} "
                  f"the offset is {g:.1f} h from the sun's)."
                  for g, what, la2, lo2 in fits if g <= ZONE_NOTE_H)
    solar = (lon / DEGREES_PER_HOUR + 12.0) % 24.0 - 12.0
    size = f"{abs(gap):.1f}" if round(abs(gap), 1) > ZONE_NOTE_H else f"{abs(gap):.2f}"
    return (f"{label}: utc_offset_h = {off:g} is {size} h from the offset of mean solar "
            f"time at its longitude {lon:g} (longitude / 15: UTC{solar:+.1f} h; civil time "
            f"zones keep within about 3 h of it, this note comes beyond {ZONE_NOTE_H:g} h): "
            f"a logger kept on a distant zone's time on purpose, or utc_offset_h or the "
            f"longitude typed wrong?{why} Kept as written")


def _mast_history_geometry(t, changes, change_err, notes, label):
    """The anemometer against every class the wind mast's surface takes in the site's
    history: without ``met_land_use`` the mast stands over the site's own surface, which
    before a land-use change was the ``from`` class, with its class defaults
    (workbench/surfacehistory.py, ``mast_in_force``).  An error located at the change's
    ``from`` names the class and the period; a doubtful height is a hint."""
    if t.get("met_land_use") is not None:
        return
    from ..surface.roughness import land_use_roughness
    lu_changes = [c for c in changes if c.what == "land_use"]
    tables = t.get("change", [])
    z_wind = float(t["wind_height_m"])
    start = None
    for c in lu_changes:
        mast = c.before
        z0_m, d_m = land_use_roughness(mast, LAND_USE[mast][1], np.nan, np.nan)
        z0_m, d_m = float(z0_m), float(d_m)
        when = (f"until {c.date.isoformat()}" if start is None
                else f"from {start} until {c.date.isoformat()}")
        j = next((k for k, tb in enumerate(tables) if isinstance(tb, dict)
                  and tb.get("what") == "land_use" and tb.get("from") == c.before
                  and str(tb.get("date")) == c.date.isoformat()), 0)
        if z_wind <= d_m:
            raise change_err("anemometer at or below the displacement height of the mast's "
                             "surface before a land-use change", j, "from", mast,
                             f"wind_height_m {z_wind:g} m above the displacement height "
                             f"d = {d_m:.3g} m of the mast's surface {mast!r} {when} (class "
                             "defaults; met_land_use is not given, so the mast follows the "
                             "site's land use), or met_land_use = the class that stood under "
                             "the mast")
        if np.isfinite(z0_m) and z_wind - d_m <= z0_m:
            raise change_err("anemometer within the roughness length above d of the mast's "
                             "surface before a land-use change", j, "from", mast,
                             f"wind_height_m - d ({z_wind - d_m:.3g} m) larger than z0 = "
                             f"{z0_m:.3g} m of {mast!r} {when}, or met_land_use given")
        if z_wind < LAND_USE[mast][1]:
            notes.append(f"{label}: the anemometer ({z_wind:g} m) is below the canopy top "
                         f"({LAND_USE[mast][1]:g} m) of the mast's surface {mast!r} {when}: "
                         "the log wind profile is doubtful there (roughness sublayer)")
        start = c.date.isoformat()


def _d_rule(d_key, d_m, h_m, mast) -> str:
    """Where the displacement height of an error came from: given, or the class rule
    (d/h = 0.772 for forests, 2/3 for short vegetation, 0.5 urban:
    docs/methods_dry_particles.md section 3; the message said "d/h = 2/3" for all)."""
    if d_key == "displacement_height_m":
        return "given as displacement_height_m"
    if h_m > 0:
        return (f"d = {d_m / h_m:.3g} h, the rule of class {mast!r}, "
                "docs/methods_dry_particles.md section 3, unless displacement_height_m is given")
    return f"the rule of class {mast!r}"
