"""Global sensitivity of the budget totals: Sobol indices and a one-at-a-time tornado.

Factors (scenario section ``[sensitivity]``, table ``factors``: name -> range):

* on the linear layer (no engine run; multipliers, uniform on the range):
  ``vd_<species>`` the Vd of a dry species, ``gauge_catch`` every precipitation
  depth, ``precip_conc`` every precipitation concentration, ``air_conc`` every air
  concentration (a calibration bias; the random per-sample errors are the Monte
  Carlo's, :mod:`.uncertainty`), ``bulk_wet_factor`` every bulk collector's wet-only /
  bulk ratio under ``bulk_correction = "scale_wet"`` (on the bulk samples' part of the
  wet deposition; added to the default factors where a site has bulk samples,
  :func:`with_bulk_factor`);
* inside the engine (each distinct value runs the pipeline, through the stage caches
  of :meth:`workbench.pipeline.Study.run`): ``wetness_rule`` (a list of rules, drawn
  with equal probability), ``fine_fraction_<particle>`` [1] and ``fine_mmd_<particle>``
  [m] of a particle's fine mode, ``z0_<land use>`` [m] the roughness length of a
  receptor class (``DryOptions.roughness``), ``rc_scale_<gas>`` [1] a multiplier of a
  gas's surface resistance (``DryOptions.rc_scale``; [0.5, 2.0] when named with ``[]``),
  ``nh3_gamma_<land use>`` [1] a multiplier of the stomatal NH3 emission potential
  Gamma_s of a class in force at each site (the class default, the scenario's
  ``[dry] nh3_emission_potential`` for the class or ``"<site>/<class>"``, or the site's
  own value in sites.toml: each scaled by the same factor, as the Monte Carlo's G;
  named with ``[]``, +-1 GSD of its ``nh3_gamma_gsd``,
  :func:`.sensitivity_options.nh3_gamma_range`).  ``nh3_gamma_*`` keeps the scenario's
  ``[dry] nh3_treatment``: Gamma_s acts through the bidirectional exchange only, so under
  ``"deposition_only"`` the factor has no effect and its rows say so (:func:`row_note`).
  Before, it switched the bidirectional model on in the runs where it had a value: the
  tornado's low and high ends were bidirectional, its base and every other factor's
  runs deposition-only, so the bar compared two runs of another model than the one the
  scenario reports.  Before that, the factor was Gamma_s itself, its ``[]`` range centred on the class default,
  and a site's own Gamma_s won over it: where the scenario or a site overrode the
  class, the analysis explored values that were not in force, or nothing.

Saltelli's scheme (Sobol sequences, first-order and total indices) and the
estimators are SALib's (Herman and Usher 2017, J. Open Source Softw. 2(9), 97;
Saltelli et al. 2010, Comput. Phys. Commun. 181, 259).  Rows of the Saltelli matrix that
differ only in linear factors share one engine run, so k linear and m engine factors
cost N (2 + m) engine runs at most, not N (k + m + 2).
"""
from __future__ import annotations

import dataclasses

import numpy as np
import pandas as pd

from .layer import DRY_SPECIES, linear_layer
from .sensitivity_options import (BULK_FACTOR_RANGE, OUTPUT_AMOUNTS, OUTPUTS,  # noqa: F401
                                  PERIOD_UNITS, SensitivityOptions, _default_factors,
                                  factor_kind, output_unit)
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


