"""What ``workbench run`` prints after a run: the budgets' status counts, the notes on
the run's span, the sites whose totals are not complete, the site-periods whose
totals fail completeness, the run's notes (those of report.html and provenance.json)
and the input notes (those of ``workbench check``, report.html and provenance.json); and
the whole-span table of ``workbench demo`` (:func:`span_lines`), all within 79
characters.

Part of :mod:`workbench.cli`, which re-exports every name here.
"""
from __future__ import annotations

import re
import textwrap

#: Widest line of a run note on the console [characters]: one less than an 80-column
#: terminal, which some terminals wrap at a line of exactly 80 characters.
NOTE_WIDTH = 79


def labelled_path(label: str, path, width=None, end: str = "") -> list[str]:
    """A label and a path (``scenario: PATH``, ``wrote 13 files into PATH:``) on one
    line when they fit `width` characters (default :data:`NOTE_WIDTH`), else the label
    (with `end`) alone and the path on a line of its own under it, indented two spaces
    and never broken (before, ``workbench check`` printed ``scenario: PATH`` and
    ``workbench run`` ``wrote 13 files into PATH:`` on one line of any length).

    >>> labelled_path("scenario:", "demo/scenario.toml")
    ['scenario: demo/scenario.toml']
    >>> labelled_path("scenario:", "/a/deep/folder/scenario.toml", width=30)
    ['scenario:', '  /a/deep/folder/scenario.toml']
    >>> labelled_path("wrote 2 files into", "/a/deep/folder/run", width=30, end=":")
    ['wrote 2 files into:', '  /a/deep/folder/run']
    """
    width = NOTE_WIDTH if width is None else width
    one = f"{label} {path}{end}"
    return [one] if len(one) <= width else [f"{label}{end}", f"  {path}"]


def console_lines(lines, width=None, lists=()) -> list[str]:
    """Lines for the console, each wrapped to `width` characters (default
    :data:`NOTE_WIDTH`) under a hanging indent: its continuation lines start two spaces
    deeper than the line itself (``"  farm 2016-01: ..."`` goes on at four spaces).
    Only the breaks change: a line is cut at its spaces, never inside a word or a path
    (a longer word stands alone on an over-long line) nor between a number and the
    unit or word after it (``77.4 %``, ``3 filled``) nor inside an option and its value
    (``[wet] period_fill = "seasonal"``, :func:`_hold_options`) nor inside a quoted
    column header (``'HNO3 [ug/m3]'``), and the words are
    kept as they are.  Used by ``workbench run`` and ``workbench demo`` for the status
    counts (:func:`status_lines`), the span notes (:func:`run_span_notes`), the sites
    not complete (:func:`site_status_lines`) and the totals failing completeness
    (:func:`failing_lines`), which return one line each (a test or a check of what was
    said reads them whole).

    Examples
    --------
    >>> for x in console_lines(["  farm 2017-07: S N: sample coverage below minimum "
    ...                         "(77.4 % of the period; minimum 90 %)"], width=37):
    ...     print(x)
      farm 2017-07: S N: sample coverage
        below minimum (77.4 % of the
        period; minimum 90 %)
    >>> console_lines(["a minimum of 90 %"], width=15)
    ['a minimum of', '  90 %']
    >>> console_lines(["S: 68 complete, 3 filled"], width=19)
    ['S: 68 complete,', '  3 filled']
    >>> console_lines(["", "short"])
    ['', 'short']

    A line that starts with one of `lists` (``"varied (uniform ranges): "``) goes on
    as a list of items parted by ``"; "``: it is cut between the items only, so that a
    value keeps its unit or kind (``0.5 to 2 (multiplier)``; an item longer than a line
    is cut as any text):

    >>> for x in console_lines(["varied: a 0.5 to 2 (multiplier); b 0.01 to 0.1 m"],
    ...                        width=36, lists=("varied: ",)):
    ...     print(x)
    varied: a 0.5 to 2 (multiplier);
      b 0.01 to 0.1 m
    """
    width = NOTE_WIDTH if width is None else width
    out = []
    for line in lines:
        line = str(line).rstrip()
        body = line.lstrip(" ")
        indent = line[:len(line) - len(body)]
        head = next((h for h in lists if body.startswith(h)), None)
        out.extend(_wrap(body, width, indent, indent + "  ", numbers=True, items=head)
                   or [line])
    return out


