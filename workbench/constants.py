"""Physical constants used project-wide, each with its symbol, unit and source.

No function body in the package holds a magic number: it refers to a name here,
or to a data table with its source beside it.  Constants of a single published
scheme (Wesely's resistances, Zhang's land-use parameters) live in that scheme's
module as data tables with their sources.
"""
import numpy as np


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

# --- surface layer: flux-profile (stability) functions -----------------------------
#: Businger-Dyer coefficient gamma of the unstable forms phi_m = (1 - gamma z/L)^(-1/4),
#: phi_h = (1 - gamma z/L)^(-1/2) [-]; Dyer (1974), Boundary-Layer Meteorol. 7, 363,
#: as integrated by Paulson (1970), J. Appl. Meteorol. 9, 857.
BUSINGER_DYER_GAMMA = 16.0
#: Businger-Dyer coefficient beta of the log-linear stable form phi = 1 + beta z/L [-];
#: Dyer (1974), Boundary-Layer Meteorol. 7, 363 (used by the night-time u* of
#: Venkatram 1980).
BUSINGER_DYER_BETA = 5.0
#: Coefficients a, b, c, d [-] of the stable functions of Beljaars and Holtslag (1991),
#: J. Appl. Meteorol. 30, 327, Eqs. 28 and 32 (a = 1, b = 2/3, c = 5, d = 0.35).
BELJAARS_HOLTSLAG_A = 1.0
BELJAARS_HOLTSLAG_B = 2.0 / 3.0
BELJAARS_HOLTSLAG_C = 5.0
BELJAARS_HOLTSLAG_D = 0.35

# --- air and water: more properties --------------------------------------------------
#: Molar mass of water [kg mol-1]; from the IUPAC atomic weights (H 1.008, O 15.999).
MOLAR_MASS_WATER = 0.018015
#: Latent heat of vaporization of water at 0 degC L_v [J kg-1]; Stull (1988),
#: An Introduction to Boundary Layer Meteorology, Appendix C (2.50e6).
LATENT_HEAT_VAPORIZATION = 2.501e6
#: Magnus formula over water e_s = A exp(B t / (t + C)), t in degC: A [Pa], B [-],
#: C [degC]; Alduchov and Eskridge (1996), J. Appl. Meteorol. 35, 601, Eq. 21 (AERK).
MAGNUS_A = 610.94
MAGNUS_B = 17.625
MAGNUS_C = 243.04
#: Sutherland's law for the dynamic viscosity of air mu = mu_ref (T/T_ref)^1.5
#: (T_ref + S)/(T + S): mu_ref [Pa s] at T_ref = 273.15 K, S [K]; White (2006),
#: Viscous Fluid Flow, 3rd ed., Table 1-2 (from memory).
SUTHERLAND_MU_REF = 1.716e-5
SUTHERLAND_T_REF = 273.15
SUTHERLAND_S = 110.4
#: Prandtl number of air Pr [-]; 0.72 as used by Wesely (1989) and Hicks et al. (1987).
PRANDTL_AIR = 0.72

# --- sea surface roughness ------------------------------------------------------------
#: Charnock constant alpha [-] of z0 = alpha u*^2 / g; Charnock (1955), Q. J. R.
#: Meteorol. Soc. 81, 639, with the value 0.011 of Smith (1988), J. Geophys. Res. 93,
#: 15467, Eq. 8 (from memory).
CHARNOCK_ALPHA = 0.011
#: Smooth-flow coefficient of z0 = 0.11 nu / u* [-]; Smith (1988), Eq. 8 (from memory).
SMOOTH_FLOW_COEFFICIENT = 0.11

# --- geometry --------------------------------------------------------------------------
#: Obliquity of the ecliptic [degree] (J2000 value 23.439; common practice).
OBLIQUITY = 23.439

# --- time ------------------------------------------------------------------------------
#: Offset from the end of an hour-ending record to its middle (records are labelled by
#: the end of their hour; the sun and the hour of day are taken at the middle; by
#: definition of an hour-ending record, our convention for the record stamp).
HALF_HOUR = np.timedelta64(30, "m")

# --- limits of a user's fixed velocity -------------------------------------------------
#: Largest fixed deposition velocity a scenario or the apps accept [cm s-1]: the
#: aerodynamic limit 1 / Ra over a rough forest in strong wind (Ra about 10 s/m) is
#: about 10 cm/s, and a value above it is a typo or a unit slip (mm/s, m/s) (common
#: practice, from memory).
MAX_FIXED_VD_CM_S = 10.0
