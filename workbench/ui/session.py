"""A session of the apps: a study, its scenario, the runs of one site and some years.

No widgets here: :class:`Session` loads a scenario, keeps one fast
:class:`~workbench.pipeline.Study` per site and year range (a subset of the inputs, so
that a change recomputes one site-year, not the network), and saves the settings as a
scenario file or exports a run folder.  The apps in :mod:`workbench.ui.apps` call it.
"""
from __future__ import annotations

import copy
import dataclasses
import datetime as _dt
import os
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

from ..budget import BudgetOptions
from ..drydep import DryOptions
from ..graph import Graph, input_node
from ..pipeline import Study
from ..scenario import load_scenario, validate
from ..wet import WetOptions
from .assumptions import ASSUMPTIONS, Settings
from .summaries import mean_totals

#: Days of data kept on each side of the years of a subset study.  Without them an air
#: sample that straddles New Year would be counted whole in the year (the dry flux
#: shares a straddling sample by the hours of met it sees), some % too much dry
#: deposition; longer than the longest air or precipitation sample (a month).
SUBSET_MARGIN_DAYS = 45
#: Steps of the progress of opening a scenario: the four files and the first run.
OPEN_STEPS = ("site catalogue", "precipitation samples", "air concentrations",
              "hourly meteorology")


#: Environment variable naming the folder of the apps' saved scenarios and run folders.
OUTPUT_ENV = "WORKBENCH_OUTPUT"
#: Name of the output folder in the working directory (:func:`output_dir`).
OUTPUT_NAME = "workbench-output"


def output_dir() -> Path:
    """Folder of what the apps write (saved scenarios, exported run folders, figures),
    as an absolute path.

    ``$WORKBENCH_OUTPUT`` when set, else ``workbench-output`` in the folder the user
    works in: the kernel's working directory, which JupyterLab and Voila set to the
    notebook's folder (it was ``~/workbench-output``, a folder outside the project
    that a user did not look in).  In this repository's ``notebooks/`` that folder is
    ignored by git (``.gitignore`` keeps only the notebooks there).
    """
    return Path(os.environ.get(OUTPUT_ENV) or Path.cwd() / OUTPUT_NAME).expanduser().absolute()


def _say(progress, text, fraction=None):
    if progress is not None:
        progress(text, fraction)


