"""Size-resolved particle dry deposition: Zhang et al. (2001).

.. math:: V_d = v_g + \\frac{1}{R_a + R_s},\\qquad
          R_s = \\frac{1}{\\varepsilon_0 u_* (E_B + E_{IM} + E_{IN}) R_1}

with gravitational settling v_g (Stokes law with the Cunningham slip correction; under
``[dry] particle_settling = "clift_gauvin"`` the drag correlation of Clift and Gauvin 1970,
:mod:`workbench.drydep.settling`, in v_g and in St),
collection by Brownian diffusion E_B = Sc^-gamma, impaction
E_IM = (St/(alpha + St))^2, interception E_IN = (d_p/A)^2 / 2 and the rebound
factor R_1 = exp(-St^1/2) (R_1 = 1 on wet surfaces).  Particles first grow with
relative humidity (Gerber 1985).  The mass-weighted Vd of a log-normal mass
distribution is integrated with Gauss-Hermite quadrature in ln d_p.

One implementation: R_s and V_d are computed only by
:class:`workbench.drydep.particles_numpy.ZhangSurface`; :func:`surface_resistance`,
:func:`particle_deposition_velocity` (one node of weight 1) and
:func:`mass_weighted_velocities` (numpy directly, xarray and dask chunk by chunk
through ``xarray.apply_ufunc``) call it.  The elementary functions here (slip
correction, settling, Brownian diffusivity, wet diameter and density) are the
documented forms of what ZhangSurface computes with the air factors taken out of
the size loop; a test holds the two equal.

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
from ..surface._array import (aligned, block_of, block_size, block_slices, is_xarray,
                              threads_for)
from ..threads import run_each
from ..surface.air import dynamic_viscosity, kinematic_viscosity, mean_free_path
# the constants, table and nodes of the scheme live in zhang_tables (shared with the
# implementation in particles_numpy, which this module imports: imports go one way);
# re-exported here
from .particles_numpy import ZhangSurface
from .settling import check_settling, drag_ratio
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


def settling_velocity(diameter, density, temperature, pressure, settling="stokes"):
    """Gravitational settling velocity (Stokes law or a drag correlation, with slip) [m s-1].

    Parameters
    ----------
    diameter : array_like
        [m]
    density : array_like
        Particle density. [kg m-3]
    temperature, pressure : array_like
        [K], [Pa]
    settling : str
        ``"stokes"`` (default; Zhang et al. 2001, Eq. 2) or ``"clift_gauvin"`` (the drag
        correlation of Clift and Gauvin 1970, :mod:`workbench.drydep.settling`).

    Returns
    -------
    v_g : array_like
        [m s-1]

    Notes
    -----
    .. math:: v_g = \\frac{\\rho_p d_p^2 g C_c}{18\\mu}

    Under ``"clift_gauvin"`` this is multiplied by
    :func:`~workbench.drydep.settling.drag_ratio` of Re_S = rho_p d^3 g / (18 mu nu),
    the continuum terminal velocity of the drag correlation over Stokes'.

    References
    ----------
    Seinfeld and Pandis (2006), Eq. (9.42); Zhang et al. (2001), Eq. (2); Clift and
    Gauvin (1970) (``"clift_gauvin"``).
    """
    cc = slip_correction(diameter, temperature, pressure)
    mu = dynamic_viscosity(temperature)
    vg = density * diameter ** 2 * GRAVITY * cc / (18.0 * mu)
    if check_settling(settling) == "stokes":
        return vg
    nu = kinematic_viscosity(temperature, pressure, viscosity=mu)
    return vg * drag_ratio(vg / cc * diameter / nu)


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


def surface_resistance(diameter, density, ustar, temperature, pressure, land_use,
                       seasonal_category, wet=0.0, receptor_dim="receptor", settling="stokes"):
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
    settling : str
        ``"stokes"`` or ``"clift_gauvin"``: the v_g of the Stokes number
        (:func:`settling_velocity`).

    Returns
    -------
    rs : array_like
        [s m-1]

    Notes
    -----
    Zhang et al. (2001), Eqs. (5)-(9): St = v_g u*/(g A) over vegetation and
    v_g u*^2/nu over smooth surfaces (no A; E_IN = 0 there).  Computed by
    :meth:`ZhangSurface.resistance <workbench.drydep.particles_numpy.ZhangSurface.resistance>`,
    the one implementation of the scheme (xarray and dask input through
    ``xarray.apply_ufunc``).
    """
    args = (0.0, ustar, 0.0, temperature, pressure, seasonal_category, wet)
    return _through_zhang(
        lambda arrays, land, sizes: _surface(arrays, land, settling).resistance(*sizes),
        args, land_use, receptor_dim, (diameter, density))


