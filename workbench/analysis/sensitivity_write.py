"""A sensitivity folder: the Sobol indices and the tornado of a scenario written
with their page (sensitivity.html) and provenance (:func:`write_sensitivity`).
Re-exported by :mod:`workbench.analysis.sensitivity`.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .sensitivity_indices import sobol, tornado
from .sensitivity_notes import with_bulk_factor
from .sensitivity_options import OUTPUTS


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
