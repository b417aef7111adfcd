"""Units: one pint registry, header parsing, and species-aware conversions.

Units are converted once, when a file is read.  Inside the package every quantity
is SI or a documented trade unit:

===================  ==================================  =========================
quantity             inside the package                  note
===================  ==================================  =========================
ion in precipitation amount of the ion [mol m-3]         1 mol m-3 = 1000 umol/L
gas or particle      amount density of species [mol m-3] or mixing ratio [mol mol-1]
depth of rain        [mm]                                trade unit (= kg m-2)
temperature          [K]
pressure             [Pa]
relative humidity    fraction [1]
radiation, heat flux [W m-2]
deposition           amount of species per area [mol m-2]
===================  ==================================  =========================

pint checks dimensions; the species layer (:mod:`workbench.species`) adds what pint
alone cannot: molar mass, charge (equivalents) and the element basis of columns
such as ``NO3_as_N``.
"""
from __future__ import annotations

import logging
import re
from dataclasses import dataclass

import numpy as np
import pint

from . import species as _species

#: The package's one unit registry.
ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
# Mixing ratios by volume (pint reads "ppt" as a picopint otherwise).
_pint_log = logging.getLogger("pint.util")
_level = _pint_log.level
_pint_log.setLevel(logging.ERROR)
for _defn in ("ppm = 1e-6 = ppmv", "ppb = 1e-9 = ppbv", "ppt = 1e-12 = pptv",
              "fraction = 1"):
    ureg.define(_defn)
_pint_log.setLevel(_level)
Q_ = ureg.Quantity


def unit_factor(source: str, target: str) -> float:
    """The number that turns a value in `source` into `target`, from the registry [1].

    >>> unit_factor("kg", "ug"), unit_factor("ha", "m**2"), unit_factor("m", "mm")
    (1000000000.0, 10000.0, 1000.0)
    """
    return float(ureg.Quantity(1.0, source).to(target).magnitude)


#: ug per kg, m2 per ha, mm per m (pint): the factors written by hand before.
UG_PER_KG = unit_factor("kg", "ug")
M2_PER_HA = unit_factor("ha", "m**2")
MM_PER_M = unit_factor("m", "mm")

#: UDUNITS-2 names of the temperature units (the units library CF names for its
#: ``units`` attributes), from its database: udunits2-derived.xml (``degree_Celsius``,
#: plural ``degrees_Celsius``), udunits2-base.xml (``kelvin``) and udunits2-common.xml
#: (the aliases ``celsius``, ``degree_C``, ``degreeC``, ``deg_C``, ``degC`` with their
#: plurals ``degrees_C``, ``degreesC``, ``degs_C``, ``degsC``; the same forms of K, F and
#: R, and ``fahrenheit``).  UDUNITS-2 compares names case-blind (``Celsius``, ``DEGC``)
#: and forms the plural of a name without one by adding ``s`` (``kelvins``); pint knows
#: only some of these (``degC``, ``degree_Celsius``, ``celsius``), so the others were
#: refused as unknown.  Lower case -> the pint spelling;
#: tests/io/test_cf_temperature_units.py holds the table to cfunits (which reads that
#: database).  Symbols (``°C``, ``℃``, ``°F``,
#: ``℉``, ``°K``, ``°R``) are compared as written.
def _udunits_temperature_table() -> dict:
    """UDUNITS-2 temperature name or symbol -> pint spelling (a constant table)."""
    table = {}
    for pint_name, names in (
            ("degC", ("degree_celsius", "celsius", "degree_c", "degreec", "deg_c", "degc")),
            ("K", ("kelvin", "degree_kelvin", "degree_k", "degreek", "deg_k", "degk")),
            ("degF", ("fahrenheit", "degree_fahrenheit", "degreef", "degree_f", "degf",
                      "deg_f")),
            ("degR", ("degree_rankine", "degreer", "degree_r", "degr", "deg_r"))):
        for n in names:
            table[n] = pint_name
            # plurals as the database writes them: degree_x -> degrees_x, deg_x -> degs_x,
            # degX -> degsX; a name without a given plural takes the English one (kelvins,
            # celsiuses, fahrenheits)
            if n.startswith("degree"):
                table["degrees" + n[6:]] = pint_name
            elif n.startswith("deg"):
                table["degs" + n[3:]] = pint_name
            else:
                table[n + ("es" if n.endswith("s") else "s")] = pint_name
    table.update({"°C": "degC", "\u2103": "degC", "°K": "K", "°F": "degF",
                  "\u2109": "degF", "°R": "degR"})
    return table


_UDUNITS_TEMPERATURE = _udunits_temperature_table()