#: A number and the unit or word after it (``77.4 %``, ``168 h``, ``3 filled``), kept on
#: one line by :func:`console_lines`; a number before another number (a list of years)
#: or a bracket is not held.
_NUMBER_WORD = re.compile(r"(?<![\w.-])(\d[\d,.]*) (?=[A-Za-z%])")

#: An option as the notes name it: ``[section] key``, with `` = value`` where one is
#: given (a quoted value whole, else the value up to the next space).
_OPTION = re.compile(r'\[[A-Za-z_][\w.]*\] [A-Za-z_]\w*(?: = (?:"[^"\n]*"|[^\s"]+))?')


#: A column header as the notes quote it, ``'HNO3 [ug/m3]'`` or ``'NO3_as_N [mg/L]'``:
#: held on one line by :func:`_hold_options` as an option is.
_HEADER = re.compile(r"'[A-Za-z_][\w.]* \[[^\]'\n]+\]'")


def _hold_options(text: str) -> str:
    """`text` with the spaces of each option (``[wet] period_fill = "seasonal"``,
    ``[budget] min_air_coverage = 0.75``, ``[dry] so2_codeposition``) replaced by NUL,
    a character textwrap does not break at, so that a wrapped line never ends with
    ``[wet] period_fill =`` and the value on the next; the caller puts the spaces back
    after wrapping (a text that holds a NUL already is not given).

    >>> _hold_options('fill with [wet] period_fill = "seasonal" (the season)').split(" ")
    ['fill', 'with', '[wet]\\x00period_fill\\x00=\\x00"seasonal"', '(the', 'season)']

    A quoted column header (``'HNO3 [ug/m3]'``, :data:`_HEADER`) is held the same way:

    >>> _hold_options("ug N/m3 written under 'HNO3 [ug/m3]'?").split(" ")
    ['ug', 'N/m3', 'written', 'under', "'HNO3\\x00[ug/m3]'?"]
    """
    held = _OPTION.sub(lambda m: m.group(0).replace(" ", "\0"), text)
    return _HEADER.sub(lambda m: m.group(0).replace(" ", "\0"), held)


def _wrap(text: str, width: int, first: str, rest: str, numbers=False,
          items=None) -> list[str]:
    """`text` wrapped by textwrap to `width` under the indents `first` and `rest`,
    at spaces only and never inside an option (:func:`_hold_options`) nor, with
    `numbers`, between a number and the unit or word after it (:data:`_NUMBER_WORD`),
    nor, with `items` (the head of a list, ``"varied (uniform ranges): "``), inside an
    item of the ``"; "``-parted list after it that fits on a continuation line.
    The held spaces are NUL, a character textwrap does not break at, put back after (a
    text that holds a NUL already is wrapped as it is)."""
    held = "\0" not in text
    body = _hold_options(text) if held else text
    if held and numbers:
        body = _NUMBER_WORD.sub("\\1\0", body)
    if held and items and body.startswith(_hold_options(items)):
        room = width - len(rest) - 1                     # the item and its ";"
        head, parts = body[:len(items)], body[len(items):].split("; ")
        body = head + "; ".join(p.replace(" ", "\0") if len(p) <= room else p
                                for p in parts)
    lines = textwrap.wrap(body, width=width, initial_indent=first, subsequent_indent=rest,
                          break_long_words=False, break_on_hyphens=False)
    return [x.replace("\0", " ") for x in lines] if held else lines


#: At most this many filled site-periods named in :func:`status_lines`; the rest are
#: counted (summary.csv has each).
FILLED_SHOWN = 8


