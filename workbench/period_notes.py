"""The run note of a completeness rule that one sample decides: a reporting period
(a month, a season, a custom span) so short that a single sample left out (a
contaminated or lost week) takes more of it than the coverage minimum lets a period
miss.

Weekly samples in a month: a week is 168 of 672-744 h, 22.6 % of a 31-day month, while
the default [wet] min_coverage_fraction of 0.9 lets a period miss 10 %; one week not
used fails the month, where it is 1.9 % of a year.  The rule is the same for every
period (docs/methods_wet.md section 7); the note says that it is strict at this
resolution and which options a user may set (docs/budget.md, "Periods other than the
calendar year").
"""
from __future__ import annotations

import numpy as np
import pandas as pd

#: The first words of every note of this module (the site explorer shows them under its
#: monthly figure).
NOTE_START = "completeness of "
#: The kind of a period table (``kind`` column) as the note names it.
KIND_WORDS = {"month": "month", "season": "season", "year": "year",
              "hydro_year": "hydrological year", "custom": "custom period"}


def median_hours(ds) -> pd.Series:
    """Median sample length per sampler [h] (``sampler_id``; one group without it)."""
    hours = (ds["end"].values.astype("datetime64[ns]")
             - ds["start"].values.astype("datetime64[ns]")) / np.timedelta64(1, "h")
    keys = (ds["sampler_id"].values.astype(str) if "sampler_id" in ds.variables
            else np.full(len(hours), ""))
    frame = pd.DataFrame({"sampler": keys, "hours": hours})
    return frame[frame["hours"] > 0].groupby("sampler")["hours"].median()


def one_sample_notes(periods: pd.DataFrame, precipitation=None, air=None,
                     min_coverage_fraction=0.9, min_air_coverage=0.75, medians=None) -> list:
    """Notes where one usual sample is more of the shortest reporting period than the
    coverage minimum lets it miss.

    Parameters
    ----------
    periods : pandas.DataFrame
        The reporting periods (:func:`workbench.periods.make_periods`; ``kind``,
        ``hours`` [h]).
    precipitation, air : xarray.Dataset, optional
        The samples (``start``, ``end``, ``sampler_id``). [UTC]
    min_coverage_fraction : float
        ``[wet] min_coverage_fraction`` [1].
    min_air_coverage : float
        ``[budget] min_air_coverage`` [1].
    medians : dict, optional
        :func:`median_hours` of the samples by role (``"precipitation"``, ``"air"``),
        where already computed (the ``sample_hours`` stage: no option changes them).

    Returns
    -------
    list of str
        One note per kind of sample (precipitation, air) whose longest median sample
        length h (over its samplers) leaves less than the minimum of the shortest
        period H: 1 - h/H below it (a share equal to the minimum passes, as the
        criterion).

    Examples
    --------
    >>> import xarray as xr
    >>> from workbench.periods import make_periods
    >>> t = pd.date_range("2021-01-05T09:00", periods=53, freq="7D").values
    >>> wet = xr.Dataset({"start": ("sample", t[:-1]), "end": ("sample", t[1:])})
    >>> one_sample_notes(make_periods("2021-01-01", "2022-01-01", "month"), wet)[0][:75]
    'completeness of month periods: one precipitation sample (the median, 168 h)'
    >>> one_sample_notes(make_periods("2021-01-01", "2022-01-01", "year"), wet)
    []
    """
    if not len(periods):
        return []
    kinds = sorted(set(periods["kind"].astype(str)))
    kind = KIND_WORDS.get(kinds[0], kinds[0]) if len(kinds) == 1 else "reporting"
    shortest = int(np.argmin(periods["hours"].values))
    h_min = float(periods["hours"].values[shortest])
    label = str(periods["label"].values[shortest])
    out = []
    roles = (("precipitation", precipitation, min_coverage_fraction,
              "[wet] min_coverage_fraction",
              "or fill a failing period's PWM with [wet] period_fill = \"seasonal\" (the "
              "site's multi-year PWM of its season, marked filled)"),
             ("air", air, min_air_coverage, "[budget] min_air_coverage", ""))
    for role, ds, minimum, option, more in roles:
        if ds is None or "start" not in ds.variables or not ds["start"].size:
            continue
        med = (medians or {}).get(role)
        med = median_hours(ds) if med is None else med
        if med.empty:
            continue
        h = float(med.max())
        share = h / h_min
        if not 1.0 - share < float(minimum) - 1e-9:
            continue
        # a sampler named only where others sample in shorter periods
        sampler = (f" of sampler {med.idxmax()}" if med.idxmax() and (med < h).any()
                   else "")
        if share >= 1.0:
            out.append(
                f"completeness of {kind} periods: one {role} sample{sampler} (the median, "
                f"{h:.0f} h) is as long as the shortest period ({label}, {h_min:.0f} h) "
                "or longer: one such sample not used (contaminated, lost) leaves the "
                "periods it spans without a concentration for much of their hours, short "
                f"of {option} = {minimum:g} unless that is set very low "
                "(docs/budget.md, \"Periods other than the calendar year\")")
            continue
        year_share = 100.0 * h / 8760.0
        out.append(
            f"completeness of {kind} periods: one {role} sample{sampler} (the median, "
            f"{h:.0f} h) is {100.0 * share:.1f} % of the shortest period ({label}, "
            f"{h_min:.0f} h), more than the {100.0 * (1.0 - minimum):g} % a period may "
            f"miss under {option} = {minimum:g}: one such sample not used (contaminated, "
            f"lost) fails the period, where it is {year_share:.1f} % of a year. The rule "
            f"is the same for every period. To judge these periods less strictly, lower "
            f"{option} (to {np.floor(1000.0 * max(0.0, 1.0 - share) + 1e-6) / 1000.0:g} or less to let one "
            f"such sample go){', ' + more if more else ''} (docs/budget.md, \"Periods "
            "other than the calendar year\")")
    return out