def udunits_temperature(text: str) -> str | None:
    """The pint spelling of a UDUNITS-2 temperature unit name or symbol, else None.

    >>> udunits_temperature("Celsius"), udunits_temperature("degrees_C")
    ('degC', 'degC')
    >>> udunits_temperature("deg C") is None, udunits_temperature("Celcius") is None
    (True, True)
    """
    t = str(text).strip()
    return _UDUNITS_TEMPERATURE.get(t) or _UDUNITS_TEMPERATURE.get(t.lower())


_HEADER = re.compile(r"^\s*(?P<name>[^\[\]]+?)\s*(?:\[(?P<unit>[^\[\]]*)\])?\s*$")
_EQ = re.compile(r"(?<![A-Za-z])(p|n|u|µ|m|k)?eq(?![A-Za-z])")


@dataclass(frozen=True)
class Header:
    """A parsed column header ``name [unit]``."""

    name: str       #: column name without the unit, e.g. ``"NO3_as_N"``
    unit: str | None  #: unit text as written, or None
    species: str | None = None  #: species name when the column is one, e.g. ``"NO3"``
    basis: str | None = None    #: ``"S"``/``"N"`` for ``_as_S``/``_as_N``, else None


def parse_header(text: str) -> Header:
    """Split a column header into name, unit, species and element basis.

    >>> parse_header("NO3_as_N [mg/L]")
    Header(name='NO3_as_N', unit='mg/L', species='NO3', basis='N')
    >>> parse_header("site")
    Header(name='site', unit=None, species=None, basis=None)
    """
    m = _HEADER.match(str(text))
    if not m:
        return Header(str(text).strip(), None)
    name = m.group("name").strip()
    unit = m.group("unit")
    unit = unit.strip() if unit is not None else None
    sp, basis = name, None
    mb = re.match(r"^(?P<sp>.+)_as_(?P<el>[SN])$", name)
    if mb:
        sp, basis = mb.group("sp"), mb.group("el")
    if sp in _species.SPECIES:
        return Header(name, unit, sp, basis)
    return Header(name, unit)


#: An element word beside a species in a header's name: ``SO2-S``, ``S-SO2``, ``NH4-N``,
#: ``NH3_N``, ``NO3 as N``, ``SO4(S)`` (the usual ways laboratories and networks write a
#: concentration on the element basis; common practice).
_NAME_BASIS = (re.compile(r"^(?P<sp>[A-Za-z0-9]+?)\s*(?:[-_ ]\s*(?:as[-_ ]?)?|\s*\(\s*(?:as\s+)?)"
                          r"(?P<el>[SN])\s*\)?$"),
               re.compile(r"^(?P<el>[SN])\s*[-_ ]\s*(?P<sp>[A-Za-z0-9]+)$"))
#: An element word inside a unit: ``ug S/m3``, ``ugS/m3``, ``ug-S/m3``, ``mg N/L``,
#: ``ug/m3 as S``, ``mg/L-N``, ``mg/L N`` (common practice).
_UNIT_BASIS = (re.compile(r"^(?P<mass>[pnuµm]?g)\s*[-_ ]?\s*(?P<el>[SN])\s*/\s*(?P<vol>\S+)$"),
               re.compile(r"^(?P<mass>[pnuµm]?g)\s*/\s*(?P<vol>[^\s_-]+?)\s*(?:[-_ ]\s*)?(?:as\s+)?"
                          r"(?P<el>[SN])$"))


def element_basis_header(name: str, unit: str | None) -> tuple[str, str, str] | None:
    """``(species, element, header to write)`` of a header that writes a concentration
    on the element basis (S or N) in a form the readers do not read: the element beside
    the species in the name (``SO2-S [ug/m3]``, ``NH4-N [mg/L]``) or inside the unit
    (``SO2 [ug S/m3]``, ``NH4 [mg/L as N]``); else None.

    Such a header must not be read as the species' own mass (the amounts would be 2 x
    too low for SO2 as S, 4.5 x for HNO3 as N), nor the element word dropped on a hint:
    the readers refuse it with the header to write, ``SO2_as_S [ug/m3]``.

    >>> element_basis_header("SO2-S", "ug/m3")
    ('SO2', 'S', 'SO2_as_S [ug/m3]')
    >>> element_basis_header("NH4", "mg N/L")
    ('NH4', 'N', 'NH4_as_N [mg/L]')
    >>> element_basis_header("SO2", "ug/m3") is None
    True
    """
    name = str(name).strip()
    sp = el = None
    if re.fullmatch(r".+_as_[SN]", name):      # our own spelling: only its unit may hold one
        name_pats = ()
    else:
        name_pats = _NAME_BASIS
    for pat in name_pats:
        m = pat.match(name)
        if m:
            sp, el = m.group("sp"), m.group("el")
            break
    plain = unit
    if unit is not None and sp is None:
        for pat in _UNIT_BASIS:
            m = pat.match(str(unit).strip())
            if m:
                sp, el = name, m.group("el")
                plain = f"{m.group('mass')}/{m.group('vol')}"
                break
    if sp is None:
        return None
    known = {k.lower(): k for k in _species.SPECIES}
    sp = known.get(sp.lower())
    if sp is None or getattr(_species.SPECIES[sp], "element", None) != el:
        return None
    return sp, el, f"{sp}_as_{el} [{plain}]" if plain else f"{sp}_as_{el} [unit]"


