"""Load a study's inputs together, with the cross-file checks and one ledger."""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
import xarray as xr

from .ledger import Ledger
from .met import read_met
from .metchecks import gauge_comparison, gauge_slip_notes
from .metstore import is_lazy
from .readbytes import file_sha256, path_key, recording
from .samples import read_air, read_precipitation
from .sites import SiteCatalogue, read_sites


@dataclass
class Inputs:
    """Everything read for a study.

    Attributes
    ----------
    catalogue : SiteCatalogue
    precipitation, air, met : xarray.Dataset or None
    ledger : Ledger
        All rows of all files.
    gauge_check : pandas.DataFrame or None
        Met precipitation against gauge depth per sample.
    paths : dict
        Role -> Path of each file read.
    stamps : dict
        Role -> SHA-256 (hex) of the bytes each file was parsed from
        (:mod:`workbench.io.readbytes`): the checksum provenance.json records, and
        against which a file is hashed again at the end of a run (changed after it was
        read: by content, whatever its size and modification time).
    """

    catalogue: SiteCatalogue
    precipitation: xr.Dataset | None = None
    air: xr.Dataset | None = None
    met: xr.Dataset | None = None
    ledger: Ledger = field(default_factory=Ledger)
    gauge_check: pd.DataFrame | None = None
    paths: dict = field(default_factory=dict)
    stamps: dict = field(default_factory=dict)

    def subset(self, sites=None, start=None, end=None) -> "Inputs":
        """The same inputs restricted to some sites and a time span [start, end).

        Samples and air periods are kept when they overlap the span; the ledger is kept
        whole (it describes the files).  Used by the apps to recompute one site-year fast.
        """
        import dataclasses as _dc
        from .sites import SiteCatalogue
        keep = list(sites) if sites is not None else self.catalogue.ids
        cat = SiteCatalogue([self.catalogue[s] for s in keep], self.catalogue.path,
                            self.catalogue.notes, self.catalogue.zone_notes,
                            getattr(self.catalogue, "key_lines", None))
        t0 = np.datetime64(start, "ns") if start is not None else None
        t1 = np.datetime64(end, "ns") if end is not None else None

        def cut(ds, dim):
            if ds is None:
                return None
            # hashed look-up: linear in rows (a network is cut into many blocks)
            m = pd.Series(ds["site"].values.astype(str).astype(object)).isin(keep).to_numpy().copy()
            if t0 is not None:
                m &= ds["end"].values > t0
            if t1 is not None:
                m &= ds["start"].values < t1
            return ds.isel({dim: np.flatnonzero(m)})

        met = self.met
        if met is not None:
            # the hours first (a slice: a view here, and a met store reads only those
            # columns without sorting an index of every hour), then the sites (a copy)
            met = met.isel(time=_hours(met["time"].values, t0, t1))
            met = met.sel(site=[s for s in keep if s in met["site"].values])
        return _dc.replace(self, catalogue=cat, precipitation=cut(self.precipitation, "sample"),
                           air=cut(self.air, "period"), met=met)

    def describe(self) -> str:
        """A plain-text account of what was loaded (sites, periods, rows): the lines of
        :meth:`loaded_lines`, then the ledger's rows per file, reasons and notes
        (``workbench check`` and ``workbench demo`` print it fitted to 80 columns:
        :func:`workbench.cli_check.inputs_console_lines`)."""
        out = self.loaded_lines()
        out.append("")
        out.append("rows per file:")
        summ = self.ledger.summary()
        out.append(summ.to_string(index=False))
        reasons = self.ledger.reasons()
        if not reasons.empty:
            out.append("")
            out.append("reasons:")
            out.append(reasons.to_string(index=False))
        if self.ledger.notes:
            out.append("")
            out.append("notes:")
            out.extend(f"  {n}" for n in self.ledger.notes)
        return "\n".join(out)

    def loaded_lines(self) -> list[str]:
        """The first part of :meth:`describe`, one line each: the sites (with their
        declared changes), the samples and periods per site, the met hours."""
        out = [f"sites ({len(self.catalogue)}):"]
        for s in self.catalogue:
            rec = ", ".join(s.receptors) if s.receptors else "none"
            out.append(f"  {s.id:<10} {s.name} ({s.land_use}; lat {s.latitude:.2f}, "
                       f"lon {s.longitude:.2f}, {s.elevation_m:.0f} m; collector {s.collector}; "
                       f"further receptors: {rec})")
            for ch in getattr(s, "changes", ()):        # the declared history
                out.append(f"             change {ch.describe()}")
        for role, ds, dim in (("precipitation", self.precipitation, "sample"),
                              ("air", self.air, "period")):
            if ds is None:
                out.append(f"{role}: not given")
                continue
            out.append(f"{role}: {ds.sizes[dim]} {dim}s from {str(ds['start'].values.min())[:16]} "
                       f"to {str(ds['end'].values.max())[:16]} UTC")
            per_site = pd.Series(ds["site"].values).value_counts().sort_index()
            out.append("  per site: " + ", ".join(f"{k} {v}" for k, v in per_site.items()))
        if self.met is None:
            out.append("met: not given")
        else:
            t = self.met["time"].values
            out.append(f"met: {self.met.sizes['site']} sites x {self.met.sizes['time']} hours "
                       f"from {str(t[0])[:16]} to {str(t[-1])[:16]} UTC (end of hour)")
        return out