class Session:
    """A loaded scenario and the subset studies the apps compute on.

    Parameters
    ----------
    study : Study
        The whole study (all sites and years), as from :meth:`Study.from_scenario`.
    scenario : Scenario
    """

    def __init__(self, study: Study, scenario):
        self.study = study
        self.scenario = scenario
        self.baseline = Settings.from_scenario(scenario)
        #: the one stage graph (and bounded cache) of every study of the session
        self.graph = Graph()

    # ------------------------------------------------------------------ opening
    @classmethod
    def open(cls, scenario_path, progress=None) -> "Session":
        """Read a scenario and its inputs.

        Parameters
        ----------
        scenario_path : str or Path
        progress : callable, optional
            ``progress(text, fraction)`` before each file (fraction in 0-1).
        """
        sc = load_scenario(scenario_path)
        n = len(OPEN_STEPS)
        seen = []

        def step(text):
            seen.append(text)
            _say(progress, f"reading {text}", len(seen) / (n + 1))

        study = Study.from_scenario(sc, progress=step)
        _say(progress, "inputs read", n / (n + 1))
        return cls(study, sc)

    # ------------------------------------------------------------------ what there is
    @property
    def sites(self) -> list:
        """Sites with precipitation, air or met data, in catalogue order."""
        inp = self.study.inputs
        have = set()
        for ds in (inp.precipitation, inp.air, inp.met):
            if ds is not None:
                have |= set(np.unique(ds["site"].values.astype(str)))
        return [s for s in inp.catalogue.ids if s in have]

    def sites_without_data(self) -> list:
        """Sites of sites.toml without a precipitation, air or met row (not computed)."""
        have = set(self.sites)
        return [s for s in self.study.inputs.catalogue.ids if s not in have]

    def check_site(self, site):
        """Raise one located :class:`~workbench.errors.ScenarioError` when `site` (an app's
        ``site``, the ``SITE`` of a notebook's first cell) is not ``None`` and not one of
        :attr:`sites`: a notebook opened on another scenario kept the demo's ``"ridge"``
        and failed in ipywidgets with a ``TraitError`` traceback (and a ``NameError`` in
        the next cell)."""
        if site is None or site in self.sites:
            return
        from ..errors import ScenarioError, suggest
        ids = self.study.inputs.catalogue.ids
        what = ("a site of sites.toml without a precipitation, air or met row (nothing "
                "computed for it)" if site in ids else "not a site of this scenario")
        raise ScenarioError(
            f"SITE (the notebook's first cell, or the app's site) is {what}",
            file=getattr(self.scenario, "path", None), value=site,
            expected="one of " + ", ".join(self.sites) + suggest(site, self.sites)
            + ", or None for the first site with data")

    def site_options(self) -> list:
        """``(label, id)`` of :attr:`sites` for a dropdown: the id and the site's name
        from sites.toml (thirty bare ids read alike)."""
        cat = self.study.inputs.catalogue
        out = []
        for s in self.sites:
            name = str(getattr(cat[s], "name", "") or "")
            out.append((f"{s} · {name}" if name and name != s else s, s))
        return out

    def site_years(self, site) -> tuple:
        """(first, last) calendar year of the site's precipitation and air samples,
        inside :attr:`years`: the first year a sample ends in, the last year a sample
        starts in (a weekly sample over New Year does not make a year of a closed site).
        :attr:`years` when the site has no samples."""
        first, last = self.years
        inp = self.study.inputs
        lo, hi = [], []
        for ds in (inp.precipitation, inp.air):
            if ds is None or not {"site", "start", "end"} <= set(ds.variables):
                continue
            mine = ds["site"].values.astype(str) == site
            if mine.any():
                lo.append(pd.Timestamp(ds["end"].values[mine].min()).year)
                hi.append(pd.Timestamp(ds["start"].values[mine].max()).year)
        if not lo:
            return first, last
        a, b = max(first, min(lo)), min(last, max(hi))
        return (a, b) if a <= b else (first, last)

    def years_for(self, site, years) -> tuple:
        """The years `years` (first, last) kept inside the site's record
        (:meth:`site_years`), and a sentence saying so when they moved ("" otherwise):
        a site opened late or closed early showed a near-zero total, flagged, for
        years it has no samples in."""
        s0, s1 = self.site_years(site)
        y0, y1 = int(years[0]), int(years[1])
        n0, n1 = max(y0, s0), min(y1, s1)
        if n0 > n1:
            n0 = n1 = s1 if y0 > s1 else s0
        if (n0, n1) == (y0, y1):
            return (y0, y1), ""
        span = f"{s0}" if s0 == s1 else f"{s0}-{s1}"
        shown = f"{n0}" if n0 == n1 else f"{n0}-{n1}"
        return (n0, n1), f"{site} has samples in {span} only: years set to {shown}"

    def in_force(self, key, settings: Settings, site):
        """``(value, source)`` of what holds for assumption `key` at `site` while the app
        sets none, where the workbench knows one before running (the roughness length
        of the site's own surface, :func:`~workbench.ui.assumptions.roughness_in_force`);
        None for the others."""
        if key != "site.roughness_length_m":
            return None
        from .assumptions import roughness_in_force
        return roughness_in_force(self.study.inputs.catalogue[site],
                                  settings.overrides.get(site, {}), settings.dry)

    def receptors(self, site) -> list:
        """The site's own surface first, then its further receptors."""
        return list(self.study.inputs.catalogue[site].surfaces)

    def utc_offset(self, site) -> float:
        return float(self.study.inputs.catalogue[site].utc_offset_h)

    @property
    def years(self) -> tuple:
        """(first, last) calendar year with data, limited by the scenario's period: the
        default span of a run (:meth:`Study.span <workbench.pipeline.Study.span>`, no
        year of a few days at either end) where ``[period]`` gives no start or end."""
        s0, e0 = self.study.span()
        p = self.scenario.data["period"]
        s0 = np.datetime64(p["start"]) if p.get("start") else s0
        e0 = np.datetime64(p["end"]) if p.get("end") else e0
        first = pd.Timestamp(s0).year
        last = (pd.Timestamp(e0) - pd.Timedelta(1, "ns")).year
        return int(first), int(last)

    @staticmethod
    def bounds(first_year, last_year) -> tuple:
        """(start, end) instants of calendar years first..last (end exclusive)."""
        return f"{int(first_year)}-01-01", f"{int(last_year) + 1}-01-01"

    # ------------------------------------------------------------------ computing
    def study_for(self, site, first_year, last_year) -> Study:
        """The study of one site and some years (the ``site_study`` stage of the
        session's graph: kept while the graph's bounded cache keeps it).

        The inputs are cut to the site and the years with :data:`SUBSET_MARGIN_DAYS` on
        each side; a run then reports the years only.
        """
        def cut(o, whole, site, first_year, last_year):
            start, end = self.bounds(first_year, last_year)
            margin = np.timedelta64(SUBSET_MARGIN_DAYS, "D")
            return Study(whole.inputs.subset([site], np.datetime64(start) - margin,
                                             np.datetime64(end) + margin),
                         whole.site_overrides, graph=self.graph)
        return self.graph.run("site_study",
                              deps={"whole": input_node("study", self.study.token, self.study)},
                              params={"site": str(site), "first_year": int(first_year),
                                      "last_year": int(last_year)}, fn=cut).value

    def run(self, settings: Settings, site, first_year, last_year, resolution="month",
            receptor=None):
        """Budget of one site and some years (``Result``; ``years`` always yearly).

        `receptor` (a receptor surface of the site) computes that receptor only, with
        the numbers of the whole run: what an app shows, at a third of the cost for a
        site with three receptors.  Default: every receptor.

        The run is the ``app_run`` stage of the session's graph: going back to settings
        seen before returns the same ``Result`` object without running the study (its
        key is derived from the settings, the site's study and the arguments).  The
        overrides of other sites are left out (:meth:`Settings.for_site`): the site's
        study has no other site, and they change nothing here.
        """
        study = self.study_for(site, first_year, last_year)
        settings = settings.for_site(site)

        def compute(o, study, first_year, last_year, resolution, receptor, settings):
            start, end = self.bounds(first_year, last_year)
            with warnings.catch_warnings():
                # a site without some component gives all-NaN slices in the budget's
                # completeness; the status columns already say "missing"
                warnings.filterwarnings("ignore", "All-NaN slice encountered", RuntimeWarning)
                return study.run(resolution=resolution, start=start, end=end,
                                 receptors=None if receptor is None else [receptor],
                                 **settings.run_args())
        return self.graph.run("app_run", deps={"study": input_node("study", study.token, study)},
                              params={"first_year": int(first_year), "last_year": int(last_year),
                                      "resolution": resolution, "receptor": receptor,
                                      "settings": settings}, fn=compute).value

    def run_schemes(self, settings: Settings, site, first_year, last_year, receptor,
                    chosen=None) -> dict:
        """The run of the chosen gas scheme and of the other one (yearly, one receptor).

        Parameters
        ----------
        chosen : Result, optional
            The chosen scheme's run when the caller has it (not run again).

        Returns
        -------
        dict
            scheme -> ``Result``, the chosen scheme (``settings.dry.gas_scheme``) first.
        """
        from ..comparison import schemes_in_order
        out = {}
        for scheme in schemes_in_order(settings.dry)[:2]:
            if scheme == settings.dry.gas_scheme and chosen is not None:
                out[scheme] = chosen
                continue
            s = settings.replace(dry=dataclasses.replace(settings.dry, gas_scheme=scheme))
            out[scheme] = self.run(s, site, first_year, last_year, "year", receptor)
        return out

    def sweep(self, key, values, settings: Settings, site, first_year, last_year, receptor,
              unit="kg/ha/yr", progress=None) -> pd.DataFrame:
        """Totals for each value of one assumption, the others as in `settings`.

        Returns
        -------
        pandas.DataFrame
            ``value, total, rate`` [unit, mean of the years], ``status``, ``missing``
            (components without data in any of the years, space-separated).
        """
        a = ASSUMPTIONS[key]
        rows = []
        for i, v in enumerate(values):
            _say(progress, f"{a.label} = {v}", i / max(len(values), 1))
            res = self.run(a.set(settings, site, v), site, first_year, last_year, "year",
                           receptor)
            m = mean_totals(res.years, site, receptor, None, unit)
            rows.append(pd.DataFrame({"value": [v] * len(m), "total": m.index,
                                      "rate": m["value"].to_numpy(),
                                      "status": m["status"].to_numpy(),
                                      "missing": m["missing"].to_numpy()}))
        _say(progress, "done", 1.0)
        return pd.concat(rows, ignore_index=True)

    # ------------------------------------------------------------------ saving
    def scenario_document(self, settings: Settings, first_year=None, last_year=None,
                          base_dir=None) -> tuple[dict, list]:
        """The settings as a scenario (TOML-ready dict) and comment lines.

        Only options that differ from the defaults are written (particle size
        distributions as ``[dry.particle_modes.<species>]`` tables).  Input paths are
        relative to `base_dir` (absolute when None).  An option TOML cannot hold (None
        where the default is a value) is named in a comment line.
        """
        sc = self.scenario
        inputs = {}
        for role, p in sc.input_paths().items():
            inputs[role] = str(p if base_dir is None else Path(os.path.relpath(p, base_dir)))
        period = {"resolution": sc.data["period"]["resolution"]}
        if first_year is not None:
            period["start"], period["end"] = self.bounds(first_year, last_year)
        else:
            period.update({k: sc.data["period"][k] for k in ("start", "end")
                           if sc.data["period"].get(k)})
        raw = {"inputs": inputs, "period": period}
        if sc.data["air"].get("reference_state"):
            raw["air"] = {"reference_state": sc.data["air"]["reference_state"]}
        comments = []
        wet = _diff(WetOptions().to_dict(), settings.wet.to_dict())
        if wet:
            raw["wet"] = wet
        dry_default, dry = DryOptions(), settings.dry
        dry_out = {}
        for f in dataclasses.fields(DryOptions):
            new, old = getattr(dry, f.name), getattr(dry_default, f.name)
            if new == old:
                continue
            if f.name == "particle_modes":
                # [dry.particle_modes.<species>] tables, read over the defaults
                modes = {sp: _plain_mode(spec) for sp, spec in sorted(new.items())
                         if spec != dry_default.mode_of(sp)}
                if modes:
                    dry_out["particle_modes"] = modes
            elif f.name == "roughness" and new:
                dry_out["roughness"] = {k: [float(x) for x in v] for k, v in new.items()}
            elif new is None:
                comments.append(f"dry.{f.name} set in the app (not written): {new!r}")
            else:
                dry_out[f.name] = list(new) if isinstance(new, tuple) else new
        if settings.fixed_velocity:
            dry_out["fixed_velocity"] = {k: float(v) for k, v in sorted(settings.fixed_velocity.items())}
        if dry_out:
            raw["dry"] = dry_out
        budget = _diff(BudgetOptions().to_dict(), settings.budget.to_dict())
        if budget:
            raw["budget"] = budget
        sites = {k: dict(v) for k, v in settings.overrides.items() if v}
        if sites:
            raw["sites"] = copy.deepcopy(sites)
        for name in ("uncertainty", "sensitivity", "compare"):  # not set in the app: kept
            if sc.given.get(name):
                raw[name] = copy.deepcopy(sc.given[name])
        return raw, comments

    def save_scenario(self, path, settings: Settings, first_year=None, last_year=None) -> Path:
        """Write the settings as a scenario file that :func:`load_scenario` reads back.

        Raises
        ------
        ValueError
            If the file read back does not give the same settings (it is then removed).
        """
        import tomli_w
        path = Path(path).resolve()
        path.parent.mkdir(parents=True, exist_ok=True)
        raw, comments = self.scenario_document(settings, first_year, last_year, path.parent)
        head = [f"# Scenario saved from the deposition workbench apps, "
                f"{_dt.datetime.now(_dt.timezone.utc):%Y-%m-%dT%H:%MZ}.",
                f"# Based on {self.scenario.path}; options not written keep their defaults."]
        head += [f"# NOTE: {c}" for c in comments]
        from ..writers import atomic_write
        text = "\n".join(head) + "\n\n" + tomli_w.dumps(raw)
        atomic_write(path, lambda tmp: tmp.write_text(text, encoding="utf-8"))
        back = load_scenario(path)
        if not _same(back, settings):
            path.unlink(missing_ok=True)
            raise ValueError("the saved scenario does not read back to the same settings")
        return path

    def export_run(self, out, settings: Settings, site, first_year, last_year,
                   overwrite=False, progress=None) -> dict:
        """Write the run folder of one site and some years (the files of ``workbench run``).

        Returns
        -------
        dict
            name -> Path of each file written.
        """
        from ..writers import write_run
        # inputs named relative to the folder of the scenario the app opened, as
        # ``workbench run`` of that scenario names them (a project folder moves whole)
        folder = self.scenario.base
        raw, _ = self.scenario_document(settings, first_year, last_year, folder)
        scenario = validate(raw, None, folder=folder)
        _say(progress, "computing", 0.2)
        res = self.run(settings, site, first_year, last_year, raw["period"]["resolution"])
        _say(progress, "writing", 0.6)
        study = self.study_for(site, first_year, last_year)
        written = write_run(res, study, scenario, out, overwrite=overwrite,
                            progress=lambda text: _say(progress, f"writing {text}", 0.8))
        _say(progress, "done", 1.0)
        return written


