"""The velocities of a :class:`workbench.pipeline.Study` as nodes of its stage graph:
each group of sites on its receptors, a site's own surface following its declared
land-use changes, and the gap-filled Vd of each species (:class:`_StudyVelocities`,
a base class of :class:`~workbench.pipeline.Study`, whose methods these are).
Units: Vd [m s-1].
"""
from __future__ import annotations

import functools

import numpy as np

from . import stages as _stages
from .budget import COMPONENTS
from .graph import Node, content_digest, input_node
from .surfacehistory import earlier_classes, land_use_history, mast_history

#: The node of an absent input or stage (its value None).
_NONE = input_node("none", "", None)


class _StudyVelocities:
    """The velocity nodes of :class:`workbench.pipeline.Study` (its base class: they
    run in the study's graph, on its inputs, catalogue and receptors)."""

    def _velocities_node(self, dry_options, overrides=None, receptors=None,
                         air: Node | None = None, outputs=None) -> Node:
        """Velocities of every site on `receptors`, or (None) of the wanted pairs: each
        group of sites asking for the same receptors (:func:`stages.pair_groups`) is
        computed on its own receptors, and the groups are put on the (site, receptor,
        time) layout with the other pairs not computed (:func:`stages.wanted_pairs`).
        `air`: the node of the air the velocities read where a dry option takes an
        hourly input from it (None: the study's own; the Monte Carlo's grid of scaled
        air, :mod:`workbench.analysis.airvd`).  `outputs`: the variables made (None:
        every one; a tuple, see the ``velocities`` stage), the same bits as in the
        whole result."""
        if self.inputs.met is None:
            return _NONE
        met = self._input("met", self.inputs.met)
        surf = self._surfaces_node(overrides)
        times = met.value["time"].values
        first = times.min() - np.timedelta64(1, "h") if times.size else None
        history = tuple(h for h in land_use_history(self.catalogue(overrides))  # changes
                        if first is None or np.datetime64(h[2][-1][0], "ns") > first)  # in the met
        if not history:
            return self._velocities_on(dry_options, overrides, met, surf, receptors, air,
                                       outputs)
        # the site's own surface follows its declared land-use changes: the earlier
        # classes are computed as receptors of the site, then put on its own row hour by
        # hour (docs/data_formats.md, "A long record"; workbench/surfacehistory.py)
        surf_h = self._run("history_surfaces", deps={"catalogue": self._catalogue_node(overrides)},
                           params={"history": history})
        mast = mast_history(self.catalogue(overrides), history)
        if mast:
            # the wind mast of a site without met_land_use stands over its own surface:
            # its z0 and d follow the history hour by hour too (workbench/surfacehistory.py)
            met = self._run("mast_in_force", deps={"met": met}, params={"history": mast})
        every = tuple(str(r) for r in surf.value["receptor"].values)
        shown = every if receptors is None else tuple(receptors)
        extra = tuple(dict.fromkeys(c for cs in earlier_classes(history).values() for c in cs
                                    if c not in shown))
        computed = self._velocities_on(dry_options, overrides, met, surf_h,
                                       None if receptors is None else shown + extra, air,
                                       outputs)
        return self._run("land_use_in_force", deps={"velocities": computed, "surfaces": surf},
                         params={"history": history, "receptors": shown,
                                 "wanted": receptors is None})

    def _velocities_on(self, dry_options, overrides, met: Node, surf: Node, receptors,
                       air: Node | None = None, outputs=None) -> Node:
        """:meth:`_velocities_node` on the surfaces of `surf`."""
        if receptors is not None:
            return self._group_velocities(dry_options, overrides, met, surf, receptors, air,
                                          outputs)
        sites = tuple(str(s) for s in met.value["site"].values)
        groups = _stages.pair_groups(surf.value, sites)
        every = tuple(str(r) for r in surf.value["receptor"].values)
        if len(groups) == 1 and groups[0][1] == every:       # every site wants every pair
            return self._group_velocities(dry_options, overrides, met, surf, None, air,
                                          outputs)
        parts = {}
        for i, (ids, recs) in enumerate(groups):
            sub = met if ids == sites else self._run("site_subset", deps={"data": met},
                                                     params={"sites": ids})
            parts[f"group{i:06d}"] = self._group_velocities(dry_options, overrides, sub,
                                                            surf, recs, air, outputs)
        return self._run("wanted_pairs", deps=parts,
                         params={"sites": sites, "receptors": every})

    def _group_velocities(self, dry_options, overrides, met: Node, surf: Node,
                          receptors, air: Node | None = None, outputs=None) -> Node:
        """The velocities stage on the sites of `met` and some receptors (None: all);
        `air` another air than the study's (its key then enters the keys of the steps
        that read the hourly ratios made from it, the gases'; the surface layer, the
        canopy state and the particle modes are those of the study's own run:
        :class:`workbench.graph.Steps`, :data:`workbench.drydep.core_steps.READS_AIR`);
        `outputs` the variables made (None: every one)."""
        ident = f"{met.key}+{surf.key}"
        steps = self.graph.steps(ident, self.counts, None if air is None else air.key)
        if air is not None:
            ident += f"+{air.key}"
        params = {"receptors": None if receptors is None else tuple(receptors)}
        if outputs is not None:            # (the whole result's key stays as it was)
            params["outputs"] = tuple(sorted(outputs))
        return self._run("velocities", {"dry": dry_options},
                         {"met": met, "surfaces": surf, "catalogue": self._catalogue_node(overrides),
                          "steps": Node(f"input:steps:{ident}", steps),
                          "air": self._input("air", self.inputs.air) if air is None else air},
                         params)

    def _needs_model(self, fixed_velocity) -> bool:
        """True when a measured dry species has no fixed velocity."""
        dry_species = [c[2] for c in COMPONENTS if c[1] == "dry"]
        measured = [sp for sp in dry_species if self.inputs.air is not None and sp in self.inputs.air]
        return self.inputs.met is not None and any(sp not in (fixed_velocity or {}) for sp in measured)

    def _velocity_sets(self, dry_options, budget_options, fixed_velocity, overrides,
                       receptors=None) -> dict:
        """Gap-filled Vd per species: (filled Vd, was filled, source), as
        :func:`workbench.drycomponents.prepare_velocities` gives them."""
        nodes = self._velocity_nodes(dry_options, budget_options, dict(fixed_velocity or {}),
                                     overrides, receptors)
        return {k: n.value["vel"] for k, n in nodes.items()}

    def _velocity_nodes(self, dry_options, budget_options, fixed_velocity, overrides,
                        receptors=None, vd=None) -> dict:
        """Nodes of the gap-filled Vd per species (model or fixed value), each a stage
        keyed by the content of the species' Vd: a dry option that leaves it as it was
        (a particle size, for the gases) reuses its fill and its rows."""
        dry_species = [c[2] for c in COMPONENTS if c[1] == "dry"]
        if vd is None:
            vd = (self._velocities_node(dry_options, overrides, receptors)
                  if self._needs_model(fixed_velocity) else _NONE)
        ids = tuple(self.catalogue(overrides).ids)
        opts = {"budget": budget_options}
        met = self._input("met", self.inputs.met)
        slots = (self._run("hour_slots", deps={"met": met})    # one time axis for all
                 if met.value is not None else _NONE)
        every = tuple(receptors) if receptors is not None else tuple(self.receptors(overrides))

        def content(var):
            d = self._run("vd_content", deps={"velocities": vd}, params={"variable": var})
            scheme = vd.value.attrs.get("gas_scheme", "model")
            return Node("vd_content:" + d.value, (vd.value[var], scheme))

        # a site's own surface that changed class inside the record: each hour's Vd is
        # filled from the hours of its class in force only (docs/methods_dry.md)
        # (asked by name: a Dataset's ``get`` of a name it lacks builds a KeyError with
        # a fuzzy "did you mean" over every variable, on every run)
        lu = (vd.value["land_use_in_force"]
              if vd.value is not None and "land_use_in_force" in vd.value.variables else None)
        fill_deps = {"slots": slots}
        if lu is not None and bool((lu != lu.isel(time=0)).any()):
            fill_deps["classes"] = content("land_use_in_force")
        # the fills' cumulative hour counts, by the content of their masks (stage
        # ``fill_counts``): species with the same gaps share one pair of arrays
        fill = functools.partial(_stages.vd_fill, counts=self._fill_counts)

        def run_fill(deps, params):
            if params["fixed"] is not None:
                return self._run("vd_fill", opts, deps, params, fn=fill)
            # the filling itself by the Vd's content (``vd_filled``): the species of
            # equal Vd (one particle mode) hold one pair of arrays
            filled = functools.partial(_stages.vd_filled, masks=self._filled_mask)
            shared = functools.partial(self._run, "vd_filled", opts, deps, fn=filled)
            return self._run("vd_fill", opts, deps, params,
                             fn=functools.partial(fill, filled=shared))
        out = {}
        for sp in dry_species:
            if sp in fixed_velocity:
                axes = self._input("axes", (ids, every, self.inputs.met["time"].values),
                                   overrides, every)
                out[sp] = run_fill({"vd": axes, "slots": slots},
                                   {"name": sp, "fixed": fixed_velocity[sp], "sites": ids})
            elif vd.value is not None and f"vd_{sp}" in vd.value:
                out[sp] = run_fill({"vd": content(f"vd_{sp}"), **fill_deps},
                                   {"name": sp, "fixed": None, "sites": ids})
        if (getattr(dry_options, "nh3_treatment", "") == "bidirectional" and vd.value is not None
                and "vd_NH3_bidirectional" in vd.value and "NH3" in out
                and "NH3" not in fixed_velocity):                   # the net NH3 flux
            for name, var in _stages.NH3_EXCHANGE.items():
                if var in vd.value:
                    out[name] = run_fill({"vd": content(var), **fill_deps},
                                         {"name": name, "fixed": None, "sites": ids})
        return out

    def _filled_mask(self, was):
        """A fill's mask of the filled hours as the ``filled_mask`` stage holds it (keyed
        by its content: the fills with their gaps in the same hours hold one)."""
        node = Node("vd_filled:" + content_digest([was]) + ":was", was)
        return self._run("filled_mask", deps={"mask": node}).value["was"]

    def _fill_counts(self, valid, was):
        """(c_valid, c_fill): the cumulative counts of a fill's (modelled, filled) masks,
        from the ``fill_counts`` stage keyed by the masks' content."""
        masks = Node("vd_fill:" + content_digest([valid, was]) + ":masks", (valid, was))
        got = self._run("fill_counts", deps={"masks": masks}).value
        return got["c_valid"], got["c_fill"]
