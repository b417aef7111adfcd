"""Size-resolved particle dry deposition: Zhang et al. (2001).

.. math:: V_d = v_g + \\frac{1}{R_a + R_s},\\qquad
          R_s = \\frac{1}{\\varepsilon_0 u_* (E_B + E_{IM} + E_{IN}) R_1}

with gravitational settling v_g (Stokes law with the Cunningham slip correction),
collection by Brownian diffusion E_B = Sc^-gamma, impaction
E_IM = (St/(alpha + St))^2, interception E_IN = (d_p/A)^2 / 2 and the rebound
factor R_1 = exp(-St^1/2) (R_1 = 1 on wet surfaces).  Particles first grow with
relative humidity (Gerber 1985).  The mass-weighted Vd of a log-normal mass
distribution is integrated with Gauss-Hermite quadrature in ln d_p.

References
----------
Zhang, L., Gong, S., Padro, J. and Barrie, L. (2001), A size-segregated particle dry
deposition scheme for an atmospheric aerosol module, Atmos. Environ. 35, 549-560,
Eqs. (1)-(8) and Table 3 (land-use parameters; values from memory).
Gerber, H. E. (1985), Relative-humidity parameterization of the Navy Aerosol Model
(NAM), NRL Report 8956 (constants as quoted by Zhang et al. 2001; from memory).
Seinfeld and Pandis (2006), Atmospheric Chemistry and Physics, 2nd ed., Eqs. (9.34),
(9.42), (9.73) (slip correction, Brownian diffusivity, settling velocity).
"""
from __future__ import annotations

import numpy as np
import xarray as xr

from ..constants import BOLTZMANN, GRAVITY, WATER_DENSITY
from ..surface._array import aligned, block_of, block_slices, is_xarray, where
from ..surface.air import dynamic_viscosity, kinematic_viscosity, mean_free_path
# the constants, table and nodes of the scheme live in zhang_tables (shared with the
# numpy fast path, which this module imports: imports go one way); re-exported here
from .particles_numpy import ZhangSurface
from .zhang_tables import (_ROW, _SLIP_EXP_MIN, EPSILON_0, GERBER, GROWTH_RH_MAX,  # noqa: F401
                           KAPPA, M_PER_CM, M_PER_MM, SLIP_A, SLIP_B, SLIP_C, ZHANG_LUC, _hermgauss,
                           _luc_table, _rows, lognormal_nodes)

#: Elements per block of :func:`mass_weighted_velocities` (256 kB per array, so that
#: the dozen work arrays of a block stay in the processor's cache).
BLOCK_ELEMENTS = 32768


def slip_correction(diameter, temperature, pressure):
    """Cunningham slip correction factor [-].

    Parameters
    ----------
    diameter : array_like
        Particle diameter d_p. [m]
    temperature : array_like
        [K]
    pressure : array_like
        [Pa]

    Returns
    -------
    cc : array_like
        [-]

    Notes
    -----
    .. math:: C_c = 1 + \\frac{2\\lambda}{d_p}\\left[1.257 + 0.4\\exp\\left(-\\frac{1.1 d_p}{2\\lambda}\\right)\\right]

    References
    ----------
    Seinfeld and Pandis (2006), Eq. (9.34); Zhang et al. (2001), Eq. (3).
    """
    kn = 2.0 * mean_free_path(temperature, pressure) / diameter
    return 1.0 + kn * (SLIP_A + SLIP_B * np.exp(-SLIP_C / kn))


def settling_velocity(diameter, density, temperature, pressure):
    """Gravitational settling velocity (Stokes law with slip correction) [m s-1].

    Parameters
    ----------
    diameter : array_like
        [m]
    density : array_like
        Particle density. [kg m-3]
    temperature, pressure : array_like
        [K], [Pa]

    Returns
    -------
    v_g : array_like
        [m s-1]

    Notes
    -----
    .. math:: v_g = \\frac{\\rho_p d_p^2 g C_c}{18\\mu}

    References
    ----------
    Seinfeld and Pandis (2006), Eq. (9.42); Zhang et al. (2001), Eq. (2).
    """
    cc = slip_correction(diameter, temperature, pressure)
    return density * diameter ** 2 * GRAVITY * cc / (18.0 * dynamic_viscosity(temperature))


