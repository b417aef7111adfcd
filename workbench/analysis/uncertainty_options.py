"""The options of the Monte Carlo of the budget (scenario section ``[uncertainty]``).

:class:`UncertaintyOptions` with its defaults and their sources, and the default
geometric standard deviations of the Vd model factor per species and of the stomatal
NH3 emission potential.  GSDs [1], relative standard deviations [1].  The draws that
use them are in :mod:`.noise`, :mod:`.sitedraws` and :mod:`.montecarlo`; the
equations in :mod:`.uncertainty` and ``docs/methods_uncertainty.md``.
"""
from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field

from .layer import DRY_SPECIES


#: Geometric standard deviation of the Vd model factor per species [1].  Values chosen
#: from memory of the spread among inferential models in Flechard et al. (2011),
#: Atmos. Chem. Phys. 11, 2703-2728 (a factor of about 2 for reactive N dry
#: deposition, smaller for SO2 and HNO3 whose Vd is mostly aerodynamic).  The paper
#: compares the models' fluxes and gives no GSD: taking its spread as one geometric
#: standard deviation (NH3: 68 % of the draws within a factor of 2, 90 % within 3.1) is
#: our judgement; ``[uncertainty.vd_gsd]`` sets it per species.
DEFAULT_VD_GSD = {"SO2": 1.5, "pSO4": 1.8, "HNO3": 1.4, "pNO3": 1.8, "pNH4": 1.8,
                  "NH3": 2.0, "NO2": 2.0}


#: Geometric standard deviation of the stomatal NH3 emission potential Gamma_s of a
#: site's land-use class [1] (:attr:`UncertaintyOptions.nh3_gamma_gsd`).  Our choice,
#: from memory of the scatter of measured Gamma_s about the relation with the nitrogen
#: input in the review of Massad et al. (2010), Atmos. Chem. Phys. 10, 10359-10386
#: (about a factor of 3 either way within one kind of surface, while the classes span
#: orders of magnitude, tens for unfertilised semi-natural land to thousands for
#: fertilised crops): a class default or a site's value is known to within a factor of
#: about 3 at one standard deviation.
DEFAULT_NH3_GAMMA_GSD = 3.0


#: The ways of drawing the systematic factors (:attr:`UncertaintyOptions.systematic_errors`).
SYSTEMATIC_ERRORS = ("shared", "each_year")


