"""Plausibility checks of measured concentrations (air and precipitation).

Nothing here refuses a file.  A value that cannot be right is set to missing and its
row flagged with a hint, so that the ledger says what happened to it:

* a missing-value code typed as a value (-999, 9999, ...): masked;
* a negative concentration below the blank-subtraction tolerance of its species:
  masked (a small negative stays censored, as before);
* an air concentration above the plausible maximum of its species: masked; when more
  than half of a sampler's values sit above the maximum and a factor 1000 brings them
  back into range, the hint names the likely unit slip (ng/m3 written under a ug/m3
  header, ppb under ppm), and every value of that sampler is masked (so also where a
  quarter or more lie above the maximum, every one of them back in range at 1/1000 and
  its low values high too: :data:`SLIP_SHARE_ALL_FIT`), those below the
  maximum too (they are 1000x too high as well), and so are its values below detection
  (``<limit``: the limit is 1000x too high, masked with the same flag, never kept as a
  detection limit).

The thresholds are in :data:`AIR_RANGES`, each with its source.  Slips that stay in
range (element vs species basis of a particle column, ppb vs ug/m3 of a gas measured
by two samplers) are named by :mod:`workbench.io.airslip` in the ledger notes.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .. import species as _species
from ..constants import GAS_CONSTANT
from ..units import UG_PER_KG

#: Numbers that data systems and spreadsheets use for "no value" (common practice in
#: station and laboratory data exchange; compared with the number as typed).
SENTINELS = (-9999.99, -9999.9, -9999.0, -999.99, -999.9, -999.0, -99.99, -99.9, -99.0,
             -8888.0, -888.0, 999.9, 999.99, 9999.0, 9999.9, 99999.0, 999999.0)

#: Air concentrations of a sampling-period mean, expressed as the species itself
#: [ug m-3]: (largest plausible value, tolerance of a negative value, source).  A value
#: above the maximum is masked; a negative value down to minus the tolerance is a
#: blank-subtraction result and stays censored, a larger one is masked.
AIR_RANGES = {
    "SO2": (500.0, 2.0, "above the EU 1-hour limit value of 350 ug/m3 (Directive "
            "2008/50/EC, Annex XI; from memory); periods at deposition sites are far lower"),
    "NO2": (400.0, 2.0, "the EU alert threshold of 400 ug/m3 (Directive 2008/50/EC, "
            "Annex XII; from memory) as a bound for a period mean"),
    "O3": (500.0, 5.0, "about twice the EU alert threshold of 240 ug/m3 (Directive "
           "2008/50/EC, Annex XII; from memory)"),
    "HNO3": (50.0, 0.5, "common practice: ambient nitric acid is a few ug/m3 at most"),
    "NH3": (1000.0, 2.0, "common practice: weekly means beside livestock housing reach "
            "some hundreds of ug/m3"),
    "pSO4": (100.0, 0.5, "common practice: above the EU daily PM10 limit of 50 ug/m3 "
             "(Directive 2008/50/EC, Annex XI; from memory) for one component"),
    "pNO3": (100.0, 0.5, "common practice, as pSO4"),
    "pNH4": (100.0, 0.5, "common practice, as pSO4"),
    "pNa": (100.0, 0.5, "common practice: sea-salt sodium on a coast stays below tens of ug/m3"),
    "pCl": (150.0, 0.5, "common practice, as pNa (chloride/sodium mass ratio 1.8 in sea salt)"),
    "pCa": (50.0, 0.5, "common practice: soil dust calcium"),
}

#: Factor by which values written in a unit 1000x smaller than their header's (ng/m3
#: under a ug/m3 header, ppb under ppm) are too high [-] (by definition of the SI
#: prefixes).
UNIT_SLIP = 1000.0
#: Share of a sampler's values above the maximum that makes it a unit slip when every
#: one of them comes back into range at 1/1000 [-] (a quarter; our choice: the maxima
#: of :data:`AIR_RANGES` bound single high periods, so a quarter of a sampler's periods
#: above one is no real record; with a share above one half a slip needs only one value
#: back in range, as before).
SLIP_SHARE_ALL_FIT = 0.25
#: Fewest values above the maximum for that rule [-] (our choice: a few high weeks of a
#: short record are no pattern).
SLIP_MIN_VALUES = 8
#: That rule also asks the sampler's low values to stay high: its
#: :data:`SLIP_LOW_QUANTILE` quantile at or above :data:`SLIP_LOW_SHARE` of the maximum
#: [-], [-] (our choice, from benchmarks/air_thousand_slip.py, docs/data_formats.md
#: section 3).  A clean site's NH3 in ng/m3 has a narrow spread (log sd 0.4-0.8 between
#: weeks, common practice; the demo's 0.42-0.44), so hardly a week below 100 read as
#: ug/m3 (0.1 ug/m3); a sampler beside livestock housing whose upper quarter passes
#: 1000 ug/m3 when the plume reaches it has weeks of the area's level when the wind turns
#: (log sd 1-1.5): without this, a year of such a site (median 300 ug/m3, log sd 1.5)
#: was masked whole in 36 % of invented one-year records, now in 0.6 %.
SLIP_LOW_QUANTILE = 0.05
SLIP_LOW_SHARE = 0.1
#: Factor on the maximum up to which a value of a sampler declared in a source's plume
#: (``source_plume``) is kept [-] (our choice: 10 x the NH3 maximum is 10 mg/m3, some
#: 14 ppm, the level inside livestock houses, 5-25 ppm, from memory; above it a plume
#: sampler's value is masked as any other).
PLUME_MAX_FACTOR = 10.0
#: Units a column may be written in, searched for the one 1000x smaller than a header's.
_SLIP_UNITS = ("pg/m3", "ng/m3", "ug/m3", "mg/m3", "ppt", "ppb", "ppm",
               "fmol/mol", "pmol/mol", "nmol/mol", "umol/mol", "pmol/m3", "nmol/m3",
               "umol/m3", "mmol/m3")
#: Temperature and pressure used to express a mixing ratio as ug/m3 for the range
#: checks only [K], [Pa] (20 degC, 1013.25 hPa; the checks are order-of-magnitude;
#: our choice).
CHECK_TEMPERATURE, CHECK_PRESSURE = 293.15, 101325.0


def check_density(amount, kind: str) -> np.ndarray:
    """An air concentration as amount density for the checks [mol m-3]: a mixing ratio
    [mol mol-1] taken at :data:`CHECK_TEMPERATURE` and :data:`CHECK_PRESSURE`, an
    amount density [mol m-3] as it is.

    >>> round(float(check_density(1e-9, "mixing_ratio")) * 1e9, 4)   # 1 ppb [nmol m-3]
    41.5712
    """
    a = np.asarray(amount, float)
    if kind == "mixing_ratio":
        a = a * CHECK_PRESSURE / (GAS_CONSTANT * CHECK_TEMPERATURE)
    return a


def sentinel_mask(raw) -> np.ndarray:
    """True where a number as typed is a missing-value code (:data:`SENTINELS`).

    >>> sentinel_mask([1.0, -999, 9999, -9999.0, 999.5]).tolist()
    [False, True, True, True, False]
    """
    return np.isin(np.asarray(raw, float), SENTINELS)


def as_ugm3(amount, kind: str, species: str) -> np.ndarray:
    """An air concentration as ug of the species per m3, for the range checks.

    Parameters
    ----------
    amount : array_like
        [mol m-3] (``kind="amount_density"``) or [mol mol-1] (``"mixing_ratio"``).
    kind : str
    species : str

    Returns
    -------
    ndarray
        [ug m-3]; a mixing ratio taken at 20 degC and 1013.25 hPa.
    """
    m = _species.get(species).molar_mass  # [kg mol-1]
    return check_density(amount, kind) * m * UG_PER_KG


def thousandth_unit(unit: str | None) -> str:
    """The unit 1000x smaller than `unit`, as a user would write it ("" if none known).

    >>> thousandth_unit("ug/m3"), thousandth_unit("ppm"), thousandth_unit("nmol/mol")
    ('ng/m3', 'ppb', 'pmol/mol')
    """
    from ..units import Q_, parse_unit
    try:
        u, _ = parse_unit(str(unit))
    except Exception:            # an unparsable unit was refused before; no name then
        return ""
    moles = "mol" in str(unit)           # nmol/mol -> pmol/mol rather than ppt
    for c in sorted(_SLIP_UNITS, key=lambda c: ("mol" in c) != moles):
        try:
            cu, _ = parse_unit(c)
        except ValueError:       # a unit this registry lacks
            continue
        if cu.dimensionality == u.dimensionality and np.isclose(
                Q_(1.0, u).to(cu).magnitude, UNIT_SLIP):
            return c
    return ""


def air_checks(species: str, ugm3, censored, groups, unit: str | None = None, plume=None):
    """Range and unit-slip checks of one air species.

    Parameters
    ----------
    species : str
    ugm3 : ndarray
        The values as [ug m-3] (NaN for missing; censored values hold their limit).
    censored : ndarray of bool
    groups : ndarray of str
        One label per row (site and sampler): a unit slip is judged per group.
    unit : str, optional
        The column's unit as written in the header, named in the unit-slip hint.
    plume : ndarray of bool, optional
        The rows of samplers declared in a source's plume (the site's ``source_plume``
        names the species): never judged a unit slip, and their values above the
        maximum are kept with a flag (a weekly mean of some ppm beside a house is real).

    Returns
    -------
    mask : ndarray of bool
        Values to set to missing (values below detection of a sampler judged in the
        smaller unit among them: the caller drops their censoring).
    reasons : ndarray of str
        The flag per row ("" for none).
    """
    hi, tol, _ = AIR_RANGES.get(species, (np.inf, np.inf, ""))
    v = np.where(censored, np.nan, np.asarray(ugm3, float))
    n = len(v)
    reasons = np.full(n, "", dtype=object)
    too_low = v < -tol
    reasons[too_low] = (f"{species} negative beyond the blank tolerance -{tol:g} ug/m3 "
                        "(masked)")
    plume = np.zeros(n, bool) if plume is None else np.asarray(plume, bool)
    high_plume = plume & (v > hi) & (v <= PLUME_MAX_FACTOR * hi)
    reasons[high_plume] = (f"{species} above the plausible {hi:g} ug/m3 at a sampler "
                           f"declared in a source's plume, source_plume in sites.toml (kept)")
    too_high = (v > hi) & ~high_plume
    if too_high.any():
        g = pd.Series(groups)
        share = (pd.Series(too_high.astype(float)).where(~np.isnan(v)).groupby(g)
                 .transform("mean").to_numpy())
        # a sampler whose values are mostly too high by the factor is in the smaller
        # unit as a whole: its values below the maximum are 1000x too high as well
        # (300 ng/m3 of SO2 read as 300 ug/m3), so every value of it is masked, not
        # only those above the maximum
        fits = too_high & (v / UNIT_SLIP <= hi)
        slip_group = (share > 0.5) & (pd.Series(fits).groupby(g).transform("any").to_numpy())
        # a species of wide range (NH3: 1000 ug/m3) in ng/m3 puts only its upper values
        # above the maximum (a grassland's 0.8 ug/m3 read as 800): a sampler with a
        # sizeable share above it, every one of them back in range at 1/1000, is one too
        fits_all = pd.Series(fits == too_high).groupby(g).transform("all").to_numpy()
        n_high = pd.Series(too_high).groupby(g).transform("sum").to_numpy()
        # ... whose low values stay high too (a near-source site has weeks far lower)
        low = pd.Series(v).groupby(g).transform("quantile", SLIP_LOW_QUANTILE).to_numpy()
        wide = ((share >= SLIP_SHARE_ALL_FIT) & fits_all & (n_high >= SLIP_MIN_VALUES)
                & (low >= SLIP_LOW_SHARE * hi) & ~slip_group)
        slip_group |= wide
        with np.errstate(invalid="ignore"):   # a negative stays censored (or masked)
            slip = slip_group & (v > 0) & ~(too_high & ~fits)
        # a value below detection at such a sampler holds a limit 1000x too high
        # ('<50' ng/m3 read as '<50' ug/m3): masked with the same flag, not kept
        limit = np.asarray(ugm3, float)
        with np.errstate(invalid="ignore"):
            slip |= slip_group & np.asarray(censored, bool) & (limit > 0)
        too_high = too_high | slip
        reasons[too_high & ~slip] = (f"{species} above the plausible {hi:g} ug/m3 (masked)")
        small = thousandth_unit(unit) if unit else ""
        guess = (f"{small} written under a {unit} header?" if small else
                 f"values in a unit {UNIT_SLIP:g}x smaller than the header's?")
        reasons[slip & ~wide] = (f"{species} values look {UNIT_SLIP:g}x too high at this "
                                 f"sampler: {guess} (masked)")
        # under half above the maximum: a sampler in a source's plume has these numbers
        # too (docs/data_formats.md section 3); say how to keep its values
        reasons[slip & wide] = (f"{species} values look {UNIT_SLIP:g}x too high at this "
                                f"sampler: {guess} or a sampler in a source's plume? then "
                                f"write source_plume = [\"{species}\"] for its site in "
                                f"sites.toml (masked)")
    return too_low | too_high, reasons


def ranges_table() -> str:
    """The ranges as a Markdown table (used in docs/data_formats.md)."""
    rows = ["| species | max [ug/m3] | negative tolerance [ug/m3] | source |", "|---|---|---|---|"]
    for sp, (hi, tol, src) in AIR_RANGES.items():
        rows.append(f"| `{sp}` | {hi:g} | {tol:g} | {src} |")
    return "\n".join(rows)
