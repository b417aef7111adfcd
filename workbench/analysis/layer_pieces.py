"""The arrays of the linear layer (:mod:`workbench.analysis.layer`): the dry and wet
pieces of a site, a site's layer and a budget's, and what names a sample
(:func:`sample_identity`), the years of the periods and a site's change instants.
Re-exported by :mod:`workbench.analysis.layer`.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..budget import COMPONENTS


#: Dry species of the budget, in the order of :data:`workbench.budget.COMPONENTS`.
DRY_SPECIES = tuple(c[2] for c in COMPONENTS if c[1] == "dry")
#: Wet ions of the budget, in the order of :data:`workbench.budget.COMPONENTS`.
WET_IONS = tuple(c[2] for c in COMPONENTS if c[1] == "wet")


@dataclass
class DryPieces:
    """Per-sample contributions of one dry species at one site."""

    contrib: np.ndarray      #: (n, P, R) [mol m-2] each sampling period's part
    censored: np.ndarray     #: (n,) bool, concentration below detection (substituted)
    filled: np.ndarray       #: (n, P, R) [1] share of the row's deposition in each period
    #: that its hours without a modelled Vd carry (gap-filled, or missing and taken as the
    #: row's mean Vd; :func:`workbench.drycomponents.row_filled_deposition_share`)
    row_id: np.ndarray       #: (n,) int, row number within the component's rows (stable
    #: per site; under pair_split the moved-into species' rows are both members')
    ident: list              #: (n,) the identity of each row's sample: (member species,
    #: sampler id, start [ns since 1970], occurrence), see :func:`sample_identity`
    #: (n,) start and end of each row's sample [datetime64 ns] (its laboratory period)
    start: np.ndarray | None = None
    end: np.ndarray | None = None
    #: (n, R) land-use class of each row at each receptor (the class in force at the
    #: sample's middle for a site's own surface with a declared history); None: the
    #: receptor's name
    klass: np.ndarray | None = None
    #: (n, P, R) [mol m-2] of non-sea-salt pSO4 only: the sea-salt sulfate each row's
    #: contribution had taken off (0.0605 pNa at the row's Vd), so that ``contrib +
    #: seasalt`` is the total pSO4's part; the Monte Carlo draws the pSO4 and the pNa
    #: analyses apart (:func:`workbench.analysis.uncertainty.nss_dry_draws`). None:
    #: not a non-sea-salt component.
    seasalt: np.ndarray | None = None
    #: (n,) bool of non-sea-salt pSO4 only: the row's pNa was below detection, its
    #: sea-salt sulfate from the substitute of ``[budget] air_censored`` (drawn with
    #: ``censored_rel_sd``, :func:`workbench.analysis.noise.site_noise`). None: none.
    seasalt_censored: np.ndarray | None = None
    #: (n, P, R) [mol m-2] of NH3 under ``nh3_treatment = "bidirectional"`` only: each
    #: row's deposition part C vd_NH3_bidirectional and its emission part of the net
    #: exchange (``rows["nh3_exchange"]``), so that ``(exchange - emission).sum(0)`` is
    #: the budget's net NH3; the Monte Carlo draws the concentration errors on the
    #: deposition part alone and the Gamma_s factor on the emission part alone
    #: (:func:`workbench.analysis.uncertainty.nh3_net_draws`).  Under ``pair_split =
    #: "all_gas"`` a moved pNH4 row holds its deposition part at the exchange's Vd and
    #: no emission; under ``"all_particle"`` the NH3 samples' rows hold the emission
    #: alone (``contrib`` and ``exchange`` 0: the net is -E).  None: deposition only
    #: (or an exchange the rows cannot be matched to).
    exchange: np.ndarray | None = None
    emission: np.ndarray | None = None
    #: (n,) int, each row's row in the air Dataset (its concentration; the velocities
    #: that follow the drawn air, :mod:`workbench.analysis.airvd`). None: not kept.
    air_row: np.ndarray | None = None


@dataclass
class WetPieces:
    """(sample, period) pieces of the precipitation samples of one site."""

    sample: np.ndarray       #: (m,) int, local sample number 0..n_samples-1
    period: np.ndarray       #: (m,) int, reporting period
    weight: np.ndarray       #: (m,) [mm] w = P_i f_ip <1/m>_ip (wet.deposition.sample_weights)
    conc: dict               #: ion -> (m,) [mol m-3], 0 where not valid
    valid: dict              #: ion -> (m,) bool, used sample with a value
    censored: dict           #: ion -> (m,) bool, below detection
    n_samples: int
    ident: list              #: (n_samples,) the identity of each sample: (sampler id,
    #: start [ns since 1970], occurrence), see :func:`sample_identity`
    #: (n_samples,) start and end of each sample [datetime64 ns] (its gauge and
    #: laboratory periods)
    start: np.ndarray | None = None
    end: np.ndarray | None = None
    #: (m,) int, each piece's row in the wet chain's sample-weights table (where the
    #: ``collector_split`` stage's bulk share of each piece is found)
    row: np.ndarray | None = None


@dataclass
class SiteLayer:
    dry: dict = field(default_factory=dict)      #: species -> DryPieces
    wet: WetPieces | None = None
    wet_filled: np.ndarray | None = None         #: (P,) bool, PWM from the climatology
    pwm: dict = field(default_factory=dict)      #: ion -> (P,) point PWM [mol m-3]
    #: instants [datetime64 ns] (00:00 UTC of the date) of the site's declared gauge
    #: and laboratory changes (``[[site.change]] what = "gauge"`` / ``"laboratory"``),
    #: in date order: they split the record into gauge and laboratory periods
    gauge_changes: np.ndarray = field(default_factory=lambda: np.array([], "datetime64[ns]"))
    lab_changes: np.ndarray = field(default_factory=lambda: np.array([], "datetime64[ns]"))
    #: the laboratory id of each laboratory period (len(lab_changes) + 1; None: not
    #: named, a laboratory of the site's own) of the precipitation and of the air samples
    lab_ids: list = field(default_factory=lambda: [None])
    air_lab_ids: list = field(default_factory=lambda: [None])
    #: wet component index -> :class:`workbench.analysis.bulk.BulkPart`: the share of
    #: the component's deposition that its bulk samples carry (``bulk_correction =
    #: "scale_wet"``); empty otherwise
    bulk_part: dict = field(default_factory=dict)
    #: (m,) bulk share of each wet piece [1] where a collector changed (the share of a
    #: period holding the change is redrawn with the samples); None otherwise
    bulk_beta: np.ndarray | None = None
    #: pair -> species moved into -> DryPieces of the other member at its Vd, for a
    #: drawn gas/particle split (:func:`workbench.analysis.pairlayer.moved_pieces`)
    pair_moved: dict = field(default_factory=dict)
    #: species -> :class:`workbench.analysis.airvd.AirVdPieces`: its rows' parts on the
    #: grid of the air ratio its Vd takes (``[uncertainty] vd_follows_air``); empty
    #: otherwise
    air_vd: dict = field(default_factory=dict)


@dataclass
class LinearLayer:
    """The pieces of one budget Dataset (a resolution), per site.

    Attributes
    ----------
    budget : xarray.Dataset
        The point budget (dims site, receptor, period, component).
    sites : list of SiteLayer
        In the order of ``budget.site``.
    period_year : ndarray (P,) of int
        Year of each period, for the systematic factors when they are drawn anew
        each year (``systematic_errors = "each_year"``).
    wet_component : dict
        Component index -> wet ion or ``"nssSO4"``.
    tracer : str
        Sea-salt tracer of the non-sea-salt sulfate.
    air_vd_grid : bool
        Whether the grid of ``vd_follows_air`` was built (:mod:`.airvd`).
    """

    budget: object
    sites: list
    period_year: np.ndarray
    wet_component: dict
    tracer: str = "Na"
    #: Built with the grid of the air ratio (``linear_layer(..., air_vd=True)``,
    #: ``[uncertainty] vd_follows_air``): its sites' ``air_vd`` hold what follows the
    #: air, empty where nothing does.  False: no site's was looked for.
    air_vd_grid: bool = False


def sample_identity(sampler, start, species=None) -> list:
    """What names a sample, whatever run it is in: its sampler id and start time.

    Parameters
    ----------
    sampler : ndarray of str (n,)
        ``sampler_id`` of each sample ("" where the file gives none).
    start : ndarray of datetime64 (n,)
        Start of each sample.
    species : ndarray of str (n,), optional
        The species of an air sample's value (put first in its identity).

    Returns
    -------
    list of tuple
        ``([species,] sampler, start [ns since 1970], occurrence)``, occurrence
        counting the samples with the same species, sampler and start in the order
        given (0 but for duplicates), so that no two samples of a site share an
        identity.  The site id is not in it: a site's streams are named by it already.
    """
    sampler = np.asarray(sampler).astype(str)
    ns = np.asarray(start, dtype="datetime64[ns]").astype(np.int64)
    sp = np.full(len(ns), "") if species is None else np.asarray(species).astype(str)
    occ = pd.DataFrame({"k": sp, "s": sampler, "t": ns}).groupby(
        ["k", "s", "t"], sort=False).cumcount().to_numpy()
    return [((k,) if species is not None else ()) + (s, int(t), int(o))
            for k, s, t, o in zip(sp, sampler, ns, occ)]


def period_years(periods: pd.DataFrame) -> np.ndarray:
    """Year of each period [int]: its ``year`` column, else the year it starts."""
    year = periods["year"].to_numpy()
    start = pd.DatetimeIndex(periods["start"]).year.to_numpy()
    return np.where(year > 0, year, start).astype(int)


def change_instants(site, what: str) -> np.ndarray:
    """00:00 UTC of the dates of a site's declared changes of kind `what`, in order
    [datetime64 ns] (none for a site without a ``changes`` attribute)."""
    dates = sorted(c.date for c in getattr(site, "changes", ()) or () if c.what == what)
    return np.array([np.datetime64(d.isoformat(), "ns") for d in dates], "datetime64[ns]")
