"""Sea-salt correction: the non-sea-salt part of an ion from a sea-salt tracer.

The correction is applied to precipitation-weighted means (it is linear, so the
nss part of a PWM equals the PWM of the per-sample nss parts).  :func:`non_seasalt`
returns the difference as it is, negative values included; the wet chain
(:func:`workbench.wet.wet_deposition`) clips a negative nss PWM at 0 and flags it
(``nss<X>_clipped``; docs/methods_wet.md section 8), since a flux is never negative.

Data table
----------
``SEAWATER_EQ_RATIO_TO_NA``: equivalent ratios X/Na of bulk seawater from Keene,
Pszenny, Galloway and Hawley (1986), "Sea-salt corrections and interpretation of
constituent ratios in marine precipitation", J. Geophys. Res. 91(D6), 6647-6658,
Table 1 (values recalled from memory): Cl 1.164, SO4 0.121, Mg 0.227, Ca 0.0439,
K 0.0218.  They agree within 1 % with the reference composition of seawater of
Millero et al. (2008), Deep-Sea Res. I 55, 50-72 (checked in the tests).
"""
from __future__ import annotations

from .. import species as _species

#: Equivalent ratio of each ion to sodium in seawater [eq eq-1]; Keene et al. (1986),
#: Table 1 (from memory).
SEAWATER_EQ_RATIO_TO_NA = {"Na": 1.0, "Cl": 1.164, "SO4": 0.121, "Mg": 0.227,
                           "Ca": 0.0439, "K": 0.0218}

#: Tracers that may be chosen.
TRACERS = ("Na", "Mg", "Cl")
#: Ions corrected: sulfate and the base cations (and the tracer-dependent rest).
CORRECTED = ("SO4", "Ca", "Mg", "K", "Na", "Cl")
#: The words of a non-sea-salt mean that fell back to the total ion for want of the
#: tracer, written here only (the wet chain's ``nss<X>_total_used``, the budget's notes,
#: the dry pSO4 notes); who reads whether a mean fell back reads that flag, never these
#: words (:func:`total_in_place`).
TOTAL_IN_PLACE = "total {ion} used in place of non-sea-salt {ion}"


def total_in_place(ion: str) -> str:
    """:data:`TOTAL_IN_PLACE` for `ion`.

    >>> total_in_place("SO4")
    'total SO4 used in place of non-sea-salt SO4'
    """
    return TOTAL_IN_PLACE.format(ion=ion)


def seawater_ratio(ion: str, tracer: str = "Na") -> float:
    """Molar ratio of `ion` to `tracer` in seawater [mol mol-1].

    Parameters
    ----------
    ion, tracer : str
        Ion names of :data:`SEAWATER_EQ_RATIO_TO_NA`.

    Notes
    -----
    .. math:: r_{X/T} = \\frac{(X/\\mathrm{Na})_{eq}}{(T/\\mathrm{Na})_{eq}}
              \\frac{z_T}{z_X}

    with :math:`z` the equivalents per mole (Keene et al. 1986, Table 1).

    >>> round(seawater_ratio("SO4"), 4)
    0.0605
    """
    if tracer not in TRACERS:
        raise ValueError(f"unknown sea-salt tracer {tracer!r}; expected one of {TRACERS}")
    if ion not in SEAWATER_EQ_RATIO_TO_NA:
        raise ValueError(f"no seawater ratio for {ion!r}")
    eq_ratio = SEAWATER_EQ_RATIO_TO_NA[ion] / SEAWATER_EQ_RATIO_TO_NA[tracer]
    return eq_ratio * _species.get(tracer).eq_per_mol / _species.get(ion).eq_per_mol


def non_seasalt(amount, tracer_amount, ion: str, tracer: str = "Na"):
    """Non-sea-salt part of an ion [same unit as `amount`, e.g. mol m-3].

    Parameters
    ----------
    amount : array_like
        Amount of the ion (a concentration, a PWM or a deposition). [mol m-3]
    tracer_amount : array_like
        Amount of the tracer in the same unit. [mol m-3]
    ion : str
        The ion (``"SO4"``, ``"Ca"``, ...).
    tracer : {"Na", "Mg", "Cl"}
        The sea-salt tracer, assumed to come from sea salt only.

    Returns
    -------
    array_like
        :math:`X - r_{X/T} T`; negative values are kept. [same unit]

    References
    ----------
    Keene, W. C., Pszenny, A. A. P., Galloway, J. N. and Hawley, M. E. (1986),
    J. Geophys. Res. 91(D6), 6647-6658, Table 1.

    >>> round(non_seasalt(0.05, 0.4, "SO4"), 4)
    0.0258
    """
    return amount - seawater_ratio(ion, tracer) * tracer_amount


def corrected_ions(tracer: str = "Na", present=CORRECTED) -> tuple:
    """Ions that receive an nss value for a given tracer: sulfate and the base cations
    (Na, K, Ca, Mg) other than the tracer itself, among those `present`.

    >>> corrected_ions("Na"), corrected_ions("Mg")
    (('SO4', 'Ca', 'Mg', 'K'), ('SO4', 'Ca', 'K', 'Na'))
    """
    order = ("SO4", "Ca", "Mg", "K", "Na")
    return tuple(i for i in order if i != tracer and i in present)