def filled_names(rows, shown=None) -> str:
    """The site-periods of `rows` (total rows of one element) whose status is
    ``filled``, named (``v01 2016 in 3 receptors, v02 2017``; the period alone without
    a ``site`` column), at most `shown` (default :data:`FILLED_SHOWN`) and "N more"; a
    site-period counts once, with the number of its receptors filled where more than
    one.  The console counted "3 filled" and named none.

    >>> import pandas as pd
    >>> t = pd.DataFrame({"site": ["a", "a", "b"], "period": ["2016", "2016", "2017"],
    ...                   "status": ["filled", "filled", "filled"]})
    >>> filled_names(t), filled_names(t, shown=1)
    ('a 2016 in 2 receptors, b 2017', 'a 2016 in 2 receptors, 1 more')
    """
    shown = FILLED_SHOWN if shown is None else shown
    f = rows[rows["status"].astype(str) == "filled"]
    names = (f["site"].astype(str) + " " + f["period"].astype(str) if "site" in f
             else f["period"].astype(str))
    n = names.value_counts(sort=False)
    words = [f"{k} in {int(v)} receptors" if v > 1 else str(k) for k, v in n.items()]
    more = len(words) - shown
    return ", ".join(words[:shown] + ([f"{more} more"] if more > 0 else []))


def status_lines(table, inputs) -> list[str]:
    """What a run's budgets hold, for the console: per element the status counts of the
    total budget of each site, receptor and period (the flagged ones that fail
    completeness counted beside them: "11 flagged (2 failing completeness)"; the filled
    ones named: "1 filled (v01 2016)", :func:`filled_names`); with the
    coverage warnings when every one is missing
    (:func:`workbench.preflight.coverage_notes`)."""
    from .preflight import coverage_notes
    t = table[(table["period"].astype(str) != "span") & (table["species"] == "all")
              & (table["pathway"] == "total")]
    if t.empty:
        return []
    parts = []
    els = sorted(t["element"].astype(str).unique(), key=lambda e: ("S", "N").index(e)
                 if e in ("S", "N") else 2)
    for el in els:
        g = t[t["element"].astype(str) == el]
        counts = g["status"].astype(str).value_counts()
        order = ["complete", "filled", "partial", "flagged", "missing"]
        keys = [k for k in order if k in counts] + [k for k in counts.index if k not in order]
        fail = 0
        if "passes" in g:                    # flagged and failing, not only read with care
            fail = int((~g["passes"].astype(str).str.lower().isin(("true", "1"))
                        & (g["status"].astype(str) != "missing")).sum())
        parts.append(f"{el}: " + ", ".join(
            f"{int(counts[k])} {k}" + (f" ({fail} failing completeness)"
                                       if k == "flagged" and fail else "")
            + (f" ({filled_names(g)})" if k == "filled" else "") for k in keys))
    lines = ["budgets per site, receptor and period (total, summary.csv): " + "; ".join(parts)]
    if (t["status"].astype(str) == "missing").all():
        start = t["period_start"].min() if "period_start" in t else None
        end = t["period_end"].max() if "period_end" in t else None
        lines.append("warning: every budget is missing")
        if start is not None and end is not None:
            lines.extend("  " + c for c in coverage_notes(inputs, start, end))
    return lines


def run_span_notes(scenario, table, resolution=None, study=None) -> list[str]:
    """:func:`workbench.preflight.span_notes` for a finished run: its periods from
    `table` (budget rows), ``[period]`` start and end from the scenario file; with
    `study`, also the days of the record a default start or end left out
    (:meth:`workbench.pipeline.Study.span_notes`)."""
    from .preflight import span_notes
    from .scenario import load_scenario
    t = table[table["period"].astype(str) != "span"]
    if t.empty or "period_start" not in t:
        return []
    p = load_scenario(scenario).data["period"]
    left = [] if study is None else [
        "note: " + n.removeprefix("period: ") for n in study.span_notes(p.get("start"),
                                                                       p.get("end"))]
    return span_notes(p.get("start"), p.get("end"), t["period_start"].min(),
                      t["period_end"].max(), resolution or p["resolution"]) + left


