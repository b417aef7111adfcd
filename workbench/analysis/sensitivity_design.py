"""What a sensitivity analysis varied, how often the model ran, and what it held fixed.

The record that sensitivity.html, provenance.json and the console of ``workbench
sensitivity`` carry.  Before, the page named neither the base sample, the seed nor the
number of model runs, the factors appeared by their short names only (``precip_conc``,
``vd_pNH4``) without their ranges, and nothing said which of the engine's parameters and
which errors were held at the scenario's values: "a factor left out has no index" with no
list of them.
"""
from __future__ import annotations

from .sensitivity_options import LINEAR, SensitivityOptions, factor_kind

#: What each linear factor multiplies (all [1], uniform on the range given).
LINEAR_TEXT = {"gauge_catch": "every precipitation depth (the gauge's catch)",
               "precip_conc": "every precipitation concentration (the laboratory's "
                              "calibration)",
               "air_conc": "every air concentration (the laboratory's calibration)",
               "bulk_wet_factor": "a bulk collector's wet-only / bulk ratio "
                                  "(bulk_correction = \"scale_wet\")"}
#: The engine's parameters by kind: (words, unit).
ENGINE_TEXT = {"wetness_rule": ("the surface-wetness rule, one of the rules listed, "
                                "equally likely", ""),
               "fine_fraction": ("the fine-mode mass fraction of {x}", "[1]"),
               "fine_mmd": ("the mass median diameter of {x}'s fine mode", "[m]"),
               "z0": ("the roughness length of the class {x}", "[m]"),
               "rc_scale": ("a multiplier of {x}'s surface resistance Rc", "[1]"),
               "nh3_gamma": ("a multiplier of the stomatal NH3 emission potential Gamma_s "
                             "of the class {x} in force at each site (the class default, "
                             "the scenario's or the site's own value; under the "
                             "scenario's nh3_treatment: no effect unless bidirectional)", "[1]")}
#: The families of engine factors, as a user names them.
ENGINE_FAMILIES = {"wetness_rule": "wetness_rule", "fine_fraction": "fine_fraction_<particle>",
                   "fine_mmd": "fine_mmd_<particle>", "z0": "z0_<land use>",
                   "rc_scale": "rc_scale_<gas>", "nh3_gamma": "nh3_gamma_<land use>"}
#: The least base sample N read as enough to rank about ten factors (common practice,
#: the default of ``samples``; docs/methods_uncertainty.md measures the error of S1 at
#: N = 64 as about 0.1 on the demo's site-month).  A smaller N is flagged.
SAMPLES_ENOUGH = 64
#: What the Sobol factors never hold: the random per-sample errors (the Monte Carlo's).
RANDOM_ERRORS = ("the random errors of each sample (analysis precision, depth reading, "
                 "values below detection, gap-filled Vd and PWM): the Monte Carlo's, "
                 "[uncertainty] of workbench run")


def factor_text(name: str) -> str:
    """What the factor `name` varies, with its unit [text].

    >>> factor_text("vd_NH3")
    'multiplier of the dry deposition velocity of NH3 [1]'
    >>> factor_text("z0_grass")
    'the roughness length of the class grass [m]'
    """
    kind = factor_kind(name)
    if kind == "linear":
        if name.startswith("vd_"):
            return f"multiplier of the dry deposition velocity of {name[3:]} [1]"
        return f"multiplier of {LINEAR_TEXT[name]} [1]"
    words, unit = ENGINE_TEXT[kind]
    prefix = {"fine_fraction": "fine_fraction_", "fine_mmd": "fine_mmd_", "z0": "z0_",
              "rc_scale": "rc_scale_", "nh3_gamma": "nh3_gamma_"}.get(kind, "")
    return (words.format(x=name[len(prefix):]) + (f" {unit}" if unit else "")).strip()


