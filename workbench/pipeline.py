"""A study: the inputs of a scenario, its stages run through one stage graph.

Every stage is a named pure function declaring the option fields it reads
(:mod:`workbench.stages`, :mod:`workbench.drycomponents`, :mod:`workbench.drydep.core`;
docs/engine.md lists them).  :class:`Study` runs them in a :class:`workbench.graph.Graph`,
whose one bounded cache keys each result by a digest of the stage name, the values
of the declared fields, the keys of the upstream results and the identity of the
inputs (the study's token, the site overrides, the receptors asked for).  So:

======================  =====================================================
stage                   computed again when
======================  =====================================================
``screen``              a wet QA option changes
``wet``                 any wet option or the periods change
``velocities``          a dry option (but ``compare_schemes``) or the site
                        overrides change; its steps (surface layer, canopy
                        state, gases, each particle mode) only when their own
                        declared options change
``vd_fill``, rows       the content of a species' Vd, or a flux option
``budget``              anything above or a budget option changes
======================  =====================================================

A wet option never recomputes Vd; a particle fine fraction recomputes no step of the
velocities (only their assembly) and no gas's rows.
"""
from __future__ import annotations

import copy
import dataclasses
import uuid
from types import SimpleNamespace

import numpy as np
import pandas as pd
import xarray as xr

from . import stages as _stages
from .budget import BudgetOptions
from .drycomponents import dry_components, dry_rows
from .dryrows import exchange_member_rows
from .graph import Graph, Node, content_digest, input_node, token
from .io.inputs import Inputs
from .io.sites import SiteCatalogue
from .periods import default_span, excluded_record_notes
from .pipeline_result import Result
from .pipeline_velocities import _NONE, _StudyVelocities
from .surfacehistory import collector_history

#: Kept for older imports: the wet options of the wet chain alone.
WET_PERIOD_OPTIONS = _stages.WET_PERIOD_OPTIONS


