"""The critical loads of a site (``[site.critical_loads]`` of ``sites.toml``).

Values are in eq ha-1 yr-1, or in the unit a table declares (``unit = "kg/ha/yr"``,
``"meq/m2/yr"``, ``"keq/ha/yr"``), converted here once.  Errors for what cannot be computed with (an unknown key, a
value that is not a finite number >= 0, CLmaxN below CLminN, a table for a surface the
site does not have); located hints (``notes``) for what is possible but doubtful: a
value that looks typed in another unit (kg N or S, keq, meq m-2) and a critical load
function that the simple mass balance cannot give.  The rules are in
``docs/data_formats.md`` ("Critical loads").
"""
from __future__ import annotations

import math
import re

from ..errors import NUMBER_TEXT, suggest
from ..species import EQ_PER_MOL_ELEMENT, element_molar_mass

#: The keys of a critical load function of acidity and of nutrient N [eq ha-1 yr-1].
ACIDITY_KEYS = ("cl_max_s", "cl_min_n", "cl_max_n")
NUTRIENT_KEY = "cl_nut_n"
CRITICAL_LOAD_KEYS = ACIDITY_KEYS + (NUTRIENT_KEY,)
#: The element each key is a load of (its equivalents: 2 per mol S, 1 per mol N).
ELEMENT_OF = {"cl_max_s": "S", "cl_min_n": "N", "cl_max_n": "N", "cl_nut_n": "N"}
#: Published critical loads are commonly hundreds to a few thousand eq/ha/yr (common
#: practice, from memory).  A value > 0 below the first or above the second bound is
#: noted as a possible unit slip; a hint, not an error [eq ha-1 yr-1].
PLAUSIBLE_EQ_HA_YR = (50.0, 20000.0)


#: The units a critical-load table may declare with ``unit = "..."`` (default
#: ``eq/ha/yr``): kg/ha/yr is kg of the key's element (S for cl_max_s, N for the others).
CRITICAL_LOAD_UNITS = ("eq/ha/yr", "keq/ha/yr", "meq/m2/yr", "kg/ha/yr")


def unit_factor(unit: str, key: str) -> float:
    """Factor from `unit` to eq ha-1 yr-1 for the load `key` [eq ha-1 yr-1 per unit].

    The per-area and prefix factors come from pint (eq counted as mol: a factor of
    amounts); kg/ha/yr uses :func:`eq_per_kg` of the key's element.

    >>> unit_factor("meq/m2/yr", "cl_nut_n"), unit_factor("keq/ha/yr", "cl_max_s")
    (10.0, 1000.0)
    >>> round(unit_factor("kg/ha/yr", "cl_max_s"), 1), round(unit_factor("kg/ha/yr", "cl_nut_n"), 1)
    (62.4, 71.4)
    """
    if unit == "kg/ha/yr":
        return eq_per_kg(ELEMENT_OF[key])
    from ..units import ureg
    amount = {"eq/ha/yr": "mol/hectare", "keq/ha/yr": "kmol/hectare",
              "meq/m2/yr": "mmol/m**2"}[unit]
    return round(float(ureg.Quantity(1.0, amount).to("mol/hectare").magnitude), 9)


def eq_per_kg(element: str) -> float:
    """Equivalents in one kilogram of the element [eq kg-1]: 1000 / M x eq per mol,
    with M [g mol-1] and the equivalents of :data:`workbench.species.EQ_PER_MOL_ELEMENT`
    (N: 1000 / 14.007 = 71.4; S: 2 x 1000 / 32.06 = 62.4).

    >>> round(eq_per_kg("N"), 1), round(eq_per_kg("S"), 1)
    (71.4, 62.4)
    """
    return EQ_PER_MOL_ELEMENT[element] / element_molar_mass(element)


def _unit_readings(key, v):
    """(reading, value in eq/ha/yr) of a number typed in another unit."""
    el = ELEMENT_OF[key]
    f = eq_per_kg(el)
    lo, hi = PLAUSIBLE_EQ_HA_YR
    if v < lo:
        cands = [(f"kg {el}/ha/yr (1 kg {el} = {f:.1f} eq)", v * f),
                 ("keq/ha/yr (1 keq = 1000 eq)", v * 1000.0),
                 ("meq/m2/yr (1 meq/m2 = 10 eq/ha)", v * 10.0)]
    else:
        cands = [(f"g {el}/ha/yr (1 g {el} = {f / 1000:.4f} eq)", v * f / 1000.0),
                 ("meq/ha/yr (1 meq = 0.001 eq)", v / 1000.0)]
    fit = [c for c in cands if lo <= c[1] <= hi]
    return fit or cands


