"""Zhang et al. (2001) particles: handbook tables and shapes."""
import numpy as np
import pytest
from scipy import integrate

from workbench.drydep import particles as p
from workbench.drydep.options import FINE_MODE, LogNormalMode
from workbench.surface import air

T298, P1ATM = 298.15, 101325.0

# Seinfeld and Pandis (2006), Table 9.3: slip correction factor at 298 K, 1 atm
# (from memory; their lambda = 0.0651 um, ours 0.0665 um from Sutherland's mu).
SP_SLIP_TABLE = {0.01: 22.2, 0.05: 4.95, 0.1: 2.85, 0.5: 1.326, 1.0: 1.164, 5.0: 1.032, 10.0: 1.016}
# Seinfeld and Pandis (2006), Table 9.4: settling velocity of unit-density spheres at
# 298 K, 1 atm [cm s-1] (from memory).
SP_SETTLING_TABLE = {0.01: 6.95e-6, 0.1: 8.65e-5, 1.0: 3.5e-3, 10.0: 0.306}
# Seinfeld and Pandis (2006), Table 9.5: Brownian diffusivity at 298 K [cm2 s-1] (from memory).
SP_DIFFUSIVITY_TABLE = {0.01: 5.24e-4, 0.1: 6.82e-6}


@pytest.mark.parametrize("dp_um, cc", sorted(SP_SLIP_TABLE.items()))
def test_slip_correction_table(dp_um, cc):
    assert p.slip_correction(dp_um * 1e-6, T298, P1ATM) == pytest.approx(cc, rel=0.03)


@pytest.mark.parametrize("dp_um, vs", sorted(SP_SETTLING_TABLE.items()))
def test_settling_velocity_table(dp_um, vs):
    v = p.settling_velocity(dp_um * 1e-6, 1000.0, T298, P1ATM) * 100.0
    assert v == pytest.approx(vs, rel=0.05)


@pytest.mark.parametrize("dp_um, db", sorted(SP_DIFFUSIVITY_TABLE.items()))
def test_brownian_diffusivity_table(dp_um, db):
    assert p.brownian_diffusivity(dp_um * 1e-6, T298, P1ATM) * 1e4 == pytest.approx(db, rel=0.04)


def test_hygroscopic_growth_factors():
    # Ammonium sulfate grows about 1.4-1.6 times in diameter at 80 % RH (Tang and
    # Munkelwitz 1994, J. Geophys. Res. 99, 18801; from memory); sea salt more.
    d = 0.3e-6
    gf_as = p.wet_diameter(d, 0.8, "ammonium_sulfate") / d
    gf_ss = p.wet_diameter(d, 0.8, "sea_salt") / d
    assert 1.35 < gf_as < 1.65 and gf_ss > gf_as
    assert p.wet_diameter(d, 0.8, "none") == d
    # Gerber's smooth fit has no deliquescence step; at 30 % RH it stays near dry size
    assert p.wet_diameter(d, 0.3, "ammonium_sulfate") / d < 1.15
    assert np.isfinite(p.wet_diameter(5e-6, 1.0, "sea_salt"))  # capped at RH 0.99


@pytest.mark.parametrize("land_use", ["conifer_forest", "grass", "water", "urban"])
@pytest.mark.parametrize("ustar", [0.2, 0.5])
def test_vd_curve_minimum_and_shape(land_use, ustar):
    # The V-shaped curve: Brownian diffusion for small, settling and impaction for
    # large particles, with a minimum in the accumulation range. In Zhang et al.
    # (2001) it falls near 1 um (their Fig. 2); we check 0.1-2 um.
    d = np.logspace(-8, -4.5, 300)
    vd = p.particle_deposition_velocity(d, 1500.0, 0.0, ustar, 30.0, 293.15, 101325.0, land_use, 1.0,
                                        growth="none")
    d_min = d[np.argmin(vd)]
    assert 0.1e-6 < d_min < 2.0e-6
    assert vd.min() < vd[0] / 10 and vd.min() < vd[-1] / 10