def sobol(study, base_options: dict, options: SensitivityOptions, run_kwargs=None,
          progress=None) -> pd.DataFrame:
    """First-order and total Sobol indices of every total (see the module text).

    Parameters
    ----------
    study : workbench.pipeline.Study
    base_options : dict
        ``wet``, ``dry``, ``budget`` options and ``fixed_velocity`` of the scenario.
    options : SensitivityOptions
    run_kwargs : dict, optional
        ``resolution``, ``start``, ``end``, ``receptors`` for :meth:`Study.run`.
    progress : callable, optional
        Wraps the iterable of engine runs (e.g. ``tqdm``).

    Returns
    -------
    pandas.DataFrame
        Columns ``site, receptor, period, element, quantity, factor, S1, S1_conf, ST,
        ST_conf`` [1] and ``note`` (:func:`row_note`: an index 0 for want of data, a
        total lacking components); outputs that do not vary (a missing total) are left
        out.  ``attrs``: ``evaluations`` (rows of the sample, N (k + 2)) and
        ``engine_runs`` (pipeline runs among them).
    """
    prob = problem(options)
    x = saltelli_sample(prob, options.samples, options.seed)
    y, coords = evaluate(study, base_options, options, x, run_kwargs, progress)
    rows = []
    for cell, (s, r, p, q), (el, quantity, _) in _cells(coords, options):
        v = y[:, s, r, p, q]
        if not np.all(np.isfinite(v)) or np.ptp(v) <= 1e-12 * np.abs(v).max():
            continue
        si = sobol_indices(prob, v, options.seed)
        for i, name in enumerate(prob["names"]):
            rows.append((*cell, el, quantity, name, si["S1"][i], si["S1_conf"][i],
                         si["ST"][i], si["ST_conf"][i],
                         row_note(name, el, quantity, coords["data"][(s, r, p)],
                                  coords["bulk"].get((s, p)),
                                  coords["classes"].get(cell[0]), coords["nh3_treatment"])))
    frame = pd.DataFrame(rows, columns=["site", "receptor", "period", "element", "quantity",
                                        "factor", "S1", "S1_conf", "ST", "ST_conf", "note"])
    frame.attrs.update(evaluations=len(x), engine_runs=coords["engine_runs"])
    return frame


def tornado(study, base_options: dict, options: SensitivityOptions, run_kwargs=None,
            progress=None) -> pd.DataFrame:
    """One factor at a time at its low and high end, the others at their base.

    The base of a linear factor is 1; of an engine factor, the scenario's own value
    (the low and high ends of ``wetness_rule`` are its first and last rule).

    Returns
    -------
    pandas.DataFrame
        ``site, receptor, period, element, quantity, factor, low, high, base,
        output_low, output_high, output_base, unit, note``: outputs [kg ha-1] of S or
        N per reporting period ([eq ha-1] for the acidity), the unit of each row named
        in ``unit`` (:func:`output_unit`, e.g. ``kg S ha-1 yr-1`` for yearly periods;
        tornado.csv mixes the three elements), ``note`` as in
        :func:`sobol`; ``attrs`` as :func:`sobol`'s (2 k + 1 evaluations).
    """
    from ..units import element_deposition_in
    names = list(options.factors)
    prob = problem(options)
    k = len(names)
    base = np.full(k, np.nan)
    lows, highs = np.array([b[0] for b in prob["bounds"]]), np.array([b[1] for b in prob["bounds"]])
    for i, nm in enumerate(names):
        kind = factor_kind(nm)
        if kind == "linear":
            base[i] = 1.0
        elif kind == "wetness_rule":
            rules = list(options.factors[nm])
            cur = base_options["dry"].wetness_rule
            base[i] = rules.index(cur) + 0.5 if cur in rules else np.nan
            lows[i], highs[i] = 0.5, len(rules) - 0.5
    # NaN: an engine factor at the scenario's own value
    x = [base.copy()]
    for i in range(k):
        for end in (lows[i], highs[i]):
            row = base.copy()
            row[i] = end
            x.append(row)
    x = np.array(x)
    y, coords = evaluate(study, base_options, options, x, run_kwargs, progress)
    resolution = (run_kwargs or {}).get("resolution", "year")      # Study.run's default
    rows = []
    for cell, (s, r, p, q), (el, quantity, _) in _cells(coords, options):
        conv = ((lambda v: v) if el == "S+N" else
                (lambda v, e=el: element_deposition_in(v, e, "kg_ha")))
        b = conv(y[0, s, r, p, q])
        unit = output_unit(el, resolution)
        if not np.isfinite(b):
            continue
        for i, nm in enumerate(names):
            lo, hi = y[1 + 2 * i, s, r, p, q], y[2 + 2 * i, s, r, p, q]
            rows.append((*cell, el, quantity, nm, _label(nm, options, x[1 + 2 * i, i]),
                         _label(nm, options, x[2 + 2 * i, i]), _label(nm, options, base[i]),
                         conv(lo), conv(hi), b, unit,
                         row_note(nm, el, quantity, coords["data"][(s, r, p)],
                                  coords["bulk"].get((s, p)),
                                  coords["classes"].get(cell[0]), coords["nh3_treatment"])))
    frame = pd.DataFrame(rows, columns=["site", "receptor", "period", "element", "quantity",
                                        "factor", "low", "high", "base", "output_low",
                                        "output_high", "output_base", "unit", "note"])
    frame.attrs.update(evaluations=len(x), engine_runs=coords["engine_runs"])
    return frame