def _doubtful_value(key, v, where):
    """(problem, expected) of a value outside :data:`PLAUSIBLE_EQ_HA_YR`, or None."""
    lo, hi = PLAUSIBLE_EQ_HA_YR
    if v == 0 or lo <= v <= hi:
        return None
    side = f"below {lo:g}" if v < lo else f"above {hi:g}"
    readings = "; ".join(f"in {u} it is {eq:.4g} eq/ha/yr" for u, eq in _unit_readings(key, v))
    return (f"doubtful critical load {key} = {v:g} in {where}: {side} eq/ha/yr, a unit slip?",
            f"eq/ha/yr, commonly hundreds to a few thousand; if the value was {readings} "
            '(a table in another unit says so once: unit = "kg/ha/yr", "meq/m2/yr" or '
            '"keq/ha/yr")')


_NUMBER = re.compile(rf"^\s*([-+]?{NUMBER_TEXT})\s*(.*?)\s*$")


def _bad_value(key, v):
    """(problem, expected) of a value that is not a finite number >= 0, or None."""
    if isinstance(v, str):
        m = _NUMBER.match(v)
        if m and m.group(2):
            unit = m.group(2)
            expected = (f"a number without quotes or unit, in eq/ha/yr (e.g. {key} = "
                        f"{float(m.group(1)):g})")
            if "kg" in unit.lower():
                el = ELEMENT_OF[key]
                expected += (f"; from kg {el}/ha/yr multiply by {eq_per_kg(el):.1f} "
                             f"({float(m.group(1)):g} kg {el} = "
                             f"{float(m.group(1)) * eq_per_kg(el):.4g} eq)")
            expected += ('; or write the numbers as given and the table\'s unit once: '
                         'unit = "kg/ha/yr" (or "meq/m2/yr", "keq/ha/yr")')
            return f"written with a unit ({unit!r})", expected
        return "text, not a number", "a number without quotes, in eq/ha/yr"
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        return "not a number", "a number >= 0 in eq/ha/yr"
    if not math.isfinite(v):
        return ("not finite",
                "a finite number >= 0 in eq/ha/yr (leave the key out where there is none)")
    if v < 0:
        from .plausible import SENTINELS      # the data files' missing-value codes
        if v in SENTINELS:             # a sheet's code for "no value", exported as is
            return (f"negative value, {v:g} looks like a missing-value code",
                    "a number >= 0 in eq/ha/yr; where there is no load, leave the key out "
                    "(a receptor without its own value then takes the site's)")
        return "negative value", "a number >= 0 in eq/ha/yr"
    return None


def _function_notes(merged):
    """(problem, key, expected) hints on a whole critical load function of acidity."""
    out = []
    keys = ACIDITY_KEYS
    s, n0, n1 = (merged.get(k) for k in keys)
    given = [k for k in keys if k in merged]
    if len(given) == 2:     # a forgotten key: said only in exceedance.csv before (one key
        #                     alone, e.g. a sulfur-only CLmaxS, may be meant)
        lacking = [k for k in keys if k not in merged]
        out.append((f"{' and '.join(given)} without {' and '.join(lacking)}: the acidity "
                    "exceedance is not computed",
                    given[0], "all three of cl_max_s, cl_min_n, cl_max_n, or none of them"))
    if s is None or n0 is None or n1 is None:
        return out
    if s == 0 and n1 > n0:
        out.append(("cl_max_s = 0 with cl_max_n above cl_min_n: no S deposition is "
                    "tolerated but N is; under the simple mass balance CLmaxS = 0 gives "
                    "CLmaxN = CLminN (from memory); a missing value written as 0",
                    "cl_max_s", "cl_max_s > 0, or cl_max_n = cl_min_n"))
    elif n1 - n0 < s:
        out.append((f"cl_max_n - cl_min_n = {n1 - n0:g} is below cl_max_s = {s:g}: under the "
                    "simple mass balance CLmaxN = CLminN + CLmaxS / (1 - fde) >= CLminN + "
                    "CLmaxS (ICP Modelling and Mapping Manual; from memory); values swapped "
                    "or in different units", "cl_max_n",
                    f"cl_max_n >= cl_min_n + cl_max_s = {n0 + s:g} eq/ha/yr"))
    return out


