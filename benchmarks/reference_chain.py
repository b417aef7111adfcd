"""Two references of the engine's resistance chain: a scalar Python loop and a numba kernel.

Both compute, hour by hour and receptor by receptor, what
:func:`workbench.drydep.velocities` computes for the gas SO2 (Wesely 1989 path) and for
one particle mode (Zhang et al. 2001, mass-weighted over Gauss-Hermite nodes), with the
same equations written again as scalar code (``math``, no numpy inside the hour):

* pressure (the standard atmosphere at the site's elevation where the met has none),
  air density, dynamic and kinematic viscosity;
* u* over the receptor from the u* over the wind mast's surface (neutral profiles
  matched at the blending height; Charnock z0 over water, fixed-point steps), its floor;
* the receptor's sensible heat flux (measured; else Holtslag-van Ulden energy balance by
  day, the mast's theta* by night; 0 over water), the inverse Obukhov length;
* the reference height of Ra (raised to d + m z0), Ra with Paulson / Beljaars-Holtslag
  psi_h, its cap;
* Rb of SO2 (Schmidt number from Massman's diffusivity), Wesely's Rc of SO2 with every
  path, Vd = 1/(Ra + Rb + Rc);
* the particle mode: Gerber growth, slip correction, settling, Brownian Schmidt number,
  E_B, E_IM, E_IN, rebound, Vd = sum of w (v_g + 1/(Ra + R_s)).

Inputs taken from the engine (not recomputed here): the steps before the receptor, which
look across hours or solve the mast's surface layer: u* and H over the wind mast
(``met_friction_velocity``, ``met_sensible_heat_flux``: measured, or the engine's
energy-balance / bisection / stable closed-form solve), the cloud cover used, the
seasonal category, the wetness (``wet_kind``, ``surface_wet``).  Site and receptor
constants (z0, d of the mast and receptors, tables) are prepared once with numpy.

The hour functions are written once; :func:`build` returns them either as plain Python
(the scalar loop) or compiled by ``numba.njit`` into one fused loop over (site, hour,
receptor).  As the engine does, what one hour of one site gives every receptor (the
air, the receptor-independent factors of H, Rb and Rc, and the grown particle's d^2,
v_g, ln Sc and v_g^1/2 at each Gauss-Hermite node) is computed once per site and hour
(:func:`air` inside :func:`build`), the rest once per receptor: the two references do
the work the engine does, no more (the scalar loop too: hoisting these terms is what a
careful scalar programmer would do).  Constants and tables are imported from the package (data, not equations).
Units: SI throughout (K, Pa, m, s, kg); resistances [s m-1], velocities [m s-1].
"""
from __future__ import annotations

import math

import numpy as np

from workbench import constants as C
from workbench.drydep import micromet as M, receptors as R, wesely1989 as W, zhang_tables as Z
from workbench.species import get as species
from workbench.surface import energy_balance as EB
from workbench.surface.air import (FAO56_CP_MOIST_AIR, FAO56_EPSILON, FAO56_LATENT_HEAT,
                                   standard_pressure_at)

NAN = float("nan")
INF = float("inf")
#: Output columns of the hour function, in order.
OUTPUTS = ("ustar", "inv_obukhov", "ra", "rb_SO2", "rc_SO2", "vd_SO2", "vd_particle")