def brownian_diffusivity(diameter, temperature, pressure):
    """Brownian diffusivity of a particle, Stokes-Einstein with slip [m2 s-1].

    Notes
    -----
    .. math:: D_B = \\frac{k_B T C_c}{3\\pi\\mu d_p}

    References
    ----------
    Seinfeld and Pandis (2006), Eq. (9.73).
    """
    cc = slip_correction(diameter, temperature, pressure)
    return BOLTZMANN * temperature * cc / (3.0 * np.pi * dynamic_viscosity(temperature) * diameter)


def wet_diameter(dry_diameter, relative_humidity, growth="ammonium_sulfate"):
    """Particle diameter after hygroscopic growth [m].

    Parameters
    ----------
    dry_diameter : array_like
        [m]
    relative_humidity : array_like
        Fraction, clipped to 0-0.99 (:data:`GROWTH_RH_MAX`). [1]
    growth : str
        A key of :data:`GERBER` or of :data:`KAPPA`, or ``"none"``.

    Returns
    -------
    d_wet : array_like
        [m]

    Notes
    -----
    Gerber laws:

    .. math:: r_w = \\left[\\frac{C_1 r_d^{C_2}}{C_3 r_d^{C_4} - \\log_{10} RH} + r_d^3\\right]^{1/3}

    with radii in cm (Gerber 1985, as used by Zhang et al. 2001, Eq. 10).  kappa laws
    (Petters and Kreidenweis 2007, Eq. 11 without the Kelvin term; the upper,
    deliquesced branch at every humidity):

    .. math:: d_w = d_d \\left(1 + \\kappa \\frac{RH}{1 - RH}\\right)^{1/3}
    """
    if growth == "none":
        return dry_diameter + 0.0 * relative_humidity
    if growth in KAPPA:
        rh = np.clip(relative_humidity, 0.0, GROWTH_RH_MAX)
        return dry_diameter * np.cbrt(1.0 + KAPPA[growth] * rh / (1.0 - rh))
    c1, c2, c3, c4 = GERBER[growth]
    rd = dry_diameter / 2.0 / M_PER_CM
    rh = np.clip(relative_humidity, np.finfo(float).tiny, GROWTH_RH_MAX)
    rw = (c1 * rd ** c2 / (c3 * rd ** c4 - np.log10(rh)) + rd ** 3) ** (1.0 / 3.0)
    return 2.0 * rw * M_PER_CM


def wet_density(dry_diameter, wet_diameter_, dry_density):
    """Density of a grown particle, dry core plus water shell [kg m-3]."""
    f = (dry_diameter / wet_diameter_) ** 3
    return dry_density * f + WATER_DENSITY * (1.0 - f)


def _luc_values(land_use, seasonal_category, receptor_dim):
    """A [m] (NaN: smooth surface), alpha [-], gamma [-] and the smooth mask by receptor and hour.

    Parameters
    ----------
    land_use : str or sequence of str
        Our classes.
    seasonal_category : array_like
        1-5 (NaN unknown). [-]
    receptor_dim : str
        Dimension of `land_use` when `seasonal_category` is a DataArray.
    """
    a_tab, alpha, gamma, smooth = _luc_table()
    cat = seasonal_category
    col = where(np.isfinite(cat), cat, 1.0) - 1.0
    if is_xarray(cat):
        dims = (receptor_dim,)
        rows = xr.DataArray(_rows(list(land_use)), dims=dims)
        flat = a_tab.ravel()
        idx = (rows * a_tab.shape[1] + col).astype(int)
        a = xr.apply_ufunc(lambda i: flat[i], idx, dask="parallelized", output_dtypes=[float])
        a = xr.where(np.isfinite(cat), a, np.nan)
        r = rows.values
        return (a, xr.DataArray(alpha[r], dims=dims), xr.DataArray(gamma[r], dims=dims),
                xr.DataArray(smooth[r], dims=dims))
    r = _rows(land_use)
    c = np.asarray(col).astype(int)
    return where(np.isfinite(cat), a_tab[r, c], np.nan), alpha[r], gamma[r], smooth[r]


