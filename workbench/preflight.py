"""Everything a run builds before it computes, shared by ``workbench check`` and ``run``.

:func:`prepare` reads the scenario and its inputs, builds the study with the site
overrides applied (catalogue, receptor surfaces), the reporting periods, and applies the
refusals the budget would make later, so that ``check`` fails exactly where ``run``
would, with the same located message, and ``run`` fails before its long computation.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .errors import ScenarioError, WorkbenchError
from .io.common import release_free_memory

#: Particle species a bulk collector's "wet" deposition already holds in part.
BULK_PARTICLES = ("pSO4", "pNO3", "pNH4")


class PreflightError(WorkbenchError):
    """A scenario a run would refuse (found before computing)."""


@dataclass
class Prepared:
    """What :func:`prepare` built: the scenario, the study, the periods."""

    scenario: object
    study: object
    periods: object
    years: object
    receptors: list = field(default_factory=list)

    def describe(self) -> str:
        """What a run would compute, in a few lines."""
        sc = self.scenario
        p = self.periods
        res = sc.data["period"]["resolution"]
        n_years = len(self.years)
        # minutes and UTC, as the inputs' lines above (it read "2016-01-01 00:00:00")
        first, last = (str(np.datetime64(t, "m")) for t in (p["start"].iloc[0],
                                                             p["end"].iloc[-1]))
        lines = [f"periods: {len(p)} {res} period{'s' if len(p) != 1 else ''} from "
                 f"{first} to {last} UTC; whole-span totals over "
                 f"{n_years} calendar year{'s' if n_years != 1 else ''}",
                 f"receptor surfaces: {', '.join(map(str, self.receptors)) or 'none'}"]
        fixed = sc.fixed_velocity
        if fixed:
            lines.append("fixed velocities [cm/s]: " + ", ".join(f"{k} {v:g}" for k, v in
                                                              fixed.items()))
        lines.extend(span_notes(sc.data["period"].get("start"), sc.data["period"].get("end"),
                                p["start"].iloc[0], p["end"].iloc[-1], res))
        lines.extend("note: " + n.removeprefix("period: ") for n in self.study.span_notes(
            sc.data["period"].get("start"), sc.data["period"].get("end")))
        cover = coverage_notes(self.study.inputs, p["start"].iloc[0], p["end"].iloc[-1])
        lines.extend(cover)
        no_vd = no_vd_sites(self.study.inputs)
        lines.extend(no_vd_lines(no_vd))
        if cover and all(c.startswith("warning") for c in cover) and len(cover) == len(
                input_spans(self.study.inputs)):
            lines.append("everything a run uses was read and checked: the scenario can be "
                         "run, but every budget would be missing (above)")
        elif no_vd:
            # it read "the scenario can be run" alone under the warning, as if all clear
            sites = [s for group in no_vd.values() for s in group]
            lines.append("everything a run uses was read and checked: the scenario can be "
                         f"run, but the dry deposition of {', '.join(sites)} will be "
                         f"missing and {'its' if len(sites) == 1 else 'their'} totals "
                         "partial (above)")
        else:
            lines.append("everything a run uses was read and checked: the scenario can be run")
        return "\n".join(lines)


#: Days by which the reporting span may reach beyond an input's span before it is said
#: (a weekly sample's edge is no gap) [d] (a month, the longest usual sampling
#: period; our choice).
COVERAGE_SLACK_DAYS = 31


def input_spans(inputs) -> dict:
    """The span of each time-resolved input, ``{role: (first, last)}`` as UTC
    datetime64: sample and air periods from the first start to the last end, met from
    the start of its first hour to the end of its last."""
    spans = {}
    for role, ds in (("precipitation", inputs.precipitation), ("air", inputs.air)):
        if ds is not None and ds.sizes.get("sample" if role == "precipitation" else "period"):
            spans[role] = (ds["start"].values.min(), ds["end"].values.max())
    if inputs.met is not None and inputs.met.sizes.get("time"):
        t = inputs.met["time"].values
        spans["met"] = (t[0] - np.timedelta64(1, "h"), t[-1])
    return spans


def coverage_notes(inputs, start, end) -> list[str]:
    """Lines saying where the reporting span [start, end) reaches beyond the inputs.

    An input with no time inside the span gives ``warning: ...`` (every budget part it
    feeds will be missing); one whose span starts more than :data:`COVERAGE_SLACK_DAYS`
    after `start` or ends that much before `end` gives ``note: ...`` (the periods
    outside it lack it).  Nothing when the inputs cover the span.

    Parameters
    ----------
    inputs : workbench.io.Inputs
    start, end : datetime-like
        The reporting span (UTC; end exclusive).
    """
    s, e = np.datetime64(start, "ns"), np.datetime64(end, "ns")
    slack = np.timedelta64(COVERAGE_SLACK_DAYS, "D")
    day = lambda t: str(np.datetime64(t, "m"))[:16].replace("T00:00", "")   # noqa: E731
    out = []
    for role, (a, b) in input_spans(inputs).items():
        a, b = np.datetime64(a, "ns"), np.datetime64(b, "ns")
        if b <= s or a >= e:
            out.append(f"warning: the reporting span {day(s)} to {day(e)} holds none of the "
                       f"{role} ({day(a)} to {day(b)} UTC): every budget part it feeds "
                       "will be missing")
            continue
        gaps = []
        if a - s > slack:
            gaps.append(f"before {day(a)}")
        if e - b > slack:
            gaps.append(f"after {day(b)}")
        if gaps:
            out.append(f"note: the {role} covers {day(a)} to {day(b)} UTC: periods "
                       f"{' and '.join(gaps)} lack it")
    return out


def span_notes(start, end, first, last, resolution) -> list[str]:
    """Lines saying that ``[period] start`` or ``end`` lies inside a reporting period, so
    that the budget covers the whole periods that hold them (a week asked at resolution
    "year" gives the whole year, as docs/scenario.md says).

    Parameters
    ----------
    start, end : str, datetime-like or None
        ``[period] start`` and ``end`` as the scenario gives them (UTC; None: not given).
    first, last : datetime-like
        Start of the first reporting period and end of the last (UTC).
    resolution : str
        The resolution of the periods.
    """
    out = []
    day = lambda t: str(np.datetime64(t, "m")).replace("T00:00", "")   # noqa: E731
    for key, given, edge in (("start", start, first), ("end", end, last)):
        if given is None:
            continue
        g = np.datetime64(pd.Timestamp(given).tz_localize(None)
                          if pd.Timestamp(given).tzinfo is None
                          else pd.Timestamp(given).tz_convert("UTC").tz_localize(None), "ns")
        if g != np.datetime64(edge, "ns"):
            out.append(f"note: [period] {key} {day(g)} lies inside a {resolution} period: "
                       f"the budget covers whole {resolution} periods, from {day(first)} to "
                       f"{day(last)} (put start and end on the first instant of a {resolution} "
                       "period; docs/scenario.md)")
    return out


def _line(scenario, section, key=None):
    from .scenario import _line_of
    if scenario.path is None:
        return None
    try:
        text = scenario.path.read_text(encoding="utf-8-sig", errors="replace")
    except OSError:
        return None
    return _line_of(text.splitlines(), section, key)


def _periods(study, scenario):
    """The reporting periods and the years, a bad span as a located scenario error."""
    p = scenario.data["period"]
    hy = scenario.options["wet"].hydro_start_month
    try:
        return (study.periods(p["resolution"], p["start"], p["end"], hy),
                study.periods("year", p["start"], p["end"], hy))
    except (ValueError, TypeError) as exc:
        key = "end" if p.get("end") is not None else "start"
        for k in ("start", "end"):      # a value that is no date at all, first
            try:
                if p.get(k) is not None:
                    np.datetime64(p[k])
            except (ValueError, TypeError):
                key = k
                break
        if p.get(key) is None:
            raise
        raise ScenarioError(f"the reporting periods cannot be made ({exc})",
                            file=scenario.path, line=_line(scenario, "period", key),
                            column=f"period.{key}", value=p.get(key),
                            expected="an ISO date (like 2021-01-01), the end after the "
                            "start") from exc


def _culprit(study):
    """(site id, key, value) of the first override that cannot be applied on its own."""
    from .pipeline import Study
    bare = Study(study.inputs)
    for sid, table in study.site_overrides.items():
        for key, value in (table or {}).items():
            try:
                bare.catalogue({sid: {key: value}}).surfaces()
            except Exception:  # noqa: BLE001 - the failing override is what is looked for
                return sid, key, value
    return None


def _classes(catalogue, study, scenario):
    """Land-use class under the mast and collector set by an override: the rules of the
    catalogue reader (which checks the same keys in sites.toml)."""
    from .errors import suggest
    from .io.sites import COLLECTORS
    from .landuse import LAND_USE
    rules = {"met_land_use": ("unknown land-use class", list(LAND_USE)),
             "collector": ("unknown collector", list(COLLECTORS))}
    for site in catalogue:
        over = study.site_overrides.get(site.id, {})
        for key, (problem, allowed) in rules.items():
            value = getattr(site, key)
            if key in over and value is not None and value not in allowed:
                raise ScenarioError(problem + suggest(value, allowed), file=scenario.path,
                                    line=_line(scenario, f"sites.{site.id}", key),
                                    column=f"sites.{site.id}.{key}", value=value,
                                    expected="one of " + ", ".join(map(repr, allowed)))


def _surfaces(study, scenario):
    """The catalogue and receptor surfaces with the site overrides applied."""
    try:
        cat = study.catalogue()
        study.surfaces()
        _classes(cat, study, scenario)
        return cat, study.receptors()
    except WorkbenchError:
        raise
    except (ValueError, TypeError, KeyError) as exc:
        if not study.site_overrides:
            raise
        bad = _culprit(study)
        sid, key, value = bad if bad else (None, None, None)
        raise ScenarioError(f"a site override cannot be applied ({type(exc).__name__}: {exc})",
                            file=scenario.path,
                            line=_line(scenario, f"sites.{sid}", key) if bad else None,
                            column=f"sites.{sid}.{key}" if bad else "sites",
                            value=value if bad else None,
                            expected="a value of the catalogue's type and range for that key "
                            "(see docs/scenario.md)") from exc


def _bulk_refusal(study, scenario, catalogue):
    """The budget's refusal of particle dry deposition at a bulk collector (see
    :class:`workbench.budget.BudgetOptions`, ``bulk_correction``), found beforehand."""
    inp = study.inputs
    if (scenario.options["budget"].bulk_correction != "none" or inp.air is None
            or inp.met is None):
        return
    bulk = [s.id for s in catalogue if s.collector == "bulk" or any(   # or once was
        c.what == "collector" and "bulk" in (c.before, c.after) for c in s.changes)]
    site = inp.air["site"].values.astype(str)
    for sp in BULK_PARTICLES:
        if sp not in inp.air:
            continue
        measured = set(site[np.isfinite(inp.air[sp].values)])
        bad = [s for s in bulk if s in measured]
        if bad:
            now = {s.id: s.collector for s in catalogue}
            has = ("has a bulk collector" if now.get(bad[0]) == "bulk" else
                   "had a bulk collector (a [[site.change]] of its collector in sites.toml)")
            raise PreflightError(
                f"site {bad[0]!r} {has}: its 'wet' deposition already "
                f"holds some dry deposition, so particle dry deposition ({sp}) is not "
                "added; name a correction in [budget] bulk_correction "
                "('exclude_particles' or 'scale_wet', see docs/budget.md)")


def prepare(scenario, progress=None) -> Prepared:
    """Read and check everything a run of `scenario` uses, short of computing.

    Parameters
    ----------
    scenario : Scenario or path
        A validated scenario, or the path of a scenario file.
    progress : callable, optional
        Called with a short text before each input file.

    Raises
    ------
    WorkbenchError
        Located: a scenario error, an input error, or a refusal of the budget.
    """
    from .pipeline import Study
    from .scenario import Scenario, load_scenario
    sc = scenario if isinstance(scenario, Scenario) else load_scenario(scenario)
    study = Study.from_scenario(sc, progress=progress)
    catalogue, receptors = _surfaces(study, sc)
    periods, years = _periods(study, sc)
    _bulk_refusal(study, sc, catalogue)
    release_free_memory()     # what the reading freed: not held through the blocks' threads
    return Prepared(sc, study, periods, years, receptors)


def no_vd_sites(inputs) -> dict:
    """The sites whose met record has no value of a variable without which no hour has
    a deposition velocity (:data:`workbench.io.metgaps.VD_NEEDS`) in any hour, grouped
    by what their met lacks: ``{words: [site, ...]}`` in the catalogue's order (words
    as ``"wind speed"``); {} for none, or without met or air."""
    from .io.metgaps import VD_NEEDS, without_value
    if inputs.met is None or inputs.air is None:
        return {}
    ids = [str(s) for s in inputs.catalogue.ids]
    lacks = without_value(inputs.met, ids, VD_NEEDS)
    by = {}
    for site, words in zip(ids, lacks):
        if words:
            by.setdefault(words, []).append(site)
    return by


def no_vd_lines(by: dict) -> list[str]:
    """For ``workbench check``: one line per set of sites whose met record has no value
    of a variable without which no hour has a deposition velocity
    (:data:`workbench.io.metgaps.VD_NEEDS`) in any hour: their dry deposition cannot be
    computed (the run says it missing, naming the variable); [] for none.  `by`: the
    sites as :func:`no_vd_sites` groups them."""
    return [f"warning: dry deposition at {', '.join(sites)} cannot be computed: its met "
            f"has no {words}" for words, sites in by.items()]
