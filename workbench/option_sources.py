"""Where the default of every scenario option comes from: one entry per option field.

``SOURCES[section][field] = (kind, text)``, the section as in
:func:`workbench.scenario.option_sections` (``[wet]``, ``[dry]``, ``[budget]``,
``[uncertainty]``, ``[sensitivity]``).  ``kind`` is one of :data:`KINDS`:

* ``"published"``: a published source (author year, and table or equation where one
  applies) that states this value or rule;
* ``"from memory"``: a value recalled from a named source or from the literature, not
  checked against the text here;
* ``"common practice"``: a fact or habit of the trade with no single source;
* ``"our choice"``: chosen for this workbench, with the reason.

The entries are written once, here; ``python docs/make_option_tables.py`` puts them in
the "source of the default" column of docs/scenario.md, and
``tests/test_docs_sources.py`` fails when an option field has no entry (or an entry
names no field).  The longer reasoning stays in the methods docs named in the text.
The meaning and unit of each option stay beside its field in the dataclass.
"""
from __future__ import annotations

#: The kinds of source, in the words of docs/scenario.md.
KINDS = ("published", "from memory", "common practice", "our choice")

_GAW = "WMO GAW Report No. 160 (2004), Section 8"

WET = {
    "detection_limit": ("common practice", "half the detection limit for a censored "
                        "result (docs/methods_wet.md 3.1)"),
    "on_ion_balance_fail": ("our choice", "flag and keep: dilute samples with unmeasured "
                            "organic anions fail honestly, and dropping them would bias the "
                            "PWM towards polluted samples"),
    "on_conductivity_fail": ("our choice", "flag and keep, as for the ion balance: a "
                             "conductivity difference more often points to an unmeasured "
                             "ion than to a wrong one"),
    "on_contamination": ("common practice", "samples marked contaminated are kept out of "
                         "the means"),
    "on_dust": ("our choice", "flag and keep: dust that fell with the precipitation is "
                "wet deposition, funnel dirt is not, and only the field notes tell them "
                "apart"),
    "on_capture_fail": ("our choice", "flag and keep: the chemistry of a badly caught "
                        "sample still samples the precipitation; the gauge gives the "
                        "depth"),
    "on_gross_error": ("our choice", "exclude: such a value is a unit slip, a sentinel or "
                       "a typing error and one sample can dominate a period's PWM "
                       "(excluding them is common practice)"),
    "gross_ion_difference": ("our choice", "80 %: the cations nine times the anions, "
                             "beyond every GAW tier (60 % at most) with room for an "
                             "incomplete set of ions"),
    "max_concentration": ("our choice", "2000 umol/L, far above the PWMs of polluted or "
                          "dusty rain (hundreds of umol/L)"),
    "max_seasalt_concentration": ("our choice", "10 000 umol/L; coastal spray-laden "
                                  "samples reach a few thousand umol/L of Na and Cl"),
    "ion_balance_tiers": ("from memory", f"{_GAW}: allowed absolute ion difference by CE + AN "
                          "(docs/methods_wet.md 3.3)"),
    "conductivity_tiers": ("from memory", f"{_GAW}: allowed absolute conductivity difference "
                           "by measured conductivity (docs/methods_wet.md 3.4)"),
    "conductivity_difference_basis": ("from memory", f"{_GAW}: CD = 100 (calc - meas) / "
                                      "meas, the form its tiers are set for; \"sum\" "
                                      "divides by calc + meas, as the ion difference "
                                      "does (docs/methods_wet.md 3.4)"),
    "bicarbonate": ("common practice", "HCO3- in equilibrium with atmospheric CO2 "
                    "counted among the anions; it matters only above pH ~5.5"),
    "co2_mixing_ratio": ("from memory", "~420 ppm, the global mean of the early 2020s "
                         "(NOAA global monitoring)"),
    "lab_temperature": ("common practice", "25 degC, the temperature at which ionic "
                        "conductances are tabulated and pH and conductivity are "
                        "reported"),
    "capture_rain": ("our choice", "0.7-1.2: wet-only collectors catch most rain "
                     "(common experience); above 1.2 points to a leak or contamination"),
    "capture_snow": ("our choice", "0.3-1.2: collectors catch much less snow than a "
                     "gauge (common experience)"),
    "capture_mixed": ("our choice", "0.5-1.2, between the rain and snow ranges"),
    "capture_unknown": ("our choice", "0.5-1.2, the mixed range: without meteorology the "
                        "range must pass snow-affected samples"),
    "capture_min_depth": ("common practice", "1 mm: below it the capture ratio is noise"),
    "snow_temperature": ("common practice", "1 degC, inside the 0-2 degC rain-snow "
                         "thresholds in use"),
    "snow_share": ("our choice", "80 % of the precipitation in snow hours makes a snow "
                   "sample, 20 % or less a rain sample"),
    "bio_potassium": ("our choice", "10 umol/L, with NH4 and PO4: droppings and plant "
                      "debris bring all three (docs/methods_wet.md 3.7)"),
    "bio_ammonium": ("our choice", "100 umol/L, with K and PO4 (docs/methods_wet.md 3.7)"),
    "bio_phosphate": ("our choice", "1 umol/L, with K and NH4: clean rain has PO4 near "
                      "its detection limit (docs/methods_wet.md 3.7)"),
    "dust_pH": ("our choice", "pH 6 with Ca >= 50 umol/L: carbonate dust neutralises the "
                "sample and brings Ca (docs/methods_wet.md 3.7)"),
    "dust_calcium": ("our choice", "50 umol/L, with pH >= 6 (docs/methods_wet.md 3.7)"),
    "blank_share": ("our choice", "10 % of the sample's SO4, NO3 or NH4 in its field "
                    "blank"),
    "gauge_fill": ("our choice", "the collector first (it caught this very "
                   "precipitation), then met precipitation (another instrument)"),
    "fill_min_samples": ("our choice", "5: a median of fewer ratios is one or two weeks' "
                         "accident"),
    "hydro_start_month": ("common practice", "October, the US water year"),
    "straddle": ("our choice", "share of hours: needs no meteorology; \"met\" weighs by "
                 "the hourly precipitation where it is given"),
    "min_gauge_fraction": ("from memory", f"90 %, {_GAW}, \"%PCL\" (the share of the "
                           "period with a known precipitation depth, as we recall it); "
                           "networks' annual criteria ask the same 90 % of the gauge"),
    "min_coverage_fraction": ("our choice", "90 %: stricter than the 75 % of the period "
                              "with valid samples of networks' annual criteria (from "
                              "memory); docs/methods_wet.md 7"),
    "min_valid_precip_fraction": ("from memory", f"70 %, {_GAW}, \"%TP\""),
    "min_valid_samples": ("common practice", "1: a PWM needs at least one valid sample"),
    "period_fill": ("our choice", "none: a failed period stays failed unless the seasonal "
                    "estimate is asked for"),
    "seasalt_tracer": ("published", "Na as the sea-salt reference species, Keene et al. "
                       "(1986), J. Geophys. Res. 91, 6647 (the page from memory)"),
}