#: The Monte Carlo's drawn factors (:data:`workbench.analysis.variance_shares.FACTORS`,
#: options of ``[uncertainty]``) in words with their unit, as tables and figures name them.
DRAWN_TEXT = {"vd_gsd": "Vd model factor (geometric sd)",
              "vd_site_gsd": "Vd factor of each site (geometric sd)",
              "air_rel_sd": "analysis of air concentrations (relative sd)",
              "lab_bias_air_rel_sd": "lab bias of air concentrations (relative sd)",
              "censored_rel_sd": "values below detection (relative sd)",
              "vd_fill_rel_sd": "gap-filled Vd (relative sd)",
              "precip_conc_rel_sd": "analysis of precipitation concentrations (relative sd)",
              "lab_bias_precip_rel_sd": "lab bias of precipitation concentrations "
                                        "(relative sd)",
              "gauge_catch_rel_sd": "gauge catch (relative sd)",
              "depth_rel_sd": "reading of precipitation depths (relative sd)",
              "pwm_fill_rel_sd": "gap-filled precipitation-weighted means (relative sd)",
              "bulk_factor_rel_sd": "bulk collector's wet-only / bulk ratio (relative sd)",
              "nh3_gamma_gsd": "NH3 emission potential Gamma_s (geometric sd)",
              "pair_shift_nitrate": "gas/particle split of HNO3/pNO3 (share moved) [1]",
              "pair_shift_ammonium": "gas/particle split of NH3/pNH4 (share moved) [1]"}
#: A Sobol factor's short words by kind (the long ones: :func:`factor_text`).
SHORT_TEXT = {"gauge_catch": "gauge catch (multiplier)",
              "precip_conc": "precipitation concentrations (multiplier)",
              "air_conc": "air concentrations (multiplier)",
              "bulk_wet_factor": "wet-only / bulk ratio (multiplier)",
              "vd": "Vd of {x} (multiplier)",
              "wetness_rule": "surface-wetness rule",
              "fine_fraction": "fine-mode fraction of {x} [1]",
              "fine_mmd": "fine-mode diameter of {x} [m]",
              "z0": "roughness length of {x} [m]",
              "rc_scale": "Rc of {x} (multiplier)",
              "nh3_gamma": "NH3 Gamma_s of {x} (multiplier)"}


def factor_label(name: str) -> str:
    """Short words with the unit of a factor, for a table's row or a figure's axis: a
    Sobol factor (``vd_NH3``, ``z0_grass``), a Monte Carlo factor (``vd_gsd``,
    ``lab_bias_air_rel_sd``) or a Vd species' part (``vd_gsd.NH3``); the name itself
    where it is none of these.

    >>> factor_label("lab_bias_air_rel_sd"), factor_label("vd_NH3")
    ('lab bias of air concentrations (relative sd)', 'Vd of NH3 (multiplier)')
    >>> factor_label("vd_gsd.NH3")
    'Vd model factor (geometric sd) of NH3'
    """
    name = str(name)
    if name in DRAWN_TEXT:
        return DRAWN_TEXT[name]
    head, dot, sp = name.partition(".")
    if dot and head in DRAWN_TEXT:
        return f"{DRAWN_TEXT[head]} of {sp}"
    try:
        kind = factor_kind(name)
    except ValueError:
        return name
    if kind == "linear":
        return (SHORT_TEXT["vd"].format(x=name[3:]) if name.startswith("vd_")
                else SHORT_TEXT.get(name, name))
    prefix = {"fine_fraction": "fine_fraction_", "fine_mmd": "fine_mmd_", "z0": "z0_",
              "rc_scale": "rc_scale_", "nh3_gamma": "nh3_gamma_"}.get(kind, "")
    return SHORT_TEXT[kind].format(x=name[len(prefix):].replace("_", " "))


def range_text(name, rng) -> str:
    """The range of factor `name` as read: ``0.5 to 2``, or the rules of a list."""
    if factor_kind(name) == "wetness_rule":
        return ", ".join(map(str, rng))
    return f"{rng[0]:g} to {rng[1]:g}"


#: The unit of a factor's range on the console, by kind (:func:`range_words`).
RANGE_UNIT = {"linear": " (multiplier)", "rc_scale": " (multiplier)",
              "nh3_gamma": " (multiplier)", "fine_fraction": " (mass fraction)",
              "fine_mmd": " m", "z0": " m"}