def site_status_lines(table, min_sites=None) -> list[str]:
    """Where a network's totals are not complete, for the console: one line per element,
    status and set of missing components, naming the sites (with the periods, where not
    every period).  Empty for a run of at most `min_sites` sites (default
    :data:`workbench.report_network.NETWORK_SITES`), whose few sites the report shows
    one by one.  The flagged totals that fail completeness (budget.csv's ``passes``
    false) get lines of their own, "failing completeness", apart from the flagged ones
    that pass and are to be read with care; :func:`failing_lines` says why each fails.

    A site counts when any of its receptors has that status in that period."""
    from .report_network import NETWORK_SITES, year_span
    min_sites = NETWORK_SITES if min_sites is None else min_sites
    t = table[(table["period"].astype(str) != "span") & (table["species"] == "all")
              & (table["pathway"] == "total")]
    if t.empty or t["site"].nunique() <= min_sites:
        return []
    every = set(t["period"].astype(str))
    miss = t["missing_components"].fillna("").astype(str) if "missing_components" in t \
        else ""
    status = t["status"].astype(str)
    if "passes" in t:      # a total failing completeness is no total to read with care
        fails = (~t["passes"].astype(str).str.lower().isin(("true", "1"))
                 & (status != "missing"))
        status = status.where(~fails, "failing")
    t = t.assign(_miss=miss, _period=t["period"].astype(str), _status=status)
    words = {"partial": "partial",
             "flagged": "flagged, passing completeness (read with care: report.html says why)",
             "failing": "failing completeness (no complete figure for the period: "
                        "the lines below say why)",
             "missing": "missing (no data)"}
    lines = []
    for el in ("S", "N"):
        for status, word in words.items():
            g = t[(t["element"] == el) & (t["_status"] == status)]
            if status != "partial":      # missing: every component; flagged, failing: kept
                g = g.assign(_miss="")
            for m, gm in g.groupby("_miss", sort=True):
                sites = []
                for site, gs in gm.groupby("site", sort=False):
                    ps = set(gs["_period"])
                    sites.append(f"{site}" if ps == every else f"{site} ({year_span(ps)})")
                what = f"{el} {word}" + (f" without {', '.join(m.split())}" if m else "")
                lines.append(f"  {what}: {len(sites)} site{'s' if len(sites) > 1 else ''}: "
                             + ", ".join(sites))
    if lines:
        lines.insert(0, "sites whose totals are not complete (a site counts when any "
                     "receptor is; summary.csv has each; no period named = every period):")
    return lines


#: At most this many site-periods named one by one in :func:`failing_lines`; the rest
#: are counted (summary.csv has each).
FAILING_SHOWN = 8


def failing_lines(table, shown=None) -> list[str]:
    """The site-periods whose S or N total fails completeness, for the console: one
    heading with their count, then at most `shown` (default :data:`FAILING_SHOWN`) of
    them with the first criterion failed, its share and minimum (``mere 2023: S N:
    gauge record below minimum (49.7 % of the period; minimum 90 %)``), and "and N more,
    see summary.csv".  A site-period counts once when any receptor's S or N total fails
    (present components failing a criterion: budget.csv's ``passes`` false, status not
    ``missing``); the words are those of its first failing total, the elements named
    that fail for the same words.  Empty when every total passes."""
    shown = FAILING_SHOWN if shown is None else shown
    if "passes" not in table or "completeness_failure" not in table:
        return []
    t = table[(table["period"].astype(str) != "span") & (table["species"] == "all")
              & (table["pathway"] == "total")]
    passes = t["passes"].astype(str).str.lower().isin(("true", "1"))
    why = t["completeness_failure"].fillna("").astype(str)
    t = t[~passes & (t["status"].astype(str) != "missing") & (why != "")]
    if t.empty:
        return []
    t = t.assign(_period=t["period"].astype(str),
                 _why=t["completeness_failure"].astype(str).str.split(": ", n=1).str[-1])
    groups = list(t.groupby(["site", "_period"], sort=False))
    years = all(len(p) == 4 and p.isdigit() for (_, p), _ in groups)
    unit = "site-year" if years else "site-period"
    n = len(groups)
    lines = [f"{n} {unit}{'s' if n > 1 else ''} fail{'' if n > 1 else 's'} completeness "
             f"({'their' if n > 1 else 'its'} S or N totals are no complete figure for "
             "the period; summary.csv: "
             "S_total_passes, N_total_passes and their _completeness_failure):"]
    for (site, period), g in groups[:shown]:
        first = g["_why"].iloc[0]
        els = [e for e in ("S", "N") if (g.loc[g["element"] == e, "_why"] == first).any()]
        lines.append(f"  {site} {period}: {' '.join(els)}: {first}")
    if n > shown:
        lines.append(f"  and {n - shown} more, see summary.csv")
    return lines