def test_vd_above_settling_and_increasing_with_ustar():
    d = np.logspace(-8, -4.5, 50)
    args = (1500.0, 0.5, 30.0, 293.15, 101325.0, "grass", 1.0)
    low = p.particle_deposition_velocity(d, args[0], args[1], 0.2, *args[2:])
    high = p.particle_deposition_velocity(d, args[0], args[1], 0.6, *args[2:])
    assert np.all(high > low)
    dw = p.wet_diameter(d, 0.5)
    assert np.all(low > p.settling_velocity(dw, p.wet_density(d, dw, 1500.0), 293.15, 101325.0))


def test_wet_surface_no_rebound():
    dry = p.particle_deposition_velocity(10e-6, 2000.0, 0.5, 0.5, 30.0, 293.15, 1e5, "grass", 1.0, wet=0.0)
    wet = p.particle_deposition_velocity(10e-6, 2000.0, 0.5, 0.5, 30.0, 293.15, 1e5, "grass", 1.0, wet=1.0)
    assert wet > dry


def test_mass_weighted_against_scipy_quad():
    # reference: adaptive quadrature (scipy.integrate.quad) of Vd over the
    # log-normal mass distribution in ln d.
    mode = LogNormalMode(0.5e-6, 2.0, 1770.0, "ammonium_sulfate")
    args = (0.7, 0.4, 30.0, 290.0, 100000.0, "conifer_forest", 1.0)
    s = np.log(mode.gsd)

    def integrand(x):
        pdf = np.exp(-0.5 * ((x - np.log(mode.mmd)) / s) ** 2) / (s * np.sqrt(2 * np.pi))
        return pdf * p.particle_deposition_velocity(np.exp(x), mode.density, *args)

    ref, _ = integrate.quad(integrand, np.log(mode.mmd) - 8 * s, np.log(mode.mmd) + 8 * s, limit=200)
    ours = p.mass_weighted_velocity(mode, *args, nodes=12)
    assert ours == pytest.approx(ref, rel=0.01)


def test_narrow_mode_equals_single_size():
    mode = LogNormalMode(1e-6, 1.0, 1500.0, "none")
    args = (0.5, 0.4, 30.0, 290.0, 1e5, "grass", 1.0)
    assert p.mass_weighted_velocity(mode, *args) == pytest.approx(
        p.particle_deposition_velocity(1e-6, 1500.0, *args, growth="none"), rel=1e-12)


def test_invalid_modes_rejected():
    with pytest.raises(ValueError):
        LogNormalMode(-1.0, 2.0, 1000.0)
    with pytest.raises(ValueError):
        LogNormalMode(1e-6, 2.0, 1000.0, "salty")
    assert FINE_MODE.mmd == 0.4e-6


# --- mass_weighted_velocity against the independent reference implementation, node by node --------

LAND_USES = ("conifer_forest", "deciduous_forest", "grass", "water", "barren", "snow_ice",
             "urban", "wetland")
MODES = (FINE_MODE, LogNormalMode(5e-6, 2.0, 2165.0, "sea_salt"),
         LogNormalMode(5e-6, 2.2, 2600.0, "none"), LogNormalMode(1e-6, 1.8, 1500.0, "urban"),
         LogNormalMode(2e-6, 1.5, 1700.0, "rural"), LogNormalMode(0.05e-6, 1.6, 1000.0,
                                                                 "ammonium_sulfate"),
         LogNormalMode(0.4e-6, 2.0, 1725.0, "ammonium_nitrate"))


def _hourly_inputs(seed=5, n_site=2, n_time=400):
    """(site, receptor, time) inputs shaped as in velocities, with NaN and edge values."""
    rng = np.random.default_rng(seed)
    n_rec = len(LAND_USES)
    st = (n_site, 1, n_time)
    srt = (n_site, n_rec, n_time)
    rh = rng.uniform(0.0, 1.0, st)
    rh.flat[::37] = 1.0       # above the growth cap
    rh.flat[::53] = 0.0       # dry air
    temp = rng.uniform(250.0, 305.0, st)
    pres = rng.uniform(70000.0, 103000.0, st)
    ustar = rng.uniform(0.05, 1.2, srt)
    ra = rng.uniform(2.0, 400.0, srt)
    cat = rng.integers(1, 6, st).astype(float)
    wet = rng.integers(0, 2, srt).astype(float)
    for a, step in ((rh, 41), (temp, 59), (pres, 71), (ustar, 83), (ra, 97), (cat, 67),
                    (wet, 43)):
        a.flat[::step] = np.nan
    land = np.array(LAND_USES, dtype=object)[None, :, None]
    return rh, ustar, ra, temp, pres, land, cat, wet


