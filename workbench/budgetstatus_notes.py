"""The notes of the budget's rows: '; '-joined parts, split outside parentheses, and the
note of a period's hours without a usable sample; the start of the note of a site that
measures no pNa.

Part of :mod:`workbench.budgetstatus` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np
import pandas as pd


#: The start of the note of a site that measures no pNa at all: its total pSO4 stands
#: for the non-sea-salt part on one basis over the whole record, said but not flagged
#: (the budget flags only weeks without pNa among weeks with it; docs/budget.md;
#: written by :func:`workbench.drycomponents.total_used_notes`).
NO_PNA_AT_SITE = "no pNa measured at the site"


def split_notes(text) -> list:
    """The parts of a '; '-joined note (:func:`join_notes`), split only outside
    parentheses: a part may hold "; " inside its own parenthesis ("... (sea salt
    included, an upper bound; small inland)"), and a split there cut it in two, the
    second half then read as a part of its own ("every year used: pSO4: small inland)").

    >>> split_notes("a (b; c); d")
    ['a (b; c)', 'd']
    >>> split_notes("")
    []
    """
    text = str(text)
    parts, depth, start = [], 0, 0
    for i, ch in enumerate(text):            # over a note's characters, never over hours
        if ch == "(":
            depth += 1
        elif ch == ")":
            depth = max(depth - 1, 0)
        elif ch == ";" and depth == 0 and text.startswith("; ", i):
            parts.append(text[start:i])
            start = i + 2
    parts.append(text[start:])
    return [p for p in parts if p.strip()]


def join_notes(acc, text):
    """Append `text` to the '; '-joined notes in `acc` (ndarray of str or str); an empty
    `text` (scalar or element) leaves `acc` as it is."""
    acc = np.asarray(acc, dtype=object)
    acc = np.where(pd.isna(acc), "", acc)
    text = np.asarray(text, dtype=object)
    return np.where(text == "", acc, np.where(acc == "", text, acc + "; " + text)).astype(object)


#: The shortest stretch of a period without samples that a budget row notes [h]: a
#: week, the usual sample (our choice; a weekly sample across the edge of the record's
#: first year leaves less).
SAMPLING_GAP_NOTE_H = 168.0
#: Hours of a week, the unit the note counts a gap in [h].
HOURS_PER_WEEK = 168.0


#: The words a gap note names its coverage with, per role: those of the completeness
#: criterion on the same share ("sample coverage below minimum (65.5 % of the period;
#: minimum 90 %)", "air coverage below minimum (...)"), so that one share has one name.
COVERAGE_WORDS = {"precipitation": "sample coverage", "air": "air coverage"}


def sampling_gap_note(note, status, coverage, hours, role, stated_by=None):
    """Add to a component's note the hours of its period without a usable sample.

    A gap within the completeness thresholds keeps a component ``complete`` (the covered
    weeks stand for the period): the note says it where the number is read, e.g. ``10
    weeks without a usable air sample (air coverage 80.8 % of the period)``.  Written
    for a component that is not ``missing`` with at least :data:`SAMPLING_GAP_NOTE_H`
    hours of its period not covered: no sample (a sampler out of service) or only
    samples left out (a lost sample; input_rows.csv says why).  The coverage is the
    budget's own (``air_coverage``; ``wet_coverage_fraction``, where dry and trace weeks
    count as covered).  A note that already holds `stated_by` (the words of the failed
    coverage criterion, "sample coverage below minimum", which give the same share with
    its minimum) gets no gap note: it said the coverage twice, in two phrasings
    ("sample coverage below minimum (65.5 % of the period; minimum 90 %);
    precipitation: 18 weeks without a usable sample (65.5 % of the period's hours
    covered)").

    Parameters
    ----------
    note, status : ndarray of str
        The component's note and status (any shape, the period axis among them).
    coverage : ndarray
        Share of the period's hours covered [1] (NaN: not applicable), as `note`.
    hours : ndarray
        Hours of the periods [h], broadcastable to `coverage`.
    role : str
        ``air`` or ``precipitation``: the sample's kind, and the name of its coverage
        (:data:`COVERAGE_WORDS`).
    stated_by : str, optional
        Words of a note part that already states the coverage (no gap note there).

    Returns
    -------
    ndarray of str
    """
    cov = np.asarray(coverage, float)
    note = np.array(np.broadcast_to(np.asarray(note, dtype=object), cov.shape))
    gap = (1.0 - cov) * np.broadcast_to(np.asarray(hours, float), cov.shape)      # [h]
    shown = (np.isfinite(cov) & (cov > 0) & (status != "missing")
             & (gap >= SAMPLING_GAP_NOTE_H - 1e-6))
    if stated_by:                     # the failed criterion already gives the share
        said = np.char.find(np.where(pd.isna(note), "", note).astype(str), stated_by) >= 0
        shown &= ~said
    show = np.flatnonzero(shown.ravel())
    flat, flat_gap, flat_cov = note.reshape(-1), gap.reshape(-1), cov.reshape(-1)
    weeks = [round(float(g) / HOURS_PER_WEEK, 1) for g in flat_gap[show]]
    name = COVERAGE_WORDS.get(role, f"{role} coverage")
    text = np.array([f"{w:g} week{'' if w == 1 else 's'} without a usable {role} sample "
                     f"({name} {100 * c:.1f} % of the period)"
                     for w, c in zip(weeks, flat_cov[show])], dtype=object)
    flat[show] = join_notes(flat[show], text)     # the few rows with a gap: their words
    return flat.reshape(cov.shape)