def run_note_lines(notes, site_ids=(), base=None, said=(), width=None,
                   min_sites=None) -> list[str]:
    """The run's notes for the console, as report.html ("Notes") and provenance.json
    (``run_notes``) carry them: a heading, then each note once, wrapped to `width`
    characters (default :data:`NOTE_WIDTH`) under a hanging "  - ", an option and its
    value (``[wet] period_fill = "seasonal"``) on one line (:func:`_hold_options`).

    Parameters
    ----------
    notes : list of str
        The run's notes (:attr:`workbench.pipeline.Result.notes`).
    site_ids : iterable of str
        The run's sites: more than `min_sites` (default
        :data:`workbench.report_network.NETWORK_SITES`) and the notes that differ only
        by their site are one line, as the report groups them
        (:func:`workbench.report_network.grouped_free_notes`).
    base : pathlib.Path, optional
        The scenario's folder: paths inside it are written relative to it, as in the
        report (:func:`workbench.runpaths.shown_text`).
    said : iterable of str
        Lines printed already (:func:`run_span_notes`): a note that one of them holds
        (without its ``period: `` head) is not printed again.

    Returns
    -------
    list of str
        Empty when the run has no note left to print.

    Examples
    --------
    >>> lines = run_note_lines(["completeness of month periods: " + "word " * 30])
    >>> lines[0]
    'notes of the run (report.html, "Notes"; provenance.json, run_notes):'
    >>> max(len(x) for x in lines) <= NOTE_WIDTH, lines[1][:36]
    (True, '  - completeness of month periods: w')
    """
    from .report_network import NETWORK_SITES, grouped_free_notes
    from .runpaths import shown_text
    width = NOTE_WIDTH if width is None else width
    min_sites = NETWORK_SITES if min_sites is None else min_sites
    said = [str(x) for x in said]
    shown = []
    for n in notes:
        n = shown_text(str(n), base)
        if not n.strip() or any(n.removeprefix("period: ") in x for x in said):
            continue
        shown.append(n)
    shown = list(dict.fromkeys(shown))
    ids = [str(s) for s in site_ids]
    if shown and len(ids) > min_sites:
        shown = grouped_free_notes(shown, ids)
    if not shown:
        return []
    lines = ['notes of the run (report.html, "Notes"; provenance.json, run_notes):']
    for n in shown:
        lines.extend(_wrap(" ".join(n.split()), width, "  - ", "    "))
    return lines


#: At most this many input notes printed one by one at the end of ``workbench run``
#: (:func:`input_note_lines`); the rest are counted, with where to read them [-] (five:
#: a few long notes, each up to about eight lines at 79 columns, still fit a screen;
#: our choice).
INPUT_NOTES_SHOWN = 5