#: Column names of our CSV inputs besides the species (docs/data_formats.md sections
#: 2-4): a header naming one of them with its unit outside square brackets is refused
#: by :func:`misplaced_unit` rather than left unused.
KNOWN_COLUMNS = ("gauge_depth", "sample_depth", "sample_volume", "collector_area", "pH",
                 "conductivity", "wind_speed", "temperature", "relative_humidity",
                 "solar_radiation", "precipitation", "pressure", "cloud_cover",
                 "friction_velocity", "sensible_heat_flux")
#: ``SO4 (mg/L)``, ``SO4(mg/L)``, ``SO4 {mg/L}``: a unit in other brackets.
_OTHER_BRACKETS = re.compile(r"^\s*(?P<name>[^\[\](){}]+?)\s*[({](?P<unit>[^\[\](){}]*)[)}]\s*$")
#: ``SO4 mg/L``, ``SO4_mg/L``, ``gauge_depth mm``: a unit after a blank or underscore.
_BARE_UNIT = re.compile(r"^\s*(?P<name>\S+?)[\s_]+(?P<unit>[^\s_\[\]]+)\s*$")
#: Units written bare that are read as such (with no ``/``): a depth, a volume, a mixing
#: ratio, a pressure, a temperature; any unit with a ``/`` counts too.
_BARE_UNITS = ("mm", "cm", "in", "inch", "ml", "l", "cm2", "m2", "ppb", "ppm", "ppt", "ppbv",
               "ppmv", "hpa", "kpa", "pa", "mbar", "degc", "k", "%", "percent", "okta",
               "oktas")


def _known_column(name: str) -> str | None:
    """The canonical spelling of a known column or species name (case-blind), or None."""
    names = list(KNOWN_COLUMNS)
    for sp, info in _species.SPECIES.items():
        names.append(sp)
        names.extend(f"{sp}_as_{el}" for el in ("S", "N") if getattr(info, "element", None) == el)
    low = {n.lower(): n for n in names}
    return low.get(name.strip().lower())


def misplaced_unit(text: str) -> tuple[str, str] | None:
    """(name, unit) of a header that names one of our columns with its unit outside
    square brackets (``SO4 (ueq/L)``, ``sample_volume (mL)``, ``SO4_mg/L``,
    ``gauge_depth mm``), else None.

    Such a header does not parse as ``name [unit]``, so the column would be left unused
    with a note and the budget would lack it; the readers refuse it instead with the
    header to write.  A bracketed header, or a name that is none of ours (``method_NH3``,
    ``comment (lab)``), gives None.

    >>> misplaced_unit("SO4 (ueq/L)")
    ('SO4', 'ueq/L')
    >>> misplaced_unit("NO3_as_N_mg/L")
    ('NO3_as_N', 'mg/L')
    >>> misplaced_unit("NH3_method") is None
    True
    """
    text = str(text)
    if "[" in text or "]" in text:
        return None
    m = _OTHER_BRACKETS.match(text)
    if m:
        name = _known_column(m.group("name"))
        return (name, m.group("unit").strip()) if name else None
    m = _BARE_UNIT.match(text)
    if m:
        name = _known_column(m.group("name"))
        unit = m.group("unit")
        if name is None or not ("/" in unit or unit.lower() in _BARE_UNITS):
            return None
        try:
            parse_unit(unit)
        except ValueError:
            return None
        return name, unit
    return None