class Study(_StudyVelocities):
    """The inputs of a study and its stages, run through a stage graph.

    Parameters
    ----------
    inputs : Inputs
        As read by :func:`workbench.io.load_inputs`.
    site_overrides : dict, optional
        site id -> {catalogue key: value} (the scenario's ``[sites.<id>]`` tables).
    graph : workbench.graph.Graph, optional
        The graph (and its one bounded cache) to run in; several studies may share one
        (each study's inputs have their own token).  Default: a graph of its own.

    Attributes
    ----------
    counts : dict
        Computations of the screening, the wet chain, the velocities, the dry pieces
        (fills, rows, components) and the budget by this study.
    """

    def __init__(self, inputs: Inputs, site_overrides=None, graph: Graph | None = None):
        self.inputs = inputs
        self.site_overrides = dict(site_overrides or {})
        self.graph = Graph() if graph is None else graph
        #: identity of the inputs in the graph's keys (the inputs are not changed)
        self.token = uuid.uuid4().hex
        self.counts = {"screened": 0, "wet": 0, "velocities": 0, "dry": 0, "budget": 0}

    @property
    def nbytes(self) -> int:
        """Bytes of the study's input Datasets (what a graph holding the study counts)."""
        return int(sum(ds.nbytes for ds in (self.inputs.precipitation, self.inputs.air,
                                            self.inputs.met) if ds is not None))

    # ---------------------------------------------------------------- construction
    @classmethod
    def from_scenario(cls, scenario, progress=None) -> "Study":
        from .scenario import load_scenario_inputs
        return cls(load_scenario_inputs(scenario, progress=progress), scenario.data.get("sites", {}))

    def catalogue(self, overrides=None) -> SiteCatalogue:
        """The catalogue with the site overrides applied.

        `overrides` given here (the apps' what-if values) go through the same checks as
        the scenario's ``[sites.<id>]`` tables (:func:`workbench.io.sites.check_site`):
        an impossible value raises a located :class:`~workbench.errors.InputError`
        naming the override; an unknown site id is refused.
        """
        over = {**self.site_overrides, **(overrides or {})}
        if overrides:
            self._check_overrides(overrides)
        sites = []
        for s in self.inputs.catalogue:
            o = dict(over.get(s.id, {}))
            if "receptors" in o:
                o["receptors"] = tuple(o["receptors"])
            if "lai" in o:
                o["lai"] = tuple(o["lai"])
            o.pop("lai_min", None), o.pop("lai_max", None)
            sites.append(dataclasses.replace(s, **o) if o else s)
        return SiteCatalogue(sites, self.inputs.catalogue.path)

    def _check_overrides(self, overrides):
        """Site overrides given in code, checked as the scenario's are (about 0.05 ms a
        site: checked on every call, no cache)."""
        from .errors import InputError, suggest
        from .io.sites import check_site, site_dict
        ids = list(self.inputs.catalogue.ids)
        for sid, table in overrides.items():
            if sid not in ids:
                raise InputError("unknown site id in a what-if override", column=f"sites.{sid}",
                                 value=sid, expected="one of " + ", ".join(ids) + suggest(sid, ids))
            table = dict(table)
            base = site_dict(self.inputs.catalogue[sid])
            base.update(self.site_overrides.get(sid, {}))
            if "lai_min" in table or "lai_max" in table:
                base.pop("lai", None)

            def err(problem, key, value=None, expected=None, sid=sid):
                return InputError(f"what-if override: {problem}", column=f"sites.{sid}.{key}",
                                  value=value, expected=expected)
            check_site({**base, **table}, err, [], f"what-if [sites.{sid}]")

    def record_span(self):
        """(start, end) of the record: the earliest sample or air-period start and the
        latest end (the met record when there is no chemistry); (None, None) without
        any record."""
        starts, ends = [], []
        for ds in (self.inputs.precipitation, self.inputs.air):
            if ds is not None and ds["start"].size:      # a block of sites without any
                starts.append(ds["start"].values.min())   # sample has an empty table
                ends.append(ds["end"].values.max())
        if not starts and self.inputs.met is not None and self.inputs.met["time"].size:
            t = self.inputs.met["time"].values
            starts.append(t[0] - np.timedelta64(1, "h"))
            ends.append(t[-1])
        if not starts:                # no record at all: the run's start and end decide
            return None, None
        return min(starts), max(ends)

    def span(self):
        """(start, end) of the default reporting span: the calendar years of the record,
        without a year it reaches into by a few days only
        (:func:`workbench.periods.default_span`); (None, None) without any record."""
        s0, e0 = self.record_span()
        return (None, None) if s0 is None else default_span(s0, e0)

    def span_notes(self, start=None, end=None) -> list:
        """The run notes of the record's days that the default span leaves out (used
        where `start` or `end` is None): ``[]`` when it holds the whole record."""
        s0, e0 = self.record_span()
        if s0 is None or (start is not None and end is not None):
            return []
        return excluded_record_notes(s0, e0, use_start=start is None, use_end=end is None)

    # ---------------------------------------------------------------- graph nodes
    def _input(self, name, value, *extra) -> Node:
        """Node of an input of this study (its token; `extra` values enter the key)."""
        if value is None:
            return _NONE
        ident = self.token if not extra else self.token + ":" + content_digest(
            [], repr(token(extra)))
        return input_node(name, ident, value)

    def _catalogue_node(self, overrides=None) -> Node:
        over = {**self.site_overrides, **(overrides or {})}
        return self._input("catalogue", self.catalogue(overrides), over)

    def _sample_notes(self, wet_options, budget_options, periods: Node) -> list:
        """The notes of a period that one sample decides (precipitation, air): stages
        on the samples' median lengths, each reading its one coverage minimum."""
        out = []
        for name, group, opts, role, data in (
                ("precipitation_notes", "wet", wet_options, "precipitation",
                 self.inputs.precipitation),
                ("air_notes", "budget", budget_options, "air", self.inputs.air)):
            samples = self._input(role, data)
            hours = self._run("sample_hours", deps={"samples": samples})
            out += self._run(name, {group: opts}, {"periods": periods, role: samples,
                                                   "hours": hours}).value
        return out

    def _run(self, name, options=None, deps=None, params=None, fn=None) -> Node:
        return self.graph.run(name, options, deps, params, fn, counts=self.counts)

    def _in_graph(self, graph: Graph) -> "Study":
        """This study running its stages in `graph` (a :meth:`Graph.scratch` of its own:
        the same inputs, token and counts, so the same keys)."""
        sub = copy.copy(self)
        sub.graph = graph
        return sub

    def _periods_node(self, resolution="year", start=None, end=None, hydro_start_month=10):
        """The periods stage, its result keyed by its content (:meth:`_as_periods_node`):
        the same table asked for with `start` written otherwise (``"2016-01-01"`` or a
        datetime64, as the season coverage asks) reuses the stages run on it."""
        node = self._run("periods", {"wet": SimpleNamespace(hydro_start_month=hydro_start_month)},
                         params={"span": tuple(self.span()), "resolution": resolution,
                                 "start": None if start is None else str(start),
                                 "end": None if end is None else str(end)})
        return self._as_periods_node(node.value)

    def periods(self, resolution="year", start=None, end=None, hydro_start_month=10):
        """The reporting periods (a table; see :func:`workbench.periods.make_periods`)."""
        return self._periods_node(resolution, start, end, hydro_start_month).value

    def _as_periods_node(self, periods) -> Node:
        """A periods table given by a caller, as a node (keyed by its content)."""
        cols = [periods[c].to_numpy() for c in periods.columns]
        return Node("periods:" + content_digest([periods.index.to_numpy(), *cols],
                                                *periods.columns), periods)

    # ---------------------------------------------------------------- stages
    def _screened_node(self, wet_options) -> Node:
        if self.inputs.precipitation is None:
            return _NONE
        precipitation = self._input("precipitation", self.inputs.precipitation)
        return self._run("screen", {"wet": wet_options},
                         {"precipitation": precipitation,
                          "met": self._input("met", self.inputs.met),
                          "flags": self._run("sample_flags",
                                             deps={"precipitation": precipitation})})

    def screened(self, wet_options):
        """Per-sample QA (None without precipitation samples)."""
        return self._screened_node(wet_options).value

    def _wet_node(self, wet_options, periods: Node) -> Node:
        scr = self._screened_node(wet_options)
        if scr.value is None:
            return _NONE
        return self._run("wet", {"wet": wet_options},
                         {"screened": scr, "periods": periods,
                          "met": self._input("met", self.inputs.met)})

    def wet(self, wet_options, periods: pd.DataFrame):
        """Wet deposition over `periods` (None without precipitation samples)."""
        return self._wet_node(wet_options, self._as_periods_node(periods)).value

    def collector_split(self, wet_options, periods: pd.DataFrame, overrides=None):
        """The bulk part of each period's wet deposition at the sites whose collector
        changed (the ``collector_split`` stage of :meth:`run`), or None."""
        cat = self._catalogue_node(overrides)
        c_history = collector_history(cat.value)
        if not c_history or self.inputs.precipitation is None:
            return None
        return self._run("collector_split", {"wet": wet_options},
                         {"screened": self._screened_node(wet_options),
                          "periods": self._as_periods_node(periods),
                          "met": self._input("met", self.inputs.met)},
                         {"history": c_history,
                          "collectors": tuple((s.id, s.collector) for s in cat.value)}).value

    def _surfaces_node(self, overrides=None) -> Node:
        return self._run("surfaces", deps={"catalogue": self._catalogue_node(overrides)})

    def surfaces(self, overrides=None) -> xr.Dataset:
        """Receptor surfaces of the catalogue with the overrides (a stage of the graph)."""
        return self._surfaces_node(overrides).value

    def velocities(self, dry_options, overrides=None, receptors=None):
        """Hourly Vd and resistances: of the pairs the sites ask for (the others NaN,
        ``active`` false), or of every site on the receptors named."""
        return self._velocities_node(dry_options, overrides, receptors).value

    def receptors(self, overrides=None) -> list:
        """Every receptor surface of the sites, in the order of the budget."""
        return list(dict.fromkeys(r for s in self.catalogue(overrides) for r in s.surfaces))

    def _dry_rows_node(self, dry_options, budget_options, fixed_velocity=None, overrides=None,
                       receptors=None, vd=None, species=None) -> Node:
        """The dry rows as a node; `species`: of these species only (None: every
        species with a Vd; the Monte Carlo's grid of scaled air,
        :func:`workbench.analysis.airvd.grid_pieces`)."""
        if self.inputs.air is None or self.inputs.met is None:
            return _NONE
        fixed_velocity = dict(fixed_velocity or {})
        vel = self._velocity_nodes(dry_options, budget_options, fixed_velocity, overrides,
                                   receptors, vd)
        if species is not None:
            vel = {k: v for k, v in vel.items() if k in species}
        if not vel:
            return _NONE
        ids = list(self.catalogue(overrides).ids)
        air, met = self._input("air", self.inputs.air), self._input("met", self.inputs.met)

        def rows(o, air_v, met_v, sites, **_):
            # its pieces are stages of their own, run on the same nodes
            return dry_rows(air, vel, met, list(sites), o.budget, self.graph, self.counts)
        return self._run("dry_rows", {"budget": budget_options},
                         {"air_v": air, "met_v": met, **{f"vel|{k}": v for k, v in vel.items()}},
                         {"sites": tuple(ids)}, fn=rows)

    def dry_rows(self, dry_options, budget_options, fixed_velocity=None, overrides=None,
                 receptors=None):
        """Deposition over each air-sampling period (independent of reporting periods)."""
        return self._dry_rows_node(dry_options, budget_options, fixed_velocity, overrides,
                                   receptors).value

    def exchange_rows(self, dry_options, budget_options, member, fixed_velocity=None,
                      overrides=None, receptors=None):
        """`member`'s rows deposited with the Vd of the bidirectional NH3 exchange and
        that Vd's cumulative hour counts, or None without the exchange
        (:func:`workbench.dryrows.exchange_member_rows`; stages of the graph)."""
        if self.inputs.air is None or self.inputs.met is None:
            return None
        fixed_velocity = dict(fixed_velocity or {})
        vel = self._velocity_nodes(dry_options, budget_options, fixed_velocity, overrides,
                                   receptors)
        if not vel:
            return None
        return exchange_member_rows(self._input("air", self.inputs.air), vel,
                                    self._input("met", self.inputs.met),
                                    list(self.catalogue(overrides).ids), member,
                                    budget_options, self.graph, self.counts)

    def _dry_node(self, rows: Node, periods: Node) -> Node:
        """Dry components over `periods` from the rows (their shares are stages)."""
        if rows.value is None:
            return _NONE
        r = rows.value
        times = Node(r["keys"]["times"], r["times"])

        def share(name, piece):
            return self._run("period_shares", deps={"rows": Node(r["keys"][name], piece),
                                                    "periods": periods, "times": times},
                             params={"n_sites": len(r["sites"])}).value
        return self._run("dry_components", deps={"rows": rows, "periods": periods},
                         fn=lambda o, rows, periods: dry_components(rows, periods, share))

    def dry(self, dry_options, budget_options, periods, fixed_velocity=None, overrides=None,
            receptors=None):
        """(dry components over `periods`, notes) or (None, [])."""
        rows = self._dry_rows_node(dry_options, budget_options, fixed_velocity, overrides,
                                   receptors)
        node = self._dry_node(rows, self._as_periods_node(periods))
        if node.value is None:
            return None, []
        return node.value, rows.value["notes"]

    def _season_node(self, rows: Node, years: Node, hydro) -> Node:
        y = years.value
        months = self._periods_node("month", y["start"].values[0], y["end"].values[-1], hydro)
        dry_m = self._dry_node(rows, months)
        if dry_m.value is None:
            return _NONE
        return self._run("season_coverage", deps={"dry_months": dry_m, "months": months,
                                                  "years": years})

    def season_coverage(self, dry_options, budget_options, years, fixed_velocity=None,
                        overrides=None, receptors=None):
        """(site, year, species): every season has concentrations in that year."""
        rows = self._dry_rows_node(dry_options, budget_options, fixed_velocity, overrides,
                                   receptors)
        return self._season_node(rows, self._as_periods_node(years), 10).value

    # ---------------------------------------------------------------- the budget
    def run(self, wet_options=None, dry_options=None, budget_options=None, fixed_velocity=None,
            resolution="year", start=None, end=None, overrides=None, receptors=None,
            layout=None) -> Result:
        """Compute the budget at a resolution, the yearly budget and the span mean.

        `receptors` (a sequence of receptor surfaces) computes those for every site,
        with the same numbers as in the whole run: an app showing one receptor at a
        time computes what it shows.  Default: the pairs the sites ask for, each site
        on its own receptors (the others NaN; see :func:`workbench.stages.wanted_pairs`).

        `layout` (a sequence of receptor surfaces holding every receptor computed) is
        the receptor axis of the budget, when it is not the computed one: a block of
        sites (:mod:`workbench.blocks`) computes its own receptors and puts its budget
        on the network's, so that a pair none of its sites asks for holds what a whole
        run of the network gives there (wet deposition, dry components missing: no
        deposition velocity), not a fill value.
        """
        from .drydep import DryOptions
        from .wet import WetOptions
        wet_options = wet_options or WetOptions()
        dry_options = dry_options or DryOptions()
        budget_options = budget_options or BudgetOptions()
        fixed_velocity = dict(fixed_velocity or {})
        every = self.receptors(overrides)
        if receptors is not None:
            receptors = tuple(str(r) for r in receptors)
            unknown = [r for r in receptors if r not in every]
            if unknown:
                raise ValueError(f"receptors {unknown} are not surfaces of these sites {every}")
        hy = wet_options.hydro_start_month
        periods = self._periods_node(resolution, start, end, hy)
        years = self._periods_node("year", start, end, hy)
        cat = self._catalogue_node(overrides)
        shown = tuple(receptors) if receptors is not None else tuple(every)
        if layout is not None:
            layout = tuple(str(r) for r in layout)
            lost = [r for r in shown if r not in layout]
            if lost:
                raise ValueError(f"layout {list(layout)} leaves out receptors {lost}")
            shown = layout
        opts = {"wet": wet_options, "dry": dry_options, "budget": budget_options}

        vel = (self._velocities_node(dry_options, overrides, receptors)
               if self._needs_model(fixed_velocity) else _NONE)
        rows = self._dry_rows_node(dry_options, budget_options, fixed_velocity, overrides,
                                   receptors, vel)

        c_history = collector_history(cat.value)

        def one(table, season_cov):
            wet = self._wet_node(wet_options, table)
            dry = self._dry_node(rows, table)
            deps = {"wet": wet, "dry": dry, "catalogue": cat, "periods": table,
                    "season_cov": season_cov}
            if c_history and wet.value is not None:
                # a collector changed: each sample under its own collector's rules
                # (docs/budget.md, "Bulk collectors"; workbench/surfacecollectors.py)
                deps["collector"] = self._run(
                    "collector_split", {"wet": wet_options},
                    {"screened": self._screened_node(wet_options), "periods": table,
                     "met": self._input("met", self.inputs.met)},
                    {"history": c_history,
                     "collectors": tuple((s.id, s.collector) for s in cat.value)})
            # what reads no option (the axes, the collectors, the land-use notes)
            deps["layout"] = self._run(
                "budget_layout", None,
                {k: deps[k] for k in ("catalogue", "periods", "collector") if k in deps},
                {"receptors": shown})
            if wet.value is not None:
                # the wet components read one budget option: kept across a dry change
                deps["wet_parts"] = self._run(
                    "wet_components", {"budget": budget_options},
                    {"wet": wet, "periods": table}, {"sites": tuple(cat.value.ids)})
                # after the bulk collectors: kept across a completeness option's change
                deps["wet_cols"] = self._run(
                    "wet_assembled", {"budget": budget_options},
                    {"wet": wet, "layout": deps["layout"], "wet_parts": deps["wet_parts"]})
            ds = self._run("budget", opts, deps, {"receptors": shown})
            return ds, wet

        season_cov = self._season_node(rows, years, hy)
        year_ds, wet_y = one(years, season_cov)
        if resolution == "year":
            res_ds, wet_r = year_ds, wet_y
        else:
            res_ds, wet_r = one(periods, _NONE)
        screened = self._screened_node(wet_options)
        return Result(budget=res_ds.value, years=year_ds.value, screened=screened.value,
                      wet=wet_r.value, velocities=vel.value, periods=periods.value,
                      options={"wet": wet_options, "dry": dry_options, "budget": budget_options,
                               "fixed_velocity": fixed_velocity, "resolution": resolution,
                               "receptors": receptors},
                      # a new list: the stage's own stays as cached
                      notes=([] if rows.value is None else list(rows.value["notes"]))
                      + self.span_notes(start, end)
                      + self._sample_notes(wet_options, budget_options, periods),
                      keys={"budget": res_ds.key, "years": year_ds.key, "screened": screened.key,
                            "wet": wet_r.key, "velocities": vel.key},
                      graph=self.graph)
