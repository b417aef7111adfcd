"""Correlated Monte Carlo of the budget on its linear layer.

Every factor acts on pieces the engine has already computed (:mod:`.layer`), so a
draw is a few matrix products per site and never re-runs the engine:

* dry component of species *k* at site *s*, reporting period *p*, receptor *r*:

  .. math:: D^{(d)}_{srpk} = F^{(d)}_{s,y(p),k} \\sum_n A_{npr}\\,
            \\delta^{(d)}_n \\,(1 + \\phi_{npr} \\eta^{(d)}_n)

  with :math:`A` the sampling period's contribution, :math:`F` the Vd model factor
  (log-normal, median 1, systematic: shared by every site and year, correlated among
  species through the shared micrometeorology, with a part of its own per land-use
  class of the receptor, ``vd_class_fraction``, and one of the site's own,
  ``vd_site_gsd``), :math:`\\delta` the analytical error
  of the sample (random per sample) times its laboratory's calibration bias
  (systematic per laboratory period and species), :math:`\\phi` the share of its deposition in the
  period that its hours without a modelled Vd carry (gap-filled, or missing) and
  :math:`\\eta` the error of the fill (random per sample);
* wet component of ion *X*: :math:`D = \\bar C_p P_p` with, per draw,

  .. math:: P_p = g_{s,y(p)} \\sum_i w_{ip} \\varepsilon_i, \\quad
            \\bar C_p = \\frac{\\sum_{i\\,valid} w_{ip} \\varepsilon_i C_i \\delta_i}
                              {\\sum_{i\\,valid} w_{ip} \\varepsilon_i}

  with :math:`g` the gauge catch (systematic: one per gauge period of a site, shared
  by its years; a piece under two gauges by the share of its hours under each, in the
  precipitation and the PWM's weights alike), :math:`\\varepsilon` the depth error
  and :math:`\\delta` the analytical error (random per sample) times the
  laboratory's calibration bias (systematic: one per ion and laboratory period, shared
  by the sites naming one laboratory); under ``bulk_correction = "scale_wet"`` the
  bulk samples' part of D takes a drawn ``bulk_wet_factor`` and, in a period holding a
  collector change, a share redrawn with the samples (:mod:`.bulk`); a PWM
  filled from the multi-year seasonal means gets its own error instead, and the
  non-sea-salt sulfate is recomputed from the drawn SO4 and tracer PWMs.

Each draw multiplies the point budget by its ratio to the point (the same arithmetic
with every factor at 1), so a factor at 0 (GSD 1) leaves the numbers exactly as they
are.  The factors, their correlation structure and their sources are in
``docs/methods_uncertainty.md``.
"""
from __future__ import annotations

import json
import math
from dataclasses import asdict, dataclass, field

import numpy as np
import xarray as xr

from ..budget import COMPONENTS, OXIDIZED_N, REDUCED_N
from ..units import element_deposition_in
from .bulk import HELD, PRECIP, apply_bulk
from .layer import DRY_SPECIES, LinearLayer, linear_layer
# the factors of the draws, named by what they draw for (site, year, sample)
from .noise import (SAMPLE_STREAM, YEAR_STREAM, SiteNoise, _normal_factor,  # noqa: F401
                    _stream_key, keyed_normal_factor, site_noise)
from . import quantile_tables as _quantile_tables
from .quantile_tables import (QUANTILES, SUFFIXES, TOTALS, quantile_table,  # noqa: F401
                              range_note, summary_dataset,
                              summary_range_notes)
# the wet side of a draw (wet_ratios, _gauge_by_piece were defined here before)
from .wetdraws import _gauge_by_piece, _safe_ratio, wet_ratios


#: Geometric standard deviation of the Vd model factor per species [1].  Values chosen
#: from memory of the spread among inferential models in Flechard et al. (2011),
#: Atmos. Chem. Phys. 11, 2703-2728 (a factor of about 2 for reactive N dry
#: deposition, smaller for SO2 and HNO3 whose Vd is mostly aerodynamic).
DEFAULT_VD_GSD = {"SO2": 1.5, "pSO4": 1.8, "HNO3": 1.4, "pNO3": 1.8, "pNH4": 1.8,
                  "NH3": 2.0, "NO2": 2.0}


#: Geometric standard deviation of the stomatal NH3 emission potential Gamma_s of a
#: site's land-use class [1] (:attr:`UncertaintyOptions.nh3_gamma_gsd`).  Our choice,
#: from memory of the scatter of measured Gamma_s about the relation with the nitrogen
#: input in the review of Massad et al. (2010), Atmos. Chem. Phys. 10, 10359-10386
#: (about a factor of 3 either way within one kind of surface, while the classes span
#: orders of magnitude, tens for unfertilised semi-natural land to thousands for
#: fertilised crops): a class default or a site's value is known to within a factor of
#: about 3 at one standard deviation.
DEFAULT_NH3_GAMMA_GSD = 3.0


#: The ways of drawing the systematic factors (:attr:`UncertaintyOptions.systematic_errors`).
SYSTEMATIC_ERRORS = ("shared", "each_year")


