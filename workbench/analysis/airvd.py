"""Velocities that follow the drawn air (``[uncertainty] vd_follows_air``).

Under ``[dry] so2_codeposition`` the SO2 surface resistance takes the hourly NH3/SO2
molar ratio of the air, under ``nh3_acid_ratio_from_air`` the NH3 cuticle takes the
acid ratio (2 SO2 + HNO3)/NH3 (docs/methods_dry.md).  The draws of the Monte Carlo
scale each air sample by its errors; by default they keep the velocities of the
measured air.  With ``vd_follows_air`` they follow the drawn ratio:

1. the velocities are run again on the study's air with its NH3 scaled by each factor
   k of :data:`GRID_FACTORS` (stages ``air_scaled`` and ``velocities`` of the graph,
   keyed by their declared option fields and by the factor: nothing here writes a
   key), and the dry rows on them with the measured concentrations, both for the
   species whose Vd follows the air only (:func:`grid_options`; the runs make those
   Vd alone, :func:`air_outputs`).  Each factor's rows are the stage
   ``air_vd_rows``, its velocities, fills and sums made in a scratch graph that reads
   the study's cache and is dropped with the rows (:func:`_rows_on_air`).  The point
   run is the grid's k = 1.  NH3 scaled by k moves the NH3/SO2 ratio by c = k and the acid
   ratio by c = 1/k, and each of the two velocities takes its own ratio only, so one
   grid serves both options;
2. each sampling period's part A_npr(c) of the species whose Vd follows the air (SO2,
   NH3) is kept on that grid of c (:class:`AirVdPieces`);
3. a draw's factor q_n of the ratio over sample n's hours is made from its air factors
   of the ratio's species (the amount-weighted mean factor of each species over the
   sample's hours, :meth:`AirVdPieces.ratio_factor`), and the part is interpolated
   linearly in log c (held at the grid's ends outside it, and counted: :func:`held`,
   named in the report and on the console):

   .. math:: D^{(d)} = F \\sum_g \\sum_n B_g(\\ln q^{(d)}_n)\\, \\delta^{(d)}_n
             (1 + \\phi_n \\eta^{(d)}_n)\\, A_{npr}(c_g)

   with B_g the hat functions of the grid: G matrix products per draw block, no
   loop over hours or draws.

Per sampling period, not per hour: a draw's air errors are per sample, so where one
filter pack samples the ratio's species the factor of the ratio is one number over a
sample's hours and the sample's deposition at factor c is exactly the engine's on air
scaled by c; interpolating the samples' parts (n, P, R) costs D n P R per grid point
against D H R for hours and needs no new integration over hours.  Where the ratio's
species come from different samplers (a monthly NH3 beside weekly SO2), the factor of
a sample is the amount-weighted mean over its hours, an approximation.

Units: deposition [mol m-2], factors [1].
"""
from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from ..graph import declare, stage
from ..stages import ROW_OPTIONS, VELOCITY_OPTIONS
from .drawratio import class_ratio, safe_ratio as _safe_ratio

#: Factors k of the NH3 concentration the velocities are run on [1]: 9 from 0.5 to 2,
#: equally spaced in log k (our choice: benchmarks/air_dependent_vd.py found a draw's
#: factor of the ratio within 0.5-2 but for a few per mille of the samples under the
#: default errors; docs/methods_uncertainty.md gives the error measured against engine
#: runs on drawn air).  k = 1 (the middle) is the point run.
GRID_FACTORS = tuple(float(x) for x in 2.0 ** np.linspace(-1.0, 1.0, 9))
#: ``[dry]`` option -> the species whose Vd follows the air under it.
TARGETS = {"so2_codeposition": "SO2", "nh3_acid_ratio_from_air": "NH3"}
#: The species of the two ratios.
RATIO_SPECIES = ("SO2", "HNO3", "NH3")