def parse_unit(text: str):
    """Parse a unit with pint; ``eq`` is read as ``mol`` and reported.

    Returns
    -------
    unit : pint.Unit
    is_equivalent : bool
        True when the text used equivalents (``ueq/L``).

    Raises
    ------
    ValueError
        When pint does not know the unit.
    """
    cf = udunits_temperature(text)
    if cf is not None:
        return ureg.parse_units(cf), False
    t = text.strip().replace("µ", "u").replace("μ", "u")
    is_eq = bool(_EQ.search(t))
    t = _EQ.sub(lambda m: (m.group(1) or "") + "mol", t)
    t = t.replace("%", "percent")
    t = re.sub(r"(?<=[A-Za-z])(-?\d+)", r"**\1", t)  # m3 -> m**3, m-2 -> m**-2
    if t in ("1", "-", ""):
        return ureg.dimensionless, False
    try:
        unit = ureg.parse_units(t)
    except Exception as exc:  # pint raises several types
        raise ValueError(f"unknown unit {text!r}") from exc
    return unit, is_eq


def written_in(unit_text, target: str) -> bool:
    """Whether a header's unit is `target`, as pint reads both (any spelling: ``degF``,
    ``°F``, ``fahrenheit``; ``m/s``, ``m s-1``); False for an unknown unit.

    >>> written_in("°F", "degF"), written_in("m s-1", "m/s"), written_in("km/h", "m/s")
    (True, True, False)
    """
    try:
        return parse_unit(str(unit_text))[0] == ureg.Unit(target)
    except ValueError:
        return False


def convert_plain(values, unit_text: str, target: str):
    """Convert plain physical values (no species) from `unit_text` to `target`.

    >>> float(convert_plain(20.0, "degC", "K"))
    293.15

    Raises
    ------
    ValueError
        When the unit is unknown or of the wrong dimension.
    """
    unit, is_eq = parse_unit(unit_text)
    if is_eq:
        raise ValueError(f"unit {unit_text!r} uses equivalents, which need a species")
    tgt = ureg.parse_units(target)
    if unit.dimensionality != tgt.dimensionality:
        raise ValueError(
            f"unit {unit_text!r} has dimension {unit.dimensionality}, not {tgt.dimensionality}")
    return Q_(np.asarray(values, dtype=float), unit).to(tgt).magnitude


def _basis_factor(sp: _species.Species, basis: str | None) -> tuple[float, float]:
    """(molar mass of the basis [kg mol-1], mol of species per mol of basis)."""
    if basis is None:
        return sp.molar_mass, 1.0
    if sp.element != basis:
        raise ValueError(f"{sp.name} cannot be expressed as {basis}")
    return _species.element_molar_mass(basis), 1.0 / sp.atoms


def concentration_kind(unit_text: str) -> str:
    """``"mass_density"``, ``"amount_density"`` or ``"mixing_ratio"`` of a unit text.

    >>> concentration_kind("ug/m3"), concentration_kind("ueq/L"), concentration_kind("ppb")
    ('mass_density', 'amount_density', 'mixing_ratio')
    """
    unit, _ = parse_unit(unit_text)
    dim = unit.dimensionality
    if dim == ureg.parse_units("kg/m**3").dimensionality:
        return "mass_density"
    if dim == ureg.parse_units("mol/m**3").dimensionality:
        return "amount_density"
    if dim == ureg.dimensionless.dimensionality:
        return "mixing_ratio"
    raise ValueError(f"unit {unit_text!r} is not a concentration "
                     "(expected mass or amount per volume, or a mixing ratio)")


def to_amount(values, unit_text: str, species: str, basis: str | None = None):
    """Convert concentrations to the amount of the species' formula unit.

    Parameters
    ----------
    values : array_like
        Concentrations as written.
    unit_text : str
        Their unit: a mass or amount (or equivalent) per volume (``mg/L``,
        ``ug/m3``, ``umol/L``, ``ueq/L``), or a mixing ratio (``ppb``, ``nmol/mol``).
    species : str
        Species name (``"SO4"``, ``"SO2"``, ``"pNO3"``...).
    basis : {None, "S", "N"}
        Element basis of the column (``SO4_as_S``).

    Returns
    -------
    amount : ndarray
        [mol m-3] for a density, or [mol mol-1] for a mixing ratio.
    kind : str
        ``"amount_density"`` or ``"mixing_ratio"``.

    Examples
    --------
    One sample of 1 mg/L sulfate, written four ways:

    >>> a = to_amount(1.0, "mg/L", "SO4")[0]
    >>> b = to_amount(1.0 / 96.056 * 1000, "umol/L", "SO4")[0]
    >>> c = to_amount(2 / 96.056 * 1000, "ueq/L", "SO4")[0]
    >>> d = to_amount(32.06 / 96.056, "mg/L", "SO4", basis="S")[0]
    >>> bool(np.allclose([a, b, c, d], a))
    True
    """
    sp = _species.get(species)
    unit, is_eq = parse_unit(unit_text)
    kind = concentration_kind(unit_text)
    molar_mass, per_basis = _basis_factor(sp, basis)
    x = np.asarray(values, dtype=float)
    if kind == "mass_density":
        if is_eq:
            raise ValueError(f"unit {unit_text!r} mixes mass and equivalents")
        out = Q_(x, unit).to("kg/m**3").magnitude / molar_mass * per_basis
        return out, "amount_density"
    if kind == "amount_density":
        out = Q_(x, unit).to("mol/m**3").magnitude
        if is_eq:
            if sp.eq_per_mol == 0:
                raise ValueError(f"{species} carries no equivalents")
            out = out / sp.eq_per_mol if basis is None else out / _species.EQ_PER_MOL_ELEMENT[basis]
        return out * per_basis, "amount_density"
    if is_eq:
        raise ValueError(f"unit {unit_text!r}: a mixing ratio in equivalents is not meaningful")
    return Q_(x, unit).to("dimensionless").magnitude * per_basis, "mixing_ratio"


