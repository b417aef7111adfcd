"""What-if reductions: scale S, oxidized-N and reduced-N deposition and follow the
exceedance of the critical loads along the way.

Deposition is linear in concentration: the dry flux is C Vd and the wet flux the
precipitation-weighted concentration times the depth.  So cutting the air
concentrations of a group by a fraction cuts its dry deposition by that fraction, and
cutting its concentrations in precipitation too cuts its wet deposition as well.  Two
modes, labelled in every table and figure:

* ``air_and_wet``: air concentrations and wet deposition cut together;
* ``air_only``: air concentrations only (dry deposition); wet deposition as it was.

A *path* goes from the deposition as it is (fraction 0) to the full chosen cuts
(fraction 1) in a straight line; the smallest fraction that ends an exceedance comes
from the linear constraints of the critical load function, not from a search.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from ..budget import OXIDIZED_N, REDUCED_N
from ..units import element_deposition_in
from .exceedance import acidity_exceedance, nutrient_n_exceedance

MODES = {"air_and_wet": "air concentrations and wet deposition cut together",
         "air_only": "air concentrations only, wet deposition unchanged"}
#: The groups of components that can be cut.
GROUPS = ("S", "NOx", "NHx")
GROUP_TEXT = {"S": "sulfur", "NOx": "oxidized N", "NHx": "reduced N"}
#: Fractions of the path in :func:`path_table` (0 = as it is, 1 = the full cuts).
PATH_STEPS = 21


def group_deposition(years: xr.Dataset) -> xr.Dataset:
    """Wet and dry deposition of S, oxidized N and reduced N per site, receptor and year.

    Parameters
    ----------
    years : Dataset
        The yearly budget (:attr:`workbench.pipeline.Result.years`): ``deposition``
        [mol m-2] on (site, receptor, period, component) and ``annual_factor``.

    Returns
    -------
    Dataset
        ``<group>_<pathway>`` for group in S, NOx, NHx and pathway in wet, dry
        [eq ha-1 yr-1] on (site, receptor, period); a missing component counts as 0
        (as in the budget's totals, which call such a total partial).
    """
    dep = years["deposition"]
    fac = years["annual_factor"]
    sp = years["species"].values.astype(str)
    el = years["element"].values.astype(str)
    pw = years["pathway"].values.astype(str)
    groups = {"S": el == "S", "NOx": np.isin(sp, OXIDIZED_N) & (el == "N"),
              "NHx": np.isin(sp, REDUCED_N) & (el == "N")}
    out = {}
    for g, mask in groups.items():
        element = "S" if g == "S" else "N"
        for p in ("wet", "dry"):
            sel = dep.isel(component=np.flatnonzero(mask & (pw == p)))
            amount = sel.sum("component", skipna=True, min_count=0)
            v = element_deposition_in(amount, element, "eq_ha") * fac
            out[f"{g}_{p}"] = v.assign_attrs(units="eq ha-1 yr-1")
    return xr.Dataset(out)


def scaled(parts, cuts, mode="air_and_wet"):
    """S and N deposition after cutting each group by a fraction.

    Parameters
    ----------
    parts : Dataset or mapping
        ``<group>_<pathway>`` deposition [eq ha-1 yr-1] (:func:`group_deposition`).
    cuts : mapping
        group (``S``, ``NOx``, ``NHx``) -> fraction cut, 0..1 [1]; missing groups 0.
    mode : {"air_and_wet", "air_only"}

    Returns
    -------
    (s, n)
        S and N deposition [eq ha-1 yr-1], of the type of `parts`' entries.
    """
    if mode not in MODES:
        raise ValueError(f"unknown mode {mode!r}; expected one of {', '.join(MODES)}")
    wet_too = 1.0 if mode == "air_and_wet" else 0.0
    total = {}
    for g in GROUPS:
        c = float(cuts.get(g, 0.0))
        if not 0.0 <= c <= 1.0:
            raise ValueError(f"cut of {g} = {c:g}; expected a fraction from 0 to 1")
        total[g] = parts[f"{g}_dry"] * (1.0 - c) + parts[f"{g}_wet"] * (1.0 - wet_too * c)
    return total["S"], total["NOx"] + total["NHx"]


def _cut_rate(parts, cuts, mode):
    """Decrease of S and N deposition per unit of path fraction [eq ha-1 yr-1]."""
    s0, n0 = scaled(parts, {}, mode)
    s1, n1 = scaled(parts, cuts, mode)
    return s0, n0, s0 - s1, n0 - n1


def smallest_fraction(parts, cuts, loads, mode="air_and_wet"):
    """Smallest fraction of the path that ends the exceedances.

    Parameters
    ----------
    parts : Dataset or mapping
        ``<group>_<pathway>`` deposition [eq ha-1 yr-1].
    cuts : mapping
        The full cuts, group -> fraction [1].
    loads : mapping
        ``cl_max_s``, ``cl_min_n``, ``cl_max_n``, ``cl_nut_n`` [eq ha-1 yr-1] (scalars or
        arrays broadcasting against `parts`).
    mode : {"air_and_wet", "air_only"}

    Returns
    -------
    (acidity, nutrient)
        Fractions of the path [1]: 0 where there is no exceedance, ``inf`` where even
        the full cuts leave an exceedance, NaN where an input is missing.

    Notes
    -----
    Along the path, :math:`S(t) = S_0 - t a`, :math:`N(t) = N_0 - t b`.  The region of
    no exceedance is :math:`S \\le CL_{max}S`, :math:`N \\le CL_{max}N` and
    :math:`(CL_{max}N - CL_{min}N) S + CL_{max}S\\,N \\le CL_{max}S\\,CL_{max}N`
    (the critical load function, ICP Modelling and Mapping Manual); each gives a lower
    bound on t and the fraction is the largest bound.  Nutrient N: :math:`N(t) \\le
    CL_{nut}N`.  A part below 0 (a net emission, e.g. dry NH3 with the bidirectional
    exchange) makes a rate negative: its constraint then holds up to an upper bound on
    t, and where the largest lower bound passes the smallest upper bound no fraction of
    the path ends the exceedance (``inf``).
    """
    s0, n0, a, b = (np.asarray(v, float) for v in _cut_rate(parts, cuts, mode))
    cs, c0, c1, cn = (np.asarray(loads[k], float) for k in ("cl_max_s", "cl_min_n",
                                                           "cl_max_n", "cl_nut_n"))

    def bound(excess, rate):
        """Lower and upper bound on t of excess - t rate <= 0 (a part below 0, a net
        emission, makes a rate negative: the constraint then ends at an upper bound)."""
        with np.errstate(divide="ignore", invalid="ignore"):
            lower = np.where(excess <= 0, 0.0, np.where(rate > 0, excess / rate, np.inf))
            upper = np.where((excess <= 0) & (rate < 0), excess / np.where(rate < 0, rate, -1.0),
                             np.inf)
        return lower, upper

    def first(*constraints):
        """The smallest t meeting every constraint (inf where none does)."""
        lower = np.maximum.reduce([c[0] for c in constraints])
        upper = np.minimum.reduce([c[1] for c in constraints])
        return np.where(lower <= upper, lower, np.inf)

    acid = first(bound(s0 - cs, a), bound(n0 - c1, b),
                 bound((c1 - c0) * s0 + cs * n0 - cs * c1, (c1 - c0) * a + cs * b))
    nut = first(bound(n0 - cn, b))
    acid, nut = np.where(acid > 1, np.inf, acid), np.where(nut > 1, np.inf, nut)
    missing = np.isnan(s0) | np.isnan(n0)
    acid = np.where(missing | np.isnan(cs) | np.isnan(c0) | np.isnan(c1), np.nan, acid)
    nut = np.where(missing | np.isnan(cn), np.nan, nut)
    return acid, nut


def path_table(parts, cuts, loads, mode="air_and_wet", steps=PATH_STEPS) -> pd.DataFrame:
    """Deposition and exceedance along a path, for one site, receptor and year.

    Parameters
    ----------
    parts : mapping
        ``<group>_<pathway>`` deposition of one site, receptor and year, scalars
        [eq ha-1 yr-1].
    cuts, loads, mode
        As :func:`smallest_fraction`.
    steps : int
        Number of evenly spaced fractions from 0 to 1; the fractions that end the
        exceedances (when inside the path) are added.

    Returns
    -------
    DataFrame
        ``fraction`` [1], the cut of each group [1], ``s_dep_eq_ha_yr``,
        ``n_dep_eq_ha_yr``, ``ex_acidity_eq_ha_yr``, ``region``,
        ``ex_nutrient_n_eq_ha_yr`` [eq ha-1 yr-1], ``mode``, and ``ends_exceedance``
        (True on a fraction that ends an exceedance: its percents are said rounded up by
        :func:`percent_up`, in the sentence and in the table alike).
    """
    s0, n0, a, b = (float(v) for v in _cut_rate(parts, cuts, mode))
    t_acid, t_nut = (float(v) for v in smallest_fraction(parts, cuts, loads, mode))
    t = np.linspace(0.0, 1.0, steps)
    t = np.unique(np.concatenate([t, [v for v in (t_acid, t_nut) if 0 < v < 1]]))
    s, n = s0 - t * a, n0 - t * b
    ex = acidity_exceedance(np.maximum(s, 0.0), np.maximum(n, 0.0),
                            *(loads.get(k, np.nan) for k in ("cl_max_s", "cl_min_n", "cl_max_n")))
    frame = pd.DataFrame({"fraction": t})
    for g in GROUPS:
        frame[f"cut_{g}"] = t * float(cuts.get(g, 0.0))
    frame = frame.assign(s_dep_eq_ha_yr=s, n_dep_eq_ha_yr=n, ex_acidity_eq_ha_yr=ex.exceedance,
                         region=ex.region, ex_nutrient_n_eq_ha_yr=nutrient_n_exceedance(
                             np.maximum(n, 0.0), loads.get("cl_nut_n", np.nan)), mode=mode,
                         ends_exceedance=np.isin(t, [v for v in (t_acid, t_nut) if 0 < v < 1]))
    return frame


#: Below this many percent a cut is taken as whole when it is rounded up (floating-point
#: noise of t x cut, e.g. 25.000000000000004 %) [%].
PERCENT_NOISE = 1e-9


def percent_up(fraction):
    """A needed fraction [1] as whole percent [%], rounded up: cutting the stated percent
    ends the exceedance (rounded to the nearest, 17.4 % read "17 %", and a cut of 17 %
    left an exceedance).  The one rounding of a needed cut: the explorer's sentence,
    the star of its figure and the rows of its table that end an exceedance.

    >>> percent_up(0.174), percent_up(0.25), percent_up(0.003)
    (18, 25, 1)
    >>> percent_up(np.array([1 / 3, 0.5])).tolist()
    [34.0, 50.0]
    """
    # + 0.0: a cut of 0 gives 0, not ceil(-noise) = -0.0 (the path table read "-0")
    up = np.ceil(100.0 * np.asarray(fraction, dtype=float) - PERCENT_NOISE) + 0.0
    return int(up) if up.ndim == 0 else up


def _cuts_text(cuts, t) -> str:
    parts = [f"{GROUP_TEXT[g]} by {percent_up(t * float(cuts.get(g, 0.0)))} %"
             for g in GROUPS if float(cuts.get(g, 0.0)) > 0]
    return ", ".join(parts) if parts else "nothing"


def plain_statement(parts, cuts, loads, mode="air_and_wet", where="") -> str:
    """What the path does, said plainly (one or two sentences).

    >>> parts = {"S_wet": 300.0, "S_dry": 300.0, "NOx_wet": 0.0, "NOx_dry": 0.0,
    ...          "NHx_wet": 0.0, "NHx_dry": 0.0}
    >>> loads = {"cl_max_s": 450.0, "cl_min_n": 0.0, "cl_max_n": 900.0, "cl_nut_n": 500.0}
    >>> print(plain_statement(parts, {"S": 0.5}, loads, where="test"))
    test: Cutting sulfur by 25 % (air concentrations and wet deposition cut together) ends the acidity exceedance. There is no nutrient-N exceedance.
    """
    t_acid, t_nut = (float(v) for v in smallest_fraction(parts, cuts, loads, mode))
    head = f"{where}: " if where else ""
    label = MODES[mode]
    out = []
    for name, t in (("acidity", t_acid), ("nutrient-N", t_nut)):
        if np.isnan(t):
            out.append(f"The {name} exceedance cannot be computed (no critical load or no "
                       "deposition).")
        elif t == 0:
            out.append(f"There is no {name} exceedance.")
        elif np.isinf(t) or t > 1:
            article = "an" if name[0] in "aeiou" else "a"       # an acidity exceedance
            out.append(f"Even cutting {_cuts_text(cuts, 1.0)} ({label}) leaves {article} "
                       f"{name} exceedance.")
        else:
            out.append(f"Cutting {_cuts_text(cuts, t)} ({label}) ends the {name} exceedance.")
    paths = ("dry", "wet") if mode == "air_and_wet" else ("dry",)
    net = [f"{GROUP_TEXT[g]} {p}" for g in GROUPS if float(cuts.get(g, 0.0)) > 0
           for p in paths if float(parts[f"{g}_{p}"]) < 0]
    if net:
        out.append(f"Here {' and '.join(net)} deposition is a net emission: the cut scales "
                   "it as a flux in proportion to the concentration, which an exchange "
                   "flux is not, so this estimate is rough.")
    return head + " ".join(out)        # every sentence starts with a capital letter
