"""The random factors of the Monte Carlo (:mod:`.uncertainty`), drawn per site.

Every stream is named by what it draws for, never by a place in a run: a site's
streams by ``(seed, site id)``; the systematic factors shared by every year (the
default) by the seed alone (Vd: a scheme's bias, shared by every site too) or by the
site (its gauge catch), or, drawn anew each year (``systematic_errors = "each_year"``),
by the calendar year; the random errors of a sample (depth, analyses, gap-filled Vd)
by the sample's identity (sampler id, start: :func:`.layer.sample_identity`) and what
they are of; a filled PWM's error by its period's bounds; a later gauge period's catch
by the site and the instant of its change, a laboratory's calibration bias by the site,
precipitation or air, the ion or species and its period's first instant (a laboratory
the catalogue names: by the seed, its id and the analysed ion, so every site naming it
shares the draw), a land-use class's part of the Vd factors by the seed and the class,
a site's own Vd factor and its bulk-collector factor by the site, its stomatal
NH3 emission potential factor by the site and the land-use class.  So a site, a site-year and a
sample draw the same numbers in every run that holds them (docs/methods_uncertainty.md).

The streams, their tags and the draws of each kind of factor are in
:mod:`workbench.analysis.noise_streams`; this module holds :class:`SiteNoise` and
:func:`site_noise` (with :func:`nh3_gamma_factors`) and re-exports the others, so that
``workbench.analysis.noise.<name>`` keeps working.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .layer import DRY_SPECIES
# the streams, their tags and the draws of each factor (defined here before)
from .noise_streams import (ANALYTE, BULK_FACTOR, BULK_IONS, FILTER_PACK,  # noqa: F401
                            GAUGE_PERIOD, LAB_BIAS, NAMED_LAB, NH3_GAMMA, RECORD_STREAM,
                            SAMPLE_STREAM, VD_CLASS, VD_SITE, YEAR_STREAM, _class_parts,
                            _lab_bias, _normal_factor, _per_period, _shared_systematic,
                            _site_factor, _stream_key, bulk_factors, hour_shares,
                            keyed_normal_factor, sample_lab_bias)


@dataclass
class SiteNoise:
    """The factors of the draws at one site (arrays with the draws first).

    ``vd`` (D, Y, K) log-normal Vd factors [1] per year offset and dry species;
    ``gauge`` (D, Y) gauge catch [1] (the same along Y, read-only broadcasts, when the
    systematic factors are shared by the years); ``depth`` (D, n_samples); ``pconc`` ion ->
    (D, n_samples) and ``air`` species -> (D, n_rows) multiplicative errors of one
    sample [1] (below detection: their own spread); ``vd_fill`` species -> (D, n_rows)
    relative errors of a filled Vd; ``pwm_fill`` ion -> (D, P) factors of a filled PWM.
    Every factor is 1 (0 for ``vd_fill``) where its spread is 0.

    ``gauge_periods`` (D, Y, G): the gauge catch of each gauge period of the site (split
    at its declared gauge changes; ``gauge`` is the first); ``vd_class`` land-use class
    -> (D, Y, K): the Vd factors of a receptor of that class when
    ``vd_class_fraction`` > 0 (empty otherwise: every class takes ``vd``);
    ``lab_precip`` ion and ``lab_air`` species -> (D, Y, L): the calibration bias of
    each laboratory period (already multiplied into ``pconc`` and ``air``).
    """

    vd: np.ndarray
    gauge: np.ndarray
    depth: np.ndarray | None
    pconc: dict
    air: dict
    vd_fill: dict
    pwm_fill: dict
    gauge_periods: np.ndarray | None = None
    vd_class: dict = field(default_factory=dict)
    lab_precip: dict = field(default_factory=dict)
    lab_air: dict = field(default_factory=dict)
    #: (D, Y) the site's bulk-collector factor over ``bulk_wet_factor`` [1], shared by
    #: its ions, or ion -> (D, Y) their own factors (``bulk_factor_ion_correlation`` < 1,
    #: :func:`bulk_factors`) (None: not drawn: no bulk part, or ``bulk_factor_rel_sd`` 0)
    bulk: np.ndarray | None = None
    #: (D, Y, 1) the site's own Vd factor [1], already in ``vd`` and ``vd_class`` (None:
    #: ``vd_site_gsd`` 1)
    vd_site: np.ndarray | None = None
    #: species -> (D, n_rows) errors of the pNa analysis behind the sea-salt sulfate of a
    #: non-sea-salt pSO4 row (``DryPieces.seasalt``), drawn apart from the pSO4 [1]
    air_seasalt: dict = field(default_factory=dict)
    #: land-use class -> (D, Y) log-normal factor of the stomatal NH3 emission potential
    #: Gamma_s [1] of the site's receptors of that class, on the emission part of the
    #: net NH3 exchange (``nh3_gamma_gsd`` > 1 and a site with a bidirectional
    #: emission; None: not drawn)
    nh3_gamma: dict | None = None
    #: pair -> :class:`.pairnoise.PairShift`, the drawn gas/particle split of a filter
    #: pack's pair (``pair_shift_<pair>``, :func:`.pairnoise.with_pair_shift`; None: not
    #: drawn)
    pair_shift: dict | None = None


def site_noise(layer_site, opt, n_draws: int, n_years: int, n_periods: int,
               seed_key, year0: int = 0, period_bounds=None) -> SiteNoise:
    """Draw the factors of one site (the same for any resolution of the same run).

    Parameters
    ----------
    layer_site : SiteLayer
    opt : workbench.analysis.uncertainty.UncertaintyOptions
    n_draws, n_years, n_periods : int
        Draws; calendar years ``year0 .. year0 + n_years - 1``; reporting periods.
    seed_key : tuple
        ``(seed, site id)``: each site has its own streams, named by its id, so that a
        site's numbers depend neither on the other sites nor on its place in the run.
    year0 : int
        The first calendar year.  With ``opt.systematic_errors = "each_year"`` the
        systematic factors of a site-year (Vd, gauge catch) come from a stream of their
        own per calendar year, so that they do not depend on the years the run spans;
        with "shared" (default) the Vd factors come from one stream of the seed and the
        gauge catch from one of the site, the same in every year.
    period_bounds : tuple of ndarray, optional
        (start, end) of the reporting periods (datetime64); the error of a filled PWM
        is named by its period's bounds (by the period's place when not given).

    Notes
    -----
    The random errors of the samples (depth, analyses, gap-filled Vd) come from a
    stream per sample and quantity, named by the site's key and the sample's identity
    (sampler id, start, :func:`workbench.analysis.layer.sample_identity`): a sample
    draws the same errors in a run of 2016-2023 as in one of 2019-2021, and in a run
    whose input files hold only those years.
    """
    key = _stream_key(seed_key)
    d = n_draws
    k = len(DRY_SPECIES)
    if getattr(opt, "systematic_errors", "shared") == "shared":
        z_shared, z_own, gauge = _shared_systematic(opt, seed_key, d, n_years)
    else:                                    # "each_year": anew per site and year
        z_shared = np.empty((d, n_years, 1))
        z_own = np.empty((d, n_years, k))
        gauge = np.empty((d, n_years))
        for y in range(n_years):             # a few years: one stream per calendar year
            rng_y = np.random.default_rng(key + [YEAR_STREAM, int(year0) + y])
            z_shared[:, y] = rng_y.standard_normal((d, 1))
            z_own[:, y] = rng_y.standard_normal((d, k))
            gauge[:, y] = _normal_factor(rng_y, opt.gauge_catch_rel_sd, (d,))
    ln_gsd = np.log([opt.gsd(sp) for sp in DRY_SPECIES])
    rho = opt.vd_shared_fraction
    vd = np.exp(ln_gsd * (np.sqrt(rho) * z_shared + np.sqrt(1 - rho) * z_own))
    # the Vd bias of a land-use class: a share kappa of each species' own log-variance
    # is the class's (one draw per class), the rest shared by every class; the
    # log-variance of one receptor's factor stays ln^2 GSD
    kappa = float(getattr(opt, "vd_class_fraction", 0.0))
    vd_class = {}
    if kappa > 0:
        classes = {c for rows in layer_site.dry.values() if rows.klass is not None
                   for c in np.unique(rows.klass.astype(str))}
        # shared by the years: computed on one year, a read-only view over the others
        one = 1 if getattr(opt, "systematic_errors", "shared") == "shared" else n_years
        for c, z_c in _class_parts(seed_key, key, opt, classes, d, n_years, year0, k).items():
            f = np.exp(ln_gsd * (np.sqrt(rho) * z_shared[:, :one] + np.sqrt(1 - rho) * (
                np.sqrt(1 - kappa) * z_own[:, :one] + np.sqrt(kappa) * z_c[:, :one])))
            vd_class[c] = np.broadcast_to(f, (d, n_years, k))
    # the site's own Vd bias (its siting), on every species, receptor and class
    vd_site = None
    gsd_site = float(getattr(opt, "vd_site_gsd", 1.0))
    if gsd_site > 1.0:
        vd_site = np.exp(np.log(gsd_site) * _site_factor(
            opt, key, VD_SITE, d, n_years, year0, lambda r: r.standard_normal(d)))[:, :, None]
        vd = vd * vd_site
        vd_class = {c: f * vd_site for c, f in vd_class.items()}
    # a gauge period after each declared gauge change draws its own catch
    g_changes = getattr(layer_site, "gauge_changes", np.array([], "datetime64[ns]"))
    if len(g_changes):
        later = _per_period(opt, key, [GAUGE_PERIOD], g_changes, opt.gauge_catch_rel_sd, d,
                            n_years, year0)
        gauge_periods = np.concatenate([np.asarray(gauge)[:, :, None], later[:, :, 1:]], -1)
    else:
        gauge_periods = np.asarray(gauge)[:, :, None]      # a view: the one gauge
    wet = layer_site.wet
    depth, pconc, pwm_fill = None, {}, {}
    idents = wet.ident if wet is not None else []
    depth = keyed_normal_factor(key, "depth", idents, opt.depth_rel_sd, d)
    lab_changes = getattr(layer_site, "lab_changes", np.array([], "datetime64[ns]"))
    run_key = _stream_key((seed_key[0], ""))
    lab_ids = getattr(layer_site, "lab_ids", [None])
    air_ids = getattr(layer_site, "air_lab_ids", [None])
    pack = bool(getattr(opt, "lab_bias_filter_pack", False))
    lab_precip, lab_air = {}, {}
    sd_lab = float(getattr(opt, "lab_bias_precip_rel_sd", 0.0))
    if wet is not None:
        for ion in sorted(wet.conc):
            cens = np.zeros(wet.n_samples, bool)
            cens[wet.sample[wet.censored[ion]]] = True
            sd = np.where(cens, opt.censored_rel_sd, opt.precip_conc_rel_sd)
            pconc[ion] = keyed_normal_factor(key, f"precip:{ion}", idents, sd, d)
            if sd_lab > 0 and wet.start is not None:
                # the laboratory's calibration bias, on the values it measured (not
                # on half a detection limit put in for a value below it)
                lab_precip[ion] = _lab_bias(opt, key, run_key, "precip", ion,
                                            ANALYTE.get(ion, ion), lab_changes, lab_ids,
                                            sd_lab, d, n_years, year0)
                pconc[ion] *= sample_lab_bias(lab_precip[ion], lab_changes, wet.start,
                                              wet.end, year0, n_years, cens)
    air, vd_fill, air_ss = {}, {}, {}
    for sp in DRY_SPECIES:
        if sp not in layer_site.dry:
            continue
        rows = layer_site.dry[sp]
        sd = np.where(rows.censored, opt.censored_rel_sd, opt.air_rel_sd)
        # an air sample's analytical error is of its own species (a bracket member's
        # rows in the species a pair is moved into keep their error)
        air[sp] = keyed_normal_factor(key, "air", rows.ident, sd, d)
        sd_lab = float(getattr(opt, "lab_bias_air_rel_sd", 0.0))
        if sd_lab > 0 and rows.start is not None:
            # the laboratory's calibration bias of each sample's own species (a pair
            # member's rows moved into another species keep their member's bias)
            member = np.array([str(i[0]) if i else sp for i in rows.ident], object)
            cens = np.asarray(rows.censored, bool)
            for m in sorted(set(member)):
                if m not in lab_air:
                    # a filter pack's gas filter: its particle filter's draw
                    as_m = FILTER_PACK.get(m, m) if pack else m
                    lab_air[m] = _lab_bias(opt, key, run_key, "air", as_m,
                                           ANALYTE.get(as_m, as_m), lab_changes, air_ids,
                                           sd_lab, d, n_years, year0)
                sel = np.flatnonzero(member == m)
                b = sample_lab_bias(lab_air[m], lab_changes, rows.start[sel], rows.end[sel],
                                    year0, n_years, cens[sel])
                if len(sel) == len(member):
                    air[sp] *= b
                else:
                    air[sp][:, sel] *= b
        if rows.seasalt is not None:
            # the sea-salt sulfate of a non-sea-salt pSO4 row comes from the pNa analysis
            # of the same sample: an error of its own (stream "air" of member pNa), and
            # the pNa laboratory's bias
            ss_id = [("pNa",) + tuple(i[1:]) if i else ("pNa",) for i in rows.ident]
            # a pNa below detection: its own spread around the substitute, as every
            # value below detection (censored_rel_sd), and no calibration bias on it
            ss_cens = getattr(rows, "seasalt_censored", None)
            ss_cens = (np.zeros(len(rows.ident), bool) if ss_cens is None
                       else np.asarray(ss_cens, bool))
            sd_ss = (np.where(ss_cens, opt.censored_rel_sd, opt.air_rel_sd) if ss_cens.any()
                     else opt.air_rel_sd)
            air_ss[sp] = keyed_normal_factor(key, "air", ss_id, sd_ss, d)
            if sd_lab > 0 and rows.start is not None:
                if "pNa" not in lab_air:
                    lab_air["pNa"] = _lab_bias(opt, key, run_key, "air", "pNa",
                                               ANALYTE.get("pNa", "pNa"), lab_changes,
                                               air_ids, sd_lab, d, n_years, year0)
                air_ss[sp] *= sample_lab_bias(lab_air["pNa"], lab_changes, rows.start,
                                              rows.end, year0, n_years, ss_cens)
        # a fill error acts on the hours not modelled only: none drawn without them
        sd_fill = np.where((rows.filled > 0).any(axis=(1, 2)), opt.vd_fill_rel_sd, 0.0)
        vd_fill[sp] = keyed_normal_factor(key, f"vd_fill:{sp}", rows.ident, sd_fill, d) - 1.0
    # the filled PWMs per reporting period, named by the period's bounds
    if period_bounds is None:
        bounds = [(p, p) for p in range(n_periods)]
    else:
        t0, t1 = (np.asarray(b, dtype="datetime64[ns]").astype(np.int64) for b in period_bounds)
        bounds = list(zip(t0.tolist(), t1.tolist()))
    for ion in sorted(layer_site.pwm):
        pwm_fill[ion] = keyed_normal_factor(key, f"pwm_fill:{ion}", bounds,
                                            opt.pwm_fill_rel_sd, d)
    # the bulk collector's factor, where the budget scaled a bulk part (scale_wet)
    bulk = None
    sd_bulk = float(getattr(opt, "bulk_factor_rel_sd", 0.0))
    if sd_bulk > 0 and getattr(layer_site, "bulk_part", None):
        bulk = bulk_factors(opt, key, sd_bulk, d, n_years, year0)
    return SiteNoise(vd, gauge, depth, pconc, air, vd_fill, pwm_fill, gauge_periods, vd_class,
                     lab_precip, lab_air, bulk, vd_site, air_ss,
                     nh3_gamma_factors(layer_site, opt, key, d, n_years, year0))


def nh3_gamma_factors(layer_site, opt, key, d, n_years, year0):
    """The site's Gamma_s factors: land-use class -> (D, Y) [1], or None (not drawn).

    :math:`G_c = \\exp(\\ln(\\mathrm{GSD})\\, z_c)`, log-normal with median 1 and GSD
    ``nh3_gamma_gsd``, one per site and land-use class of its receptors (the stream of
    the site, tag :data:`NH3_GAMMA` and the class: a class's Gamma_s at a site is a
    quantity of its own, its default or the site's override), shared by the years (per
    calendar year under ``"each_year"``, as the site's other systematic factors).
    Drawn only where the site's NH3 has an emission part that is not 0 (the
    bidirectional exchange, ``DryPieces.emission``) and the GSD is above 1.
    """
    gsd = float(getattr(opt, "nh3_gamma_gsd", 1.0))
    rows = layer_site.dry.get("NH3")
    em = getattr(rows, "emission", None)
    if not gsd > 1.0 or em is None or not np.any(em != 0):
        return None
    classes = ({None} if rows.klass is None
               else {str(c) for c in np.unique(rows.klass.astype(str))})
    ln = np.log(gsd)
    return {c: np.exp(ln * _site_factor(opt, key, [NH3_GAMMA] + _stream_key(
                (c if c is not None else "",)), d, n_years, year0,
                lambda r: r.standard_normal(d))) for c in sorted(classes, key=str)}
