"""A wind speed written in knots, mph or km/h under an ``m/s`` header.

A constant factor leaves a wind record's shape as it is, so the check needs a reference
outside the wind column:

- where the met gives a measured friction velocity u*, the neutral log law (the windy
  half of the site's hours, near-neutral) says what wind speed that u* goes with at the
  anemometer's height over the mast's surface (z0, d of the land-use class): a record in
  m/s reads about 1 x that wind, one in knots about 1.94 x;
- elsewhere, the site's median wind brought to the "potential wind" (10 m over open land,
  z0 = 0.03 m, through a 60 m blending height; Wieringa 1986) against the median that
  only exposed coasts, islands and summits pass.

The values are always kept as read; the rows of a site found so are flagged with one
reason naming the column, the factor and what was expected (``(kept)``).  A user who
confirms the unit says so in sites.toml (``met_wind_unit``), and
:mod:`workbench.io.metdeclared` converts the site's wind instead.  numpy and
pandas over rows, no loop over hours.

References
----------
Wieringa, J. (1986): Roughness-dependent geographical interpolation of surface wind
speed averages. Q. J. R. Meteorol. Soc. 112, 867-889 (the potential wind and the 60 m
blending height; from memory).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..constants import VON_KARMAN
from ..landuse import LAND_USE
from ..surface.roughness import land_use_roughness

#: Units a wind column may hold under an m/s header, and the factor each puts on the
#: values [-] (1 kn = 1852 m / 3600 s, 1 mph = 0.44704 m/s: exact by definition).
SLIP_FACTORS = {"knots": 3600.0 / 1852.0, "mph": 1.0 / 0.44704, "km/h": 3.6}
#: Median ratio of the wind speed to the log-law wind from u* at or above which the
#: wind is judged to be in another unit [-]: a record in m/s reads 1.5 x only where the
#: mast's z0 is some 25 times smaller than its class's (our choice; z0 within a class
#: scatters by a factor 2-3, common practice).  The demo's ridge reads 0.88.
USTAR_RATIO_MIN = 1.5
#: Hours with both wind and u* a site needs before the u* check judges it [h] (a month).
USTAR_MIN_HOURS = 720
#: The potential wind: height [m] and roughness [m] of open land (the WMO standard
#: exposure), and the blending height [m] through which a mast's wind is brought to it
#: (Wieringa 1986; from memory).
OPEN_HEIGHT_M, OPEN_Z0_M, BLEND_HEIGHT_M = 10.0, 0.03, 60.0
#: Median potential wind [m/s] above which a site without u* is asked about knots or
#: km/h: long-term mean winds at 10 m over open land are 3-5 m/s over most of the
#: mid-latitude land and pass 6.5 m/s only on exposed coasts, islands and summits
#: (European Wind Atlas, Troen and Petersen 1989, its five classes brought from 50 m to
#: 10 m; from memory).  A knots record is found so where its true median passes
#: 6.5 / 1.94 = 3.3 m/s; a sheltered site in knots stays below it.
POTENTIAL_MEDIAN_MAX = 6.5


def mast_roughness(sites):
    """z0 and d of the surface around each site's wind mast [m] (NaN z0 over water).

    Parameters
    ----------
    sites : sequence of Site
        Catalogue entries (``met_land_use`` or ``land_use``, ``canopy_height_m``, the
        site's own z0 and d where the mast stands over its own surface).
    """
    names, heights, z0o, do = [], [], [], []
    for s in sites:
        m = s.met_land_use or s.land_use
        own = m == s.land_use
        names.append(m)
        heights.append(s.canopy_height_m if own else LAND_USE[m][1])
        z0o.append(s.roughness_length_m if own and s.roughness_length_m is not None else np.nan)
        do.append(s.displacement_height_m if own and s.displacement_height_m is not None
                  else np.nan)
    z0, d = land_use_roughness(names, np.array(heights, float), np.array(z0o, float),
                               np.array(do, float))
    return names, np.asarray(z0, float), np.asarray(d, float)


def potential_wind_factor(z, z0, d):
    """Factor from the wind at height `z` over (z0, d) to the potential wind [-].

    .. math:: \\frac{\\ln(z_b/z_0)}{\\ln((z-d)/z_0)}
              \\frac{\\ln(10/0.03)}{\\ln(z_b/0.03)}, \\quad z_b = 60 m

    (neutral log law below and above the blending height; Wieringa 1986).

    >>> round(float(potential_wind_factor(10.0, 0.03, 0.0)), 6)
    1.0
    """
    return (np.log(BLEND_HEIGHT_M / z0) / np.log((z - d) / z0)
            * np.log(OPEN_HEIGHT_M / OPEN_Z0_M) / np.log(BLEND_HEIGHT_M / OPEN_Z0_M))


def above_text(value, limit, least=1, most=6):
    """`value` written with the fewest decimals (from `least` to `most`) at which it reads
    above `limit` when it is above it, so that a note does not read "6.5 m/s ... expected
    below 6.5 m/s" [the unit of both].

    >>> above_text(6.53, 6.5), above_text(6.5004, 6.5), above_text(7.04, 6.5), above_text(5.0, 6.5)
    ('6.53', '6.5004', '7.0', '5.0')
    """
    for k in range(least, most + 1):
        text = f"{value:.{k}f}"
        if not value > limit or float(text) > limit:
            return text
    return repr(float(value))


def _nearest_unit(ratio):
    """The unit whose factor is nearest `ratio` in log terms, and its factor."""
    name = min(SLIP_FACTORS, key=lambda k: abs(np.log(ratio / SLIP_FACTORS[k])))
    return name, SLIP_FACTORS[name]


def wind_unit_findings(u, ustar, codes, names, catalogue, header="column wind_speed [m/s]"):
    """Sites whose wind column looks like knots, mph or km/h under an m/s header.

    Parameters
    ----------
    u : ndarray of float
        Wind speed of each row as read (the header's m/s) [m s-1].
    ustar : ndarray of float or None
        Measured friction velocity of each row [m s-1] (None or NaN: not measured).
    codes : ndarray of int
        Site code of each row (0 .. len(names) - 1).
    names : sequence of str
        Site id of each code.
    catalogue : SiteCatalogue
    header : str
        The column as the reasons name it.

    Returns
    -------
    judged_by_ustar : ndarray of bool
        Per site: the u* check judged it (its verdict supersedes the median rules).
    findings : list of (int, str)
        (site code, reason) per site found; the reason ends in ``(kept)``.
    """
    n = len(names)
    sites = [catalogue[str(s)] for s in names]
    mast, z0, d = mast_roughness(sites)
    z = np.array([s.wind_height_m for s in sites], float)
    land = np.isfinite(z0) & (z - d > z0)
    out = []
    ok = np.isfinite(u)
    med = pd.Series(u[ok]).groupby(codes[ok]).median().reindex(range(n)).to_numpy()
    judged = np.zeros(n, bool)
    if ustar is not None:
        both = ok & np.isfinite(ustar) & (ustar > 0)
        windy = both & (u >= med[codes]) & land[codes]
        with np.errstate(invalid="ignore", divide="ignore"):
            ratio_h = u / (ustar / VON_KARMAN * np.log((z - d) / z0)[codes])
        g = pd.Series(ratio_h[windy]).groupby(codes[windy])
        ratio = g.median().reindex(range(n)).to_numpy()
        count = g.size().reindex(range(n), fill_value=0).to_numpy()
        judged = (count >= USTAR_MIN_HOURS // 2) & np.isfinite(ratio)
        for s in np.flatnonzero(judged & (ratio >= USTAR_RATIO_MIN)):
            unit, f = _nearest_unit(ratio[s])
            out.append((int(s), (
                f"{header} at site {names[s]} is {ratio[s]:.2f} x the wind speed its "
                f"measured friction velocity gives by the log law (u*/0.4 ln((z - d)/z0) at "
                f"z = {z[s]:g} m over {mast[s]}, z0 = {z0[s]:.2g} m, d = {d[s]:.2g} m, the "
                f"median over its {int(count[s])} hours at or above its median wind), "
                f"expected about 1: {unit} under an m/s header (x {f:.2f})? read as {unit}, "
                f"its median is {med[s] / f:.1f} m/s, not {med[s]:.1f}: check the logger's "
                f"unit (kept)")))
    with np.errstate(invalid="ignore", divide="ignore"):
        pot = med * potential_wind_factor(z, z0, d)
    hours = np.bincount(codes[ok], minlength=n)
    prior = ~judged & land & (hours >= USTAR_MIN_HOURS) & (pot > POTENTIAL_MEDIAN_MAX)
    for s in np.flatnonzero(prior):
        kn, kmh = SLIP_FACTORS["knots"], SLIP_FACTORS["km/h"]
        out.append((int(s), (
            f"{header} at site {names[s]} has a median of {med[s]:.1f} m/s at {z[s]:g} m over "
            f"{mast[s]}, {above_text(pot[s], POTENTIAL_MEDIAN_MAX)} m/s as the potential wind (10 m over open land, "
            f"Wieringa 1986), expected below {POTENTIAL_MEDIAN_MAX:g} m/s but on exposed "
            f"coasts, islands and summits: knots (x {kn:.2f}: median {med[s] / kn:.1f} m/s) "
            f"or km/h (x {kmh:.1f}: {med[s] / kmh:.1f} m/s) under an m/s header? no "
            f"measured friction velocity to tell: check the logger's unit (kept)")))
    return judged, out