@stage("air_scaled")
def air_scaled(o, air, species, factor):
    """The air with one species' concentrations and detection limits times `factor`
    [1] (analysis.airvd: the velocities of the Monte Carlo's grid on scaled air)."""
    out = {species: air[species].copy(data=air[species].values * factor)}
    dl = f"{species}_detection_limit"
    if dl in air:
        out[dl] = air[dl].copy(data=air[dl].values * factor)
    return air.assign(out)


declare("air_vd_rows", {"dry": VELOCITY_OPTIONS, "budget": ROW_OPTIONS},
        doc="the dry rows of the species whose Vd follows the air, on the velocities of "
            "a run on scaled air (analysis.airvd; its velocities, fills and sums are "
            "computed in a scratch graph, not cached)")


def _rows_on_air(study, scaled, overrides, o, air, measured, met, catalogue, species,
                 receptors, fixed):
    """The ``air_vd_rows`` stage: the dry rows of `species` on the velocities of the
    study's met with the air of the node `scaled` (the rows' concentrations are the
    measured ones, `measured`).  Its inner results (the velocities of each group of
    sites, their layout, the fills, the sums) are stages of a scratch graph
    (:meth:`workbench.graph.Graph.scratch`): those that read no air are found in the
    study's cache (the surface layer, canopy state, particle modes, hour slots, the
    fills' hour counts), the others are dropped with the rows made."""
    sub = study._in_graph(study.graph.scratch())
    vd = sub._velocities_node(o.dry, overrides, receptors, air=scaled,
                              outputs=air_outputs(species))
    return sub._dry_rows_node(o.dry, o.budget, dict(fixed), overrides, receptors, vd=vd,
                              species=species).value


def targets(dry_options, fixed_velocity=None) -> tuple:
    """The species whose modelled Vd follows the air under `dry_options` (not those
    given a fixed velocity)."""
    fixed = fixed_velocity or {}
    return tuple(sp for opt, sp in TARGETS.items()
                 if getattr(dry_options, opt, False) and sp not in fixed)


def grid_options(dry_options, want):
    """`dry_options` with ``gases`` the species of `want` (:func:`targets`) only, in
    their order there: the velocities of the grid's runs on scaled air.  Each gas's Rb,
    Rc and Vd is its own (the NH3 exchange, which reads others, is refused under the
    option: :func:`refusal`), so those of `want` are the bits of the run of every gas."""
    import dataclasses
    return dataclasses.replace(
        dry_options, gases=tuple(g for g in dry_options.gases if g in want))


def air_outputs(want) -> tuple:
    """The velocity variables the grid's runs on scaled air make: the Vd of the species
    of `want` (:func:`targets`) and the pairs asked for (``active``, what a site's
    declared land-use changes read).  Every other variable would be the bits of the
    point run's (its steps do not read the air), held again in a new layout at each
    factor of the grid; the Vd made are the bits of a run making every variable."""
    return ("active", *(f"vd_{sp}" for sp in want))


def refusal(dry_options, budget_options, options) -> str | None:
    """Why ``vd_follows_air = true`` cannot apply to a run, in words, or None.

    It applies where ``[dry] so2_codeposition`` or ``nh3_acid_ratio_from_air`` is on,
    the pairs are deposited as measured (``[budget] pair_split = "measured"``: the
    grid's rows are matched one to one to the point's, each to its own species' air),
    no gas/particle split is drawn (it moves the ratios by far more than the air
    errors, :func:`.uncertainty_options.pair_shift_refusal`), and, with
    ``nh3_acid_ratio_from_air``, the NH3 is deposition only (the bidirectional
    exchange's emission takes the acid ratio too, which the grid does not follow).
    """
    if not getattr(options, "vd_follows_air", False):
        return None
    if not any(getattr(dry_options, k, False) for k in TARGETS):
        return ("it applies where [dry] so2_codeposition or nh3_acid_ratio_from_air is "
                "true (a velocity that depends on the air); neither is, so the draws' "
                "velocities follow nothing")
    if getattr(budget_options, "pair_split", "measured") != "measured":
        return (f"it needs [budget] pair_split = \"measured\" (it is "
                f"\"{budget_options.pair_split}\"): the velocities on the grid of air are "
                "matched to the measured samples of each species")
    if getattr(options, "shifts_pairs", False):
        return ("it cannot be combined with a drawn gas/particle split (pair_shift_nitrate, "
                "pair_shift_ammonium): set them to [0, 0]")
    if (getattr(dry_options, "nh3_acid_ratio_from_air", False)
            and getattr(dry_options, "nh3_treatment", None) == "bidirectional"):
        return ("it does not follow the acid ratio under [dry] nh3_treatment = "
                "\"bidirectional\" (the exchange's emission takes the ratio too): use "
                "nh3_treatment = \"deposition_only\" or a fixed nh3_acid_ratio")
    return None


