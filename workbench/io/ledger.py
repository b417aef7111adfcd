"""The ledger: every input row accounted for.

Each reader returns its data together with a :class:`Ledger` that has one entry per
data row of the file: ``accepted``, ``flagged`` (accepted, with the reasons) or
``rejected`` (not used, with the reasons).  Rows read always equal accepted +
flagged + rejected.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

STATUSES = ("accepted", "flagged", "rejected")


@dataclass
class Ledger:
    """Row-by-row account of what happened to the input.

    Attributes
    ----------
    table : pandas.DataFrame
        Columns ``file, line, site, status, reason``.
    notes : list of str
        File-level remarks (unknown columns ignored, metadata read, ...).
    """

    table: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        {"file": pd.Series(dtype=str), "line": pd.Series(dtype=int),
         "site": pd.Series(dtype=str), "status": pd.Series(dtype=str),
         "reason": pd.Series(dtype=str)}))
    notes: list = field(default_factory=list)

    @classmethod
    def for_rows(cls, file, lines, sites, reasons, rejected):
        """Build a ledger from per-row arrays.

        Parameters
        ----------
        file : str
        lines : array of int
            Line numbers in the file.
        sites : array of str
        reasons : array of str
            "" for a clean row, else "; "-joined reasons.
        rejected : array of bool
            True for rows that are not used.
        """
        reasons = np.asarray(reasons, dtype=object)
        rejected = np.asarray(rejected, dtype=bool)
        status = np.where(rejected, "rejected", np.where(reasons != "", "flagged", "accepted"))
        table = pd.DataFrame({"file": str(file), "line": np.asarray(lines, dtype=int),
                              "site": np.asarray(sites, dtype=object).astype(str),
                              "status": status, "reason": reasons.astype(str)})
        return cls(table=table)

    def __add__(self, other: "Ledger") -> "Ledger":
        return Ledger(pd.concat([self.table, other.table], ignore_index=True),
                      self.notes + other.notes)

    def add_reason(self, file, lines, reason: str):
        """Flag rows (by line number) of `file` with `reason`; rejected rows stay rejected."""
        sel = (self.table["file"] == str(file)) & self.table["line"].isin(np.asarray(lines))
        old = self.table.loc[sel, "reason"]
        self.table.loc[sel, "reason"] = np.where(old == "", reason, old + "; " + reason)
        ok = sel & (self.table["status"] == "accepted")
        self.table.loc[ok, "status"] = "flagged"

    def summary(self) -> pd.DataFrame:
        """Counts of rows per file and status, with a ``read`` total.

        >>> led = Ledger.for_rows("f.csv", [2, 3, 4], ["a"] * 3, ["", "x", "y"], [False, False, True])
        >>> led.summary().to_dict("records")
        [{'file': 'f.csv', 'read': 3, 'accepted': 1, 'flagged': 1, 'rejected': 1}]
        """
        if self.table.empty:
            return pd.DataFrame(columns=["file", "read", *STATUSES])
        counts = (self.table.groupby(["file", "status"]).size().unstack("status")
                  .reindex(columns=list(STATUSES)).fillna(0).astype(int))
        counts.insert(0, "read", counts.sum(axis=1))
        return counts.reset_index()

    def reasons(self) -> pd.DataFrame:
        """Counts of each single reason per file and status."""
        t = self.table[self.table["reason"] != ""]
        if t.empty:
            return pd.DataFrame(columns=["file", "status", "reason", "rows"])
        ex = t.assign(reason=t["reason"].str.split("; ")).explode("reason")
        return (ex.groupby(["file", "status", "reason"]).size().rename("rows").reset_index())

    def check_balanced(self) -> bool:
        """True when every row has exactly one status (read = accepted+flagged+rejected)."""
        s = self.summary()
        return bool((s["read"] == s[list(STATUSES)].sum(axis=1)).all())
