"""Options of the dry-deposition calculation and the particle size defaults."""
from __future__ import annotations

from dataclasses import dataclass, field

#: Growth laws known to :func:`workbench.drydep.particles.wet_diameter`.
#: Gerber (1985) laws (ammonium_sulfate, sea_salt, urban, rural), kappa-Koehler
#: (ammonium_nitrate; Petters and Kreidenweis 2007) or no growth.
GROWTH_LAWS = ("ammonium_sulfate", "ammonium_nitrate", "sea_salt", "urban", "rural", "none")


@dataclass(frozen=True)
class LogNormalMode:
    """One log-normal mode of a particle mass distribution (by dry diameter).

    Attributes
    ----------
    mmd : float
        Mass median dry diameter. [m]
    gsd : float
        Geometric standard deviation (>= 1). [-]
    density : float
        Dry particle density. [kg m-3]
    growth : str
        Hygroscopic growth law (one of :data:`GROWTH_LAWS`).
    """

    mmd: float
    gsd: float
    density: float
    growth: str = "ammonium_sulfate"

    def __post_init__(self):
        if not self.mmd > 0 or not self.gsd >= 1.0 or not self.density > 0:
            raise ValueError(f"invalid particle mode {self}: need mmd > 0 m, gsd >= 1, "
                             "density > 0 kg m-3")
        if self.growth not in GROWTH_LAWS:
            raise ValueError(f"unknown growth law {self.growth!r}; use one of {GROWTH_LAWS}")


@dataclass(frozen=True)
class ParticleSpec:
    """Mass distribution of one particulate species: fine and coarse modes.

    Attributes
    ----------
    fine : LogNormalMode
    coarse : LogNormalMode
    fine_fraction : float
        Mass fraction in the fine mode, 0-1. [1]
    """

    fine: LogNormalMode
    coarse: LogNormalMode
    fine_fraction: float

    def __post_init__(self):
        if not 0.0 <= self.fine_fraction <= 1.0:
            raise ValueError(f"fine_fraction must lie in 0-1, got {self.fine_fraction}")


#: Accumulation mode of secondary inorganic aerosol: MMD 0.4 um, sigma_g 2.0 (common
#: practice; cf. the accumulation mode of Whitby 1978, Atmos. Environ. 12, 135, from
#: memory), dry density of ammonium sulfate 1770 kg m-3 (CRC Handbook, from memory).
FINE_MODE = LogNormalMode(0.4e-6, 2.0, 1770.0, "ammonium_sulfate")
#: Accumulation mode of ammonium nitrate: the size of :data:`FINE_MODE`, dry density
#: of NH4NO3 1725 kg m-3 (CRC Handbook, from memory), kappa-Koehler growth
#: (Petters and Kreidenweis 2007).
FINE_NITRATE = LogNormalMode(0.4e-6, 2.0, 1725.0, "ammonium_nitrate")
#: Coarse sea-salt mode: MMD 5 um, sigma_g 2.0 (common practice, from memory),
#: density of NaCl 2165 kg m-3 (CRC Handbook, from memory).
COARSE_SEA_SALT = LogNormalMode(5.0e-6, 2.0, 2165.0, "sea_salt")
#: Coarse mineral-dust mode: MMD 5 um, sigma_g 2.0, density 2600 kg m-3, no growth
#: (common practice, from memory).
COARSE_DUST = LogNormalMode(5.0e-6, 2.0, 2600.0, "none")


def default_particle_modes() -> dict:
    """Default size distributions of the particulate species at an inland site.

    Sulfate and ammonium are fine (ammonium sulfate growth); nitrate is 80 % fine
    ammonium nitrate (its own kappa growth) and 20 % coarse on mineral dust (no
    growth): inland filter-pack nitrate is mostly fine ammonium nitrate (common
    practice; from memory, continental sites find about 70-90 % of nitrate below
    2.5 um).  Sodium and chloride are coarse sea salt, calcium coarse dust.  At a
    coastal site (:mod:`workbench.drydep.particle_fractions`) half of the nitrate is
    taken as coarse, on sea salt; a site's ``coarse_fraction`` key overrides both.
    """
    return {
        "pSO4": ParticleSpec(FINE_MODE, COARSE_SEA_SALT, 1.0),
        "pNO3": ParticleSpec(FINE_NITRATE, COARSE_DUST, 0.8),
        "pNH4": ParticleSpec(FINE_MODE, COARSE_SEA_SALT, 1.0),
        "pNa": ParticleSpec(FINE_MODE, COARSE_SEA_SALT, 0.0),
        "pCl": ParticleSpec(FINE_MODE, COARSE_SEA_SALT, 0.0),
        "pCa": ParticleSpec(FINE_MODE, COARSE_DUST, 0.0),
    }


