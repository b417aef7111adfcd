"""Codes of the ``flags`` column of precipitation samples.

A sample may carry several codes separated by spaces, commas or semicolons
(``"C T"``).  Each code says what it does to the sample's chemistry and to its gauge
depth.  The table is ours; the actions follow common practice in precipitation-
chemistry networks (a contaminated or bulk-exposed sample is useless for
concentrations, but the gauge still measured the rain that fell).

======  ===========================  =================  ==============
code    meaning                      chemistry          gauge depth
======  ===========================  =================  ==============
``C``   contaminated (visible)       invalid            counts
``B``   bulk exposure (lid open)     invalid            counts
``T``   trace: too little for full   invalid            counts
        analysis
``N``   not analysed                 invalid            counts
``O``   collector overflowed         invalid            counts
``X``   sample lost or leaked        invalid            counts
``G``   gauge failed or tampered     valid              invalid (fill)
``V``   invalid record (whole row)   invalid            invalid
``E``   estimated depth (gauge       valid              counts (marked)
        value estimated by operator)
======  ===========================  =================  ==============
"""
from __future__ import annotations

#: code -> (meaning, chemistry_valid, gauge_valid)
FLAGS = {
    "C": ("contaminated", False, True),
    "B": ("bulk exposure", False, True),
    "T": ("trace sample, too little volume for analysis", False, True),
    "N": ("not analysed", False, True),
    "O": ("collector overflowed", False, True),
    "X": ("sample lost or leaked", False, True),
    "G": ("gauge failed", True, False),
    "V": ("invalid record", False, False),
    "E": ("gauge depth estimated by the operator", True, True),
}


def split(text) -> list[str]:
    """Split a flags cell into codes.

    >>> split("C; T"), split(""), split(None)
    (['C', 'T'], [], [])
    """
    if text is None:
        return []
    s = str(text).strip()
    if s in ("", "nan", "None"):
        return []
    return [c for c in s.replace(",", " ").replace(";", " ").split() if c]
