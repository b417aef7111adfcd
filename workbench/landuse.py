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


def check(name: str) -> str:
    """Return `name` if it is one of our classes, else raise ValueError with the list."""
    if name not in LAND_USE:
        from .errors import suggest
        raise ValueError(f"unknown land-use class {name!r}{suggest(name, LAND_USE)}; "
                         f"expected one of {', '.join(LAND_USE)}")
    return name
