"""Physical constants used project-wide, each with its symbol, unit and source.

No function body in the package holds a magic number: it refers to a name here,
or to a data table with its source beside it.  Constants of a single published
scheme (Wesely's resistances, Zhang's land-use parameters) live in that scheme's
module as data tables with their sources.
"""

# --- fundamental (CODATA 2018 exact or recommended values) -------------------------
#: Molar gas constant R [J mol-1 K-1]; CODATA 2018 (exact).
GAS_CONSTANT = 8.314462618
#: Boltzmann constant k_B [J K-1]; CODATA 2018 (exact, SI 2019).
BOLTZMANN = 1.380649e-23
#: Avogadro constant N_A [mol-1]; CODATA 2018 (exact, SI 2019).
AVOGADRO = 6.02214076e23
#: Stefan-Boltzmann constant sigma [W m-2 K-4]; CODATA 2018.
STEFAN_BOLTZMANN = 5.670374419e-8
#: Standard acceleration of gravity g [m s-2]; CGPM 1901 conventional value.
GRAVITY = 9.80665

# --- reference states --------------------------------------------------------------
#: Standard atmosphere pressure [Pa]; ISO 2533 / ICAO.
STANDARD_PRESSURE = 101325.0
#: 0 degC in kelvin [K]; SI definition of the Celsius scale.
ZERO_CELSIUS = 273.15

# --- air and water -----------------------------------------------------------------
#: Molar mass of dry air [kg mol-1]; U.S. Standard Atmosphere 1976.
MOLAR_MASS_DRY_AIR = 0.0289644
#: Specific heat of dry air at constant pressure c_p [J kg-1 K-1]; Stull (1988),
#: An Introduction to Boundary Layer Meteorology, Appendix (1004.67).
CP_DRY_AIR = 1004.67
#: Density of liquid water [kg m-3] (common practice: 1 mm of rain = 1 kg m-2).
WATER_DENSITY = 1000.0

# --- surface layer -----------------------------------------------------------------
#: von Karman constant kappa [-]; 0.41 as used by FAO-56 (Allen et al. 1998, Eq. 4)
#: and by Wesely (1989); Hogstrom (1996, Boundary-Layer Meteorol. 78, 215) argues
#: for 0.40 +- 0.01.
VON_KARMAN = 0.41
