"""What differs between two run folders?  (``workbench compare RUN_A RUN_B``)

Two runs of a study (one option changed, an input corrected, another workbench version)
are compared from their folders alone: the workbench version, the options of the
recorded scenarios (``provenance.json``), the input files by their SHA-256 (wherever
they lay), and the budget totals of ``budget.csv`` (S and N, wet, dry and total, per
site, receptor and period, in kg/ha/yr) with their statuses.  Two ``workbench
sensitivity`` folders are compared by their tables instead (:func:`table_differences`);
folders of two kinds get one message.  docs/run_folder.md shows an example.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from .percent import no_percent_reason, percent_change
from .runcheck import (Lines, RunRecordError, folder_kind, option_differences,
                       read_provenance, short_digest, show)

__all__ = ["Comparison", "compare_runs", "budget_differences", "table_differences"]

#: The keys of a budget total in budget.csv.
KEYS = ["site", "receptor", "period", "element", "pathway"]

#: What the two values of a budget difference are called in its ``percent_note``.
RUN_WORDS = ("the first run's value", "the second run's value")

#: Widest line of a table of differences [characters]: pandas sets the columns that
#: do not fit under the first ones (an 80-column terminal, as the console's notes,
#: :data:`workbench.cli_status.NOTE_WIDTH`).
TABLE_WIDTH = 79

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
        ``change_kg_ha_yr`` (b - a), ``change_percent`` (of a, where a > 0: NaN for a
        base of 0, below 0 or missing), ``percent_note`` (why there is no percent,
        e.g. "no percent: the first run's value is 0"; empty where there is one),
        ``a_status``, ``b_status``, largest change first; and counts: ``shared`` totals, ``only_a``, ``only_b``
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
    # no percent of a base of 0 ("inf %" before), below 0 or missing: NaN and the
    # reason in words (workbench.percent, docs/budget.md "Changes in percent")
    out["change_percent"] = percent_change(out["a_kg_ha_yr"], out["b_kg_ha_yr"])
    out["percent_note"] = no_percent_reason(out["a_kg_ha_yr"], out["b_kg_ha_yr"],
                                            *RUN_WORDS)
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


#: What each kind of folder is, in the message on folders compare does not take.
KIND_WORDS = {"run": "a `workbench run` folder", "sensitivity": "a `workbench sensitivity` "
              "folder", "grid": "a `workbench grid` folder (maps: not compared)",
              "other": "a folder of neither kind"}
#: The files of a sensitivity folder that compare reads: the columns naming a row and
#: the numbers compared (docs/run_folder.md).
SENSITIVITY_TABLES = {
    "sensitivity.csv": ("Sobol indices", ["S1", "S1_conf", "ST", "ST_conf"]),
    "tornado.csv": ("tornado", ["output_low", "output_base", "output_high"]),
}
#: The columns that name a row of either table: the cell (site, receptor, period), the
#: total (element, quantity) and the parameter (factor).
SENSITIVITY_KEYS = ["site", "receptor", "period", "element", "quantity", "factor"]


def table_differences(a, b, name: str, values: list, rtol: float = 0.0):
    """The values of table `name` (a CSV of a sensitivity folder) that differ between
    folders `a` and `b`, one row per differing number: :data:`SENSITIVITY_KEYS`,
    ``column``, ``a``, ``b``, ``change`` (b - a), largest change first; and counts
    (``shared`` rows, ``only_a``, ``only_b``, ``factors_only_a``, ``factors_only_b``)."""
    def read(folder):
        path = Path(folder) / name
        if not path.is_file():
            raise RunRecordError(f"{folder}: no {name}, expected a folder written by "
                                 "`workbench sensitivity`")
        t = pd.read_csv(path, dtype={"period": str}, keep_default_na=False,
                        na_values={c: [""] for c in values})
        return t.set_index(SENSITIVITY_KEYS)[values]
    ta, tb = read(a), read(b)
    both = ta.merge(tb, how="inner", left_index=True, right_index=True, suffixes=("_a", "_b"))
    parts = []
    for col in values:
        va, vb = both[f"{col}_a"].to_numpy(float), both[f"{col}_b"].to_numpy(float)
        nan_a, nan_b = np.isnan(va), np.isnan(vb)
        with np.errstate(invalid="ignore"):
            close = np.isclose(va, vb, rtol=rtol, atol=0.0) if rtol else va == vb
        differs = (nan_a != nan_b) | (~nan_a & ~nan_b & ~close)
        d = both.index[differs].to_frame(index=False)
        d["column"], d["a"], d["b"] = col, va[differs], vb[differs]
        parts.append(d)
    out = pd.concat(parts, ignore_index=True)
    out["change"] = out["b"] - out["a"]
    out = out.iloc[np.argsort(-out["change"].abs().fillna(np.inf).to_numpy(),
                              kind="stable")].reset_index(drop=True)
    fa = set(ta.index.get_level_values("factor"))
    fb = set(tb.index.get_level_values("factor"))
    counts = {"shared": len(both), "only_a": len(ta.index.difference(tb.index)),
              "only_b": len(tb.index.difference(ta.index)),
              "factors_only_a": sorted(fa - fb), "factors_only_b": sorted(fb - fa)}
    return out, counts


def _compare_sensitivity(c, a, b, rtol, rows):
    """The tables of two sensitivity folders, after their options and inputs: the rows
    (cell, total, parameter) whose numbers differ, largest change first; ``c.budget``
    holds every differing number with a ``file`` column."""
    say = c.lines.append
    tol = f" by more than {rtol:g} (relative)" if rtol else ""
    every = []
    for name, (what, values) in SENSITIVITY_TABLES.items():
        diff, counts = table_differences(a, b, name, values, rtol)
        only = ""
        if counts["only_a"] or counts["only_b"]:
            only = f"; {counts['only_a']} rows only in A, {counts['only_b']} only in B"
            for side in ("a", "b"):
                if counts[f"factors_only_{side}"]:
                    only += (f" (factors only in {side.upper()}: "
                             + ", ".join(counts[f"factors_only_{side}"]) + ")")
            c.same = False
        if diff.empty:
            say(f"{what} ({name}): the {counts['shared']} shared rows are the same{tol}{only}")
            continue
        c.same = False
        cells = diff[SENSITIVITY_KEYS].drop_duplicates()
        say(f"{what} ({name}): {len(diff)} numbers of {len(cells)} of {counts['shared']} "
            f"rows differ{tol}{only}; parameters: "
            + ", ".join(dict.fromkeys(diff["factor"].astype(str))) + "; largest change first:")
        shown = diff if rows is None else diff.head(rows)
        say(shown.to_string(index=False, na_rep="–", line_width=TABLE_WIDTH, formatters={
            "a": "{:.4g}".format, "b": "{:.4g}".format, "change": "{:+.3g}".format}))
        if rows is not None and len(diff) > rows:
            say(f"... and {len(diff) - rows} more (--all lists every one, --csv FILE "
                "writes them)")
        every.append(diff.assign(file=name))
    c.budget = (pd.concat(every, ignore_index=True)[["file", *SENSITIVITY_KEYS, "column", "a",
                                                      "b", "change"]] if every else
                pd.DataFrame(columns=["file", *SENSITIVITY_KEYS, "column", "a", "b", "change"]))
    return c


def _input_name(record: dict) -> str:
    """An input of provenance.json as the lines name it: relative to its scenario."""
    return record.get("in_scenario_folder") or Path(record.get("path", "")).name


def compare_runs(a, b, rtol: float = 0.0, rows: int | None = SHOWN_ROWS) -> Comparison:
    """Compare run folders `a` and `b`: version, options, inputs, budget totals.

    Parameters
    ----------
    a, b : path
        Run folders written by ``workbench run``, or two folders written by ``workbench
        sensitivity`` (compared by their Sobol and tornado tables).
    rtol : float
        Relative difference below which two totals count as equal [1] (default 0: the
        numbers as written).
    rows : int or None
        Budget differences listed (largest change first); None lists every one.

    Returns
    -------
    Comparison
        ``.same`` is True when options, inputs and every budget total (value and
        status) agree; ``.budget`` holds every differing total (of sensitivity folders:
        every differing number, with its ``file``).

    Raises
    ------
    RunRecordError
        For a folder without provenance.json, or folders of two kinds (a run beside a
        sensitivity folder) or of a kind not compared (a grid folder).
    """
    a, b = Path(a).resolve(), Path(b).resolve()
    pa, pb = read_provenance(a), read_provenance(b)
    kinds = folder_kind(a, pa), folder_kind(b, pb)
    if kinds[0] != kinds[1] or kinds[0] not in ("run", "sensitivity"):
        raise RunRecordError(
            "workbench compare takes two folders of one kind: two `workbench run` folders "
            "(options, inputs, budget totals) or two `workbench sensitivity` folders "
            f"(options, inputs, Sobol indices and tornado); A ({a}) is {KIND_WORDS[kinds[0]]}, "
            f"B ({b}) {KIND_WORDS[kinds[1]]}")
    c = Comparison()
    say = c.lines.append
    say(f"A: {a} (deposition workbench {pa.get('version')}, {pa.get('run_finished_utc')})")
    say(f"B: {b} (deposition workbench {pb.get('version')}, {pb.get('run_finished_utc')})")
    if pa.get("version") != pb.get("version"):
        say(f"workbench version: {pa.get('version')} in A, {pb.get('version')} in B")

    opts = option_differences(pa.get("scenario"), pb.get("scenario"))
    if opts:
        say(f"options ({len(opts)} differ{'s' if len(opts) == 1 else ''}):")
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

    if kinds[0] == "sensitivity":
        return _compare_sensitivity(c, a, b, rtol, rows)
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
    say(shown.to_string(index=False, na_rep="–", line_width=TABLE_WIDTH, formatters={
        "a_kg_ha_yr": "{:.4g}".format, "b_kg_ha_yr": "{:.4g}".format,
        "change_kg_ha_yr": "{:+.3g}".format, "change_percent": "{:+.2f}".format}))
    if rows is not None and len(diff) > rows:
        say(f"... and {len(diff) - rows} more (--all lists every one, --csv FILE writes them)")
    return c
