"""The model of the sensitivity analysis: SALib's problem, Saltelli's sample and
Sobol's indices, the engine factors put into the dry options, and the totals of sample
rows (:func:`evaluate`: rows with the same engine factors share one pipeline run, the
linear factors act on the linear layer).  Re-exported by
:mod:`workbench.analysis.sensitivity` (see its text for the factors).
"""
from __future__ import annotations

import dataclasses

import numpy as np

from .layer import DRY_SPECIES, linear_layer
from .sensitivity_notes import data_notes, site_classes
from .sensitivity_options import OUTPUTS, SensitivityOptions, factor_kind
from .uncertainty import SiteNoise, component_draws, totals_of


def _salib():
    try:
        from SALib.analyze import sobol as analyze
        from SALib.sample import sobol as sample
    except ImportError as exc:                              # pragma: no cover
        raise ImportError("the Sobol analysis needs SALib: python -m pip install SALib") from exc
    return sample, analyze


def problem(options: SensitivityOptions) -> dict:
    """SALib's problem: names and bounds (a discrete factor on [0, n choices))."""
    names = list(options.factors)
    bounds = [[0.0, float(len(options.factors[n]))] if factor_kind(n) == "wetness_rule"
              else [float(options.factors[n][0]), float(options.factors[n][1])] for n in names]
    return {"num_vars": len(names), "names": names, "bounds": bounds}


def saltelli_sample(prob: dict, samples: int, seed: int) -> np.ndarray:
    """The sample matrix of Saltelli's scheme for first-order and total indices.

    Parameters
    ----------
    prob : dict
        SALib's problem (:func:`problem`, or any ``num_vars``, ``names``, ``bounds``).
    samples : int
        Base sample N, a power of 2 (the Sobol sequence's balance).
    seed : int
        Seed of the scrambling of the Sobol sequence.

    Returns
    -------
    ndarray (N (k + 2), k)
        Rows of factor values: N (k + 2) model evaluations, no second-order indices.
    """
    sample, _ = _salib()
    return sample.sample(prob, samples, calc_second_order=False, seed=seed)


def sobol_indices(prob: dict, y: np.ndarray, seed: int) -> dict:
    """First-order and total Sobol indices of outputs `y` of :func:`saltelli_sample`'s
    rows, with their 95 % bootstrap intervals (SALib's ``S1``, ``S1_conf``, ``ST``,
    ``ST_conf`` [1]; the bootstrap seeded with `seed`).

    The seed goes to SALib as a ``numpy.random.SeedSequence``: SALib's ``analyze``
    seeds its bootstrap only ``if seed`` is true, so a seed of 0 (allowed) drew the
    intervals from the global generator and they changed from run to run.  A
    ``SeedSequence(seed)`` gives the stream of ``numpy.random.default_rng(seed)``,
    the one SALib draws from any other integer: the intervals of seeds other than 0
    are as they were.
    """
    _, analyze = _salib()
    return analyze.analyze(prob, np.asarray(y, float), calc_second_order=False,
                           conf_level=0.95, seed=np.random.SeedSequence(int(seed)))


def engine_value(name, options, x):
    """The engine's value of an engine factor for a sample value `x` (None for NaN: the
    scenario's own value)."""
    if np.isnan(x):
        return None
    if factor_kind(name) == "wetness_rule":
        choices = options.factors[name]
        return choices[min(int(np.floor(x)), len(choices) - 1)]
    return float(x)


