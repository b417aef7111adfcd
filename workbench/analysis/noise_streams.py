"""The random streams of the Monte Carlo's factors and the draws from them: a
stream's key (:func:`_stream_key`) and the tags after it, the systematic factors of a
site (shared by the years or per calendar year), the calibration bias of a laboratory
period, the bulk-collector factors and the random errors of each sample
(:func:`keyed_normal_factor`).  See :mod:`workbench.analysis.noise` for what names each
stream; it re-exports these names.
"""
from __future__ import annotations

import numpy as np

from .layer import DRY_SPECIES


def _normal_factor(rng, sd, shape):
    """1 + sd z, cut at 0 (a concentration or a depth cannot be negative) [1]."""
    sd = np.asarray(sd, float)
    if not np.any(sd > 0):
        rng.standard_normal(shape)                     # the stream stays the same
        return np.ones(shape)
    return np.maximum(1.0 + sd * rng.standard_normal(shape), 0.0)


def _stream_key(seed_key) -> list:
    """Entropy of a random stream from ``(seed, site, ...)``: integers as they are (a
    negative one, e.g. a time before 1970, shifted by 2**64), a text (site id, sampler
    id, species) by its length and UTF-8 bytes, so that a stream is named by what it
    draws for, not by its place in a run."""
    out = []
    for part in seed_key:
        if isinstance(part, str):
            b = part.encode("utf-8")
            out.extend([len(b), *b])
        else:
            out.append(int(part) % 2 ** 64)
    return out


#: Tags after a site's key: the streams of a calendar year's systematic factors, and
#: of a sample's (or a period's) random errors; and of the factors shared by every year
#: (``systematic_errors = "shared"``): after the run's key (seed, no site) the Vd
#: factors, after a site's key its gauge catch.
YEAR_STREAM, SAMPLE_STREAM, RECORD_STREAM = 2, 3, 4
#: Tags after RECORD_STREAM (or YEAR_STREAM, year) of the systematic factors added
#: later: a gauge period after a change (with the change's instant), a laboratory's
#: calibration bias (with precip/air, the ion or species and the laboratory period's
#: first instant), a land-use class's own Vd part (with the class).
GAUGE_PERIOD, LAB_BIAS, VD_CLASS = 5, 6, 7
#: Tags of the factors added after those: a named laboratory's bias (after the run's
#: key: shared by every site naming the laboratory), a site's own Vd factor, a site's
#: bulk-collector factor.
NAMED_LAB, VD_SITE, BULK_FACTOR = 8, 9, 10
#: Tag of a site's stomatal NH3 emission potential factor (with the land-use class).
NH3_GAMMA = 11
#: The ion each laboratory analysis measures: a precipitation ion and an air species
#: analysed as the same ion share a named laboratory's calibration draw.
ANALYTE = {"SO4": "sulfate", "NO3": "nitrate", "NH4": "ammonium",
           "pSO4": "sulfate", "pNO3": "nitrate", "pNH4": "ammonium"}
#: A filter pack's gas filter analysed as the ion of its particle filter
#: (``lab_bias_filter_pack``): the gas takes the particle's calibration draw.
FILTER_PACK = {"SO2": "pSO4", "HNO3": "pNO3", "NH3": "pNH4"}


def _shared_systematic(opt, seed_key, n_draws, n_years):
    """The systematic factors of ``systematic_errors = "shared"``: normal deviates of
    the Vd factors (D, Y, 1) shared and (D, Y, K) own, and the gauge catch (D, Y), each
    drawn once and broadcast over the years (read-only views).

    The Vd factors come from a stream named by the seed alone (a scheme's bias is the
    same at every site and in every year), the gauge catch from one named by the site
    (its own gauge, the same every year), so that neither depends on the years or the
    other sites of the run.
    """
    d, k = n_draws, len(DRY_SPECIES)
    rng_vd = np.random.default_rng(_stream_key((seed_key[0], "")) + [RECORD_STREAM, 0])
    z_shared = rng_vd.standard_normal((d, 1, 1))
    z_own = rng_vd.standard_normal((d, 1, k))
    rng_g = np.random.default_rng(_stream_key(seed_key) + [RECORD_STREAM, 1])
    gauge = _normal_factor(rng_g, opt.gauge_catch_rel_sd, (d, 1))
    return (np.broadcast_to(z_shared, (d, n_years, 1)), np.broadcast_to(z_own, (d, n_years, k)),
            np.broadcast_to(gauge, (d, n_years)))


def hour_shares(instants, start, end) -> np.ndarray:
    """(n, G) share of each sample's duration in each period between `instants`
    (G = len(instants) + 1; period g from instant g-1 to instant g) [1]; a sample of no
    duration lies wholly in the period of its start.

    Parameters
    ----------
    instants : ndarray of datetime64 [ns], sorted
    start, end : ndarray of datetime64 (n,)
    """
    t0 = np.asarray(start, "datetime64[ns]").astype(np.int64).astype(float)
    t1 = np.asarray(end, "datetime64[ns]").astype(np.int64).astype(float)
    cut = np.asarray(instants, "datetime64[ns]").astype(np.int64).astype(float)
    lo = np.concatenate([[-np.inf], cut])[None, :]
    hi = np.concatenate([cut, [np.inf]])[None, :]
    over = np.clip(np.minimum(t1[:, None], hi) - np.maximum(t0[:, None], lo), 0.0, None)
    dur = (t1 - t0)[:, None]
    first = np.searchsorted(cut, t0, side="right")
    onehot = (np.arange(len(cut) + 1)[None, :] == first[:, None]).astype(float)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(dur > 0, over / np.where(dur > 0, dur, 1.0), onehot)