@dataclass
class AirVdPieces:
    """The parts of one species' sampling periods on the grid of the air ratio, at one
    site, and what makes a draw's factor of that ratio."""

    species: str             #: "SO2" (NH3/SO2 ratio) or "NH3" (acid ratio)
    log_c: np.ndarray        #: (G,) ln of the ratio's factor of each grid run, ascending
    table: np.ndarray        #: (G, n, P, R) [mol m-2] each row's part at each factor
    #: ratio species -> (columns of its rows in ``noise.air``, (n, m) amount-weighted
    #: overlap of each of this species' rows with its rows, rows summing to 1 or 0)
    partners: dict
    mean: dict               #: ratio species -> (n,) its mean amount over the row [mol m-3]

    def ratio_factor(self, air: dict) -> np.ndarray:
        """(D, n) the drawn factor of the ratio over each row [1] from the draws' air
        factors (`air`: species -> (D, rows) of ``noise.air``); 1 where a species of
        the ratio has no sample over the row (the engine's ratio is then unknown and
        the velocity does not take it)."""
        f = {}
        for sp, (cols, w) in self.partners.items():
            has = w.sum(1) > 0
            f[sp] = np.where(has[None], air[sp][:, cols] @ w.T, 1.0) if len(cols) else 1.0
        with np.errstate(divide="ignore", invalid="ignore"):
            if self.species == "SO2":
                q = f["NH3"] / f["SO2"]
            else:
                s, h = 2.0 * self.mean["SO2"], self.mean["HNO3"]
                ws = np.where(s + h > 0, s / np.where(s + h > 0, s + h, 1.0), 0.5)
                q = (ws * f["SO2"] + (1.0 - ws) * f["HNO3"]) / f["NH3"]
        return np.where(np.isnan(q), 1.0, q)

    def held(self, air: dict) -> np.ndarray:
        """(D, n) bool: the draw's factor of the ratio over the row lies outside the grid,
        so that :meth:`basis` takes the row's part at the grid's end (not extrapolated)."""
        with np.errstate(divide="ignore"):
            lq = np.log(self.ratio_factor(air))
        return (lq < self.log_c[0]) | (lq > self.log_c[-1])

    def basis(self, air: dict) -> list:
        """``[(B_g (D, n), table_g (n, P, R))]``: the hat-function weights of each grid
        run for each draw and row (linear in ln q, held at the grid's ends)."""
        x = self.log_c
        with np.errstate(divide="ignore"):
            lq = np.clip(np.log(self.ratio_factor(air)), x[0], x[-1])
        i = np.clip(np.searchsorted(x, lq) - 1, 0, len(x) - 2)
        t = (lq - x[i]) / (x[i + 1] - x[i])
        out = []
        for g in range(len(x)):
            b = np.where(i == g, 1.0 - t, 0.0) + np.where(i + 1 == g, t, 0.0)
            if b.any():
                out.append((b, self.table[g]))
        return out


