"""The one implementation of the Zhang et al. (2001) particle R_s and V_d.

:class:`ZhangSurface` computes R_s (:meth:`ZhangSurface.resistance`), V_d of one dry
diameter (:meth:`ZhangSurface.velocity`) and the mass-weighted V_d of a log-normal
mode (:meth:`ZhangSurface.mass_weighted`); the public functions of
:mod:`workbench.drydep.particles` call it for numpy input and, chunk by chunk
(``xarray.apply_ufunc``), for xarray and dask input.  The equations are arranged so
that what does not depend on the particle size is computed once and what depends on
the size only is computed without the receptor axis.  A test holds it to an
independent node-by-node reference implementation of the paper's equations
(tests/drydep/test_drydep_particles.py).
Units: SI (m, kg m-3, K, Pa, m s-1, s m-1).
"""
from __future__ import annotations

import numpy as np

from ..constants import BOLTZMANN, GRAVITY, WATER_DENSITY
from ..surface.air import dynamic_viscosity, kinematic_viscosity, mean_free_path
from .settling import check_settling, drag_ratio
from .zhang_tables import (_ROW, _SLIP_EXP_MIN, EPSILON_0, GERBER, GROWTH_RH_MAX, KAPPA,
                           M_PER_CM,
                           SLIP_A, SLIP_B, SLIP_C, _luc_table, _rows, lognormal_nodes)


