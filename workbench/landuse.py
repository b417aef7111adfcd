"""Our land-use classes: a short list of receptor surfaces.

Each published scheme maps these classes onto its own (see the scheme modules:
:mod:`workbench.drydep.wesely1989`, :mod:`workbench.drydep.particles`).  The list is
ours; its names are plain descriptions of the surface.
"""
from __future__ import annotations

#: Our land-use classes with a one-line description and the default canopy height [m]
#: used when a site gives none (common practice, order-of-magnitude values).
LAND_USE = {
    "conifer_forest": ("evergreen needleleaf forest or plantation", 15.0),
    "deciduous_forest": ("deciduous broadleaf forest", 18.0),
    "mixed_forest": ("mixed needleleaf and broadleaf forest", 16.0),
    "grass": ("grassland, pasture or lawn", 0.15),
    "crops": ("arable crops (height varies through the year)", 0.6),
    "moorland": ("moorland, heath or shrubland", 0.4),
    "wetland": ("marsh, bog or fen with emergent vegetation", 0.5),
    "water": ("open water (lake, river, sea)", 0.0),
    "urban": ("built-up land", 10.0),
    "barren": ("bare soil, rock or sand", 0.0),
    "snow_ice": ("permanent snow or ice", 0.0),
}

FOREST_CLASSES = ("conifer_forest", "deciduous_forest", "mixed_forest")
#: Words of the descriptions too common to name a class by.
_COMMON_WORDS = {"or", "and", "with", "the", "land", "forest", "height", "varies", "through",
                 "year", "emergent", "vegetation", "open", "permanent", "crops"}


def class_hint(name) -> str:
    """A hint naming our class for an unknown land-use name: the class whose description
    holds one of its words (``heath`` and ``heathland`` are ``moorland``, not the
    ``wetland`` a spelling match would give; ``pasture`` is ``grass``, ``bog`` is
    ``wetland``, ``lake`` is ``water``), else the nearest spelling (`suggest`); "" when
    none fits.

    >>> class_hint("heathland")
    " (did you mean 'moorland'? its class covers moorland, heath or shrubland)"
    """
    import re

    from .errors import suggest
    words = [w for w in re.split(r"[^a-z]+", str(name).lower()) if len(w) >= 3]
    for cls, (text, _) in LAND_USE.items():
        known = [w for w in re.split(r"[^a-z]+", text.lower())
                 if len(w) >= 3 and w not in _COMMON_WORDS]
        if any(w == k or (len(k) >= 4 and w.startswith(k)) for w in words for k in known):
            return f" (did you mean {cls!r}? its class covers {text})"
    return suggest(str(name), LAND_USE)


def check(name: str) -> str:
    """Return `name` if it is one of our classes, else raise ValueError with the list."""
    if name not in LAND_USE:
        raise ValueError(f"unknown land-use class {name!r}{class_hint(name)}; "
                         f"expected one of {', '.join(LAND_USE)}")
    return name


#: Leaf-area index range (least, largest of the year) [m2 m-2] of each class, used when a
#: site gives no LAI for a receptor: order-of-magnitude values of common practice,
#: close to the class ranges of Zhang, Brook and Vet (2003), Table 3 (from memory).
DEFAULT_LAI = {
    "conifer_forest": (5.0, 5.0), "deciduous_forest": (0.5, 5.0), "mixed_forest": (2.5, 5.0),
    "grass": (1.0, 2.5), "crops": (0.1, 3.5), "moorland": (1.0, 2.0), "wetland": (0.5, 3.0),
    "water": (0.0, 0.0), "urban": (0.1, 1.0), "barren": (0.0, 0.0), "snow_ice": (0.0, 0.0),
}
#: Month of the largest LAI in the northern hemisphere (six months later in the south);
#: July, mid-summer of temperate deciduous canopies (common practice, from memory).
LAI_PEAK_MONTH = 7


def seasonal_lai(lai_min, lai_max, month, latitude):
    """A smooth seasonal LAI from its extremes, peaking in mid-July (mid-January south) [m2 m-2].

    The same cosine rule as the catalogue's ``lai_min``/``lai_max`` (common practice for
    deciduous canopies).

    Parameters
    ----------
    lai_min, lai_max : array_like
        [m2 m-2]
    month : array_like of int
        1-12.
    latitude : array_like
        [degree north]

    >>> float(seasonal_lai(1.0, 3.0, 7, 50.0)), float(seasonal_lai(1.0, 3.0, 1, 50.0))
    (3.0, 1.0)
    """
    import numpy as np
    peak = np.where(np.asarray(latitude) >= 0, LAI_PEAK_MONTH, LAI_PEAK_MONTH - 6)
    phase = np.cos(2 * np.pi * (np.asarray(month) - peak) / 12.0)
    return lai_min + (np.asarray(lai_max) - lai_min) * (1 + phase) / 2