def apply_engine(dry, values: dict, site_gamma=None):
    """DryOptions with the engine factors set (name -> value).

    `site_gamma` holds the catalogue's site potentials (``"<site>/<class>"`` -> Gamma_s
    [-], :meth:`workbench.io.sites.Catalogue.nh3_emission_potential`): an
    ``nh3_gamma_<class>`` multiplier scales them too, with the scenario's keys for the
    class and the class default (:func:`scaled_gamma`)."""
    modes = dict(dry.particle_modes)
    rough = dict(dry.roughness)
    rc_scale = dict(dry.rc_scale)
    gamma = dict(dry.nh3_emission_potential)
    scale = {}
    changes = {}
    for name, v in values.items():
        kind = factor_kind(name)
        if v is None:                                  # the scenario's own value
            continue
        if kind == "wetness_rule":
            changes["wetness_rule"] = v
        elif kind == "fine_fraction":
            sp = name[len("fine_fraction_"):]
            modes[sp] = dataclasses.replace(modes[sp], fine_fraction=v)
        elif kind == "fine_mmd":
            sp = name[len("fine_mmd_"):]
            modes[sp] = dataclasses.replace(modes[sp], fine=dataclasses.replace(
                modes[sp].fine, mmd=v))
        elif kind == "z0":
            lu = name[len("z0_"):]
            rough[lu] = (v, (rough.get(lu) or (None, None))[1])
        elif kind == "rc_scale":
            rc_scale[name[len("rc_scale_"):]] = v
        elif kind == "nh3_gamma":      # the scenario's treatment stands (row_note)
            scale[name[len("nh3_gamma_"):]] = v
    if scale:
        gamma = scaled_gamma(gamma, scale, site_gamma)
    return dataclasses.replace(dry, particle_modes=modes, roughness=rough, rc_scale=rc_scale,
                               nh3_emission_potential=gamma, **changes)


def scaled_gamma(given: dict, scale: dict, site_gamma=None) -> dict:
    """Gamma_s keys of ``DryOptions.nh3_emission_potential`` with each class of `scale`
    (class -> multiplier [1]) multiplied wherever it is in force [-].

    The catalogue's site keys (`site_gamma`) are taken in under the scenario's
    (`given`, whose keys win, as in the velocities stage); then the class key (given,
    else the class default) and every ``"<site>/<class>"`` key of the class are
    multiplied, so that each site's Gamma_s in force is scaled once.

    >>> scaled_gamma({"farm/crops": 2000.0}, {"crops": 0.5}, {"mill/crops": 400.0})
    {'mill/crops': 200.0, 'farm/crops': 1000.0, 'crops': 500.0}
    """
    from ..drydep.nh3_bidirectional import EMISSION_POTENTIAL
    out = {**(site_gamma or {}), **given}
    for key in list(out):
        cls = str(key).split("/")[-1]
        if "/" in str(key) and cls in scale:
            out[key] = float(out[key]) * scale[cls]
    for cls, m in scale.items():
        out[cls] = float(out.get(cls, EMISSION_POTENTIAL[cls])) * m
    return out


def linear_outputs(layer, site: int, values: dict, n: int) -> dict:
    """Totals of one site for `n` settings of the linear factors (no engine run).

    Parameters
    ----------
    layer : LinearLayer
    site : int
    values : dict
        Linear factor name -> (n,) multipliers [1]; absent factors are 1.
    n : int

    Returns
    -------
    dict
        :func:`workbench.analysis.uncertainty.totals_of` of the draws, each (n, R, P).
    """
    ls = layer.sites[site]
    n_p = layer.budget.sizes["period"]
    one = np.ones(n)

    def col(name):
        return np.asarray(values.get(name, one), float)[:, None]
    vd = np.ones((n, 1, len(DRY_SPECIES)))
    for k, sp in enumerate(DRY_SPECIES):
        vd[:, 0, k] = col(f"vd_{sp}")[:, 0]
    n_s = ls.wet.n_samples if ls.wet is not None else 0
    pc = col("precip_conc")
    # the bulk factor acts where the site's wet has a bulk part (scale_wet) only
    bulk = col("bulk_wet_factor") if "bulk_wet_factor" in values and ls.bulk_part else None
    noise = SiteNoise(
        vd=vd, gauge=col("gauge_catch"), depth=np.ones((n, n_s)),
        pconc={ion: pc * np.ones((1, n_s)) for ion in (ls.wet.conc if ls.wet else {})},
        air={sp: col("air_conc") * np.ones((1, len(p.censored))) for sp, p in ls.dry.items()},
        vd_fill={sp: np.zeros((n, len(p.censored))) for sp, p in ls.dry.items()},
        pwm_fill={ion: pc * np.ones((1, n_p)) for ion in ls.pwm}, bulk=bulk)
    # the factors are the same in every year: one year axis that every period reads
    one_year = dataclasses.replace(layer, period_year=np.zeros_like(layer.period_year))
    return totals_of(component_draws(one_year, site, noise, 0))