def build(jit=None):
    """The hour function and the loop over (site, receptor, hour), plain or compiled.

    Parameters
    ----------
    jit : callable or None
        None: plain Python (the scalar reference); ``numba.njit(error_model="numpy")``:
        the compiled kernel.

    Returns
    -------
    callable
        ``loop(h, rcp, site, tabs, nodes, nw, out)``: fills ``out[s][r][t][k]`` (one
        column per :data:`OUTPUTS`) from the arrays of :func:`prepare`; ``nw`` is a work
        array of the per-node terms (:func:`node_work`).
    """
    j = jit or (lambda f: f)
    K, G, CP, R = C.VON_KARMAN, C.GRAVITY, C.CP_DRY_AIR, C.GAS_CONSTANT
    MD, T0C = C.MOLAR_MASS_DRY_AIR, C.ZERO_CELSIUS
    MU0, TS, SS = C.SUTHERLAND_MU_REF, C.SUTHERLAND_T_REF, C.SUTHERLAND_S
    GAMMA_PER_P = FAO56_CP_MOIST_AIR / (FAO56_EPSILON * FAO56_LATENT_HEAT)  # FAO-56 Eq. 8
    GAM, BA, BB, BC, BD = (C.BUSINGER_DYER_GAMMA, C.BELJAARS_HOLTSLAG_A, C.BELJAARS_HOLTSLAG_B,
                           C.BELJAARS_HOLTSLAG_C, C.BELJAARS_HOLTSLAG_D)
    so2, h2o = species("SO2"), species("H2O")
    H_SO2, F0_SO2, D0_SO2 = so2.henry_eff, so2.reactivity, so2.diffusivity_0
    D_RATIO = h2o.diffusivity_0 / so2.diffusivity_0
    TINY = np.finfo(float).tiny
    R_TINY = W._R_TINY

    @j
    def recip(r):  # 1/r, 1/0 = inf, NaN stays NaN (wesely1989._recip)
        if r != r:
            return r
        if r == 0.0:
            return INF
        return 1.0 / (r if r > R_TINY else R_TINY)

    @j
    def psi_h(zeta):  # Paulson (1970) unstable, Beljaars-Holtslag (1991) stable
        if zeta < 0.0:
            y = (1.0 - GAM * zeta) ** 0.5
            return 2.0 * math.log((1.0 + y) / 2.0)
        return -((1.0 + 2.0 * BA * zeta / 3.0) ** 1.5 + BB * (zeta - BC / BD)
                 * math.exp(-BD * zeta) + BB * BC / BD - 1.0)

    @j
    def transfer(us_m, z0_m, d_m, z0, d, zb):  # neutral profiles matched at zb
        return us_m * math.log((zb - d_m) / z0_m) / math.log((zb - d) / z0)

    @j
    def air(temp, rh, k_down, pres_in, p_std, cloud, cat, tabs, nodes, nw):
        """What one hour of one site gives every receptor (the engine also computes these
        once per site and hour): air, the receptor-independent parts of H, Rb, Rc, and per
        Gauss-Hermite node the grown particle's d^2, v_g, ln Sc and v_g^1/2 (into `nw`)."""
        (floor, cap, zb, m_z0, n_charnock, wt, a_tab, alpha_t, gamma_t, smooth_t, water_row,
         c1, c2, c3, c4, growth, density) = tabs
        p = p_std if pres_in != pres_in else pres_in
        rho = p / (R * temp) * MD
        mu = MU0 * (temp / TS) ** 1.5 * (TS + SS) / (temp + SS)
        nu = mu / rho
        rad6, rad4 = EB.HVU_C1 * temp ** 6, C.STEFAN_BOLTZMANN * temp ** 4
        t_c = temp - T0C
        e_s = C.MAGNUS_A * math.exp(C.MAGNUS_B * t_c / (t_c + C.MAGNUS_C))
        slope_es = e_s * C.MAGNUS_B * C.MAGNUS_C / (t_c + C.MAGNUS_C) ** 2
        ratio = GAMMA_PER_P * p / slope_es
        diff = D0_SO2 * (C.STANDARD_PRESSURE / p) * (temp / T0C) ** 1.81
        sc_term = ((nu / diff) / C.PRANDTL_AIR) ** (2.0 / 3.0)
        valid_cat = cat == cat and abs(cat) != INF
        cold = W.COLD_SCALE * math.exp(-t_c - W.COLD_OFFSET)
        rs_open = t_c > 0.0 and t_c < W.RS_T_MAX
        ts_in = t_c if rs_open else W.RS_T_MAX / 2.0   # Wesely (1989) Eq. 3 over 0-40 degC
        light = 1.0 + (W.RS_LIGHT / (k_down + W.RS_LIGHT_OFFSET)) ** 2
        t_fac = W.RS_T_FACTOR / (ts_in * (W.RS_T_MAX - ts_in))
        rdc_light = W.RDC_SCALE * (1.0 + W.RDC_LIGHT / (k_down + W.RDC_LIGHT_OFFSET))
        # particles: the terms of the air and of each node (no receptor in them)
        rh_c = min(max(rh, TINY), Z.GROWTH_RH_MAX)
        log10_rh = math.log10(rh_c) if rh == rh else NAN
        free_path = 2.0 * mu / (p * math.sqrt(8.0 * MD / (math.pi * R * temp)))
        two_fp, slip_per_d = 2.0 * free_path, -Z.SLIP_C / (2.0 * free_path)
        vg_per = G / (18.0 * mu)
        sc_per = 3.0 * math.pi * mu * nu / (C.BOLTZMANN * temp)
        for i in range(len(nodes)):
            # per node: d, w and the terms of the node alone (see prepare)
            d, gr_a, gr_b, rd3, excess = (nodes[i][0], nodes[i][2], nodes[i][3], nodes[i][4],
                                          nodes[i][5])
            if growth:  # Gerber (1985), radii in cm
                dw = (gr_a / (gr_b - log10_rh) + rd3) ** (1.0 / 3.0) * (2.0 * Z.M_PER_CM)
            else:
                dw = d + (NAN if rh != rh else 0.0)
            d2 = dw * dw
            rho_p = excess / (d2 * dw) + C.WATER_DENSITY
            x = max(dw * slip_per_d, Z._SLIP_EXP_MIN)
            cc = (math.exp(x) * Z.SLIP_B + Z.SLIP_A) * (two_fp / dw) + 1.0
            vg = rho_p * d2 * cc * vg_per
            nw[i][0], nw[i][1], nw[i][2], nw[i][3] = (
                d2, vg, math.log(dw / cc * sc_per), math.sqrt(vg))
        return (p, rho, nu, rad6, rad4, ratio, sc_term, valid_cat, cold, light, t_fac, rs_open,
                rdc_light)

    @j
    def cell(temp, k_down, h_meas, snow, cloud, us_m, h_m, cat, kind, wet,
             z0_m, d_m, z0_s, d_r, z_samp, slope, albedo, pt_alpha, wrow, zrow, tabs,
             nodes, nw, hour_terms, out):
        """One receptor in one hour, from the hour's terms (:func:`air`)."""
        (floor, cap, zb, m_z0, n_charnock, wt, a_tab, alpha_t, gamma_t, smooth_t, water_row,
         c1, c2, c3, c4, growth, density) = tabs
        (p, rho, nu, rad6, rad4, ratio, sc_term, valid_cat, cold, light, t_fac, rs_open,
         rdc_light) = hour_terms
        # --- u* over the receptor --------------------------------------------------------
        water = z0_s != z0_s
        if water:
            z0_r = M.CHARNOCK_START_Z0
            for _ in range(n_charnock):
                us_w = transfer(us_m, z0_m, d_m, z0_r, 0.0, zb)
                if us_w < floor:
                    us_w = floor
                z0_r = C.CHARNOCK_ALPHA * us_w ** 2 / G + C.SMOOTH_FLOW_COEFFICIENT * nu / us_w
        else:
            z0_r = z0_s
        us_r = transfer(us_m, z0_m, d_m, z0_r, d_r, zb)
        if us_r < floor:
            us_r = floor
        # --- heat flux over the receptor, 1/L ------------------------------------------------
        alb = EB.SNOW_ALBEDO if snow > 0.5 else albedo
        q_star = ((1.0 - alb) * k_down + rad6 - rad4 + EB.HVU_C2 * cloud) / (1.0 + EB.HVU_C3)
        h_pt = ((1.0 - pt_alpha) + ratio) / (1.0 + ratio) * (1.0 - EB.HVU_CG) * q_star - EB.HVU_BETA
        if h_meas == h_meas:
            h_r = h_meas
        elif h_m > 0.0:  # day (the mast's heat flux is positive exactly by day)
            h_r = h_pt
        else:
            den = rho * CP * us_m
            if den == 0.0:
                theta = NAN if h_m == 0.0 or h_m != h_m else -math.copysign(INF, h_m)
            else:
                theta = -h_m / den
            h_r = -rho * CP * us_r * theta
        if water:
            h_r = 0.0
        if us_r != us_r:
            h_r = NAN
        inv_l = -K * G * h_r / (rho * CP * temp * us_r ** 3)
        # --- Ra ------------------------------------------------------------------------------
        z_min = d_r + m_z0 * z0_r
        z_ref = z_min if z_samp < z_min else z_samp
        zd = z_ref - d_r
        ra = (math.log(zd / z0_r) - psi_h(zd * inv_l) + psi_h(z0_r * inv_l)) / (K * us_r)
        if ra > cap:
            ra = cap
        # --- Rb, Rc, Vd of SO2 -----------------------------------------------------------------
        rb = 2.0 / (K * us_r) * sc_term
        col = int(cat) - 1 if valid_cat else 0
        base = (wrow * 5 + col)

        if valid_cat:  # Table 1, parameters in the order of wesely1989.PARAMETERS
            ri, rlu_t, rac, rgs_s = wt[base], wt[60 + base], wt[120 + base], wt[180 + base]
            rgs_o, rcl_s, rcl_o = wt[240 + base], wt[300 + base], wt[360 + base]
        else:
            ri = rlu_t = rac = rgs_s = rgs_o = rcl_s = rcl_o = NAN
        rs = ri * light * t_fac
        if not rs_open:
            rs = INF
        if temp != temp or k_down != k_down:
            rs = NAN
        rs = rs * D_RATIO
        rm = 1.0 / (H_SO2 / W.RM_HENRY + W.RM_F0 * F0_SO2)
        if kind > 0.0:  # wet: SO2 takes the dew or rain value; no canopy: inf
            g_cut = recip(W.WET_CUTICLE_FACTOR * rlu_t)
            r_o = recip(1.0 / (W.RLU_O3_DEW if kind == 1.0 else W.RLU_O3_RAIN) + g_cut)
            rlu = (W.RLU_SO2_DEW if kind == 1.0 else W.RLU_SO2_RAIN) + 0.0 * r_o
            if abs(rlu_t) == INF:
                rlu = INF
        else:
            rlu = rlu_t / (W.HENRY_SCALE * H_SO2 + F0_SO2)
        rlu = rlu + cold
        if kind != kind:
            rlu = NAN
        zr = W.ZERO_TABLE_RESISTANCE
        rcl = recip(W.HENRY_SCALE * H_SO2 * recip(max(rcl_s, zr) if rcl_s == rcl_s else rcl_s)
                    + F0_SO2 * recip(max(rcl_o, zr) if rcl_o == rcl_o else rcl_o)) + cold
        rgs = recip(W.HENRY_SCALE * H_SO2 * recip(max(rgs_s, zr) if rgs_s == rgs_s else rgs_s)
                    + F0_SO2 * recip(max(rgs_o, zr) if rgs_o == rgs_o else rgs_o)) + cold
        rdc = rdc_light / (1.0 + W.RDC_SLOPE * math.radians(slope))
        rc = recip(recip(rs + rm) + recip(rlu) + recip(rdc + rcl) + recip(rac + rgs))
        if temp != temp or k_down != k_down or kind != kind or not valid_cat:
            rc = NAN
        vd = 1.0 / (ra + rb + rc)
        # --- particles: one log-normal mode (Zhang et al. 2001) --------------------------------
        a = a_tab[zrow * 5 + col] if valid_cat else NAN
        smooth = smooth_t[zrow] > 0.5
        st_per_vg = us_r * us_r / nu if smooth else us_r / (G * a)
        ein_per_d2 = 0.0 if smooth else 0.5 / (a * a)
        rebound = 0.0 if (wet > 0.0 or zrow == water_row) else 1.0
        sqrt_reb = math.sqrt(st_per_vg * rebound)
        ra_p = ra if (wet == wet and valid_cat) else NAN
        alpha, neg_gamma = alpha_t[zrow], -gamma_t[zrow]
        eps_us = Z.EPSILON_0 * us_r
        total, vg_sum = 0.0, 0.0
        for i in range(len(nodes)):
            w = nodes[i][1]
            d2, vg, log_sc, sqrt_vg = nw[i][0], nw[i][1], nw[i][2], nw[i][3]
            st = vg * st_per_vg
            e = (math.exp(neg_gamma * log_sc) + (st / (alpha + st)) ** 2 + d2 * ein_per_d2) * eps_us
            total += w / (math.exp(sqrt_vg * sqrt_reb) / e + ra_p)
            vg_sum += vg * w
        out[0], out[1], out[2], out[3], out[4], out[5], out[6] = (
            us_r, inv_l, ra, rb, rc, vd, total + vg_sum)

    @j
    def loop(h, rcp, site, tabs, nodes, nw, out):
        (temp, rh, k_down, pres, h_meas, snow, cloud, us_m, h_m, cat, kind, wet) = h
        (z0_s, d_r, albedo, pt_alpha, wrow, zrow) = rcp
        (p_std, z0_m, d_m, z_samp, slope) = site
        for s in range(len(temp)):
            for t in range(len(temp[s])):
                terms = air(temp[s][t], rh[s][t], k_down[s][t], pres[s][t], p_std[s], cloud[s][t],
                            cat[s][0][t], tabs, nodes, nw)  # (site, receptor, time)
                for r in range(len(z0_s[s])):
                    cell(temp[s][t], k_down[s][t], h_meas[s][t], snow[s][t], cloud[s][t],
                         us_m[s][t], h_m[s][t], cat[s][r][t], kind[s][r][t], wet[s][r][t], z0_m[s],
                         d_m[s], z0_s[s][r], d_r[s][r], z_samp[s], slope[s], albedo[s][r],
                         pt_alpha[s][r], wrow[s][r], zrow[s][r], tabs, nodes, nw, terms,
                         out[s][r][t])
    return loop