def data_notes(ds) -> dict:
    """What the budget `ds` lacks in each cell, for the notes of the indices.

    Returns
    -------
    dict
        ``(s, r, p)`` indices -> ``(lacking, idle)``: ``lacking`` maps each output key
        of :data:`OUTPUTS` to the components it lacks (space-separated; the potential
        acidity lacks those of S and N total); ``idle`` maps ``(pathway, species)`` of
        a component without a deposition of its own (NaN, or 0 with a note, e.g. a
        particle counted in a bulk collector's wet) to the budget's note.
    """
    from ..budget import COMPONENTS
    dep = ds["deposition"].transpose("site", "receptor", "period", "component").values
    notes = ds["note"].transpose("site", "receptor", "period", "component").values
    miss = ds["total_missing_components"].transpose("site", "receptor", "period",
                                                    "total").values
    totals = [str(t) for t in ds["total"].values]
    out = {}
    for idx in np.ndindex(*dep.shape[:3]):      # one per (site, receptor, period) cell
        lacking = {t: (m.strip() if isinstance(m, str) else "")
                   for t, m in zip(totals, miss[idx])}
        lacking["potential_acidity"] = " ".join(
            v for v in (lacking.get("S_total", ""), lacking.get("N_total", "")) if v)
        idle = {}
        for j, (_, path, sp) in enumerate(COMPONENTS):
            v, note = dep[idx + (j,)], notes[idx + (j,)]
            if (not np.isfinite(v) or v == 0) and isinstance(note, str) and note.strip():
                idle[(path, sp)] = note.strip()
        out[idx] = (lacking, idle)
    return out


def _scales(name, path, species) -> bool:
    """Whether the linear factor `name` scales the component (path, species)."""
    if name.startswith("vd_"):
        return path == "dry" and species == name[3:]
    return path == {"gauge_catch": "wet", "precip_conc": "wet", "air_conc": "dry",
                    "bulk_wet_factor": "wet"}.get(name)


#: The one dry species an engine factor of each kind acts on, from its name (the
#: particle of ``fine_fraction_``/``fine_mmd_``, the gas of ``rc_scale_``, NH3 for
#: ``nh3_gamma_``); ``z0_`` and ``wetness_rule`` act on every dry species.
SPECIES_OF = {"fine_fraction": lambda n: n[len("fine_fraction_"):],
              "fine_mmd": lambda n: n[len("fine_mmd_"):],
              "rc_scale": lambda n: n[len("rc_scale_"):],
              "nh3_gamma": lambda n: "NH3"}


def _reaches(name, kind, path, species) -> bool:
    """Whether factor `name` (of `kind`, :func:`factor_kind`) acts on the component
    (path, species): a linear factor by :func:`_scales`, an engine factor tied to one
    species (:data:`SPECIES_OF`) on that species' dry deposition only; the others
    (``z0_``, ``wetness_rule``) on no single component (no note of missing data)."""
    if kind == "linear":
        return _scales(name, path, species)
    if kind in SPECIES_OF:
        return path == "dry" and species == SPECIES_OF[kind](name)
    return False


def bulk_sites(catalogue) -> set:
    """Ids of the sites with a bulk collector now or before a declared change."""
    from ..surfacehistory import collector_history
    out = {s.id for s in catalogue if s.collector == "bulk"}
    for sid, _, changes in collector_history(catalogue):
        if any("bulk" in (a, b) for _, a, b in changes):
            out.add(sid)
    return out