def _hours(time, t0=None, t1=None):
    """The hours of a met time axis in (t0, t1]: a slice when they are consecutive
    (always, for a sorted axis), else their positions.

    Parameters
    ----------
    time : numpy.ndarray of datetime64[ns]
        End of each hour (UTC).
    t0, t1 : numpy.datetime64, optional
        Start and end of the span (None: open).

    Returns
    -------
    slice or numpy.ndarray of int

    >>> t = np.arange(4).astype("datetime64[h]").astype("datetime64[ns]")
    >>> _hours(t, t[0], t[2]), _hours(t)
    (slice(1, 3, None), slice(None, None, None))
    """
    if t0 is None and t1 is None:
        return slice(None)
    tsel = np.ones(len(time), bool)
    if t0 is not None:
        tsel &= time > t0
    if t1 is not None:
        tsel &= time <= t1
    idx = np.flatnonzero(tsel)
    if not len(idx):
        return slice(0, 0)
    if idx[-1] - idx[0] + 1 == len(idx):
        return slice(int(idx[0]), int(idx[-1]) + 1)
    return idx


def file_stamp(path) -> str | None:
    """SHA-256 (hex) of a file (of a folder: a zarr store) as it is now, None when it
    cannot be read: compared with :attr:`Inputs.stamps` (the bytes read)."""
    try:
        return file_sha256(path)
    except OSError:
        return None


def load_inputs(sites, precipitation=None, air=None, met=None, reference_state=None,
                progress=None, flag_map=None) -> Inputs:
    """Read every given file and cross-check them.

    Parameters
    ----------
    sites : str or Path
        The site catalogue (required).
    precipitation, air, met : str or Path, optional
    reference_state : str, optional
        Reference state of mass concentrations in `air` when the file states none.
    progress : callable, optional
        Called with a short text before each file (for progress bars).
    flag_map : str or Path, optional
        Mapping file of a lab's own flag codes in `precipitation` (see
        :func:`workbench.flags.read_flag_map`).

    Returns
    -------
    Inputs
    """
    with recording() as seen:           # the SHA-256 of the bytes each reader parsed
        inp = _load(sites, precipitation, air, met, reference_state, progress, flag_map)
    inp.stamps = {role: seen[path_key(p)] for role, p in inp.paths.items()
                  if path_key(p) in seen}
    return inp