def _per_period(opt, key, tags, instants, sd, d, n_years, year0):
    """Normal factors 1 + sd z (cut at 0), one per period between `instants` (the
    first from the start of the record), shared by the years of a period, or with
    ``systematic_errors = "each_year"`` one per calendar year and period: (D, Y, G)
    [1].  Each period's stream is named by `key`, `tags` and the period's first
    instant (0 for the first), so that it does not depend on the run's years."""
    firsts = [0] + [int(t) for t in np.asarray(instants, "datetime64[ns]").astype(np.int64)]
    shared = getattr(opt, "systematic_errors", "shared") == "shared"
    if not sd > 0:
        return np.broadcast_to(np.ones((d, 1, len(firsts))), (d, n_years, len(firsts)))
    if shared:                       # drawn once, a read-only view over the years
        out = np.empty((d, 1, len(firsts)))
        for g, t in enumerate(firsts):
            rng = np.random.default_rng(key + [RECORD_STREAM] + tags + _stream_key((t,)))
            out[:, 0, g] = _normal_factor(rng, sd, (d,))
        return np.broadcast_to(out, (d, n_years, len(firsts)))
    out = np.ones((d, n_years, len(firsts)))
    for g, t in enumerate(firsts):             # a few years: one stream per year
        for y in range(n_years):
            rng = np.random.default_rng(key + [YEAR_STREAM, int(year0) + y] + tags
                                        + _stream_key((t,)))
            out[:, y, g] = _normal_factor(rng, sd, (d,))
    return out


def sample_lab_bias(bias, instants, start, end, year0, n_years, skip=None):
    """The calibration bias of each sample's laboratory [1]: (D, n) from `bias` (D, Y, L)
    ((D, 1) when every sample has the same laboratory and year).

    A sample is analysed by the laboratory in force when it is collected (its end: a
    sample ending at 00:00 UTC of a change's date is the earlier laboratory's); its
    year (for ``"each_year"``) is that of its middle, within the run's years.  A sample
    flagged in `skip` (n,) gets 1 (a value below detection: no calibration acts on
    half a limit)."""
    t1 = np.asarray(end, "datetime64[ns]")
    lab = np.searchsorted(np.asarray(instants, "datetime64[ns]"), t1, side="left")
    t0 = np.asarray(start, "datetime64[ns]")
    mid = t0 + (t1 - t0) // 2
    yi = np.clip(mid.astype("datetime64[Y]").astype(int) + 1970 - int(year0), 0, n_years - 1)
    if skip is not None and np.any(skip):
        bias = np.concatenate([bias, np.ones(bias.shape[:2] + (1,))], -1)
        lab = np.where(skip, bias.shape[2] - 1, lab)
    if len(lab) and (lab == lab[0]).all() and (yi == yi[0]).all():
        return bias[:, yi[0], lab[0], None]            # one laboratory-year: (D, 1)
    return bias[:, yi, lab]


def _lab_bias(opt, key, run_key, kind, name, analyte, instants, ids, sd, d, n_years, year0):
    """The calibration bias of each laboratory period of a site (D, Y, L) [1]: a period
    whose laboratory the catalogue names (`ids`, :func:`workbench.io.sitechanges.
    laboratory_ids`) draws from the stream of that laboratory and `analyte`, named by
    the run's key, so every site (and the precipitation and air of one site) naming
    the laboratory shares it; the others from the site's own stream of `kind` and
    `name` and the period's first instant, as before."""
    out = _per_period(opt, key, [LAB_BIAS] + _stream_key((kind, name)), instants, sd, d,
                      n_years, year0)
    ids = list(ids or [None])
    if not sd > 0 or not any(i is not None for i in ids):
        return out
    out = np.array(out)
    shared = getattr(opt, "systematic_errors", "shared") == "shared"
    for g, lab in enumerate(ids[:out.shape[2]]):
        if lab is None:
            continue
        tags = _stream_key((lab, analyte))
        if shared:
            rng = np.random.default_rng(run_key + [RECORD_STREAM, LAB_BIAS, NAMED_LAB] + tags)
            out[:, :, g] = _normal_factor(rng, sd, (d,))[:, None]
        else:
            for y in range(n_years):
                rng = np.random.default_rng(run_key + [YEAR_STREAM, int(year0) + y, LAB_BIAS,
                                                       NAMED_LAB] + tags)
                out[:, y, g] = _normal_factor(rng, sd, (d,))
    return out