def with_bulk_factor(options: SensitivityOptions, budget_options, catalogue) -> SensitivityOptions:
    """`options` with ``bulk_wet_factor`` over [0.9, 1.1] added to its factors where it
    acts: the factors are the defaults (a table given in ``[sensitivity] factors`` is
    kept as given: name ``bulk_wet_factor`` there to have it), the budget scales the
    bulk deposition (``bulk_correction = "scale_wet"``) and a site analysed
    (``options.sites``, else every site of `catalogue`) has bulk-collector samples.
    Otherwise `options` itself (a run without bulk samples keeps its indices)."""
    if (budget_options.bulk_correction != "scale_wet" or "bulk_wet_factor" in options.factors
            or dict(options.factors) != _default_factors()):
        return options
    have = bulk_sites(catalogue)
    if not (have & set(options.sites) if options.sites else have):
        return options
    return dataclasses.replace(options, factors={**options.factors,
                                                 "bulk_wet_factor": BULK_FACTOR_RANGE})


def site_classes(catalogue) -> dict:
    """site id -> the land-use classes its engine runs use: its surfaces (own land use and
    receptors), the class under its wind mast (``met_land_use``) and the classes before
    a declared land-use change."""
    from ..surfacehistory import earlier_classes, land_use_history
    earlier = earlier_classes(land_use_history(catalogue))
    return {s.id: tuple(dict.fromkeys(
        tuple(s.surfaces) + ((s.met_land_use,) if getattr(s, "met_land_use", None) else ())
        + tuple(earlier.get(s.id, ())))) for s in catalogue}


def row_note(name, element, quantity, data, has_bulk=None, classes=None,
             nh3_treatment=None) -> str:
    """The note of a row of sensitivity.csv or tornado.csv [text] ("" for none).

    An index 0 because the factor reaches only components without data at the site
    (a species not measured, a particle counted in a bulk collector's wet) says so,
    with the budget's note: it is no small effect.  This holds for the engine factors
    tied to one species as for the ``vd_`` multipliers: ``fine_fraction_<particle>``,
    ``fine_mmd_<particle>``, ``rc_scale_<gas>`` and ``nh3_gamma_<class>`` (NH3) where
    that species is not measured (before, their zeros carried no note).  A total lacking components says
    that its indices are those of its measured part.

    Parameters
    ----------
    name : str
        The factor.
    element, quantity : str
        The output (:data:`OUTPUTS`).
    data : tuple
        ``(lacking, idle)`` of the cell (:func:`data_notes`).
    has_bulk : bool, optional
        The cell's wet has a bulk-collector part (``scale_wet``); False says that
        ``bulk_wet_factor`` has no effect there.
    classes : tuple, optional
        The land-use classes of the site (:func:`site_classes`): a ``z0_<class>`` or
        ``nh3_gamma_<class>`` of another class has nothing to act on there (its zeros
        read as a measured nil effect before).
    nh3_treatment : str, optional
        The scenario's ``[dry] nh3_treatment``: under ``"deposition_only"`` an
        ``nh3_gamma_<class>`` factor has nothing to act on (Gamma_s enters the
        bidirectional exchange only) and the note says so.
    """
    from ..budget import COMPONENTS
    lacking, idle = data
    key = next(k for e, qn, k in OUTPUTS if e == element and qn == quantity)
    parts = []
    kind = factor_kind(name)
    reach = [(path, sp) for el, path, sp in COMPONENTS
             if (element == "S+N" or el == element)
             and quantity in ("total", "potential_acidity", path)
             and _reaches(name, kind, path, sp)]
    if reach and all(c in idle for c in reach):
        parts.append("no effect for want of data: " + "; ".join(
            f"{path} {sp} {idle[(path, sp)]}" for path, sp in reach))
    if kind == "nh3_gamma" and nh3_treatment not in (None, "bidirectional"):
        parts.append(f'no effect: [dry] nh3_treatment = "{nh3_treatment}" (Gamma_s acts in '
                     'the bidirectional NH3 exchange only)')
    if kind in ("z0", "nh3_gamma") and classes is not None:
        cls = name[len("z0_"):] if kind == "z0" else name[len("nh3_gamma_"):]
        if cls not in classes:
            parts.append(f"no effect: the site has no {cls} surface (its classes: "
                         f"{', '.join(classes)})")
    if (name == "bulk_wet_factor" and has_bulk is False and not parts
            and quantity in ("wet", "total", "potential_acidity")):
        parts.append("no effect: no bulk-collector samples at the site in the period")
    if lacking.get(key):
        parts.append(f"the total lacks {lacking[key]}: indices of its measured part")
    return "; ".join(parts)