def particle_deposition_velocity(dry_diameter, dry_density, relative_humidity, ustar, ra,
                                 temperature, pressure, land_use, seasonal_category,
                                 wet=0.0, growth="ammonium_sulfate", receptor_dim="receptor",
                                 settling="stokes"):
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
    settling : str
        ``"stokes"`` or ``"clift_gauvin"`` (:func:`settling_velocity`).

    Returns
    -------
    vd : array_like
        [m s-1]

    Notes
    -----
    .. math:: V_d = v_g + 1/(R_a + R_s)

    Zhang et al. (2001), Eq. (1), with the grown diameter and density: one node of
    weight 1 of :meth:`ZhangSurface.velocity
    <workbench.drydep.particles_numpy.ZhangSurface.velocity>`, the implementation
    that :func:`mass_weighted_velocities` sums over the size nodes.
    """
    args = (relative_humidity, ustar, ra, temperature, pressure, seasonal_category, wet)
    return _through_zhang(
        lambda arrays, land, sizes: _surface(arrays, land, settling).velocity(*sizes, growth),
        args, land_use, receptor_dim, (dry_diameter, dry_density))


def mass_weighted_velocity(mode, relative_humidity, ustar, ra, temperature, pressure, land_use,
                           seasonal_category, wet=0.0, nodes=12, receptor_dim="receptor",
                           settling="stokes"):
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
    settling : str
        ``"stokes"`` or ``"clift_gauvin"`` (:func:`settling_velocity`).

    Returns
    -------
    vd : array_like
        [m s-1]

    Notes
    -----
    .. math:: \\bar V_d = \\int V_d(d_p)\\,\\frac{dM}{d\\ln d_p}\\,d\\ln d_p \\Big/ M
              \\approx \\sum_i w_i V_d(d_i)

    Computed by :func:`mass_weighted_velocities` (one implementation for numpy,
    xarray and dask input).
    """
    return mass_weighted_velocities((mode,), relative_humidity, ustar, ra, temperature, pressure,
                                    land_use, seasonal_category, wet, nodes, receptor_dim,
                                    settling)[0]


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


def _surface(arrays, land_use, settling="stokes"):
    """:class:`ZhangSurface` of `arrays` (rh, u*, R_a, T, p, category, wet), `land_use`
    and the `settling` rule."""
    return ZhangSurface(*arrays[:5], land_use, *arrays[5:], settling=settling)


#: Names of the rows of :data:`ZHANG_LUC` (land use goes to dask chunks as row numbers).
_LUC_NAMES = np.array(list(ZHANG_LUC), dtype=object)


def _through_zhang(compute, args, land_use, receptor_dim, sizes=(), n_modes=None):
    """``compute(arrays, land_use, sizes)`` on numpy input, or chunk by chunk on xarray/dask.

    Parameters
    ----------
    compute : callable
        Takes the list of numpy `args`, the land use (str or array of class names)
        and the tuple `sizes`; returns a numpy array (with a last axis of `n_modes`
        when that is given).
    args : sequence of array_like
        rh [1], u* [m s-1], R_a [s m-1], T [K], p [Pa], seasonal category [-], wet [0/1].
    land_use : str or sequence of str
        Our classes, along `receptor_dim` for xarray input.
    receptor_dim : str
    sizes : tuple of array_like
        Diameter [m] and density [kg m-3], when `compute` takes them.
    n_modes : int, optional
        Length of the last axis of what `compute` returns.

    Returns
    -------
    array_like
        numpy for numpy input; a DataArray (dask-backed for dask input) for xarray
        input; a dask array for dask arrays.

    Notes
    -----
    xarray and dask input go through ``xarray.apply_ufunc(..., dask="parallelized")``:
    the same numpy code on each chunk, element-wise, so the same numbers as in memory.
    """
    if _is_numpy(*args, *sizes):
        return compute([np.asarray(a, dtype=float) for a in args], land_use, sizes)
    lazy = list(args) + list(sizes)
    raw = not is_xarray(*lazy)
    if isinstance(land_use, str):
        rows = None
    elif is_xarray(land_use):
        rows = land_use.copy(data=_rows(land_use.values))
    elif raw:
        rows = np.asarray(_rows(land_use))
    else:
        rows = xr.DataArray(np.asarray(_rows(list(land_use))), dims=(receptor_dim,))
    if rows is not None:
        lazy.append(rows)
    if raw:  # dask arrays without dimension names: broadcast, then name the axes
        import dask.array as dsa
        lazy = dsa.broadcast_arrays(*lazy)
        dims = tuple(f"axis_{i}" for i in range(lazy[0].ndim))
        lazy = [xr.DataArray(a, dims=dims) for a in lazy]
    n_args = len(args)

    def block(*data):
        land = land_use if rows is None else _LUC_NAMES[data[-1]]
        return compute(list(data[:n_args]), land, data[n_args:n_args + len(sizes)])

    extra = {}
    if n_modes is not None:
        extra = dict(output_core_dims=[["zhang_mode"]],
                     dask_gufunc_kwargs={"output_sizes": {"zhang_mode": n_modes}})
    out = xr.apply_ufunc(block, *lazy, dask="parallelized", output_dtypes=[float], **extra)
    if raw:
        return out.transpose(*dims, ...).data
    return out