def molar_density_air(temperature, pressure):
    """Molar density of air from the ideal-gas law [mol m-3].

    Parameters
    ----------
    temperature : array_like
        [K]
    pressure : array_like
        [Pa]

    Notes
    -----
    :math:`n/V = p / (R T)` with R from CODATA 2018.

    >>> round(float(molar_density_air(273.15, 101325.0)), 3)
    44.615
    """
    from .constants import GAS_CONSTANT
    return pressure / (GAS_CONSTANT * temperature)


def amount_at_reference_to_ambient(amount, ref_temperature, ref_pressure, temperature,
                                   pressure):
    """Amount density stated at a reference state, expressed at ambient T and p [mol m-3].

    A concentration reported "at 20 degC and 1013 hPa" describes a volume of air at
    that state; the same air at ambient T, p occupies V_amb = V_ref (p_ref/p)(T/T_ref).
    """
    return amount * (pressure / ref_pressure) * (ref_temperature / temperature)


# --- deposition: mol m-2 of a species -> reported units ---------------------------------

def deposition_in(amount_m2, species: str, unit: str):
    """Convert a deposition of a species [mol m-2] into a reported unit.

    Parameters
    ----------
    amount_m2 : array_like
        Deposition as amount of the species' formula unit. [mol m-2]
    species : str
        Species name.
    unit : {"kg_ha", "eq_ha", "mmol_m2", "keq_ha"}
        ``kg_ha`` is kilograms of the element (S or N) per hectare for budget
        species, never kilograms of SO4 or NO3; ``eq_ha`` uses 2 eq per mol S and
        1 eq per mol N (common practice), or the ionic charge for other ions.

    Examples
    --------
    1 mmol/m2 of sulfate is 0.3206 kg S/ha and 20 eq/ha:

    >>> round(float(deposition_in(1e-3, "SO4", "kg_ha")), 4), float(deposition_in(1e-3, "SO4", "eq_ha"))
    (0.3206, 20.0)
    """
    sp = _species.get(species)
    x = amount_m2
    per_ha = M2_PER_HA
    if unit == "mmol_m2":
        return x * 1e3 * (sp.atoms if sp.element else 1)
    if unit == "kg_ha":
        if sp.element is None:
            return x * sp.molar_mass * per_ha
        return x * sp.atoms * _species.element_molar_mass(sp.element) * per_ha
    if unit in ("eq_ha", "keq_ha"):
        eq = (x * sp.atoms * _species.EQ_PER_MOL_ELEMENT[sp.element] if sp.element
              else x * sp.eq_per_mol) * per_ha
        return eq / 1e3 if unit == "keq_ha" else eq
    raise ValueError(f"unknown deposition unit {unit!r}; use kg_ha, eq_ha, keq_ha or mmol_m2")


def element_deposition_in(amount_m2, element: str, unit: str):
    """Convert a deposition of an element [mol m-2 of S or N] into a reported unit.

    >>> round(float(element_deposition_in(1e-3, "N", "kg_ha")), 4)
    0.1401
    """
    per_ha = M2_PER_HA
    if unit == "mmol_m2":
        return amount_m2 * 1e3
    if unit == "kg_ha":
        return amount_m2 * _species.element_molar_mass(element) * per_ha
    if unit == "eq_ha":
        return amount_m2 * _species.EQ_PER_MOL_ELEMENT[element] * per_ha
    if unit == "keq_ha":
        return amount_m2 * _species.EQ_PER_MOL_ELEMENT[element] * per_ha / 1e3
    raise ValueError(f"unknown deposition unit {unit!r}; use kg_ha, eq_ha, keq_ha or mmol_m2")