# --- an independent reference implementation of the scheme, the reference of the package's one ---
#
# Zhang, L., Gong, S., Padro, J. and Barrie, L. (2001), A size-segregated particle dry
# deposition scheme for an atmospheric aerosol module, Atmos. Environ. 35, 549-560
# (equation numbers from memory): Eq. (1) V_d = v_g + 1/(R_a + R_s); Eq. (2)
# v_g = rho d^2 g C/(18 mu); Eq. (3) C = 1 + (2 lambda/d)(1.257 + 0.4 exp(-0.55 d/lambda));
# Eq. (5) R_s = 1/(eps0 u* (E_B + E_IM + E_IN) R_1), eps0 = 3; Eq. (6) E_B = Sc^-gamma;
# Eq. (7) E_IM = (St/(alpha + St))^2, St = v_g u*/(g A) (vegetation) or v_g u*^2/nu
# (smooth surfaces); Eq. (8) E_IN = (d/A)^2/2; Eq. (9) R_1 = exp(-St^1/2), 1 when the
# surface is wet; Eq. (10) Gerber (1985) growth. D_B = k T C/(3 pi mu d) (Stokes-Einstein,
# Seinfeld and Pandis 2006, Eq. 9.73). kappa growth: Petters and Kreidenweis (2007),
# Eq. 11 without the Kelvin term. Written here node by node, straight from the
# equations, on purpose not in the package's arrangement; it shares with the package
# only the air properties (workbench.surface.air), Table 3 (ZHANG_LUC) and constants.py.

BOLTZMANN_K = 1.380649e-23   # J K-1, SI 2019 exact value
G0 = 9.80665                 # m s-2, standard gravity (CGPM 1901)
RHO_WATER = 1000.0           # kg m-3, common practice


def _ref_wet(d_dry, rho_dry, rh, growth):
    """Grown diameter [m] and density [kg m-3]: Gerber (1985) radii in cm, kappa law, none."""
    gerber = {"sea_salt": (0.7674, 3.079, 2.572e-11, -1.424),   # Zhang et al. 2001, Table 1
              "urban": (0.3926, 3.101, 4.190e-11, -1.404),      # (from memory)
              "rural": (0.2789, 3.115, 5.415e-11, -0.9636),
              "ammonium_sulfate": (0.4809, 3.082, 3.110e-11, -1.428)}
    if growth == "none":
        dw = d_dry + 0.0 * rh
    elif growth == "ammonium_nitrate":  # kappa 0.67 (Petters and Kreidenweis 2007, Table 1)
        r = np.clip(rh, 0.0, 0.99)
        dw = d_dry * (1.0 + 0.67 * r / (1.0 - r)) ** (1.0 / 3.0)
    else:
        c1, c2, c3, c4 = gerber[growth]
        r_cm = d_dry * 100.0 / 2.0
        r = np.clip(rh, np.finfo(float).tiny, 0.99)  # log10 RH finite at RH 0
        r_w = (c1 * r_cm ** c2 / (c3 * r_cm ** c4 - np.log10(r)) + r_cm ** 3) ** (1 / 3)
        dw = 2.0 / 100.0 * r_w
    frac = (d_dry / dw) ** 3   # dry core volume fraction
    return dw, frac * rho_dry + (1.0 - frac) * RHO_WATER