DRY = {
    "gas_scheme": ("our choice", "Wesely (1989) with Walmsley and Wesely (1996): the "
                   "widely used scheme that needs only land use and season; zhang2003 "
                   "where LAI and humidity matter"),
    "gases": ("our choice", "the gases of an inferential network's air sampling plus NO2 "
              "and O3; a gas without concentrations adds nothing"),
    "particles": ("our choice", "the ions of a filter pack's particle filter"),
    "wetness_rule": ("our choice", "a measured surface wetness where the met file has it, "
                     "else the inferred rule"),
    "dew_rule": ("published", "the dew criterion of Zhang, Brook and Vet (2003) at the "
                 "surface temperature; for wesely1989 too by our choice (docs/"
                 "methods_dry.md section 8)"),
    "season_rule": ("our choice", "Wesely's (1989) seasonal categories from each "
                    "receptor's LAI, so that the stomata follow the canopy (docs/"
                    "methods_dry.md section 7)"),
    "seasonal_category": ("our choice", "None: automatic (surface state, then month and "
                          "latitude)"),
    "ustar_floor": ("common practice", "0.05 m/s keeps Ra finite in calm hours (floors of "
                    "0.05-0.1 m/s in inferential models, from memory)"),
    "ra_cap": ("common practice", "1000 s/m: beyond it a very stable hour deposits "
               "nothing that matters"),
    "ra_min_height_z0": ("common practice", "the log profile holds only well above the "
                         "roughness elements"),
    "blending_height": ("from memory", "60 m, Wieringa (1986), Q. J. R. Meteorol. Soc. "
                        "112, 867"),
    "ustar_transfer": ("our choice", "the geostrophic drag law (Tennekes 1973; Garratt "
                       "1992): a receptor stands for an ecosystem at landscape scale; mean "
                       "u* over the demo's conifer 0.53 m/s, inside the 0.3-0.7 m/s of "
                       "forest towers (from memory)"),
    "ustar_transfer_receptor": ("our choice", "empty: every receptor follows "
                                "`ustar_transfer`"),
    "night_cloud_cover": ("our choice", "0.5, mid-range, only when neither cloud cover "
                          "nor radiation is given (each such hour flagged)"),
    "roughness": ("our choice", "empty: the roughness rule of each class (docs/"
                  "methods_dry.md)"),
    "particle_modes": ("from memory", "fine mode MMD 0.4 um, GSD 2 (cf. Whitby 1978), "
                       "coarse MMD 5 um, GSD 2, densities of the CRC Handbook; inland "
                       "nitrate 80 % fine (70-90 % below 2.5 um at continental sites); "
                       "workbench/drydep/options.py"),
    "coastal_distance": ("from memory", "50 km: sea salt falls off within the first tens "
                         "of km inland (common practice)"),
    "size_nodes": ("our choice", "numerical: 12 Gauss-Hermite nodes per mode, far finer "
                   "than the precision of the Vd model"),
    "particle_settling": ("published", "Stokes' law with the slip correction, Zhang et al. "
                          "(2001) Eq. 2, the published scheme; \"clift_gauvin\" (Clift and Gauvin "
                          "1970) slows the grown coarse tail (docs/methods_dry_particles.md "
                          "section 10.3)"),
    "unstable_iterations": ("our choice", "numerical: 30 bisection halvings narrow u* to "
                            "about 1e-9 of its bracket"),
    "charnock_iterations": ("our choice", "numerical: the Charnock fixed point settles "
                            "within a few steps"),
    "nh3_treatment": ("our choice", "deposition only, the convention of budgets from "
                      "measured air; the bidirectional model needs emission potentials "
                      "that are rarely known"),
    "nh3_emission_potential": ("our choice", "empty: the class defaults of "
                               "workbench.drydep.nh3_bidirectional"),
    "nh3_acid_ratio": ("our choice", "1, the acid ratio of Massad et al. (2010) when the "
                       "air is not used to give it"),
    "hno3_rc_floor": ("our choice", "on: the floor of Erisman et al. (1994), from memory; "
                      "the literature splits (docs/methods_dry.md)"),
    "compare_schemes": ("our choice", "off: each further scheme costs an engine run; "
                        "asked for when the structural spread is wanted"),
    "rc_scale": ("our choice", "empty: a sensitivity knob with no published default"),
    "components": ("our choice", "on: every path of Rc kept for inspection (memory "
                   "allowing)"),
    "nh3_cuticle": ("our choice", "the humidity cuticle of Massad et al. (2010) for "
                    "wesely1989, which gives NH3 none of its own; zhang2003's own cuticle "
                    "(docs/methods_dry.md section 9)"),
    "so2_codeposition": ("our choice", "off: the parameterisation (Simpson et al. 2012 "
                         "after Fowler et al. 2001, from memory) is fitted to European "
                         "conditions; on request"),
    "nh3_acid_ratio_from_air": ("our choice", "off: the fixed `nh3_acid_ratio` unless "
                                "asked"),
    "sampler_coarse_fraction": ("our choice", "empty: the site's `coarse_fraction` or the "
                                "coastal/inland rule"),
    "so2_cuticle": ("our choice", "the scheme's own dry SO2 cuticle: Erisman et al. "
                    "(1994)'s R_w (from memory) lifts the forests into 0.5-1.5 cm/s but "
                    "the grass of the humid demo uplands above 0.8 cm/s "
                    "(docs/methods_dry.md section 9.6)"),
}