def _site_factor(opt, key, tag, d, n_years, year0, draw):
    """A systematic factor of the site's own (D, Y): `draw(rng)` (D,) from one stream
    of the site and `tag` (an int, or a list of ints after it), shared by the years, or
    from one per calendar year (``"each_year"``)."""
    tags = [tag] if isinstance(tag, int) else list(tag)
    if getattr(opt, "systematic_errors", "shared") == "shared":
        one = draw(np.random.default_rng(key + [RECORD_STREAM] + tags))
        return np.broadcast_to(one[:, None], (d, n_years))
    out = np.empty((d, n_years))
    for y in range(n_years):
        out[:, y] = draw(np.random.default_rng(key + [YEAR_STREAM, int(year0) + y] + tags))
    return out


#: The ions whose bulk part takes a drawn ``bulk_wet_factor`` (their own factor under
#: ``bulk_factor_ion_correlation`` < 1).
BULK_IONS = ("SO4", "NO3", "NH4")


def bulk_factors(opt, key, sd, d, n_years, year0):
    """The site's bulk-collector factors over ``bulk_wet_factor`` [1].

    Each ion's factor is :math:`u_X = \\max(0, 1 + sd(\\sqrt{\\rho} z + \\sqrt{1-\\rho}
    z_X))` with :math:`z` the site's deviate (the stream of before, tag
    :data:`BULK_FACTOR`), :math:`z_X` the ion's own (tag ``BULK_FACTOR`` and the ion)
    and :math:`\\rho` = ``bulk_factor_ion_correlation``: the correlation of two ions'
    factors is :math:`\\rho` (before the cut at 0, which `sd` 0.1 leaves unreached in
    all but ~1e-23 of the draws).  Systematic as the site's other factors (shared by
    its years, or per calendar year under ``"each_year"``).

    Returns
    -------
    ndarray (D, Y) or dict
        With :math:`\\rho` = 1, one (D, Y) array shared by the ions (the same numbers
        as before the option); else ion -> (D, Y).
    """
    rho = float(getattr(opt, "bulk_factor_ion_correlation", 1.0))
    z = _site_factor(opt, key, BULK_FACTOR, d, n_years, year0, lambda r: r.standard_normal(d))
    if rho >= 1.0:
        return np.maximum(1.0 + np.asarray(sd, float) * z, 0.0)
    a, c = np.sqrt(rho), np.sqrt(1.0 - rho)
    return {ion: np.maximum(1.0 + sd * (a * z + c * _site_factor(
                opt, key, [BULK_FACTOR] + _stream_key((ion,)), d, n_years, year0,
                lambda r: r.standard_normal(d))), 0.0) for ion in BULK_IONS}


def _class_parts(seed_key, key, opt, classes, d, n_years, year0, k):
    """Normal deviates (D, Y, K) of each land-use class's own part of the Vd factors:
    one per class for the run (named by the seed and the class: shared by every site
    and receptor of the class), or per site, calendar year and class (``"each_year"``)."""
    out = {}
    for c in sorted(classes):
        if getattr(opt, "systematic_errors", "shared") == "shared":
            rng = np.random.default_rng(_stream_key((seed_key[0], "")) + [RECORD_STREAM, VD_CLASS]
                                        + _stream_key((c,)))
            out[c] = np.broadcast_to(rng.standard_normal((d, 1, k)), (d, n_years, k))
        else:
            z = np.empty((d, n_years, k))
            for y in range(n_years):
                rng = np.random.default_rng(key + [YEAR_STREAM, int(year0) + y, VD_CLASS]
                                            + _stream_key((c,)))
                z[:, y] = rng.standard_normal((d, k))
            out[c] = z
    return out


def keyed_normal_factor(key, what, idents, sd, n_draws, shift=1.0):
    """Factors ``shift + sd z`` cut at 0, one column per sample, each from the stream
    named by the site's key, `what` and the sample's identity.

    Parameters
    ----------
    key : list of int
        The site's stream key (:func:`_stream_key` of ``(seed, site id)``).
    what : str
        What the error is of (``depth``, ``precip:SO4``, ``air:pNH4``,
        ``vd_fill:NH3:pNH4``, ``pwm_fill:SO4``).
    idents : sequence of tuple
        The identity of each sample (:func:`workbench.analysis.layer.sample_identity`)
        or period ((start, end) [ns since 1970]).
    sd : float or ndarray (n,)
        Relative standard deviation of each [1]; 0 draws nothing (factor `shift`).
    n_draws : int

    Returns
    -------
    ndarray (n_draws, n) [1]
        A sample's column is the same in every run that holds the sample, whatever
        other samples the run holds (the draws of a sample do not depend on its place).
    """
    sd = np.broadcast_to(np.asarray(sd, float), (len(idents),))
    out = np.full((n_draws, len(idents)), float(shift))
    base = key + [SAMPLE_STREAM] + _stream_key((what,))
    # one stream per sample: creating a stream costs about 20 us, the draws the rest
    for j in np.flatnonzero(sd > 0):
        z = np.random.default_rng(base + _stream_key(idents[j])).standard_normal(n_draws)
        out[:, j] = np.maximum(shift + sd[j] * z, 0.0)
    return out