def mass_weighted_velocities(modes, relative_humidity, ustar, ra, temperature, pressure,
                             land_use, seasonal_category, wet=0.0, nodes=12,
                             receptor_dim="receptor", settling="stokes", with_settling=False):
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
    settling : str
        ``"stokes"`` (Zhang et al. 2001, Eq. 2) or ``"clift_gauvin"`` (Clift and Gauvin 1970;
        :mod:`workbench.drydep.settling`): v_g in the settling term and in St.
    with_settling : bool
        Also return each mode's mass-weighted settling velocity.

    Returns
    -------
    vd : list of array_like
        Mass-weighted Vd of each mode, in the order of `modes`. [m s-1]  With
        `with_settling`, a list of pairs ``(vd, vs)``: vs = sum_i w_i v_g(d_i), the
        settling part of vd, with the shape of the air (no receptor axis) for numpy
        input, broadcast to vd's for xarray and dask input. [m s-1]

    Notes
    -----
    The one implementation of the Zhang et al. (2001) equations,
    :class:`workbench.drydep.particles_numpy.ZhangSurface` (also behind
    :func:`particle_deposition_velocity` and :func:`surface_resistance`): what does
    not depend on the mode (air, land-use values, the factors of St, E_IN and R_1)
    is computed once for all modes, what depends on the particle only (grown
    diameter and density, C_c, v_g, Sc) once per node on (site, time) without the
    receptor axis.  A test holds it to an independent node-by-node reference implementation
    of the paper's equations (tests/drydep/test_drydep_particles.py).  Large arrays are computed in
    blocks of about :data:`BLOCK_ELEMENTS` elements along sites and hours (the same
    numbers; the work arrays stay in the processor's cache).  xarray and dask input
    go through the same code chunk by chunk (``xarray.apply_ufunc`` with
    ``dask="parallelized"``).
    """
    args = (relative_humidity, ustar, ra, temperature, pressure, seasonal_category, wet)
    if not _is_numpy(*args):
        def stack(arrays, land, _):
            got = _numpy_velocities(modes, arrays, land, nodes, settling, with_settling)
            if with_settling:  # vd of every mode, then vs of every mode
                got = [vd for vd, _ in got] + [np.broadcast_to(vs, got[0][0].shape)
                                               for _, vs in got]
            return np.stack(got, -1)
        n = len(modes)
        stacked = _through_zhang(stack, args, land_use, receptor_dim, (),
                                 n_modes=2 * n if with_settling else n)
        if with_settling:
            return [(stacked[..., i], stacked[..., n + i]) for i in range(n)]
        return [stacked[..., i] for i in range(n)]
    return _numpy_velocities(modes, args, land_use, nodes, settling, with_settling)


def _numpy_velocities(modes, arrays, land_use, nodes, settling="stokes", with_settling=False):
    """:func:`mass_weighted_velocities` of numpy `arrays` (the order of its `args`) [m s-1]."""
    arrays = [np.asarray(a, dtype=float) for a in arrays]
    land = land_use if isinstance(land_use, str) else np.asarray(land_use, dtype=object)
    shape = np.broadcast_shapes(*(a.shape for a in arrays),
                                () if isinstance(land, str) else land.shape)
    n = int(np.prod(shape)) if shape else 1
    n_threads = threads_for(n)
    blocks = list(block_slices(shape, block_size(n_threads, BLOCK_ELEMENTS)))
    if len(blocks) == 1:
        surface = ZhangSurface(*arrays[:5], land, *arrays[5:], settling=settling)
        return [surface.mass_weighted(mode, nodes, with_settling) for mode in modes]
    arrays = [aligned(a, len(shape)) for a in arrays]
    land = land if isinstance(land, str) else aligned(land, len(shape))
    out = [np.empty(shape) for _ in modes]
    # the settling has the shape of the air (rh, T, p): no receptor axis
    air = np.broadcast_shapes(*(arrays[i].shape for i in (0, 3, 4)))
    settle = [np.empty(air) for _ in modes] if with_settling else None

    def task(i):  # element-wise: the same numbers as one call on everything
        block = blocks[i]
        part = [block_of(a, block) for a in arrays]
        surface = ZhangSurface(*part[:5], land if isinstance(land, str)
                               else block_of(land, block), *part[5:], settling=settling)
        for j, mode in enumerate(modes):
            if with_settling:
                out[j][block], block_of(settle[j], block)[...] = surface.mass_weighted(
                    mode, nodes, True)
            else:
                out[j][block] = surface.mass_weighted(mode, nodes)
    run_each(task, len(blocks), n_threads)  # the engine's threads (workbench.threads)
    return list(zip(out, settle)) if with_settling else out