def check_critical_loads(t, surfaces, err, table_err, notes, site_id):
    """Validate a site's ``critical_loads`` table and its receptor tables.

    Parameters
    ----------
    t : dict
        The site's keys; ``t["critical_loads"]`` [eq ha-1 yr-1] may hold receptor tables.
    surfaces : list of str
        The site's land use and receptors.
    err, table_err : callable
        Located errors in the site's table / in ``[site.critical_loads.<receptor>]``
        (see :func:`workbench.io.sites.check_site`).
    notes : list
        Located hints on doubtful values are appended here.
    site_id : str
        Names the site in the hints.

    Returns
    -------
    (dict, dict)
        The site's loads {key: value} and {receptor: {key: value}} [eq ha-1 yr-1].

    Raises
    ------
    InputError
        For an unknown key or receptor, a value that is not a finite number >= 0, or
        cl_max_n below cl_min_n.
    """
    cl = dict(t.get("critical_loads", {}))
    per_receptor = {r: dict(cl.pop(r)) for r in list(cl) if isinstance(cl[r], dict)}
    units = {None: _table_unit(cl.pop("unit", "eq/ha/yr"),
                               lambda p, v, e: err(p, "unit", v, e))}
    for r, table in per_receptor.items():
        if r not in surfaces:
            raise table_err("critical loads for a receptor the site does not have", r,
                            "critical_loads", r, "one of the site's surfaces: "
                            + ", ".join(surfaces) + suggest(r, surfaces))
        units[r] = _table_unit(table.pop("unit", "eq/ha/yr"),
                               lambda p, v, e, r=r: table_err(p, r, "unit", v, e))
        for key, v in table.items():
            if isinstance(v, dict):      # [site.critical_loads.<receptor>.<x>]
                raise table_err(f"a table inside [site.critical_loads.{r}]", r, key,
                                expected="the keys " + ", ".join(CRITICAL_LOAD_KEYS)
                                + " (and unit) of the receptor's critical loads, no table"
                                + suggest(key, CRITICAL_LOAD_KEYS))
            if key not in CRITICAL_LOAD_KEYS:
                raise table_err(f"unknown critical-load key in [site.critical_loads.{r}]", r, key,
                                expected="one of " + ", ".join(CRITICAL_LOAD_KEYS)
                                + suggest(key, CRITICAL_LOAD_KEYS))
            bad = _bad_value(key, v)
            if bad:
                raise table_err(f"bad critical load in [site.critical_loads.{r}]: {bad[0]}",
                                r, key, v, bad[1])
    for key, v in cl.items():
        if key not in CRITICAL_LOAD_KEYS:
            raise err("unknown critical-load key", key, expected="one of "
                      + ", ".join(CRITICAL_LOAD_KEYS) + suggest(key, CRITICAL_LOAD_KEYS))
        bad = _bad_value(key, v)
        if bad:
            raise err(f"bad critical load: {bad[0]}", key, v, bad[1])
    given = {r: dict(tb) for r, tb in [(None, cl), *per_receptor.items()]}   # as written
    cl = {k: float(v) * unit_factor(units[None], k) for k, v in cl.items()}
    per_receptor = {r: {k: float(v) * unit_factor(units[r], k) for k, v in tb.items()}
                    for r, tb in per_receptor.items()}

    def locate(r):
        if r:
            return lambda problem, key, value=None, expected=None: table_err(
                problem, r, key, value, expected)
        return err
    doubtful = {}        # table -> the keys noted as a possible unit slip
    for r in [None] + list(per_receptor):
        merged = {**cl, **(per_receptor[r] if r else {})}
        where = f"[site.critical_loads.{r}]" if r else "[site.critical_loads]"
        if merged.get("cl_max_n", math.inf) < merged.get("cl_min_n", -math.inf):
            problem = f"impossible critical load function in {where}: cl_max_n below cl_min_n"
            expected = f"cl_max_n >= cl_min_n = {merged['cl_min_n']:g} eq/ha/yr"
            at = r if "cl_max_n" in (per_receptor[r] if r else cl) else None
            if units[at] != "eq/ha/yr":        # the value as written is in another unit
                expected += (f" (cl_max_n = {given[at]['cl_max_n']:g} {units[at]} is "
                             f"{merged['cl_max_n']:.4g} eq/ha/yr)")
            if "cl_min_n" in given[at]:        # both in one table: a swap is likely
                expected += (f"; swapped? cl_min_n = {given[at]['cl_max_n']:g} and cl_max_n "
                             f"= {given[at]['cl_min_n']:g} would be a function")
            raise locate(at)(problem, "cl_max_n", given[at]["cl_max_n"], expected)
        own = per_receptor[r] if r else cl
        for key, v in own.items():
            doubt = _doubtful_value(key, v, where if units[r] == "eq/ha/yr" else
                                    f"{where} ({given[r][key]:g} {units[r]})")
            if doubt:
                doubtful.setdefault(r, set()).add(key)
                notes.append(f"site {site_id!r}: " + str(locate(r)(
                    doubt[0], key, given[r][key], doubt[1])))
        # a function whose values are noted as unit slips: its own hint compared them as
        # written (a table typed in kg, CLmaxS 15.2 kg S, CLminN 5 and CLmaxN 19.9 kg N,
        # 948, 357 and 1421 eq, had a sixth note "values swapped or in different units"
        # beside the four of its values); the unit notes say what to do
        slipped = doubtful.get(r, set()) | {k for k in doubtful.get(None, set())
                                            if r and k not in own}
        compared = not slipped & set(ACIDITY_KEYS)
        for problem, key, expected in _function_notes(merged):
            if not compared and key in merged and len(
                    [k for k in ACIDITY_KEYS if k in merged]) == 3:
                continue            # (a forgotten key is said all the same)
            if r and not any(k in own for k in ACIDITY_KEYS):
                continue               # the site's own function, noted once above
            taken = [k for k in ACIDITY_KEYS
                     if r and k in cl and k not in own]
            if taken:           # the receptor's function is partly the site's
                problem += f" ({', '.join(taken)} from [site.critical_loads])"
            at = r if key in own or not r else None
            notes.append(f"site {site_id!r}: " + str(locate(at)(
                f"doubtful critical load function in {where}: {problem}", key,
                given[at][key], expected)))
    return cl, per_receptor