BUDGET = {
    "sulfate_basis": ("common practice", "non-sea-salt S, the acidifying S of "
                      "critical-load work"),
    "pair_split": ("our choice", "as measured; the all-gas and all-particle bracket is "
                   "always reported beside"),
    "air_censored": ("common practice", "half the detection limit"),
    "bulk_correction": ("our choice", "none: refuse rather than count particle dry "
                        "deposition twice at a bulk collector"),
    "bulk_wet_factor": ("from memory", "0.8, a typical wet-only/bulk ratio of sulfate "
                        "and nitrate at rural sites"),
    "bulk_wet_factor_ion": ("our choice", "empty: every ion takes bulk_wet_factor (the "
                            "funnel's gain differs by ion, from memory: give paired "
                            "wet-only and bulk data's own ratios)"),
    "min_air_coverage": ("common practice", "75 % data capture for a period mean of air "
                         "concentrations (75 % per quarter in US EPA completeness rules, "
                         "from memory)"),
    "require_all_seasons": ("common practice", "an annual mean needs every season (the "
                            "same completeness rules, from memory)"),
    "min_vd_coverage": ("our choice", "90 %, the completeness level of the wet chain"),
    "min_slot_hours": ("common practice", "7, about a week of the month"),
    "diurnal_profile": ("our choice", "empty: constant within a period, all a period "
                        "sample tells"),
    "preferred_method": ("our choice", "empty: the sampler covering the most hours"),
}