def _cells(coords, options):
    """Each (site, receptor, period) asked for by `options` and each output of
    :data:`OUTPUTS`: yields ((site, receptor, period), (s, r, p, q) indices, output).
    Only a site's own surfaces (``coords["pairs"]``, the budget's rows): the arrays hold
    every receptor of the network at every site, and a surface the site does not have
    has no deposition velocity (its rows said "check the met record", a false lead)."""
    sites, recs, pers = coords["site"], coords["receptor"], coords["period"]
    pairs = coords.get("pairs")
    for s in range(len(sites)):
        if options.sites and sites[s] not in options.sites:
            continue
        for r in range(len(recs)):
            if options.receptors and recs[r] not in options.receptors:
                continue
            if pairs is not None and (sites[s], recs[r]) not in pairs:
                continue
            for p in range(len(pers)):
                for q, out in enumerate(OUTPUTS):
                    yield (sites[s], recs[r], pers[p]), (s, r, p, q), out


def _label(name, options, x):
    if np.isnan(x):
        return "scenario"
    v = engine_value(name, options, x) if factor_kind(name) == "wetness_rule" else float(x)
    return str(v)


def write_sensitivity(scenario, out, overwrite=False, quiet=False) -> dict:
    """Run the Sobol analysis and the tornado of a scenario and write them into `out`.

    Files: ``sensitivity.csv`` (:func:`sobol`), ``tornado.csv`` (:func:`tornado`) and
    ``sensitivity.html`` (one figure per total of the first site and receptor asked for
    and the last period).  The budget of the scenario's ``[period]`` is analysed with
    the ``[sensitivity]`` options.

    Parameters
    ----------
    scenario : workbench.scenario.Scenario
        A loaded scenario (:func:`workbench.scenario.load_scenario`; this module does
        not import the scenario module, which imports it).

    Returns
    -------
    dict
        name -> Path of each file written.
    """
    import sys
    from pathlib import Path

    from ..runfolder import RunFolder
    sc = scenario                 # loaded by the caller (scenario.py imports this module)
    say = (lambda text: None) if quiet else (lambda text: print(text, file=sys.stderr))
    with RunFolder(Path(out), {"scenario": sc.path, **sc.input_paths()}, overwrite,
                   say=say) as folder:      # whole or not at all, as a run folder
        names = _write_sensitivity(sc, folder.path, quiet, run_folder=folder.out)
        final = folder.commit()
    return {name: final / name for name in names}