def dry_ratio_on_grid(pieces, vd_factor, air, vd_fill, basis, class_factor=None):
    """Draws of a dry component over the point, its velocity following the drawn air:
    (D, R, P) [1]; :func:`.drydraws.dry_ratio` with each row's part taken from the grid
    (`basis`, :meth:`AirVdPieces.basis`) instead of the point's."""
    a = pieces.contrib
    n, n_p, n_r = a.shape
    phi = pieces.filled.reshape(n, -1)

    def drawn(mask=None):                       # (D, P R) the drawn sum of the rows
        s = 0.0
        for b, tab in basis:
            c = (tab if mask is None else tab * mask[:, None, None]).reshape(n, -1)
            x = b * air
            s = s + x @ c + (x * vd_fill) @ (phi * c)
        return s
    total = a.reshape(n, -1).sum(0)
    ratio = np.maximum(1.0 + _safe_ratio(drawn() - total, total), 0.0).reshape(-1, n_p, n_r)
    if not class_factor:
        return (vd_factor[:, :, None] * ratio).transpose(0, 2, 1)
    return class_ratio(pieces, ratio, vd_factor, class_factor,
                       lambda of_class, r: drawn(of_class).reshape(-1, n_p, n_r)[:, :, r])


def held(site, grids: dict, air: dict) -> list:
    """The draws of one site held at the grid's end: ``[(site, species, draws, held
    draws, held sample draws, sample draws)]`` for each species of `grids` (species ->
    :class:`AirVdPieces`) with a held row, `air` the draws' air factors (species ->
    (D, rows) of ``noise.air``).  A draw is held where the factor of the ratio over at
    least one of the species' samples falls outside the grid (``GRID_FACTORS``, 0.5-2):
    that sample's part is then the grid's end's, not the engine's on the drawn air."""
    out = []
    for sp, g in grids.items():
        m = g.held(air)
        if m.any():
            out.append((str(site), sp, m.shape[0], int(m.any(1).sum()), int(m.sum()),
                        int(m.size)))
    return out


def held_words(held_list, limit=5) -> str:
    """`held_list` (:func:`held` of each site) in words: "n of D draws at site x held at
    the grid's end for Vd(SO2) in a sample or more (h of N sample draws)", the first
    `limit` sites named and the rest counted; "" where none was held."""
    if not held_list:
        return ""
    from ..report_numbers import number
    sites = list(dict.fromkeys(x[0] for x in held_list))
    keep = set(sites[:limit])
    parts = [f"{number(h)} of {number(d)} draws at site {site} held at the grid's end for "
             f"Vd({sp}) in a sample or more ({number(hs)} of {number(ns)} sample draws)"
             for site, sp, d, h, hs, ns in held_list if site in keep]
    if len(sites) > limit:
        parts.append(f"and draws at {number(len(sites) - limit)} more sites")
    return ", ".join(parts)


def _overlap(start, end, start2, end2) -> np.ndarray:
    """(n, m) hours shared by rows [start, end) and rows [start2, end2) [h]."""
    s = np.maximum(start[:, None], start2[None, :])
    e = np.minimum(end[:, None], end2[None, :])
    return np.maximum((e - s) / np.timedelta64(1, "h"), 0.0)


