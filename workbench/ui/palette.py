"""The project's colours: a colour-blind-safe set chosen for this workbench.

Built from the Okabe-Ito palette (Okabe and Ito 2008, "Color Universal Design"),
which stays distinguishable under the common colour-vision deficiencies; each
component keeps one colour everywhere (figures, report, apps).
"""

#: Okabe-Ito colours (hex), by their names in the source.
OKABE_ITO = {
    "orange": "#E69F00", "sky_blue": "#56B4E9", "bluish_green": "#009E73",
    "yellow": "#F0E442", "blue": "#0072B2", "vermillion": "#D55E00",
    "reddish_purple": "#CC79A7", "black": "#000000", "grey": "#999999",
}

#: Colour of each budget component (pathway/species).
COMPONENT_COLOURS = {
    "wet/SO4": OKABE_ITO["blue"], "dry/SO2": OKABE_ITO["vermillion"],
    "dry/pSO4": OKABE_ITO["orange"],
    "wet/NO3": OKABE_ITO["blue"], "wet/NH4": OKABE_ITO["sky_blue"],
    "dry/HNO3": OKABE_ITO["vermillion"], "dry/pNO3": OKABE_ITO["orange"],
    "dry/pNH4": OKABE_ITO["yellow"], "dry/NH3": OKABE_ITO["bluish_green"],
    "dry/NO2": OKABE_ITO["reddish_purple"],
}
#: Colour of each species in line plots of velocities.
SPECIES_COLOURS = {
    "SO2": OKABE_ITO["vermillion"], "HNO3": OKABE_ITO["blue"], "NH3": OKABE_ITO["bluish_green"],
    "NO2": OKABE_ITO["reddish_purple"], "O3": OKABE_ITO["grey"], "pSO4": OKABE_ITO["orange"],
    "pNO3": OKABE_ITO["sky_blue"], "pNH4": OKABE_ITO["yellow"],
}
#: Opacity of a bar by status: faded where the number is not complete.
STATUS_OPACITY = {"complete": 1.0, "filled": 0.75, "partial": 0.6, "flagged": 0.45, "missing": 0.2}
#: Pattern of a bar by status (plotly marker.pattern.shape).
STATUS_PATTERN = {"complete": "", "filled": ".", "partial": "", "flagged": "/", "missing": "x"}
#: Colour of a pathway where only the pathway is drawn (monthly fluxes, totals).
PATHWAY_COLOURS = {"wet": OKABE_ITO["blue"], "dry": OKABE_ITO["vermillion"],
                   "total": OKABE_ITO["black"]}
#: Dash of a line per element (S solid, N dashed) where both share one axis.
ELEMENT_DASH = {"S": "solid", "N": "dash"}
#: Colour of each season (DJF, MAM, JJA, SON).
SEASON_COLOURS = {"DJF": OKABE_ITO["blue"], "MAM": OKABE_ITO["bluish_green"],
                  "JJA": OKABE_ITO["orange"], "SON": OKABE_ITO["reddish_purple"]}
#: Colour of each resistance of the series Ra + Rb + Rc.
RESISTANCE_COLOURS = {"ra": OKABE_ITO["sky_blue"], "rb": OKABE_ITO["orange"],
                      "rc": OKABE_ITO["bluish_green"], "total": OKABE_ITO["black"]}
#: Colour and marker symbol of a precipitation sample by its screening status.
SAMPLE_STATUS_STYLE = {"used": (OKABE_ITO["blue"], "circle"),
                       "flagged": (OKABE_ITO["orange"], "triangle-up"),
                       "excluded": (OKABE_ITO["vermillion"], "x"),
                       "dry": (OKABE_ITO["grey"], "circle-open")}
#: Colours cycled over sites in network views.
SITE_CYCLE = (OKABE_ITO["blue"], OKABE_ITO["vermillion"], OKABE_ITO["bluish_green"],
              OKABE_ITO["orange"], OKABE_ITO["reddish_purple"], OKABE_ITO["sky_blue"],
              OKABE_ITO["black"], OKABE_ITO["yellow"])
#: Fill of an acceptance envelope or range band (Okabe-Ito grey, translucent).
ENVELOPE_FILL = "rgba(153, 153, 153, 0.25)"
#: Template of every figure: plotly's plain white template, our colours on top.
TEMPLATE = "simple_white"
