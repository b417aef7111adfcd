"""The deliberate problems of the demo network, planted and recorded with file and line.

Each planted problem picks its sample by a rule on the generated data (a site, a date
window, a target gauge depth), so that it lands on a sample where it makes sense
(rain, not snow; enough water).  Problems that change what fell into the collector
(contamination, dust, an open lid, a poor capture) act before the acidity and
conductivity are computed, so the sample stays chemically consistent; reporting
slips (a mistyped value, a lost bottle) act afterwards.
"""
from __future__ import annotations

import numpy as np

import gen_chemistry as chem
from network import PRECIP_CHANGE_HOUR

D = lambda s: np.datetime64(s, "m")  # noqa: E731

#: Weeks (start, Thursday at the collector change, local) forced dry: "*" = every site
#: (a summer anticyclone).
DRY_WEEKS = [("*", "2018-06-28"), ("*", "2018-07-05"), ("farm", "2020-04-16"),
             ("mere", "2021-09-09")]
#: kind -> (site, window start, window end, target gauge depth [mm]; inf = largest)
PICKS = {
    "contaminated_unflagged": ("fell", "2017-06-01", "2017-09-01", 8.0),
    "contaminated_flagged": ("ridge", "2019-05-01", "2019-06-01", 10.0),
    "soil_dust": ("farm", "2017-04-01", "2017-05-01", 6.0),
    "lid_open": ("ridge", "2021-03-01", "2021-04-01", 5.0),
    "below_detection_clean": ("fell", "2021-06-01", "2021-09-01", np.inf),
    "low_capture": ("farm", "2020-06-01", "2020-09-01", np.inf),
    "ion_balance_poor": ("ridge", "2020-03-01", "2020-05-01", 8.0),
    "negative_after_blank": ("mere", "2022-10-01", "2022-11-01", 15.0),
    "gauge_failed": ("farm", "2019-11-01", "2019-12-01", 10.0),
    "gauge_estimated": ("fell", "2022-10-01", "2022-12-01", 15.0),
    "sample_lost": ("ridge", "2017-10-01", "2017-11-01", 10.0),
    "not_analysed": ("mere", "2022-05-01", "2022-06-01", 8.0),
}
#: Hourly rows absent from met.csv.gz: site, (after, up to and including] local times.
MET_GAP = ("mere", "2019-02-21T14:00", "2019-02-28T14:00")
#: A month of relative humidity written as a fraction: site, (after, up to and incl.].
RH_FRACTION = ("fell", "2021-08-01T00:00", "2021-09-01T00:00")
#: Target pH of the soil-dust sample [1] and its gypsum-like Ca + SO4 pair [ueq/L].
DUST_PH, DUST_GYPSUM, DUST_MG = 6.4, 50.0, 6.0
#: The dust sample is picked among samples whose charge deficit was above this [ueq/L].
DUST_ACID_BEFORE = 20.0
SNOW_LIMIT = 0.05      # picked samples have less than this fraction of snow [-]
MIN_DEPTH = 2.0        # and at least this gauge depth [mm]
MAX_DEPTH = 60.0       # and at most this one, so that the bottle does not overflow [mm]

EXPECT = {
    "contaminated_unflagged": "K, PO4 and NH4 far above the site's usual range together, pH raised, "
    "no flag (bird-dropping contamination): QA should mark the chemistry as contaminated and keep it "
    "out of the precipitation-weighted means; the gauge depth still counts. If PO4 is counted with "
    "charge 3 instead of as H2PO4- the ion balance is poor too.",
    "contaminated_flagged": "flag contaminated (insects in the funnel): chemistry invalid, gauge depth counts.",
    "soil_dust": "pH above 6 with Ca far above the site's usual range (and raised SO4, Mg): soil "
    "dust (carbonate and gypsum) neutralised the acidity; the ion balance closes (bicarbonate "
    "from CO2 equilibrium is small at this pH). QA should note a dust-influenced sample; it stays "
    "valid.",
    "lid_open": "flag lid_open on a wet-only collector (lid stuck open, dry deposition collected): "
    "chemistry invalid, gauge depth counts.",
    "below_detection_clean": "a very clean large summer event: K, Ca, Mg and PO4 written as '<DL': "
    "censored values, kept with their detection limits.",
    "below_detection": "value(s) written as '<DL': censored, kept with the detection limit.",
    "low_capture": "sample depth (volume / collector area) about 0.3 of the gauge depth in summer "
    "rain: QA should flag a poor collection efficiency (leak or blocked funnel).",
    "ion_balance_poor": "SO4 mistyped as a tenth of its value (no flag): a large cation excess, the "
    "ion balance fails (see ion_balance_percent_as_written) and the conductivity computed from the "
    "ions falls short of the measured one; QA should flag the sample's chemistry.",
    "negative_after_blank": "PO4 negative after blank subtraction: censored with a note, not an error.",
    "gauge_failed": "flag gauge_failed with no gauge depth: chemistry valid, depth missing (fill or exclude).",
    "gauge_estimated": "flag depth_estimated: gauge depth estimated by the operator (whole mm); valid, marked.",
    "sample_lost": "flag sample_lost, no volume and no chemistry: sample lost; gauge depth counts.",
    "not_analysed": "flag not_analysed, no chemistry: not analysed; gauge depth counts.",
    "dry_week": "gauge depth 0 and no chemistry: a covered dry week, not a gap.",
    "trace_sample": "flag trace, gauge depth below 0.5 mm, no chemistry: too little to analyse.",
    "overflow": "flag overflow: the bottle overflowed (volume at its capacity); chemistry invalid, "
    "gauge depth counts.",
    "missing_met": "168 hourly rows absent (logger failure): a gap of one week at this site; "
    "the sample of that week has no hourly precipitation to compare with its gauge depth.",
    "rh_fraction": "relative_humidity written as a fraction (0-1) for a month although the header "
    "says %: QA should flag 'relative humidity given as 0-1 instead of %'.",
}