def grid_pieces(study, result, point, periods, sites, n_r, histories, nss, censored,
                overrides=None) -> list:
    """Per site, species -> :class:`AirVdPieces` of the species whose Vd follows the
    air (empty where none).

    Parameters
    ----------
    study, result
        The run (its ``options``: ``dry``, ``budget``, ``fixed_velocity``,
        ``receptors``).
    point : list of dict
        The point's dry pieces per site (:func:`workbench.analysis.layer_dry._dry_layers`).
    periods, sites, n_r, histories, nss, censored
        As :func:`workbench.analysis.layer.linear_layer` gives them to ``_dry_layers``.
    """
    from ..dryflux import _censored_values
    from .layer_dry import _dry_layers
    opts = result.options
    dry_opt, bud_opt = opts["dry"], opts["budget"]
    fixed = dict(opts.get("fixed_velocity") or {})
    want = targets(dry_opt, fixed)
    air = study.inputs.air
    out = [dict() for _ in sites]
    if not want or air is None or "NH3" not in air:
        return out
    receptors = opts.get("receptors")
    air0 = study._input("air", air)
    # the grid asks for the gases whose Vd reads the air only (`gases`, a declared
    # option of the gases' step: its key follows), and its dry rows for them only
    grid_dry = grid_options(dry_opt, want)
    on_grid = {}
    for k in GRID_FACTORS:
        if k == 1.0:
            on_grid[k] = point
            continue
        scaled = study._run("air_scaled", deps={"air": air0},
                            params={"species": "NH3", "factor": k})
        rows = study._run(
            "air_vd_rows", {"dry": grid_dry, "budget": bud_opt},
            {"air": scaled, "measured": air0, "met": study._input("met", study.inputs.met),
             "catalogue": study._catalogue_node(overrides)},
            {"species": want, "receptors": receptors, "fixed": fixed},
            fn=functools.partial(_rows_on_air, study, scaled, overrides)).value
        on_grid[k] = _dry_layers(rows, periods, sites, n_r, air, histories, nss=nss,
                                 censored=censored)
    amount = {sp: _censored_values(air, sp, "half")[0] for sp in RATIO_SPECIES if sp in air}
    for j in range(len(sites)):
        for sp in want:
            p0 = point[j].get(sp)
            if p0 is None:
                continue
            tables = []
            for k in GRID_FACTORS:
                pk = on_grid[k][j].get(sp)
                if pk is None or pk.ident != p0.ident:
                    raise ValueError(f"vd_follows_air: the {sp} samples of site {sites[j]!r} "
                                     f"differ between the point run and the run on NH3 x {k:g}")
                tables.append(pk.contrib)
            c = np.log(GRID_FACTORS) * (1.0 if sp == "SO2" else -1.0)
            order = np.argsort(c)
            partners, mean = {}, {}
            for sp2 in RATIO_SPECIES:
                q = point[j].get(sp2)
                if q is None or sp2 not in amount or q.air_row is None:
                    partners[sp2] = (np.array([], int), np.zeros((len(p0.ident), 0)))
                    mean[sp2] = np.zeros(len(p0.ident))
                    continue
                cols = np.flatnonzero([i[0] == sp2 for i in q.ident])
                conc = np.nan_to_num(amount[sp2][q.air_row[cols]])
                hours = _overlap(p0.start, p0.end, q.start[cols], q.end[cols])
                w = hours * conc[None, :]
                tot = w.sum(1)
                partners[sp2] = (cols, np.where(tot[:, None] > 0, w / np.where(
                    tot[:, None] > 0, tot[:, None], 1.0), 0.0))
                h = hours.sum(1)
                mean[sp2] = np.where(h > 0, tot / np.where(h > 0, h, 1.0), 0.0)
            out[j][sp] = AirVdPieces(sp, c[order], np.stack(tables)[order], partners, mean)
    return out


def air_only_draws(grid: AirVdPieces, air: dict) -> np.ndarray:
    """(D, P, R) [mol m-2] the species' deposition of each draw with its air factors
    alone (no Vd factor, no fill error): sum over the rows of the row's air factor times
    its part at the draw's factor of the ratio, read off the grid.  What an engine run
    on the draw's air gives (:func:`air_of_draw`; the check of
    docs/methods_uncertainty.md)."""
    a = air[grid.species]
    return sum(np.einsum("dn,npr->dpr", b * a, tab) for b, tab in grid.basis(air))


def air_of_draw(air, site_layer, factors: dict, d: int):
    """The air Dataset of draw `d`: each row behind a site's dry pieces of SO2, HNO3 and
    NH3 times its drawn factor (``factors``: species -> (D, n) of ``noise.air``), its
    detection limit too (a value below detection is drawn as its substitute).  The
    other rows stay as measured.  [the air's units]"""
    out = {}
    for sp in RATIO_SPECIES:
        p = site_layer.dry.get(sp)
        if p is None or sp not in air or p.air_row is None:
            continue
        own = np.flatnonzero([i[0] == sp for i in p.ident])
        f = np.ones(air.sizes["period"])
        f[p.air_row[own]] = factors[sp][d, own]
        for name in (sp, f"{sp}_detection_limit"):
            if name in air:
                out[name] = air[name].copy(data=air[name].values * f)
    return air.assign(out)