UNCERTAINTY = {
    "draws": ("our choice", "0, off: the Monte Carlo costs time and is asked for"),
    "seed": ("our choice", "a fixed seed, so that runs repeat"),
    "vd_gsd": ("from memory", "the model spread in Flechard et al. (2011), Atmos. Chem. "
               "Phys. 11, 2703 (docs/methods_uncertainty.md); read as one geometric "
               "standard deviation by our judgement (the paper gives no GSD)"),
    "vd_shared_fraction": ("our choice", "0.5, no published value"),
    "air_rel_sd": ("from memory", "5 %, network QA of filter packs and denuders"),
    "precip_conc_rel_sd": ("from memory", "5 %, network QA of ion chromatography"),
    "gauge_catch_rel_sd": ("from memory", "5 % for rain gauges, more where snow falls"),
    "depth_rel_sd": ("from memory", "5 % per sample depth (common practice)"),
    "censored_rel_sd": ("common practice", "1/sqrt(3): a value uniform between 0 and the "
                        "limit, about half the limit"),
    "vd_fill_rel_sd": ("our choice", "0.3, from memory of hour-to-hour Vd variability"),
    "pwm_fill_rel_sd": ("from memory", "0.3, the year-to-year variability of PWMs"),
    "systematic_errors": ("our choice", "shared: a scheme's bias and a gauge's catch repeat "
                          "every year, so a span's range does not narrow with its years "
                          "(docs/methods_uncertainty.md)"),
    "lab_bias_precip_rel_sd": ("from memory", "3 %: interlaboratory comparisons of "
                               "precipitation chemistry, most laboratories within a few "
                               "percent of the reference for the major ions"),
    "lab_bias_air_rel_sd": ("from memory", "5 %: filter and denuder extracts add extraction "
                            "and blanks to the analysis"),
    "vd_class_fraction": ("our choice", "0.5, no published value: a class's own surface "
                          "terms (Rc, its roughness) err apart from another class's; one "
                          "receptor's spread kept"),
    "vd_site_gsd": ("our choice", "1.2, from memory of the tens of percent by which fluxes "
                    "measured a few hundred metres apart over one surface differ"),
    "lab_bias_filter_pack": ("common practice", "true: a filter pack's gas and particle "
                             "filters are extracted and run in one batch against one "
                             "calibration"),
    "bulk_factor_rel_sd": ("from memory", "0.1: wet-only / bulk ratios of rural sites "
                           "spread over roughly 0.7-0.9 around the typical 0.8"),
    "bulk_factor_ion_correlation": ("our choice", "0.7, no published value: from memory, "
                                    "the bulk / wet-only ratios of sulfate and nitrate at a "
                                    "site rise and fall together (the funnel's exposure), "
                                    "ammonium's less so (NH3 gained, NH4 lost in the "
                                    "standing sample)"),
    "nh3_gamma_gsd": ("our choice", "3.0, from memory of the scatter of measured stomatal "
                      "emission potentials about their relation with the nitrogen input "
                      "in the review of Massad et al. (2010), Atmos. Chem. Phys. 10, "
                      "10359-10386: about a factor of 3 either way within one kind of "
                      "surface (the classes themselves span tens to thousands)"),
    "pair_shift_nitrate": ("our choice", "[0, 0]: off, so that a run draws as before; a "
                           "range for filter packs in warm weather from memory of the "
                           "ammonium nitrate lost from Teflon front filters (tens of percent "
                           "of the particle nitrate in summer, Appel et al. 1981, Atmos. "
                           "Environ. 15, 283; Hering and Cass 1999, J. Air Waste Manage. "
                           "Assoc. 49, 725) in docs/methods_uncertainty.md"),
    "pair_shift_ammonium": ("our choice", "[0, 0]: off; the ammonium lost with the "
                            "nitrate (the same salt) moves NH4+ to NH3 on the back filter, "
                            "from memory as for pair_shift_nitrate"),
    "explain_ranges": ("our choice", "off: each drawn factor is drawn once more alone, about "
                       "the cost of the Monte Carlo again per factor; asked for when a "
                       "range's width is to be explained"),
    "vd_follows_air": ("our choice", "off: outputs as before; on, 8 more runs of the "
                       "velocities per run (docs/performance.md) for draws whose Vd(SO2) "
                       "and Vd(NH3) follow the drawn NH3/SO2 and acid ratios"),
}

SENSITIVITY = {
    "samples": ("common practice", "64: enough to rank ~10 factors; the confidence "
                "intervals say when not"),
    "seed": ("our choice", "a fixed seed, so that runs repeat"),
    "factors": ("from memory", "Vd over +-1 GSD of the [uncertainty] defaults (Flechard et "
                "al. 2011), gauge catch and concentrations +-10 % (common practice)"),
    "sites": ("our choice", "empty: every site"),
    "receptors": ("our choice", "empty: every active receptor"),
}

#: section -> field -> (kind, text).
SOURCES = {"wet": WET, "dry": DRY, "budget": BUDGET, "uncertainty": UNCERTAINTY,
           "sensitivity": SENSITIVITY}


def source_text(section: str, name: str) -> str:
    """The source of an option's default as written in docs/scenario.md, e.g.
    ``"common practice: half the detection limit"``; ``""`` when there is none.

    >>> source_text("wet", "capture_min_depth")
    'common practice: 1 mm: below it the capture ratio is noise'
    """
    kind, text = SOURCES.get(section, {}).get(name, ("", ""))
    return f"{kind}: {text}" if kind else ""