def range_words(name, rng) -> str:
    """The range of factor `name` with its unit, for a line of text that lists several
    factors: ``0.5 to 2 (multiplier)``, ``0.01 to 0.1 m``, ``one of a, b (equally
    likely)``.  Before, the console of ``workbench sensitivity`` wrote ``vd_SO2 0.667
    to 1.5`` beside ``z0_grass 0.01 to 0.1``: a multiplier and a length in metres read
    alike, and a multiplier of Vd could be read as a Vd in cm/s.

    >>> range_words("vd_SO2", (0.5, 1.5)), range_words("z0_grass", (0.01, 0.1))
    ('0.5 to 1.5 (multiplier)', '0.01 to 0.1 m')
    >>> range_words("wetness_rule", ["met", "rh"])
    'one of met, rh (equally likely)'
    """
    kind = factor_kind(name)
    if kind == "wetness_rule":
        return f"one of {range_text(name, rng)} (equally likely)"
    return range_text(name, rng) + RANGE_UNIT.get(kind, "")


def design(options: SensitivityOptions, counts: dict, dry=None, budget=None) -> dict:
    """The record of an analysis (provenance.json's ``sensitivity_design``).

    Parameters
    ----------
    options : SensitivityOptions
        The options analysed (with the bulk factor where it was added).
    counts : dict
        ``sobol_evaluations``, ``sobol_engine_runs``, ``tornado_evaluations``,
        ``tornado_engine_runs`` (:func:`workbench.analysis.sensitivity.sobol` and
        ``tornado`` keep them in their frames' ``attrs``); optionally
        ``widest_interval``, the largest ``S1_conf`` or ``ST_conf`` [1], and ``no_rows``,
        why sensitivity.csv holds no row (text, or None).
    dry, budget : DryOptions, BudgetOptions, optional
        The scenario's, for the values held (the wetness rule) and whether the bulk
        factor applies (``bulk_correction = "scale_wet"``).

    Returns
    -------
    dict
        ``samples``, ``seed``, the counts, ``factors`` (name -> ``{"range", "varies"}``),
        ``not_varied`` (list of text), ``widest_interval`` and ``too_few_samples`` (a
        caution where N < :data:`SAMPLES_ENOUGH`, else None), ``no_rows``.
    """
    names = list(options.factors)
    held = []
    linear_out = [n for n in LINEAR if n not in names and (
        n != "bulk_wet_factor" or getattr(budget, "bulk_correction", None) == "scale_wet")]
    if linear_out:
        held.append("at 1: " + ", ".join(linear_out))
    kinds = {factor_kind(n) for n in names}
    engine = [f"wetness_rule ({dry.wetness_rule!r})" if kind == "wetness_rule" and dry is not None
              else family for kind, family in ENGINE_FAMILIES.items() if kind not in kinds]
    if engine:
        held.append("at the scenario's values: " + ", ".join(engine))
    held.append(RANDOM_ERRORS)
    counts = dict(counts)
    widest = counts.pop("widest_interval", None)
    no_rows = counts.pop("no_rows", None)
    few = None
    if options.samples < SAMPLES_ENOUGH:
        few = (f"N = {options.samples} is below {SAMPLES_ENOUGH}: the indices are a first "
               "look, not a ranking"
               + (f" (the widest 95 % interval is +-{widest:.2g})" if widest is not None else "")
               + f"; set [sensitivity] samples = {SAMPLES_ENOUGH} or more")
    return {"samples": options.samples, "seed": options.seed, **counts,
            "widest_interval": widest, "too_few_samples": few, "no_rows": no_rows,
            "factors": {n: {"range": list(options.factors[n]), "varies": factor_text(n)}
                        for n in names},
            "not_varied": held}


#: The head of the line of :func:`design_lines` that lists the factors varied, each with
#: its range (``"; "`` between them): the console wraps it between whole items.
VARIED = "varied (uniform ranges): "