def evaluate(study, base_options: dict, options: SensitivityOptions, x: np.ndarray,
             run_kwargs=None, progress=None):
    """Model outputs of the sample rows `x` (n, k).

    Rows with the same engine factors share one run of the pipeline (cached stages);
    NaN in an engine factor's column keeps the scenario's value.

    Returns
    -------
    y : ndarray (n, S, R, P, Q)
        Outputs of :data:`OUTPUTS` [mol m-2; eq ha-1 for the acidity].
    coords : dict
        ``site``, ``receptor``, ``period`` labels, ``data``: :func:`data_notes` of the
        budget, ``engine_runs``: the number of pipeline runs, and ``pairs``: the
        (site, receptor) pairs of the budget's rows (each
        site's own surfaces; the grid of the arrays holds every receptor of the network
        at every site).
    """
    names = list(options.factors)
    engine = [i for i, nm in enumerate(names) if factor_kind(nm) != "linear"]
    linear = [i for i, nm in enumerate(names) if factor_kind(nm) == "linear"]
    run_kwargs = dict(run_kwargs or {})
    keys = [tuple(engine_value(names[i], options, row[i]) for i in engine) for row in x]
    groups = {}
    for r, key in enumerate(keys):
        groups.setdefault(key, []).append(r)
    y = coords = None
    site_gamma = (study.catalogue(run_kwargs.get("overrides")).nh3_emission_potential()
                  if any(factor_kind(names[i]) == "nh3_gamma" for i in engine) else None)
    for key, rows in (progress(groups.items()) if progress else groups.items()):
        dry = apply_engine(base_options["dry"], dict(zip([names[i] for i in engine], key)),
                           site_gamma)
        res = study.run(base_options["wet"], dry, base_options["budget"],
                        base_options.get("fixed_velocity"), **run_kwargs)
        layer = linear_layer(res, study, overrides=run_kwargs.get("overrides"))
        ds = layer.budget
        if y is None:
            coords = {k: [str(v) for v in ds[k].values] for k in ("site", "receptor", "period")}
            y = np.full((len(x),) + tuple(len(v) for v in coords.values()) + (len(OUTPUTS),),
                        np.nan)
            # what the budget lacks (no engine factor changes which data a site has),
            # and the cells with bulk-collector samples under scale_wet
            coords["data"] = data_notes(ds)
            table = res.table
            coords["pairs"] = set(zip(table["site"].astype(str), table["receptor"].astype(str)))
            coords["classes"] = site_classes(study.catalogue(run_kwargs.get("overrides")))
            coords["nh3_treatment"] = base_options["dry"].nh3_treatment
            coords["bulk"] = {(k, p): bool(any(bp.b[p] > 0 for bp in ls.bulk_part.values()))
                              for k, ls in enumerate(layer.sites)
                              for p in range(ds.sizes["period"])}
        rows = np.asarray(rows)
        values = {names[i]: x[rows, i] for i in linear}
        for s in range(len(coords["site"])):
            tot = linear_outputs(layer, s, values, len(rows))
            for q, (_, _, key_) in enumerate(OUTPUTS):
                y[rows, s, :, :, q] = tot[key_]
    coords["engine_runs"] = len(groups)
    return y, coords