def _ref_rs(d, rho, ustar, temp, pres, land, cat, wet):
    """R_s [s m-1], Eqs. (2), (3), (5)-(9), from the (grown) diameter [m] and density."""
    mu = air.dynamic_viscosity(temp)
    lam = air.mean_free_path(temp, pres)
    nu = air.kinematic_viscosity(temp, pres)
    cc = 1.0 + 2.0 * lam / d * (1.257 + 0.4 * np.exp(-0.55 * d / lam))          # Eq. (3)
    vg = rho * d ** 2 * G0 * cc / (18.0 * mu)                                   # Eq. (2)
    sc = nu / (BOLTZMANN_K * temp * cc / (3.0 * np.pi * mu * d))
    names = np.broadcast_to(np.asarray(land, dtype=object), np.shape(land))
    alpha = np.vectorize(lambda n: p.ZHANG_LUC[n][2], otypes=[float])(names)
    gamma = np.vectorize(lambda n: p.ZHANG_LUC[n][3], otypes=[float])(names)
    col = np.where(np.isfinite(cat), cat, 1.0).astype(int) - 1
    a_mm = np.vectorize(lambda n, c: p.ZHANG_LUC[n][1][c], otypes=[float])(names, col)
    a = np.where(np.isfinite(cat), a_mm * 1e-3, np.nan)
    smooth = np.vectorize(lambda n: bool(np.isnan(p.ZHANG_LUC[n][1][0])))(names)
    water = np.vectorize(lambda n: n == "water")(names)
    e_b = sc ** (-gamma)                                                        # Eq. (6)
    st = np.where(smooth, vg * ustar ** 2 / nu, vg * ustar / (G0 * a))
    e_im = (st / (alpha + st)) ** 2                                             # Eq. (7)
    e_in = np.where(smooth, 0.0, 0.5 * (d / a) ** 2)                            # Eq. (8)
    r1 = np.where((wet > 0) | water, 1.0, np.exp(-np.sqrt(st)))                 # Eq. (9)
    rs = 1.0 / (3.0 * ustar * (e_b + e_im + e_in) * r1)                         # Eq. (5)
    return rs + np.where(np.isnan(wet) | np.isnan(cat), np.nan, 0.0), vg


def _ref_vd(d_dry, rho_dry, rh, ustar, ra, temp, pres, land, cat, wet, growth):
    """V_d [m s-1] of one dry diameter, Eq. (1) with the grown particle."""
    dw, rho = _ref_wet(d_dry, rho_dry, rh, growth)
    rs, vg = _ref_rs(dw, rho, ustar, temp, pres, land, cat, wet)
    return vg + 1.0 / (ra + rs)


def _node_by_node(mode, args, nodes):
    """The quadrature sum of the independent V_d, node by node (Gauss-Hermite in ln d)."""
    rh, ustar, ra, temp, pres, land, cat, wet = args
    x, w = np.polynomial.hermite.hermgauss(nodes)   # nodes of exp(-x^2)
    diams = mode.mmd * np.exp(np.sqrt(2.0) * np.log(mode.gsd) * x)
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        return sum(wi / np.sqrt(np.pi) * _ref_vd(d, mode.density, rh, ustar, ra, temp, pres,
                                                 land, cat, wet, mode.growth)
                   for d, wi in zip(diams, w))


def test_public_functions_equal_the_independent_reference():
    args = _hourly_inputs(seed=4, n_time=60)
    rh, ustar, ra, temp, pres, land, cat, wet = args
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        for d, rho, growth in ((3e-7, 1770.0, "ammonium_sulfate"), (4e-6, 2165.0, "sea_salt"),
                               (2e-5, 2600.0, "none"), (5e-7, 1725.0, "ammonium_nitrate"),
                               (8e-9, 1500.0, "urban"), (1e-6, 1600.0, "rural")):
            got = p.particle_deposition_velocity(d, rho, *args, growth=growth)
            want = _ref_vd(d, rho, *args, growth)
            np.testing.assert_array_equal(np.isnan(got), np.isnan(want))
            np.testing.assert_allclose(got, want, rtol=1e-12, atol=0.0)
            got_rs = p.surface_resistance(d, rho, ustar, temp, pres, land, cat, wet)
            want_rs = _ref_rs(d, rho, ustar, temp, pres, land, cat, wet)[0]
            np.testing.assert_array_equal(np.isnan(got_rs), np.isnan(want_rs))
            np.testing.assert_allclose(got_rs, want_rs, rtol=1e-12, atol=0.0)
        # an array of diameters against scalar air (the V-shaped curve)
        d = np.logspace(-8, -4.5, 60)
        for lu in ("conifer_forest", "water", "barren"):
            vd_args = (0.6, 0.4, 30.0, 290.0, 1e5, lu, 2.0, 0.0)
            np.testing.assert_allclose(p.particle_deposition_velocity(d, 1500.0, *vd_args),
                                       _ref_vd(d, 1500.0, *vd_args, "ammonium_sulfate"),
                                       rtol=1e-12)