def _write_sensitivity(sc, out, quiet, run_folder=None):
    """Compute and write the files of :func:`write_sensitivity` into the folder `out`,
    ``provenance.json`` last (what made them, as a run folder's: the scenario with every
    option, the inputs with their SHA-256, the output checksums; `run_folder` is the
    folder `out` becomes, for the inputs' paths relative to it), so that
    ``workbench verify`` checks a sensitivity folder too."""
    import datetime as _dt
    import json
    import sys

    from tqdm.auto import tqdm

    from ..pipeline import Study
    from ..writers import atomic_write
    started = _dt.datetime.now(_dt.timezone.utc)
    study = Study.from_scenario(sc)
    whole = study                   # every input as read (its checksums), before a subset
    opt = with_bulk_factor(sc.options["sensitivity"], sc.options["budget"], study.catalogue())
    _check_cells(sc, study.catalogue(), opt)
    if opt.sites:              # the engine computes the sites analysed only
        study = Study(study.inputs.subset(list(opt.sites)), study.site_overrides)
    p = sc.data["period"]
    kw = {"resolution": p["resolution"], "start": p["start"], "end": p["end"]}
    if opt.receptors:
        kw["receptors"] = list(opt.receptors)
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"], "budget": sc.options["budget"],
            "fixed_velocity": sc.fixed_velocity}

    def progress(items):
        # disable=None: a bar on a terminal only, none in a log file (carriage returns)
        return tqdm(list(items), desc="engine runs", disable=True if quiet else None,
                    file=sys.stderr, delay=1.0)
    frame = sobol(study, base, opt, kw, progress)
    torn = tornado(study, base, opt, kw, progress)
    written = {"sensitivity.csv": atomic_write(out / "sensitivity.csv", lambda t: frame.to_csv(
        t, index=False, float_format="%.6g")),
        "tornado.csv": atomic_write(out / "tornado.csv", lambda t: torn.to_csv(
            t, index=False, float_format="%.6g"))}
    from .sensitivity_design import design, no_rows_text
    record = design(opt, {"no_rows": no_rows_text(study.inputs, frame, p),
                          "sobol_evaluations": frame.attrs["evaluations"],
                          "sobol_engine_runs": frame.attrs["engine_runs"],
                          "tornado_evaluations": torn.attrs["evaluations"],
                          "tornado_engine_runs": torn.attrs["engine_runs"],
                          "widest_interval": (float(frame[["S1_conf", "ST_conf"]].max().max())
                                              if len(frame) else None)},
                    dry=sc.options["dry"], budget=sc.options["budget"])
    html = sensitivity_html(frame, torn, period=_headline_period(
        study, frame, p["resolution"], sc.options["wet"].hydro_start_month), design=record)
    written["sensitivity.html"] = atomic_write(out / "sensitivity.html",
                                               lambda t: t.write_text(html, encoding="utf-8"))
    from ..csvcaution import CAUTION_FILE, write_folder_caution
    written[CAUTION_FILE] = write_folder_caution(out, atomic_write)   # the CSVs carry none
    from ..writers import (changed_note, changed_since_read, input_paths, provenance,
                           read_digests, scenario_base, sha256)
    changed = changed_since_read(whole, sc)
    prov = provenance(sc, input_paths(whole, sc), started,
                      out=out if run_folder is None else run_folder, changed=changed,
                      read=read_digests(whole, sc))
    names = list(written)
    prov["outputs"] = names + ["provenance.json"]
    prov["output_sha256"] = {n: sha256(out / n) for n in names}
    prov["sites"] = [str(s) for s in study.inputs.catalogue.ids]
    prov["sensitivity_design"] = record      # runs, seed, factors and what was held
    base = scenario_base(sc)
    prov["run_notes"] = [changed_note(p, base) for p in changed.values()]
    written["provenance.json"] = atomic_write(
        out / "provenance.json",
        lambda t: t.write_text(json.dumps(prov, indent=2, default=str)))
    return list(written)


def _check_cells(sc, catalogue, opt):
    """A located error for a ``[sensitivity]`` site or receptor the catalogue does not
    have (an unknown site gave a bare KeyError, an unknown receptor an unlocated one)."""
    from ..errors import ScenarioError, suggest
    from ..scenario import _line_of
    lines = sc.path.read_text(encoding="utf-8").splitlines() if sc.path else []
    surfaces = list(dict.fromkeys(r for s in catalogue for r in s.surfaces
                                  if not opt.sites or s.id in opt.sites))
    for key, given, known in (("sites", opt.sites, catalogue.ids),
                              ("receptors", opt.receptors, surfaces)):
        bad = [v for v in given if v not in known]
        if bad:
            raise ScenarioError(f"unknown {key[:-1]} in [sensitivity] {key}", file=sc.path,
                                line=_line_of(lines, "sensitivity", key),
                                column=f"sensitivity.{key}", value=bad[0],
                                expected="one of " + ", ".join(known) + suggest(bad[0], known))


def _headline_period(study, frame, resolution, hydro_start_month=10):
    """The label of the period that holds the last sample or air period to *start* at
    the first site of `frame`, or None: the chemistry's span runs to the end of the last
    weekly sample, a few days into the next year, and that year of a few days (its dry
    deposition scaled up from a day or two of air) headed sensitivity.html."""
    from ..periods import make_periods
    if frame.empty:
        return None
    site = str(frame.iloc[0]["site"])
    last = []
    for ds in (study.inputs.precipitation, study.inputs.air):
        if ds is not None and ds["start"].size:
            mine = ds["site"].values.astype(str) == site
            if mine.any():
                last.append(ds["start"].values[mine].max())
    if not last:
        return None
    t = max(last)
    table = make_periods(t, t + np.timedelta64(1, "s"), resolution,
                         hydro_start_month=hydro_start_month)
    return str(table["label"].iloc[0]) if len(table) else None