def _diff(default: dict, current: dict) -> dict:
    """Entries of `current` that differ from `default` (TOML-ready values)."""
    out = {}
    for k, v in current.items():
        if default.get(k) != v:
            out[k] = [list(x) if isinstance(x, tuple) else x for x in v] if isinstance(v, (list, tuple)) else v
    return out


def _plain_mode(spec) -> dict:
    """A particle size distribution as a scenario table (sizes in m, as the options)."""
    return {"fine_fraction": float(spec.fine_fraction),
            "fine": dataclasses.asdict(spec.fine), "coarse": dataclasses.asdict(spec.coarse)}


def _same(scenario, settings: Settings) -> bool:
    """A scenario read back gives the settings."""
    def norm(dry):
        modes = {sp: dry.mode_of(sp) for sp in set(dry.particle_modes) | set(DryOptions().particle_modes)}
        rough = {k: tuple(float(x) for x in v) for k, v in dry.roughness.items()}
        return dataclasses.replace(dry, particle_modes=modes, roughness=rough)
    dry_a, dry_b = norm(scenario.options["dry"]), norm(settings.dry)
    if isinstance(dry_b.seasonal_category, tuple):
        dry_a = dataclasses.replace(dry_a, seasonal_category=tuple(dry_a.seasonal_category))
    sites_a = {k: v for k, v in scenario.data.get("sites", {}).items() if v}
    sites_b = {k: v for k, v in settings.overrides.items() if v}
    return (scenario.options["wet"] == settings.wet and scenario.options["budget"] == settings.budget
            and dry_a == dry_b and dict(scenario.fixed_velocity) == dict(settings.fixed_velocity)
            and sites_a == sites_b)