class SiteSamples:
    """Mutable bundle of one site's weekly samples while they are built."""

    def __init__(self, **kw):
        self.__dict__.update(kw)


def add_flag(flags, mask, code):
    flags = flags.copy()
    for i in np.flatnonzero(mask):
        flags[i] = (flags[i] + " " + code).strip()
    return flags


class Plan:
    """Where each problem goes; records what was planted for planted_problems.json."""

    def __init__(self, start, end, week_starts, site_ids):
        self.start, self.end, self.week_starts, self.site_ids = start, end, week_starts, site_ids
        self.picked = {}        # kind -> (site id, sample index)
        self.notes = {}         # kind -> extra numbers for the record
        self.skipped = []       # kinds with no suitable sample (e.g. a short --years run)

    # ---------------------------------------------------------------- hourly masks
    def dry_hours(self, times):
        mask = np.zeros((len(self.site_ids), times.size), dtype=bool)
        self.forced_dry = []
        for site, day in DRY_WEEKS:
            t0 = D(day) + np.timedelta64(PRECIP_CHANGE_HOUR, "h")
            if t0 + np.timedelta64(7, "D") > self.end:
                continue
            rows = range(len(self.site_ids)) if site == "*" else [self.site_ids.index(site)]
            sel = (times > t0) & (times <= t0 + np.timedelta64(7, "D"))
            for r in rows:
                mask[r, sel] = True
                self.forced_dry.append((self.site_ids[r], t0))
        return mask

    def met_gap_mask(self, site, times):
        if site != MET_GAP[0]:
            return np.zeros(times.size, dtype=bool)
        return (times > D(MET_GAP[1])) & (times <= D(MET_GAP[2]))

    def rh_fraction_mask(self, site, times):
        if site != RH_FRACTION[0]:
            return np.zeros(times.size, dtype=bool)
        return (times > D(RH_FRACTION[1])) & (times <= D(RH_FRACTION[2]))

    # ---------------------------------------------------------------- sample picks
    def _pick(self, ctx, kind):
        site, a, b, target = PICKS[kind]
        if ctx.site["id"] != site:
            return None
        used = {i for k, (s, i) in self.picked.items() if s == site}
        ok = ((ctx.starts >= D(a)) & (ctx.starts < D(b)) & (ctx.gauge >= MIN_DEPTH)
              & (ctx.gauge <= MAX_DEPTH)
              & (ctx.snow < SNOW_LIMIT))
        ok[list(used)] = False
        if kind == "soil_dust":          # dust on a sample that was acid before it
            ok &= chem.charge_deficit(ctx.ions) > DUST_ACID_BEFORE
        if not ok.any():
            self.skipped.append(kind)
            return None
        cand = np.flatnonzero(ok)
        score = -ctx.gauge[cand] if np.isinf(target) else np.abs(ctx.gauge[cand] - target)
        if kind == "ion_balance_poor":   # a small sample where sulfate carries most anions
            ion = ctx.ions
            score = (-ion["SO4"][cand] / sum(ion[a][cand] for a in chem.ANIONS)
                     + np.where(ctx.gauge[cand] > 3 * target, np.inf, 0.0))
        i = int(cand[np.argmin(score)])
        self.picked[kind] = (site, i)
        return i

    def physical(self, ctx):
        """Problems that change what the collector holds (before acidity is computed)."""
        ion = ctx.ions
        for kind in PICKS:
            i = self._pick(ctx, kind)
            if i is None:
                continue
            if kind == "contaminated_unflagged":
                ion["K"][i] += 45.0
                ion["NH4"][i] += 90.0
                ion["PO4_mgl"][i] += 1.2
            elif kind == "contaminated_flagged":
                ion["K"][i] += 10.0
                ion["NH4"][i] += 15.0
                ion["PO4_mgl"][i] += 0.15
                ctx.flags[i] = "contaminated"
            elif kind == "soil_dust":
                ion["Ca"][i] += DUST_GYPSUM
                ion["SO4"][i] += DUST_GYPSUM
                ion["Mg"][i] += DUST_MG
                h_new = 10.0 ** (6.0 - DUST_PH)
                d_new = h_new - chem.CO2_PRODUCT / h_new
                ion["Ca"][i] += chem.charge_deficit(ion)[i] - d_new
            elif kind == "lid_open":
                for k, add in (("SO4", 40.0), ("NO3", 15.0), ("NH4", 20.0), ("Ca", 30.0), ("K", 6.0)):
                    ion[k][i] += add
                ctx.flags[i] = "lid_open"
            elif kind == "below_detection_clean":
                for k in ("SO4", "NO3", "NH4"):
                    ion[k][i] *= 0.5
                ion["Na"][i], ion["Cl"][i], ion["Mg"][i] = 1.0, 1.4, 0.32
                ion["K"][i], ion["Ca"][i], ion["PO4_mgl"][i] = 0.15, 0.35, 0.003
            elif kind == "low_capture":
                ctx.capture[i] = 0.30

    def reported(self, ctx):
        """Reporting slips and lost samples (after the chemistry is settled)."""
        cols = ctx.columns
        chem_cols = [c for c in cols if c not in ("gauge_depth [mm]", "sample_volume [mL]")]
        for kind, (site, i) in self.picked.items():
            if site != ctx.site["id"]:
                continue
            if kind == "ion_balance_poor":
                before = ion_balance(cols, i)
                cols["SO4 [mg/L]"][i] /= 10.0
                self.notes[kind] = {"ion_balance_percent_as_written": round(ion_balance(cols, i), 1),
                                    "ion_balance_percent_true": round(before, 1),
                                    "conductivity_computed_over_measured": round(
                                        conductivity(cols, i) / cols["conductivity [uS/cm]"][i], 2)}
            elif kind == "negative_after_blank":
                cols["PO4 [mg/L]"][i] = -0.003
            elif kind == "gauge_failed":
                cols["gauge_depth [mm]"][i] = np.nan
                ctx.flags[i] = "gauge_failed"
            elif kind == "gauge_estimated":
                cols["gauge_depth [mm]"][i] = np.round(cols["gauge_depth [mm]"][i])
                ctx.flags[i] = "depth_estimated"
            elif kind == "sample_lost":
                cols["sample_volume [mL]"][i] = np.nan
                for c in chem_cols:
                    cols[c][i] = np.nan
                ctx.flags[i] = "sample_lost"
            elif kind == "not_analysed":
                for c in chem_cols:
                    cols[c][i] = np.nan
                ctx.flags[i] = "not_analysed"
            elif kind == "low_capture":
                self.notes[kind] = {"capture_ratio": round(float(
                    cols["sample_volume [mL]"][i] / ctx.site["collector_area_cm2"] * 10.0
                    / cols["gauge_depth [mm]"][i]), 3)}
            elif kind == "soil_dust":
                self.notes[kind] = {"pH": round(float(cols["pH"][i]), 2),
                                    "ion_balance_percent_without_HCO3": round(ion_balance(cols, i), 1)}

    # ---------------------------------------------------------------- the record
    def collect(self, precip, pframe, aframe, acens, mframe, times):
        """The list written to planted_problems.json (lines 1-based, all lines counted)."""
        out = []
        offsets = np.cumsum([0] + [ctx.starts.size for ctx, _ in precip])
        by_site = {ctx.site["id"]: (ctx, off) for (ctx, _), off in zip(precip, offsets)}

        def entry(kind, site, i, **extra):
            ctx, off = by_site[site]
            row = int(off + i)
            e = {"kind": kind, "site": site, "file": "precipitation.csv", "line": row + 2,
                 "start": str(ctx.starts[i]), "end": str(ctx.ends[i])}
            assert pframe["start"].iloc[row] == str(ctx.starts[i])[:16]
            e.update(extra)
            e["expected"] = EXPECT[kind]
            return e

        for kind, (site, i) in self.picked.items():
            extra = {"flags": by_site[site][0].flags[i]} if by_site[site][0].flags[i] else {}
            if kind == "below_detection_clean":
                extra["columns"] = [c for c in pframe.columns
                                    if str(pframe[c].iloc[int(by_site[site][1] + i)]).startswith("<")]
            if kind == "negative_after_blank":
                extra["column"] = "PO4 [mg/L]"
            extra.update(self.notes.get(kind, {}))
            out.append(entry(kind, site, i, **extra))
        forced = {(s, str(t)) for s, t in self.forced_dry}
        for site, (ctx, _) in by_site.items():
            for i in np.flatnonzero(ctx.dry):
                out.append(entry("dry_week", site, i, forced=(site, str(ctx.starts[i])) in forced))
            for i in np.flatnonzero(ctx.trace):
                out.append(entry("trace_sample", site, i, flags=ctx.flags[i]))
            for i in np.flatnonzero(ctx.overflow):
                out.append(entry("overflow", site, i, flags=ctx.flags[i]))
            cens = np.column_stack([ctx.censored[k] for k in ctx.censored])
            picked_here = {i for k, (s, i) in self.picked.items()
                           if s == site and k == "below_detection_clean"}
            for i in np.flatnonzero(cens.any(axis=1)):
                if i in picked_here:
                    continue
                cols = [f"{k}" for k, m in ctx.censored.items() if m[i]]
                out.append(entry("below_detection", site, i, columns=[
                    c for c in pframe.columns if c.split(" ")[0].split("_as_")[0] in cols]))
        for r in np.flatnonzero(acens.to_numpy().any(axis=1)):
            cols = [f"{sp} [ug/m3]" for sp in acens.columns if acens[sp].iloc[r]]
            out.append({"kind": "below_detection", "site": aframe["site"].iloc[r], "file": "air.csv",
                        "line": int(r) + 3, "start": aframe["start"].iloc[r],
                        "end": aframe["end"].iloc[r], "columns": cols,
                        "expected": EXPECT["below_detection"]})
        out += self._met_entries(mframe)
        out.sort(key=lambda e: (e["file"], e["line"]))
        return out

    def _met_entries(self, mframe):
        out = []
        site_col = mframe["site"].to_numpy()
        t = mframe["time"].to_numpy().astype("datetime64[m]")
        site, a, b = MET_GAP
        after = np.flatnonzero((site_col == site) & (t > D(b)))
        if after.size and D(b) <= self.end:
            first = int(after[0])
            out.append({"kind": "missing_met", "site": site, "file": "met.csv.gz",
                        "line": first + 3, "line_before_gap": first + 2,
                        "start": str(D(a) + np.timedelta64(1, "h")), "end": b,
                        "missing_rows": int((D(b) - D(a)) // np.timedelta64(1, "h")),
                        "expected": EXPECT["missing_met"]})
        site, a, b = RH_FRACTION
        rows = np.flatnonzero((site_col == site) & (t > D(a)) & (t <= D(b)))
        if rows.size:
            out.append({"kind": "rh_fraction", "site": site, "file": "met.csv.gz",
                        "line": int(rows[0]) + 3, "line_last": int(rows[-1]) + 3,
                        "start": str(t[rows[0]]), "end": str(t[rows[-1]]),
                        "column": "relative_humidity [%]", "expected": EXPECT["rh_fraction"]})
        return out


COLUMN = {"SO4": "SO4 [mg/L]", "NO3": "NO3_as_N [mg/L]", "NH4": "NH4_as_N [mg/L]",
          "Cl": "Cl [mg/L]", "Na": "Na [mg/L]", "K": "K [mg/L]", "Ca": "Ca [mg/L]", "Mg": "Mg [mg/L]"}


def _ueq(cols, i):
    """Row `i` of the mg/L columns and pH as ueq/L, with H+ from pH."""
    out = {}
    for name, col in COLUMN.items():
        sp = chem.SPECIES[name]
        mass = chem.formula_mass("N") if name in ("NO3", "NH4") else sp.molar_mass
        out[name] = cols[col][i] / mass * abs(sp.charge)
    out["H"] = 10.0 ** (6.0 - cols["pH"][i])
    return out


def ion_balance(cols, i):
    """Ion balance 100 (C - A) / (C + A) [%] of row `i` (no HCO3, no PO4)."""
    u = _ueq(cols, i)
    cat = sum(u[k] for k in ("H", "NH4", "Na", "K", "Ca", "Mg"))
    an = sum(u[k] for k in ("SO4", "NO3", "Cl"))
    return float(100.0 * (cat - an) / (cat + an))


def conductivity(cols, i):
    """Conductivity computed from the ions of row `i` [uS cm-1] (Kohlrausch, no HCO3)."""
    u = _ueq(cols, i)
    return float(1e-3 * sum(chem.SPECIES[k].conductance * v for k, v in u.items()))