def _load(sites, precipitation, air, met, reference_state, progress, flag_map) -> Inputs:
    """:func:`load_inputs` without the digests."""
    say = progress or (lambda text: None)
    say("site catalogue")
    cat = read_sites(sites)
    inp = Inputs(cat, paths={"sites": Path(sites)})
    inp.ledger.notes.extend(cat.notes)
    if precipitation is not None:
        say("precipitation samples")
        inp.precipitation, led = read_precipitation(precipitation, cat, flag_map=flag_map)
        inp.ledger = inp.ledger + led
        inp.paths["precipitation"] = Path(precipitation)
        if flag_map is not None:
            inp.paths["flag_map"] = Path(flag_map)
    if air is not None:
        say("air concentrations")
        inp.air, led = read_air(air, cat, reference_state=reference_state)
        inp.ledger = inp.ledger + led
        inp.paths["air"] = Path(air)
    if met is not None:
        say("hourly meteorology")
        inp.met, led = read_met(met, cat)
        inp.ledger = inp.ledger + led
        inp.paths["met"] = Path(met)
        # one message per fault: where the clock check judged a site against the sun,
        # its note (or its silence: the radiation keeps time with the sun at the
        # catalogue's longitude and offset) supersedes the catalogue's zone note
        gone = {cat.zone_notes[s] for s in led.clock_judged if s in cat.zone_notes}
        inp.ledger.notes = [n for n in inp.ledger.notes if n not in gone]
    from .samplegaps import (sampling_gap_notes,     # weeks without samples, per sampler
                             species_gap_notes)      # and without one species' values
    inp.ledger.notes.extend(sampling_gap_notes(inp.precipitation, "precipitation")
                            + sampling_gap_notes(inp.air, "air")
                            + species_gap_notes(inp.air, "air"))
    inp.ledger.notes.extend(_history_notes(inp, cat))
    if inp.met is not None and inp.precipitation is not None:
        gc = _gauge_check(inp.met, inp.precipitation)
        inp.gauge_check = gc
        bad = gc[gc["suspicious"]]
        if len(bad):
            inp.ledger.add_reason(inp.paths["precipitation"], bad["line"].to_numpy(),
                                  "hourly met precipitation over the sample far from the gauge depth")
        inp.ledger.notes.extend(gauge_slip_notes(gc, Path(met).name))
    return inp


#: Sites of a met store read at a time by the gauge check [sites].
GAUGE_SITES = 50


def _gauge_check(met, samples):
    """:func:`~workbench.io.metchecks.gauge_comparison`, on a met store
    :data:`GAUGE_SITES` sites at a time (the rows in the order of the samples)."""
    if not is_lazy(met):
        return gauge_comparison(met, samples)
    ids = met["site"].values.astype(str)
    psites = pd.Index(samples["site"].values.astype(str).astype(object))
    parts = []
    for k in range(0, len(ids), GAUGE_SITES):
        group = ids[k:k + GAUGE_SITES]
        rows = np.flatnonzero(psites.isin(group))
        if len(rows):
            part = gauge_comparison(met.isel(site=slice(k, k + GAUGE_SITES)).load(),
                                    samples.isel(sample=rows))
            parts.append(part.set_axis(rows))
    if not parts:
        return gauge_comparison(met.isel(site=slice(0, 0)).load(), samples)
    return pd.concat(parts).sort_index().reset_index(drop=True)


def _history_notes(inp, catalogue) -> list[str]:
    """Notes of the sites' declared changes (``[[site.change]]``) against the records:
    samples that hold a change (located), and a surface or collector change inside the
    records' span (the engine uses the catalogue's one class in every year)."""
    from .sitechanges import sample_notes, surface_notes
    if not any(getattr(s, "changes", ()) for s in catalogue):
        return []
    out, spans = [], []
    for role in ("precipitation", "air"):
        ds = getattr(inp, role)
        if ds is None or not ds.sizes.get(next(iter(ds["site"].dims), ""), 0):
            continue
        out += sample_notes(ds, catalogue, role, inp.paths[role].name)
        spans.append((ds["start"].values.min(), ds["end"].values.max()))
    if spans:
        out += surface_notes(catalogue, min(a for a, _ in spans), max(b for _, b in spans))
    return out