def design_lines(d: dict) -> list:
    """The record :func:`design` as lines of text (the console's and the page's)."""
    k = len(d["factors"])

    def runs(n):
        return f"{n} engine run{'s' if n != 1 else ''}"
    out = [f"Sobol indices: {k} factors, base sample N = {d['samples']}, "
           f"N (k + 2) = {d['sobol_evaluations']} model evaluations ({runs(d['sobol_engine_runs'])}"
           f"; the others reuse a run on the linear layer), seed {d['seed']} (Sobol "
           "sequence and bootstrap: the same seed repeats every number)",
           f"tornado: 2k + 1 = {d['tornado_evaluations']} evaluations "
           f"({runs(d['tornado_engine_runs'])}), each factor at the low and high end of its "
           "range (not percentiles: a uniform range's 0 % and 100 %), the others at their base",
           VARIED + "; ".join(f"{n} {range_words(n, f['range'])}"
                                                   for n, f in d["factors"].items()),
           "not varied: " + "; ".join(d["not_varied"])]
    if d.get("too_few_samples"):
        out.insert(0, "caution: " + d["too_few_samples"])
    if d.get("no_rows"):
        out.insert(0, "warning: " + d["no_rows"])
    return out


def design_html(d: dict) -> str:
    """The record :func:`design` as a section of sensitivity.html."""
    import html
    esc = html.escape
    lines = [ln for ln in design_lines(d) if not ln.startswith(("caution: ", "warning: "))]
    few = (f"<p class='few' style='background:#fde2e2;padding:.4em 1em'><b>Caution.</b> "
           f"{esc(d['too_few_samples'])}.</p>" if d.get("too_few_samples") else "")
    rows = "".join(f"<tr><td><code>{esc(n)}</code></td><td>{esc(range_text(n, f['range']))}"
                   f"</td><td>{esc(f['varies'])}</td></tr>" for n, f in d["factors"].items())
    return ("<h2>What was varied</h2>" + few
            + f"<p class='runs'>{esc(lines[0])}; {esc(lines[1])}.</p>"
            "<table border='1' style='border-collapse:collapse' cellpadding='4'>"
            "<tr><th>factor</th><th>range (uniform)</th><th>what it varies</th></tr>"
            f"{rows}</table>"
            f"<p class='held'><b>Not varied</b> (held at these values; they have no index): "
            f"{esc('; '.join(d['not_varied']))}.</p>"
            "<p>S1: first-order index, the share of the output's variance the factor explains "
            "alone; ST: total index, with all its interactions (ST >= S1; the S1 add up to "
            "1 or less, the ST to 1 or more, each within its sampling error); S1_conf and "
            "ST_conf: half-widths of their 95 % bootstrap intervals [1]. The tornado's "
            "outputs are the deposition of the "
            "period in the unit on its axis.</p>")


def no_rows_text(inputs, frame, period) -> str | None:
    """Why sensitivity.csv holds no row (None when it holds some) [text]: the inputs the
    reporting span misses (:func:`workbench.preflight.coverage_notes`), else every total
    missing or constant.  Before, a span without data (``[period]`` of a year after the
    record) wrote two header-only CSV files, said nothing on the console, and the page
    said "No total varies with the factors given", as if the budget did not respond.

    Parameters
    ----------
    inputs : workbench.io.Inputs
        The inputs analysed.
    frame : pandas.DataFrame
        The Sobol indices (:func:`workbench.analysis.sensitivity.sobol`).
    period : dict
        The scenario's ``[period]`` (``start``, ``end``: UTC text or None).
    """
    if not frame.empty:
        return None
    from ..preflight import coverage_notes
    why = []
    if period.get("start") is not None and period.get("end") is not None:
        why = [n[len("warning: "):] for n in coverage_notes(inputs, period["start"],
                                                            period["end"])
               if n.startswith("warning: ")]
    return ("no total of the cells analysed varies, and sensitivity.csv holds no row: "
            + ("; ".join(why) if why else "every total is missing or constant "
               "(workbench run on the scenario says which and why)"))