class ZhangSurface:
    """Zhang et al. (2001) over given surfaces and air, for numpy input.

    Built once per call (per block or chunk) of the public functions; holds, each
    with the least shape it needs (what depends only on the air has the shape of the
    temperature, pressure and humidity: no receptor axis):

    * air factors: 2 lambda [m] and -1.1/(2 lambda) [m-1] of the slip correction,
      g/(18 mu) [m2 s-1 kg-1] of v_g, 3 pi mu nu/(k_B T) [m-1] of Sc;
    * log10 of the relative humidity clipped as in :func:`wet_diameter` [-], and 0
      or NaN (where the humidity is NaN, as :func:`wet_diameter` without growth);
    * the land-use values -gamma [-] and alpha [-] (shape of `land_use`);
    * ``st_per_vg``: St / v_g [s m-1], u*/(g A) over vegetation and u*^2/nu over
      smooth surfaces (Zhang et al. 2001, Eq. 6);
    * ``ein_per_d2``: E_IN / d_p^2 [m-2], 1/(2 A^2), 0 over smooth surfaces (Eq. 7);
    * ``sqrt_st_per_vg_rebound``: (St / v_g)^1/2 [s1/2 m-1/2] where the rebound
      factor R_1 applies, 0 where the surface is wet or open water (R_1 = 1);
    * ``eps_ustar``: epsilon_0 u* [m s-1];
    * ``ra``: R_a [s m-1], NaN where the wetness or the seasonal category is unknown
      (which makes V_d NaN there, as in :func:`surface_resistance`);
    * work arrays reused by every node and mode.

    Parameters
    ----------
    relative_humidity : array_like
        [1]
    ustar : array_like
        [m s-1]
    ra : array_like
        [s m-1]
    temperature, pressure : array_like
        [K], [Pa]
    land_use : str or array_like of str
    seasonal_category : array_like
        1-5 (NaN unknown). [-]
    wet : array_like
        [0/1] (NaN unknown)
    settling : str
        ``"stokes"`` (Zhang et al. 2001, Eq. 2; default) or ``"clift_gauvin"``: v_g from the
        drag correlation of :mod:`workbench.drydep.settling`, in the v_g term and in
        the Stokes number alike.
    """

    def __init__(self, relative_humidity, ustar, ra, temperature, pressure, land_use,
                 seasonal_category, wet, settling="stokes"):
        self.settling = check_settling(settling)
        f = lambda x: np.asarray(x, dtype=float)  # noqa: E731
        rh, us, ra, t, p = f(relative_humidity), f(ustar), f(ra), f(temperature), f(pressure)
        cat, wet = f(seasonal_category), f(wet)
        rows = np.asarray(_rows(land_use))
        self.shape = np.broadcast_shapes(rh.shape, us.shape, ra.shape, t.shape, p.shape,
                                         cat.shape, wet.shape, rows.shape)
        self.air_shape = np.broadcast_shapes(rh.shape, t.shape, p.shape)
        self.nan_rh = np.where(np.isnan(rh), np.nan, 0.0)
        self.log10_rh = np.log10(np.clip(rh, np.finfo(float).tiny, GROWTH_RH_MAX))
        rh_c = np.clip(rh, 0.0, GROWTH_RH_MAX)
        self.rh_odds = rh_c / (1.0 - rh_c)                       # RH/(1 - RH) of kappa laws
        mu = dynamic_viscosity(t)
        nu = kinematic_viscosity(t, p, viscosity=mu)
        free_path = mean_free_path(t, p, viscosity=mu)
        self.two_free_path = 2.0 * free_path                      # [m]
        self.slip_exp_per_d = -SLIP_C / (2.0 * free_path)         # [m-1]
        self.vg_per_rho_d2_cc = GRAVITY / (18.0 * mu)             # [m2 s-1 kg-1]
        self.sc_per_d_over_cc = 3.0 * np.pi * mu * nu / (BOLTZMANN * t)  # [m-1]
        self.per_nu = 1.0 / nu                                    # [s m-2]
        a_tab, alpha, gamma, smooth = _luc_table()
        self.neg_gamma, self.alpha = -gamma[rows], alpha[rows]
        smooth = smooth[rows]
        finite = np.isfinite(cat)
        col = (np.where(finite, cat, 1.0) - 1.0).astype(int)
        a = np.where(finite, a_tab[rows, col], np.nan)
        with np.errstate(invalid="ignore", divide="ignore"):
            self.st_per_vg = np.where(smooth, us * us / nu, us / (GRAVITY * a))
            self.ein_per_d2 = np.where(smooth, 0.0, 0.5 / (a * a))
        rebound = np.where((wet > 0) | (rows == _ROW["water"]), 0.0, 1.0)
        self.sqrt_st_per_vg_rebound = np.sqrt(self.st_per_vg * rebound)
        self.eps_ustar = EPSILON_0 * us
        self.unknown = np.where(np.isnan(wet) | np.isnan(cat), np.nan, 0.0)
        self.ra = ra + self.unknown
        self._air_work = [np.empty(self.air_shape) for _ in range(6)]
        self._work = [np.empty(self.shape) for _ in range(3)]

    def node(self, dry_diameter, dry_density, growth):
        """Grown diameter, settling and Brownian terms of one dry diameter.

        Parameters
        ----------
        dry_diameter : float or array_like
            [m]
        dry_density : float or array_like
            [kg m-3]
        growth : str
            Growth law (see :func:`workbench.drydep.particles.wet_diameter`).

        Returns
        -------
        vg : numpy.ndarray
            Settling velocity v_g, shape of the air (broadcast with the diameter and
            density when these are arrays) [m s-1].
        log_sc : numpy.ndarray
            ln of the particle's Schmidt number nu / D_B [-].
        d2 : numpy.ndarray
            Square of the grown diameter [m2].

        For a scalar diameter and density the three arrays are work arrays,
        overwritten by the next call.

        Notes
        -----
        Gerber (1985) or kappa-Koehler growth as
        :func:`~workbench.drydep.particles.wet_diameter`, density as
        :func:`~workbench.drydep.particles.wet_density`: the same equations and the
        same constants (:mod:`workbench.drydep.zhang_tables`), with log10 RH, the
        clipped RH and RH/(1 - RH) computed once per call instead of once per node.
        """
        if np.ndim(dry_diameter) or np.ndim(dry_density):
            dry_diameter, dry_density = (np.asarray(dry_diameter, dtype=float),
                                         np.asarray(dry_density, dtype=float))
        work = self._node_work(dry_diameter, dry_density)
        dw, rho = work[0], work[2]
        if growth == "none":
            np.add(self.nan_rh, dry_diameter, out=dw)  # NaN where RH is, as wet_diameter
        elif growth in KAPPA:  # kappa-Koehler, as wet_diameter
            np.multiply(self.rh_odds, KAPPA[growth], out=dw)
            dw += 1.0
            np.cbrt(dw, out=dw)
            dw *= dry_diameter
        else:
            c1, c2, c3, c4 = GERBER[growth]
            rd = dry_diameter / 2.0 / M_PER_CM  # dry radius [cm]
            np.subtract(c3 * rd ** c4, self.log10_rh, out=dw)
            np.divide(c1 * rd ** c2, dw, out=dw)
            dw += rd ** 3
            np.cbrt(dw, out=dw)  # wet radius [cm]
            dw *= 2.0 * M_PER_CM
        np.multiply(dw, dw, out=rho)
        rho *= dw
        # density: water plus the dry core's excess times its volume fraction
        np.divide((dry_density - WATER_DENSITY) * dry_diameter ** 3, rho, out=rho)
        rho += WATER_DENSITY
        return self._particle(work)

    def _node_work(self, *sizes):
        """Six work arrays of the air's shape broadcast with `sizes` (reused if scalar)."""
        if all(np.ndim(s) == 0 for s in sizes):
            return self._air_work
        shape = np.broadcast_shapes(self.air_shape, *(np.shape(s) for s in sizes))
        return [np.empty(shape) for _ in range(6)]

    def _particle(self, work):
        """v_g [m s-1], ln Sc [-] and d^2 [m2] from the diameter work[0] [m] and density work[2].

        Notes
        -----
        C_c, v_g and D_B as :func:`~workbench.drydep.particles.slip_correction`,
        :func:`~workbench.drydep.particles.settling_velocity` and
        :func:`~workbench.drydep.particles.brownian_diffusivity` (Seinfeld and Pandis
        2006, Eqs. 9.34, 9.42, 9.73; Zhang et al. 2001, Eqs. 2-3), with the factors that
        depend only on the air taken out of the node loop (built in ``__init__`` from
        the same :mod:`workbench.surface.air` functions and the same SLIP_* constants):
        C_c = 1 + (2 lambda/d)(A + B exp(-C d/(2 lambda))),
        v_g = (rho_p d^2 C_c) g/(18 mu) and Sc = nu/D_B = (d/C_c) 3 pi mu nu/(k_B T).
        A test holds the two forms equal (tests/drydep/test_drydep_particles.py).
        Under ``settling="clift_gauvin"`` v_g is then multiplied by
        :func:`~workbench.drydep.settling.drag_ratio` of Re_S = v_g d / (C_c nu).
        """
        dw, d2, rho, cc, log_sc, _ = work
        np.multiply(dw, dw, out=d2)
        np.multiply(dw, self.slip_exp_per_d, out=cc)
        np.maximum(cc, _SLIP_EXP_MIN, out=cc)  # C_c unchanged; exp kept off subnormals
        np.exp(cc, out=cc)
        cc *= SLIP_B
        cc += SLIP_A
        np.divide(self.two_free_path, dw, out=log_sc)  # Knudsen number 2 lambda / d
        cc *= log_sc
        cc += 1.0
        np.divide(dw, cc, out=log_sc)
        log_sc *= self.sc_per_d_over_cc
        np.log(log_sc, out=log_sc)
        vg = rho
        vg *= d2
        vg *= cc
        vg *= self.vg_per_rho_d2_cc
        if self.settling == "clift_gauvin":   # Stokes' Reynolds number d w_S / nu, w_S = v_g / C_c
            vg *= drag_ratio(vg * dw * self.per_nu / cc)
        return vg, log_sc, d2

    def _resistance(self, vg, log_sc, d2, e, st, x, sqrt_vg):
        """R_s [s m-1] into `x` (Zhang et al. 2001, Eqs. 5-8); e, st, sqrt_vg are work arrays.

        E_B = exp(-gamma ln Sc) (Eq. 6), St = v_g (St/v_g), E_IM = (St/(alpha + St))^2
        (Eq. 7), E_IN = d^2/(2 A^2) (Eq. 8), 1/R_1 = exp(St^1/2) where there is rebound,
        else 1 (Eq. 9), R_s = (1/R_1) / (epsilon_0 u* (E_B + E_IM + E_IN)) (Eq. 5).
        """
        np.multiply(self.neg_gamma, log_sc, out=e)
        np.exp(e, out=e)                                # E_B
        np.multiply(vg, self.st_per_vg, out=st)         # St
        np.add(self.alpha, st, out=x)
        np.divide(st, x, out=x)
        np.multiply(x, x, out=x)                        # E_IM
        e += x
        np.multiply(d2, self.ein_per_d2, out=x)         # E_IN
        e += x
        e *= self.eps_ustar                             # epsilon_0 u* E
        np.sqrt(vg, out=sqrt_vg)
        np.multiply(sqrt_vg, self.sqrt_st_per_vg_rebound, out=x)
        np.exp(x, out=x)                                # 1 / R_1
        x /= e                                          # R_s
        return x

    def _weighted_sum(self, particles, weights, with_settling=False):
        """sum_i w_i (v_g + 1/(R_a + R_s)) over the (v_g, ln Sc, d^2) of `particles` [m s-1].

        With `with_settling`, the pair (that sum, sum_i w_i v_g) [m s-1]: the second is
        the mass-weighted settling velocity, the sum the first one adds, shape of the air.
        """
        total = vg_sum = e = None
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
            for (vg, log_sc, d2), w in zip(particles, weights):
                if total is None:
                    shape = np.broadcast_shapes(self.shape, vg.shape)
                    e, st, x = (self._work if shape == self.shape
                                else [np.empty(shape) for _ in range(3)])
                    total, vg_sum = np.zeros(shape), np.zeros(vg.shape)
                    # the sixth air work array is free when node() used the shared ones
                    sqrt_vg = (self._air_work[5] if vg is self._air_work[2]
                               else np.empty(vg.shape))
                x = self._resistance(vg, log_sc, d2, e, st, x, sqrt_vg)
                x += self.ra
                np.divide(w, x, out=x)                          # w / (R_a + R_s)
                total += x
                np.multiply(vg, w, out=sqrt_vg)
                vg_sum += sqrt_vg                               # sum of w v_g
            total += vg_sum
        total = total[()] if total.ndim == 0 else total
        if with_settling:
            return total, (vg_sum[()] if vg_sum.ndim == 0 else vg_sum)
        return total

    def velocity(self, dry_diameter, dry_density, growth):
        """V_d = v_g + 1/(R_a + R_s) of one dry diameter (Zhang et al. 2001, Eq. 1) [m s-1].

        Parameters
        ----------
        dry_diameter : float or array_like
            [m]
        dry_density : float or array_like
            [kg m-3]
        growth : str
            Growth law.

        Returns
        -------
        vd : numpy.ndarray or numpy.float64
            [m s-1]

        Notes
        -----
        The sum of :meth:`mass_weighted` with one node of weight 1.
        """
        return self._weighted_sum([self.node(dry_diameter, dry_density, growth)], [1.0])

    def resistance(self, diameter, density):
        """R_s of particles of a given (grown) diameter and density [s m-1] (Eqs. 5-9).

        Parameters
        ----------
        diameter : float or array_like
            [m]
        density : float or array_like
            [kg m-3]

        Returns
        -------
        rs : numpy.ndarray or numpy.float64
            NaN where the wetness or the seasonal category is unknown. [s m-1]
        """
        work = self._node_work(diameter, density)
        work[0][...] = diameter
        work[2][...] = density
        vg, log_sc, d2 = self._particle(work)
        shape = np.broadcast_shapes(self.shape, vg.shape)
        e, st, x = (np.empty(shape) for _ in range(3))
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
            rs = self._resistance(vg, log_sc, d2, e, st, x, np.empty(vg.shape))
        rs += self.unknown
        return rs[()] if rs.ndim == 0 else rs

    def mass_weighted(self, mode, nodes, with_settling=False):
        """Mass-weighted V_d of one mode [m s-1] (see :func:`mass_weighted_velocity`).

        Parameters
        ----------
        mode : workbench.drydep.options.LogNormalMode
        nodes : int
        with_settling : bool
            Return the mass-weighted settling velocity too.

        Returns
        -------
        vd : numpy.ndarray or numpy.float64
            Shape of the broadcast inputs. [m s-1]
        vs : numpy.ndarray or numpy.float64
            With `with_settling` only, returned as ``(vd, vs)``: sum_i w_i v_g(d_i),
            the settling part of `vd`, shape of the air (no receptor axis). [m s-1]

        Notes
        -----
        Per node, on the full (site, receptor, time) shape, Zhang et al. (2001)
        Eqs. (1), (5)-(9) (:meth:`_resistance`); the sum over the nodes of
        w (v_g + 1/(R_a + R_s)).  A loop over the few nodes, each step vectorized
        over sites, receptors and hours, in work arrays that stay in the processor's
        cache (one pass over all nodes at once was two times slower).
        """
        diams, weights = lognormal_nodes(mode.mmd, mode.gsd, nodes)
        return self._weighted_sum((self.node(d, mode.density, mode.growth) for d in diams),
                                  weights, with_settling)