def sensitivity_html(frame: pd.DataFrame, torn: pd.DataFrame, period=None,
                     design=None) -> str:
    """An HTML page with the Sobol bars and the tornado of every total of the first
    (site, receptor) of `frame` and its last period (`period`, when given and among the
    pair's periods: :func:`_headline_period`, the last period a sample starts in), and,
    with `design` (:func:`workbench.analysis.sensitivity_design.design`), what was
    varied over which range, the model runs, the seed and what was held fixed."""
    import html as _html

    import plotly.io as pio

    from ..report import CAUTION
    from ..ui.figures_sensitivity import sensitivity_figure
    parts = ["<html><head><meta charset='utf-8'><title>Sensitivity</title></head>"
             "<body style='font-family:sans-serif;max-width:70em;margin:2em'>",
             "<h1>Global sensitivity of the budget totals</h1>",
             "<p style='background:#fff7e0;border-left:4px solid #e69f00;padding:.6em 1em'>"
             "<b>Caution.</b> " + _html.escape(CAUTION) + "</p>",
             "<p>" + _html.escape(
                 "Sobol first-order (S1) and total (ST) indices from Saltelli sampling "
                 "(SALib), with 95 % bootstrap intervals, and one factor at a time at the "
                 "ends of its range. The indices rank the factors within the ranges given "
                 "in [sensitivity] only (docs/scenario.md); a factor left out has no "
                 "index.") + "</p>"]
    if design is not None:
        from .sensitivity_design import design_html
        parts.append(design_html(design))
    if frame.empty:
        why = (design or {}).get("no_rows")
        parts.append("<p class='no_rows'>" + (_html.escape(why[0].upper() + why[1:] + ".")
                                              if why else
                                              "No total varies with the factors given.")
                     + "</p>")
    else:
        first = frame.iloc[0]
        periods = frame.loc[(frame["site"] == first["site"])
                            & (frame["receptor"] == first["receptor"]), "period"].astype(str)
        period = str(period) if period is not None and str(period) in set(periods) \
            else periods.iloc[-1]
        parts.append("<p class='shown'>" + _html.escape(shown_text(
            frame, first["site"], first["receptor"], period)) + "</p>")
        include = "inline"
        for el, quantity, _ in OUTPUTS:
            if _pick_any(frame, first["site"], first["receptor"], period, el, quantity):
                fig = sensitivity_figure(frame, torn, first["site"], first["receptor"],
                                         period, el, quantity)
                parts.append(pio.to_html(fig, include_plotlyjs=include, full_html=False))
                include = False
    parts.append("</body></html>")
    return "\n".join(parts)


def shown_text(frame: pd.DataFrame, site, receptor, period) -> str:
    """The sentence of sensitivity.html naming the one cell its figures show, where the
    rest is, and how to read an index below 0 [text].  Before, the page showed the first
    site's first receptor and last period under a text naming none of it: a reader of a
    network's page took it for the network's sensitivity."""
    n_cells = len(frame[["site", "receptor", "period"]].drop_duplicates())
    neg = bool((frame["S1"] < 0).any())
    return (f"The figures show site {site}, receptor {receptor}, period {period}: the first "
            "site and receptor analysed and its last period, one of the "
            f"{n_cells} (site, receptor, period) cells of sensitivity.csv and tornado.csv, "
            "which hold them all ([sensitivity] sites and receptors pick others). "
            + ("An S1 below 0 (here down to "
               f"{float(frame['S1'].min()):.2g}), or above its ST, is sampling error of the "
               "estimate (S1_conf and ST_conf give the 95 % intervals): read it as about "
               "0, or as equal to ST; more [sensitivity] samples narrow it." if neg
               else ""))


def _pick_any(frame, site, receptor, period, element, quantity) -> bool:
    return bool(((frame["site"] == site) & (frame["receptor"] == receptor)
                 & (frame["period"].astype(str) == str(period)) & (frame["element"] == element)
                 & (frame["quantity"] == quantity)).any())