def prepare(met, surfaces, opt, engine):
    """Arrays of the references from the met, the surfaces and the engine's result.

    Parameters
    ----------
    met : xarray.Dataset
        Hourly met (site, time) in SI units, as given to ``velocities``.
    surfaces : xarray.Dataset
        Receptor surfaces (site, receptor).
    opt : workbench.drydep.DryOptions
        With ``"pSO4"`` first in ``particles`` (its fine mode is the mode computed).
    engine : xarray.Dataset
        The result of ``velocities(met, surfaces, opt)``: the steps taken as inputs.

    Returns
    -------
    tuple
        ``(h, rcp, site, tabs, nodes)``: hourly arrays, receptor constants, site
        constants, scalar options and tables, and per Gauss-Hermite node: diameter [m],
        weight [-], C1 rd^C2 and C3 rd^C4 of Gerber's law [cm], rd^3 [cm3],
        (rho_dry - rho_water) d^3 [kg].
    """
    def st(name):
        return (np.asarray(met[name].transpose("site", "time").values, float) if name in met
                else np.full((met.sizes["site"], met.sizes["time"]), np.nan))

    def eng(name):
        return np.ascontiguousarray(engine[name].values, dtype=float)

    surf = surfaces.sel(site=met["site"].values)
    receptors = [str(r) for r in surf["receptor"].values]
    names, z0_m, d_m = R.met_surface(surf, receptors, opt)
    if np.isnan(z0_m).any():
        raise ValueError("the references do not take a wind mast over water")
    z0_s, d_r = R.receptor_roughness(surf, receptors, opt)
    n_s, n_r = len(surf["site"]), len(receptors)
    rec = np.broadcast_to(np.array(receptors, dtype=object), (n_s, n_r))
    h = (st("temperature"), st("relative_humidity"), st("solar_radiation"), st("pressure"),
         st("sensible_heat_flux"), st("snow_cover"), eng("cloud_cover_used"),
         eng("met_friction_velocity"), eng("met_sensible_heat_flux"), eng("seasonal_category"),
         eng("wet_kind"), eng("surface_wet"))
    rcp = (np.asarray(z0_s, float), np.asarray(d_r, float),
           np.vectorize(EB.ALBEDO.get, otypes=[float])(rec),
           np.vectorize(EB.PT_ALPHA.get, otypes=[float])(rec),
           np.vectorize(lambda n: W.WESELY_CLASS[n] - 1, otypes=[np.int64])(rec),
           np.vectorize(Z._ROW.get, otypes=[np.int64])(rec))
    site = (np.asarray(standard_pressure_at(surf["elevation"].values.astype(float)), float),
            z0_m, d_m, surf["sampler_height"].values.astype(float),
            surf["terrain_slope"].values.astype(float))
    mode = opt.mode_of("pSO4").fine
    a_tab, alpha, gamma, smooth = Z._luc_table()
    wt = np.concatenate([W.TABLE[p].ravel() for p in W.PARAMETERS])  # 7 x 12 x 5
    growth = mode.growth != "none"
    c = Z.GERBER[mode.growth] if growth else (0.0, 0.0, 0.0, 0.0)
    tabs = (float(opt.ustar_floor), float(opt.ra_cap), float(opt.blending_height),
            float(opt.ra_min_height_z0), int(opt.charnock_iterations), wt, a_tab.ravel(),
            alpha, gamma, smooth.astype(float), Z._ROW["water"], float(c[0]), float(c[1]),
            float(c[2]), float(c[3]), growth, float(mode.density))
    d, w = Z.lognormal_nodes(mode.mmd, mode.gsd, opt.size_nodes)
    # the terms of one node alone (Python floats, as the engine computes them): C1 rd^C2,
    # C3 rd^C4, rd^3 of the dry radius rd [cm], and (rho_dry - rho_water) d^3 [kg]
    rows = []
    for di, wi in zip(d.tolist(), w.tolist()):
        rd = di / 2.0 / Z.M_PER_CM
        rows.append((di, wi, c[0] * rd ** c[1], c[2] * rd ** c[3], rd ** 3,
                     (mode.density - C.WATER_DENSITY) * di ** 3))
    nodes = np.array(rows, dtype=float)
    return h, rcp, site, tabs, nodes