def test_hoisted_air_factors_equal_the_elementary_functions():
    """ZhangSurface.node (air factors taken out of the node loop) equals wet_diameter,
    wet_density, settling_velocity and brownian_diffusivity of particles.py."""
    from workbench.drydep.particles_numpy import ZhangSurface
    rh, ustar, ra, temp, pres, land, cat, wet = _hourly_inputs(seed=6, n_time=50)
    surface = ZhangSurface(rh, ustar, ra, temp, pres, land, cat, wet)
    for mode in MODES:
        vg, log_sc, d2 = (a.copy() for a in surface.node(mode.mmd, mode.density, mode.growth))
        dw = p.wet_diameter(mode.mmd, rh, mode.growth)
        rho = p.wet_density(mode.mmd, dw, mode.density)
        sc = air.kinematic_viscosity(temp, pres) / p.brownian_diffusivity(dw, temp, pres)
        for got, want in ((vg, p.settling_velocity(dw, rho, temp, pres)), (log_sc, np.log(sc)),
                          (d2, dw ** 2)):
            np.testing.assert_array_equal(np.isnan(got), np.isnan(want))
            np.testing.assert_allclose(got, want, rtol=1e-12, atol=0.0)


@pytest.mark.parametrize("mode", MODES, ids=lambda m: f"{m.growth}-{m.mmd:g}")
def test_mass_weighted_equals_independent_node_by_node_sum(mode):
    args = _hourly_inputs()
    ref = _node_by_node(mode, args, 12)
    fast = p.mass_weighted_velocity(mode, *args, nodes=12)
    assert fast.shape == ref.shape == (2, len(LAND_USES), 400)
    # the same NaN (missing input) and the same values
    np.testing.assert_array_equal(np.isnan(fast), np.isnan(ref))
    assert np.isfinite(ref).mean() > 0.5
    np.testing.assert_allclose(fast, ref, rtol=1e-12, atol=0.0)


def test_mass_weighted_scalars_and_shapes():
    # scalar inputs, a single land use, the dry and the wet surface
    for wet in (0.0, 1.0, np.nan):
        args = (0.8, 0.4, 30.0, 285.0, 99000.0, "grass", 2.0, wet)
        fast = p.mass_weighted_velocity(MODES[1], *args, nodes=8)
        ref = _node_by_node(MODES[1], args, 8)
        assert np.ndim(fast) == 0
        if np.isnan(wet):
            assert np.isnan(fast) and np.isnan(ref)
        else:
            assert fast == pytest.approx(float(ref), rel=1e-12)
    # receptors along the last axis (a list of classes), hours along the first
    rh = np.linspace(0.1, 0.95, 24)[:, None]
    args = (rh, 0.3, 50.0, 290.0, 1e5, ["water", "urban", "conifer_forest"], 5.0, 0.0)
    np.testing.assert_allclose(p.mass_weighted_velocity(FINE_MODE, *args),
                               _node_by_node(FINE_MODE, args, 12), rtol=1e-12)


def test_several_modes_at_once_equal_one_by_one():
    args = _hourly_inputs(seed=8, n_time=100)
    together = p.mass_weighted_velocities(MODES, *args, nodes=10)
    for mode, vd in zip(MODES, together):
        np.testing.assert_array_equal(vd, p.mass_weighted_velocity(mode, *args, nodes=10))


def test_xarray_input_equals_numpy():
    import xarray as xr
    rh, ustar, ra, temp, pres, land, cat, wet = _hourly_inputs(seed=9, n_site=1, n_time=50)
    dims3 = ("site", "receptor", "time")
    da = lambda a: xr.DataArray(a, dims=dims3)  # noqa: E731
    st = lambda a: xr.DataArray(a[:, 0, :], dims=("site", "time"))  # noqa: E731
    vd = p.mass_weighted_velocity(MODES[0], st(rh), da(ustar), da(ra), st(temp), st(pres),
                                  list(LAND_USES), st(cat), da(wet))
    assert isinstance(vd, xr.DataArray)
    ref = p.mass_weighted_velocity(MODES[0], rh, ustar, ra, temp, pres, land, cat, wet)
    np.testing.assert_allclose(vd.transpose(*dims3).values, ref, rtol=1e-12)