def surface_resistance(diameter, density, ustar, temperature, pressure, land_use,
                       seasonal_category, wet=0.0, receptor_dim="receptor"):
    """Surface resistance R_s of particles, Zhang et al. (2001) [s m-1].

    Parameters
    ----------
    diameter : array_like
        (Wet) particle diameter. [m]
    density : array_like
        (Wet) particle density. [kg m-3]
    ustar : array_like
        [m s-1]
    temperature, pressure : array_like
        [K], [Pa]
    land_use : str or sequence of str
        Our classes (mapped through :data:`ZHANG_LUC`).
    seasonal_category : array_like
        1-5. [-]
    wet : array_like
        1 where the surface is wet (no rebound), 0 dry; open water is always wet. [-]
    receptor_dim : str

    Returns
    -------
    rs : array_like
        [s m-1]

    Notes
    -----
    Zhang et al. (2001), Eqs. (5)-(8): St = v_g u*/(g A) over vegetation and
    v_g u*^2/nu over smooth surfaces (no A; E_IN = 0 there).
    """
    a, alpha, gamma, smooth = _luc_values(land_use, seasonal_category, receptor_dim)
    vg = settling_velocity(diameter, density, temperature, pressure)
    nu = kinematic_viscosity(temperature, pressure)
    sc = nu / brownian_diffusivity(diameter, temperature, pressure)
    e_b = sc ** (-gamma)
    st_veg = vg * ustar / (GRAVITY * where(smooth, 1.0, a))
    st_smooth = vg * ustar ** 2 / nu
    st = where(smooth, st_smooth, st_veg)
    e_im = (st / (alpha + st)) ** 2
    e_in = where(smooth, 0.0, 0.5 * (diameter / where(smooth, 1.0, a)) ** 2)
    water = _rows(land_use) == _rows("water") if not is_xarray(seasonal_category) else \
        xr.DataArray(np.array([n == "water" for n in land_use]), dims=(receptor_dim,))
    r1 = where((wet > 0) | water, 1.0, np.exp(-np.sqrt(st)))
    r1 = r1 + where(np.isnan(wet), np.nan, 0.0)
    rs = 1.0 / (EPSILON_0 * ustar * (e_b + e_im + e_in) * r1)
    return rs + where(np.isnan(seasonal_category), np.nan, 0.0)


def particle_deposition_velocity(dry_diameter, dry_density, relative_humidity, ustar, ra,
                                 temperature, pressure, land_use, seasonal_category,
                                 wet=0.0, growth="ammonium_sulfate", receptor_dim="receptor"):
    """Dry deposition velocity of particles of one dry diameter [m s-1].

    Parameters
    ----------
    dry_diameter : array_like
        [m]
    dry_density : array_like
        [kg m-3]
    relative_humidity : array_like
        [1]
    ustar : array_like
        [m s-1]
    ra : array_like
        Aerodynamic resistance. [s m-1]
    temperature, pressure : array_like
        [K], [Pa]
    land_use : str or sequence of str
    seasonal_category : array_like
    wet : array_like
        [0/1]
    growth : str
        Growth law (see :func:`wet_diameter`).
    receptor_dim : str

    Returns
    -------
    vd : array_like
        [m s-1]

    Notes
    -----
    .. math:: V_d = v_g + 1/(R_a + R_s)

    Zhang et al. (2001), Eq. (1), with the grown diameter and density.
    """
    dw = wet_diameter(dry_diameter, relative_humidity, growth)
    rho = wet_density(dry_diameter, dw, dry_density)
    vg = settling_velocity(dw, rho, temperature, pressure)
    rs = surface_resistance(dw, rho, ustar, temperature, pressure, land_use,
                            seasonal_category, wet, receptor_dim)
    return vg + 1.0 / (ra + rs)


def mass_weighted_velocity(mode, relative_humidity, ustar, ra, temperature, pressure, land_use,
                           seasonal_category, wet=0.0, nodes=12, receptor_dim="receptor"):
    """Mass-weighted Vd over a log-normal mass distribution [m s-1].

    Parameters
    ----------
    mode : workbench.drydep.options.LogNormalMode
        Mass median dry diameter [m], geometric sd [-], dry density [kg m-3],
        growth law.
    relative_humidity : array_like
        [1]
    ustar : array_like
        [m s-1]
    ra : array_like
        Aerodynamic resistance. [s m-1]
    temperature, pressure : array_like
        [K], [Pa]
    land_use : str or sequence of str
    seasonal_category : array_like
        1-5. [-]
    wet : array_like
        [0/1]
    nodes : int
        Gauss-Hermite nodes.
    receptor_dim : str

    Returns
    -------
    vd : array_like
        [m s-1]

    Notes
    -----
    .. math:: \\bar V_d = \\int V_d(d_p)\\,\\frac{dM}{d\\ln d_p}\\,d\\ln d_p \\Big/ M
              \\approx \\sum_i w_i V_d(d_i)

    Plain numpy input goes through :func:`mass_weighted_velocities` (the same
    equations, arranged for speed); xarray or dask input sums
    :func:`particle_deposition_velocity` node by node.
    """
    return mass_weighted_velocities((mode,), relative_humidity, ustar, ra, temperature, pressure,
                                    land_use, seasonal_category, wet, nodes, receptor_dim)[0]