def run_scalar(prepared):
    """The scalar Python loop on `prepared` (lists of floats); result (site, receptor, time, 7)."""
    h, rcp, site, tabs, nodes = prepared
    n_s, n_r, n_t = h[10].shape
    lists = ([a.tolist() for a in h], [a.tolist() for a in rcp], [a.tolist() for a in site],
             tuple(x.tolist() if isinstance(x, np.ndarray) else x for x in tabs), nodes.tolist())
    out = [[[[0.0] * len(OUTPUTS) for _ in range(n_t)] for _ in range(n_r)] for _ in range(n_s)]
    _SCALAR(*lists, [[0.0] * 4 for _ in range(len(nodes))], out)
    return np.array(out, dtype=float)


_SCALAR = build()
_NUMBA = None


def numba_kernel():
    """The compiled loop (numba imported and the kernel compiled on first use)."""
    global _NUMBA
    if _NUMBA is None:
        import numba
        _NUMBA = build(numba.njit(error_model="numpy"))
    return _NUMBA


def run_numba(prepared):
    """The numba kernel on `prepared`; result (site, receptor, time, 7)."""
    h, rcp, site, tabs, nodes = prepared
    out = np.empty(h[10].shape + (len(OUTPUTS),))
    numba_kernel()(h, rcp, site, tabs, nodes, node_work(nodes), out)
    return out


def node_work(nodes):
    """The work array of the kernel's per-node terms (one row per node)."""
    return np.empty((len(nodes), 4))


def engine_columns(engine):
    """The engine's values of :data:`OUTPUTS`, shape (site, receptor, time, 7)."""
    inv_l = 1.0 / engine["obukhov_length"].values
    cols = [engine["friction_velocity"].values, inv_l, engine["ra"].values,
            engine["rb_SO2"].values, engine["rc_SO2"].values, engine["vd_SO2"].values,
            engine["vd_pSO4"].values]
    return np.stack([np.asarray(c, float) for c in cols], axis=-1)