@dataclass(frozen=True)
class UncertaintyOptions:
    """The Monte Carlo of the budget (scenario section ``[uncertainty]``).

    Attributes
    ----------
    draws : int
        Number of draws; 0 switches the Monte Carlo off (default).
    seed : int
        Seed of the random numbers: the same seed gives the same numbers.
    vd_gsd : dict
        species -> geometric standard deviation of the Vd model factor [1], log-normal
        with median 1; 1 removes it.  Defaults from
        memory of the model spread in Flechard et al. (2011), ACP 11, 2703.
        Systematic: shared by every site and year (``systematic_errors``).
    vd_shared_fraction : float
        Share of the log-variance of every Vd factor that comes from the micrometeorology
        (Ra, u*) common to all species [1]; the rest is the species' own
        surface and particle terms.  0.5 is our choice (no published value).
    air_rel_sd : float
        Relative standard deviation of an air concentration, random per sample [1]; 0.05
        (network QA practice for filter packs and denuders, from memory).
    precip_conc_rel_sd : float
        Relative standard deviation of a precipitation concentration, random per sample
        and ion [1]; 0.05 (network QA practice for ion chromatography, from memory).
    gauge_catch_rel_sd : float
        Relative standard deviation of the gauge catch [1], systematic: shared by the
        years of one gauge (a gauge period of a site, split at its ``what = "gauge"``
        changes), its own at each site and for each gauge (``systematic_errors``); 0.05
        (rain gauges, from memory; more where snow falls).
    depth_rel_sd : float
        Relative standard deviation of a sample's precipitation depth, random per
        sample [1]; 0.05 (common practice, from memory).
    censored_rel_sd : float
        Relative standard deviation of a value below detection replaced by half the
        limit [1]; 0.577 = 1/sqrt(3), a value uniform between 0 and the limit (common
        practice).
    vd_fill_rel_sd : float
        Relative standard deviation of a gap-filled hourly Vd (mean diurnal cycle),
        random per sampling period, applied to the share of its deposition that the
        filled hours carry [1]; 0.3
        (our choice, from memory of hour-to-hour Vd variability).
    pwm_fill_rel_sd : float
        Relative standard deviation of a PWM filled from the multi-year seasonal PWM,
        random per period and ion [1]; 0.3 (from memory of year-to-year PWM variability).
    systematic_errors : str
        How the systematic factors (Vd model factor, gauge catch) are drawn: "shared"
        (default) draws the Vd factors once for the whole run, shared by every site and
        year (a scheme's bias repeats), and the gauge catch once per gauge period of a
        site, shared by its years (the same gauge); "each_year" draws both anew for every site and calendar
        year, as before (a span's range then narrows as 1/sqrt(years): for comparison
        only).  docs/methods_uncertainty.md, "Systematic or random".  The gauge
        periods, laboratory biases and land-use class parts below follow it alike.
    lab_bias_precip_rel_sd : float
        Relative standard deviation of a precipitation laboratory's calibration bias
        [1], systematic: one draw per ion and laboratory period of a site (split at its
        ``what = "laboratory"`` changes), shared by every sample that laboratory
        analysed (a laboratory named in the site catalogue: one draw per ion for every
        site naming it, docs/methods_uncertainty.md); 0.03 (from memory of interlaboratory comparisons of precipitation
        chemistry: most laboratories within a few percent of the reference values for
        the major ions).
    lab_bias_air_rel_sd : float
        The same for the air samples' laboratory, a laboratory of its own (drawn apart
        from the precipitation laboratory's, unless the catalogue names one laboratory
        for both: then one draw per analysed ion, e.g. sulfate); 0.05 (from memory: filter and denuder
        extracts add their extraction and blanks to the analysis).
    vd_class_fraction : float
        Share of each species' own log-variance of the Vd factor (the part not shared
        through the micrometeorology, 1 - ``vd_shared_fraction``) that is a bias of the
        receptor's land-use class [1]: one draw per class for the run, shared by every
        site and receptor of that class.  The log-variance of one receptor's factor
        stays ln^2 GSD; only the correlation between classes falls.  0.5 (our choice, no
        published value; 0 is one bias for every surface, as before).
    vd_site_gsd : float
        Geometric standard deviation of a site's own Vd factor [1] (its siting and
        representativeness: the mast's fetch, the sampler's place in a heterogeneous
        surface), log-normal with median 1, beside the model factor and its class part:
        one draw per site (by its id), shared by its species, receptors and years
        (``"each_year"``: per site and year).  It adds to the log-variance of each
        receptor's factor.  1.2 (our choice, from memory of the tens of percent by
        which fluxes measured a few hundred metres apart over one surface differ); 1
        switches it off.
    lab_bias_filter_pack : bool
        The gas and particle filters of a filter pack analysed as the same ion share
        the air laboratory's calibration draw: SO2 (as sulfate) with pSO4, HNO3 (as
        nitrate) with pNO3, NH3 (as ammonium) with pNH4.  True (common practice: the
        filter stages of one pack are extracted and run in the same analytical batch,
        against one calibration); False draws each species apart, as before.
    bulk_factor_rel_sd : float
        Relative standard deviation of ``[budget] bulk_wet_factor`` [1] under
        ``bulk_correction = "scale_wet"``, systematic: one draw per site and ion,
        correlated among the site's ions (``bulk_factor_ion_correlation``), shared by
        its years (``"each_year"``: per site and year), acting on the part of the wet deposition its bulk samples
        carry.  0.1 (from memory: wet-only / bulk ratios of rural sites spread over
        roughly 0.7-0.9 around the typical 0.8); 0 switches it off.
    bulk_factor_ion_correlation : float
        Correlation in [0, 1] between the drawn factors of the ions SO4, NO3 and NH4 of
        one site [1]: each ion's factor is u = 1 + sd (sqrt(rho) z_site + sqrt(1 - rho)
        z_ion), cut at 0, z_site shared by the site's ions (the funnel's exposure), z_ion
        its own (how much of the ion's dry deposition the funnel gains, and for NH4 its
        loss in the standing sample).  0.7 (our choice, no published value: from memory,
        the bulk / wet-only ratios of sulfate and nitrate at a site rise and fall
        together, ammonium's less so); 1 shares one factor by the ions, as before.
    nh3_gamma_gsd : float
        Geometric standard deviation of the stomatal NH3 emission potential Gamma_s
        [1], log-normal with median 1, under ``[dry] nh3_treatment = "bidirectional"``
        only: one draw per site and land-use class of its receptors, shared by its years
        (``"each_year"``: per site and year), acting on the emission part E of the net
        exchange alone (E is proportional to Gamma_s through the compensation point,
        :mod:`workbench.drydep.nh3_bidirectional`).  3.0 (our choice, from memory of
        the scatter in Massad et al. 2010, ACP 10, 10359: :data:`DEFAULT_NH3_GAMMA_GSD`);
        1 switches it off.  Not drawn, and not named as drawn, where no site has an
        emission part.
    """

    draws: int = 0
    seed: int = 12345
    vd_gsd: dict = field(default_factory=lambda: dict(DEFAULT_VD_GSD))
    vd_shared_fraction: float = 0.5
    air_rel_sd: float = 0.05
    precip_conc_rel_sd: float = 0.05
    gauge_catch_rel_sd: float = 0.05
    depth_rel_sd: float = 0.05
    censored_rel_sd: float = 0.577
    vd_fill_rel_sd: float = 0.3
    pwm_fill_rel_sd: float = 0.3
    systematic_errors: str = "shared"
    lab_bias_precip_rel_sd: float = 0.03
    lab_bias_air_rel_sd: float = 0.05
    vd_class_fraction: float = 0.5
    vd_site_gsd: float = 1.2
    lab_bias_filter_pack: bool = True
    bulk_factor_rel_sd: float = 0.1
    bulk_factor_ion_correlation: float = 0.7
    nh3_gamma_gsd: float = DEFAULT_NH3_GAMMA_GSD

    def __post_init__(self):
        if self.systematic_errors not in SYSTEMATIC_ERRORS:
            raise ValueError(f"UncertaintyOptions.systematic_errors = {self.systematic_errors!r}"
                             f"; expected one of {', '.join(map(repr, SYSTEMATIC_ERRORS))}")
        for name in ("draws", "seed"):
            v = getattr(self, name)
            if isinstance(v, bool) or int(v) != v or v < 0:
                raise ValueError(f"UncertaintyOptions.{name} = {v!r} must be an integer >= 0")
            object.__setattr__(self, name, int(v))           # 1000.0 from a file -> 1000
        for name in ("air_rel_sd", "precip_conc_rel_sd", "gauge_catch_rel_sd", "depth_rel_sd",
                     "censored_rel_sd", "vd_fill_rel_sd", "pwm_fill_rel_sd",
                     "lab_bias_precip_rel_sd", "lab_bias_air_rel_sd", "bulk_factor_rel_sd"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not 0 <= v < math.inf:
                raise ValueError(f"UncertaintyOptions.{name} = {v!r} must be a finite number "
                                 ">= 0 (0 switches the factor off)")
        for name in ("vd_shared_fraction", "vd_class_fraction", "bulk_factor_ion_correlation"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not 0 <= v <= 1:
                raise ValueError(f"UncertaintyOptions.{name} = {v!r} must lie in [0, 1]")
        for name in ("vd_site_gsd", "nh3_gamma_gsd"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not 1 <= v < math.inf:
                raise ValueError(f"UncertaintyOptions.{name} = {v!r} must be a finite number "
                                 ">= 1 (1 switches the factor off)")
        if not isinstance(self.lab_bias_filter_pack, bool):
            raise ValueError(f"UncertaintyOptions.lab_bias_filter_pack = "
                             f"{self.lab_bias_filter_pack!r} must be true or false")
        for sp, g in self.vd_gsd.items():
            if sp not in DRY_SPECIES:
                raise ValueError(f"UncertaintyOptions.vd_gsd: unknown species {sp!r}; "
                                 f"expected one of {', '.join(DRY_SPECIES)}")
            if isinstance(g, bool) or not isinstance(g, (int, float)) or not 1 <= g < math.inf:
                raise ValueError(f"UncertaintyOptions.vd_gsd[{sp!r}] = {g!r} must be a finite "
                                 "number >= 1 (1 switches the factor off)")

    @classmethod
    def from_dict(cls, given: dict) -> "UncertaintyOptions":
        """From a scenario table: ``vd_gsd`` given for some species keeps the others."""
        given = dict(given)
        if "vd_gsd" in given:
            given["vd_gsd"] = {**DEFAULT_VD_GSD, **given["vd_gsd"]}
        return cls(**given)

    def to_dict(self) -> dict:
        return asdict(self)

    def gsd(self, species: str) -> float:
        return float(self.vd_gsd.get(species, 1.0))


# ------------------------------------------------------------------------------ draws

def dry_ratio(pieces, vd_factor, air, vd_fill, class_factor=None):
    """Draws of a dry component over the point: (D, R, P) [1].

    Parameters
    ----------
    pieces : DryPieces
        ``contrib`` (n, P, R) [mol m-2], ``filled`` (n, P, R) [1], ``klass`` (n, R).
    vd_factor : ndarray (D, P)
        Vd factor of each draw and period [1].
    air : ndarray (D, n)
        Multiplicative error of each sample [1].
    vd_fill : ndarray (D, n)
        Relative error of each sample's filled Vd hours [1].
    class_factor : dict, optional
        Land-use class -> (D, P) Vd factor of a receptor of that class [1]
        (``vd_class_fraction`` > 0): each sample's part at each receptor takes the
        factor of the class there (a site's own surface follows its history).
    """
    a = pieces.contrib
    n, n_p, n_r = a.shape
    flat = a.reshape(n, n_p * n_r)
    total = flat.sum(0)
    dev = (air - 1.0) @ flat + (air * vd_fill) @ (pieces.filled * a).reshape(n, -1)
    # >= 0 as every factor is (1 - sum/sum can round to -1e-19 when every sample's
    # factor is cut to 0, which would read as a net emission)
    ratio = np.maximum(1.0 + _safe_ratio(dev, total), 0.0).reshape(-1, n_p, n_r)
    if not class_factor:
        return (vd_factor[:, :, None] * ratio).transpose(0, 2, 1)
    # a factor per receptor, of its class; a receptor whose class changes among its
    # samples (a site's own surface with a land-use history) sums F_c times the part of
    # the samples of class c
    klass = pieces.klass.astype(str)
    out = np.stack([class_factor.get(klass[0, r], vd_factor) for r in range(n_r)], -1) * ratio
    for r in np.flatnonzero(~(klass == klass[:1]).all(0)):
        acc = np.zeros((air.shape[0], n_p))
        for c in np.unique(klass[:, r]):
            ac = a[:, :, r] * (klass[:, r] == c)[:, None]                  # (n, P)
            part = ac.sum(0) + (air - 1.0) @ ac + (air * vd_fill) @ (pieces.filled[:, :, r] * ac)
            acc += class_factor.get(c, vd_factor) * part
        out[:, :, r] = np.maximum(_safe_ratio(acc, a[:, :, r].sum(0)), 0.0)
    return out.transpose(0, 2, 1)


def nss_dry_draws(pieces, vd_factor, air, air_seasalt, vd_fill, class_factor=None):
    """Draws of a non-sea-salt pSO4 component: (D, R, P) [mol m-2], not ratios.

    Each row's contribution :math:`A_n = T_n - S_n` is its total pSO4's part
    :math:`T_n` less the sea-salt sulfate :math:`S_n` from its pNa
    (``pieces.seasalt``); the two analyses err apart, so a draw is

    .. math:: D = F\\, \\max\\Big(0, \\sum_n (\\delta^{SO4}_n T_n -
              \\delta^{Na}_n S_n)(1 + \\phi_n \\eta_n)\\Big)

    with the Vd factor :math:`F` (of the receptor's class where ``class_factor``), the
    per-sample errors :math:`\\delta` and the fill error :math:`\\eta` on the share
    :math:`\\phi` of the row's deposition its filled hours carry; the sum is clipped at 0
    as the budget clips the period's sum (docs/budget.md).  A period clipped in the
    budget thus gets draws that are 0 where the drawn sum stays below 0 and positive
    where the errors of pSO4 and pNa could make it so (before, its draws were all 0; and
    the error of the difference was taken as that of the nss value, too small where
    pSO4 and its sea salt nearly cancel).

    Parameters
    ----------
    pieces : DryPieces
        With ``seasalt`` (n, P, R) [mol m-2].
    vd_factor : ndarray (D, P)
    air, air_seasalt : ndarray (D, n)
        Errors of the pSO4 and pNa analyses of each row [1].
    vd_fill : ndarray (D, n)
    class_factor : dict, optional
        Land-use class -> (D, P) Vd factor.
    """
    a, ss = pieces.contrib, pieces.seasalt
    n, n_p, n_r = a.shape
    t = a + ss
    phi = pieces.filled

    def raw(mask):                     # (D, P, R) the drawn sum of the rows in `mask`
        m = mask[:, None, None]
        tt, sa, aa = (t * m).reshape(n, -1), (ss * m).reshape(n, -1), (a * m).reshape(n, -1)
        ph = phi.reshape(n, -1)
        out = (aa.sum(0) + (air - 1.0) @ tt - (air_seasalt - 1.0) @ sa
               + (air * vd_fill) @ (ph * tt) - (air_seasalt * vd_fill) @ (ph * sa))
        return out.reshape(-1, n_p, n_r)
    everything = np.ones(n, bool)
    if not class_factor:
        return (vd_factor[:, :, None] * np.maximum(raw(everything), 0.0)).transpose(0, 2, 1)
    klass = pieces.klass.astype(str)
    acc = np.zeros((air.shape[0], n_p, n_r))
    for r in range(n_r):
        for c in np.unique(klass[:, r]):
            acc[:, :, r] += class_factor.get(c, vd_factor) * raw(klass[:, r] == c)[:, :, r]
    return np.maximum(acc, 0.0).transpose(0, 2, 1)


def nh3_net_draws(pieces, vd_factor, air, vd_fill, class_factor=None, gamma=None):
    """Draws of the net NH3 exchange (bidirectional): (D, R, P) [mol m-2], not ratios.

    The net of a period is :math:`\\sum_n (B_n - E_n)`, with :math:`B_n` row *n*'s
    deposition part :math:`C_n\\, v_{d,bd}` and :math:`E_n` its emission part (from
    the compensation point, no concentration in it).  A draw is

    .. math:: D = F \\Big(\\sum_n B_n \\delta_n (1 + \\phi_n \\eta_n) -
              \\sum_n G_{c(n)} E_n\\Big)

    the Vd factor :math:`F` on both parts (a bias of the exchange's resistances scales
    the deposition and the emission alike), the concentration errors :math:`\\delta`
    and the fill error on the deposition part only, and the factor :math:`G_c` of the
    stomatal emission potential Gamma_s of the row's land-use class on the emission
    part only (E is proportional to Gamma_s).  The draws used to scale the net by
    the deposition-only rows' relative error, so a concentration error moved the net by
    its share of the net rather than of the deposition part (too little where emission
    and deposition nearly cancel), and turned a higher concentration into a larger net
    emission where the net was one.  Not clipped: a net emission stays negative.
    Under ``pair_split = "all_gas"`` the rows are both members' (a pNH4 row's B at the
    exchange's Vd, its E 0); under ``"all_particle"`` the NH3 samples' E alone (B 0).

    Parameters
    ----------
    pieces : DryPieces
        With ``exchange`` and ``emission`` (n, P, R) [mol m-2].
    vd_factor : ndarray (D, P)
    air, vd_fill : ndarray (D, n)
    class_factor : dict, optional
        Land-use class -> (D, P) Vd factor.
    gamma : dict, optional
        Land-use class (None where ``pieces.klass`` is None) -> (D, P) Gamma_s factor
        [1] (:func:`workbench.analysis.noise.nh3_gamma_factors`); None: not drawn.
    """
    import dataclasses
    dep = dataclasses.replace(pieces, contrib=pieces.exchange)
    n_d = air.shape[0]
    f_dep = dry_ratio(dep, vd_factor, air, vd_fill, class_factor)              # (D, R, P)
    b = pieces.exchange.sum(0).T[None]                                        # (1, R, P)
    e = pieces.emission.sum(0).T[None]
    ones, zeros = np.ones_like(air), np.zeros_like(vd_fill)
    if gamma is None:
        # F per receptor (of its class), as of the deposition part
        f_e = dry_ratio(dep, vd_factor, ones, zeros, class_factor)
    elif pieces.klass is None:
        f_e = (vd_factor * gamma[None])[:, None, :] * np.ones_like(e)
    else:
        # F G_c of each class, weighted by the emission its rows carry
        em = dataclasses.replace(pieces, contrib=pieces.emission)
        cf = {c: (class_factor or {}).get(c, vd_factor) * g for c, g in gamma.items()}
        f_e = dry_ratio(em, vd_factor, ones, zeros, cf)
    # dry_ratio gives F (1 + ...) relative to B; where B is 0 it is F alone
    return np.broadcast_to(f_dep * b - f_e * e, (n_d,) + b.shape[1:])


def component_draws(layer: LinearLayer, site: int, noise: SiteNoise, year0: int) -> np.ndarray:
    """Draws of every component at one site: (D, R, P, C) [mol m-2].

    Parameters
    ----------
    layer : LinearLayer
    site : int
        Row of the site in ``layer.budget.site``.
    noise : SiteNoise
    year0 : int
        Year of the first entry of the year axis of `noise`.
    """
    ds = layer.budget
    point = ds["deposition"].values[site]                            # (R, P, C)
    n_r, n_p, n_c = point.shape
    d = noise.vd.shape[0]
    yi = layer.period_year - year0
    ratio = np.ones((d, n_r, n_p, n_c))
    ls = layer.sites[site]
    direct = {}
    for j, (_, path, sp) in enumerate(COMPONENTS):
        if path == "dry" and sp in ls.dry:
            k = DRY_SPECIES.index(sp)
            cf = ({c: f[:, yi, k] for c, f in noise.vd_class.items()}
                  if noise.vd_class and ls.dry[sp].klass is not None else None)
            ratio[..., j] = dry_ratio(ls.dry[sp], noise.vd[:, yi, k], noise.air[sp],
                                      noise.vd_fill[sp], cf)
            pc = ls.dry[sp]
            if (sp == "NH3" and getattr(pc, "exchange", None) is not None
                    and ds.attrs.get("nh3_figure") == "net"):
                # the net exchange: the concentration errors on its deposition part only,
                # where the point is that net (not where the budget set it otherwise)
                lin = (pc.exchange.sum(0) - pc.emission.sum(0)).T                 # (R, P)
                pt = point[..., j]
                same = np.isfinite(pt) & np.isclose(pt, lin, rtol=1e-9, atol=1e-300)
                if same.any():
                    g = getattr(noise, "nh3_gamma", None)
                    g = None if not g else {c: f[:, yi] for c, f in g.items()}
                    direct[j] = (nh3_net_draws(pc, noise.vd[:, yi, k], noise.air[sp],
                                               noise.vd_fill[sp], cf, g), same)
            if pc.seasalt is not None and sp in noise.air_seasalt:
                # non-sea-salt pSO4: drawn as the difference of its two analyses and
                # clipped at 0 as the budget's sum, where the point is that clipped sum
                # (not where the budget set it otherwise, e.g. caught by a bulk collector)
                lin = np.maximum(pc.contrib.sum(0).T, 0.0)                    # (R, P)
                pt = point[..., j]
                same = np.isfinite(pt) & np.isclose(pt, lin, rtol=1e-9, atol=1e-300)
                if same.any():
                    direct[j] = (nss_dry_draws(pc, noise.vd[:, yi, k], noise.air[sp],
                                               noise.air_seasalt[sp], noise.vd_fill[sp], cf),
                                 same)
    if ls.wet is not None:
        wanted = set(layer.wet_component.values())
        gauge, piece = noise.gauge[:, yi], None
        gp = noise.gauge_periods
        if gp is not None and gp.shape[2] > 1 and ls.wet.start is not None:
            gauge, piece = _gauge_by_piece(ls, gp, yi, ds)
        parts = getattr(ls, "bulk_part", {})
        # a period holding a collector change: its bulk share redrawn with the samples
        beta = getattr(ls, "bulk_beta", None)
        keys = sorted({("precip" if m == PRECIP else layer.wet_component[j])
                       for j, p in parts.items() for m in np.unique(p.redraw) if m != HELD})
        bulk = (beta, keys) if beta is not None and keys else None
        wr = wet_ratios(ls.wet, ls.pwm, ls.wet_filled, gauge, noise.depth,
                        noise.pconc, noise.pwm_fill, n_p, wanted, layer.tracer, piece, bulk)
        wr, shares = wr if bulk is not None else (wr, {})
        for j, ion in layer.wet_component.items():
            if ion in wr:
                r = wr[ion]
                p = parts.get(j)
                if p is not None and (noise.bulk is not None or shares):
                    # the bulk samples' part takes the drawn bulk_wet_factor (and, in a
                    # period holding a collector change, its drawn share)
                    sh = (np.where(p.redraw[None, :] == PRECIP, shares.get("precip", np.nan),
                                   shares.get(ion, np.nan)) if shares else None)
                    u = noise.bulk
                    if isinstance(u, dict):       # each ion its own factor (its component's)
                        u = u.get(COMPONENTS[j][2])
                    r = apply_bulk(r, p, None if u is None else u[:, yi], sh)
                ratio[..., j] = r[:, None, :]
    out = point[None] * ratio
    for j, (drawn, same) in direct.items():
        out[..., j] = np.where(same[None], drawn, out[..., j])
    return out


def totals_of(comp: np.ndarray) -> dict:
    """The totals and derived sums of component draws (..., C) [mol m-2].

    Returns
    -------
    dict
        ``S_wet`` ... ``N_total`` [mol m-2], ``oxidized_N``, ``reduced_N`` [mol m-2],
        ``potential_acidity`` [eq ha-1], as in :func:`workbench.budget.derived`.
    """
    el = np.array([c[0] for c in COMPONENTS])
    path = np.array([c[1] for c in COMPONENTS])
    sp = np.array([c[2] for c in COMPONENTS])

    def part(mask):
        v = comp[..., mask]
        return np.where(np.isfinite(v).any(-1), np.nansum(v, -1), np.nan)
    out = {}
    for e in ("S", "N"):
        for p in ("wet", "dry", "total"):
            out[f"{e}_{p}"] = part((el == e) & ((path == p) if p != "total" else True))
    out["oxidized_N"] = part(np.isin(sp, OXIDIZED_N) & (el == "N"))
    out["reduced_N"] = part(np.isin(sp, REDUCED_N) & (el == "N"))
    out["potential_acidity"] = (element_deposition_in(out["S_total"], "S", "eq_ha")
                                + element_deposition_in(out["oxidized_N"], "N", "eq_ha")
                                + element_deposition_in(out["reduced_N"], "N", "eq_ha"))
    return out


# ------------------------------------------------------------------------------ quantiles

@dataclass
class BudgetQuantiles:
    """5, 50 and 95 % quantiles of the draws of a run.

    ``budget`` (None when asked for the years only) and ``years``: Datasets with a
    ``quantile`` dimension first and the dims
    of the budget (``deposition`` [mol m-2] per component, ``total_deposition`` per
    total, ``oxidized_N``, ``reduced_N`` [mol m-2], ``potential_acidity`` [eq ha-1]);
    ``span``: the same for the mean yearly rate of the years that pass completeness
    (dims quantile, site, receptor, component / total) [mol m-2 yr-1].
    """

    budget: xr.Dataset
    years: xr.Dataset
    span: xr.Dataset
    options: UncertaintyOptions
    #: The draws themselves of the annual S and N totals, see :func:`annual_total_draws`.
    total_draws: xr.Dataset | None = None
    #: Whether a bulk collector's factor was drawn at any site (``bulk_correction =
    #: "scale_wet"``, a site with a bulk part and ``bulk_factor_rel_sd`` > 0): the
    #: report names the factor only then.
    bulk_drawn: bool = False
    #: Whether the stomatal NH3 emission potential's factor was drawn at any site
    #: (``nh3_treatment = "bidirectional"``, a site whose NH3 has an emission part, and
    #: ``nh3_gamma_gsd`` > 1): the report names the factor only then.
    nh3_gamma_drawn: bool = False


def _span_draws(ds, comp, tot):
    """Mean yearly rate over the years whose element total passes (as span_table).

    A year passes as in :func:`workbench.tables.span_table`: the budget's own
    ``total_passes`` (a total ``flagged`` only for kept flagged samples or a sulfate
    fallback passes), else a total neither ``flagged`` nor ``missing``; of those, the
    years whose total holds every component the others hold
    (:func:`workbench.tables.fullest_years`).
    """
    fac = ds["annual_factor"].values                             # (Y,)
    status = ds["total_status"].values                           # (R, Y, T) of one site
    passes = ds["total_passes"].values.astype(bool) if "total_passes" in ds else None
    names = list(ds["total"].values)
    out_c, out_t = [], []
    el_c = np.array([c[0] for c in COMPONENTS])
    for e in ("S", "N"):
        k = names.index(f"{e}_total")
        ok = (passes[..., k] if passes is not None
              else ~np.isin(status[..., k], ["flagged", "missing"]))   # (R, Y)
        if "total_missing_components" in ds:       # years of a smaller sum left out
            from ..tables import fullest_years
            ok = fullest_years(ok, ds["total_missing_components"].values[..., k])
        out_c.append((e, ok))
    comp_y = comp * fac[None, None, :, None]
    with np.errstate(invalid="ignore"):
        c_mean = np.full(comp.shape[:2] + comp.shape[3:], np.nan)
        t_mean = {}
        for e, ok in out_c:
            w = np.where(ok, 1.0, np.nan)[None, :, :]                # (1, R, Y)
            sel = el_c == e
            v = comp_y[..., sel] * w[..., None]
            has = ok.any(-1)[None, :, None]
            c_mean[..., sel] = np.where(has, _nanmean(v, 2), np.nan)
            for p in ("wet", "dry", "total"):
                t_mean[f"{e}_{p}"] = np.where(ok.any(-1)[None], _nanmean(
                    tot[f"{e}_{p}"] * fac[None, None, :] * w, 2), np.nan)
    out_t = np.stack([t_mean[n] for n in TOTALS], -1)
    return c_mean, out_t


def _nanmean(v, axis):
    n = np.isfinite(v).sum(axis)
    s = np.nansum(v, axis)
    return np.where(n > 0, s / np.maximum(n, 1), np.nan)


def monte_carlo(result, study, options: UncertaintyOptions, layers=None, overrides=None,
                years_only=False) -> BudgetQuantiles:
    """Quantiles of every component and total of a run, from ``options.draws`` draws.

    Parameters
    ----------
    result : workbench.pipeline.Result
    study : workbench.pipeline.Study
        The study that computed `result` (only its cached stages are read).
    options : UncertaintyOptions
    layers : dict, optional
        ``{"budget": LinearLayer, "years": LinearLayer}`` already built.
    overrides : dict, optional
        The site overrides `result` was run with (the apps' ``Study.run(overrides=)``).
    years_only : bool
        The yearly budget and the span only (``budget`` of the result is None).

    Returns
    -------
    BudgetQuantiles
    """
    if options.draws < 1:
        raise ValueError("UncertaintyOptions.draws must be >= 1 for a Monte Carlo")
    if layers is None:
        layers = {} if years_only else {"budget": linear_layer(result, study, "budget", overrides)}
        layers["years"] = (layers["budget"] if result.years is result.budget and not years_only
                           else linear_layer(result, study, "years", overrides))
    years = np.concatenate([lay.period_year for lay in layers.values()])
    year0, n_years = int(years.min()), int(years.max() - years.min() + 1)
    q = np.asarray(QUANTILES)
    out = {}
    span_c, span_t, kept = [], [], []
    bulk_drawn = gamma_drawn = False
    for which, lay in sorted(layers.items(), key=lambda kv: kv[0] != "years"):
        if which == "budget" and lay is layers.get("years"):
            out[which] = out["years"]                # a yearly run: the same draws
            continue
        ds = lay.budget
        n_s, n_r, n_p, n_c = ds["deposition"].shape
        comp_q = np.full((len(q), n_s, n_r, n_p, n_c), np.nan)
        tot_q = {name: np.full((len(q), n_s, n_r, n_p), np.nan)
                 for name in TOTALS + ("oxidized_N", "reduced_N", "potential_acidity")}
        for k in range(n_s):
            noise = site_noise(lay.sites[k], options, options.draws, n_years, n_p,
                               (options.seed, str(ds["site"].values[k])), year0,
                               (ds["period_start"].values, ds["period_end"].values))
            bulk_drawn |= noise.bulk is not None
            gamma_drawn |= noise.nh3_gamma is not None
            comp = component_draws(lay, k, noise, year0)
            tot = totals_of(comp)
            comp_q[:, k] = np.quantile(comp, q, axis=0)
            for name, v in tot.items():
                tot_q[name][:, k] = np.quantile(v, q, axis=0)
            if which == "years":
                c, t = _span_draws(ds.isel(site=k), comp, tot)
                span_c.append(np.quantile(c, q, axis=0))
                span_t.append(np.quantile(t, q, axis=0))
                kept.append(_annual_draws(tot, t, ds["annual_factor"].values))
        dims = ("quantile", "site", "receptor", "period")
        out[which] = xr.Dataset(
            {"deposition": (dims + ("component",), comp_q, {"units": "mol m-2"}),
             "total_deposition": (dims + ("total",), np.stack([tot_q[n] for n in TOTALS], -1),
                                  {"units": "mol m-2"}),
             "oxidized_N": (dims, tot_q["oxidized_N"], {"units": "mol m-2"}),
             "reduced_N": (dims, tot_q["reduced_N"], {"units": "mol m-2"}),
             "potential_acidity": (dims, tot_q["potential_acidity"], {"units": "eq ha-1"})},
            coords={"quantile": q, "site": ds["site"].values, "receptor": ds["receptor"].values,
                    "period": ds["period"].values, "component": ds["component"].values,
                    "total": list(TOTALS)})
    yds = layers["years"].budget
    span = xr.Dataset(
        {"deposition": (("quantile", "site", "receptor", "component"),
                        np.stack(span_c, 1), {"units": "mol m-2 yr-1"}),
         "total_deposition": (("quantile", "site", "receptor", "total"), np.stack(span_t, 1),
                              {"units": "mol m-2 yr-1"})},
        coords={"quantile": q, "site": yds["site"].values, "receptor": yds["receptor"].values,
                "component": yds["component"].values, "total": list(TOTALS)})
    per = [str(p) for p in yds["period"].values] + ["span"]
    kept = np.stack(kept, 2)                                     # (2, D, S, R, P + 1)
    draws = xr.Dataset(
        {f"{e}_dep_eq_ha_yr": (("draw", "site", "receptor", "period"), kept[i],
                               {"units": "eq ha-1 yr-1"}) for i, e in enumerate("sn")},
        coords={"draw": np.arange(options.draws), "site": yds["site"].values,
                "receptor": yds["receptor"].values, "period": per})
    return BudgetQuantiles(out.get("budget"), out["years"], span, options, draws, bulk_drawn,
                           gamma_drawn)


def _annual_draws(tot, span_t, annual_factor):
    """The draws of the S and N totals of one site as yearly rates: (2, D, R, P + 1)
    [eq ha-1 yr-1], the calendar years then the span mean (``tot`` (D, R, P) [mol m-2],
    ``span_t`` (D, R, T) [mol m-2 yr-1])."""
    out = []
    for e in ("S", "N"):
        yearly = tot[f"{e}_total"] * annual_factor[None, None, :]
        both = np.concatenate([yearly, span_t[..., TOTALS.index(f"{e}_total"), None]], -1)
        out.append(element_deposition_in(both, e, "eq_ha"))
    return np.stack(out)


def annual_total_draws(result) -> xr.Dataset | None:
    """The Monte Carlo draws of the annual S and N totals of a run, or None.

    Parameters
    ----------
    result : workbench.pipeline.Result
        As returned by :func:`with_uncertainty` (its ``options["uncertainty"]``).

    Returns
    -------
    Dataset or None
        ``s_dep_eq_ha_yr`` and ``n_dep_eq_ha_yr`` [eq ha-1 yr-1] with dims (draw, site,
        receptor, period), the periods being the calendar years (as in budget.csv) and
        ``span`` (the mean yearly rate of the years that pass completeness); None when
        the run carries no draws (``[uncertainty] draws = 0``).  The same draws as the
        quantiles of budget.csv, not new ones.
    """
    q = result.options.get("uncertainty") if hasattr(result, "options") else None
    return getattr(q, "total_draws", None)


# ------------------------------------------------------------------------------ outputs


def add_quantiles(obj, q: BudgetQuantiles | None, annual_factor=None):
    """The 5-95 % range of the draws added to a budget output (unchanged when `q` is None).

    Parameters
    ----------
    obj : pandas.DataFrame or xarray.Dataset
        budget.csv rows (:attr:`workbench.pipeline.Result.table`): gets
        ``<flux column>_p05``, ``_p50``, ``_p95`` after the public first columns, and
        ``range_note`` (:func:`~.quantile_tables.range_note`: a total lacking
        components has the range of its measured part only);
        summary.csv rows (``result.derived.to_dataframe()``) or the derived Dataset:
        gets ``<total>_kg_ha`` and its quantiles for every total, and the quantiles of
        ``oxidized_N_kg_ha``, ``reduced_N_kg_ha`` and ``potential_acidity_eq_ha``;
        the budget Dataset (budget.nc): gets ``deposition_quantiles``,
        ``total_deposition_quantiles`` [mol m-2] with a ``quantile`` dimension.
    q : BudgetQuantiles or None
    annual_factor : ndarray, optional
        Of the budget's periods, for budget.csv (default: 1).
    """
    import pandas as pd
    if q is None:
        return obj
    if isinstance(obj, pd.DataFrame) and "flux_kg_ha" in obj:
        fac = np.ones(q.budget.sizes["period"]) if annual_factor is None else annual_factor
        qt = quantile_table(q, fac)
        keys = ["site", "receptor", "period", "element", "pathway", "species"]
        out = obj.assign(period=obj["period"].astype(str)).merge(qt, on=keys, how="left")
        out.index = obj.index
        if "missing_components" in out:       # a partial total: the measured part's range
            miss = np.where(np.isfinite(out["flux_kg_ha_p05"].to_numpy(float)),
                            out["missing_components"].to_numpy(object), "")
            out["range_note"] = range_note(miss)
        return out
    if isinstance(obj, pd.DataFrame):
        extra = summary_dataset(q).to_dataframe().reset_index()
        extra["period"] = extra["period"].astype(str)
        return obj.assign(period=obj["period"].astype(str)).merge(
            extra, on=["site", "receptor", "period"], how="left")
    if "deposition" in obj and "component" in obj.dims:
        b = q.budget
        return obj.assign(deposition_quantiles=b["deposition"].assign_attrs(
                              long_name="quantiles of the Monte Carlo draws of the deposition"),
                          total_deposition_quantiles=b["total_deposition"].assign_attrs(
                              long_name="quantiles of the Monte Carlo draws of the totals"))
    return obj.assign(summary_dataset(q).data_vars)


def with_uncertainty(result, study, scenario):
    """`result` with the quantiles in its table, derived sums and budget (for the writers).

    Returns `result` itself when the scenario asks for no draws (``[uncertainty] draws =
    0``, the default); otherwise a copy whose ``table`` (budget.csv), ``derived``
    (summary.csv) and ``budget`` (budget.nc) carry the quantiles of
    :func:`monte_carlo`, and whose ``options["uncertainty"]`` holds them; the derived
    sums get ``range_note`` (:func:`~.quantile_tables.summary_range_notes`).
    """
    import dataclasses
    opt = (scenario.options.get("uncertainty") if scenario is not None else None)
    if opt is None or opt.draws == 0:
        return result
    q = monte_carlo(result, study, opt)
    new = dataclasses.replace(result, budget=add_quantiles(result.budget, q),
                              options={**result.options, "uncertainty": q})
    new.__dict__["table"] = add_quantiles(result.table, q, result.budget["annual_factor"].values)
    new.__dict__["derived"] = add_quantiles(result.derived, q).assign(
        range_note=summary_range_notes(result.budget))
    new.budget.attrs["uncertainty"] = json.dumps(opt.to_dict(), sort_keys=True)
    return new


def bulk_state(result) -> tuple:
    """``(bulk_correction, drawn)`` of a run: its ``[budget] bulk_correction`` and whether
    its Monte Carlo drew a bulk collector's factor at any site (False without draws)."""
    q = result.options.get("uncertainty")
    return (getattr(result.options.get("budget"), "bulk_correction", None),
            bool(getattr(q, "bulk_drawn", False)))


def nh3_gamma_state(result) -> tuple:
    """``(net, drawn)`` of a run: its NH3 component is the net exchange of the
    bidirectional model (the budget's ``nh3_figure``), and its Monte Carlo drew the
    stomatal emission potential's factor at any site (False without draws)."""
    q = result.options.get("uncertainty")
    budget = getattr(result, "budget", None)
    net = budget is not None and budget.attrs.get("nh3_figure") == "net"
    return net, bool(getattr(q, "nh3_gamma_drawn", False))


def report_section(table, to_html, options=None, bulk=None, gamma=None) -> list:
    """HTML parts of the report: the 5-95 % range of every total (none without draws),
    :func:`workbench.analysis.quantile_tables.report_section` with the text of what a
    range holds written for `options`, or for the default :class:`UncertaintyOptions`
    where a run has none (quantile_tables does not import this module: no cycle).

    `bulk`: ``(bulk_correction, drawn)``, the run's ``[budget] bulk_correction`` and
    whether a bulk collector's factor was drawn (:attr:`BudgetQuantiles.bulk_drawn`), so
    that the text names the factor only where it was in force; None: not known (the
    factor is named as drawn wherever ``bulk_factor_rel_sd`` > 0).  `gamma`: ``(net,
    drawn)`` (:func:`nh3_gamma_state`), the Gamma_s factor named as drawn only where it
    was; None: not named."""
    return _quantile_tables.report_section(
        table, to_html, options,
        text_options=UncertaintyOptions() if options is None else options, bulk=bulk,
        gamma=gamma)