def test_dask_chunks_give_the_numpy_numbers():
    """Chunked (dask) input runs the numpy implementation chunk by chunk: lazy, the same numbers."""
    import dask.array as dsa
    import xarray as xr
    rh, ustar, ra, temp, pres, land, cat, wet = _hourly_inputs(seed=10, n_site=2, n_time=90)
    dims3 = ("site", "receptor", "time")
    da = lambda a: xr.DataArray(a, dims=dims3).chunk({"time": 25, "site": 1})  # noqa: E731
    st = lambda a: xr.DataArray(a[:, 0, :], dims=("site", "time")).chunk({"time": 40})  # noqa: E731
    lazy_args = (st(rh), da(ustar), da(ra), st(temp), st(pres), list(LAND_USES), st(cat), da(wet))
    np_args = (rh, ustar, ra, temp, pres, land, cat, wet)
    lazy = p.mass_weighted_velocities(MODES[:3], *lazy_args, nodes=10)
    eager = p.mass_weighted_velocities(MODES[:3], *np_args, nodes=10)
    for vd, ref in zip(lazy, eager):
        assert vd.chunks is not None and set(vd.dims) == set(dims3)
        np.testing.assert_array_equal(vd.transpose(*dims3).values, ref)
    one = p.particle_deposition_velocity(2e-6, 2000.0, *lazy_args, growth="sea_salt")
    assert one.chunks is not None
    np.testing.assert_array_equal(one.transpose(*dims3).values, p.particle_deposition_velocity(
        2e-6, 2000.0, *np_args, growth="sea_salt"))
    # dask arrays without dimension names broadcast as numpy does
    raw = [dsa.from_array(a, chunks=30) for a in (rh, ustar, ra, temp, pres)]
    got = p.mass_weighted_velocities(MODES[:1], *raw, land, cat, dsa.from_array(wet, chunks=45),
                                     nodes=10)[0]
    assert isinstance(got, dsa.Array)
    np.testing.assert_array_equal(got.compute(), eager[0])


def test_blocks_give_the_numbers_of_one_block(monkeypatch):
    """mass_weighted_velocities in cache-sized blocks equals one call on everything."""
    import workbench.drydep.particles as P
    from workbench.drydep.options import DryOptions
    rng = np.random.default_rng(7)
    s, r, t = 3, 4, 500
    rh = rng.uniform(0.2, 1.0, (s, 1, t))
    rh.flat[::17] = np.nan
    us, ra = rng.uniform(0.05, 1.0, (s, r, t)), rng.uniform(5.0, 300.0, (s, r, t))
    temp, pres = rng.uniform(255.0, 305.0, (s, 1, t)), np.full((s, 1, t), 95e3)
    land = np.array(["conifer_forest", "grass", "water", "urban"], dtype=object)[None, :, None]
    cat = rng.integers(1, 6, (s, 1, t)).astype(float)
    wet = rng.integers(0, 2, (s, r, t)).astype(float)
    modes = [DryOptions().mode_of("pSO4").fine, DryOptions().mode_of("pCa").coarse]
    args = (modes, rh, us, ra, temp, pres, land, cat, wet, 8)
    whole = P.mass_weighted_velocities(*args)
    monkeypatch.setattr(P, "BLOCK_ELEMENTS", 700)  # blocks over sites and hours
    assert len(list(P.block_slices((s, r, t), P.BLOCK_ELEMENTS))) > s
    for a, b in zip(P.mass_weighted_velocities(*args), whole):
        np.testing.assert_array_equal(a, b)
    # inputs of fewer axes broadcast against the blocks as they do against the whole
    one = P.mass_weighted_velocities(modes, rh[0, 0], us[0], ra[0], temp[0, 0], pres[0, 0],
                                     land[0], cat[0, 0], wet[0], 8)
    np.testing.assert_array_equal(one[0], whole[0][0])