#: Transfers of u* from the wind mast's surface to a receptor (DryOptions.ustar_transfer).
USTAR_TRANSFERS = ("blending_height", "drag_law")
WETNESS_RULES = ("met", "inferred", "always_dry", "always_wet")


@dataclass(frozen=True)
class DryOptions:
    """Choices of the dry-deposition velocity calculation, with documented defaults.

    Attributes
    ----------
    gas_scheme : str
        Surface-resistance scheme for gases: ``"wesely1989"`` (Wesely 1989 with the
        corrections of Walmsley and Wesely 1996) or ``"zhang2003"`` (Zhang, Brook and
        Vet 2003: LAI-dependent stomatal and cuticular paths, humidity-dependent
        cuticle, snow).
    gases : tuple of str
        Gases to compute.
    particles : tuple of str
        Particulate species to compute.
    wetness_rule : str
        ``"met"``: the met file's ``surface_wet`` where given, else the inferred rule
        (rain in this or the previous hour, this hour alone where the previous one is unknown, or dew); ``"inferred"``: always the rule;
        ``"always_dry"`` / ``"always_wet"``: every hour dry / wet.
    dew_rule : str
        Saturation humidity of the dew rule. ``"surface_temperature"`` (default, both
        schemes): at the surface temperature found from the heat flux, the rule Zhang
        et al. (2003) publish; the default for Wesely (1989) too, which publishes no dew
        rule, because it is the physically based one (a surface cooling below the air
        gathers dew while the air is unsaturated), so both schemes see the same wet
        hours. ``"air_temperature"``: at the air temperature, a threshold on relative
        humidity alone (dew only above about 97-99.8 % RH; the dew criterion of Zhang
        et al. 2003 evaluated with the air's saturation humidity, this workbench's
        earlier rule). ``"scheme"``: the rule the gas scheme module names (zhang2003:
        surface; wesely1989: air), the default before. docs/methods_dry.md section 8.
    season_rule : str
        ``"surface_state"`` (default): Wesely's category from the leaf-area index of
        each receptor's own surface (green, greening, browning, dormant), then frost and
        snow, so that the stomata follow the canopy rather than the calendar (where the
        LAI does not vary the month rule stays); ``"month"``: from the calendar month
        and latitude, then frost and snow (the default before).  docs/methods_dry.md
        section 7.
    seasonal_category : None, int or 12-tuple of int
        None: automatic (surface state, then month and latitude); an int 1-5 for
        every hour; or one category per calendar month.
    ustar_floor : float
        Least friction velocity over a receptor (common practice). [m s-1]
    ra_cap : float
        Largest aerodynamic resistance (common practice). [s m-1]
    ra_min_height_z0 : float
        Ra is evaluated at least d + this many z0 above ground (common practice: the
        log profile holds only well above the roughness elements). [-]
    blending_height : float
        Height where the wind no longer feels the local surface (Wieringa 1986). [m]
    ustar_transfer : str
        How u* over the wind mast's surface becomes u* over a receptor.
        ``"drag_law"`` (default): both surfaces share the geostrophic wind through the
        neutral geostrophic drag law (Tennekes 1973; Garratt 1992): a receptor that
        covers the landscape, about 30 % less u* over a forest from a grass mast.
        The default because a receptor stands for an ecosystem at landscape scale
        (budgets, critical loads), and because it passes the check against forest
        towers: mean u* over the demo's ridge conifer 0.53 m/s, inside the 0.3-0.7 m/s
        of long-term forest tower means (common practice, from memory), where the
        blending height gives 0.79. ``"blending_height"``: the two log profiles
        share the wind at `blending_height` (Wieringa 1986; Mason 1988): a receptor
        patch inside a landscape like the mast's (a woodlot in farmland).
        docs/methods_dry_particles.md section 6, friction velocity over a forest.
    ustar_transfer_receptor : dict
        The transfer of single receptors, overriding `ustar_transfer`: keyed by class
        (``"deciduous_forest"``) or by site and class (``"farm/deciduous_forest"``),
        each value ``"drag_law"`` or ``"blending_height"`` (e.g. a farm's deciduous
        receptor that is a small woodlot in the mast's landscape).  sites.toml's
        ``[site.ustar_transfer]`` (or the scenario's ``[sites.<id>] ustar_transfer``)
        gives the site's own; precedence: ``"<site>/<class>"`` here, then the site's
        table, then ``"<class>"`` here, then `ustar_transfer`.  Empty by default.
    night_cloud_cover : float
        Cloud cover used at night when the met file has none and it cannot be
        inferred from radiation (every such hour is flagged); a mid-range value, our
        default (common practice). [1]
    roughness : dict
        ``{land_use: (z0, d)}`` replacing the roughness rule for a whole class
        (either entry may be None). [m]
    particle_modes : dict
        ``{species: ParticleSpec}``; missing species take the defaults.  A species
        set here (differing from its default) takes this fine fraction and coarse
        mode at every site without a ``coarse_fraction`` key; a species left at its
        default follows the coastal/inland rule (:mod:`workbench.drydep.particle_fractions`).
    coastal_distance : float
        A site whose ``coast_distance_km`` is below this is coastal for the default
        coarse fractions (common practice: sea salt falls off within the first tens
        of km inland; from memory). [m]
    size_nodes : int
        Gauss-Hermite nodes per log-normal mode for the mass-weighted particle Vd.
    particle_settling : str
        Terminal settling velocity v_g of the particle scheme. ``"stokes"`` (default):
        Stokes' law with the slip correction, Zhang et al. (2001) Eq. 2, the published
        scheme. ``"clift_gauvin"``: the continuum terminal velocity from the drag correlation of
        Clift and Gauvin (1970), valid to Re 2e5, times the same slip correction
        (:mod:`workbench.drydep.settling`), in the settling term and in the Stokes number
        of impaction and rebound alike; it matters for the grown coarse tail (sea salt
        at high humidity, annual Vd of pNa and pCl lower by a few per cent on the demo).
        docs/methods_dry_particles.md section 10.3.
    unstable_iterations : int
        Bisection steps of the unstable u* solve.
    charnock_iterations : int
        Fixed-point steps of the Charnock z0 over water.
    compare_schemes : bool
        ``workbench run`` also computes the budget under every other gas scheme and
        writes all of them to budget.csv with a ``scheme`` column (the structural
        uncertainty of the choice of scheme; :mod:`workbench.comparison`).
    hno3_rc_floor : bool
        Keep Rc(HNO3) at or above max(10, -2 T[degC]) s/m (Erisman et al. 1994); False:
        Rc(HNO3) as the scheme gives it, near 0 (Wesely 1989; Huebert and Robert 1985).
        The literature splits on this (docs/methods_dry.md).
    nh3_treatment : str
        ``"deposition_only"``; or ``"bidirectional"``: also the canopy compensation point
        model (:mod:`workbench.drydep.nh3_bidirectional`), written as
        ``vd_NH3_bidirectional`` and ``nh3_emission_flux`` beside the deposition-only
        ``vd_NH3``; the budget's NH3 is then the net flux, with the deposition-only
        figure beside it (docs/budget.md).
    nh3_emission_potential : dict
        Stomatal emission potential Gamma_s [-] replacing the class default, keyed by
        class (``"crops"``) or by site and class (``"farm/grass"``); sites.toml's
        ``[site.nh3_emission_potential]`` gives the latter too (a key here wins).
    nh3_acid_ratio : float
        Molar ratio (2 SO2 + HNO3)/NH3 of the cuticular resistance (Massad et al.
        2010); 1 by default (our choice). [-]
    nh3_acid_ratio_from_air : bool
        Take the acid ratio of the NH3 cuticle from the measured air in each hour,
        (2 SO2 + HNO3)/NH3 of the sampling periods covering it
        (:func:`workbench.drydep.codeposition.hourly_acid_ratio`); hours without all
        three keep `nh3_acid_ratio`.  Off by default.
    rc_scale : dict
        gas -> multiplier of that gas's surface resistance Rc [1], applied to the
        scheme's Rc (either scheme, after the HNO3 floor) before Vd = 1/(Ra + Rb + k Rc);
        the paths of Rc (``components``) stay as the scheme gives them.  A sensitivity
        knob: no published default, 1 (an absent gas) leaves Rc alone.  The
        bidirectional NH3 model uses its own stomatal and cuticular paths, which this
        does not scale (only its leafless hours use the scaled Rc).
    components : bool
        Return every path of Rc per gas (memory: about seven arrays per gas).
    nh3_cuticle : str
        Non-stomatal path of the deposition-only NH3: ``"humidity"``, the cuticle R_w =
        (31.5/AR) exp((100 - RH[%])/12) of Massad et al. (2010) beside the scheme's
        stomatal path (the canopy model's Vd without its emission); ``"scheme"``, the
        scheme's own paths; ``"auto"`` (default): humidity for wesely1989, which gives
        NH3 no treatment of its own, the scheme's own for zhang2003 (NH3 takes SO2's
        humidity-dependent cuticle).  docs/methods_dry.md section 9.
    so2_codeposition : bool
        SO2-NH3 co-deposition: over vegetated receptors the non-stomatal resistance of
        SO2 falls with the hourly NH3/SO2 molar ratio of the measured air (Simpson et
        al. 2012 after Fowler et al. 2001; Erisman et al. 1994 for the process; from
        memory), either scheme; hours without both concentrations keep the scheme's
        Rc.  Off by default (:mod:`workbench.drydep.codeposition`).
    so2_cuticle : str
        Dry cuticular (external-leaf) resistance of SO2, either scheme: ``"scheme"``
        (default), the scheme's own (Wesely's r_lu, Zhang's dry R_cut);
        ``"erisman1994"``, in dry hours over vegetated receptors where the scheme has a
        cuticle, the humidity-dependent R_w = 25000 exp(-0.0693 RH[%]) s/m below RH 81.3 % and
        0.58e12 exp(-0.278 RH[%]) above, 500 s/m below -1 degC (Erisman, van Pul and
        Wyers 1994, from memory; air RH), dew and rain keeping the scheme's wet rules;
        SO2 only.  With `so2_codeposition` the co-deposition relation wins where it
        applies (:mod:`workbench.drydep.erisman1994`; docs/methods_dry.md section 9.6).
    sampler_coarse_fraction : dict
        ``{"<site>/<sampler_id>": {species: coarse fraction 0-1}}``: the coarse mass
        fraction of a particle species measured by that sampler (e.g. a PM10 inlet
        beside a total-suspended one), used in the hours its rows cover; it wins over
        the site's ``coarse_fraction`` and the default rule
        (:mod:`workbench.drydep.particle_fractions`).
    """

    gas_scheme: str = "wesely1989"
    gases: tuple = ("SO2", "HNO3", "NH3", "NO2", "O3")
    particles: tuple = ("pSO4", "pNO3", "pNH4", "pNa", "pCl", "pCa")
    wetness_rule: str = "met"
    dew_rule: str = "surface_temperature"
    season_rule: str = "surface_state"
    seasonal_category: object = None
    ustar_floor: float = 0.05
    ra_cap: float = 1000.0
    ra_min_height_z0: float = 5.0
    blending_height: float = 60.0
    ustar_transfer: str = "drag_law"
    ustar_transfer_receptor: dict = field(default_factory=dict)
    night_cloud_cover: float = 0.5
    roughness: dict = field(default_factory=dict)
    particle_modes: dict = field(default_factory=default_particle_modes)
    coastal_distance: float = 50e3
    size_nodes: int = 12
    particle_settling: str = "stokes"
    unstable_iterations: int = 30
    charnock_iterations: int = 8
    nh3_treatment: str = "deposition_only"
    nh3_emission_potential: dict = field(default_factory=dict)
    nh3_acid_ratio: float = 1.0
    hno3_rc_floor: bool = True
    compare_schemes: bool = False
    rc_scale: dict = field(default_factory=dict)
    components: bool = True
    nh3_cuticle: str = "auto"
    so2_codeposition: bool = False
    nh3_acid_ratio_from_air: bool = False
    sampler_coarse_fraction: dict = field(default_factory=dict)
    so2_cuticle: str = "scheme"

    def __post_init__(self):
        if self.wetness_rule not in WETNESS_RULES:
            raise ValueError(f"unknown wetness_rule {self.wetness_rule!r}; use one of "
                             f"{WETNESS_RULES}")
        from .gas import SCHEMES
        from .seasons import SEASON_RULES
        from .wetness import DEW_RULES
        if self.dew_rule not in DEW_RULES:
            raise ValueError(f"unknown dew_rule {self.dew_rule!r}; use one of {DEW_RULES}")
        if self.season_rule not in SEASON_RULES:
            raise ValueError(f"unknown season_rule {self.season_rule!r}; use one of "
                             f"{SEASON_RULES}")
        if self.gas_scheme not in SCHEMES:
            raise ValueError(f"unknown gas_scheme {self.gas_scheme!r}; use one of "
                             f"{tuple(SCHEMES)}")
        if self.ustar_transfer not in USTAR_TRANSFERS:
            raise ValueError(f"unknown ustar_transfer {self.ustar_transfer!r}; use one of "
                             f"{USTAR_TRANSFERS}")
        from ..landuse import LAND_USE as _classes
        for key, value in self.ustar_transfer_receptor.items():
            if str(key).split("/")[-1] not in _classes or str(key).count("/") > 1 \
                    or value not in USTAR_TRANSFERS:
                raise ValueError(f"ustar_transfer_receptor: {key!r} = {value!r}; expected "
                                 "'<class>' or '<site>/<class>' of our land-use classes ("
                                 + ", ".join(_classes) + ") and one of "
                                 + ", ".join(USTAR_TRANSFERS))
        if not self.coastal_distance >= 0:
            raise ValueError("coastal_distance must be >= 0 m")
        if self.nh3_treatment not in ("deposition_only", "bidirectional"):
            raise ValueError(f"unknown nh3_treatment {self.nh3_treatment!r}; use "
                             "'deposition_only' or 'bidirectional'")
        from ..landuse import LAND_USE
        for key, value in self.nh3_emission_potential.items():
            if str(key).split("/")[-1] not in LAND_USE or not float(value) >= 0:
                raise ValueError(f"nh3_emission_potential: {key!r} = {value!r}; expected "
                                 "'<class>' or '<site>/<class>' of our land-use classes and "
                                 "a value >= 0")
        from .nh3_bidirectional import CUTICLE_RULES
        if self.nh3_cuticle not in CUTICLE_RULES:
            raise ValueError(f"unknown nh3_cuticle {self.nh3_cuticle!r}; use one of "
                             f"{CUTICLE_RULES}")
        from .erisman1994 import check_rule
        check_rule(self.so2_cuticle)
        from .settling import check_settling
        check_settling(self.particle_settling)
        if not self.nh3_acid_ratio > 0:
            raise ValueError("nh3_acid_ratio must be > 0")
        from ..species import AIR_GASES
        for gas, k in self.rc_scale.items():
            if gas not in AIR_GASES or isinstance(k, bool) or not float(k) > 0:
                raise ValueError(f"rc_scale: {gas!r} = {k!r}; expected a gas of "
                                 f"{', '.join(AIR_GASES)} and a multiplier > 0")
        for key, table in self.sampler_coarse_fraction.items():
            if "/" not in str(key) or not isinstance(table, dict) or not table:
                raise ValueError(f"sampler_coarse_fraction: {key!r} = {table!r}; expected "
                                 "'<site>/<sampler_id>' = {species = fraction}")
            for sp, f in table.items():
                if sp not in default_particle_modes() or isinstance(f, bool) or \
                        not 0.0 <= float(f) <= 1.0:
                    raise ValueError(f"sampler_coarse_fraction: {key!r}: {sp!r} = {f!r}; "
                                     "expected a particle species of "
                                     f"{', '.join(default_particle_modes())} and a fraction "
                                     "0-1")
        sc = self.seasonal_category
        if sc is not None:
            cats = [sc] if isinstance(sc, int) else list(sc)
            if (not isinstance(sc, int) and len(cats) != 12) or any(
                    int(c) != c or not 1 <= c <= 5 for c in cats):
                raise ValueError("seasonal_category must be None, an int 1-5 or 12 ints 1-5")
        for name in ("ustar_floor", "ra_cap", "blending_height"):
            if not getattr(self, name) > 0:
                raise ValueError(f"{name} must be > 0")

    def mode_of(self, species: str) -> ParticleSpec:
        """The particle size distribution of `species` (the default when not set)."""
        return self.particle_modes.get(species) or default_particle_modes()[species]