@dataclass(frozen=True)
class UncertaintyOptions:
    """The Monte Carlo of the budget (scenario section ``[uncertainty]``).

    Attributes
    ----------
    draws : int
        Number of draws; 0 switches the Monte Carlo off (default).
    seed : int
        Seed of the random numbers: the same seed gives the same numbers.
    vd_gsd : dict
        species -> geometric standard deviation of the Vd model factor [1], log-normal
        with median 1; 1 removes it.  Defaults from
        memory of the model spread in Flechard et al. (2011), ACP 11, 2703; that
        spread read as one GSD (NH3 2.0: 68 % of the draws within a factor of 2) is
        our judgement, the paper giving none.
        Systematic: shared by every site and year (``systematic_errors``).
    vd_shared_fraction : float
        Share of the log-variance of every Vd factor that comes from the micrometeorology
        (Ra, u*) common to all species [1]; the rest is the species' own
        surface and particle terms.  0.5 is our choice (no published value).
    air_rel_sd : float
        Relative standard deviation of an air concentration, random per sample [1]; 0.05
        (network QA practice for filter packs and denuders, from memory).
    precip_conc_rel_sd : float
        Relative standard deviation of a precipitation concentration, random per sample
        and ion [1]; 0.05 (network QA practice for ion chromatography, from memory).
    gauge_catch_rel_sd : float
        Relative standard deviation of the gauge catch [1], systematic: shared by the
        years of one gauge (a gauge period of a site, split at its ``what = "gauge"``
        changes), its own at each site and for each gauge (``systematic_errors``); 0.05
        (rain gauges, from memory; more where snow falls).
    depth_rel_sd : float
        Relative standard deviation of a sample's precipitation depth, random per
        sample [1]; 0.05 (common practice, from memory).
    censored_rel_sd : float
        Relative standard deviation of a value below detection replaced by half the
        limit [1]; 0.577 = 1/sqrt(3), a value uniform between 0 and the limit (common
        practice).
    vd_fill_rel_sd : float
        Relative standard deviation of a gap-filled hourly Vd (mean diurnal cycle),
        random per sampling period, applied to the share of its deposition that the
        filled hours carry [1]; 0.3
        (our choice, from memory of hour-to-hour Vd variability).
    pwm_fill_rel_sd : float
        Relative standard deviation of a PWM filled from the multi-year seasonal PWM,
        random per period and ion [1]; 0.3 (from memory of year-to-year PWM variability).
    systematic_errors : str
        How the systematic factors (Vd model factor, gauge catch) are drawn: "shared"
        (default) draws the Vd factors once for the whole run, shared by every site and
        year (a scheme's bias repeats), and the gauge catch once per gauge period of a
        site, shared by its years (the same gauge); "each_year" draws both anew for every site and calendar
        year, as before (a span's range then narrows as 1/sqrt(years): for comparison
        only).  docs/methods_uncertainty.md, "Systematic or random".  The gauge
        periods, laboratory biases and land-use class parts below follow it alike.
    lab_bias_precip_rel_sd : float
        Relative standard deviation of a precipitation laboratory's calibration bias
        [1], systematic: one draw per ion and laboratory period of a site (split at its
        ``what = "laboratory"`` changes), shared by every sample that laboratory
        analysed (a laboratory named in the site catalogue: one draw per ion for every
        site naming it, docs/methods_uncertainty.md); 0.03 (from memory of interlaboratory comparisons of precipitation
        chemistry: most laboratories within a few percent of the reference values for
        the major ions).
    lab_bias_air_rel_sd : float
        The same for the air samples' laboratory, a laboratory of its own (drawn apart
        from the precipitation laboratory's, unless the catalogue names one laboratory
        for both: then one draw per analysed ion, e.g. sulfate); 0.05 (from memory: filter and denuder
        extracts add their extraction and blanks to the analysis).
    vd_class_fraction : float
        Share of each species' own log-variance of the Vd factor (the part not shared
        through the micrometeorology, 1 - ``vd_shared_fraction``) that is a bias of the
        receptor's land-use class [1]: one draw per class for the run, shared by every
        site and receptor of that class.  The log-variance of one receptor's factor
        stays ln^2 GSD; only the correlation between classes falls.  0.5 (our choice, no
        published value; 0 is one bias for every surface, as before).
    vd_site_gsd : float
        Geometric standard deviation of a site's own Vd factor [1] (its siting and
        representativeness: the mast's fetch, the sampler's place in a heterogeneous
        surface), log-normal with median 1, beside the model factor and its class part:
        one draw per site (by its id), shared by its species, receptors and years
        (``"each_year"``: per site and year).  It adds to the log-variance of each
        receptor's factor.  1.2 (our choice, from memory of the tens of percent by
        which fluxes measured a few hundred metres apart over one surface differ); 1
        switches it off.
    lab_bias_filter_pack : bool
        The gas and particle filters of a filter pack analysed as the same ion share
        the air laboratory's calibration draw: SO2 (as sulfate) with pSO4, HNO3 (as
        nitrate) with pNO3, NH3 (as ammonium) with pNH4.  True (common practice: the
        filter stages of one pack are extracted and run in the same analytical batch,
        against one calibration); False draws each species apart, as before.
    bulk_factor_rel_sd : float
        Relative standard deviation of ``[budget] bulk_wet_factor`` [1] under
        ``bulk_correction = "scale_wet"``, systematic: one draw per site and ion,
        correlated among the site's ions (``bulk_factor_ion_correlation``), shared by
        its years (``"each_year"``: per site and year), acting on the part of the wet deposition its bulk samples
        carry.  0.1 (from memory: wet-only / bulk ratios of rural sites spread over
        roughly 0.7-0.9 around the typical 0.8); 0 switches it off.
    bulk_factor_ion_correlation : float
        Correlation in [0, 1] between the drawn factors of the ions SO4, NO3 and NH4 of
        one site [1]: each ion's factor is u = 1 + sd (sqrt(rho) z_site + sqrt(1 - rho)
        z_ion), cut at 0, z_site shared by the site's ions (the funnel's exposure), z_ion
        its own (how much of the ion's dry deposition the funnel gains, and for NH4 its
        loss in the standing sample).  0.7 (our choice, no published value: from memory,
        the bulk / wet-only ratios of sulfate and nitrate at a site rise and fall
        together, ammonium's less so); 1 shares one factor by the ions, as before.
    nh3_gamma_gsd : float
        Geometric standard deviation of the stomatal NH3 emission potential Gamma_s
        [1], log-normal with median 1, under ``[dry] nh3_treatment = "bidirectional"``
        only: one draw per site and land-use class of its receptors, shared by its years
        (``"each_year"``: per site and year), acting on the emission part E of the net
        exchange alone (E is proportional to Gamma_s through the compensation point,
        :mod:`workbench.drydep.nh3_bidirectional`).  3.0 (our choice, from memory of
        the scatter in Massad et al. 2010, ACP 10, 10359: :data:`DEFAULT_NH3_GAMMA_GSD`);
        1 switches it off.  Not drawn, and not named as drawn, where no site has an
        emission part.
    pair_shift_nitrate : tuple
        ``[low, high]``: the range of the drawn share s of the nitrate pair's
        gas/particle split that a filter pack measured in the wrong phase [1], uniform
        on the range, one draw per site (by its id and the pair), shared by its years
        (``"each_year"``: per site and calendar year).  s > 0: a share s of the measured
        pNO3 was gas, and is deposited with the HNO3 Vd; s < 0: a share -s of the
        measured HNO3 was particle (ammonium nitrate lost from the front filter and
        caught as gas on the back filter), deposited with the pNO3 Vd (the moved rows
        are the bracket's, :mod:`.pairdraws`).  -1 <= low <= high <= 1; [0, 0]
        (default) switches it off, and the draws stay as they were.  Drawn where both
        members are measured and ``[budget] pair_split = "measured"`` (otherwise the
        split is set there).  Ranges from memory: docs/methods_uncertainty.md, "The
        gas/particle split of a filter pack".
    pair_shift_ammonium : tuple
        The same for the ammonium pair: s > 0 a share of the measured pNH4 that was NH3
        (deposited with the NH3 Vd: under ``nh3_treatment = "bidirectional"`` the Vd
        of the net exchange, whose net flux is linear in the air concentration), s < 0
        a share of the measured NH3 that was pNH4 (under ``"bidirectional"`` taken
        from the deposition part of the net exchange, its emission part kept); drawn
        apart from the nitrate's (its own stream).  [0, 0] (default) switches it off.
        With ``nh3_acid_ratio_from_air`` a drawn share of either pair is refused
        under ``"bidirectional"`` and under the humidity cuticle of the
        deposition-only NH3, and with ``so2_codeposition`` a drawn share of the
        ammonium pair (:func:`pair_shift_refusal`).
    explain_ranges : bool
        ``workbench run`` also writes ``range_shares.csv``: each drawn factor's share of
        the variance of the dry and total S and N at every site, receptor and period
        (:func:`workbench.analysis.variance_shares.variance_shares`), and the report a
        table of the largest factors per site.  It draws every site once more per
        drawn factor (and Vd species), about as long as the Monte Carlo again for each;
        False (default) writes nothing more.  Needs ``draws`` >= 2 (it explains their
        range; with fewer a run note says so).  The draws and the quantiles are the same
        either way.
    vd_follows_air : bool
        Under ``[dry] so2_codeposition`` and ``nh3_acid_ratio_from_air`` each draw's
        Vd(SO2) and Vd(NH3) follow the NH3/SO2 and acid ratios of its drawn air: the
        velocities are run on the air with NH3 scaled by 9 factors from 0.5 to 2 (stages
        of the graph) and each sample's part is interpolated at the draw's factor of
        the ratio (:mod:`workbench.analysis.airvd`; the error against engine runs on
        drawn air in docs/methods_uncertainty.md).  False (default, our choice: the
        grid costs 8 runs of the velocities) keeps the velocities of the measured air,
        and the report names them as not in the range.  Refused where it does not
        apply (:func:`workbench.analysis.airvd.refusal`).
    """

    draws: int = 0
    seed: int = 12345
    vd_gsd: dict = field(default_factory=lambda: dict(DEFAULT_VD_GSD))
    vd_shared_fraction: float = 0.5
    air_rel_sd: float = 0.05
    precip_conc_rel_sd: float = 0.05
    gauge_catch_rel_sd: float = 0.05
    depth_rel_sd: float = 0.05
    censored_rel_sd: float = 0.577
    vd_fill_rel_sd: float = 0.3
    pwm_fill_rel_sd: float = 0.3
    systematic_errors: str = "shared"
    lab_bias_precip_rel_sd: float = 0.03
    lab_bias_air_rel_sd: float = 0.05
    vd_class_fraction: float = 0.5
    vd_site_gsd: float = 1.2
    lab_bias_filter_pack: bool = True
    bulk_factor_rel_sd: float = 0.1
    bulk_factor_ion_correlation: float = 0.7
    nh3_gamma_gsd: float = DEFAULT_NH3_GAMMA_GSD
    pair_shift_nitrate: tuple = (0.0, 0.0)
    pair_shift_ammonium: tuple = (0.0, 0.0)
    explain_ranges: bool = False
    vd_follows_air: bool = False

    def __post_init__(self):
        if self.systematic_errors not in SYSTEMATIC_ERRORS:
            raise ValueError(f"UncertaintyOptions.systematic_errors = {self.systematic_errors!r}"
                             f"; expected one of {', '.join(map(repr, SYSTEMATIC_ERRORS))}")
        for name in ("draws", "seed"):
            v = getattr(self, name)
            if isinstance(v, bool) or int(v) != v or v < 0:
                raise ValueError(f"UncertaintyOptions.{name} = {v!r} must be an integer >= 0")
            object.__setattr__(self, name, int(v))           # 1000.0 from a file -> 1000
        for name in ("air_rel_sd", "precip_conc_rel_sd", "gauge_catch_rel_sd", "depth_rel_sd",
                     "censored_rel_sd", "vd_fill_rel_sd", "pwm_fill_rel_sd",
                     "lab_bias_precip_rel_sd", "lab_bias_air_rel_sd", "bulk_factor_rel_sd"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not 0 <= v < math.inf:
                raise ValueError(f"UncertaintyOptions.{name} = {v!r} must be a finite number "
                                 ">= 0 (0 switches the factor off)")
        for name in ("vd_shared_fraction", "vd_class_fraction", "bulk_factor_ion_correlation"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not 0 <= v <= 1:
                raise ValueError(f"UncertaintyOptions.{name} = {v!r} must lie in [0, 1]")
        for name in ("vd_site_gsd", "nh3_gamma_gsd"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not 1 <= v < math.inf:
                raise ValueError(f"UncertaintyOptions.{name} = {v!r} must be a finite number "
                                 ">= 1 (1 switches the factor off)")
        for pair in PAIR_SHIFT_PAIRS:
            object.__setattr__(self, f"pair_shift_{pair}",
                               _shift_range(f"pair_shift_{pair}",
                                            getattr(self, f"pair_shift_{pair}")))
        if not isinstance(self.explain_ranges, bool):
            raise ValueError(f"UncertaintyOptions.explain_ranges = {self.explain_ranges!r} "
                             "must be true or false")
        if not isinstance(self.vd_follows_air, bool):
            raise ValueError(f"UncertaintyOptions.vd_follows_air = {self.vd_follows_air!r} "
                             "must be true or false")
        if not isinstance(self.lab_bias_filter_pack, bool):
            raise ValueError(f"UncertaintyOptions.lab_bias_filter_pack = "
                             f"{self.lab_bias_filter_pack!r} must be true or false")
        for sp, g in self.vd_gsd.items():
            if sp not in DRY_SPECIES:
                raise ValueError(f"UncertaintyOptions.vd_gsd: unknown species {sp!r}; "
                                 f"expected one of {', '.join(DRY_SPECIES)}")
            if isinstance(g, bool) or not isinstance(g, (int, float)) or not 1 <= g < math.inf:
                raise ValueError(f"UncertaintyOptions.vd_gsd[{sp!r}] = {g!r} must be a finite "
                                 "number >= 1 (1 switches the factor off)")

    @classmethod
    def from_dict(cls, given: dict) -> "UncertaintyOptions":
        """From a scenario table: ``vd_gsd`` given for some species keeps the others."""
        given = dict(given)
        if "vd_gsd" in given:
            given["vd_gsd"] = {**DEFAULT_VD_GSD, **given["vd_gsd"]}
        return cls(**given)

    def to_dict(self) -> dict:
        return asdict(self)

    def gsd(self, species: str) -> float:
        return float(self.vd_gsd.get(species, 1.0))

    def pair_shift(self, pair: str) -> tuple:
        """``(low, high)`` of the drawn share of `pair` (a key of
        :data:`workbench.budget.PAIRS`) [1]; ``(0.0, 0.0)``: not drawn."""
        return getattr(self, f"pair_shift_{pair}", (0.0, 0.0))

    @property
    def shifts_pairs(self) -> bool:
        """Whether a gas/particle share is drawn for any pair."""
        return any(self.pair_shift(p) != (0.0, 0.0) for p in PAIR_SHIFT_PAIRS)


#: The pairs whose gas/particle share may be drawn (``pair_shift_<pair>``), the keys of
#: :data:`workbench.budget.PAIRS`.
PAIR_SHIFT_PAIRS = ("nitrate", "ammonium")


def _shift_range(name, value) -> tuple:
    """``[low, high]`` of a ``pair_shift_<pair>`` as a tuple of floats, or ValueError
    naming the option, its value and what is expected."""
    ok = (isinstance(value, (list, tuple)) and len(value) == 2
          and all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in value))
    if ok:
        lo, hi = float(value[0]), float(value[1])
        ok = -1.0 <= lo <= hi <= 1.0
    if not ok:
        shown = list(value) if isinstance(value, tuple) else value
        raise ValueError(
            f"UncertaintyOptions.{name} = {shown!r} must be [low, high] with -1 <= low <= "
            "high <= 1: the share of the measured particle that was gas (> 0) or of the "
            "measured gas that was particle (< 0); [0, 0] switches it off")
    return (lo + 0.0, hi + 0.0)                 # -0.0 -> 0.0


def pair_shift_refusal(dry_options, options) -> tuple | None:
    """``(key, reason)`` of a drawn gas/particle split that the run's dry model cannot
    take exactly, or None.

    The draws move a share of a pair on the linear layer: the velocities stay those of
    the measured air.  That is exact while no velocity depends on the air, and under
    ``[dry] nh3_treatment = "bidirectional"`` the net NH3 flux is then linear in the
    NH3 concentration (:mod:`workbench.drydep.nh3_bidirectional`).  With
    ``nh3_acid_ratio_from_air`` the NH3 cuticle takes the acid ratio
    (2 SO2 + HNO3)/NH3 of the air in each hour: moving NH3 or HNO3 changes its Vd (and
    under the bidirectional exchange its emission term), which only a run of the model
    on the changed air gives.  That holds for the exchange's cuticle and for the
    deposition-only NH3 under the humidity cuticle (``nh3_cuticle = "humidity"``, or
    ``"auto"`` with a scheme whose NH3 takes it: Wesely 1989).  Before, the
    deposition-only case was let through: on the demo's ridge (2021) a share s = -0.3
    of the NH3 left the drawn NH3 25 % below the model run on the changed air, s = 0.3
    of the pNH4 15 % above it (benchmarks/air_dependent_vd.py).  With
    ``so2_codeposition`` the SO2 surface resistance takes the NH3/SO2 ratio: a drawn
    ammonium split moves it (s = -0.3: the model's dry SO2 12 % below the draws on the
    ridge's conifer forest, which a split was not to touch), so that split is refused
    too; the nitrate split leaves the ratio as it is.

    Parameters
    ----------
    dry_options : workbench.drydep.DryOptions
    options : UncertaintyOptions

    Returns
    -------
    tuple or None
        The first ``pair_shift_<pair>`` key drawn and the reason, in words.
    """
    drawn = [p for p in PAIR_SHIFT_PAIRS if options.pair_shift(p) != (0.0, 0.0)]
    if "ammonium" in drawn and getattr(dry_options, "so2_codeposition", False):
        return ("pair_shift_ammonium",
                "a drawn ammonium split cannot be exact with [dry] so2_codeposition = true: "
                "the SO2 surface resistance takes the NH3/SO2 ratio of the air, so moving "
                "NH3 to or from pNH4 changes the Vd of SO2, which the draws (on the "
                "velocities of the measured air) cannot follow")
    if not drawn or not getattr(dry_options, "nh3_acid_ratio_from_air", False):
        return None
    if getattr(dry_options, "nh3_treatment", None) == "bidirectional":
        where = ("under [dry] nh3_treatment = \"bidirectional\" with "
                 "nh3_acid_ratio_from_air = true: the NH3 exchange's cuticle")
        what = "its Vd and emission"
    else:
        from ..drydep.gas import get_scheme
        from ..drydep.nh3_bidirectional import resolve_cuticle
        rule = getattr(dry_options, "nh3_cuticle", "auto")
        scheme = getattr(dry_options, "gas_scheme", "wesely1989")
        if resolve_cuticle(rule, get_scheme(scheme)) != "humidity":
            return None
        where = (f"with [dry] nh3_acid_ratio_from_air = true and the humidity cuticle of "
                 f"NH3 (nh3_cuticle = \"{rule}\", gas_scheme = \"{scheme}\"): the NH3 "
                 "cuticle")
        what = "its Vd"
    return (f"pair_shift_{drawn[0]}",
            f"a drawn gas/particle split cannot be exact {where} takes the acid ratio "
            f"(2 SO2 + HNO3)/NH3 of the air, so moving NH3 or HNO3 changes {what}, which "
            "the draws (on the velocities of the measured air) cannot follow")