def input_note_lines(notes, site_ids=(), base=None, scenario=None, shown=None,
                     min_sites=None) -> list[str]:
    """The input notes for the console at the end of ``workbench run``: the readers'
    notes on the inputs (a suspected unit slip, a gas on the element basis, wind in
    knots, a daily rain counter, missing met hours, repeated lines...), which ``workbench
    check``, report.html ("Input rows") and provenance.json (``input_notes``) carry.
    Before, a command-line user read none of them on the console: a run said "S: 68
    complete" while a note said that a site's HNO3 may be 4.5 x low.

    A heading, then at most `shown` (default :data:`INPUT_NOTES_SHOWN`) notes in the
    order of the files, each whole, words unchanged, under a hanging ``"  - "``
    (wrapped by :func:`console_lines` to :data:`NOTE_WIDTH` characters), then "and N
    more" with where all of them are.  A note that a met record is complete
    (:data:`workbench.io.metgaps.COMPLETE_RECORD`) says nothing is amiss and is left
    out here (kept in the three places above).

    Parameters
    ----------
    notes : list of str
        The ledger's notes (``study.inputs.ledger.notes``).
    site_ids : iterable of str
        The run's sites: more than `min_sites` (default
        :data:`workbench.report_network.NETWORK_SITES`) and the notes that differ only
        by their site are one line, as report.html groups them
        (:func:`workbench.report_network.grouped_free_notes`).
    base : pathlib.Path, optional
        The scenario's folder: paths inside it are written relative to it, as in the
        report (:func:`workbench.runpaths.shown_text`).
    scenario : str, optional
        The scenario file as the user typed it, named in ``workbench check <scenario>``.
    shown : int, optional
        Most notes printed whole.

    Returns
    -------
    list of str
        Empty when no note is left to print.

    Examples
    --------
    >>> for x in input_note_lines(["met farm: complete hourly record 2016 to 2017",
    ...                            "met mere: 168 missing hours in 1 gap"], scenario="s.toml"):
    ...     print(x)
    notes on the inputs (report.html, "Input rows"; provenance.json, input_notes;
      workbench check s.toml):
      - met mere: 168 missing hours in 1 gap
    >>> input_note_lines(["a", "b", "c"], shown=1)[-1]
    '  and 2 more: report.html ("Input rows"), provenance.json (input_notes)'
    """
    from .io.metgaps import COMPLETE_RECORD
    from .report_network import NETWORK_SITES, grouped_free_notes
    from .runpaths import shown_text
    shown = INPUT_NOTES_SHOWN if shown is None else max(1, int(shown))
    min_sites = NETWORK_SITES if min_sites is None else min_sites
    kept = [" ".join(shown_text(str(n), base).split()) for n in notes]
    kept = list(dict.fromkeys(n for n in kept
                              if n and not re.match(r"met \S+: " + COMPLETE_RECORD + " ", n)))
    ids = [str(s) for s in site_ids]
    if kept and len(ids) > min_sites:
        kept = grouped_free_notes(kept, ids)
    if not kept:
        return []
    where = 'report.html, "Input rows"; provenance.json, input_notes'
    check = f"; workbench check {scenario}" if scenario else ""
    # a scenario path too long for a line of its own with "):" after it: named once,
    # alone on the line under the heading (never broken, never over the width)
    long = bool(scenario) and len(f"  {scenario}):") > NOTE_WIDTH
    if long:
        check = "; workbench check of the scenario"
    lines = [f"notes on the inputs ({where}{check}):"]
    path_line = [f"  {scenario}"] if long else []
    notes = ["  - " + n for n in kept[:shown]]
    if len(kept) > shown:
        notes.append(f"  and {len(kept) - shown} more: report.html (\"Input rows\"), "
                     "provenance.json (input_notes)"
                     + (", workbench check of the scenario" if long else
                        f", workbench check {scenario}" if scenario else ""))
    return console_lines(lines) + path_line + console_lines(notes)


