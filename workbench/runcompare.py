"""What differs between two run folders?  (``workbench compare RUN_A RUN_B``)

Two runs of a study (one option changed, an input corrected, another workbench version)
are compared from their folders alone: the workbench version, the options of the
recorded scenarios (``provenance.json``), the input files by their SHA-256 (wherever
they lay), and the budget totals of ``budget.csv`` (S and N, wet, dry and total, per
site, receptor and period, in kg/ha/yr) with their statuses.  docs/run_folder.md shows
an example.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from .runcheck import (Lines, RunRecordError, option_differences, read_provenance,
                       short_digest, show)

__all__ = ["Comparison", "compare_runs", "budget_differences"]

#: The keys of a budget total in budget.csv.
KEYS = ["site", "receptor", "period", "element", "pathway"]

#: Rows of the budget differences printed by default (``--all`` prints every one).
SHOWN_ROWS = 20


def _totals(run: Path) -> pd.DataFrame:
    """The element totals (species ``all``) of a run's budget.csv, keyed by
    :data:`KEYS`, with ``flux_kg_ha_yr`` and ``status``."""
    path = run / "budget.csv"
    if not path.is_file():
        raise RunRecordError(f"{run}: no budget.csv, expected a run folder written by "
                             "`workbench run`")
    t = pd.read_csv(path, dtype={"period": str}, keep_default_na=False,
                    na_values={"flux_kg_ha_yr": [""]},
                    usecols=lambda c: c in KEYS + ["species", "flux_kg_ha_yr", "status"])
    t = t[t["species"] == "all"].drop(columns="species")
    return t.set_index(KEYS)


def budget_differences(a, b, rtol: float = 0.0) -> tuple[pd.DataFrame, dict]:
    """The budget totals of run folders `a` and `b` that differ.

    Parameters
    ----------
    a, b : path
        Run folders.
    rtol : float
        Relative difference below which two values count as equal [1] (0: any bit).

    Returns
    -------
    (DataFrame, dict)
        The differing totals: :data:`KEYS`, ``a_kg_ha_yr``, ``b_kg_ha_yr``,
        ``change_kg_ha_yr`` (b - a), ``change_percent``, ``a_status``, ``b_status``,
        largest change first; and counts: ``shared`` totals, ``only_a``, ``only_b``
        (keys in one run only, e.g. other periods or receptors).
    """
    ta, tb = _totals(Path(a)), _totals(Path(b))
    both = ta.merge(tb, how="inner", left_index=True, right_index=True, suffixes=("_a", "_b"))
    va, vb = both["flux_kg_ha_yr_a"].to_numpy(float), both["flux_kg_ha_yr_b"].to_numpy(float)
    nan_a, nan_b = np.isnan(va), np.isnan(vb)
    with np.errstate(invalid="ignore"):
        close = np.isclose(va, vb, rtol=rtol, atol=0.0) if rtol else va == vb
    value_differs = (nan_a != nan_b) | (~nan_a & ~nan_b & ~close)
    differs = value_differs | (both["status_a"].to_numpy() != both["status_b"].to_numpy())
    d = both[differs].reset_index()
    out = pd.DataFrame({**{k: d[k] for k in KEYS},
                        "a_kg_ha_yr": d["flux_kg_ha_yr_a"], "b_kg_ha_yr": d["flux_kg_ha_yr_b"]})
    out["change_kg_ha_yr"] = out["b_kg_ha_yr"] - out["a_kg_ha_yr"]
    with np.errstate(divide="ignore", invalid="ignore"):
        out["change_percent"] = 100 * out["change_kg_ha_yr"] / out["a_kg_ha_yr"].abs()
    out["a_status"], out["b_status"] = d["status_a"].to_numpy(), d["status_b"].to_numpy()
    out = out.iloc[np.argsort(-out["change_kg_ha_yr"].abs().fillna(np.inf).to_numpy(),
                              kind="stable")].reset_index(drop=True)
    counts = {"shared": len(both), "only_a": len(ta.index.difference(tb.index)),
              "only_b": len(tb.index.difference(ta.index))}
    return out, counts


@dataclass
class Comparison(Lines):
    """The outcome of :func:`compare_runs`: lines to print and the differing totals."""

    lines: list = field(default_factory=list)
    budget: pd.DataFrame | None = None
    same: bool = True


def same_input(ra: dict, rb: dict) -> bool:
    """Two runs' records of one input name the same content: the same SHA-256 of the
    bytes, or (gzip files recorded by both) of the decompressed content."""
    if ra.get("sha256") == rb.get("sha256"):
        return True
    ca, cb = ra.get("content_sha256"), rb.get("content_sha256")
    return ca is not None and ca == cb


def _input_name(record: dict) -> str:
    """An input of provenance.json as the lines name it: relative to its scenario."""
    return record.get("in_scenario_folder") or Path(record.get("path", "")).name


def compare_runs(a, b, rtol: float = 0.0, rows: int | None = SHOWN_ROWS) -> Comparison:
    """Compare run folders `a` and `b`: version, options, inputs, budget totals.

    Parameters
    ----------
    a, b : path
        Run folders written by ``workbench run``.
    rtol : float
        Relative difference below which two totals count as equal [1] (default 0: the
        numbers as written).
    rows : int or None
        Budget differences listed (largest change first); None lists every one.

    Returns
    -------
    Comparison
        ``.same`` is True when options, inputs and every budget total (value and
        status) agree; ``.budget`` holds every differing total.
    """
    a, b = Path(a).resolve(), Path(b).resolve()
    pa, pb = read_provenance(a), read_provenance(b)
    c = Comparison()
    say = c.lines.append
    say(f"A: {a} (deposition workbench {pa.get('version')}, {pa.get('run_finished_utc')})")
    say(f"B: {b} (deposition workbench {pb.get('version')}, {pb.get('run_finished_utc')})")
    if pa.get("version") != pb.get("version"):
        say(f"workbench version: {pa.get('version')} in A, {pb.get('version')} in B")

    opts = option_differences(pa.get("scenario"), pb.get("scenario"))
    if opts:
        say(f"options ({len(opts)} differ):")
        for key, va, vb in opts:
            say(f"  {key}: {show(va)} in A, {show(vb)} in B")
        c.same = False
    else:
        say("options: the same")

    ia, ib = pa.get("inputs", {}), pb.get("inputs", {})
    lines = []
    for role in list(dict.fromkeys([*ia, *ib])):
        ra, rb = ia.get(role), ib.get(role)
        if ra is None or rb is None:
            lines.append(f"  {role}: only in {'A' if rb is None else 'B'} "
                         f"({_input_name(ra or rb)})")
        elif not same_input(ra, rb):
            lines.append(f"  {role}: different files ({_input_name(ra)} in A, "
                         f"{_input_name(rb)} in B; sha256 {short_digest(ra.get('sha256'))} "
                         f"and {short_digest(rb.get('sha256'))})")
    inputs_differ = [ln for ln in lines if not ln.startswith("  scenario:")]
    if lines:
        say("inputs (by their SHA-256):")
        c.lines.extend(lines)
        c.same = c.same and not inputs_differ
    else:
        say("inputs: the same files (SHA-256)")

    diff, counts = budget_differences(a, b, rtol)
    c.budget = diff
    only = ""
    if counts["only_a"] or counts["only_b"]:
        only = (f"; {counts['only_a']} only in A, {counts['only_b']} only in B "
                "(other periods or receptors)")
        c.same = False
    tol = f" by more than {rtol:g} (relative)" if rtol else ""
    if diff.empty:
        say(f"budget totals: the {counts['shared']} shared totals are the same{tol}{only}")
        return c
    c.same = False
    say(f"budget totals (budget.csv, species all; kg/ha/yr): {len(diff)} of "
        f"{counts['shared']} differ{tol}{only}; largest change first:")
    shown = diff if rows is None else diff.head(rows)
    say(shown.to_string(index=False, na_rep="–", formatters={
        "a_kg_ha_yr": "{:.4g}".format, "b_kg_ha_yr": "{:.4g}".format,
        "change_kg_ha_yr": "{:+.3g}".format, "change_percent": "{:+.2f}".format}))
    if rows is not None and len(diff) > rows:
        say(f"... and {len(diff) - rows} more (--all lists every one, --csv FILE writes them)")
    return c
