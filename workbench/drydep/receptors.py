"""The surfaces of the dry-deposition calculation: the wind mast's and each receptor's.

Helpers of :mod:`workbench.drydep.core` (numpy over sites and receptors, no hours):
class, roughness length and displacement height of the surface around each wind mast
and of each receptor, and the u* transfer chosen for each site and receptor.
"""
from __future__ import annotations

import numpy as np

from .. import landuse
from ..landuse import LAND_USE
from ..surface.roughness import land_use_roughness


def met_surface(surf, receptors, opt):
    """Class, z0 and d of the surface around each wind mast (per site)."""
    names = [str(x) for x in surf["met_land_use"].values]
    heights, z0o, do = [], [], []
    for i, m in enumerate(names):
        landuse.check(m)
        own = [j for j, r in enumerate(receptors)
               if r == m and bool(surf["is_site_surface"].values[i, j])]
        if own:
            j = own[0]
            heights.append(float(surf["canopy_height"].values[i, j]))
            z0o.append(float(surf["roughness_length"].values[i, j]))
            do.append(float(surf["displacement_height"].values[i, j]))
        else:
            heights.append(LAND_USE[m][1])
            z0o.append(np.nan)
            do.append(np.nan)
    z0, d = land_use_roughness(names, np.array(heights), np.array(z0o), np.array(do),
                               opt.roughness)
    return names, np.asarray(z0, float), np.asarray(d, float)


def mast_in_force(code, z0, d, albedo, alpha, opt):
    """The wind mast's surface hour by hour where it follows the site's land use.

    Parameters
    ----------
    code : ndarray
        (site, 1, time) position in :data:`workbench.surfacehistory.CLASSES` of the class
        under the mast in each hour, -1 (or NaN) where it is the declared surface.
    z0, d, albedo, alpha : ndarray
        (site, 1, 1) roughness length [m], displacement height [m], albedo [1] and
        Priestley-Taylor alpha [1] of the declared mast surface.
    opt : DryOptions

    Returns
    -------
    tuple of ndarray
        z0, d, albedo, alpha (site, 1, time): of the class in force (its class
        defaults: the land-use table's canopy height, z0 and d from the roughness rule)
        in the hours of an earlier class, the declared ones elsewhere.
    """
    from ..surface import energy_balance as eb
    code = np.where(np.isfinite(code), code, -1).astype(int)
    names = list(LAND_USE)
    z0 = z0 + 0.0 * code
    d, albedo, alpha = d + 0.0 * code, albedo + 0.0 * code, alpha + 0.0 * code
    for c in np.unique(code[code >= 0]):          # the few classes, each over every hour
        m = names[int(c)]
        z0_c, d_c = land_use_roughness([m], np.array([LAND_USE[m][1]]), np.array([np.nan]),
                                       np.array([np.nan]), opt.roughness)
        here = code == c
        z0 = np.where(here, float(np.asarray(z0_c)[0]), z0)
        d = np.where(here, float(np.asarray(d_c)[0]), d)
        albedo = np.where(here, eb.ALBEDO[m], albedo)
        alpha = np.where(here, eb.PT_ALPHA[m], alpha)
    return z0, d, albedo, alpha


def receptor_transfers(surf, receptors, opt):
    """The transfer of u* of each site and receptor (site, receptor) [-].

    ``opt.ustar_transfer_receptor["<site>/<class>"]``, else the site's own table (the
    ``ustar_transfer`` variable of `surf`, from sites.toml's ``[site.ustar_transfer]``;
    empty: not set), else ``opt.ustar_transfer_receptor["<class>"]``, else
    ``opt.ustar_transfer``.

    Parameters
    ----------
    surf : xarray.Dataset
        The receptor surfaces (site, receptor).
    receptors : sequence of str
    opt : DryOptions

    Returns
    -------
    numpy.ndarray of str
        ``"drag_law"`` or ``"blending_height"``, shape (site, receptor).
    """
    over = opt.ustar_transfer_receptor
    if not over and "ustar_transfer" not in surf:   # the common case: one transfer
        return np.full((surf.sizes["site"], len(receptors)), opt.ustar_transfer, dtype=object)
    sites = [str(x) for x in surf["site"].values]
    table = (surf["ustar_transfer"].transpose("site", "receptor").values
             if "ustar_transfer" in surf else np.full((len(sites), len(receptors)), ""))
    out = np.empty((len(sites), len(receptors)), dtype=object)
    for i, s in enumerate(sites):          # sites x receptors names, not hours
        for j, r in enumerate(receptors):
            out[i, j] = over.get(f"{s}/{r}") or table[i, j] or over.get(r) or opt.ustar_transfer
    return out


def receptor_roughness(surf, receptors, opt):
    """z0 [m] and d [m] of each site and receptor (site, receptor); z0 NaN over water."""
    z0, d = land_use_roughness(receptors, surf["canopy_height"].values.astype(float),
                               surf["roughness_length"].values.astype(float),
                               surf["displacement_height"].values.astype(float), opt.roughness)
    return np.asarray(z0, float), np.asarray(d, float)