def same_unit_as(unit) -> str | None:
    """The unit of :data:`CRITICAL_LOAD_UNITS` that another spelling names (exponents,
    ``a`` or ``year`` for the year, molc for eq, the element after kg), or None.

    >>> same_unit_as("eq ha-1 yr-1"), same_unit_as("molc/ha/a"), same_unit_as("kg N/ha/yr")
    ('eq/ha/yr', 'eq/ha/yr', 'kg/ha/yr')
    >>> same_unit_as("mg/L") is None
    True
    """
    if not isinstance(unit, str):
        return None
    t = unit.strip().lower()
    t = re.sub(r"\bmol[\s_]?c\b|\bmolc\b", "eq", t)
    t = re.sub(r"\bkg\s*[ns]\b", "kg", t)
    t = re.sub(r"\s*\b(ha|m2|yr|a|year)\s*-1\b", r"/\1", t)
    t = re.sub(r"m-2\b", "/m2", t)
    t = re.sub(r"[\s.·*]+", "", t)
    t = re.sub(r"/(a|year|y)$", "/yr", t)
    t = re.sub(r"/+", "/", t)
    return t if t in CRITICAL_LOAD_UNITS else None


def _table_unit(unit, fail):
    """The declared unit of a critical-load table, or `fail` (problem, value, expected)."""
    if unit in CRITICAL_LOAD_UNITS:
        return unit
    same = same_unit_as(unit)       # before: "did you mean 'kg/ha/yr'?" for molc/ha/yr
    element = isinstance(unit, str) and re.search(r"\bkg\s*[NS]\b", unit, re.I)
    hint = (f" (did you mean {same!r}? it reads kg S for cl_max_s and kg N for the "
            "others, one element per key)" if same and element else
            f" (did you mean {same!r}? the same unit written another way)" if same else
            suggest(unit, CRITICAL_LOAD_UNITS) if isinstance(unit, str) else "")
    return _raise(fail("unknown unit of critical loads", unit,
                       "one of " + ", ".join(f'"{u}"' for u in CRITICAL_LOAD_UNITS)
                       + " (kg of S for cl_max_s, of N for the others)" + hint))


def _raise(exc):
    raise exc