def _is_numpy(*args) -> bool:
    """True when no argument is an xarray object or a dask (or other lazy) array.

    Parameters
    ----------
    *args : array_like
        Inputs of any units.

    Returns
    -------
    bool
    """
    return not is_xarray(*args) and not any(hasattr(a, "dask") or hasattr(a, "chunks")
                                            for a in args)


def mass_weighted_velocities(modes, relative_humidity, ustar, ra, temperature, pressure,
                             land_use, seasonal_category, wet=0.0, nodes=12,
                             receptor_dim="receptor"):
    """Mass-weighted Vd of several log-normal modes over the same surfaces [m s-1].

    Parameters
    ----------
    modes : sequence of workbench.drydep.options.LogNormalMode
        Mass median dry diameter [m], geometric sd [-], dry density [kg m-3] and
        growth law of each mode.
    relative_humidity, ustar, ra, temperature, pressure, land_use, seasonal_category, wet
        As in :func:`mass_weighted_velocity`: [1], [m s-1], [s m-1], [K], [Pa],
        class names, [-] (1-5), [0/1].
    nodes : int
        Gauss-Hermite nodes per mode.
    receptor_dim : str
        Name of the receptor dimension (xarray input).

    Returns
    -------
    vd : list of array_like
        Mass-weighted Vd of each mode, in the order of `modes`. [m s-1]

    Notes
    -----
    For plain numpy input the Zhang et al. (2001) equations of
    :func:`particle_deposition_velocity` are rearranged: what does not depend on
    the mode (air, land-use values, the factors of St, E_IN and R_1) is computed
    once for all modes, what depends on the particle only (grown diameter and
    density, C_c, v_g, Sc) once per node on (site, time) without the receptor axis
    (see :class:`workbench.drydep.particles_numpy.ZhangSurface`).  The result equals the node-by-node sum to
    rounding (tests/drydep/test_drydep_particles.py).  Large arrays are computed in
    blocks of about :data:`BLOCK_ELEMENTS` elements along sites and hours (the same
    numbers; the work arrays stay in the processor's cache).  xarray and dask input
    take the node-by-node sum itself.
    """
    args = (relative_humidity, ustar, ra, temperature, pressure, seasonal_category, wet)
    if not _is_numpy(*args):
        out = []
        for mode in modes:
            diams, weights = lognormal_nodes(mode.mmd, mode.gsd, nodes)
            total = 0.0
            for d, w in zip(diams, weights):
                total = total + w * particle_deposition_velocity(
                    d, mode.density, relative_humidity, ustar, ra, temperature, pressure,
                    land_use, seasonal_category, wet, mode.growth, receptor_dim)
            out.append(total)
        return out
    arrays = [np.asarray(a, dtype=float) for a in args]
    land = land_use if isinstance(land_use, str) else np.asarray(land_use, dtype=object)
    shape = np.broadcast_shapes(*(a.shape for a in arrays),
                                () if isinstance(land, str) else land.shape)
    blocks = list(block_slices(shape, BLOCK_ELEMENTS))
    if len(blocks) == 1:
        surface = ZhangSurface(*arrays[:5], land, *arrays[5:])
        return [surface.mass_weighted(mode, nodes) for mode in modes]
    arrays = [aligned(a, len(shape)) for a in arrays]
    land = land if isinstance(land, str) else aligned(land, len(shape))
    out = [np.empty(shape) for _ in modes]
    for block in blocks:  # element-wise: the same numbers as one call on everything
        part = [block_of(a, block) for a in arrays]
        surface = ZhangSurface(*part[:5], land if isinstance(land, str)
                               else block_of(land, block), *part[5:])
        for vd, mode in zip(out, modes):
            vd[block] = surface.mass_weighted(mode, nodes)
    return out

