"""What one run of a :class:`workbench.pipeline.Study` produces (:class:`Result`);
re-exported by :mod:`workbench.pipeline`."""
from __future__ import annotations

import functools
from dataclasses import dataclass, field

import pandas as pd
import xarray as xr

from . import stages as _stages
from .graph import Graph, Node
from .tables import budget_table, span_table


@dataclass
class Result:
    """Everything one run produces.

    ``table`` (the budget.csv rows) and ``derived`` are built on first use, so that the
    apps, which draw from the Datasets, do not pay for them on every change.  Most
    arrays of ``velocities`` are shared with the study's caches and read-only; take a
    ``.copy()`` of the Dataset to change values in place.
    """

    budget: xr.Dataset            #: (site, receptor, period, component) at the resolution
    years: xr.Dataset             #: the same for calendar years
    screened: xr.Dataset | None   #: per-sample QA
    wet: xr.Dataset | None        #: wet chain at the resolution
    velocities: xr.Dataset | None  #: hourly Ra, Rb, Rc, Vd (arrays may be read-only: ``.copy()``)
    periods: pd.DataFrame
    options: dict = field(default_factory=dict)
    notes: list = field(default_factory=list)
    #: stage name -> the graph key of the result shown here (``"years"``, ``"budget"``,
    #: ``"screened"``, ``"wet"``, ``"velocities"``): equal keys, equal numbers.
    keys: dict = field(default_factory=dict)
    graph: Graph | None = field(default=None, repr=False, compare=False)

    @property
    def nbytes(self) -> int:
        """Bytes of its Datasets (shared with a graph's entries; what a graph holding
        the result counts, so that a bounded cache of results stays bounded)."""
        return int(sum(ds.nbytes for ds in (self.budget, self.years, self.screened, self.wet,
                                             self.velocities) if ds is not None))

    @functools.cached_property
    def table(self) -> pd.DataFrame:
        """budget.csv rows: the resolution periods, then the whole span."""
        span = span_table(budget_table(self.years))
        return pd.concat([budget_table(self.budget), span], ignore_index=True)

    @functools.cached_property
    def derived(self) -> xr.Dataset:
        """Shares, oxidized / reduced N, potential acidity, brackets, total nitrate."""
        key = self.keys.get("budget")
        if self.graph is None or key is None:
            return _stages.derived_quantities(None, self.budget)
        return self.graph.run("derived", deps={"budget": Node(key, self.budget)}).value

    @functools.cached_property
    def year_derived(self) -> xr.Dataset:
        """:attr:`derived` of ``years`` (the yearly budget), from the stage graph: the
        dry-N bracket and the N split (:meth:`rates`) read the same entry."""
        key = self.keys.get("years")
        if self.graph is None or key is None:
            return _stages.derived_quantities(None, self.years)
        return self.graph.run("derived", deps={"budget": Node(key, self.years)}).value

    def rates(self, receptors=None) -> pd.DataFrame:
        """The derived sums of ``years`` as yearly rates with their completeness
        (:func:`workbench.report_derived.derived_rates`; `receptors`: those only),
        from the stage graph: a redraw of the same result computes them once, and a
        new result reads the derived quantities of the years (:attr:`year_derived`)
        and their parts' rows (stage ``part_rows``) computed once for it.

        Returns
        -------
        pandas.DataFrame
            Shared with the graph's cache: read it, do not change it in place.
        """
        params = {"receptors": None if receptors is None else tuple(str(r) for r in receptors)}
        key = self.keys.get("years")
        if self.graph is None or key is None:
            return _stages.year_rates(None, self.years, **params)
        years = Node(key, self.years)
        dv = self.graph.run("derived", deps={"budget": years})
        rows = self.graph.run("part_rows", deps={"budget": years})
        return self.graph.run("year_rates", deps={"years": years, "derived": dv, "rows": rows},
                              params=params).value