def uncertainty_lines(out, result) -> list[str]:
    """One line on the Monte Carlo of the run folder `out` (none without draws): its
    draws and seed (as its provenance.json records them), the columns that hold its
    quantiles and where the report says what a range holds; and, where ``[dry]
    so2_codeposition`` or ``nh3_acid_ratio_from_air`` was on in `result`, that the draws
    keep the velocities of the measured air (before, the console said nothing of the
    draws at all), or with ``[uncertainty] vd_follows_air`` that they follow the drawn
    air by the grid method, naming the draws held at the grid's end (n of D draws at site
    x); wrapped to :data:`NOTE_WIDTH` characters, as the run's notes."""
    import json
    from pathlib import Path
    try:
        prov = json.loads((Path(out) / "provenance.json").read_text(encoding="utf-8"))
        unc = prov["scenario"]["uncertainty"]
        draws, seed = int(unc["draws"]), unc["seed"]
    except (OSError, ValueError, KeyError, TypeError):
        return []
    if draws < 1:
        return []
    from .analysis.airvd import held_words
    from .analysis.uncertainty import air_vd_held_state, air_vd_state
    line = (f"Monte Carlo: {draws:,} draws, seed {seed}: the 5, 50 and 95 % quantiles are "
            "the columns ending _p05, _p50 and _p95 of budget.csv and summary.csv; what a "
            "range holds and leaves out: report.html, section Uncertainty")
    held = air_vd_state(result)
    if held and unc.get("vd_follows_air") is True:
        line += ("; under [dry] " + " and ".join(f"{k} = true" for k in held)
                 + " the draws' velocities follow the drawn air by the grid method "
                 "([uncertainty] vd_follows_air; docs/methods_uncertainty.md, \"Velocities "
                 "that depend on the air\")")
        from .writers import AIR_VD_HELD_KEYS
        rows = prov.get("air_vd_held") or []      # the run folder's, as draws and seed
        words = held_words([tuple(r[k] for k in AIR_VD_HELD_KEYS) for r in rows
                            if isinstance(r, dict) and all(k in r for k in AIR_VD_HELD_KEYS)]
                           or air_vd_held_state(result))
        if words:
            line += ("; outside the grid's ratio factors 0.5-2, " + words
                     + " (report.html, \"Not in the range\")")
    elif held:
        line += ("; the draws keep the velocities of the measured air under [dry] "
                 + " and ".join(f"{k} = true" for k in held)
                 + " (docs/methods_uncertainty.md, \"Velocities that depend on the air\")")
    return _wrap(line, NOTE_WIDTH, "", "  ")


#: Column heads of the console's whole-span table and the budget.csv columns under them.
SPAN_HEADS = {"site": "site", "receptor": "receptor", "element": "element",
              "flux_kg_ha_yr": "kg/ha/yr", "flux_eq_ha_yr": "eq/ha/yr",
              "status": "status", "missing_components": "missing"}


def span_lines(table, width=None) -> list[str]:
    """The whole-span totals of `table` (budget rows; those of period ``span``, species
    ``all``, pathway ``total``) for the console, every line at most `width` characters
    (default :data:`NOTE_WIDTH`): a table of site, receptor, element, the total in
    kg/ha/yr (3 significant digits, :func:`_kg`) and eq/ha/yr (whole, thousands separated), status
    and missing components (heads of :data:`SPAN_HEADS`), then the years each row is
    the mean of (``years_used``) and those left out (``years_excluded``): one line when
    every row has the same years, else one line per set of years naming its rows.
    Where the table is wider than `width` (long site names), each row is one wrapped
    line instead (``farm crops N: 31.6 kg/ha/yr, 2,257 eq/ha/yr, flagged``).  Nothing
    but the breaks and heads differs from budget.csv's span rows: each of their numbers
    is here.

    Examples
    --------
    >>> import pandas as pd
    >>> t = pd.DataFrame({"site": ["fell", "fell"], "receptor": ["grass", "grass"],
    ...     "period": ["span", "span"], "element": ["S", "N"], "species": ["all", "all"],
    ...     "pathway": ["total", "total"], "flux_kg_ha_yr": [8.17, 13.6],
    ...     "flux_eq_ha_yr": [510.4, 974.0], "status": ["complete", "partial"],
    ...     "missing_components": ["", "NO2"], "years_used": ["2016 2017", "2016 2017"]})
    >>> for x in span_lines(t):
    ...     print(x)
    site  receptor  element  kg/ha/yr  eq/ha/yr  status    missing
    fell  grass     S            8.17       510  complete
    fell  grass     N            13.6       974  partial   NO2
    years used (years_used), every row: 2016 2017
    """
    width = NOTE_WIDTH if width is None else width
    span = table[(table["period"].astype(str) == "span") & (table["species"] == "all")
                 & (table["pathway"] == "total")]
    if span.empty:
        return []
    cols = [c for c in SPAN_HEADS if c in span]
    shown = span[cols].copy()
    for c in ("missing_components", "status"):
        if c in shown:
            shown[c] = shown[c].fillna("").astype(str)
    cells = {c: [_kg(v) if c == "flux_kg_ha_yr" else f"{v:,.0f}"
                 if c == "flux_eq_ha_yr" else str(v) for v in shown[c]] for c in cols}
    lines = [_table_line([SPAN_HEADS[c] for c in cols], cells, cols)] + [
        _table_line([cells[c][i] for c in cols], cells, cols) for i in range(len(shown))]
    if max(len(x) for x in lines) > width:              # long names: one line a row
        lines = []
        for r in shown.itertuples(index=False):
            d = r._asdict()
            words = [f"{_kg(d[k])} kg/ha/yr" if k == "flux_kg_ha_yr" else
                     f"{d[k]:,.0f} eq/ha/yr" if k == "flux_eq_ha_yr" else str(d[k])
                     for k in ("flux_kg_ha_yr", "flux_eq_ha_yr", "status") if k in d]
            missing = d.get("missing_components", "")
            lines.append(" ".join(str(d[k]) for k in ("site", "receptor", "element")
                                  if k in d) + ": " + ", ".join(words)
                         + (f"; missing {missing}" if missing else ""))
        lines = console_lines(lines, width)
    return lines + _span_years(span, width)


def _kg(value) -> str:
    """A total in kg/ha/yr for :func:`span_lines`: 3 significant digits, trailing zeros
    kept (``5.20``, ``31.6``), whole from 1,000 on (``1,234``), never in e-notation.

    >>> [_kg(v) for v in (5.2, 31.64, 0.0123, 1234.5, float("nan"))]
    ['5.20', '31.6', '0.0123', '1,234', 'nan']
    """
    text = f"{value:#.3g}"
    return f"{value:,.0f}" if "e" in text else text.rstrip(".")


def _table_line(values, cells, cols) -> str:
    """One line of :func:`span_lines`'s table: the numbers (kg, eq) right-aligned, the
    words left-aligned, each column as wide as its head or its widest cell."""
    out = []
    for v, c in zip(values, cols):
        w = max([len(SPAN_HEADS[c])] + [len(x) for x in cells[c]])
        out.append(v.rjust(w) if c.startswith("flux_") else v.ljust(w))
    return "  ".join(out).rstrip()


def _span_years(span, width) -> list[str]:
    """The years of the span rows (``years_used``, ``years_excluded``) for
    :func:`span_lines`: one line when every row has the same, else one per set of years
    naming its rows (``site receptor element``)."""
    if "years_used" not in span:
        return []
    used = span["years_used"].fillna("").astype(str).str.strip()
    left = (span["years_excluded"].fillna("").astype(str).str.strip()
            if "years_excluded" in span else used.str.slice(0, 0))
    keys = list(zip(used, left))
    words = {k: (k[0] or "none") + (f" (years_excluded: {k[1]})" if k[1] else "")
             for k in keys}
    if len(set(keys)) == 1:
        return console_lines([f"years used (years_used), every row: {words[keys[0]]}"],
                             width)
    lines = ["years used (years_used):"]
    names = [" ".join(str(r[c]) for c in ("site", "receptor", "element") if c in span)
             for _, r in span.iterrows()]
    for k in dict.fromkeys(keys):                  # in the order of the rows
        rows = [n for n, key in zip(names, keys) if key == k]
        lines.append(f"  {words[k]}: " + ", ".join(rows))
    return console_lines(lines, width)
